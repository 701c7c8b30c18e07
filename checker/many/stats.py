"""Agreement and uncertainty figures: Wilson intervals, Cohen's kappa, precision/recall/F1, bootstrap intervals.

Pure functions of their arguments; nothing here reads files or prints, and random draws come only from a
seeded ``random.Random`` so that the same inputs always give the same figures.
"""

from __future__ import annotations

import math
import random
from dataclasses import dataclass
from typing import Any, Callable, Hashable, Iterator, Sequence, TypeVar

T = TypeVar("T")


# ------------------------------------------------------------------------------------------------ Wilson interval


def wilson_interval(proportion: float, n: int, z: float = 1.96) -> tuple[float, float]:
    """The Wilson score interval (low, high) for an observed proportion out of n.

    With n == 0 nothing is known and the interval is the whole range (0.0, 1.0).
    """
    if n < 0:
        raise ValueError(f"n must be 0 or more, not {n}")
    if not 0.0 <= proportion <= 1.0 or math.isnan(proportion):
        raise ValueError(f"a proportion lies between 0 and 1, not {proportion}")
    if z <= 0:
        raise ValueError(f"z must be above 0, not {z}")
    if n == 0:
        return 0.0, 1.0
    z2 = z * z
    denom = 1.0 + z2 / n
    centre = (proportion + z2 / (2 * n)) / denom
    half = (z / denom) * math.sqrt(proportion * (1.0 - proportion) / n + z2 / (4.0 * n * n))
    # The interval always holds the observed proportion and lies in [0, 1]. Rounding alone can put the low end a
    # hair above 0 when nothing was observed (1.4e-17 for 0 of 24) or the high end a hair below 1 for n of n;
    # both ends are clamped so that the rate minus its low end, and its high end minus the rate, are never negative.
    low = min(max(0.0, centre - half), proportion)
    high = max(min(1.0, centre + half), proportion)
    return low, high


def wilson_counts(successes: int, n: int, z: float = 1.96) -> tuple[float, float]:
    """The Wilson interval for successes out of n (a convenience over wilson_interval)."""
    if not 0 <= successes <= n:
        raise ValueError(f"successes must lie between 0 and n ({n}), not {successes}")
    return wilson_interval(successes / n if n else 0.0, n, z)


# ------------------------------------------------------------------------------------------------ Cohen's kappa


def _check_pairs(a: Sequence[Any], b: Sequence[Any]) -> None:
    if len(a) != len(b):
        raise ValueError(f"the two label sequences differ in length ({len(a)} and {len(b)})")
    if not a:
        raise ValueError("the label sequences are empty")


def observed_agreement(a: Sequence[Hashable], b: Sequence[Hashable]) -> float:
    """The share of positions where the two sequences carry the same label."""
    _check_pairs(a, b)
    return sum(1 for x, y in zip(a, b) if x == y) / len(a)


def cohen_kappa(a: Sequence[Hashable], b: Sequence[Hashable]) -> float:
    """Cohen's kappa between two raters' labels (any hashable categories).

    Returns NaN when chance agreement is 1 (both raters used one and the same category throughout), where
    kappa is undefined.
    """
    _check_pairs(a, b)
    n = len(a)
    count_a: dict[Hashable, int] = {}
    count_b: dict[Hashable, int] = {}
    agree = 0
    for x, y in zip(a, b):
        count_a[x] = count_a.get(x, 0) + 1
        count_b[y] = count_b.get(y, 0) + 1
        if x == y:
            agree += 1
    p_o = agree / n
    p_e = sum(count_a[c] * count_b.get(c, 0) for c in count_a) / (n * n)
    if math.isclose(p_e, 1.0):
        return math.nan
    return (p_o - p_e) / (1.0 - p_e)


# ------------------------------------------------------------------------------------------------ precision, recall


@dataclass(frozen=True)
class BinaryScores:
    """Counts and scores for one positive class; a score is None where its denominator is zero."""

    tp: int
    fp: int
    fn: int
    tn: int

    @property
    def n(self) -> int:
        return self.tp + self.fp + self.fn + self.tn

    @property
    def support(self) -> int:
        """Positives according to the truth."""
        return self.tp + self.fn

    @property
    def predicted(self) -> int:
        """Positives according to the prediction."""
        return self.tp + self.fp

    @property
    def precision(self) -> float | None:
        return self.tp / self.predicted if self.predicted else None

    @property
    def recall(self) -> float | None:
        return self.tp / self.support if self.support else None

    @property
    def f1(self) -> float | None:
        # 2TP / (2TP + FP + FN): the harmonic mean of precision and recall, defined whenever either side
        # has a positive (and 0.0 then when they share none)
        denom = 2 * self.tp + self.fp + self.fn
        return 2 * self.tp / denom if denom else None

    def to_dict(self) -> dict[str, Any]:
        return {"tp": self.tp, "fp": self.fp, "fn": self.fn, "tn": self.tn, "support": self.support,
                "predicted": self.predicted, "precision": _round(self.precision), "recall": _round(self.recall),
                "f1": _round(self.f1)}


