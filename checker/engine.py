"""One document through the whole pipeline: read, parse, choose a checklist, match, decide, report."""

from __future__ import annotations

import dataclasses
import os
from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING

from rapidfuzz import fuzz

from . import __version__
from .matching.checklist import Checklist, load_checklist
from .matching.choice import choose_checklist, paper_skeleton  # noqa: F401 - also their home for callers
from .core.config import Config
from .reading.document import Document
from .core.limits import DEFAULT_LIMITS, Limits
from .matching.matcher import CompiledChecklist
from .verdicts.report import Report
from .verdicts.decide import evaluate

if TYPE_CHECKING:
    from .reading.ahead import ReadAhead

AUTO = "auto"


@lru_cache(maxsize=32)
def compiled_for(ref: str) -> CompiledChecklist:
    """Compile a checklist once per process (workers of a batch reuse it)."""
    return CompiledChecklist(load_checklist(ref))


def ignore_sections(document: Document, headings: tuple[str, ...]) -> Document:
    """Mark blocks under the named headings so that no evidence is taken from them."""
    if not headings:
        return document
    wanted = [h.lower() for h in headings]

    def hit(path: tuple[str, ...]) -> bool:
        return any(fuzz.ratio(t.lower(), w) >= 90 or w in t.lower() for t in path for w in wanted)

    blocks = tuple(dataclasses.replace(b, role="references") if hit(b.section) else b for b in document.blocks)
    return dataclasses.replace(document, blocks=blocks)


def choose_for_file(path: str | Path, limits: Limits = DEFAULT_LIMITS) -> tuple[str, str]:
    """The built-in checklist `choose_checklist` picks for one file, read and parsed but not checked (a batch that
    uses the first document's choice for all then checks that document once, not twice)."""
    from .core.limits import time_limit
    from .matching.nlp import parse_blocks
    from .reading import read_document

    with time_limit(path, limits.seconds):
        document, docs = _read_parsed(path, Config(), limits, read_document, parse_blocks)
        return choose_checklist(docs, document=document)


def check_document(
    path: str | Path,
    checklist: str = AUTO,
    config: Config | None = None,
    limits: Limits = DEFAULT_LIMITS,
    *,
    cache: bool = False,
    data: bytes | None = None,
) -> Report:
    """The report for one file. With `cache`, an earlier report of the same unchanged file and settings is
    reused (see checker.resultcache). With `data`, the document's bytes are given and `path` only names it (a
    worker that cannot see the file); such a report is never cached."""
    import functools
    import hashlib

    from .matching import regexcache
    from .core.limits import time_limit
    from .matching.nlp import parse_blocks
    from .reading import read_document

    config = config or Config()
    k = None
    if cache and data is None:
        from . import resultcache

        # a named pipe, a device or a socket is never read here (it could wait forever); the reader refuses it
        seen = resultcache.document_bytes(path, limits.max_bytes)
        k = resultcache.key(path, seen, checklist, config, limits) if seen is not None else None
        hit = resultcache.get(k)
        if hit is not None:
            return hit
    # the reader reads the file itself (again): a file changed since `seen` gives a report that is not kept
    ahead = _read_ahead(path, limits) if data is None else None
    if data is not None:
        reader = functools.partial(read_document, data=data)
    elif ahead is not None:
        reader = functools.partial(_read_from_child, ahead)
    else:
        reader = read_document
    try:
        with time_limit(path, limits.seconds):
            report = _check(path, checklist, config, limits, reader, parse_blocks)
    finally:
        if ahead is not None:
            ahead.close()
    regexcache.save()  # here too, as batch workers end without running exit handlers
    if k is not None and report.sha256 == hashlib.sha256(seen).hexdigest():  # not changed while being read
        resultcache.put(k, report)
    return report


def _read_from_child(ahead: ReadAhead, path, limits) -> Document:  # noqa: ARG001 - a reader's signature
    """The document the child read, while this process imports spaCy and builds the pipeline meanwhile."""
    from .matching.nlp import pipeline

    return ahead.read(meanwhile=pipeline)


def _read_ahead(path, limits: Limits) -> ReadAhead | None:
    """The file read in a child process while this one imports spaCy and builds the pipeline (the two slowest
    parts of a first check), or None once the pipeline is built (a later document of a run, a batch worker) or
    where a child process cannot read it (see checker.reading.ahead)."""
    from .matching.nlp import pipeline

    if pipeline.cache_info().currsize:
        return None
    from .reading.ahead import start

    return start(path, limits)


def check_together(
    paths: list[str | Path],
    checklist: str = AUTO,
    config: Config | None = None,
    limits: Limits = DEFAULT_LIMITS,
) -> Report:
    """One report for several files read as one document in the order given (a website's pages, a paper and
    its supplement); every passage names its own file. Not cached: the result depends on all the files."""
    from .matching import regexcache
    from .core.limits import time_limit
    from .matching.nlp import parse_blocks
    from .reading import read_together

    if not paths:
        raise ValueError("check_together needs at least one file")
    with time_limit(paths[0], limits.seconds):
        report = _check([str(p) for p in paths], checklist, config or Config(), limits, read_together, parse_blocks)
    regexcache.save()
    return report


