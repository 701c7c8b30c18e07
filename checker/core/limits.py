"""Bounds on what one document may cost; each is a documented command-line option."""

from __future__ import annotations

import os
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
    max_inflated_bytes: int = 500_000_000  # total unpacked size of a DOCX's parts or a PDF's streams
    max_pages: int = 2000  # PDF pages read
    max_blocks: int = 200_000  # blocks (paragraphs, rows, headings) in one document
    #: characters of text in one document, after reading: a 2,000-page thesis has about 6 million; spaCy and
    #: the matchers hold every token of a document at once, so far more would take gigabytes
    max_text_chars: int = 20_000_000
    seconds: float = 300.0  # wall time for one document in a batch
    regex_seconds: float = 2.0  # time bound for one checklist or rule regex over one document
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


def die_with_parent(parent: int) -> None:
    """Linux: this child process (a batch worker, a document read ahead) gets SIGKILL when its parent dies, even
    by SIGKILL, so that no child outlives a killed run. Elsewhere the parent's own clean-up ends its children."""
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        pr_set_pdeathsig = 1
        libc.prctl(pr_set_pdeathsig, int(signal.SIGKILL), 0, 0, 0)
    except (OSError, AttributeError, ValueError):  # not Linux: the parent's clean-up still ends its children
        return
    if os.getppid() != parent:  # the parent died before the request was made
        os._exit(1)


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


# ---------------------------------------------------------------------------------------------------------------
# Regex size

#: the most a checklist regex may expand to when its counted repeats are written out ({m,n} multiplies what it
#: repeats by n, nested ones multiply along the nesting). The built-in checklists' largest, with the number and
#: unit macros expanded, is far below it (see tests/test_hostile_regex.py); `(?:(?:a{1000}){1000}){1000}` is a
#: billion and took the regex engine past 24 GB before it matched anything.
MAX_REGEX_EXPANSION = 100_000

_QUANTIFIER = None  # compiled on first use
_GROUP_PREFIX = None
_PLAIN = None


def regex_expansion(pattern: str) -> tuple[int, int]:
    """(size, position): how large `pattern` grows when every counted repeat is written out (each character,
    class or escape counts 1; a group the sum of its branches; X{m,n} counts n times X; *, + and ? count once,
    as the engine loops over them), and the position of the repeat where it first passes MAX_REGEX_EXPANSION
    (-1 when it never does). The count stops growing just past the bound, so it is cheap on any input."""
    import re

    from ..matching.regexscan import class_end

    global _QUANTIFIER, _GROUP_PREFIX, _PLAIN
    if _QUANTIFIER is None:
        _PLAIN = re.compile(r"[^\\\[\](){}|*+?]+")
        _QUANTIFIER = re.compile(r"\{(\d*)(?:(,)(\d*))?\}[?+]?")
        # (?:  (?=  (?!  (?<=  (?<!  (?>  (?|  (?P<name>  (?<name>  (?'name'  (?P=name)  (?i:  (?i)  (?-i:
        _GROUP_PREFIX = re.compile(r"\?(?:P?<\w+>|'\w+'|P=\w+\)|<[=!]|[:=!>|]|[a-zA-Z^-]*[:)])")
    cap = MAX_REGEX_EXPANSION + 1
    # frames of open groups: [sum of finished branches, sum of this branch, size of the last item]
    stack: list[list[int]] = [[0, 0, 0]]
    where = -1
    i, n = 0, len(pattern)

    def add(size: int) -> None:
        top = stack[-1]
        top[1] = min(cap, top[1] + size)
        top[2] = size

    def repeat(times: int, at: int) -> None:
        nonlocal where
        top = stack[-1]
        grown = min(cap, top[1] + top[2] * (times - 1))
        if grown >= cap and where < 0:
            where = at
        top[1] = grown
        top[2] = min(cap, top[2] * times)

    while i < n:
        c = pattern[i]
        if c == "\\":
            j = i + 2
            if j <= n and pattern[i + 1: j] in ("p", "P", "N", "x", "X", "g") and j < n and pattern[j] in "{<":
                close = pattern.find("}" if pattern[j] == "{" else ">", j)
                j = n if close < 0 else close + 1
            add(1)
            i = j
        elif c == "[":
            j = class_end(pattern, i)
            add(1)
            i = j + 1
        elif c == "(":
            if pattern.startswith("(?#", i):
                close = pattern.find(")", i)
                i = n if close < 0 else close + 1
                continue
            m = _GROUP_PREFIX.match(pattern, i + 1)
            if m and m.group().endswith(")"):  # inline flags or a back-reference: no group, one item
                if m.group().startswith("?P="):
                    add(1)
                i = m.end()
                continue
            stack.append([0, 0, 0])
            i = m.end() if m else i + 1
        elif c == ")":
            if len(stack) > 1:
                done = stack.pop()
                add(min(cap, done[0] + done[1]))
            i += 1
        elif c == "|":
            top = stack[-1]
            top[0], top[1], top[2] = min(cap, top[0] + top[1]), 0, 0
            i += 1
        elif c == "{":
            m = _QUANTIFIER.match(pattern, i)
            if m and (m.group(1) or m.group(3)):
                high = m.group(3) if m.group(2) else m.group(1)
                times = int(high[:7]) if high else int(m.group(1)[:7] or 1)  # {m,}: the engine loops past m
                repeat(max(times, 1), i)
                i = m.end()
            else:
                add(1)
                i += 1
        elif c in "*+?":
            i += 1  # loops and options cost one pass of what they repeat
        else:  # a run of plain characters at once (long word lists are most of a pattern)
            m = _PLAIN.match(pattern, i)
            end = m.end() if m else i + 1
            add(end - i)
            stack[-1][2] = 1  # a repeat after the run repeats its last character only
            i = end
    while len(stack) > 1:  # unclosed groups (the compiler reports them)
        done = stack.pop()
        add(min(cap, done[0] + done[1]))
    return min(cap, stack[0][0] + stack[0][1]), where


def regex_size_problem(pattern: str) -> str | None:
    """Why a checklist regex is refused for its size, in one sentence, or None when it is fine."""
    size, where = regex_expansion(pattern)
    if size <= MAX_REGEX_EXPANSION:
        return None
    place = f" (the repeat at character {where + 1})" if where >= 0 else ""
    return (f"its counted repeats multiply to more than {MAX_REGEX_EXPANSION:,} steps{place}, which can take "
            "gigabytes of memory to compile and match; use fewer or smaller {m,n} repeats, or * and + instead")
