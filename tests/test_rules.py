"""Cross-item rules: every rule's own examples, switching rules off, validation of the rules file, the demo
documents, and the split checks against the dataset descriptions that the medmnist package ships."""

from __future__ import annotations

import ast
import importlib.util
import json
import re
from pathlib import Path

import pytest

from checker.core.config import Config
from checker.engine import check_document, check_text
from checker.core.errors import ChecklistError, UsageError
from checker.rules import CHECKS, load_rules, parse_rules

from .conftest import DEMO, medmnist_info

RULES = load_rules()
CHECKLIST = "validation-study"


def _report(text: str, tmp_path: Path, config: Config | None = None):
    """The report for an example: plain paragraphs, or a Markdown file when the example holds a table."""
    if re.search(r"^\|", text, re.MULTILINE):
        path = tmp_path / "example.md"
        path.write_text(text, encoding="utf-8")
        return check_document(path, CHECKLIST, config)
    return check_text(text, CHECKLIST, config)


def _ids(report) -> list[str]:
    return [f.id for f in report.findings]


def _examples(kind: str):
    out = []
    for rule in RULES.rules:
        for i, text in enumerate(rule.examples_fires if kind == "fires" else rule.examples_silent):
            out.append(pytest.param(rule.id, text, id=f"{rule.id}:{kind}{i}"))
    return out


def test_every_rule_has_three_examples_of_each_kind():
    thin = [r.id for r in RULES.rules if len(r.examples_fires) < 3 or len(r.examples_silent) < 3]
    assert not thin, f"rules without three firing and three silent examples: {thin}"


@pytest.mark.parametrize("rule_id, text", _examples("fires"))
def test_example_fires(rule_id, text, tmp_path):
    report = _report(text, tmp_path)
    found = [f for f in report.findings if f.id == rule_id]
    assert found, f"{rule_id} did not fire; findings: {_ids(report)}"
    f = found[0]
    assert f.evidence, "a finding quotes the passages that set it off"
    for ev in f.evidence:
        assert ev.text and ev.location.line is not None
    assert "{" not in f.message and f.sources
    assert f.severity in ("warning", "note")


@pytest.mark.parametrize("rule_id, text", _examples("silent"))
def test_example_is_silent(rule_id, text, tmp_path):
    report = _report(text, tmp_path)
    assert rule_id not in _ids(report), next(f.message for f in report.findings if f.id == rule_id)


@pytest.mark.parametrize("rule_id", RULES.ids)
def test_a_rule_switched_off_does_not_fire(rule_id, tmp_path):
    text = RULES.rule(rule_id).examples_fires[0]
    assert rule_id in _ids(_report(text, tmp_path))
    off = _report(text, tmp_path, Config(rules={rule_id: False}))
    assert rule_id not in _ids(off)
    on = _report(text, tmp_path, Config(rules={rule_id: True}))
    assert rule_id in _ids(on)


def test_switching_off_a_rule_that_does_not_exist_is_a_clear_error():
    with pytest.raises(UsageError, match="no rule 'hausdorf-variant'"):
        check_text("We report the Hausdorff distance.", CHECKLIST, Config(rules={"hausdorf-variant": False}))


def test_evidence_never_comes_from_the_references(tmp_path):
    path = tmp_path / "paper.md"
    path.write_text(
        "# A study of spleen masks\n\n## Methods\n\nVolume overlap was measured with the Dice coefficient.\n\n"
        "## References\n\n1. Quill A. Why the Hausdorff distance misleads. J Imaging Stud. 2019;3:1-9.\n\n"
        "2. Moss B. A test set of 120 patients and a test set of 100 patients. Eval Rev. 2020;1:2-3.\n",
        encoding="utf-8")
    assert _ids(check_document(path, CHECKLIST)) == []


def test_counts_conflict_quotes_both_places():
    report = check_text("The model was evaluated on a held-out test set of 120 patients.\n\n"
                        "The data were split into a training set of 900 patients and a test set of 100 patients.")
    f = next(f for f in report.findings if f.id == "counts-disagree")
    assert "120 patients" in f.message and "100 patients" in f.message
    assert [e.location.line for e in f.evidence] == [1, 3]
    assert [e.text[e.matches[0][0]:e.matches[0][1]] for e in f.evidence] == ["120 patients", "100 patients"]


@pytest.mark.parametrize("text", [
    "The test set comprised 120 patients (480 images).",  # two units of one split
    "The test set of 100 patients holds 1,000 images.\n\nThere are 1,000 images in the test set.",
    "A test set of 100 patients was used.\n\nOne hundred patients form the test set, 1,000 images in total.",
])
def test_counts_in_different_units_do_not_conflict(text):
    assert "counts-disagree" not in _ids(check_text(text))


def test_percentage_of_a_split_is_checked_within_rounding():
    ok = check_text("The test set contained 300 patients, of whom 37 (12.3%) had a malignant nodule.")
    assert "split-percentages" not in _ids(ok)  # 37 / 300 = 12.33%
    bad = check_text("The test set contained 300 patients, of whom 37 (13.3%) had a malignant nodule.")
    f = next(f for f in bad.findings if f.id == "split-percentages")
    assert "13.3% for 37, but 37 of 300 patients is 12.3%" in f.message


