"""A document read in a forked process while this one does something else (the first check of a process builds
the spaCy pipeline meanwhile).

A check's first second goes to importing spaCy and building its pipeline, and reading a 30-page PDF takes about as
long again; the two do not depend on each other. A thread cannot overlap them: both run Python code nearly all the
time and hold the interpreter lock (PDFium's calls release it, but each is short), so a reading thread measured
slower than reading first. A forked process has an interpreter of its own: it reads the file while this process
imports spaCy, and sends the Document back pickled through a pipe.

Whatever goes wrong in the child (the file cannot be read, the child dies or is killed, what it sends is not a
Document), the caller reads the file itself, so the result and every error message are those of an ordinary read.
Only on Linux, from the main thread while no other thread runs (forking a process with threads can copy a lock
that is held), for a regular file of at most MAX_BYTES (and --max-bytes). ``STUDYGAP_READ_AHEAD=off`` turns it
off.
"""

from __future__ import annotations

import os
import pickle
import signal
import stat
import sys
import threading
from collections.abc import Callable
from pathlib import Path

from ..core.limits import Limits, die_with_parent
from .document import Document

_OFF = ("off", "0", "no", "false", "none")
#: files larger than this are read in the calling process: reading ahead saves at most the start-up it overlaps
#: (about a second), while sending the Document back costs a tenth of the reading time or so; a 300-page PDF
#: (1.5 MB) was read ahead about as fast as here on an idle core and seconds slower on a busy machine, a 30-page
#: one (150 KB) half a second faster
MAX_BYTES = 512 * 1024


class ReadAhead:
    """A child process reading one file; ``read()`` gives its Document (or reads the file here) and ends it."""

    def __init__(self, pid: int, fd: int, path: str | Path, limits: Limits) -> None:
        self.pid = pid
        self.fd = fd
        self.path = path
        self.limits = limits
        #: whether the document came from the child (False: read here after the child failed)
        self.used: bool | None = None

    def read(self, meanwhile: Callable[[], object] | None = None) -> Document:
        """Run meanwhile() while the child reads, then the child's Document, or the file read here when the child
        gave none (so that an unreadable file fails here, with the ordinary error)."""
        try:
            if meanwhile is not None:
                meanwhile()
            document = self._receive()
        finally:
            self.close()
        self.used = document is not None
        if document is None:
            from . import read_document

            document = read_document(self.path, self.limits)
        return document

    def _receive(self) -> Document | None:
        chunks = []
        with os.fdopen(self.fd, "rb", closefd=True) as pipe:
            self.fd = -1
            while True:
                chunk = pipe.read(1 << 20)
                if not chunk:
                    break
                chunks.append(chunk)
        _, status = os.waitpid(self.pid, 0)
        self.pid = 0
        if not chunks or os.waitstatus_to_exitcode(status) != 0:
            return None
        try:
            document = pickle.loads(b"".join(chunks))  # from our own child, through a pipe only it writes to
        except Exception:  # noqa: BLE001 - anything odd: read the file here instead
            return None
        return document if isinstance(document, Document) else None

    def close(self) -> None:
        """Stop the child if it still runs (an interruption, the time limit) and reap it."""
        if self.fd >= 0:
            try:
                os.close(self.fd)
            except OSError:
                pass
            self.fd = -1
        if self.pid:
            pid, self.pid = self.pid, 0
            try:
                os.kill(pid, signal.SIGKILL)
            except OSError:  # already ended
                pass
            while True:
                try:
                    os.waitpid(pid, 0)
                    break
                except InterruptedError:  # pragma: no cover - Python retries on EINTR itself
                    continue
                except ChildProcessError:
                    break


def start(path: str | Path, limits: Limits) -> ReadAhead | None:
    """A child process reading the file, or None where it cannot or should not be used (see the module notes)."""
    if os.environ.get("STUDYGAP_READ_AHEAD", "").strip().lower() in _OFF:
        return None
    if not sys.platform.startswith("linux") or not hasattr(os, "fork"):
        return None
    if threading.current_thread() is not threading.main_thread() or threading.active_count() > 1:
        return None
    try:
        st = os.stat(path)
    except (OSError, ValueError):
        return None
    if not stat.S_ISREG(st.st_mode) or st.st_size > min(limits.max_bytes, MAX_BYTES):
        return None  # the ordinary read: its error (a folder, a pipe, a file too large), or a long document
    try:
        r, w = os.pipe()
    except OSError:
        return None
    try:
        sys.stdout.flush()  # nothing written before the fork may be written twice
        sys.stderr.flush()
    except (OSError, ValueError):
        pass
    parent = os.getpid()
    try:
        pid = os.fork()
    except OSError:
        os.close(r)
        os.close(w)
        return None
    if pid == 0:  # pragma: no cover - the child; its coverage is never written (it ends with os._exit)
        _child(r, w, path, limits, parent)
    os.close(w)
    return ReadAhead(pid, r, path, limits)


def _child(r: int, w: int, path: str | Path, limits: Limits, parent: int) -> None:  # pragma: no cover - child
    """Read the file, send the pickled Document, end without Python's exit handlers (they belong to the parent:
    the caches it saves, the output it flushes). A killed parent takes the child with it."""
    code = 1
    try:
        os.close(r)
        die_with_parent(parent)
        # Ctrl-C reaches the whole process group: the parent reports it, the child just ends
        signal.signal(signal.SIGINT, signal.SIG_DFL)
        from . import read_document

        data = pickle.dumps(read_document(path, limits), protocol=pickle.HIGHEST_PROTOCOL)
        view = memoryview(data)
        while view:
            view = view[os.write(w, view):]
        code = 0
    except BaseException:  # noqa: BLE001 - the parent reads the file itself and reports what goes wrong
        pass
    finally:
        os._exit(code)
