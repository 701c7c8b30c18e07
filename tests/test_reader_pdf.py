"""The PDF reader on PDFs rendered here: text that agrees with independent extractors, two-column reading order,
de-hyphenation, ligatures, running headers, headings, tables, locations, and one clear error per bad file."""

from __future__ import annotations

import importlib.util
import re
import shutil
import subprocess
import sys
import unicodedata
from pathlib import Path

import pytest
from rapidfuzz.distance import Indel

from checker.core.errors import InputError
from checker.core.limits import Limits
from checker.reading import read_document

ROOT = Path(__file__).resolve().parent.parent
SOURCES = Path(__file__).resolve().parent / "data" / "pdf"


def _load_render():
    spec = importlib.util.spec_from_file_location("studygap_fixture_render", ROOT / "fixtures" / "render.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    spec.loader.exec_module(module)
    return module


render = _load_render()


def _words(text: str) -> list[str]:
    text = unicodedata.normalize("NFKC", text)
    return re.findall(r"[^\W_]+(?:[-'.,:/][^\W_]+)*", text)


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", unicodedata.normalize("NFKC", text)).strip()


@pytest.fixture(scope="module")
def two_column(tmp_path_factory):
    elements = render.parse((SOURCES / "northbay-two-column.md").read_text(encoding="utf-8"))
    path = tmp_path_factory.mktemp("pdf") / "northbay-two-column.pdf"
    render.render_pdf(elements, path, columns=2)
    return path, elements, read_document(path)


@pytest.fixture(scope="module")
def one_column(tmp_path_factory):
    elements = render.parse((SOURCES / "northbay-one-column.md").read_text(encoding="utf-8"))
    path = tmp_path_factory.mktemp("pdf") / "northbay-one-column.pdf"
    render.render_pdf(elements, path, columns=1)
    return path, elements, read_document(path)


def _without_furniture(page_text: str, header: str) -> str:
    """A page's text minus the running header, the side label and the page number that render.py draws."""
    todo = {header, "Fictional demonstration"}
    number_seen = False
    kept = []
    for line in (raw.strip() for raw in page_text.splitlines()):
        if not line:
            continue
        if line in todo:
            todo.discard(line)
            continue
        if re.fullmatch(r"\d+", line) and not number_seen:
            number_seen = True
            continue
        kept.append(line)
    return "\n".join(kept)


def _our_words(document) -> list[str]:
    return [w for w in _words(document.text) if w not in {"|", "•"}]


# ---------------------------------------------------------------------------------------------- external checks


def test_one_column_text_agrees_with_pypdf(one_column):
    # External check: pypdf (an independent PDF text extractor from the package registry) reads the same words
    # in the same order, once the page furniture that we remove on purpose is taken out of its text.
    from pypdf import PdfReader

    path, elements, document = one_column
    header = render._title_of(elements)
    theirs = _words("\n".join(_without_furniture(p.extract_text(), header) for p in PdfReader(path).pages))
    similarity = Indel.normalized_similarity(_our_words(document), theirs)
    assert similarity >= 0.97, similarity


@pytest.mark.skipif(shutil.which("pdftotext") is None, reason="pdftotext (poppler-utils) is not installed")
def test_one_column_text_agrees_with_pdftotext(one_column):
    # External check: pdftotext from poppler-utils, a second independent extractor.
    path, elements, document = one_column
    header = render._title_of(elements)
    out = subprocess.run(["pdftotext", "-enc", "UTF-8", str(path), "-"], capture_output=True, text=True,
                         check=True).stdout
    theirs = _words("\n".join(_without_furniture(page, header) for page in out.split("\f")))
    similarity = Indel.normalized_similarity(_our_words(document), theirs)
    assert similarity >= 0.97, similarity


# ---------------------------------------------------------------------------------------------- layout


def _sentences(elements) -> list[str]:
    out = []
    for e in elements:
        if isinstance(e, render.Table):
            continue
        text = _flat(render.plain(e.text))
        out.extend(s for s in re.split(r"(?<=[.;:!?])\s+(?=[A-Z0-9])", text) if s)
    return out


def test_two_column_text_follows_the_source_order(two_column):
    path, elements, document = two_column
    text = _flat(" ".join(b.text for b in document.blocks))
    at = 0
    for sentence in _sentences(elements):
        found = text.find(sentence, at)
        assert found >= 0, f"not found in order after offset {at}: {sentence!r}"
        at = found + len(sentence)


@pytest.mark.skipif(importlib.util.find_spec("pyphen") is None,
                    reason="pyphen is not installed, so render.py sets the fixture without hyphenation")
def test_two_column_rendering_has_hyphenated_breaks_that_are_joined(two_column):
    # the fixture must really break words at line ends, or the order test above proves nothing about it
    from pypdf import PdfReader

    path, _elements, document = two_column
    raw = "\n".join(p.extract_text() for p in PdfReader(path).pages)
    breaks = re.findall(r"([a-z]+)-\n([a-z]+)", raw)
    assert breaks, "the two-column fixture has no hyphenated line break"
    text = document.text
    for head, tail in breaks:
        assert f"{head}{tail}" in text or f"{head}-{tail}" in text


def test_page_furniture_is_removed(two_column):
    from pypdf import PdfReader

    path, elements, document = two_column
    pages = [p.extract_text() for p in PdfReader(path).pages]
    assert len(pages) >= 2 and all("Fictional demonstration" in p for p in pages)
    assert "Fictional demonstration" not in document.text
    assert not [b.text for b in document.blocks if re.fullmatch(r"\d+", b.text)]
    title = render._title_of(elements)
    assert document.text.count(title[:40]) == 1  # the title heading, not the header above every page


def test_headings_levels_and_sections(two_column):
    _path, _elements, document = two_column
    headings = {b.text: b.level for b in document.blocks if b.kind == "heading"}
    assert headings["Abstract"] == 1
    assert headings["1 Introduction"] == 1
    assert headings["2 Methods"] == 1
    assert headings["2.1 Data"] == 2
    assert headings["2.4 Evaluation"] == 2
    assert headings["References"] == 1
    block = next(b for b in document.blocks if b.text.startswith("Each test image was annotated"))
    assert block.section[-2:] == ("2 Methods", "2.2 Reference annotation")
    assert next(b for b in document.blocks if b.text.startswith("We compared three")).role == "abstract"


def test_tables_are_read_as_rows(two_column):
    _path, elements, document = two_column
    rows = [b.text for b in document.blocks if b.kind == "table-row"]
    for table in (e for e in elements if isinstance(e, render.Table)):
        for row in table.rows:
            assert " | ".join(row) in rows
    caption = next(b for b in document.blocks if b.text.startswith("Table 1."))
    assert caption.kind == "caption"


def test_every_line_belongs_to_one_block(two_column):
    _path, _elements, document = two_column
    places = [(m.page, m.line) for b in document.blocks for m in b.marks]
    assert len(places) == len(set(places))
    for b in document.blocks:
        assert b.marks[0].offset == 0 and (b.marks[0].page, b.marks[0].line) == (b.location.page, b.location.line)
        assert all(a.offset < c.offset for a, c in zip(b.marks, b.marks[1:]))


def test_lists_are_list_items(two_column):
    _path, _elements, document = two_column
    items = [b.text for b in document.blocks if b.kind == "list-item"]
    assert "• every vessel segment wider than two pixels;" in items
    assert any(t.startswith("1. Ferncastle A") for t in items)


# ---------------------------------------------------------------------------------------------- hand-built PDFs


def _canvas_pdf(path: Path, pages: list[list[tuple]], *, header: str | None = None, fonts: dict | None = None):
    """A PDF with text drawn at known places: each line is (x, y, text, font, size)."""
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    c = canvas.Canvas(str(path), pagesize=A4, invariant=1)
    for number, lines in enumerate(pages, 1):
        if header:
            c.setFont("Helvetica", 8)
            c.drawString(72, 800, header)
            c.drawCentredString(A4[0] / 2, 30, str(number))
        for line in lines:
            x, y, text, font, size = line
            c.setFont(font, size)
            c.drawString(x, y, text)
        c.showPage()
    c.save()


def _lines(texts: list[str], top: float = 740, pitch: float = 14, x: float = 72, **style) -> list[tuple]:
    font, size = style.get("font", "Times-Roman"), style.get("size", 11)
    return [(x, top - i * pitch, t, font, size) for i, t in enumerate(texts)]


def test_dehyphenation_across_lines(tmp_path):
    path = tmp_path / "hyphens.pdf"
    _canvas_pdf(path, [_lines([
        "Automatic seg-",
        "mentation of retinal vessels is set in a two-",
        "column layout, compared with a U-",
        "Net and applied to the COVID-",
        "19 cohort with a state-of-the-",
        "art method; the inter-",
        "rater agreement was good, and the inter-rater",
        "agreement of the third reader was lower.",
    ])])
    text = read_document(path).blocks[0].text
    assert text.startswith("Automatic segmentation of retinal vessels is set in a two-column layout, compared with "
                           "a U-Net and applied to the COVID-19 cohort with a state-of-the-art method; the "
                           "inter-rater agreement was good")


def test_dehyphenation_across_a_page_break(tmp_path):
    path = tmp_path / "page-break.pdf"
    first = _lines(["The readers annotated every image of the test set and the seg-"], top=100)
    second = _lines(["mentation of the small vessels took the longest time of all."])
    _canvas_pdf(path, [_lines(["1 Introduction"], font="Times-Bold", size=13) + first, second],
                header="Northbay test report")
    blocks = read_document(path).blocks
    block = next(b for b in blocks if b.text.startswith("The readers"))
    assert "the segmentation of the small vessels" in block.text
    assert block.location_at(block.text.index("mentation")).page == 2


def test_ligatures_become_letters(tmp_path):
    import reportlab
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    pdfmetrics.registerFont(TTFont("VeraTest", str(Path(reportlab.__file__).parent / "fonts" / "Vera.ttf")))
    path = tmp_path / "ligatures.pdf"
    _canvas_pdf(path, [_lines(["The \ufb01rst \ufb02ow \ufb01eld was \ufb01ltered of\ufb01cially."], font="VeraTest")])
    text = read_document(path).blocks[0].text
    assert text == "The first flow field was filtered officially."


def test_locations_of_lines_and_continued_paragraphs(tmp_path):
    path = tmp_path / "locations.pdf"
    page1 = _lines(["1 Introduction"], font="Times-Bold", size=13) + _lines([
        "The first paragraph of the fictional report sets the scene.",
    ], top=716) + _lines([
        "The second paragraph is about the reference standard and",
        "it continues over the page, because it is long and it has no",
    ], top=690)
    page2 = _lines([
        "full stop on this page, which is where the paragraph ends.",
    ]) + _lines(["2 Methods"], top=712, font="Times-Bold", size=13) + _lines([
        "The readers met twice to agree on a consensus border.",
    ], top=694)
    _canvas_pdf(path, [page1, page2], header="Northbay test report, fictional")
    document = read_document(path)
    assert "Northbay test report" not in document.text
    continued = next(b for b in document.blocks if b.text.startswith("The second paragraph"))
    assert continued.text.endswith("it has no full stop on this page, which is where the paragraph ends.")
    assert (continued.location.page, continued.location.line) == (1, 3)
    here = continued.location_at(continued.text.index("it continues"))
    assert (here.page, here.line) == (1, 4)
    there = continued.location_at(continued.text.index("full stop"))
    assert (there.page, there.line) == (2, 1)
    methods = next(b for b in document.blocks if b.text.startswith("The readers met"))
    assert (methods.location.page, methods.location.line) == (2, 3)
    assert methods.section == ("2 Methods",) and methods.location_at(0).section == ("2 Methods",)


def test_numbered_capital_headings_in_body_type(tmp_path):
    path = tmp_path / "capitals.pdf"
    _canvas_pdf(path, [
        _lines(["III. METHODS"], top=740) + _lines(["We describe the fictional data first."], top=720)
        + _lines(["IV. RESULTS"], top=690) + _lines(["The fictional results follow."], top=670)
    ])
    blocks = read_document(path).blocks
    headings = [(b.text, b.level) for b in blocks if b.kind == "heading"]
    assert headings == [("III. METHODS", 1), ("IV. RESULTS", 1)]
    assert blocks[-1].role == "results"


# ---------------------------------------------------------------------------------------------- bad input


def test_scanned_pdf_asks_for_ocr(tmp_path):
    from PIL import Image
    from reportlab.lib.utils import ImageReader
    from reportlab.pdfgen import canvas

    path = tmp_path / "scan.pdf"
    image = Image.new("L", (200, 280), 255)
    c = canvas.Canvas(str(path), invariant=1)
    c.drawImage(ImageReader(image), 50, 200, 400, 560)
    c.showPage()
    c.save()
    with pytest.raises(InputError) as caught:
        read_document(path)
    assert "no text layer" in caught.value.cause and "OCR" in caught.value.hint


def test_a_scanned_page_among_text_pages_is_a_warning(tmp_path):
    from PIL import Image
    from reportlab.lib.utils import ImageReader
    from reportlab.pdfgen import canvas

    path = tmp_path / "mixed.pdf"
    c = canvas.Canvas(str(path), invariant=1)
    c.setFont("Times-Roman", 11)
    c.drawString(72, 740, "The first page of the fictional report has text.")
    c.showPage()
    c.drawImage(ImageReader(Image.new("L", (50, 50), 255)), 50, 200, 400, 400)
    c.showPage()
    c.save()
    document = read_document(path)
    assert document.pages == 2
    assert any("page 2" in w and "OCR" in w for w in document.warnings)


def test_password_protected_pdf(one_column, tmp_path):
    from pypdf import PdfReader, PdfWriter

    writer = PdfWriter(clone_from=PdfReader(one_column[0]))
    writer.encrypt(user_password="northbay", owner_password="northbay-owner", algorithm="AES-128")
    path = tmp_path / "locked.pdf"
    with path.open("wb") as fh:
        writer.write(fh)
    with pytest.raises(InputError) as caught:
        read_document(path)
    assert "password" in caught.value.cause and "unprotected copy" in caught.value.hint


def test_truncated_pdf(one_column, tmp_path):
    data = one_column[0].read_bytes()
    path = tmp_path / "cut.pdf"
    path.write_bytes(data[: len(data) // 2])
    with pytest.raises(InputError) as caught:
        read_document(path)
    assert caught.value.cause == "the PDF is damaged or truncated"


def test_repaired_faults_become_one_warning_not_terminal_noise(one_column, tmp_path, capfd):
    data = one_column[0].read_bytes()
    entry = data.index(b"\n", data.index(b"\n", data.index(b"xref\n0 ") + 5) + 1) + 1  # the xref entry of object 1
    path = tmp_path / "bad-xref.pdf"
    path.write_bytes(data[:entry] + b"00000000x1" + data[entry + 10:])
    document = read_document(path)
    # the font of object 1 is lost, so spacing and line grouping differ; the letters are nearly all there
    assert Indel.normalized_similarity("".join(document.text.split()), "".join(one_column[2].text.split())) > 0.95
    assert len(document.warnings) == 1 and "worked around" in document.warnings[0]
    assert capfd.readouterr().err == ""


def test_html_saved_as_pdf(tmp_path):
    path = tmp_path / "download.pdf"
    path.write_text("<!DOCTYPE html>\n<html><body>Please sign in to download this article.</body></html>")
    with pytest.raises(InputError) as caught:
        read_document(path)
    assert caught.value.cause.startswith("not a PDF (it starts like an HTML page")


def test_unrecognised_bytes(tmp_path):
    path = tmp_path / "noise.pdf"
    path.write_bytes(bytes(range(256)) * 4)
    with pytest.raises(InputError, match=r"not a PDF \(unrecognised bytes\)"):
        read_document(path)


def test_page_limit(two_column):
    with pytest.raises(InputError) as caught:
        read_document(two_column[0], Limits(max_pages=1))
    assert "2 pages" in caught.value.cause and "--max-pages" in caught.value.hint


def test_leading_junk_before_the_header_is_allowed(one_column, tmp_path):
    path = tmp_path / "junk.pdf"
    path.write_bytes(b"\x00\x00mail gateway stamp\r\n" + one_column[0].read_bytes())
    document = read_document(path)
    assert document.blocks[0].text == one_column[2].blocks[0].text


# ---------------------------------------------------------------------------------------------- the renderer


def test_rendering_and_reading_are_deterministic(one_column, tmp_path):
    path, elements, document = one_column
    again = tmp_path / "again.pdf"
    render.render_pdf(elements, again, columns=1)
    assert again.read_bytes() == path.read_bytes()
    def summary(doc):
        return [(b.text, b.kind, b.level, b.section, b.marks, b.location.page, b.location.line) for b in doc.blocks]

    assert summary(read_document(again)) == summary(document)


def test_docx_rendering_has_real_structure(tmp_path):
    import docx

    elements = render.parse((SOURCES / "northbay-one-column.md").read_text(encoding="utf-8"))
    out = tmp_path / "one.docx"
    render.render_docx(elements, out)
    first = out.read_bytes()
    render.render_docx(elements, out)
    assert out.read_bytes() == first
    d = docx.Document(str(out))
    styles = [(p.style.name, p.text) for p in d.paragraphs if p.text]
    assert ("Title", "Northbay Lung Nodule Benchmark: a design proposal") in styles
    assert ("Heading 1", "Annotation") in styles
    assert ("List Bullet", "Opening of the validation leaderboard four weeks later.") in styles
    table = d.tables[0]
    assert [c.text for c in table.rows[0].cells] == ["Split", "Scans", "Nodules", "Scanners"]
    assert table.cell(2, 2).text == "148"


def test_render_all_skips_missing_sources(tmp_path, capsys):
    assert render.render_all(tmp_path) == 1
    assert "does not exist yet" in capsys.readouterr().err


def test_inline_markup_and_superscripts():
    spans = render.spans("a **bold** and *italic* rate of 3 × 10⁻⁴ in [text](https://example.org)")
    assert [s.text for s in spans if s.bold] == ["bold"]
    assert [s.text for s in spans if s.italic] == ["italic"]
    assert [s.text for s in spans if s.script == "super"] == ["-4"]
    assert render.plain("see [the protocol](x)") == "see the protocol"