def test_results_are_deterministic():
    text = "\n\n".join(RULES.rule(r).examples_fires[0] for r in RULES.ids if "|" not in RULES.rule(r).examples_fires[0])
    a = json.dumps([f.to_dict() for f in check_text(text).findings], sort_keys=True)
    b = json.dumps([f.to_dict() for f in check_text(text).findings], sort_keys=True)
    assert a == b


# ---------------------------------------------------------------------------------------------- the rules file


def test_the_builtin_rules_load_and_name_their_checks():
    assert RULES.rules and len(set(RULES.ids)) == len(RULES.ids)
    assert {r.check for r in RULES.rules if r.check} == set(CHECKS)
    for r in RULES.rules:
        assert (r.trigger is None) != (r.check is None)


def test_every_problem_of_a_rules_file_is_reported_with_its_place():
    text = (
        "rules:\n"
        "  - id: Bad_Id\n"
        "    title: t\n"
        "    severity: error\n"
        "    message: 'seen {nothing}'\n"
        "    sources: [a]\n"
        "    colour: red\n"
        "    trigger:\n"
        "      cues: {phrases: [x]}\n"
        "      without: [{phrases: [y], scope: 'nearby'}]\n"
        "  - id: counts\n"
        "    title: t\n"
        "    severity: note\n"
        "    message: m\n"
        "    sources: [a]\n"
        "    check: no-such-check\n"
        "  - id: two-kinds\n"
        "    title: t\n"
        "    severity: note\n"
        "    message: m\n"
        "    sources: [a]\n"
        "    check: split-sums\n"
        "    trigger: {cues: {regex: ['(a']}}\n"
    )
    with pytest.raises(ChecklistError) as exc:
        parse_rules(text, "my-rules.yaml")
    problems = exc.value.problems
    assert all(re.match(r"^my-rules\.yaml:\d+:\d+: ", p) for p in problems)
    joined = "\n".join(problems)
    for expected in ("my-rules.yaml:2:", "lower-case slug", "my-rules.yaml:4:", "'warning' or 'note'",
                     "unknown placeholder {nothing}", "my-rules.yaml:7:", "unknown key",
                     "'within N'", "no check named 'no-such-check'", "either a trigger",
                     "not a valid regular expression"):
        assert expected in joined, expected


def test_a_rules_file_that_is_not_yaml_is_located():
    with pytest.raises(ChecklistError, match=r"r\.yaml:\d+:\d+: not valid YAML"):
        parse_rules("rules:\n  - id: [unclosed\n", "r.yaml")


# ---------------------------------------------------------------------------------------------- demo documents


def test_wrist_manuscript_shows_its_conflict_and_its_threshold_pitfall():
    report = check_document(DEMO / "wrist-fracture-manuscript.md", CHECKLIST)
    assert _ids(report) == ["threshold-unstated", "counts-disagree"]
    conflict = report.findings[1]
    assert "120 patients" in conflict.message and "100 patients" in conflict.message
    assert {e.location.section[-1] for e in conflict.evidence} == {"Abstract", "3.1 Data"}


def test_kidney_proposal_shows_its_site_conflict_and_its_tolerance_pitfall():
    report = check_document(DEMO / "kidney-stone-benchmark-proposal.md", "benchmark-proposal")
    ids = _ids(report)
    assert "surface-tolerance" in ids and "counts-disagree" in ids
    conflict = next(f for f in report.findings if f.id == "counts-disagree")
    assert "three centres" in conflict.message and "four contributing sites" in conflict.message
    # Also correct by their definitions, though not the planted pitfalls: some patients have two scans and
    # metrics are averaged over scans; the winner is named with no ranking uncertainty and no spread.
    assert set(ids) == {"surface-tolerance", "counts-disagree", "per-image-averaging", "winner-without-uncertainty"}
    assert "hausdorff-variant" not in ids  # the proposal names HD95 and the maximum


# ---------------------------------------------------------------------------------------------- outside check




def _with_splits(info: dict, test_delta: int = 0) -> str:
    """The dataset's own description, and its split sizes (from n_samples) in a sentence of ours."""
    n = info["n_samples"]
    return (info["description"] + "\n\nSplit sizes (training/validation/test): "
            f"{n['train']:,}/{n['val']:,}/{n['test'] + test_delta:,}.")


# Source: the dataset descriptions and n_samples that the medmnist package (MedMNIST v2/v3) ships in
# medmnist/info.py. Where a description states a total, medmnist's split sizes add up to it.
def test_split_sums_agree_with_the_medmnist_descriptions():
    info = medmnist_info()
    stating_total = [k for k, v in info.items() if f"{sum(v['n_samples'].values()):,}" in v["description"]]
    assert len(stating_total) >= 5
    for flag, v in info.items():
        assert "split-sum" not in _ids(check_text(_with_splits(v), "dataset-description")), flag
    for flag in stating_total:
        if "/" in info[flag]["description"]:
            continue  # states its split sizes itself: perturbed below
        perturbed = check_text(_with_splits(info[flag], test_delta=37), "dataset-description")
        assert "split-sum" in _ids(perturbed), flag


