"""The rules' model: a rule, its trigger of cues (data rules) or its named check, and the rule set."""

from __future__ import annotations

import string
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Callable

from ..matching.checklist import Cues, Near
from ..verdicts.report import Finding

if TYPE_CHECKING:
    from ..matching.matcher import Scan
    from .numbers import RunContext


BUILTIN = "rules.yaml"


SEVERITIES = ("warning", "note")


MAX_PASSAGES = 3


MAX_EVIDENCE = 4


#: placeholders a data rule's message may use
DATA_FIELDS = frozenset({"seen", "where", "count", "context"})


#: roles whose passages neither trigger nor silence a rule: they describe other people's work
OTHERS_WORK = frozenset({"related-work"})


@dataclass(frozen=True)
class Scope:
    """Where a cue set counts relative to a passage: anywhere, in its sentence, or within N sentences."""

    kind: str = "document"  # "document" | "sentence" | "within"
    within: int = 0

    def describe(self) -> str:
        return {"document": "document", "sentence": "same_sentence"}.get(self.kind, f"within {self.within}")


@dataclass(frozen=True)
class CueSet:
    cues: Cues
    scope: Scope = field(default_factory=Scope)


@dataclass(frozen=True)
class Trigger:
    cues: Cues
    near: Near | None = None
    unless: Cues | None = None
    with_: tuple[CueSet, ...] = ()
    without: tuple[CueSet, ...] = ()


@dataclass(frozen=True)
class Rule:
    id: str
    title: str
    severity: str
    message: str
    sources: tuple[str, ...]
    trigger: Trigger | None = None
    check: str | None = None
    examples_fires: tuple[str, ...] = ()
    examples_silent: tuple[str, ...] = ()


@dataclass(frozen=True)
class RuleSet:
    version: str
    rules: tuple[Rule, ...]
    path: str

    def rule(self, rule_id: str) -> Rule:
        for r in self.rules:
            if r.id == rule_id:
                return r
        raise KeyError(rule_id)

    @property
    def ids(self) -> tuple[str, ...]:
        return tuple(r.id for r in self.rules)


def placeholders(template: str) -> list[str] | None:
    try:
        return [name for _, name, _, _ in string.Formatter().parse(template) if name is not None]
    except ValueError:
        return None


@dataclass(frozen=True)
class Check:
    run: Callable[["Scan", Rule, "RunContext"], list[Finding]]
    #: placeholders its message may use
    fields: frozenset[str]
