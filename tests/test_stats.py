"""Wilson intervals, Cohen's kappa, precision/recall/F1 and the bootstrap, checked against outside references."""

from __future__ import annotations

import math
import random
import statistics

import numpy as np
import pytest

from checker.many.stats import (
    binary_scores,
    bootstrap_ci,
    bootstrap_distribution,
    cohen_kappa,
    observed_agreement,
    percentile_interval,
    precision_recall_f1,
    quantile,
    wilson_counts,
    wilson_interval,
)


def _random_pairs(seed: int) -> tuple[list[str], list[str]]:
    rng = random.Random(seed)
    cats = ["reported", "partial", "missing", "not-applicable"][: rng.randint(2, 4)]
    n = rng.randint(5, 80)
    a = [rng.choice(cats) for _ in range(n)]
    # agreement well above chance for some seeds, near chance for others
    keep = rng.random()
    b = [x if rng.random() < keep else rng.choice(cats) for x in a]
    return a, b


# ---------------------------------------------------------------------------------------------------- kappa


@pytest.mark.filterwarnings("ignore::UserWarning")  # scikit-learn warns when kappa is undefined
@pytest.mark.parametrize("seed", range(40))
def test_kappa_equals_scikit_learn(seed):
    # external reference: sklearn.metrics.cohen_kappa_score
    from sklearn.metrics import cohen_kappa_score

    a, b = _random_pairs(seed)
    theirs = cohen_kappa_score(a, b)
    if math.isnan(theirs):  # one category throughout: undefined on both sides
        assert math.isnan(cohen_kappa(a, b))
    else:
        assert cohen_kappa(a, b) == pytest.approx(theirs, abs=1e-12)


def test_kappa_textbook_two_by_two():
    # from memory: the common textbook 2x2 example (20 yes/yes, 5 yes/no, 10 no/yes, 15 no/no) has
    # p_o = 0.70, p_e = 0.50 and kappa = 0.40; verified against scikit-learn below
    from sklearn.metrics import cohen_kappa_score

    a = ["yes"] * 25 + ["no"] * 25
    b = ["yes"] * 20 + ["no"] * 5 + ["yes"] * 10 + ["no"] * 15
    assert observed_agreement(a, b) == pytest.approx(0.70)
    assert cohen_kappa(a, b) == pytest.approx(0.40)
    assert cohen_kappa(a, b) == pytest.approx(cohen_kappa_score(a, b))


def test_kappa_perfect_and_undefined():
    assert cohen_kappa(["a", "b", "a"], ["a", "b", "a"]) == pytest.approx(1.0)
    # both raters used one category only: chance agreement is 1, kappa undefined (as scikit-learn: NaN)
    assert math.isnan(cohen_kappa(["a", "a"], ["a", "a"]))
    # a rater who never varies earns no credit beyond chance
    assert cohen_kappa(["a", "b", "a", "b"], ["a", "a", "a", "a"]) == pytest.approx(0.0)


def test_kappa_refuses_unequal_or_empty():
    with pytest.raises(ValueError, match="differ in length"):
        cohen_kappa(["a"], ["a", "b"])
    with pytest.raises(ValueError, match="empty"):
        cohen_kappa([], [])


# ---------------------------------------------------------------------------------------------------- F1


@pytest.mark.parametrize("seed", range(40))
def test_precision_recall_f1_equal_scikit_learn(seed):
    # external reference: sklearn.metrics precision_score, recall_score, f1_score (zero_division=nan marks
    # the undefined cases, which we give as None)
    from sklearn.metrics import f1_score, precision_score, recall_score

    a, b = _random_pairs(seed)
    truth = [x in ("reported", "partial") for x in a]
    pred = [x in ("reported", "partial") for x in b]
    p, r, f = precision_recall_f1(truth, pred)
    for ours, theirs in ((p, precision_score(truth, pred, zero_division=np.nan)),
                         (r, recall_score(truth, pred, zero_division=np.nan)),
                         (f, f1_score(truth, pred, zero_division=np.nan))):
        if ours is None:
            assert math.isnan(theirs)
        else:
            assert ours == pytest.approx(theirs, abs=1e-12)


