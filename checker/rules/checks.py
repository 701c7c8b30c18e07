"""The named checks a rule may call (``check:`` in a rules file), with the placeholders each one's message may use."""

from __future__ import annotations


from .model import Check
from .counts import check_counts
from .sums import check_split_sums
from .shares import check_split_percentages


CHECKS: dict[str, Check] = {
    "consistency-counts": Check(check_counts, frozenset({"quantity", "first", "first_where", "second",
                                                         "second_where", "values"})),
    "split-sums": Check(check_split_sums, frozenset({"sum", "unit", "parts", "total", "total_where"})),
    "split-percentages": Check(check_split_percentages, frozenset({"where", "mismatches"})),
}
