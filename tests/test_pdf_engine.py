"""The two ways of laying out PDF text give the same document: PDFium (pypdfium2, fast, the default) and
pdfminer.six's layout analysis (the careful path, and the reference here: an outside library from the package
registry). Every PDF rendered for the tests, the demo PDFs and PDFs drawn below to provoke the hard cases
(cells set as one string, side-by-side captions, figures with labels, rotated and scaled text, glyphs without
a character map, a rotated page) must come out block for block the same, locations included."""

from __future__ import annotations

import dataclasses
import json
import subprocess
import sys
import zlib
from pathlib import Path

import pytest

from checker.core.limits import DEFAULT_LIMITS
from checker.reading import pdf as pdf_reader
from checker.reading import pdfium_layout

from .test_reader_pdf import render

ROOT = Path(__file__).resolve().parent.parent
SOURCES = Path(__file__).resolve().parent / "data" / "pdf"
CAREFUL = dataclasses.replace(DEFAULT_LIMITS, pdf_engine="pdfminer")
FAST = dataclasses.replace(DEFAULT_LIMITS, pdf_engine="pdfium")


def _both(path: Path):
    data = path.read_bytes()
    return pdf_reader.read(path, data, CAREFUL), pdf_reader.read(path, data, FAST)


def _assert_same(path: Path):
    careful, fast = _both(path)
    for a, b in zip(careful.blocks, fast.blocks):
        assert a == b, f"{path.name}: first differing block\n careful: {a}\n fast:    {b}"
    assert len(careful.blocks) == len(fast.blocks)
    assert careful.warnings == fast.warnings
    assert careful.pages == fast.pages
    return careful, fast


def _same_pieces(path: Path) -> list[str]:
    """The line pieces of every page, which both engines must cut alike; the fast engine's are returned."""
    data = path.read_bytes()
    careful = [p.text for page in pdf_reader._layouts(path, data, CAREFUL) for p in page.pieces]
    fast = [p.text for page in pdfium_layout.pages(path, data, FAST) for p in page.pieces]
    assert sorted(careful) == sorted(fast)
    return fast


def _fast_path_taken(path: Path) -> bool:
    try:
        pdfium_layout.pages(path, path.read_bytes(), FAST)
    except pdfium_layout.Unsure:
        return False
    return True


@pytest.fixture(scope="module")
def rendered(tmp_path_factory):
    folder = tmp_path_factory.mktemp("engines")
    out = []
    for md in sorted(SOURCES.glob("*.md")):
        for columns in (1, 2):
            path = folder / f"{md.stem}-{columns}col.pdf"
            render.render_pdf(render.parse(md.read_text(encoding="utf-8")), path, columns=columns)
            out.append(path)
    return out


def test_rendered_test_documents_read_the_same(rendered):
    for path in rendered:
        assert _fast_path_taken(path), path.name
        _assert_same(path)


@pytest.mark.parametrize("name", ["wrist-fracture-manuscript.pdf", "kidney-stone-benchmark-proposal.pdf"])
def test_demo_pdfs_give_byte_identical_reports(name, tmp_path):
    outputs = []
    for engine in ("pdfium", "pdfminer"):
        target = tmp_path / f"{engine}.json"
        proc = subprocess.run(
            [sys.executable, "-m", "checker.cli", "check", str(ROOT / "fixtures" / "demo" / name), "--pdf-engine",
             engine, "--no-cache", "--format", "json", "-o", str(target), "--quiet"],
            capture_output=True, text=True, cwd=tmp_path,
        )
        assert proc.returncode in (0, 1), proc.stderr
        outputs.append(target.read_bytes())
    assert outputs[0] == outputs[1]
    assert json.loads(outputs[0])


def test_unknown_engine_is_a_usage_error(tmp_path):
    proc = subprocess.run([sys.executable, "-m", "checker.cli", "check", str(ROOT / "fixtures" / "demo" /
                           "wrist-fracture-manuscript.pdf"), "--pdf-engine", "fastest"],
                          capture_output=True, text=True, cwd=tmp_path)
    assert proc.returncode == 2
    assert "--pdf-engine" in proc.stderr and "pdfium" in proc.stderr


def test_the_engine_chosen_is_the_engine_used(monkeypatch):
    path = ROOT / "fixtures" / "demo" / "kidney-stone-benchmark-proposal.pdf"
    data = path.read_bytes()
    calls = []
    real_pages, real_layouts = pdfium_layout.pages, pdf_reader._layouts
    monkeypatch.setattr(pdfium_layout, "pages", lambda *a: calls.append("pdfium") or real_pages(*a))
    monkeypatch.setattr(pdf_reader, "_layouts", lambda *a: calls.append("pdfminer") or real_layouts(*a))
    pdf_reader.read(path, data, FAST)
    assert calls == ["pdfium"]
    calls.clear()
    pdf_reader.read(path, data, CAREFUL)
    assert calls == ["pdfminer"]


