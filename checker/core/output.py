"""Writing outputs safely: to a temporary file beside the target, then renamed over it in one step."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Sequence

from .errors import UsageError


#: every report studygap writes in a format it also reads carries a mark, so that `screen` and `audit` know their
#: own earlier outputs in a folder by their content, whatever they are named: a meta tag in HTML, a comment on the
#: first line of Markdown, the author of a DOCX (CSV and JSON are never read as documents)
GENERATOR = "studygap"
HTML_MARK = f'<meta name="generator" content="{GENERATOR}">'
MARKDOWN_MARK = f"<!-- written by {GENERATOR}: a report, not a document to check -->"
_DOCX_MARK = f"<dc:creator>{GENERATOR}</dc:creator>".encode()


def written_by_studygap(path: str | Path) -> bool:
    """Whether the file is a report studygap wrote (by the mark in its first bytes, or a DOCX's author)."""
    path = Path(path)
    try:
        if not path.is_file():
            return False
        with path.open("rb") as fh:
            head = fh.read(4096)
        if head.startswith(b"PK\x03\x04"):
            import zipfile

            with zipfile.ZipFile(path) as zf:
                info = zf.getinfo("docProps/core.xml")
                if info.file_size > 65536:
                    return False
                with zf.open(info) as part:
                    return _DOCX_MARK in part.read(65536)
        return HTML_MARK.encode() in head or head.lstrip(b"\xef\xbb\xbf").startswith(MARKDOWN_MARK.encode())
    except (OSError, KeyError, ValueError, RuntimeError, EOFError, __import__("zipfile").BadZipFile):
        return False  # not readable as a report: the reader says what is wrong with it


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_atomic(target: Path, data: str | bytes, inputs: Sequence[str | Path] = ()) -> None:
    """Write data to target so that a reader sees either the old file or the whole new one, never a half."""
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise UsageError(f"{target}: the folder {folder} does not exist (create it first)")
    if target.is_dir():
        raise UsageError(f"{target}: is a folder; give a file name for the output")
    resolved = target.resolve()
    for i in inputs:
        try:
            if Path(i).resolve() == resolved:
                raise UsageError(f"{target}: is one of the input documents; studygap never writes over an input")
        except OSError:
            continue
    payload = data.encode("utf-8") if isinstance(data, str) else data
    try:
        _write(target, payload)
    except OSError as exc:  # a full disk, a read-only folder, a quota: one line naming the path, never a traceback
        raise UsageError(f"{target}: cannot be written ({exc.strerror or exc}); any earlier file there is "
                         "unchanged") from None


def _write(target: Path, payload: bytes) -> None:
    if target.exists() and not target.is_file():
        # a device or a pipe (/dev/null, /dev/stdout, a named pipe): renaming over it would replace it with a
        # plain file, so it is written to as it is
        with open(target, "wb") as fh:
            fh.write(payload)
        return
    # mkstemp makes the file private; a report gets the mode a plain new file would have (or the old one's)
    mode = target.stat().st_mode & 0o777 if target.exists() else 0o666 & ~_umask()
    replace_atomically(target, payload, mode=mode, durable=True)


def replace_atomically(path: Path, payload: bytes, *, mode: int | None = None, durable: bool = False) -> None:
    """Write payload beside path and rename it over path in one step; the temporary file is removed on any
    failure. Without `mode` the file stays private (0600, as mkstemp makes it); `durable` flushes it to disk
    before the rename."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name[:40]}.", suffix=".part", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(payload)
            if durable:
                fh.flush()
                os.fsync(fh.fileno())
        if mode is not None:
            os.chmod(tmp, mode)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
