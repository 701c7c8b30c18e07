"""Compressed data unpacked with a running byte count, before any library unpacks it without one.

PDFium and pdfminer inflate a PDF's streams in full, and zipfile inflates a DOCX part in one call, whatever
size the file claims: a 1 MB PDF can hold a stream that inflates to gigabytes (a compression bomb). So each
reader first unpacks the file's compressed data here, in small steps, counting the bytes as they come, and
refuses the file once the count passes ``--max-inflated-bytes``. Only then does the library see the file, and it
can then unpack no more than was counted.

PDF: every stream is found in the raw bytes (``stream`` after a dictionary), its filters are read from that
dictionary, and the data is decoded from the stream's first byte through the chain of filters until each
filter's own end mark. Any parser reads a stream as some prefix of those bytes (up to its /Length, or up to
``endstream``), and each of these decoders gives on a prefix of its input a prefix of its output, so the count
bounds what PDFium or pdfminer can unpack from the stream, whatever its /Length claims. Image codecs (JPEG,
JPEG 2000, JBIG2, CCITT) are not unpacked for text and are not counted. In an encrypted PDF (opened with an
empty password), each stream is decrypted as pdfminer would before it is counted.

DOCX: every zip member is inflated from its compressed bytes; a member that inflates to more than the zip
directory declares is refused (zipfile would stop there, but only after inflating all of it at once).
"""

from __future__ import annotations

import re
import struct
import zlib
from collections.abc import Iterable, Iterator
from pathlib import Path

from ..core.errors import InputError
from ..core.limits import Limits, start_helper_threads

#: bytes unpacked in one step: the most held in memory for one stream at a time while counting
STEP = 1 << 16
_HINT = "raise --max-inflated-bytes if the file is genuine"


class Budget:
    """A running count of unpacked bytes that refuses the file once it passes the limit."""

    def __init__(self, path: Path, limit: int, kind: str) -> None:
        self.path, self.limit, self.kind, self.used = path, limit, kind, 0

    def take(self, n: int) -> None:
        self.used += n
        if self.used > self.limit:
            raise InputError(self.path, f"the {self.kind}'s compressed parts unpack to more than the limit of "
                                        f"{self.limit / 1e6:,.0f} MB (a damaged file or a compression bomb)", _HINT)


# ---------------------------------------------------------------------------------------------------- decoders
# Each takes an iterator of input chunks and yields output chunks of at most STEP bytes, stopping at its end
# mark, at the end of its input or at the first error (as PDFium and pdfminer stop there too).


def _chunks(data: memoryview, start: int) -> Iterator[memoryview]:
    for i in range(start, len(data), STEP):
        yield data[i:i + STEP]


def _flate(source: Iterable[bytes]) -> Iterator[bytes]:
    it = iter(source)
    first = next(it, b"")
    # a stream without the zlib header is inflated as raw deflate data by some readers: count it that way then
    cmf_flg = bytes(first[:2])
    wbits = 15 if len(cmf_flg) == 2 and cmf_flg[0] & 0x0F == 8 and int.from_bytes(cmf_flg, "big") % 31 == 0 else -15
    d = zlib.decompressobj(wbits)
    pending = first
    while True:
        try:
            while pending:
                out = d.decompress(pending, STEP)
                pending = d.unconsumed_tail
                if out:
                    yield out
                if d.eof:
                    return
        except zlib.error:
            return
        pending = next(it, None)
        if pending is None:
            return


def _text_until(source: Iterable[bytes], mark: bytes, drop: bytes) -> Iterator[tuple[bytes, bool]]:
    """The chunks of an ASCII filter's input up to its end mark, without the `drop` characters, and whether the
    mark was reached."""
    for chunk in source:
        chunk = bytes(chunk)
        end = chunk.find(mark)
        yield re.sub(drop, b"", chunk if end < 0 else chunk[:end]), end >= 0
        if end >= 0:
            return


