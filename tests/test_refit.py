"""Refitting the item judges on new labels (benchmarks/learned.py --towards-shipped): a judge fitted on many
documents is adjusted, not replaced, by a few hundred new ones."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest

from checker.verdicts.judge import N_JUDGE_FEATURES, predict

np = pytest.importorskip("numpy")
linear = pytest.importorskip("sklearn.linear_model")
pytest.importorskip("scipy.optimize")

ROOT = Path(__file__).resolve().parent.parent
CLASSES = ["missing", "partial", "reported"]


def _learned():
    spec = importlib.util.spec_from_file_location("studygap_learned", ROOT / "benchmarks" / "learned.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _sample(seed: int, n: int = 150):
    rng = np.random.RandomState(seed)
    x = rng.rand(n, N_JUDGE_FEATURES)
    y = np.array(CLASSES)[(x[:, 0] * 2 + x[:, 5] + rng.rand(n) * 0.7).astype(int) % 3]
    return x.tolist(), y.tolist()


def test_pulled_towards_zero_it_is_scikit_learns_logistic_regression():
    # External check (scikit-learn): LogisticRegression(C) minimises C * log-loss + |W|^2 / 2 with the intercepts
    # unpenalised; a prior of zeros must give the same model, so the refit is that model pulled elsewhere
    x, y = _sample(5)
    zero = {"classes": CLASSES, "coef": [[0.0] * N_JUDGE_FEATURES] * 3, "intercept": [0.0] * 3}
    for c in (0.1, 1.0):
        ours = _learned()._judge_model(y, x, prior=zero, c=c)
        ref = linear.LogisticRegression(C=c, max_iter=5000, tol=1e-10).fit(x, y)
        assert ours["classes"] == list(ref.classes_)
        # the softmax is the same up to a shift shared by the classes: compare centred scores
        z_ours = np.asarray(x) @ np.asarray(ours["coef"]).T + np.asarray(ours["intercept"])
        z_ref = ref.decision_function(x)
        centred = lambda z: z - z.mean(axis=1, keepdims=True)  # noqa: E731
        assert np.allclose(centred(z_ours), centred(z_ref), atol=2e-3)


def test_few_new_labels_barely_move_a_judge_and_many_move_it_towards_them():
    learned = _learned()
    x, y = _sample(7, 400)
    # a prior judge that says the opposite of these labels' pattern
    fitted = linear.LogisticRegression(max_iter=3000).fit(x, y)
    prior = {"classes": CLASSES, "coef": (-fitted.coef_).tolist(), "intercept": (-fitted.intercept_).tolist()}
    timid = learned._judge_model(y, x, prior=prior, c=1e-4)
    assert np.allclose(timid["coef"], prior["coef"], atol=0.01)  # the labels hardly count: the judge stays
    bold = learned._judge_model(y, x, prior=prior, c=10.0)
    agree = lambda j: np.mean([predict({**j, "positive_first": False}, row) == t for row, t in zip(x, y)])  # noqa
    assert agree(bold) > agree(timid) + 0.2
    afresh = {"classes": list(fitted.classes_), "coef": fitted.coef_.tolist(), "intercept": fitted.intercept_.tolist()}
    assert agree(bold) >= agree(afresh) - 0.02  # nearly as good as fitting afresh on them


def test_a_status_the_new_labels_never_give_is_kept_from_the_prior_not_dropped():
    # the new labels use only missing and reported (as careful readers label a competing-interests statement);
    # the judge keeps all three statuses and, with little pull, stays near its prior
    x, y = _sample(9)
    y = ["missing" if v == "missing" else "reported" for v in y]
    fitted = linear.LogisticRegression(max_iter=3000).fit(*_sample(11))
    prior = {"classes": CLASSES, "coef": fitted.coef_.tolist(), "intercept": fitted.intercept_.tolist()}
    judge = _learned()._judge_model(y, x, prior=prior, c=1e-3)
    assert judge["classes"] == CLASSES and len(judge["coef"]) == 3
    assert np.allclose(judge["coef"], prior["coef"], atol=0.05)
    # without a prior, such labels give a judge of two statuses
    assert _learned()._judge_model(y, x)["classes"] == ["missing", "reported"]
