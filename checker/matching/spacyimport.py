"""spaCy without its command-line tools: importing spaCy also imports ``spacy.cli`` (download, train, package
and their dependencies), about 0.4 s of every run, for the one name ``spacy.info`` that studygap never uses.

While spaCy's own ``__init__`` runs, a finder answers its import of ``spacy.cli`` and ``spacy.cli.info`` with a
stand-in whose ``info`` imports the real one when called. As soon as spaCy has finished importing, the
stand-ins are taken out of ``sys.modules`` and the finder removes itself, so a later ``import spacy.cli`` (by
the caller's own code) gets the real package.
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
    def find_spec(self, name, path=None, target=None):
        spacy = sys.modules.get("spacy")
        if name in _STANDINS and spacy is not None and not hasattr(spacy, "blank"):
            return importlib.machinery.ModuleSpec(name, _Loader(), is_package=True)
        if spacy is not None and hasattr(spacy, "blank"):
            _finish()
        return None


def _finish() -> None:
    for name in reversed(_STANDINS):
        module = sys.modules.get(name)
        if module is not None and getattr(module, "__studygap_standin__", False):
            del sys.modules[name]
    spacy = sys.modules.get("spacy")
    if spacy is not None and getattr(getattr(spacy, "cli", None), "__studygap_standin__", False):
        del spacy.cli
    sys.meta_path[:] = [f for f in sys.meta_path if not isinstance(f, _Finder)]


def install() -> None:
    """Put the finder first, unless spaCy is already imported (then there is nothing to save)."""
    if "spacy" not in sys.modules and not any(isinstance(f, _Finder) for f in sys.meta_path):
        sys.meta_path.insert(0, _Finder())
