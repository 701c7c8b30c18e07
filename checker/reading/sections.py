"""Section paths from headings, and the role of each section (methods, results, references, ...)."""

from __future__ import annotations

import dataclasses
import re
from functools import lru_cache

from rapidfuzz import fuzz, process

from ..core.words import builtin_words
from .document import Block, Mark

#: the word lists are data: checklists/words.yaml (see checker.core.words)
_WORDS = builtin_words()
#: role -> heading variants as authors write them (compared after numbering and case are removed)
ROLE_HEADINGS: dict[str, tuple[str, ...]] = {}
for _heading, _role in _WORDS.groups["section-headings"].items():  # heading -> role, in the file's order
    ROLE_HEADINGS[_role] = ROLE_HEADINGS.get(_role, ()) + (_heading,)
#: roles a heading must name whole: "Reference annotation" is not the reference list, "Submission requirements"
#: are not system requirements, "Contents of the dataset" is not a table of contents
_WHOLE_ONLY = frozenset({"references", "requirements", "front-matter"})
#: headings of a table of contents or a list of figures, which hold entries, never prose
_CONTENTS = frozenset(_WORDS.lists["contents-headings"])
#: how many words make a paragraph prose rather than an entry of contents
_PROSE_WORDS = 12
#: roles whose subsections keep them: a survey's paper titles are still about other work, and "Data curation"
#: under "Author contributions" is a person's credit, not the data section
#: variants that name a role only as the whole heading: "Background subtraction" is a method
_WHOLE_ONLY_VARIANTS = frozenset({"background", "contents", "summary"})
_STICKY = frozenset({"related-work", "front-matter", "abstract", "acknowledgements"})

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
def role_match(text: str) -> tuple[str | None, bool]:
    """The role a heading announces, and whether the whole heading names it ("Data") rather than its first
    or last words ("Data preprocessing", "Models with CNN versus those without CNN")."""
    t = clean_heading(text)
    if not t or len(t) > 80:
        return None, False
    best = process.extractOne(t, _CHOICES, scorer=fuzz.ratio, score_cutoff=88)
    if best is not None:
        return _VARIANTS[best[2]][1], True
    # "Evaluation metrics and ranking", "Datasets used in this study": the first words decide,
    # ... or the last ones: "Reference annotation", "Ground-truth labelling"
    words = t.split()
    for n, part in ((3, "head"), (2, "head"), (1, "head"), (2, "tail"), (1, "tail")):
        if len(words) > n:
            text = " ".join(words[:n] if part == "head" else words[-n:])
            best = process.extractOne(text, _CHOICES, scorer=fuzz.ratio, score_cutoff=92)
            # "Reference annotation" is not the reference list: that role needs the whole heading
            if best is not None and _VARIANTS[best[2]][1] not in _WHOLE_ONLY \
                    and _VARIANTS[best[2]][0] not in _WHOLE_ONLY_VARIANTS:
                return _VARIANTS[best[2]][1], False
    return None, False


def heading_role(text: str) -> str | None:
    """The role a heading announces, or None where it names no known kind of section."""
    return role_match(text)[0]


#: headings of a structured abstract ("Background", "Methods", "Results", ...): the abstract's own parts
_STRUCTURED_ABSTRACT = _WORDS.set("structured-abstract-headings")
#: front matter that marks a thesis or report: the text before its first chapter is its title page
_THESIS_FRONT = _WORDS.set("thesis-front-headings")
#: sections of the body proper; the first of them ends the front matter
_BODY_ROLES = frozenset({"introduction", "related-work", "data", "methods", "evaluation", "results", "discussion",
                         "limitations", "requirements"})
#: sections that stand beside the body at its top level (a title can share its level with them)
_BACK_ROLES = frozenset({"references", "acknowledgements", "appendix", "front-matter"})
#: sections no document is titled after
_NEVER_TITLE = _BACK_ROLES | {"abstract", "introduction", "related-work", "discussion", "limitations"}

