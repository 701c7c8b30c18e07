"""Shared fixtures: one spaCy pipeline per session, paths of the demo documents."""

from __future__ import annotations

import ast
import importlib.util
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DATA = Path(__file__).resolve().parent / "data"
DEMO = ROOT / "fixtures" / "demo"


def pytest_configure(config):
    # the tests' caches (compiled regexes, per-file results) go to a folder of their own, never the user's
    import os
    import tempfile

    os.environ.setdefault("STUDYGAP_CACHE_DIR", tempfile.mkdtemp(prefix="studygap-test-cache-"))
    # most tests assert what the cues find in invented text; the learned judge, fitted on whole real documents,
    # is tested where it acts on whole documents (test_judge.py, test_golden.py), which ask for it
    os.environ.setdefault("STUDYGAP_JUDGE", "cues")


@pytest.fixture
def learned_judge(monkeypatch):
    """The default a user gets: the learned judge over the cues (checker.verdicts.judge)."""
    monkeypatch.setenv("STUDYGAP_JUDGE", "learned")


def pytest_addoption(parser):
    parser.addoption("--update-golden", action="store_true", default=False,
                     help="rewrite the golden files from the current output (after a reviewed change)")


@pytest.fixture(scope="session")
def update_golden(request) -> bool:
    return bool(request.config.getoption("--update-golden"))


@pytest.fixture(scope="session")
def nlp():
    from checker.matching.nlp import pipeline

    return pipeline()


def medmnist_info() -> dict:
    """INFO from medmnist/info.py (the dataset descriptions medmnist ships), read with ast: medmnist itself is
    never imported, since it would pull in PyTorch."""
    spec = importlib.util.find_spec("medmnist")
    if spec is None or spec.origin is None:
        pytest.skip("medmnist is not installed (pip install --no-deps medmnist)")
    tree = ast.parse((Path(spec.origin).parent / "info.py").read_text(encoding="utf-8"))
    for node in tree.body:
        if isinstance(node, ast.Assign) and any(getattr(t, "id", None) == "INFO" for t in node.targets):
            return ast.literal_eval(node.value)
    pytest.fail("medmnist/info.py holds no INFO literal in this version")
