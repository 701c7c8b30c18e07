"""Rules files read and validated (checklists/rules.yaml or the user's), every problem located FILE:LINE:COLUMN,
with the same YAML reading and cue checks as checklists (checker.core.marked, checker.matching.checklist)."""

from __future__ import annotations

from functools import lru_cache
from importlib import resources
from pathlib import Path

import regex

from ..core.errors import ChecklistError, UsageError
from ..matching.checklist import SLUG, Cues, Near, cue_block
from ..core.marked import Node, Problems, compose, expect_type, fields_of, text_of, texts_of

from .model import BUILTIN, CueSet, DATA_FIELDS, placeholders, Rule, RuleSet, Scope, SEVERITIES, Trigger
from .checks import CHECKS


def _scope(p: Problems, node: Node | None, path: str) -> Scope:
    if node is None:
        return Scope()
    v = node.value
    if isinstance(v, str):
        t = v.strip().lower()
        if t == "document":
            return Scope()
        if t in ("same_sentence", "same sentence", "sentence"):
            return Scope("sentence")
        m = regex.fullmatch(r"within\s+(\d+)(?:\s+sentences?)?", t)
        if m:
            n = int(m.group(1))
            if n > 20:
                p.add(node, path, "must be at most 'within 20' sentences")
            return Scope("within", min(n, 20)) if n else Scope("sentence")
    p.add(node, path, "give document, same_sentence or 'within N' (N sentences before or after)")
    return Scope()


def _cue_sets(p: Problems, node: Node, path: str) -> tuple[CueSet, ...]:
    items = node.value if isinstance(node.value, list) else [node]
    if isinstance(node.value, list) and not node.value:
        p.add(node, path, "give at least one cue set")
    out = []
    for i, sub in enumerate(items):
        spath = f"{path}[{i}]" if isinstance(node.value, list) else path
        cues, fields = cue_block(p, sub, spath, {"scope"})
        out.append(CueSet(cues, _scope(p, fields.get("scope"), f"{spath} -> scope")))
    return tuple(out)


def _trigger(p: Problems, node: Node, path: str) -> Trigger | None:
    fields = fields_of(p, node, path, {"cues"}, {"with", "without"})
    if not fields:
        return None
    cues = Cues()
    near = None
    unless = None
    if "cues" in fields:
        cues, cfields = cue_block(p, fields["cues"], f"{path} -> cues", {"near", "unless"})
        if "near" in cfields:
            ncues, nfields = cue_block(p, cfields["near"], f"{path} -> cues -> near", {"within"})
            within = 0
            if "within" in nfields and expect_type(p, nfields["within"], f"{path} -> cues -> near -> within", int):
                within = nfields["within"].value
                if not 0 <= within <= 20:
                    p.add(nfields["within"], f"{path} -> cues -> near -> within", "must be between 0 and 20 sentences")
            near = Near(ncues, within)
        if "unless" in cfields:
            unless, _ = cue_block(p, cfields["unless"], f"{path} -> cues -> unless")
    with_ = _cue_sets(p, fields["with"], f"{path} -> with") if "with" in fields else ()
    without = _cue_sets(p, fields["without"], f"{path} -> without") if "without" in fields else ()
    return Trigger(cues, near, unless, with_, without)


