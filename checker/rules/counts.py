"""The same quantity (test cases, annotators, sites, methods compared) stated with different numbers."""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..verdicts.report import Finding

from .model import MAX_EVIDENCE, Rule
from .evidence import fill, make_finding, plural, quoted, statement_evidence, where_of
from .wording import SEVERAL_TEST_SETS, TASK_HEADING
from .numbers import RunContext, Statement

if TYPE_CHECKING:
    from ..matching.matcher import Scan


_QUANTITY_TEXT = {
    ("cases", "total"): "The total number of {unit}",
    ("cases", "training"): "The number of {unit} in the training set",
    ("cases", "validation"): "The number of {unit} in the validation set",
    ("cases", "development"): "The number of {unit} in the development set",
    ("cases", "test"): "The number of {unit} in the test set",
    ("cases", "external"): "The number of {unit} in the external test set",
    ("annotators", ""): "The number of {unit} who annotated the reference",
    ("annotators", "training"): "The number of {unit} who annotated the training data",
    ("annotators", "validation"): "The number of {unit} who annotated the validation data",
    ("annotators", "test"): "The number of {unit} who annotated the test data",
    ("sites", ""): "The number of sites (centres, hospitals)",
    ("sites", "training"): "The number of training sites",
    ("sites", "test"): "The number of test sites",
    ("methods", ""): "The number of {unit} compared",
}


def _describe_quantity(st: Statement) -> str:
    if st.quantity == "methods":
        return "The number of teams or submissions compared" if st.unit == "team" else "The number of methods compared"
    split, _, qualifier = st.split.partition(":")
    template = _QUANTITY_TEXT.get((st.quantity, split), "The number of {unit}")
    text = template.format(unit=plural(st.unit))
    return text.replace(f"the {split} set", f"the {qualifier} {split} set") if qualifier else text


def check_counts(scan: "Scan", rule: Rule, ctx: RunContext) -> list[Finding]:
    """The same quantity (test cases, annotators, sites, methods compared) stated with different numbers."""
    groups: dict[tuple[str, str, str], list[Statement]] = {}
    for st in ctx.numbers.statements:
        if not st.unit or (st.quantity == "cases" and not st.split):
            continue
        groups.setdefault((st.quantity, st.unit, st.split), []).append(st)
    findings = []
    several_test_sets = any(SEVERAL_TEST_SETS.search(x.text) for x in scan.sentences)
    for key in sorted(groups, key=lambda k: (groups[k][0].sentence, groups[k][0].start)):
        sts = groups[key]
        values: dict[int, Statement] = {}
        for st in sts:
            values.setdefault(st.value, st)
        if len(values) < 2:
            continue
        if len(values) > 2:
            continue  # three or more sizes: several datasets or tasks, not one number written two ways
        if key[2] in ("test", "validation", "external") and several_test_sets:
            continue
        # a split stated both as "N" and inside a list of the same sentence is one statement
        firsts = sorted(values.values(), key=lambda s: (s.sentence, s.start))
        first, second = firsts[0], firsts[1]
        if first.sentence == second.sentence and key[0] != "cases":
            continue
        h1, h2 = (scan.sections[first.sentence][-1:] or ("",))[0], (scan.sections[second.sentence][-1:] or ("",))[0]
        if h1 != h2 and (TASK_HEADING.search(h1) or TASK_HEADING.search(h2)):
            continue
        evidence = [statement_evidence(scan, s, "statement") for s in firsts[:MAX_EVIDENCE]]
        msg = fill(rule.message, {
            "quantity": _describe_quantity(first),
            "first": quoted(first.text),
            "first_where": where_of(scan.sentences[first.sentence].location),
            "second": quoted(second.text),
            "second_where": where_of(scan.sentences[second.sentence].location),
            "values": ", ".join(str(v) for v in sorted(values)),
        })
        findings.append(make_finding(rule, msg, evidence))
    return findings