def main_documents(paths: list[str]) -> tuple[list[str], list[str]]:
    """The files to check for these paths: a LaTeX section file is replaced by the main files that read it
    (each checked once, in the order first named), and a sentence for each replacement."""
    out: list[str] = []
    notes: list[str] = []
    for p in paths:
        mains = []
        if str(p).lower().endswith(".tex"):  # the LaTeX reader (and what it imports) only when there is LaTeX
            from .reading.latex import main_files_for

            mains = main_files_for(Path(p))
        if not mains:
            targets = [p]
        else:
            targets = [os.path.relpath(m) if not Path(p).is_absolute() else str(m) for m in mains]
            notes.append(f"{p} is part of {', '.join(targets)}; checked {'that' if len(targets) == 1 else 'those'}"
                         " instead")
        for t in targets:
            if t not in out:
                out.append(t)
    return out, notes


def _read_parsed(path, config, limits, read_document, parse_blocks) -> tuple[Document, list]:
    """The document as the checks see it (without the sections the settings ignore) and its parsed blocks."""
    document = ignore_sections(read_document(path, limits), config.ignore_sections)
    return document, list(parse_blocks(b.text for b in document.blocks))


def _check(path, checklist, config, limits, read_document, parse_blocks) -> Report:
    document, docs = _read_parsed(path, config, limits, read_document, parse_blocks)
    if checklist == AUTO:
        ref, choice = choose_checklist(docs, document=document)
    else:
        ref, choice = checklist, f"{Path(checklist).stem if checklist.endswith(('.yaml', '.yml')) else checklist}: " \
                                 "named by the user"
    compiled = compiled_for(ref)
    scan = compiled.scan(document, regex_seconds=limits.regex_seconds, docs=docs)
    items = verdicts(compiled, scan, config)
    unknown_waivers = sorted(set(config.waivers) - {it.id for it in compiled.checklist.items})
    warnings = list(document.warnings)
    if unknown_waivers:
        warnings.append(f"the configuration waives {', '.join(unknown_waivers)}, which checklist "
                        f"{compiled.checklist.id} does not have")
    return build_report(document, compiled.checklist, items, choice, tuple(warnings), scan=scan, config=config,
                        regex_seconds=limits.regex_seconds)


def _learned(compiled: CompiledChecklist, config: Config) -> bool:
    """Whether the learned judge takes part: the settings want it and the checklist is a built-in one (it was
    fitted on their items, so a checklist of the user's own keeps the cues' verdicts and their order)."""
    checklist = compiled.checklist
    return config.judge == "learned" and checklist.path == f"checklists/{checklist.id}.yaml"


def verdicts(compiled: CompiledChecklist, scan, config: Config) -> tuple:
    """Every item's result: the cues' verdicts, with quotes in the order the learned sentence scorer finds likeliest
    and moved by the learned judge, where the settings want it (see checker.verdicts.judge)."""
    scores = None
    if _learned(compiled, config):
        from .verdicts.judge import sentence_scores

        scores = sentence_scores(scan)
    return judged(compiled, scan, evaluate(compiled, scan, config.waivers, scores), config, scores)


def judged(compiled: CompiledChecklist, scan, items: tuple, config: Config, scores=None) -> tuple:
    """The cues' verdicts, moved by the learned judge where the settings want it (see checker.verdicts.judge).
    `scores`: the document's sentence scores (judge.SentenceScores), if already at hand."""
    if not _learned(compiled, config):
        return items
    from .verdicts.judge import needed_facets, rejudge

    return rejudge(scan, items, needed=needed_facets(compiled.checklist), scores=scores,
                   checklist=compiled.checklist.id)


def build_report(document: Document, checklist: Checklist, items, choice: str, warnings: tuple[str, ...],
                 *, scan=None, config: Config | None = None, regex_seconds: float = 2.0) -> Report:
    from .rules import run_rules

    findings = tuple(run_rules(scan, items, checklist, config or Config(), regex_seconds=regex_seconds)) \
        if scan is not None else ()
    return Report(
        tool_version=__version__,
        document_path=document.path,
        document_format=document.format,
        pages=document.pages,
        words=document.words,
        sha256=document.sha256,
        checklist_id=checklist.id,
        checklist_title=checklist.title,
        checklist_version=checklist.version,
        items=items,
        findings=findings,
        checklist_choice=choice,
        warnings=warnings,
        groups=tuple((g.id, g.title) for g in checklist.groups),
    )


def document_from_text(text: str, path: str = "<text>") -> Document:
    """A Document of plain paragraphs (blank-line separated), for library use and tests."""
    import hashlib

    from .reading.document import Block, Location, Mark
    from .reading.sections import assign_sections

    blocks = []
    line = 1
    for para in text.split("\n\n"):
        stripped = para.strip("\n")
        if stripped.strip():
            marks, offset = [], 0
            joined_lines = []
            for i, ln in enumerate(stripped.split("\n")):
                marks.append(Mark(offset, line=line + i))
                joined_lines.append(ln.strip())
                offset += len(ln.strip()) + 1
            blocks.append(Block(" ".join(joined_lines), "paragraph", Location(path, line=line), marks=tuple(marks)))
        line += para.count("\n") + 2
    return Document(path, "text", tuple(assign_sections(blocks)), sha256=hashlib.sha256(text.encode()).hexdigest())


def check_text(text: str, checklist: str = "validation-study", config: Config | None = None) -> Report:
    """The report for a string (paragraphs separated by blank lines) against a checklist id or path."""
    config = config or Config()
    document = document_from_text(text)
    compiled = compiled_for(checklist)
    scan = compiled.scan(document)
    items = verdicts(compiled, scan, config)
    return build_report(document, compiled.checklist, items, f"{checklist}: named by the user", (), scan=scan,
                        config=config)
