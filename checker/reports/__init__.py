"""Renderers of Reports, registered by name; ``--format`` choices come from here.

A renderer module defines ``render(reports, options) -> str | bytes`` and decides nothing: it shows the
statuses, evidence and findings that the Report already holds.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass
from typing import TYPE_CHECKING, Sequence

if TYPE_CHECKING:  # the report model is not needed to list the formats for --help
    from ..verdicts.report import Report


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
    name: str
    module: str
    summary: str
    binary: bool = False
    suffix: str = ".txt"


_REGISTRY: dict[str, RendererInfo] = {}


def register(info: RendererInfo) -> None:
    _REGISTRY[info.name] = info  # re-registering the same name replaces it, never doubles it


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
):
    register(_info)


def names() -> list[str]:
    return list(_REGISTRY)


def info(name: str) -> RendererInfo:
    return _REGISTRY[name]


def render(name: str, reports: Sequence[Report], options: RenderOptions = RenderOptions()) -> str | bytes:
    mod = importlib.import_module(_REGISTRY[name].module)
    return mod.render(list(reports), options)
