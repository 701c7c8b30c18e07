"""Shared fixtures: one spaCy pipeline per session, paths of the demo documents."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DATA = Path(__file__).resolve().parent / "data"
DEMO = ROOT / "fixtures" / "demo"


def pytest_addoption(parser):
    parser.addoption("--update-golden", action="store_true", default=False,
                     help="rewrite the golden files from the current output (after a reviewed change)")


@pytest.fixture(scope="session")
def update_golden(request) -> bool:
    return bool(request.config.getoption("--update-golden"))


@pytest.fixture(scope="session")
def nlp():
    from checker.nlp import pipeline

    return pipeline()
