"""Agreement of studygap with a user's own labels: label files in, item-by-item comparison and figures out.

A label file says, for one document, which status a careful human reader gives each checklist item. The tool
checks the same document and the two are compared: per-item precision, recall and F1, Cohen's kappa, agreement
over three classes, percentile bootstrap intervals over documents, a confusion table and every disagreement.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, ClassVar, Sequence

import yaml

from .. import __version__
from ..core.errors import InputError
from .stats import BinaryScores, BootstrapInterval, binary_scores, bootstrap_ci, cohen_kappa, observed_agreement
from ..core.cautions import CAUTIONS

STATUSES = ("reported", "partial", "missing", "not-applicable")
POSITIVE = frozenset({"reported", "partial"})
THREE_CLASSES = ("reported", "partial", "missing")
LABEL_KEYS = ("document", "checklist", "kind", "notes", "items")
ITEM_KEYS = ("status", "quote", "location", "note")
MAX_LABEL_BYTES = 2_000_000
DEFAULT_RESAMPLES = 2000

NOTE_POSITIVE = ("Positive means reported or partial, on both sides. Precision: of the items studygap found, the "
                 "share you found too. Recall: of the items you found, the share studygap found too.")
NOTE_NOT_APPLICABLE = ("not-applicable is its own class in the confusion table; in the binary and three-class "
                       "figures it counts as missing (nothing for a reader to find).")
NOTE_WAIVED = "A waiver in the configuration made some items waived; they are counted as not-applicable."



# ---------------------------------------------------------------------------------------------------- label files


@dataclass(frozen=True)
class ItemLabel:
    """The human reader's status for one item, with the passage that supports it."""

    item_id: str
    status: str
    quote: str = ""
    location: str = ""
    note: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"id": self.item_id, "status": self.status, "quote": self.quote, "location": self.location,
                "note": self.note}


@dataclass(frozen=True)
class LabelFile:
    """One label file: the document it labels, the checklist to use, and the labels."""

    path: str
    document: str
    document_ref: str
    checklist: str
    items: tuple[ItemLabel, ...]
    kind: str = ""
    notes: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"path": self.path, "document": self.document, "document_ref": self.document_ref,
                "checklist": self.checklist, "kind": self.kind, "notes": self.notes,
                "items": [it.to_dict() for it in self.items]}


class LabelError(InputError):
    """Every problem found in the label files, each naming its file and the key at fault."""

    def __init__(self, problems: Sequence[tuple[str, str]]) -> None:
        self.problems = [f"{p}: {c}" for p, c in problems]
        super().__init__(problems[0][0], problems[0][1])

    def __reduce__(self):  # pragma: no cover - only if ever sent to a worker process
        return (_rebuild_label_error, ([tuple(p.split(": ", 1)) for p in self.problems],))

    def __str__(self) -> str:
        if len(self.problems) == 1:
            return self.problems[0]
        return f"{len(self.problems)} problems in the label files:\n" + "\n".join(self.problems)


def _rebuild_label_error(problems: list[tuple[str, str]]) -> LabelError:  # pragma: no cover
    return LabelError(problems)


class _StrictLoader(yaml.SafeLoader):
    """Safe YAML that refuses a key given twice (a second label for one item would silently win)."""


def _mapping_without_duplicates(loader: _StrictLoader, node: yaml.MappingNode, deep: bool = False) -> dict:
    seen: dict[Any, int] = {}
    for key_node, _ in node.value:
        key = loader.construct_object(key_node, deep=True)
        try:
            if key in seen:
                raise yaml.constructor.ConstructorError(
                    None, None, f"the key {key!r} is given twice (first on line {seen[key]})", key_node.start_mark)
            seen[key] = key_node.start_mark.line + 1
        except TypeError:
            continue  # an unhashable key; construct_mapping reports it
    return loader.construct_mapping(node, deep=deep)


_StrictLoader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, _mapping_without_duplicates)


def _status_word(raw: Any) -> str | None:
    if not isinstance(raw, str):
        return None
    word = "-".join(raw.strip().lower().replace("_", " ").split())
    return word if word in STATUSES else None


