"""Bounds on what one document may cost; each is a documented command-line option."""

from __future__ import annotations

import signal
import sys
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


#: the signals that must interrupt the main thread: Ctrl-C, kill, a closed terminal, the time limit's alarm
_MAIN_THREAD_SIGNALS = tuple(getattr(signal, n) for n in ("SIGINT", "SIGTERM", "SIGHUP", "SIGQUIT", "SIGALRM")
                             if hasattr(signal, n))


@contextmanager
def signals_stay_with_main_thread() -> Iterator[None]:
    """Threads started inside, by Python or by a C library, are born with Ctrl-C, SIGTERM and the time limit's
    alarm blocked, so that the kernel always hands those signals to the main thread.

    A signal sent to a process goes to any one thread that does not block it. When a library's helper thread
    gets it (OpenBLAS starts one per extra CPU when numpy is imported), Python notes it but the main thread,
    waiting in a read (a named pipe, a stalled network file), is never woken: Ctrl-C and --seconds then do
    nothing. A thread inherits the signal mask of the thread that starts it, so the main thread blocks these
    signals while the threads are started and unblocks them afterwards (one that arrives meanwhile is
    delivered then). Outside the main thread, or without pthread_sigmask, it does nothing.
    """
    if not hasattr(signal, "pthread_sigmask") or threading.current_thread() is not threading.main_thread():
        yield
        return
    previous = signal.pthread_sigmask(signal.SIG_BLOCK, _MAIN_THREAD_SIGNALS)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


_helpers_started = False


def start_helper_threads() -> None:
    """Load numpy (spaCy needs it) with signals_stay_with_main_thread, once per process, unless it is loaded
    already: its BLAS helper threads then never take a signal meant for the main thread."""
    global _helpers_started
    if _helpers_started or threading.current_thread() is not threading.main_thread():
        return
    _helpers_started = True
    if "numpy" in sys.modules:
        return
    with signals_stay_with_main_thread():
        try:
            import numpy  # noqa: F401
        except ImportError:
            pass


@contextmanager
def time_limit(path: str | Path, seconds: float) -> Iterator[None]:
    """Stop the work inside with an InputError for path once it has taken `seconds` of wall time.

    Uses SIGALRM, so it bounds only in the main thread on POSIX (elsewhere it does nothing); inside an outer
    time_limit it leaves the outer bound in charge.
    """
    start_helper_threads()  # before the alarm: so that it reaches the main thread, whatever the work starts
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
