"""Every item of every built-in checklist carries examples, and the engine agrees with each of them."""

from __future__ import annotations

import pytest

from checker.matching.checklist import builtin_ids, load_checklist
from checker.engine import check_text


def _cases(kind: str):
    out = []
    for cid in builtin_ids():
        for item in load_checklist(cid).items:
            examples = item.examples_reported if kind == "reported" else item.examples_missing
            for i, sentence in enumerate(examples):
                out.append(pytest.param(cid, item.id, sentence, id=f"{cid}:{item.id}:{kind}{i}"))
    return out


def _status(cid: str, item_id: str, sentence: str) -> str:
    report = check_text(sentence, cid)
    return next(it for it in report.items if it.id == item_id).status


@pytest.mark.parametrize("cid", builtin_ids())
def test_every_item_has_at_least_three_reported_and_two_missing_examples(cid):
    thin = [it.id for it in load_checklist(cid).items
            if len(it.examples_reported) < 3 or len(it.examples_missing) < 2]
    assert not thin, f"{cid}: items without enough examples: {thin}"


@pytest.mark.parametrize("cid, item_id, sentence", _cases("reported"))
def test_reported_example_is_reported(cid, item_id, sentence):
    assert _status(cid, item_id, sentence) == "reported"


@pytest.mark.parametrize("cid, item_id, sentence", _cases("missing"))
def test_missing_example_is_not_reported(cid, item_id, sentence):
    assert _status(cid, item_id, sentence) in ("missing", "not-applicable")