def _rule(p: Problems, node: Node, path: str) -> Rule | None:
    if isinstance(node.value, dict) and isinstance(node.value.get("id", (None, Node(None, 0, 0)))[1].value, str):
        path = f'rule "{node.value["id"][1].value.strip()}"'
    fields = fields_of(p, node, path, {"id", "title", "severity", "message", "sources"},
                   {"trigger", "check", "examples"})
    if not fields:
        return None
    rid = text_of(p, fields.get("id"), f"{path} -> id")
    if rid and not SLUG.match(rid):
        p.add(fields["id"], f"{path} -> id", "a rule id is a lower-case slug such as 'hausdorff-variant'")
    severity = text_of(p, fields.get("severity"), f"{path} -> severity")
    if severity and severity not in SEVERITIES:
        p.add(fields["severity"], f"{path} -> severity", "must be 'warning' or 'note'")
    sources = texts_of(p, fields.get("sources"), f"{path} -> sources")
    if "sources" in fields and not sources:
        p.add(fields["sources"], f"{path} -> sources", "name at least one published source")
    trigger = _trigger(p, fields["trigger"], f"{path} -> trigger") if "trigger" in fields else None
    check = text_of(p, fields.get("check"), f"{path} -> check") if "check" in fields else None
    if ("trigger" in fields) == ("check" in fields):
        p.add(node, path, "give either a trigger (cues as data) or a check (a named Python check), not both")
    if check and check not in CHECKS:
        p.add(fields["check"], f"{path} -> check", f"no check named {check!r} (known: {', '.join(sorted(CHECKS))})")
    message = text_of(p, fields.get("message"), f"{path} -> message")
    if message:
        names = placeholders(message)
        allowed = DATA_FIELDS if check is None else CHECKS[check].fields if check in CHECKS else None
        if names is None:
            p.add(fields["message"], f"{path} -> message",
                  "unbalanced braces; write {name} for a value, {{ for a brace")
        elif allowed is not None:
            for n in names:
                if n not in allowed:
                    p.add(fields["message"], f"{path} -> message",
                          f"unknown placeholder {{{n}}} (this rule can use {', '.join(sorted(allowed))})")
    fires: tuple[str, ...] = ()
    silent: tuple[str, ...] = ()
    if "examples" in fields:
        ef = fields_of(p, fields["examples"], f"{path} -> examples", {"fires", "silent"}, set())
        fires = texts_of(p, ef.get("fires"), f"{path} -> examples -> fires")
        silent = texts_of(p, ef.get("silent"), f"{path} -> examples -> silent")
    return Rule(rid, text_of(p, fields.get("title"), f"{path} -> title"), severity, " ".join(message.split()),
                sources, trigger, check, fires, silent)


def parse_rules(text: str, file: str) -> RuleSet:
    """Validate and build the rules from YAML text; raise ChecklistError with every problem located."""
    p = Problems(file)
    root = compose(text, file)
    top = fields_of(p, root, "", {"rules"}, {"version", "description"})
    version = ""
    if "version" in top:
        v = top["version"].value
        numeric = isinstance(v, (int, float)) and not isinstance(v, bool)
        version = str(v) if numeric else text_of(p, top["version"], "version")
    rules: list[Rule] = []
    if "rules" in top and expect_type(p, top["rules"], "rules", list):
        seen: dict[str, int] = {}
        for i, rnode in enumerate(top["rules"].value):
            r = _rule(p, rnode, f"rules[{i}]")
            if r is None:
                continue
            if r.id in seen:
                p.add(rnode, f'rule "{r.id}" -> id', f"duplicate rule id (first defined at line {seen[r.id]})")
            seen.setdefault(r.id, rnode.line)
            rules.append(r)
        if not top["rules"].value:
            p.add(top["rules"], "rules", "give at least one rule")
    if p.items:
        raise ChecklistError(p.lines())
    return RuleSet(version, tuple(rules), file)


@lru_cache(maxsize=8)
def _parse_cached(text: str, file: str) -> RuleSet:
    from ..resultcache import parsed

    return parsed("RuleSet", text, file, "", lambda: parse_rules(text, file))


def load_rules(path: str | Path | None = None) -> RuleSet:
    """The built-in rules (checklists/rules.yaml), or a rules file by path."""
    if path is None:
        text = (resources.files("checker.checklists") / BUILTIN).read_text(encoding="utf-8")
        return _parse_cached(text, f"checklists/{BUILTIN}")
    p = Path(path)
    if not p.is_file():
        raise UsageError(f"{p}: no such rules file")
    try:
        text = p.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise ChecklistError([f"{p}:1:1: the rules file is not UTF-8 text"]) from None
    return _parse_cached(text, str(p))