def binary_scores(truth: Sequence[bool], predicted: Sequence[bool]) -> BinaryScores:
    """Confusion counts of a prediction against the truth, for the positive class True."""
    if len(truth) != len(predicted):
        raise ValueError(f"truth and prediction differ in length ({len(truth)} and {len(predicted)})")
    tp = fp = fn = tn = 0
    for t, p in zip(truth, predicted):
        if t and p:
            tp += 1
        elif p:
            fp += 1
        elif t:
            fn += 1
        else:
            tn += 1
    return BinaryScores(tp, fp, fn, tn)


def precision_recall_f1(truth: Sequence[bool], predicted: Sequence[bool]) -> tuple[float | None, float | None,
                                                                                   float | None]:
    """(precision, recall, F1) for the positive class True; None where a score is undefined."""
    s = binary_scores(truth, predicted)
    return s.precision, s.recall, s.f1


# ------------------------------------------------------------------------------------------------ bootstrap


@dataclass(frozen=True)
class BootstrapInterval:
    """A percentile bootstrap interval; unpacks as (low, high).

    ``used`` counts the resamples on which the statistic was defined; the others (None or NaN) are left out.
    """

    low: float | None
    high: float | None
    level: float
    resamples: int
    used: int
    seed: int

    def __iter__(self) -> Iterator[float | None]:
        return iter((self.low, self.high))

    def to_dict(self) -> dict[str, Any]:
        return {"low": _round(self.low), "high": _round(self.high), "level": self.level,
                "resamples": self.resamples, "used": self.used, "seed": self.seed}


def quantile(sorted_values: Sequence[float], q: float) -> float:
    """The q-quantile of already sorted values by linear interpolation between order statistics."""
    if not sorted_values:
        raise ValueError("no values")
    if not 0.0 <= q <= 1.0:
        raise ValueError(f"q lies between 0 and 1, not {q}")
    pos = q * (len(sorted_values) - 1)
    lo = math.floor(pos)
    hi = min(lo + 1, len(sorted_values) - 1)
    frac = pos - lo
    return sorted_values[lo] + (sorted_values[hi] - sorted_values[lo]) * frac


def bootstrap_distribution(units: Sequence[T], statistic: Callable[[Sequence[T]], float | None],
                           n_resamples: int = 2000, seed: int = 0) -> list[float | None]:
    """The statistic on n_resamples resamples of the units drawn with replacement (same size as units)."""
    if not units:
        raise ValueError("the bootstrap needs at least one unit")
    if n_resamples < 1:
        raise ValueError(f"the bootstrap needs at least one resample, not {n_resamples}")
    rng = random.Random(seed)
    n = len(units)
    out: list[float | None] = []
    for _ in range(n_resamples):
        # floor(random() * n) rather than randrange: the same draws on every Python version
        sample = [units[int(rng.random() * n)] for _ in range(n)]
        out.append(statistic(sample))
    return out


def percentile_interval(values: Sequence[float | None], level: float = 0.95) -> tuple[float | None, float | None]:
    """The central ``level`` range of the values (None and NaN left out); (None, None) when none is left."""
    if not 0.0 < level < 1.0:
        raise ValueError(f"level lies strictly between 0 and 1, not {level}")
    kept = sorted(v for v in values if v is not None and not math.isnan(v))
    if not kept:
        return None, None
    alpha = (1.0 - level) / 2.0
    return quantile(kept, alpha), quantile(kept, 1.0 - alpha)


def bootstrap_ci(units: Sequence[T], statistic: Callable[[Sequence[T]], float | None], n_resamples: int = 2000,
                 seed: int = 0, level: float = 0.95) -> BootstrapInterval:
    """A percentile bootstrap interval for statistic(units), resampling whole units with a fixed seed.

    Resample the unit that was sampled independently (a document, not each item in it), so that items of one
    document stay together.
    """
    values = bootstrap_distribution(units, statistic, n_resamples, seed)
    low, high = percentile_interval(values, level)
    used = sum(1 for v in values if v is not None and not math.isnan(v))
    return BootstrapInterval(low, high, level, n_resamples, used, seed)


def _round(x: float | None, digits: int = 4) -> float | None:
    if x is None or math.isnan(x):
        return None
    return round(x, digits)