# ------------------------------------------------------------------------------------------- provoked cases

def _canvas(path: Path):
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    return canvas.Canvas(str(path), pagesize=A4, invariant=1), A4


def test_cells_set_as_one_string_and_side_by_side_captions(tmp_path):
    path = tmp_path / "cells.pdf"
    c, (w, h) = _canvas(path)
    c.setFont("Times-Bold", 14)
    c.drawString(72, h - 72, "2 Results of the fictional reader study")
    c.setFont("Times-Roman", 10)
    y = h - 110
    c.drawString(72, y, "The table lists each reader's sensitivity on the held-out test set of 120 cases.")
    rows = [("Reader", "Sensitivity", "Specificity"), ("A. Example", "0.91", "0.88"), ("B. Sample", "0.87", "0.93")]
    for row in rows:
        y -= 16
        # one string per row, the cells pushed apart with runs of spaces: one text object in the PDF
        c.drawString(72, y, f"{row[0]:<18}".replace(" ", "    ") + "      " + row[1] + "            " + row[2])
    # two captions side by side, each in two lines, drawn one after the other
    y -= 40
    for x, lines in ((72, ["Figure 2. Sensitivity per reader", "on the fictional test set."]),
                     (300, ["Figure 3. Specificity per reader", "on the same cases."])):
        for k, line in enumerate(lines):
            c.drawString(x, y - 12 * k, line)
    c.showPage()
    c.save()
    careful, fast = _assert_same(path)
    assert _fast_path_taken(path)
    fast_pieces = _same_pieces(path)
    # typed spaces hold a line together; captions drawn one after the other stay apart
    assert "A. Example 0.91 0.88" in fast_pieces and "Figure 3. Specificity per reader" in fast_pieces


def test_figure_labels_rotated_stamps_and_scaled_text(tmp_path):
    path = tmp_path / "figure.pdf"
    c, (w, h) = _canvas(path)
    c.setFont("Helvetica", 10)
    c.drawString(72, h - 72, "Methods. Each case was read twice by two fictional readers at the Example Clinic.")
    # a small drawing with its own labels, placed as a form: its text is not running text
    c.beginForm("plot", lowerx=0, lowery=0, upperx=150, uppery=100)
    c.rect(0, 0, 150, 100)
    c.setFont("Helvetica", 7)
    c.drawString(10, 5, "axis label: threshold")
    c.drawString(10, 90, "legend: reader A")
    c.endForm()
    c.saveState()
    c.translate(72, h - 250)
    c.doForm("plot")
    c.restoreState()
    # a rotated stamp in the margin
    c.saveState()
    c.translate(30, h / 2)
    c.rotate(90)
    c.drawString(0, 0, "Fictional preprint - not peer reviewed")
    c.restoreState()
    # text drawn in a scaled coordinate system
    c.saveState()
    c.scale(1.5, 1.5)
    c.setFont("Helvetica-Bold", 8)
    c.drawString(48, (h - 330) / 1.5, "3 Results")
    c.restoreState()
    c.setFont("Helvetica", 10)
    c.drawString(72, h - 360, "Agreement between the two readers was high on all of the sixty cases.")
    c.showPage()
    c.save()
    careful, fast = _assert_same(path)
    assert _fast_path_taken(path)
    text = " ".join(b.text for b in fast.blocks)
    assert "axis label" not in text and "preprint" not in text
    assert "3 Results" in text