def test_split_sum_reads_a_medmnist_description_that_states_both():
    info = medmnist_info()
    own = [v["description"] for v in info.values()
           if re.search(r"\d/\d", v["description"]) and f"{sum(v['n_samples'].values()):,}" in v["description"]]
    if not own:
        pytest.skip("this medmnist version has no description that states both its splits and its total")
    for text in own:
        assert "split-sum" not in _ids(check_text(text, "dataset-description"))
        m = re.search(r"(\d[\d,]*)/(\d[\d,]*)/(\d[\d,]*)", text)
        bumped = text.replace(m.group(0), f"{m.group(1)}/{m.group(2)}/{int(m.group(3).replace(',', '')) + 100:,}")
        assert "split-sum" in _ids(check_text(bumped, "dataset-description"))


# Source: as above; the ratios ("7:1:2", "9:1") that medmnist's descriptions state for its splits.
def test_split_ratios_agree_with_the_medmnist_descriptions():
    info = medmnist_info()
    checked = 0
    for flag, v in info.items():
        m = re.search(r"ratio of (\d+(?::\d+)+)", v["description"])
        if not m:
            continue
        checked += 1
        text = _with_splits(v)
        assert "split-percentages" not in _ids(check_text(text, "dataset-description")), flag
        wrong = {"9:1": "7:3", "7:1:2": "5:2:3"}.get(m.group(1), "1:1")
        assert "split-percentages" in _ids(check_text(text.replace(m.group(1), wrong), "dataset-description")), flag
    assert checked >= 5


def test_a_table_reaches_the_rules_as_cells_not_as_text_split_on_bars(tmp_path):
    """A header cell holding a bar ("Mean age | years", written with Markdown's escaped bar) stays one cell: the
    Total row's patient count is checked against its own column (120 + 70 is not 200), and the age column is left
    alone. Splitting the row's text on "|" shifted the headers by one and checked neither column."""
    table = ("We report the patients per site.\n\n"
             "| Site | Patients | Mean age \\| years |\n|---|---|---|\n"
             "| North | 120 | 50 |\n| South | 70 | 60 |\n| Total | 200 | 55 |\n")
    path = tmp_path / "sites.md"
    path.write_text(table, encoding="utf-8")
    from checker.reading import read_document

    rows = [b for b in read_document(path).blocks if b.kind == "table-row"]
    assert rows[0].cells == ("Site", "Patients", "Mean age | years")
    assert rows[0].text == "Site | Patients | Mean age | years"  # what users see quoted stays the joined text
    found = [f for f in check_document(path, CHECKLIST).findings if f.id == "split-sum"]
    assert len(found) == 1 and "column Patients" in found[0].message and "190" in found[0].message


def test_rule_cues_go_through_the_checklists_cue_layer():
    """A rule's cues are matched as a checklist's are (one cue layer, matching.matcher.CompiledCues): a phrase
    matches its spelling variants and lemmas, a regex that backtracks too long costs a one-line error naming the
    document with the same hint as a checklist's, and rules/ compiles no matcher or regex of its own."""
    from checker.core.errors import InputError
    from checker.engine import compiled_for, document_from_text
    from checker.rules import run_rules

    head = "  - id: {}\n    title: t\n    severity: note\n    message: 'seen {{seen}}'\n    sources: [a]\n"
    rules = parse_rules("version: '1'\nrules:\n" + head.format("by-hand")
                        + "    trigger: {cues: {phrases: [label by hand]}}\n", "my-rules.yaml")
    slow = parse_rules("version: '1'\nrules:\n" + head.format("slow")
                       + "    trigger: {cues: {regex: ['(?:a|aa)+$']}}\n", "slow-rules.yaml")
    compiled = compiled_for(CHECKLIST)
    doc = document_from_text("The masks were labeled by hand in 2020.")
    found = run_rules(compiled.scan(doc), ruleset=rules)
    assert [f.message for f in found] == ["seen labeled by hand"]
    doc = document_from_text("The masks " + "a" * 60 + "b were drawn.")
    with pytest.raises(InputError) as exc:
        run_rules(compiled.scan(doc), ruleset=slow, regex_seconds=0.05)
    assert "the rule regex" in str(exc.value) and "--regex-seconds" in str(exc.value)
    assert doc.path in str(exc.value)
    rules_dir = Path(__file__).resolve().parent.parent / "checker" / "rules"
    for p in rules_dir.glob("*.py"):
        text = p.read_text(encoding="utf-8")
        for own in ("PhraseMatcher", "TokenPatterns", "add_phrases", "required_word_sets", "regexscan"):
            assert own not in text, f"{p.name} compiles cues itself ({own})"
