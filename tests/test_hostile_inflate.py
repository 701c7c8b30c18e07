"""Compression bombs: a PDF's streams and a DOCX's parts are unpacked with a running count before any library
unpacks them, and a file over --max-inflated-bytes is refused with one line, whatever its sizes claim.

Before the count, the 1 MB flate bomb took PDFium past 2 GB (killed by the memory limit here, with no message),
and the DOCX whose zip directory says 4 KB inflated to 1 GB before anything noticed.
"""

from __future__ import annotations

import base64
import dataclasses
import io
import zlib
from pathlib import Path

import pytest

from checker.core.limits import DEFAULT_LIMITS
from checker.reading import inflate
from tests.test_bad_input import _limit_memory, assert_one_error, make_bad, run

ROOT = Path(__file__).resolve().parent.parent
BOMBS = ["pdf_flate_bomb", "pdf_image_labelled_bomb", "pdf_double_flate_bomb", "docx_understated_sizes", "huge_text"]


@pytest.fixture(scope="module")
def bombs(tmp_path_factory) -> dict[str, Path]:
    return make_bad.build(tmp_path_factory.mktemp("bombs"), only=BOMBS + ["docx_zip_bomb"])


@pytest.mark.parametrize(("key", "cause"), [
    ("pdf_flate_bomb", "the PDF's compressed parts unpack to more than the limit of 500 MB"),
    ("pdf_image_labelled_bomb", "the PDF's compressed parts unpack to more than the limit of 500 MB"),
    ("pdf_double_flate_bomb", "the PDF's compressed parts unpack to more than the limit of 500 MB"),
    ("docx_understated_sizes", "a part unpacks to more than its zip directory says"),
])
def test_bomb_is_refused_with_one_line_under_a_memory_limit(bombs, key, cause):
    path = bombs[key]
    assert path.stat().st_size < 1_200_000  # each unpacks to 1 GiB
    proc = run(["check", path.name, "-f", "json"], cwd=path.parent, timeout=120, preexec_fn=_limit_memory)
    m = assert_one_error(proc, path.name, cause)
    assert "--max-inflated-bytes" in m["hint"] or "save it again" in m["hint"]


def test_text_over_the_bound_is_refused_at_once(bombs):
    # before the bound, spaCy took the 21 million characters on and the check ran for many minutes
    path = bombs["huge_text"]
    proc = run(["check", path.name, "-f", "json"], cwd=path.parent, timeout=60, preexec_fn=_limit_memory)
    m = assert_one_error(proc, path.name, "million characters of text, over the limit of 20 million")
    assert "in parts" in m["hint"]


def test_the_limit_is_the_option(bombs):
    # a smaller limit refuses a small genuine PDF; the default reads it
    demo = ROOT / "fixtures" / "demo" / "wrist-fracture-manuscript.pdf"
    proc = run(["outline", str(demo), "--max-inflated-bytes", "1000"], cwd=ROOT)
    assert_one_error(proc, str(demo), "unpack to more than the limit of 0 MB")
    assert run(["outline", str(demo)], cwd=ROOT).returncode == 0


def _pypdf_unpacked(data: bytes) -> int:
    """What pypdf (an independent PDF library from the registry) unpacks from every non-image-codec stream."""
    from pypdf import PdfReader
    from pypdf.generic import StreamObject

    reader = PdfReader(io.BytesIO(data))
    total = 0
    for numbers in reader.xref.values():
        for number in numbers:
            obj = reader.get_object(number)
            if not isinstance(obj, StreamObject):
                continue
            filters = obj.get("/Filter")
            names = [filters] if isinstance(filters, str) else list(filters or [])
            if not names or {"/DCTDecode", "/JPXDecode", "/JBIG2Decode", "/CCITTFaxDecode"} & set(names):
                continue
            total += len(obj.get_data())
    return total


