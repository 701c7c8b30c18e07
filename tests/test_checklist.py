"""Checklist loading and validation: every problem at once, each located, nothing run on a broken file."""

from __future__ import annotations

import textwrap

import pytest

from checker.matching.checklist import builtin_ids, load_checklist, parse_checklist
from checker.core.errors import ChecklistError, UsageError

from .conftest import DATA

GOOD = (DATA / "checklists" / "mini.yaml").read_text()


def problems(text: str) -> list[str]:
    with pytest.raises(ChecklistError) as info:
        parse_checklist(textwrap.dedent(text), "bad.yaml")
    return info.value.problems


def test_user_checklist_loads_with_its_items_and_needs():
    cl = parse_checklist(GOOD, "mini.yaml")
    assert cl.id == "mini" and [it.id for it in cl.items] == ["reference.annotators", "ranking.uncertainty"]
    ann = cl.item("reference.annotators")
    assert ann.needs == (("count", "expertise"),)
    assert cl.item("ranking.uncertainty").needs == (("interval",),)
    assert ann.applies_when.reason.startswith("the document describes")


def test_every_problem_is_reported_at_once_with_its_place():
    bad = GOOD.replace("title: Who annotated the reference", "titel: Who annotated the reference")
    bad = bad.replace("phrases: [board-certified", "phrases: [board-certified, ''")
    bad = bad.replace("regex: ['(?P<bootstrap_samples>{NUMBER})\\s+bootstrap']", "regex: ['(?P<b>unclosed']")
    found = problems(bad)
    assert len(found) == 4, found
    joined = "\n".join(found)
    assert 'item "reference.annotators" -> titel: unknown key (did you mean \'title\'?)' in joined
    assert "missing required key 'title'" in joined
    assert "must not be empty" in joined
    assert "not a valid regular expression" in joined
    for p in found:  # FILE:LINE:COLUMN: ...
        file, line, col, _rest = p.split(":", 3)
        assert file == "bad.yaml" and int(line) > 1 and int(col) >= 1


def test_located_line_points_at_the_bad_key():
    bad = GOOD.replace("needs: any", "needs: [interval, nonesuch]")
    (p,) = problems(bad)
    line = int(p.split(":")[1])
    assert "needs: [interval, nonesuch]" in bad.splitlines()[line - 1]
    assert "names facet 'nonesuch'" in p


def test_duplicate_ids_and_wrong_types():
    bad = GOOD.replace("id: ranking.uncertainty", "id: reference.annotators").replace('version: "0.1"', "version: [1]")
    found = problems(bad)
    assert any("duplicate item id" in p for p in found)
    assert any(p.split(": ", 2)[1] == "version" and "expected text" in p for p in found)


def test_bad_token_pattern_is_refused_with_spacys_reason():
    bad = GOOD.replace("phrases: [board-certified, years of experience, senior radiologist]",
                       "patterns: [[{LOWER: board}, {POS: NOUN}]]")
    (p,) = problems(bad)
    assert "POS" in p and "not filled by studygap's pipeline" in p
    bad2 = GOOD.replace("phrases: [board-certified, years of experience, senior radiologist]",
                        "patterns: [[{LOWER: {NOT_A_PREDICATE: [x]}}]]")
    (p2,) = problems(bad2)
    assert "spaCy refused this token pattern" in p2


def test_catastrophic_regex_shape_is_refused_but_bounded_repeats_are_fine():
    bad = GOOD.replace("regex: ['(?P<bootstrap_samples>{NUMBER})\\s+bootstrap']", "regex: ['(a+)+b']")
    (p,) = problems(bad)
    assert "can take forever" in p
    parse_checklist(GOOD, "ok.yaml")  # mini.yaml holds '(?:[\w-]+\s+){0,3}', which is bounded


def test_yaml_syntax_error_is_located():
    (p,) = problems("id: x\ntitle: [unclosed\n")
    assert p.startswith("bad.yaml:") and "not valid YAML" in p


def test_alias_bomb_is_refused_without_expanding():
    lines = ["a0: &a0 [x, x, x, x, x, x, x, x, x]"]
    for i in range(1, 10):
        prev = f"*a{i - 1}"
        lines.append(f"a{i}: &a{i} [{', '.join([prev] * 9)}]")
    lines.append("id: bomb\ntitle: t\nversion: '1'\nitems: *a9")
    (p,) = problems("\n".join(lines))
    assert "too many references to repeated YAML nodes" in p


def test_builtin_checklists_load_and_unknown_ids_are_named():
    ids = builtin_ids()
    assert "validation-study" in ids
    for cid in ids:  # strict: every regex compiled, as a user's checklist always is
        assert load_checklist(cid, strict=True).items
    with pytest.raises(UsageError) as info:
        load_checklist("no-such-list")
    assert "validation-study" in str(info.value)


def test_a_strict_applies_when_makes_an_item_not_applicable_even_where_its_facets_are_found():
    from checker.verdicts.decide import decide

    # without strict a found facet makes the item reported although nothing calls for it; with it, not-applicable
    needs = (("count", "expertise"),)
    assert decide({"count", "expertise"}, needs, True) == "reported"
    assert decide({"count", "expertise"}, needs, True, strict=True) == "not-applicable"
    assert decide({"count"}, needs, False, strict=True) == "partial"
    cl = parse_checklist(GOOD, "mini.yaml")
    assert cl.item("reference.annotators").applies_when.strict is False
    strict = GOOD.replace("reason: the document describes", "strict: true\n      reason: the document describes", 1)
    cl = parse_checklist(strict, "mini.yaml")
    assert cl.item("reference.annotators").applies_when.strict is True
    bad = GOOD.replace("reason: the document describes", "strict: maybe\n      reason: the document describes", 1)
    (p,) = problems(bad)
    assert "applies_when -> strict: expected true or false, got text" in p