def _unknown_status(raw: Any) -> str:
    listed = "reported, partial, missing or not-applicable"
    close = difflib.get_close_matches(str(raw).strip().lower(), STATUSES, n=1, cutoff=0.6)
    if str(raw).strip().lower() in {"n/a", "na", "none", "not relevant"}:
        close = ["not-applicable"]
    hint = f" (did you mean {close[0]!r}?)" if close else ""
    return f"{raw!r} is not a status; use {listed}{hint}"


def _text_field(value: Any) -> str | None:
    if value is None:
        return ""
    if isinstance(value, (str, int, float)) and not isinstance(value, bool):
        return str(value).strip()
    return None


def _label_files(labels_dir: Path) -> list[Path]:
    if labels_dir.is_file():
        return [labels_dir]
    if not labels_dir.exists():
        raise InputError(labels_dir, "no such folder of label files", "give the folder that holds the YAML label files")
    files = sorted(p for p in labels_dir.iterdir() if p.is_file() and p.suffix.lower() in {".yaml", ".yml"})
    if not files:
        raise InputError(labels_dir, "holds no label files (*.yaml or *.yml)",
                         "write one YAML file per document; see 'studygap evaluate --help'")
    return files


def _document_candidates(ref: str, label_path: Path, docs_dir: Path | None) -> list[Path]:
    given = Path(ref)
    if given.is_absolute():
        return [given]
    out: list[Path] = []
    if docs_dir is not None:
        out += [docs_dir / given, docs_dir / given.name]
    out += [label_path.parent.parent / given, label_path.parent / given]
    return list(dict.fromkeys(out))


def _checklist_ref(ref: str, label_path: Path) -> str | None:
    """A built-in id as it is; a path resolved against the label file's folder, its parent, then the working folder."""
    if not (ref.lower().endswith((".yaml", ".yml")) or "/" in ref or "\\" in ref):
        return ref
    given = Path(ref)
    for cand in ([given] if given.is_absolute() else
                 [label_path.parent / given, label_path.parent.parent / given, given]):
        if cand.is_file():
            return str(cand)
    return None