def _hand_made_pdf(path: Path, *, rotate: int = 0, unknown_glyphs: bool = False, kerned: bool = False) -> None:
    """A one-page PDF written byte by byte; optionally a rotated page, a font whose glyph names map to no
    character (glyphs named /g1 and /g2), or table rows set as one run each with the cells moved apart by
    kerning."""
    lines = [b"BT /F1 11 Tf 72 720 Td (Results of the fictional study were read twice.) Tj ET",
             b"BT /F1 11 Tf 72 700 Td (The readers agreed on 58 of the 60 cases.) Tj ET"]
    if kerned:
        lines += [b"BT /F1 10 Tf 72 %d Td [(%s) -%d (%s) -3000 (%s)] TJ ET" % (y, a, k, b, c)
                  for y, a, k, b, c in ((660, b"Reader", 9000, b"Sensitivity", b"Specificity"),
                                        (646, b"A. Example", 7400, b"0.91", b"0.88"),
                                        (632, b"B. Sample", 7700, b"0.87", b"0.93"))]
        lines.append(b"BT /F1 10 Tf 72 610 Td [(Agreement) -250 (was) -260 (high) -240 (for) -255 (both.)] TJ ET")
    if unknown_glyphs:
        lines.append(b"BT /F1 11 Tf 72 680 Td (Each case had one reference mark.) Tj /F2 11 Tf (\x01\x02) Tj ET")
    content = b"\n".join(lines)
    stream = zlib.compress(content)
    fonts = b"/F1 4 0 R" + (b" /F2 6 0 R" if unknown_glyphs else b"")
    objects = [
        b"<< /Type /Catalog /Pages 2 0 R >>",
        b"<< /Type /Pages /Kids [3 0 R] /Count 1 >>",
        b"<< /Type /Page /Parent 2 0 R /MediaBox [0 0 612 792] /Resources << /Font << " + fonts
        + b" >> >> /Contents 5 0 R" + (b" /Rotate %d" % rotate if rotate else b"") + b" >>",
        b"<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica /Encoding /WinAnsiEncoding >>",
        b"<< /Length %d /Filter /FlateDecode >>\nstream\n" % len(stream) + stream + b"\nendstream",
    ]
    if unknown_glyphs:
        objects.append(b"<< /Type /Font /Subtype /Type1 /BaseFont /FictionalSymbols /Encoding << /Type /Encoding "
                       b"/Differences [1 /g1 /g2] >> /FirstChar 1 /LastChar 2 /Widths [500 500] "
                       b"/FontDescriptor 7 0 R >>")
        objects.append(b"<< /Type /FontDescriptor /FontName /FictionalSymbols /Flags 4 /FontBBox [0 -200 500 700] "
                       b"/ItalicAngle 0 /Ascent 700 /Descent -200 /CapHeight 700 /StemV 80 >>")
    out = bytearray(b"%PDF-1.4\n")
    offsets = []
    for i, body in enumerate(objects, 1):
        offsets.append(len(out))
        out += b"%d 0 obj\n" % i + body + b"\nendobj\n"
    xref = len(out)
    out += b"xref\n0 %d\n0000000000 65535 f \n" % (len(objects) + 1)
    for off in offsets:
        out += b"%010d 00000 n \n" % off
    out += b"trailer\n<< /Size %d /Root 1 0 R >>\nstartxref\n%d\n%%%%EOF\n" % (len(objects) + 1, xref)
    path.write_bytes(bytes(out))


def test_glyphs_without_a_character_map_are_counted_alike(tmp_path):
    path = tmp_path / "glyphs.pdf"
    _hand_made_pdf(path, unknown_glyphs=True)
    careful, fast = _assert_same(path)
    assert _fast_path_taken(path)
    assert any("no character map" in w for w in fast.warnings)
    assert any("Each case had one reference mark." in b.text for b in fast.blocks)


def test_cells_moved_apart_by_kerning_are_cut_apart(tmp_path):
    path = tmp_path / "kerned.pdf"
    _hand_made_pdf(path, kerned=True)
    careful, fast = _assert_same(path)
    assert _fast_path_taken(path)
    fast_pieces = _same_pieces(path)
    assert "0.91" in fast_pieces  # a cell of its own
    assert "Agreement was high for both." in fast_pieces  # word spaces set by kerning are spaces, not cuts


def test_a_rotated_page_is_read_the_careful_way(tmp_path):
    path = tmp_path / "rotated.pdf"
    _hand_made_pdf(path, rotate=90)
    assert not _fast_path_taken(path)
    try:
        _assert_same(path)
    except Exception as exc:  # the careful path's own verdict on the page stands, whichever it is
        assert "no text" in str(exc)


def test_a_repaired_file_is_read_the_careful_way(tmp_path):
    path = tmp_path / "good.pdf"
    _hand_made_pdf(path)
    data = path.read_bytes()
    broken = tmp_path / "broken-xref.pdf"
    start = data.index(b"xref\n")
    entry = data.index(b"\n", data.index(b"\n", start + 5) + 1) + 1  # the entry of object 1
    broken.write_bytes(data[:entry] + b"00000000x1" + data[entry + 10:])
    assert _fast_path_taken(path)
    assert not _fast_path_taken(broken)
    careful, fast = _assert_same(broken)
    assert any("worked around" in w for w in fast.warnings)
