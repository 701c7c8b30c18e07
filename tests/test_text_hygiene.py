"""Characters that are not text (lone UTF-16 halves, control codes, private-use symbols) never reach spaCy.

Each format gets them through the channels it really has: a PDF font whose ToUnicode map gives a lone high
surrogate, a proper surrogate pair (a mathematical letter, as PDF text layers of formulas carry) and a
private-use code point; numeric character references in HTML and Markdown; raw control and private-use
characters in LaTeX, Markdown, reStructuredText and plain text; private-use characters in a Word run.
Then every block goes through the real spaCy pipeline, which stops on a lone surrogate.
"""

from __future__ import annotations

import dataclasses
import re

import docx
import pytest

from checker.reading.document import Block, Location, Mark
from checker.core.limits import DEFAULT_LIMITS
from checker.matching.nlp import parse_blocks
from checker.reading import read_document
from checker.reading.hygiene import clean_block, clean_text

BAD = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\ud800-\udfff\ue000-\uf8ff\U000f0000-\U0010ffff\ufffe\uffff]")
JUNK = "\x01\x0b\x1b\x7f\ue000\U000f0001"


def pdf_with_tounicode(lines: list[str], extra: dict[str, str]) -> bytes:
    """A one-page Helvetica PDF whose ToUnicode map sends printable ASCII to itself and the characters in
    ``extra`` to the UTF-16BE code units given in hex (PDF 32000-1, 9.10.3)."""
    pairs = [(c, f"{c:04X}") for c in range(0x20, 0x7F) if chr(c) not in extra]
    pairs += [(ord(ch), units) for ch, units in extra.items()]
    cmap = ("/CIDInit /ProcSet findresource begin 12 dict begin begincmap /CMapName /T def "
            "1 begincodespacerange <00> <FF> endcodespacerange "
            f"{len(pairs)} beginbfchar " + " ".join(f"<{c:02X}> <{u}>" for c, u in pairs)
            + " endbfchar endcmap CMapName currentdict /CMap defineresource pop end end")
    content = "BT /F1 12 Tf 72 720 Td 14 TL " + " ".join(f"({line}) Tj T*" for line in lines) + " ET"
    objects = [
        "<< /Type /Catalog /Pages 2 0 R >>",
        "<< /Type /Pages /Kids [3 0 R] /Count 1 >>",
        "<< /Type /Page /Parent 2 0 R /MediaBox [0 0 612 792] /Resources << /Font << /F1 4 0 R >> >> "
        "/Contents 5 0 R >>",
        "<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica /ToUnicode 6 0 R >>",
        f"<< /Length {len(content)} >>\nstream\n{content}\nendstream",
        f"<< /Length {len(cmap)} >>\nstream\n{cmap}\nendstream",
    ]
    out = b"%PDF-1.4\n"
    offsets = []
    for i, body in enumerate(objects, 1):
        offsets.append(len(out))
        out += f"{i} 0 obj\n{body}\nendobj\n".encode("latin-1")
    xref = len(out)
    out += f"xref\n0 {len(objects) + 1}\n0000000000 65535 f \n".encode()
    out += b"".join(f"{o:010d} 00000 n \n".encode() for o in offsets)
    out += f"trailer\n<< /Size {len(objects) + 1} /Root 1 0 R >>\nstartxref\n{xref}\n%%EOF\n".encode()
    return out


def _docx(path) -> None:
    d = docx.Document()
    d.add_heading("Data", 1)
    d.add_paragraph("The dataset holds \ue000 40 scans \U000f0001from two sites with care.")
    d.save(path)


SOURCES = {
    "pdf": None,
    "docx": None,
    "html": "<html><body><h1>Data</h1><p>The dataset &#xD835; holds" + JUNK + "40 scans &#55349;&#56385; "
            "from two sites\x0bwith \ue001 care.</p></body></html>",
    "md": "# Data\n\nThe dataset &#xD835; holds" + JUNK + "40 scans from two sites\x0bwith \ue001 care.\n",
    "tex": "\\documentclass{article}\n\\begin{document}\n\\section{Data}\nThe dataset holds" + JUNK
           + "40 scans from two sites\x0bwith \ue001 care.\n\\end{document}\n",
    "txt": "Data\n\nThe dataset holds" + JUNK + "40 scans from two sites\x0bwith \ue001 care.\n",
    "rst": "Data\n====\n\nThe dataset holds" + JUNK + "40 scans from two sites\x0bwith \ue001 care.\n",
}


@pytest.mark.parametrize("suffix,engine", [("pdf", "pdfium"), ("pdf", "pdfminer")]
                         + [(s, None) for s in SOURCES if s != "pdf"])
def test_no_reader_lets_non_text_characters_through(tmp_path, suffix, engine):
    path = tmp_path / f"hygiene.{suffix}"
    if suffix == "pdf":
        # '#' is a lone high surrogate, '$' a private-use code point, '%' a bell, '&' the pair for U+1D441
        path.write_bytes(pdf_with_tounicode(
            ["The dataset # holds 40 scans $ from two sites.", "Each scan % was read & twice by one reader."],
            {"#": "D835", "$": "E000", "%": "0007", "&": "D835DC41"}))
    elif suffix == "docx":
        _docx(path)
    else:
        path.write_text(SOURCES[suffix], encoding="utf-8")
    limits = dataclasses.replace(DEFAULT_LIMITS, pdf_engine=engine) if engine else DEFAULT_LIMITS
    doc = read_document(path, limits)
    text = " ".join(b.text for b in doc.blocks)
    assert not BAD.search(text), repr(text)
    # the words around the junk are kept apart and whole
    assert re.search(r"\bdataset holds 40 scans\b", re.sub(r"\s*\ufffd\s*", " ", text)), text
    assert "from two sites" in text
    if suffix == "pdf":
        assert "read N twice" in text  # the surrogate pair joined and NFKC-normalised to its letter
    # spaCy tokenises every block (a lone surrogate makes it raise UnicodeEncodeError)
    assert sum(len(d) for d in parse_blocks(b.text for b in doc.blocks)) > 10
    # the user hears about it where unexpected characters were dropped
    assert any("not text" in w for w in doc.warnings), doc.warnings


def test_clean_text_keeps_words_apart_and_reports_what_moved():
    text, runs, removed = clean_text("a\x0bb \ue000 c\ud800d")
    assert text == "a b cd"
    assert removed == 2  # the private-use symbol and the lone surrogate; the vertical tab is a line break
    assert [r[:2] for r in runs] == [(1, 2), (4, 6), (7, 8)]
    assert clean_text("plain text") == ("plain text", [], 0)


def test_marks_stay_on_their_characters():
    raw = "one \ue000 two\x0bthree \ud835\udc41 four"
    marks = (Mark(0, page=1, line=1), Mark(raw.index("two"), page=1, line=2),
             Mark(raw.index("three"), page=1, line=3), Mark(raw.index("four"), page=2, line=1))
    block = Block(raw, "paragraph", Location("x.pdf", page=1, line=1), marks=marks)
    cleaned, removed = clean_block(block)
    assert cleaned.text == "one two three N four"
    assert removed == 1
    for word, (page, line) in (("two", (1, 2)), ("three", (1, 3)), ("four", (2, 1))):
        loc = cleaned.location_at(cleaned.text.index(word))
        assert (loc.page, loc.line) == (page, line), word
