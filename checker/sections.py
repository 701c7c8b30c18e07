"""Section paths from headings, and the role of each section (methods, results, references, ...)."""

from __future__ import annotations

import dataclasses
import re
from functools import lru_cache

from rapidfuzz import fuzz, process

from .document import Block

#: role -> heading variants as authors write them (compared after numbering and case are removed)
ROLE_HEADINGS: dict[str, tuple[str, ...]] = {
    "abstract": ("abstract", "summary", "overview", "tl dr", "synopsis", "highlights", "key points"),
    "introduction": ("introduction", "background", "motivation", "objective", "objectives", "aims", "purpose"),
    "related-work": ("related work", "prior work", "previous work", "state of the art", "literature review"),
    "data": (
        "data", "dataset", "datasets", "data description", "data collection", "study population", "patients",
        "materials", "image data", "data acquisition", "cohort", "participants and data", "challenge data",
        "data sources", "study data", "training data", "test data", "imaging data", "dataset and annotations",
        "data and annotations", "annotation", "annotations", "reference standard", "ground truth", "labels",
        "labelling", "labeling", "annotation protocol", "annotation guidelines",
    ),
    "methods": (
        "methods", "method", "materials and methods", "methodology", "proposed method", "approach",
        "experimental setup", "experiments", "experimental design", "implementation details", "implementation",
        "study design", "network architecture", "model", "training", "statistical analysis", "statistics",
        "how the challenge works", "challenge design", "task", "tasks", "rules", "challenge rules", "submission",
        "submission instructions", "participation", "terms", "timeline", "organization", "organisation",
    ),
    "evaluation": (
        "evaluation", "evaluation metrics", "metrics", "evaluation protocol", "assessment", "performance metrics",
        "scoring", "scoring metrics", "ranking", "validation", "assessment method", "statistical analysis plan",
    ),
    "results": ("results", "experimental results", "findings", "results and analysis", "leaderboard", "outcomes"),
    "discussion": ("discussion", "conclusion", "conclusions", "discussion and conclusion", "summary and outlook",
                   "future work", "outlook", "concluding remarks"),
    "limitations": ("limitations", "limitations and future work", "threats to validity"),
    "acknowledgements": ("acknowledgements", "acknowledgments", "acknowledgement", "funding", "conflict of interest",
                         "conflicts of interest", "competing interests", "declarations", "ethics statement",
                         "author contributions", "data availability", "code availability", "ethics",
                         "data and code availability", "code and data availability", "availability",
                         "data availability statement", "software availability", "resource availability",
                         "ethical approval", "ethics approval", "declaration of competing interest",
                         "disclosures", "financial disclosure", "license", "licence", "citation", "how to cite"),
    "references": ("references", "bibliography", "literature cited", "works cited", "citations", "reference list"),
    "appendix": ("appendix", "appendices", "supplementary material", "supplementary materials", "supplement"),
}

_VARIANTS: list[tuple[str, str]] = [(v, role) for role, vs in ROLE_HEADINGS.items() for v in vs]
_CHOICES = [v for v, _ in _VARIANTS]

_NUMBERING = re.compile(
    r"^\s*(?:(?:section|chapter|part)\s+)?(?:[0-9]+(?:\.[0-9]+)*\.?|[ivxlcdm]+\.|[A-Z]\.|[A-Z](?:\.[0-9]+)+\.?)\s+",
    re.IGNORECASE,
)


def clean_heading(text: str) -> str:
    """'2.1 Materials and Methods:' -> 'materials and methods'."""
    t = _NUMBERING.sub("", text.strip(), count=1)
    t = re.sub(r"[^\w\s]", " ", t.lower())
    return re.sub(r"\s+", " ", t).strip()


@lru_cache(maxsize=4096)
def heading_role(text: str) -> str | None:
    """The role a heading announces, or None where it names no known kind of section."""
    t = clean_heading(text)
    if not t or len(t) > 80:
        return None
    best = process.extractOne(t, _CHOICES, scorer=fuzz.ratio, score_cutoff=88)
    if best is not None:
        return _VARIANTS[best[2]][1]
    # "Evaluation metrics and ranking", "Datasets used in this study": the first words decide,
    # ... or the last ones: "Reference annotation", "Ground-truth labelling"
    words = t.split()
    for n, part in ((3, "head"), (2, "head"), (1, "head"), (2, "tail"), (1, "tail")):
        if len(words) > n:
            text = " ".join(words[:n] if part == "head" else words[-n:])
            best = process.extractOne(text, _CHOICES, scorer=fuzz.ratio, score_cutoff=92)
            # "Reference annotation" is not the reference list: that role needs the whole heading
            if best is not None and _VARIANTS[best[2]][1] != "references":
                return _VARIANTS[best[2]][1]
    return None


def assign_sections(blocks: list[Block]) -> list[Block]:
    """Fill in each block's section path and role from the headings before it."""
    out: list[Block] = []
    stack: list[tuple[int, str, str | None]] = []  # (level, title, role)
    for block in blocks:
        if block.kind == "heading":
            level = block.level or 1
            while stack and stack[-1][0] >= level:
                stack.pop()
            title = re.sub(r"\s+", " ", block.text).strip()
            role = heading_role(title)
            stack.append((level, title, role))
        path = tuple(title for _, title, _ in stack)
        role = next((r for _, _, r in reversed(stack) if r), "body")
        out.append(dataclasses.replace(block, section=path, role=role))
    return out
