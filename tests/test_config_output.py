"""Settings precedence and safe output writing."""

from __future__ import annotations

import pytest

from checker.core.config import find_config, load_config, parse_config
from checker.core.errors import UsageError
from checker.core.output import write_atomic


def test_pyproject_table_is_found_upwards(tmp_path):
    (tmp_path / "pyproject.toml").write_text(
        '[project]\nname = "paper"\n\n[tool.studygap]\nchecklist = "validation-study"\nfail-on = "partial"\n'
        '[tool.studygap.waivers]\n"ranking.method" = "one method only"\n'
    )
    sub = tmp_path / "draft" / "sections"
    sub.mkdir(parents=True)
    cfg = load_config(start=sub)
    assert cfg.checklist == "validation-study" and cfg.fail_on == "partial"
    assert cfg.waivers == {"ranking.method": "one method only"}


def test_studygap_yaml_wins_over_a_pyproject_further_up(tmp_path):
    (tmp_path / "pyproject.toml").write_text('[tool.studygap]\nchecklist = "validation-study"\n')
    inner = tmp_path / "inner"
    inner.mkdir()
    (inner / "studygap.yaml").write_text("checklist: benchmark-proposal\nignore-sections: [Appendix]\n")
    assert find_config(inner) == inner / "studygap.yaml"
    cfg = load_config(start=inner)
    assert cfg.checklist == "benchmark-proposal" and cfg.ignore_sections == ("Appendix",)


def test_a_pyproject_without_our_table_is_passed_over(tmp_path):
    (tmp_path / "pyproject.toml").write_text('[project]\nname = "x"\n')
    assert find_config(tmp_path) is None


@pytest.mark.parametrize(
    "data, words",
    [
        ({"waivers": {"ranking.method": ""}}, "needs a reason"),
        ({"fail-on": "sometimes"}, "fail-on must be"),
        ({"checklists": "x"}, "unknown setting 'checklists'"),
        ({"rules": {"hd-percentile": "off"}}, "true or false"),
    ],
)
def test_bad_settings_are_refused_with_a_reason(data, words):
    with pytest.raises(UsageError) as info:
        parse_config(data, "studygap.yaml")
    assert words in str(info.value) and "studygap.yaml" in str(info.value)


def test_atomic_write_replaces_whole_and_leaves_no_temp(tmp_path):
    target = tmp_path / "report.json"
    target.write_text("old")
    write_atomic(target, "new contents")
    assert target.read_text() == "new contents"
    assert [p.name for p in tmp_path.iterdir()] == ["report.json"]


def test_output_never_overwrites_an_input_and_needs_an_existing_folder(tmp_path):
    doc = tmp_path / "paper.md"
    doc.write_text("# Title\n")
    with pytest.raises(UsageError, match="never writes over an input"):
        write_atomic(doc, "x", [str(doc)])
    assert doc.read_text() == "# Title\n"
    with pytest.raises(UsageError, match="does not exist"):
        write_atomic(tmp_path / "missing" / "out.json", "x")


def test_a_written_report_is_readable_like_any_new_file(tmp_path):
    import os
    import stat

    old = os.umask(0o022)
    try:
        write_atomic(tmp_path / "report.html", "<p>x</p>")
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "report.html").stat().st_mode) == 0o644


def test_writing_to_a_pipe_or_device_keeps_it_what_it_is(tmp_path):
    import os
    import stat
    import threading

    pipe = tmp_path / "report.fifo"
    os.mkfifo(pipe)
    received = []
    reader = threading.Thread(target=lambda: received.append(pipe.read_bytes()), daemon=True)
    reader.start()
    write_atomic(pipe, "report through a pipe\n")
    reader.join(timeout=10)
    assert received == [b"report through a pipe\n"]
    assert stat.S_ISFIFO(os.stat(pipe).st_mode)  # still a pipe, not a plain file renamed over it
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.fifo"]
