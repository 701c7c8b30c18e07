"""Bounds on what one document may cost; each is a documented command-line option."""

from __future__ import annotations

import signal
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path

from .errors import InputError


@dataclass(frozen=True)
class Limits:
    max_bytes: int = 100 * 1024 * 1024  # size of the input file
    max_inflated_bytes: int = 200 * 1024 * 1024  # total uncompressed size of a DOCX's parts
    max_pages: int = 2000  # PDF pages read
    max_blocks: int = 200_000  # blocks (paragraphs, rows, headings) in one document
    seconds: float = 300.0  # wall time for one document in a batch
    regex_seconds: float = 2.0  # time bound for one checklist regex over one document
    #: how PDF text is laid out: "pdfium" (fast, the default) or "pdfminer" (pdfminer.six layout analysis).
    #: Not a bound, but it travels with the bounds because every reader receives them.
    pdf_engine: str = "pdfium"


DEFAULT_LIMITS = Limits()


class _Expired(BaseException):
    """Raised by the alarm; a BaseException so that readers' broad ``except Exception`` cannot swallow it."""


@contextmanager
def time_limit(path: str | Path, seconds: float) -> Iterator[None]:
    """Stop the work inside with an InputError for path once it has taken `seconds` of wall time.

    Uses SIGALRM, so it bounds only in the main thread on POSIX (elsewhere it does nothing); inside an outer
    time_limit it leaves the outer bound in charge.
    """
    usable = (seconds > 0 and hasattr(signal, "setitimer")
              and threading.current_thread() is threading.main_thread()
              and signal.getitimer(signal.ITIMER_REAL)[0] == 0)
    if not usable:
        yield
        return

    armed = [True]

    def expired(signum, frame):
        if armed[0]:  # once the work is over, a late alarm must not raise in the clean-up
            raise _Expired

    previous = signal.signal(signal.SIGALRM, expired)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    except _Expired:
        raise InputError(path, f"checking it took longer than {seconds:g} s",
                         "raise --seconds if the file is genuine") from None
    finally:
        armed[0] = False
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