def _parse_label_file(path: Path, docs_dir: Path | None, problems: list[tuple[str, str]]) -> LabelFile | None:
    where = str(path)

    def bad(cause: str) -> None:
        problems.append((where, cause))

    try:
        if path.stat().st_size > MAX_LABEL_BYTES:
            bad(f"the label file is over {MAX_LABEL_BYTES // 1_000_000} MB; one document's labels are far smaller")
            return None
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        bad("is not UTF-8 text")
        return None
    except OSError as exc:
        bad(f"cannot be read ({exc.strerror or exc})")
        return None
    try:
        data = yaml.load(text, Loader=_StrictLoader)  # noqa: S506 - a SafeLoader subclass
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        at = f"line {mark.line + 1}, column {mark.column + 1}: " if mark else ""
        bad(f"{at}not valid YAML: {exc.problem or exc}")
        return None
    except yaml.YAMLError as exc:
        bad(f"not valid YAML: {exc}")
        return None
    if not isinstance(data, dict):
        bad("a label file is a mapping with the keys document, checklist and items")
        return None
    ok = True
    for key in sorted(set(map(str, data)) - set(LABEL_KEYS)):
        close = difflib.get_close_matches(key, LABEL_KEYS, n=1)
        hint = f" (did you mean {close[0]!r}?)" if close else ""
        bad(f"{key}: unknown key{hint}; a label file has {', '.join(LABEL_KEYS)}")
        ok = False

    document = ""
    ref = data.get("document")
    if ref is None or (isinstance(ref, str) and not ref.strip()):
        bad("document: missing (the path of the labelled document, relative to the folder above the label "
            "file's folder, or to --docs)")
        ok = False
    elif not isinstance(ref, str):
        bad(f"document: must be a path, not {type(ref).__name__}")
        ok = False
    else:
        ref = ref.strip()
        cands = _document_candidates(ref, path, docs_dir)
        found = next((c for c in cands if c.is_file()), None)
        if found is None:
            bad(f"document: {ref!r} not found (looked for {', '.join(str(c) for c in cands)})")
            ok = False
        else:
            document = str(found)

    checklist = "auto"
    raw_cl = data.get("checklist")
    if raw_cl is not None:
        if not isinstance(raw_cl, str) or not raw_cl.strip():
            bad("checklist: must be a built-in checklist id or the path of a checklist YAML file")
            ok = False
        else:
            resolved = _checklist_ref(raw_cl.strip(), path)
            if resolved is None:
                bad(f"checklist: no checklist file {raw_cl.strip()!r} (looked beside the label file, in the folder "
                    "above it and in the working folder)")
                ok = False
            else:
                checklist = resolved

    kind = _text_field(data.get("kind"))
    notes = _text_field(data.get("notes"))
    if kind is None:
        bad("kind: must be text")
        ok = False
    if notes is None:
        bad("notes: must be text")
        ok = False

    labels: list[ItemLabel] = []
    raw_items = data.get("items")
    if raw_items is None:
        bad("items: missing (a mapping of item id to its status, e.g. data.source: reported)")
        ok = False
    elif not isinstance(raw_items, dict):
        bad("items: must map item ids to a status or to {status, quote, location, note}")
        ok = False
    elif not raw_items:
        bad("items: no item is labelled")
        ok = False
    else:
        for raw_id, value in raw_items.items():
            iid = str(raw_id).strip()
            at = f"items -> {iid}"
            if isinstance(value, str) or value is None:
                value = {"status": value}
            if not isinstance(value, dict):
                bad(f"{at}: give a status word or a mapping with status (and optionally quote, location, note)")
                ok = False
                continue
            extra = sorted(set(map(str, value)) - set(ITEM_KEYS))
            if extra:
                close = difflib.get_close_matches(extra[0], ITEM_KEYS, n=1)
                hint = f" (did you mean {close[0]!r}?)" if close else ""
                bad(f"{at} -> {extra[0]}: unknown key{hint}; an item label has {', '.join(ITEM_KEYS)}")
                ok = False
            raw_status = value.get("status")
            if raw_status is None:
                bad(f"{at} -> status: missing; use reported, partial, missing or not-applicable")
                ok = False
                continue
            status = _status_word(raw_status)
            if status is None:
                bad(f"{at} -> status: {_unknown_status(raw_status)}")
                ok = False
                continue
            texts = {}
            for key in ("quote", "location", "note"):
                t = _text_field(value.get(key))
                if t is None:
                    bad(f"{at} -> {key}: must be text")
                    ok = False
                    t = ""
                texts[key] = " ".join(t.split())
            labels.append(ItemLabel(iid, status, texts["quote"], texts["location"], texts["note"]))
    if not ok:
        return None
    return LabelFile(where, document, ref, checklist, tuple(labels), kind or "", notes or "")


def load_labels(labels_dir: str | Path, docs_dir: str | Path | None = None) -> list[LabelFile]:
    """Read every label file in a folder (or one label file); raise LabelError listing every problem found."""
    folder = Path(labels_dir)
    docs = Path(docs_dir) if docs_dir is not None else None
    if docs is not None and not docs.is_dir():
        raise InputError(docs, "no such folder of documents", "--docs names the folder that holds the documents")
    problems: list[tuple[str, str]] = []
    out: list[LabelFile] = []
    for path in _label_files(folder):
        lf = _parse_label_file(path, docs, problems)
        if lf is not None:
            out.append(lf)
    seen: dict[str, str] = {}
    for lf in out:
        key = str(Path(lf.document).resolve())
        if key in seen:
            problems.append((lf.path, f"document: {lf.document_ref!r} is labelled already in {seen[key]}; "
                                      "label each document once"))
        else:
            seen[key] = lf.path
    if problems:
        raise LabelError(problems)
    return out


# ---------------------------------------------------------------------------------------------------- comparison


def three_class(status: str) -> str:
    """A status as the three-class figures count it: not-applicable is missing."""
    return "missing" if status == "not-applicable" else status


