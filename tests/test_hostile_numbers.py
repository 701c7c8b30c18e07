"""Numbers no study states: thousands of digits, huge exponents, digits of other scripts. They stay text; no
traceback, and the rest of the document (and of the batch) is read as usual."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from checker.matching.facts import MAX_DIGITS, parse_number

ROOT = Path(__file__).resolve().parent.parent
HUGE = "7" * 5000  # over Python's limit of 4,300 digits for int <-> text


@pytest.mark.parametrize("text", [
    HUGE, "1" * (MAX_DIGITS + 1), HUGE + " million", HUGE + "k", "0." + HUGE, "1e999999999", "10^999999",
    "３", "٣", "3²", "²",
], ids=["5000-digits", "61-digits", "million", "k", "fraction", "exponent", "power", "fullwidth", "arabic-indic",
        "superscript-after", "superscript"])
def test_numbers_beyond_reason_or_outside_ascii_stay_text(text):
    assert parse_number(text) is None


@pytest.mark.parametrize(("text", "value"), [
    ("1,000", 1000), ("3", 3), ("2.5k", 2500), ("three", 3), ("1" * MAX_DIGITS, int("1" * MAX_DIGITS)),
])
def test_ordinary_numbers_are_still_read(text, value):
    assert parse_number(text) == value


def _facts_values(report: dict) -> list:
    return [f["value"] for it in report["items"] for fs in it["facts"].values() for f in fs]


def _walk_ints(value):
    if isinstance(value, bool):
        return
    if isinstance(value, int):
        yield value
    elif isinstance(value, dict):
        for v in value.values():
            yield from _walk_ints(v)
    elif isinstance(value, list):
        for v in value:
            yield from _walk_ints(v)


def test_a_document_with_a_5000_digit_number_is_checked_and_the_batch_goes_on(tmp_path):
    hostile = tmp_path / "hostile.md"
    # each sentence gave a traceback (int-to-text limit, int-to-float overflow) and lost the whole batch's output
    hostile.write_text(
        "# Methods\n\n"
        f"The dataset contains {HUGE} images. We used {HUGE}-fold cross-validation. n = {HUGE} patients were "
        f"included. Images were split {HUGE}/20/10 into training, validation and test sets. Bootstrap with {HUGE} "
        f"samples gave confidence intervals. A tolerance of {HUGE} mm was used. The {HUGE}th percentile Hausdorff "
        "distance was used. A tolerance of 1e999999999 mm was used.\n\n"
        "# Results\n\nThe model was compared with 3 baseline methods.\n", encoding="utf-8")
    plain = tmp_path / "plain.md"
    plain.write_text("# Methods\n\nTwo readers annotated 120 images from 3 hospitals.\n", encoding="utf-8")
    env = {**os.environ, "NO_COLOR": "1", "PYTHONPATH": str(ROOT)}
    proc = subprocess.run([sys.executable, "-m", "checker.cli", "check", "hostile.md", "plain.md", "-f", "json",
                           "--no-cache"], cwd=tmp_path, capture_output=True, text=True, env=env, timeout=300)
    assert "Traceback" not in proc.stderr, proc.stderr[-3000:]
    assert proc.returncode in (0, 1), proc.stderr
    reports = json.loads(proc.stdout)
    reports = reports if isinstance(reports, list) else reports.get("reports", [reports])
    assert len(reports) == 2
    for report in reports:
        assert all(abs(v) < 10 ** MAX_DIGITS for v in _walk_ints(_facts_values(report)))
    plain_values = list(_walk_ints(_facts_values(reports[1])))
    assert 120 in plain_values or 3 in plain_values  # the ordinary document's numbers are still facts