_CHAPTER = re.compile(r"^\s*(?:chapter|part)\s+(?:[0-9]{1,2}|[ivxlc]{1,6}|one|two|three|four|five|six|seven|eight|nine|"
                      r"ten|eleven|twelve)\s*[.:]?\s*$", re.IGNORECASE)
#: a table-of-contents line: dot leaders, or a title and its page number
_LEADERS = re.compile(r"(?:\.\s?){4,}\s*[0-9ivxlc]{0,4}\s*$|[…·]{2,}\s*[0-9ivxlc]{0,4}\s*$", re.IGNORECASE)
_PAGE_NUMBER_END = re.compile(r"\S\s+(?:[0-9]{1,3}|[ivxlc]{1,6})\s*$", re.IGNORECASE)
_SECTION_NUMBER = re.compile(r"^\s*(?:(?:section|chapter|part)\s+)?(?:[0-9]+(?:\.[0-9]+)*|[ivxlcdm]+\.|[A-Z](?:\.[0-9]+)+)"
                             r"[.)]?\s+\S", re.IGNORECASE)
#: a by-line on a title page: authors' addresses, affiliations, e-mail, dates of a journal's history
BYLINE = re.compile(
    r"[\w.+-]+@[\w-]+\.[\w.-]+|\b(?:universit(?:y|ies|[éàä]t?)\b|institute (?:of|for)|institut\b|department of|"
    r"dept\.|hospital\b|school of|college of|faculty of|laborator(?:y|ies) (?:of|for)|(?:centre|center) (?:of|for)|"
    r"corresponding author|orcid|received:|accepted:|published:|"
    r"anonymous(?:\s+[\w@&-]+){0,2}\s+(?:submission|authors?)\b)",  # the by-line of a double-blind review copy
    re.IGNORECASE,
)


_LEADER_RUN = re.compile(r"(?:\.\s?){4,}\s*(?:[0-9]{1,3}|[ivxlc]{1,6})\b|…{2,}\s*[0-9]{1,3}\b", re.IGNORECASE)


def _is_contents_lines(text: str) -> bool:
    """Text made of table-of-contents lines: a dot leader and a page number for every few words."""
    leaders = len(_LEADER_RUN.findall(text))
    return leaders > 0 and leaders * 25 >= len(text.split())


def _is_prose(text: str) -> bool:
    """A paragraph of sentences, not entries of contents: enough words, a sentence's end, few page numbers."""
    words = text.split()
    numbers = sum(w.strip(".,;:()").isdigit() for w in words)
    return (len(words) >= _PROSE_WORDS and numbers * 4 < len(words) and not _is_contents_lines(text)
            and re.search(r"\w{2,}[.!?:](?:\s|$)", text) is not None)


def _words(block: Block) -> int:
    return len(block.text.split())


def _join_chapter_titles(blocks: list[Block]) -> list[Block]:
    """"CHAPTER 2" and the title under it ("LITERATURE SURVEY") are one heading."""
    out: list[Block] = []
    i = 0
    while i < len(blocks):
        b = blocks[i]
        nxt = blocks[i + 1] if i + 1 < len(blocks) else None
        if (b.kind == "heading" and _CHAPTER.match(b.text) and nxt is not None and nxt.text.strip()
                and (nxt.kind == "heading" or nxt.kind == "paragraph" and _words(nxt) <= 12
                     and not nxt.text.rstrip().endswith("."))):
            head = b.text.strip()
            marks = tuple(b.marks) or ((Mark(0, b.location.page, b.location.line),) if b.location.page else ())
            tail_marks = tuple(Mark(len(head) + 1 + m.offset, m.page, m.line) for m in nxt.marks) or (
                (Mark(len(head) + 1, nxt.location.page, nxt.location.line),) if nxt.location.page else ())
            out.append(dataclasses.replace(b, text=f"{head} {nxt.text.strip()}", marks=marks + tail_marks))
            i += 2
            continue
        out.append(b)
        i += 1
    return out