def quote_covers(quote: str, passages: Sequence[str]) -> bool:
    """Whether one of the passages covers a labelled quote: a fragment of the quote (fragments are joined by
    "..."; those of three words or more count) found in a passage, allowing the small differences that two
    extractions of the same text show (rapidfuzz partial ratio of 85 or more, common practice)."""
    from rapidfuzz import fuzz

    fragments = [f.strip() for f in quote.replace("…", "...").split("...") if len(f.split()) >= 3] or [quote]
    return any(fuzz.partial_ratio(f.lower(), t.lower()) >= 85 for f in fragments for t in passages)


@dataclass(frozen=True)
class Pair:
    """One item of one document as the human labelled it and as studygap judged it."""

    document: str
    label_file: str
    item_id: str
    title: str
    human: str
    tool: str
    human_quote: str = ""
    human_location: str = ""
    human_note: str = ""
    tool_evidence: str = ""
    tool_location: str = ""
    tool_reason: str = ""
    #: every passage the tool quoted for the item, and whose statement the first one is (see attribution.py)
    tool_quotes: tuple[str, ...] = ()
    tool_attribution: str = ""

    @property
    def human_positive(self) -> bool:
        return self.human in POSITIVE

    @property
    def tool_positive(self) -> bool:
        return self.tool in POSITIVE

    @property
    def human_three(self) -> str:
        return three_class(self.human)

    @property
    def tool_three(self) -> str:
        return three_class(self.tool)

    @property
    def kind(self) -> str:
        """How a disagreement counts: presence (binary figures), degree (three-class only), applicability."""
        if self.human == self.tool:
            return "agreement"
        if self.human_positive != self.tool_positive:
            return "presence"
        if self.human_positive:
            return "degree"
        return "applicability"

    def to_dict(self) -> dict[str, Any]:
        return {"document": self.document, "label_file": self.label_file, "item": self.item_id,
                "title": self.title, "kind": self.kind,
                "human": {"status": self.human, "quote": self.human_quote, "location": self.human_location,
                          "note": self.human_note},
                "tool": {"status": self.tool, "evidence": self.tool_evidence, "location": self.tool_location,
                         "reason": self.tool_reason}}


@dataclass(frozen=True)
class DocumentOutcome:
    """What happened to one labelled document: how many items were compared, or why it could not be checked."""

    label_file: str
    document: str
    checklist: str
    labelled: int
    compared: int = 0
    #: labelled items that the checklist used has no item for (not compared)
    not_in_checklist: tuple[str, ...] = ()
    error: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"label_file": self.label_file, "document": self.document, "checklist": self.checklist,
                "labelled": self.labelled, "compared": self.compared,
                "not_in_checklist": list(self.not_in_checklist), "error": self.error or None}


@dataclass(frozen=True)
class ItemAgreement:
    """Agreement on one item over all documents that label it."""

    item_id: str
    title: str
    pairs: int
    scores: BinaryScores
    three_class_agreement: float
    #: False when neither side has a positive, so F1 is undefined and the item stays out of macro-F1
    in_macro: bool

    def to_dict(self) -> dict[str, Any]:
        return {"id": self.item_id, "title": self.title, "pairs": self.pairs, **self.scores.to_dict(),
                "three_class_agreement": _round(self.three_class_agreement), "in_macro_f1": self.in_macro}


@dataclass(frozen=True)
class Confusion:
    """Counts of (human status, tool status); rows are the human's, columns the tool's."""

    labels: tuple[str, ...]
    counts: tuple[tuple[int, ...], ...]

    def to_dict(self) -> dict[str, Any]:
        return {"rows": "human", "columns": "tool", "labels": list(self.labels),
                "counts": {h: {t: self.counts[i][j] for j, t in enumerate(self.labels)}
                           for i, h in enumerate(self.labels)}}


@dataclass(frozen=True)
class Figure:
    """A headline figure with its bootstrap interval (None where the sample cannot give one)."""

    name: str
    title: str
    value: float | None
    interval: BootstrapInterval | None = None

    def to_dict(self) -> dict[str, Any]:
        return {"title": self.title, "value": _round(self.value),
                "interval": self.interval.to_dict() if self.interval else None}


