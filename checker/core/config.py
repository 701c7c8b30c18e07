"""Settings: command line > --config FILE > [tool.studygap] in the nearest pyproject.toml or studygap.yaml > defaults.

The nearest file is searched from the current folder up to the project's root (see search_folders)."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .errors import UsageError

FAIL_ON = ("missing", "partial")
_KEYS = {"checklist", "fail-on", "fail_on", "waivers", "ignore-sections", "ignore_sections", "rules", "judge"}
#: who has the last word on a status: the learned judge over the cues' verdict, or the cues alone
JUDGES = ("learned", "cues")


def default_judge() -> str:
    """The judge when no setting names one: STUDYGAP_JUDGE ("learned" or "cues"), else learned."""
    import os

    value = os.environ.get("STUDYGAP_JUDGE", "").strip().lower()
    return value if value in JUDGES else "learned"


@dataclass(frozen=True)
class Config:
    checklist: str = "auto"
    fail_on: str | None = None
    #: item id -> the user's reason; a waiver without a reason is refused
    waivers: dict[str, str] = field(default_factory=dict)
    #: headings whose sections are not searched (e.g. "Supplementary material")
    ignore_sections: tuple[str, ...] = ()
    #: rule id -> False to switch a rule off
    rules: dict[str, bool] = field(default_factory=dict)
    source: str = "defaults"
    #: "learned": the judge fitted on labelled documents may move the cues' verdict (checker.verdicts.judge);
    #: "cues": the cues alone decide (default: STUDYGAP_JUDGE when it names one of them, else learned)
    judge: str = field(default_factory=default_judge)



def _load_toml(path: Path) -> dict[str, Any]:
    try:
        import tomllib
    except ModuleNotFoundError:  # Python 3.10
        import tomli as tomllib  # type: ignore[no-redef]
    try:
        with path.open("rb") as fh:
            data = tomllib.load(fh)
    except (OSError, tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise UsageError(f"{path}: cannot read the configuration: {' '.join(str(exc).split())}") from None
    if path.name != "pyproject.toml":
        return data
    tool = data.get("tool", {})
    table = tool.get("studygap", {}) if isinstance(tool, dict) else {}
    if not isinstance(table, dict):
        raise UsageError(f"{path}: [tool.studygap] must be a table of settings")
    return table


def _load_yaml(path: Path) -> dict[str, Any]:
    import yaml

    try:
        data = yaml.safe_load(path.read_text(encoding="utf-8")) or {}
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        where = f"{path}:{mark.line + 1}:{mark.column + 1}" if mark else str(path)
        problem = " ".join(str(exc.problem or exc.context or "a syntax error").split())
        raise UsageError(f"{where}: the configuration is not valid YAML ({problem})") from None
    except (OSError, UnicodeDecodeError, yaml.YAMLError) as exc:
        raise UsageError(f"{path}: cannot read the configuration: {' '.join(str(exc).split())}") from None
    if not isinstance(data, dict):
        raise UsageError(f"{path}: the configuration must be a mapping of settings")
    return data.get("studygap", data) if isinstance(data.get("studygap"), dict) else data


#: a folder holding one of these is a project's root: the search for settings stops there
PROJECT_MARKERS = (".git", "pyproject.toml")
_MAX_CONFIG_BYTES = 1024 * 1024


def search_folders(start: Path, home: Path | None = None) -> list[Path]:
    """The folders searched for settings, nearest first: from start up to the nearest project root (a folder
    with .git or pyproject.toml), never above the user's home folder and never the file system's root. Outside
    the home folder with no project root above, only start itself: a settings file planted in a shared parent
    folder (/tmp, a mounted drive) is never read."""
    start = start.resolve()
    try:
        home = (home or Path.home()).resolve()
    except (RuntimeError, OSError):  # no home folder known
        home = None
    chain = [start, *start.parents]
    folders: list[Path] = []
    for folder in chain:
        if folder == Path(folder.anchor):  # the file system's root is nobody's project
            break
        folders.append(folder)
        if any((folder / m).exists() for m in PROJECT_MARKERS) or folder == home:
            return folders
    return [start] if start != Path(start.anchor) else []


def _small_text(path: Path) -> str | None:
    """The text of a regular settings file, or None when it is not one (a folder, a pipe) or is too large."""
    try:
        if not path.is_file() or path.stat().st_size > _MAX_CONFIG_BYTES:
            return None
        return path.read_text(encoding="utf-8", errors="replace")
    except OSError:
        return None


def find_config(start: Path, home: Path | None = None) -> Path | None:
    """The nearest studygap.yaml, or pyproject.toml with a [tool.studygap] table, in search_folders(start)."""
    for folder in search_folders(start, home):
        for name in ("studygap.yaml", "studygap.yml"):
            if (folder / name).is_file():
                return folder / name
        pp = folder / "pyproject.toml"
        text = _small_text(pp)
        if text is not None and "[tool.studygap" in text:
            return pp
    return None


def load_config(explicit: str | None = None, start: Path | None = None) -> Config:
    path = Path(explicit) if explicit else find_config(start or Path.cwd())
    if path is None:
        return Config()
    if not path.is_file():
        raise UsageError(f"{path}: no such configuration file")
    if path.stat().st_size > _MAX_CONFIG_BYTES:
        raise UsageError(f"{path}: the configuration is larger than 1 MB; a settings file is a few lines")
    data = _load_toml(path) if path.suffix == ".toml" else _load_yaml(path)
    return parse_config(data, str(path))


def parse_config(data: dict[str, Any], source: str) -> Config:
    if not all(isinstance(k, str) for k in data):
        raise UsageError(f"{source}: every setting's name must be text")
    unknown = sorted(set(data) - _KEYS)
    if unknown:
        raise UsageError(f"{source}: unknown setting {unknown[0]!r} (known: checklist, fail-on, waivers, "
                         "ignore-sections, rules, judge)")
    fail_on = data.get("fail-on", data.get("fail_on"))
    if fail_on is not None and fail_on not in FAIL_ON:
        raise UsageError(f"{source}: fail-on must be 'missing' or 'partial', not {fail_on!r}")
    waivers_raw = data.get("waivers", {}) or {}
    if not isinstance(waivers_raw, dict):
        raise UsageError(f"{source}: waivers must map item ids to reasons, e.g. waivers = {{\"ranking.method\" = "
                         "\"single method, nothing is ranked\"}}")
    waivers = {}
    for item, reason in waivers_raw.items():
        if not isinstance(item, (str, int, float)):
            raise UsageError(f"{source}: a waiver's item id must be text, like \"ranking.method\"")
        if not isinstance(reason, str) or not reason.strip():
            raise UsageError(f"{source}: the waiver of {item!r} needs a reason (why the item does not apply)")
        waivers[str(item)] = reason.strip()
    ignore = data.get("ignore-sections", data.get("ignore_sections", [])) or []
    if isinstance(ignore, str):
        ignore = [ignore]
    if not isinstance(ignore, list) or not all(isinstance(s, (str, int, float)) for s in ignore):
        raise UsageError(f"{source}: ignore-sections must be a list of section headings")
    rules = data.get("rules", {}) or {}
    if not isinstance(rules, dict) or not all(isinstance(v, bool) for v in rules.values()):
        raise UsageError(f"{source}: rules must map rule ids to true or false")
    checklist = data.get("checklist", "auto")
    if not isinstance(checklist, str):
        raise UsageError(f"{source}: checklist must be a checklist id or a path, like \"validation-study\"")
    judge = data.get("judge", default_judge())
    if judge not in JUDGES:
        raise UsageError(f"{source}: judge must be 'learned' or 'cues', not {judge!r}")
    return Config(str(checklist), fail_on, waivers, tuple(str(s) for s in ignore), dict(rules), source, judge)
