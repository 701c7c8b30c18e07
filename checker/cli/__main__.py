"""``python -m checker.cli``: the same as the ``studygap`` command."""

from .main import entry

entry()