@dataclass(frozen=True)
class Evaluation:
    KIND: ClassVar[str] = "evaluation"  # the renderers' key (checker.reports)
    tool_version: str
    source: str
    checklist_override: str | None
    documents: tuple[DocumentOutcome, ...]
    items: tuple[ItemAgreement, ...]
    figures: tuple[Figure, ...]
    macro_f1_left_out: tuple[str, ...]
    confusion: Confusion
    disagreements: tuple[Pair, ...]
    pairs: int
    seed: int
    resamples: int
    level: float
    notes: tuple[str, ...] = ()
    cautions: tuple[str, ...] = CAUTIONS["evaluation"]
    #: every compared pair, grouped by document (for figures on parts of the sample; not in the JSON)
    pairs_by_document: tuple[tuple[Pair, ...], ...] = ()

    def figure(self, name: str) -> Figure:
        for f in self.figures:
            if f.name == name:
                return f
        raise KeyError(name)

    @property
    def errors(self) -> tuple[DocumentOutcome, ...]:
        return tuple(d for d in self.documents if d.error)

    @property
    def compared_documents(self) -> int:
        return sum(1 for d in self.documents if not d.error and d.compared)

    def to_dict(self) -> dict[str, Any]:
        return {
            "tool": {"name": "studygap", "version": self.tool_version},
            "labels": self.source,
            "checklist_override": self.checklist_override,
            "sample": {"label_files": len(self.documents), "documents_compared": self.compared_documents,
                       "documents_failed": len(self.errors), "pairs": self.pairs},
            "figures": {f.name: f.to_dict() for f in self.figures},
            "macro_f1_left_out": list(self.macro_f1_left_out),
            "items": [it.to_dict() for it in self.items],
            "confusion": self.confusion.to_dict(),
            "disagreements": [d.to_dict() for d in self.disagreements],
            "documents": [d.to_dict() for d in self.documents],
            "bootstrap": {"unit": "document", "resamples": self.resamples, "seed": self.seed, "level": self.level,
                          "method": "percentile"},
            "notes": list(self.notes),
            "cautions": list(self.cautions),
        }


def pairs_for(label: LabelFile, report: Any) -> tuple[list[Pair], list[str]]:
    """The compared pairs of one document, in checklist order, and the labelled ids the checklist lacks."""
    wanted = {lab.item_id: lab for lab in label.items}
    pairs: list[Pair] = []
    for it in report.items:
        lab = wanted.pop(it.id, None)
        if lab is None:
            continue
        tool = "not-applicable" if it.status == "waived" else it.status
        ev = it.evidence[0] if it.evidence else None
        pairs.append(Pair(
            document=label.document, label_file=label.path, item_id=it.id, title=it.title,
            human=lab.status, tool=tool, human_quote=lab.quote, human_location=lab.location, human_note=lab.note,
            tool_evidence=ev.text if ev else "", tool_location=ev.location.describe() if ev else "",
            tool_reason=it.reason, tool_quotes=tuple(e.text for e in it.evidence),
            tool_attribution=ev.attribution if ev else "",
        ))
    return pairs, sorted(wanted)


def item_agreements(pairs: Sequence[Pair]) -> tuple[ItemAgreement, ...]:
    by_item: dict[str, list[Pair]] = {}
    for p in pairs:
        by_item.setdefault(p.item_id, []).append(p)
    out = []
    for iid in sorted(by_item):
        ps = by_item[iid]
        scores = binary_scores([p.human_positive for p in ps], [p.tool_positive for p in ps])
        three = sum(1 for p in ps if p.human_three == p.tool_three) / len(ps)
        out.append(ItemAgreement(iid, ps[0].title, len(ps), scores, three, scores.f1 is not None))
    return tuple(out)


def macro_f1(pairs: Sequence[Pair]) -> float | None:
    """Mean F1 over items where either side has a positive; None when there is no such item."""
    f1s = [a.scores.f1 for a in item_agreements(pairs) if a.in_macro]
    return sum(f1s) / len(f1s) if f1s else None  # type: ignore[arg-type]