def _hex(source: Iterable[bytes]) -> Iterator[bytes]:
    odd = b""
    for part, _ in _text_until(source, b">", rb"[^0-9A-Fa-f]"):
        digits = odd + part
        odd = digits[len(digits) // 2 * 2:]
        yield bytes.fromhex(digits[: len(digits) // 2 * 2].decode("ascii"))


def _a85(source: Iterable[bytes]) -> Iterator[bytes]:
    carry = b""
    for part, last in _text_until(source, b"~>", rb"\s"):
        text = carry + part.replace(b"z", b"!!!!!")
        whole = len(text) if last else len(text) // 5 * 5
        carry = text[whole:]
        try:
            yield _a85_decode(text[:whole])
        except ValueError:
            return


def _a85_decode(text: bytes) -> bytes:
    """base64.a85decode of ASCII85 digits (no "z", no white space), five at a time in numpy: base64's loop in
    Python took a tenth of a second per 30 pages of a PDF whose streams are ASCII85. Anything else (a
    character out of range, a group over 2**32 - 1, a short last group) is left to base64, which says what is
    wrong or decodes it."""
    import base64

    whole = len(text) // 5 * 5
    if whole < 5:
        return base64.a85decode(text)
    start_helper_threads()  # numpy's helper threads must leave Ctrl-C and the time limit to the main thread
    import numpy

    digits = numpy.frombuffer(text, dtype=numpy.uint8, count=whole).astype(numpy.uint64) - 33
    if int(digits.max()) > 84:  # also the wrapped-around values of characters below "!"
        return base64.a85decode(text)
    groups = digits.reshape(-1, 5)
    values = (((groups[:, 0] * 85 + groups[:, 1]) * 85 + groups[:, 2]) * 85 + groups[:, 3]) * 85 + groups[:, 4]
    if int(values.max()) > 0xFFFFFFFF:
        return base64.a85decode(text)
    return values.astype(">u4").tobytes() + (base64.a85decode(text[whole:]) if whole < len(text) else b"")


def _run_length(source: Iterable[bytes]) -> Iterator[bytes]:
    out = bytearray()
    carry = b""
    for chunk in source:
        buf = carry + bytes(chunk)
        i = 0
        while i < len(buf):
            n = buf[i]
            if n == 128:
                if out:
                    yield bytes(out)
                return
            if n < 128:
                if i + 1 + n + 1 > len(buf):
                    break
                out += buf[i + 1:i + 2 + n]
                i += n + 2
            else:
                if i + 1 >= len(buf):
                    break
                out += buf[i + 1:i + 2] * (257 - n)
                i += 2
            if len(out) >= STEP:
                yield bytes(out)
                out.clear()
        carry = buf[i:]
    if out:
        yield bytes(out)


def _lzw(source: Iterable[bytes], early: int = 1) -> Iterator[bytes]:
    table: list[bytes] = [bytes((c,)) for c in range(256)] + [b"", b""]
    bits, acc, nbits, prev = 0, 0, 9, b""
    out = bytearray()
    for chunk in source:
        for byte in bytes(chunk):
            acc = (acc << 8) | byte
            bits += 8
            while bits >= nbits:
                bits -= nbits
                code = (acc >> bits) & ((1 << nbits) - 1)
                acc &= (1 << bits) - 1
                if code == 256:
                    del table[258:]
                    nbits, prev = 9, b""
                    continue
                if code == 257:
                    if out:
                        yield bytes(out)
                    return
                if code < len(table):
                    entry = table[code]
                    if prev:
                        table.append(prev + entry[:1])
                elif code == len(table) and prev:
                    entry = prev + prev[:1]
                    table.append(entry)
                else:
                    if out:
                        yield bytes(out)
                    return
                prev = entry
                out += entry
                size = len(table) + early
                nbits = 12 if size >= 2048 else 11 if size >= 1024 else 10 if size >= 512 else 9
                if len(table) >= 4096:
                    del table[4095:]  # a full table stays full until the next clear code
                if len(out) >= STEP:
                    yield bytes(out)
                    out.clear()
    if out:
        yield bytes(out)


_DECODERS = {
    "FlateDecode": _flate, "Fl": _flate,
    "LZWDecode": _lzw, "LZW": _lzw,
    "ASCIIHexDecode": _hex, "AHx": _hex,
    "ASCII85Decode": _a85, "A85": _a85,
    "RunLengthDecode": _run_length, "RL": _run_length,
}


def _counted(source: Iterable[bytes], budget: Budget) -> Iterator[bytes]:
    for chunk in source:
        budget.take(len(chunk))
        yield chunk


# ---------------------------------------------------------------------------------------------------- PDF

#: the keyword that starts a stream's data, not the end of "endstream" or part of a longer word
_STREAM = re.compile(rb"(?<![A-Za-z0-9_.#])stream(?:\r\n|\n|\r)")
_OBJ = re.compile(rb"(\d{1,10})\s+(\d{1,5})\s+obj\b")
_TOKEN = re.compile(rb"<<|>>|\[|\]|/[^\s/<>\[\]()%{}]*|\((?:\\.|[^\\()])*\)|<[0-9A-Fa-f\s]*>|%[^\r\n]*"
                    rb"|[^\s/<>\[\]()%{}]+", re.S)
_NAME_ESCAPE = re.compile(rb"#([0-9A-Fa-f]{2})")
#: how far back from ``stream`` the object's start is looked for
_DICT_WINDOW = 1 << 16


def _name(token: bytes) -> str:
    return _NAME_ESCAPE.sub(lambda m: bytes((int(m.group(1), 16),)), token[1:]).decode("latin-1")


def _filters(head: bytes) -> list[str] | None:
    """The /Filter names of the last dictionary in `head` (the object's bytes before ``stream``), read at the
    top level of that dictionary; None when /Filter is an indirect reference (unknown here)."""
    tokens = [t for t in _TOKEN.findall(head) if not t.startswith(b"%")]
    depth, start = 0, None
    for i in range(len(tokens) - 1, -1, -1):  # the << that opens the last dictionary
        if tokens[i] == b">>":
            depth += 1
        elif tokens[i] == b"<<":
            depth -= 1
            if depth == 0:
                start = i
                break
    if start is None:
        return []
    depth, found = 0, []
    for i in range(start, len(tokens)):
        t = tokens[i]
        if t in (b"<<", b"["):
            depth += 1
        elif t in (b">>", b"]"):
            depth -= 1
            if depth == 0:
                break
        elif depth == 1 and t.startswith(b"/") and _name(t) == "Filter" and i + 1 < len(tokens):
            value = tokens[i + 1]
            if value.startswith(b"/"):
                found = [_name(value)]
            elif value == b"[":
                found = []
                for v in tokens[i + 2:]:
                    if v == b"]":
                        break
                    if v.startswith(b"/"):
                        found.append(_name(v))
            elif value.isdigit():
                return None
    return found


def _object_start(data: bytes, at: int) -> re.Match | None:
    """The ``N G obj`` that opens the object holding position `at`, looked for at most _DICT_WINDOW back."""
    lo = max(0, at - _DICT_WINDOW)
    end = at
    for _ in range(64):
        k = data.rfind(b"obj", lo, end)
        if k < 0:
            return None
        m = _OBJ.search(data, max(lo, k - 20), k + 3)
        if m and m.end() == k + 3:
            return m
        end = k
    return None


def _decipher(data: bytes):
    """pdfminer's decryption function for an encrypted PDF (empty password), or None."""
    if b"/Encrypt" not in data:
        return None
    try:
        import io

        from pdfminer.pdfdocument import PDFDocument
        from pdfminer.pdfparser import PDFParser

        return PDFDocument(PDFParser(io.BytesIO(data))).decipher
    except Exception:  # a password or damage: the readers word that error themselves
        return None


def check_pdf(path: Path, data: bytes, limits: Limits) -> int:
    """Count what the PDF's streams unpack to; refuse it over limits.max_inflated_bytes. Returns the count."""
    budget = Budget(path, limits.max_inflated_bytes, "PDF")
    view = memoryview(data)
    decipher = _decipher(data)
    for m in _STREAM.finditer(data):
        obj = _object_start(data, m.start())
        head = data[obj.end() if obj else max(0, m.start() - 4096):m.start()]
        filters = _filters(head)
        if filters is None:
            filters = ["FlateDecode"]  # an indirect /Filter: counted as the commonest filter
        decoders = []
        for name in filters:
            if name not in _DECODERS:
                break  # an image codec (not decoded for text) or a filter no reader knows
            decoders.append(_DECODERS[name])
        if not decoders:
            continue
        source: Iterable[bytes] = _chunks(view, m.end())
        if decipher is not None and obj is not None:
            end = data.find(b"endstream", m.end())
            raw = data[m.end(): end if end >= 0 else len(data)]
            plain = None
            for cut in (raw, raw[:len(raw) // 16 * 16]):  # AES wants whole blocks; the line end is not data
                try:
                    plain = decipher(int(obj.group(1)), int(obj.group(2)), cut, {})
                    break
                except Exception:  # noqa: BLE001 - a stream that does not decrypt is not unpacked by the readers
                    continue
            if plain is None:
                continue
            raw = plain
            source = _chunks(memoryview(raw), 0)
        for decode in decoders:
            source = _counted(decode(source), budget)
        for _ in source:
            pass
    return budget.used


# ---------------------------------------------------------------------------------------------------- DOCX

_LOCAL_HEADER = struct.Struct("<4s2B4HL2L2H")


def check_zip(path: Path, data: bytes, infos, limits: Limits) -> int:
    """Inflate every member of the zip in `data` with a running count: refuse the file when a member inflates to
    more than its declared size or all of them to more than limits.max_inflated_bytes. Returns the count."""
    budget = Budget(path, limits.max_inflated_bytes, "DOCX")
    damaged = ("the DOCX is damaged (a part unpacks to more than its zip directory says: a damaged file or a "
               "compression bomb)")
    for info in infos:
        header = data[info.header_offset:info.header_offset + _LOCAL_HEADER.size]
        if len(header) < _LOCAL_HEADER.size:
            continue  # zipfile refuses it when the part is read
        fields = _LOCAL_HEADER.unpack(header)
        start = info.header_offset + _LOCAL_HEADER.size + fields[10] + fields[11]
        raw = memoryview(data)[start:start + info.compress_size]
        if info.compress_type == 0:  # stored: zipfile reads at most the declared size
            budget.take(min(len(raw), info.file_size))
            continue
        if info.compress_type != 8:
            raise InputError(path, f"a part of the DOCX ({info.filename}) is compressed in a way Word does not use "
                                   f"(zip method {info.compress_type})", "open it in a word processor and save it again")
        d = zlib.decompressobj(-15)
        size = 0
        pending: bytes | memoryview = raw
        try:
            while pending and not d.eof:
                out = d.decompress(pending, STEP)
                pending = d.unconsumed_tail
                size += len(out)
                budget.take(len(out))
                if size > info.file_size:
                    raise InputError(path, damaged, "open it in a word processor and save it again")
                if not out and pending:
                    break
        except zlib.error:
            continue  # zipfile refuses the part when it is read
    return budget.used