@pytest.mark.parametrize("name", ["wrist-fracture-manuscript.pdf", "kidney-stone-benchmark-proposal.pdf"])
def test_count_covers_what_another_pdf_library_unpacks(name):
    data = (ROOT / "fixtures" / "demo" / name).read_bytes()
    counted = inflate.check_pdf(Path(name), data, DEFAULT_LIMITS)
    theirs = _pypdf_unpacked(data)
    # never less than a reader unpacks; more only by the cross-reference and object streams pypdf does not list
    assert theirs > 10_000 and theirs <= counted <= 1.5 * theirs


def _lzw_encode(data: bytes) -> bytes:
    """A plain LZW encoder with PDF's conventions (clear code first, EarlyChange 1, end-of-data code)."""
    table = {bytes((i,)): i for i in range(256)}
    codes, w = [256], b""
    for byte in data:
        wc = w + bytes((byte,))
        if wc in table:
            w = wc
            continue
        codes.append(table[w])
        if len(table) + 2 < 4095:
            table[wc] = len(table) + 2
        w = bytes((byte,))
    codes += [table[w], 257] if w else [257]
    out, acc, bits = bytearray(), 0, 0
    for c, code in enumerate(codes):
        known = 258 + max(0, c - 2)  # the decoder's table before it reads this code (one behind the encoder's)
        width = 12 if known >= 2047 else 11 if known >= 1023 else 10 if known >= 511 else 9
        acc, bits = (acc << width) | code, bits + width
        while bits >= 8:
            bits -= 8
            out.append((acc >> bits) & 0xFF)
    if bits:
        out.append((acc << (8 - bits)) & 0xFF)
    return bytes(out)


TEXT = b"Three radiologists annotated every scan; the reference was fused by majority vote. " * 300


def _decoded(decoder, data: bytes) -> bytes:
    return b"".join(decoder(inflate._chunks(memoryview(data), 0)))


def test_lzw_decoder_agrees_with_pdfminer():
    from pdfminer.lzw import lzwdecode

    encoded = _lzw_encode(TEXT)
    assert lzwdecode(encoded)[: len(TEXT)] == TEXT  # the encoder is right, by pdfminer's decoder
    assert _decoded(inflate._lzw, encoded) == TEXT


def test_other_decoders_agree_with_the_standard_library():
    assert _decoded(inflate._flate, zlib.compress(TEXT)) == TEXT
    assert _decoded(inflate._hex, TEXT.hex().encode() + b">trailing") == TEXT
    assert _decoded(inflate._a85, base64.a85encode(TEXT, wrapcol=70) + b"~>trailing") == TEXT
    runs = b"".join(bytes((len(TEXT[i:i + 100]) - 1,)) + TEXT[i:i + 100] for i in range(0, len(TEXT), 100))
    assert _decoded(inflate._run_length, runs + bytes((256 - 9,)) + b"z" + b"\x80") == TEXT + b"z" * 10


def test_stream_is_counted_past_a_false_end_and_whatever_its_length_claims(tmp_path):
    # a stored deflate block holding "endstream endobj", then 64 MiB of zeros in the same deflate stream; the
    # dictionary's /Length ends the stream at the false end
    fake = b"\nendstream\nendobj\n"
    stored = b"\x00" + len(fake).to_bytes(2, "little") + (len(fake) ^ 0xFFFF).to_bytes(2, "little") + fake
    size = 64 << 20
    adler = zlib.adler32(bytes(size), zlib.adler32(fake))
    stream = b"\x78\xda" + stored + make_bad._zeros_deflated(size) + adler.to_bytes(4, "big")
    assert zlib.decompress(stream) == fake + bytes(size)
    pdf = make_bad._pdf_with_stream(b"/Filter /FlateDecode", stream)
    pdf = pdf.replace(b"/Length %d /Filter" % len(stream), b"/Length %d /Filter" % (2 + len(stored) - 1))
    small = dataclasses.replace(DEFAULT_LIMITS, max_inflated_bytes=32 << 20)
    with pytest.raises(inflate.InputError, match="unpack to more than the limit of 34 MB"):
        inflate.check_pdf(Path("false-end.pdf"), pdf, small)
    assert inflate.check_pdf(Path("false-end.pdf"), pdf, DEFAULT_LIMITS) >= size