def binary_kappa(pairs: Sequence[Pair]) -> float | None:
    if not pairs:
        return None
    return _defined(cohen_kappa([p.human_positive for p in pairs], [p.tool_positive for p in pairs]))


def three_class_agreement(pairs: Sequence[Pair]) -> float | None:
    if not pairs:
        return None
    return observed_agreement([p.human_three for p in pairs], [p.tool_three for p in pairs])


def three_class_kappa(pairs: Sequence[Pair]) -> float | None:
    if not pairs:
        return None
    return _defined(cohen_kappa([p.human_three for p in pairs], [p.tool_three for p in pairs]))


def confusion(pairs: Sequence[Pair]) -> Confusion:
    index = {s: i for i, s in enumerate(STATUSES)}
    counts = [[0] * len(STATUSES) for _ in STATUSES]
    for p in pairs:
        counts[index[p.human]][index[p.tool]] += 1
    return Confusion(STATUSES, tuple(tuple(r) for r in counts))


def _flat(units: Sequence[Sequence[Pair]]) -> list[Pair]:
    return [p for u in units for p in u]


#: name, title, statistic over pairs, whether a bootstrap interval is given
_FIGURES: tuple[tuple[str, str, Callable[[Sequence[Pair]], float | None], bool], ...] = (
    ("macro_f1", "macro-F1 (positive = reported or partial)", macro_f1, True),
    ("binary_kappa", "Cohen's kappa, positive or not", binary_kappa, True),
    ("binary_agreement", "agreement, positive or not",
     lambda ps: observed_agreement([p.human_positive for p in ps], [p.tool_positive for p in ps]) if ps else None,
     False),
    ("three_class_agreement", "agreement, reported / partial / missing", three_class_agreement, True),
    ("three_class_kappa", "Cohen's kappa, reported / partial / missing", three_class_kappa, True),
    ("four_class_agreement", "agreement, four statuses (with not-applicable)",
     lambda ps: observed_agreement([p.human for p in ps], [p.tool for p in ps]) if ps else None, False),
)


def summarize(
    outcomes: Sequence[DocumentOutcome],
    pairs_by_document: Sequence[Sequence[Pair]],
    *,
    source: str = "",
    checklist_override: str | None = None,
    seed: int = 0,
    resamples: int = DEFAULT_RESAMPLES,
    level: float = 0.95,
    waived_seen: bool = False,
) -> Evaluation:
    """All figures from the compared pairs, grouped by document (the bootstrap resamples documents)."""
    units = [tuple(u) for u in pairs_by_document if u]
    pairs = _flat(units)
    figures = []
    for name, title, stat, with_interval in _FIGURES:
        value = stat(pairs)
        interval = None
        if with_interval and units and value is not None:
            interval = bootstrap_ci(units, lambda sample, _s=stat: _s(_flat(sample)), resamples, seed, level)
        figures.append(Figure(name, title, value, interval))
    items = item_agreements(pairs)
    left_out = tuple(a.item_id for a in items if not a.in_macro)
    notes = [NOTE_POSITIVE, NOTE_NOT_APPLICABLE]
    if left_out:
        notes.append("Items where neither you nor studygap found anything have no F1 and are left out of macro-F1: "
                     + ", ".join(left_out) + ".")
    if units:
        notes.append(f"Intervals: {level:.0%} percentile bootstrap over the {len(units)} compared documents "
                     f"({resamples} resamples, seed {seed}); the items of one document are resampled together.")
    missing_items = sorted({f"{iid} ({o.checklist})" for o in outcomes for iid in o.not_in_checklist})
    if missing_items:
        notes.append("Labelled items that the checklist used has no item for, not compared: "
                     + ", ".join(missing_items) + ".")
    if waived_seen:
        notes.append(NOTE_WAIVED)
    return Evaluation(
        tool_version=__version__,
        source=source,
        checklist_override=checklist_override,
        documents=tuple(outcomes),
        items=items,
        figures=tuple(figures),
        macro_f1_left_out=left_out,
        confusion=confusion(pairs),
        disagreements=tuple(p for p in pairs if p.human != p.tool),
        pairs=len(pairs),
        seed=seed,
        resamples=resamples,
        level=level,
        notes=tuple(notes),
        pairs_by_document=tuple(units),
    )