def _caps_rank(headings: list[tuple[int, Block]]) -> dict[int, float]:
    """Headings a reader ranked alike, where the body's main sections are set in capitals ("MATERIALS AND
    METHODS") and the others in mixed case ("Image acquisition"): the mixed-case ones are their subsections.
    Returns index -> effective level for the headings that move."""
    by_level: dict[int, list[tuple[int, Block]]] = {}
    for i, b in headings:
        by_level.setdefault(b.level or 1, []).append((i, b))
    moved: dict[int, float] = {}
    for level, hs in by_level.items():
        def caps(b: Block) -> bool:
            letters = [c for c in b.text if c.isalpha()]
            return len(letters) >= 3 and all(c.isupper() for c in letters)

        main = [i for i, b in hs if caps(b) and not _SECTION_NUMBER.match(b.text)
                and heading_role(b.text) in _BODY_ROLES]
        if len(main) < 2:
            continue
        for i, b in hs:
            if i > main[0] and not caps(b) and not _SECTION_NUMBER.match(b.text):
                moved[i] = level + 0.5
    return moved


#: sections that stand at the top of a document's tree, whatever headings come before them
_TOP_ROLES = frozenset({"abstract", "introduction", "related-work", "discussion", "limitations", "references",
                        "acknowledgements", "appendix", "front-matter"})


def _stacked_parents(headings: list[tuple[int, Block]], levels: dict[int, float]) -> dict[int, float]:
    """Where a document sets its sections and subsections alike, a heading set directly above another
    ("Results" over "LSTM versus GRU models") opens a section, and the headings after it, set alike and
    unnumbered, are its subsections until the next such pair or a top-level section ("Discussion").
    Only where the document does this at least twice. Returns index -> effective level for those that move."""
    def plain(b: Block) -> bool:
        return not _SECTION_NUMBER.match(b.text) and not _CHAPTER.match(b.text)

    parents = set()
    for (i, b), (j, c) in zip(headings, headings[1:]):
        if j == i + 1 and levels[i] == levels[j] and plain(b) and plain(c) \
                and heading_role(b.text) not in _BACK_ROLES | {"abstract"}:
            parents.add(i)
    if len(parents) < 2:
        return {}
    out: dict[int, float] = {}
    current: float | None = None
    for i, b in headings:
        if i in parents:
            current = levels[i]
            continue
        if current is None or levels[i] != current or not plain(b):
            continue
        role, whole = role_match(b.text)
        if whole and role in _TOP_ROLES:
            current = None  # "Conclusions", "Acknowledgments", "References" stand at the top again
            continue
        out[i] = current + 0.5
    return out


def _is_title(headings: list[tuple[int, Block]], blocks: list[Block]) -> bool:
    """Whether the first heading is the document's title: first, at the top level, with little before it, and
    either alone at that level or sharing it with sections while naming none itself."""
    if len(headings) < 2:
        return False
    i0, first = headings[0]
    top = min(b.level or 1 for _, b in headings)
    if (first.level or 1) != top or sum(_words(b) for b in blocks[:i0]) > 100:
        return False
    if heading_role(first.text) in _NEVER_TITLE:
        return False
    peers = [b for _, b in headings[1:] if (b.level or 1) == top and heading_role(b.text) not in _BACK_ROLES]
    if not peers:
        return True
    return heading_role(first.text) is None and not _SECTION_NUMBER.match(first.text)


#: a "heading" that is a whole statement: web pages set sentences in heading style for emphasis
_SENTENCE_END = re.compile(r"[a-z)\]%][.!](?:\s|$)")


def _is_sentence(text: str) -> bool:
    """A heading block that is really a sentence or two: many words and a full stop after a word."""
    return len(text.split()) >= 14 and bool(_SENTENCE_END.search(text))


