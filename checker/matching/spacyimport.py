"""spaCy without its command-line tools: importing spaCy also imports ``spacy.cli`` (download, train, package
and their dependencies), about 0.4 s of every run, for the one name ``spacy.info`` that studygap never uses.

``import_spacy()`` is the one place where studygap imports spaCy (``checker.matching.nlp.pipeline`` calls it before
anything else of spaCy is used). While spaCy's own ``__init__`` runs, a finder answers its import of
``spacy.cli`` and ``spacy.cli.info`` with a stand-in whose ``info`` imports the real one when called. As soon as
spaCy has finished importing, the stand-ins are taken out of ``sys.modules`` and the finder is removed, so a
later ``import spacy.cli`` (by the caller's own code) gets the real package. Importing ``checker`` changes
nothing in the import system.
"""

from __future__ import annotations

import importlib.abc
import importlib.machinery
import sys
import types

_STANDINS = ("spacy.cli", "spacy.cli.info")


def _info(*args, **kwargs):
    from spacy.cli.info import info

    return info(*args, **kwargs)


class _Loader(importlib.abc.Loader):
    def create_module(self, spec):
        module = types.ModuleType(spec.name)
        module.__path__ = []  # a package, so that spacy.cli.info can be found under it
        module.info = _info
        module.__studygap_standin__ = True
        return module

    def exec_module(self, module):
        return None


class _Finder(importlib.abc.MetaPathFinder):
    """Answers spaCy's own imports of its command-line package while spaCy's ``__init__`` runs."""

    def find_spec(self, name, path=None, target=None):
        spacy = sys.modules.get("spacy")
        if name in _STANDINS and spacy is not None and not hasattr(spacy, "blank"):
            return importlib.machinery.ModuleSpec(name, _Loader(), is_package=True)
        return None


def _finish() -> None:
    """Take the stand-ins out of sys.modules and spaCy's namespace, and the finder out of sys.meta_path."""
    for name in reversed(_STANDINS):
        module = sys.modules.get(name)
        if module is not None and getattr(module, "__studygap_standin__", False):
            del sys.modules[name]
    spacy = sys.modules.get("spacy")
    if spacy is not None and getattr(getattr(spacy, "cli", None), "__studygap_standin__", False):
        del spacy.cli
    sys.meta_path[:] = [f for f in sys.meta_path if not isinstance(f, _Finder)]


def import_spacy() -> types.ModuleType:
    """The spacy module, imported without spacy.cli when this is the first import of spaCy in the process."""
    spacy = sys.modules.get("spacy")
    if spacy is not None and hasattr(spacy, "blank"):
        return spacy
    sys.meta_path.insert(0, _Finder())
    try:
        import spacy
    finally:
        _finish()
    return spacy