def evaluate(
    label_files: Sequence[LabelFile],
    checklist_override: str | None = None,
    jobs: int = 1,
    progress: Callable[[int, int, str], None] | None = None,
    *,
    seed: int = 0,
    resamples: int = DEFAULT_RESAMPLES,
    level: float = 0.95,
    config: Any = None,
    limits: Any = None,
    source: str = "",
    engine: str = "local",
    scheduler: str | None = None,
    cache: bool = False,
) -> Evaluation:
    """Check every labelled document and compare the tool's statuses with the labels.

    The documents are checked by the batch runner (checker.many.batch), one run per checklist the labels name:
    ``jobs`` local processes, or a Dask cluster with ``engine="dask"`` and ``scheduler``; ``cache`` reuses the
    reports of unchanged files. ``progress(done, total, document)`` is called after each document. A document
    that cannot be checked becomes an outcome with its error, and the others go on.
    """
    from ..core.config import Config
    from ..core.limits import DEFAULT_LIMITS

    if jobs < 1:
        raise ValueError("jobs must be 1 or more")
    config = config if config is not None else Config()
    limits = limits if limits is not None else DEFAULT_LIMITS
    tasks = [(lf.document, checklist_override or lf.checklist) for lf in label_files]
    from .batch import run_batch

    results: list[tuple[Any, str]] = [(None, "")] * len(tasks)
    total = len(tasks)
    by_checklist: dict[str, list[int]] = {}
    for i, (_doc, cl) in enumerate(tasks):
        by_checklist.setdefault(cl, []).append(i)
    done = 0

    def step(_done: int, _total: int, document: str) -> None:
        nonlocal done
        done += 1
        if progress is not None:
            progress(done, total, document)

    for cl, members in by_checklist.items():
        rows = run_batch([tasks[i][0] for i in members], cl, config, limits, jobs=jobs, engine=engine,
                         scheduler=scheduler, progress=step, cache=cache)
        for i, row in zip(members, rows):
            results[i] = (row.report, "") if row.ok else (None, row.error)

    outcomes: list[DocumentOutcome] = []
    units: list[list[Pair]] = []
    waived_seen = False
    for lf, (_doc, cl), (report, error) in zip(label_files, tasks, results):
        if report is None:
            outcomes.append(DocumentOutcome(lf.path, lf.document, cl, len(lf.items), error=error))
            units.append([])
            continue
        waived_seen = waived_seen or any(it.status == "waived" for it in report.items)
        pairs, lacking = pairs_for(lf, report)
        outcomes.append(DocumentOutcome(lf.path, lf.document, report.checklist_id, len(lf.items), len(pairs),
                                        tuple(lacking)))
        units.append(pairs)
    return summarize(outcomes, units, source=source, checklist_override=checklist_override, seed=seed,
                     resamples=resamples, level=level, waived_seen=waived_seen)


# ---------------------------------------------------------------------------------------------------- helpers


def _defined(x: float) -> float | None:
    return None if math.isnan(x) else x


def _round(x: float | None, digits: int = 4) -> float | None:
    if x is None or math.isnan(x):
        return None
    return round(x, digits)


def to_json(evaluation: Evaluation) -> str:
    """The evaluation as JSON; the same inputs give the same bytes."""
    import json

    return json.dumps(evaluation.to_dict(), indent=2, ensure_ascii=False) + "\n"


__all__ = [
    "Confusion", "DocumentOutcome", "Evaluation", "Figure", "ItemAgreement", "ItemLabel", "LabelError",
    "LabelFile", "Pair", "STATUSES", "binary_kappa", "confusion", "evaluate", "item_agreements", "load_labels",
    "macro_f1", "pairs_for", "summarize", "three_class_agreement", "three_class_kappa", "to_json",
]