def assign_sections(blocks: list[Block]) -> list[Block]:
    """Fill in each block's section path and role from the headings before it.

    Levels come from the reader (numbering, styles, font sizes), refined where capitals mark the main sections.
    A title gives no role to what it holds; an abstract (but for the parts of a structured abstract) and front
    matter never hold the sections after them; the subsections of related work stay related work;
    table-of-contents lines are not headings.
    """
    blocks = [dataclasses.replace(b, kind="paragraph", level=None) if b.kind == "heading" and _is_sentence(b.text)
              else b for b in _join_chapter_titles(blocks)]
    headings = [(i, b) for i, b in enumerate(blocks) if b.kind == "heading"]
    moved = _caps_rank(headings)
    levels = {i: moved.get(i, float(b.level or 1)) for i, b in headings}
    moved = {**moved, **_stacked_parents(headings, levels)}
    title_at = headings[0][0] if headings and _is_title(headings, blocks) else None
    thesis = any(clean_heading(b.text) in _THESIS_FRONT for _, b in headings)
    out: list[Block] = []
    # (level, title, role, closed, words so far)
    stack: list[list] = []
    # before the first section of the body; a text without any heading has no front matter to tell apart
    in_front = bool(headings)
    # before any heading but the title: where a paper's authors and addresses stand (a text without headings has none)
    under_title = bool(headings)
    for i, block in enumerate(blocks):
        in_toc = bool(stack) and stack[-1][2] == "front-matter"
        if block.kind == "heading" and (_LEADERS.search(block.text) or in_toc and _PAGE_NUMBER_END.search(block.text)
                                        and heading_role(block.text) != "front-matter"):
            block = dataclasses.replace(block, kind="paragraph", level=None)  # a line of a table of contents
        if block.kind == "heading":
            level = moved.get(i, float(block.level or 1))
            title = re.sub(r"\s+", " ", block.text).strip()
            role, whole = (None, False) if i == title_at else role_match(title)
            cleaned = clean_heading(title)
            while stack:
                top_level, _, top_role, closed, words = stack[-1]
                if top_level >= level:
                    stack.pop()
                elif closed:
                    stack.pop()
                elif top_role == "abstract" and (_SECTION_NUMBER.match(title) or cleaned not in _STRUCTURED_ABSTRACT
                                                 or words > 400):
                    stack.pop()  # the body after an abstract, not a part of a structured abstract
                else:
                    break
            if role is not None and not whole and any(e[2] for e in stack):
                role = None  # a few words of the title yield to the parent's role ("Results > Models with CNN")
            closed = role in ("front-matter", "references")  # a reference list has no sections of its own
            stack.append([level, title, role, closed, 0])
            if role in _BODY_ROLES or _SECTION_NUMBER.match(title):
                in_front = False
            if i != title_at:
                under_title = False
        elif stack:
            if (stack[-1][2] == "front-matter" and clean_heading(stack[-1][1]) in _CONTENTS
                    and block.kind == "paragraph" and _is_prose(block.text)):
                stack.pop()  # prose after a table of contents: the contents have ended, the body has begun
                in_front = False
            if stack:
                stack[-1][4] += _words(block)
        path = tuple(entry[1] for entry in stack)
        sticky = next((e[2] for e in stack if e[2] in _STICKY), None)
        role = sticky or next((e[2] for e in reversed(stack) if e[2]), "body")
        if block.kind != "heading" and _is_contents_lines(block.text):
            role = "front-matter"  # lines of a table of contents or a list of figures, wherever they stand
        elif role == "body" and block.kind != "heading" and (
                thesis and in_front or under_title and _words(block) <= 40 and BYLINE.search(block.text)):
            role = "front-matter"  # a title page, or the authors and their addresses under a paper's title
        out.append(dataclasses.replace(block, section=path, role=role))
    return out
