"""The one registry of renderers, keyed by what they render and the format; ``--format`` choices come from here.

What is rendered is a list of Reports (kind "report", `check`) or one result of many documents whose class names
its KIND: a Screen, an Audit, a Comparison, an Evaluation. A renderer is a function ``(result, options) -> str |
bytes`` and decides nothing: it shows the statuses, evidence, findings and figures the result already holds.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass


@dataclass(frozen=True)
class RenderOptions:
    verbose: bool = False
    color: bool = True
    width: int | None = None
    #: several documents were asked for (JSON then gives a list even when only one could be read)
    many: bool = False
    #: a review letter lists every request, not only the most important ones
    all_requests: bool = False


@dataclass(frozen=True)
class RendererInfo:
    name: str  # the format, as --format names it
    module: str
    summary: str
    binary: bool = False
    suffix: str = ".txt"
    kind: str = "report"  # what it renders: a list of Reports, or the KIND of a Screen, Audit, Comparison...
    function: str = "render"  # called as function(result, options)


_REGISTRY: dict[tuple[str, str], RendererInfo] = {}


def register(info: RendererInfo) -> None:
    _REGISTRY[(info.kind, info.name)] = info  # re-registering the same key replaces it, never doubles it


for _info in (
    RendererInfo("terminal", "checker.reports.terminal", "readable report for a terminal", suffix=".txt"),
    RendererInfo("json", "checker.reports.json", "the JSON contract, for other tools", suffix=".json"),
    RendererInfo("markdown", "checker.reports.markdown", "review letters and pull-request comments, with requests",
                 suffix=".md"),
    RendererInfo("letter", "checker.reports.letter", "a short review letter: the requests only, by importance",
                 suffix=".md"),
    RendererInfo("html", "checker.reports.html", "one self-contained page with filters, for reading and printing",
                 suffix=".html"),
    RendererInfo("docx", "checker.reports.docx", "a reporting form to fill in, with a column for the authors",
                 binary=True, suffix=".docx"),
    RendererInfo("lines", "checker.reports.lines", "path:line:column: lines for editors and CI annotations",
                 suffix=".txt"),
    RendererInfo("terminal", "checker.reports.screening", "the matrix for a terminal", kind="screen",
                 function="render_terminal"),
    RendererInfo("csv", "checker.reports.screening", "one row per document; notes in NAME.meta.json", kind="screen",
                 function="render_csv", suffix=".csv"),
    RendererInfo("html", "checker.reports.screening", "the screening page: matrices that open to the passages",
                 kind="screen", function="render_html", suffix=".html"),
    RendererInfo("json", "checker.reports.screening", "the whole screen, for other tools", kind="screen",
                 function="render_json", suffix=".json"),
    RendererInfo("docx", "checker.reports.screening", "a landscape table for a meeting", kind="screen",
                 function="render_docx", binary=True, suffix=".docx"),
    RendererInfo("terminal", "checker.reports.audit", "rates with intervals for a terminal", kind="audit",
                 function="render_terminal"),
    RendererInfo("csv", "checker.reports.audit", "one row per checklist, group and item", kind="audit",
                 function="render_csv", suffix=".csv"),
    RendererInfo("json", "checker.reports.audit", "the whole audit, for other tools", kind="audit",
                 function="render_json", suffix=".json"),
    RendererInfo("html", "checker.reports.audit", "a sortable page of the rates", kind="audit",
                 function="render_html", suffix=".html"),
    RendererInfo("terminal", "checker.reports.compare", "what changed, for a terminal", kind="compare",
                 function="render_text"),
    RendererInfo("markdown", "checker.reports.compare", "what changed, as a pull-request comment", kind="compare",
                 function="render_markdown", suffix=".md"),
    RendererInfo("json", "checker.reports.compare", "the whole comparison, for other tools", kind="compare",
                 function="render_json", suffix=".json"),
    RendererInfo("terminal", "checker.reports.evaluation", "agreement tables and disagreements", kind="evaluation",
                 function="render_text"),
    RendererInfo("json", "checker.reports.evaluation", "the whole evaluation, for other tools", kind="evaluation",
                 function="render_json", suffix=".json"),
):
    register(_info)


def kind_of(result) -> str:
    """The registry's kind of a result: "report" for a list of Reports, else the result's KIND."""
    return "report" if isinstance(result, (list, tuple)) else type(result).KIND


def names(kind: str = "report") -> list[str]:
    """The formats one kind of result can be rendered in, in the order they were registered."""
    return [name for k, name in _REGISTRY if k == kind]


def info(name: str, kind: str = "report") -> RendererInfo:
    return _REGISTRY[(kind, name)]


def render(name: str, result, options: RenderOptions = RenderOptions()) -> str | bytes:
    """``result`` in format ``name``: a list of Reports, or a Screen, Audit, Comparison or Evaluation."""
    kind = kind_of(result)
    i = _REGISTRY[(kind, name)]
    fn = getattr(importlib.import_module(i.module), i.function)
    return fn(list(result) if kind == "report" else result, options)