def test_f1_edge_cases_match_scikit_learn():
    from sklearn.metrics import f1_score, precision_score, recall_score

    cases = [
        ([False, False], [False, False]),  # no positive anywhere: everything undefined
        ([False, False], [True, False]),  # truth has no positive: recall undefined, F1 = 0
        ([True, False], [False, False]),  # prediction has no positive: precision undefined, F1 = 0
        ([True, True], [True, True]),
    ]
    for truth, pred in cases:
        s = binary_scores(truth, pred)
        for ours, fn in ((s.precision, precision_score), (s.recall, recall_score), (s.f1, f1_score)):
            theirs = fn(truth, pred, zero_division=np.nan)
            assert (ours is None and math.isnan(theirs)) or ours == pytest.approx(theirs), (truth, pred, fn)


def test_binary_counts():
    s = binary_scores([True, True, False, False, True], [True, False, True, False, True])
    assert (s.tp, s.fp, s.fn, s.tn) == (2, 1, 1, 1)
    assert s.support == 3 and s.predicted == 3 and s.n == 5
    assert s.to_dict()["f1"] == pytest.approx(2 / 3, abs=1e-4)


# ---------------------------------------------------------------------------------------------------- Wilson


@pytest.mark.parametrize("k, n, low, high", [
    # from memory, verified against statsmodels: Newcombe (1998), Statistics in Medicine 17:857-872,
    # worked examples of the Wilson score interval (95%)
    (81, 263, 0.2553, 0.3662),
    (15, 148, 0.0624, 0.1605),
    (0, 20, 0.0000, 0.1611),
    (1, 29, 0.0061, 0.1718),
])
def test_wilson_newcombe_worked_examples(k, n, low, high):
    lo, hi = wilson_interval(k / n, n)
    assert round(lo, 4) == pytest.approx(low, abs=1e-4)
    assert round(hi, 4) == pytest.approx(high, abs=1e-4)


@pytest.mark.parametrize("seed", range(30))
def test_wilson_equals_statsmodels(seed):
    # external reference: statsmodels.stats.proportion.proportion_confint(method="wilson")
    from scipy.stats import norm
    from statsmodels.stats.proportion import proportion_confint

    rng = random.Random(seed)
    n = rng.randint(1, 2000)
    k = rng.choice([0, n, rng.randint(0, n)])
    level = rng.choice([0.90, 0.95, 0.99])
    z = norm.ppf(1 - (1 - level) / 2)
    lo, hi = proportion_confint(k, n, alpha=1 - level, method="wilson")
    ours = wilson_counts(k, n, z=z)
    assert ours[0] == pytest.approx(lo, abs=1e-12)
    assert ours[1] == pytest.approx(hi, abs=1e-12)


def test_wilson_edges_equal_statsmodels_and_hold_the_rate():
    # external reference: statsmodels.stats.proportion.proportion_confint(method="wilson") at the edges 0 of n and
    # n of n, for every n from 1 to 200. statsmodels itself leaves rounding dust there (a low end of 1.4e-17 above
    # a rate of 0 for n = 24); ours must agree within 1e-12 and hold the rate exactly, or a plot's error bars,
    # which are the rate minus its ends, turn negative.
    from scipy.stats import norm
    from statsmodels.stats.proportion import proportion_confint

    z = norm.ppf(0.975)
    for n in range(1, 201):
        for k in (0, n):
            lo, hi = proportion_confint(k, n, alpha=0.05, method="wilson")
            ours = wilson_counts(k, n, z=z)
            assert ours[0] == pytest.approx(lo, abs=1e-12) and ours[1] == pytest.approx(hi, abs=1e-12), (k, n)
            rate = k / n
            assert 0.0 <= ours[0] <= rate <= ours[1] <= 1.0, (k, n, ours)
            assert (ours[0] == 0.0) if k == 0 else (ours[1] == 1.0), (k, n, ours)
        for z_other in (1.0, 1.96, 2.58):  # the shorthand z values too
            for k in (0, n):
                lo, hi = wilson_counts(k, n, z=z_other)
                assert 0.0 <= lo <= k / n <= hi <= 1.0


