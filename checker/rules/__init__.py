"""Cross-item rules: metric pitfalls and numbers that contradict each other, read from checklists/rules.yaml.

A rule's trigger is data (cues that must occur, cues that silence it; data.py) or a named check (the consistency
of counts, split sums and percentages; checks.py); every finding quotes the passages that set it off.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..core.errors import UsageError
from .checks import CHECKS
from .data import compiled_rules, evaluate_data_rule
from .loading import load_rules, parse_rules
from .model import RuleSet
from .numbers import RunContext

if TYPE_CHECKING:
    from ..core.config import Config
    from ..matching.checklist import Checklist
    from ..matching.matcher import Scan
    from ..verdicts.report import Finding

__all__ = ["CHECKS", "load_rules", "parse_rules", "run_rules"]


def run_rules(scan: "Scan", items=None, checklist: "Checklist | None" = None, config: "Config | None" = None,
              ruleset: RuleSet | None = None, regex_seconds: float = 2.0) -> list[Finding]:
    """Every rule switched on in the configuration, on one scanned document, in the rules file's order; a rule's
    regex gets regex_seconds over the document, as a checklist's does (--regex-seconds)."""
    ruleset = ruleset or load_rules()
    switches = dict(config.rules) if config is not None else {}
    unknown = sorted(set(switches) - set(ruleset.ids))
    if unknown:
        raise UsageError(f"{getattr(config, 'source', 'configuration')}: there is no rule {unknown[0]!r} to switch "
                         f"on or off (rules: {', '.join(ruleset.ids)})")
    active = [r for r in ruleset.rules if switches.get(r.id, True)]
    if not active or not scan.sentences:
        return []
    compiled = compiled_rules(ruleset)
    hits = compiled.match(scan, regex_seconds) if any(r.trigger for r in active) else {}
    ctx = RunContext(scan)
    findings: list[Finding] = []
    for rule in active:
        if rule.trigger is not None:
            f = evaluate_data_rule(rule, scan, hits)
            if f is not None:
                findings.append(f)
        elif rule.check is not None:
            findings += CHECKS[rule.check].run(scan, rule, ctx)
    return findings
