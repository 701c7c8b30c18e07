"""Thresholds fitted on labelled documents: how strong a concept's evidence must be before a facet counts as found.

`python benchmarks/fit.py` writes them to checklists/fitted.yaml with the figures of its leave-one-document-out
cross-validation; nobody edits that file by hand. A concept without a fitted value uses `matching.FOUND_AT`, and
so does every item that does not name a concept.
"""

from __future__ import annotations

from functools import lru_cache
from importlib import resources

from ..core.errors import ChecklistError
from ..matching.matcher import FOUND_AT

FITTED_FILE = "fitted.yaml"


def parse_thresholds(text: str, file: str) -> dict[str, float]:
    """The thresholds of a fitted file, checked: every value a number above 0 and at most 1."""
    import yaml

    try:
        data = yaml.safe_load(text) or {}
    except yaml.YAMLError as exc:
        raise ChecklistError([f"{file}:1:1: not valid YAML: {exc}"]) from None
    raw = data.get("thresholds", {}) if isinstance(data, dict) else None
    if not isinstance(raw, dict):
        raise ChecklistError([f"{file}:1:1: expected a mapping 'thresholds' of concept ids to numbers"])
    out: dict[str, float] = {}
    problems = []
    for cid, value in raw.items():
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0 < value <= 1:
            problems.append(f"{file}:1:1: thresholds -> {cid}: must be a number above 0 and at most 1, got {value!r}")
        else:
            out[str(cid)] = float(value)
    if problems:
        raise ChecklistError(problems)
    return out


@lru_cache(maxsize=1)
def thresholds() -> dict[str, float]:
    """The shipped thresholds by concept id (empty when the file is absent)."""
    res = resources.files("checker.checklists") / FITTED_FILE
    if not res.is_file():
        return {}
    from ..matching.regexcache import cached_data

    text, file = res.read_text(encoding="utf-8"), f"checklists/{FITTED_FILE}"
    # kept as JSON between runs, keyed by the file's text: reading YAML costs more than the rest of this module
    return cached_data("fitted", text, lambda: parse_thresholds(text, file),
                       check=lambda v: isinstance(v, dict) and all(isinstance(x, float) for x in v.values()))


def threshold(concept: str) -> float:
    """How strong evidence for one facet of this concept must be (section weight x attribution x facet weight)."""
    return thresholds().get(concept, FOUND_AT) if concept else FOUND_AT