def test_wilson_bounds_and_errors():
    assert wilson_interval(0.0, 0) == (0.0, 1.0)
    lo, hi = wilson_interval(1.0, 10)
    assert hi == 1.0 and 0.6 < lo < 0.8
    with pytest.raises(ValueError):
        wilson_interval(1.2, 10)
    with pytest.raises(ValueError):
        wilson_interval(0.5, -1)
    with pytest.raises(ValueError):
        wilson_counts(11, 10)


# ---------------------------------------------------------------------------------------------------- bootstrap


def _mean(xs):
    return sum(xs) / len(xs)


def test_bootstrap_reproducible_with_seed_and_different_with_another():
    rng = random.Random(7)
    units = [rng.gauss(0, 1) for _ in range(40)]
    a = bootstrap_ci(units, _mean, n_resamples=500, seed=3)
    b = bootstrap_ci(units, _mean, n_resamples=500, seed=3)
    c = bootstrap_ci(units, _mean, n_resamples=500, seed=4)
    assert a == b
    assert (a.low, a.high) != (c.low, c.high)
    low, high = a  # unpacks as (low, high)
    assert low < _mean(units) < high
    assert a.used == 500 and a.resamples == 500 and a.seed == 3


def test_percentile_interval_equals_numpy():
    # external reference: numpy.percentile with its default linear interpolation
    rng = random.Random(11)
    values = [rng.random() for _ in range(997)]
    lo, hi = percentile_interval(values, 0.95)
    np_lo, np_hi = np.percentile(values, [2.5, 97.5])
    assert lo == pytest.approx(np_lo, abs=1e-12)
    assert hi == pytest.approx(np_hi, abs=1e-12)
    for q in (0.0, 0.1, 0.5, 0.9, 1.0):
        assert quantile(sorted(values), q) == pytest.approx(np.quantile(values, q), abs=1e-12)


def test_bootstrap_of_the_mean_agrees_with_scipy():
    # external reference: scipy.stats.bootstrap(method="percentile"); different random draws, so the ends
    # agree only to Monte Carlo precision (here within a tenth of the interval's width)
    from scipy.stats import bootstrap

    rng = random.Random(5)
    units = [rng.gauss(10, 3) for _ in range(150)]
    ours = bootstrap_ci(units, _mean, n_resamples=4000, seed=1)
    res = bootstrap((np.array(units),), np.mean, n_resamples=4000, method="percentile",
                    random_state=np.random.default_rng(1))
    width = res.confidence_interval.high - res.confidence_interval.low
    assert ours.low == pytest.approx(res.confidence_interval.low, abs=0.1 * width)
    assert ours.high == pytest.approx(res.confidence_interval.high, abs=0.1 * width)
    # and both are close to the normal-theory interval for a mean (common practice)
    se = statistics.stdev(units) / math.sqrt(len(units))
    assert ours.low == pytest.approx(_mean(units) - 1.96 * se, abs=0.15 * width)


def test_bootstrap_resamples_whole_units():
    # each unit is a document with two items; a resample must never split a document
    units = [("a", 1), ("a", 1)], [("b", 0), ("b", 0)], [("c", 1), ("c", 0)]
    seen_sizes = set()

    def stat(sample):
        flat = [p for u in sample for p in u]
        seen_sizes.add(len(flat))
        return sum(v for _, v in flat) / len(flat)

    bootstrap_distribution(list(units), stat, n_resamples=50, seed=0)
    assert seen_sizes == {6}


def test_bootstrap_leaves_out_undefined_resamples():
    units = [0, 0, 0, 1]
    ci = bootstrap_ci(units, lambda s: None if sum(s) == 0 else _mean(s), n_resamples=300, seed=2)
    assert 0 < ci.used < 300
    assert ci.low is not None and ci.low > 0
    none = bootstrap_ci([0, 0], lambda s: None, n_resamples=10)
    assert (none.low, none.high, none.used) == (None, None, 0)


def test_bootstrap_refuses_bad_arguments():
    with pytest.raises(ValueError):
        bootstrap_ci([], _mean)
    with pytest.raises(ValueError):
        bootstrap_ci([1.0], _mean, n_resamples=0)
    with pytest.raises(ValueError):
        bootstrap_ci([1.0], _mean, level=1.0)
