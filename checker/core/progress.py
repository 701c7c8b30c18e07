"""One progress display for every multi-document command: rich on a terminal, nothing when piped or --quiet."""

from __future__ import annotations

import sys
from contextlib import contextmanager
from typing import Callable, Iterator

Update = Callable[..., None]


@contextmanager
def progress_bar(label: str, total: int, quiet: bool = False) -> Iterator[Update | None]:
    """Yield update(done, total=None, document=None), or None when no bar should show."""
    if quiet or total <= 1 or not sys.stderr.isatty():
        yield None
        return
    from rich.console import Console
    from rich.progress import Progress

    bar = Progress(console=Console(file=sys.stderr), transient=True)
    task = bar.add_task(label, total=total)

    def update(done: int, total: int | None = None, document: str | None = None) -> None:  # noqa: ARG001
        bar.update(task, completed=done)

    bar.start()
    try:
        yield update
    finally:
        bar.stop()
