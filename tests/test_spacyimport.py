"""spaCy is imported without its command-line tools, and the caller's own later use of them still works."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def _run(code: str) -> str:
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    assert proc.returncode == 0, proc.stderr
    return proc.stdout.strip()


def test_checking_a_document_leaves_spacy_cli_unimported():
    out = _run(
        "import sys\n"
        "from checker.engine import check_document\n"
        "r = check_document('fixtures/demo/wrist-fracture-manuscript.md')\n"
        "print(len(r.items) > 0, 'spacy' in sys.modules, any(m.startswith('spacy.cli') for m in sys.modules))\n"
    )
    assert out == "True True False"


def test_spacy_cli_is_the_real_one_when_asked_for_later():
    out = _run(
        "from checker.matching.nlp import pipeline\n"
        "pipeline()\n"
        "import spacy\n"
        "nlp = spacy.blank('en')\n"
        "import spacy.cli\n"
        "from spacy.cli.info import info\n"
        "print(callable(spacy.cli.download), info.__module__, callable(spacy.info))\n"
    )
    assert out == "True spacy.cli.info True"


def test_spacy_imported_before_studygap_is_left_alone():
    out = _run(
        "import spacy, sys\n"
        "from checker.matching.nlp import pipeline\n"
        "pipeline()\n"
        "from checker.matching.spacyimport import _Finder\n"
        "print('spacy.cli' in sys.modules, any(isinstance(f, _Finder) for f in sys.meta_path))\n"
    )
    assert out == "True False"


def test_importing_studygap_changes_nothing_in_the_import_system():
    """No import-time side effects: the finder exists only while the pipeline imports spaCy."""
    out = _run(
        "import sys\n"
        "before = list(sys.meta_path)\n"
        "import checker, checker.cli.main, checker.engine, checker.matching.matcher, checker.matching.nlp\n"
        "print(sys.meta_path == before, 'spacy' in sys.modules)\n"
        "checker.matching.nlp.pipeline()\n"
        "print(sys.meta_path == before, any(m.startswith('spacy.cli') for m in sys.modules))\n"
    )
    assert out == "True False\nTrue False"
