"""The DOCX reader: headings, lists, tables in place, footnotes, paragraph numbers, and a guarded zip."""

from __future__ import annotations

import io
import zipfile
from pathlib import Path

import docx
import pytest
from docx.oxml import OxmlElement, parse_xml
from docx.oxml.ns import nsdecls, qn

from checker.core.errors import InputError
from checker.core.limits import Limits
from checker.reading import read_document

W_NS = "http://schemas.openxmlformats.org/wordprocessingml/2006/main"
FOOTNOTES = f"""<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<w:footnotes xmlns:w="{W_NS}">
<w:footnote w:type="separator" w:id="-1"><w:p><w:r><w:separator/></w:r></w:p></w:footnote>
<w:footnote w:type="continuationSeparator" w:id="0"><w:p><w:r><w:continuationSeparator/></w:r></w:p></w:footnote>
<w:footnote w:id="1"><w:p><w:r><w:footnoteRef/></w:r>
<w:r><w:t xml:space="preserve"> Funded by the fictional Lakeside Fund.</w:t></w:r></w:p></w:footnote>
</w:footnotes>"""


def add_footnote_ref(paragraph, note_id: int = 1) -> None:
    run = paragraph.add_run()
    ref = OxmlElement("w:footnoteReference")
    ref.set(qn("w:id"), str(note_id))
    run._r.append(ref)


def add_hyperlink(paragraph, text: str) -> None:
    paragraph._p.append(parse_xml(
        f'<w:hyperlink {nsdecls("w", "r")} r:id="rIdX"><w:r><w:t xml:space="preserve">{text}</w:t></w:r></w:hyperlink>'
    ))


def with_footnotes(path: Path) -> None:
    """python-docx writes no footnotes part; add one the way Word does (part, relationship, content type)."""
    buf = io.BytesIO()
    with zipfile.ZipFile(path) as src, zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as dst:
        for item in src.infolist():
            data = src.read(item.filename)
            if item.filename == "[Content_Types].xml":
                data = data.replace(b"</Types>", b'<Override PartName="/word/footnotes.xml" ContentType="application/'
                                    b'vnd.openxmlformats-officedocument.wordprocessingml.footnotes+xml"/></Types>')
            elif item.filename == "word/_rels/document.xml.rels":
                data = data.replace(b"</Relationships>", b'<Relationship Id="rIdFoot" Type="http://schemas.openxml'
                                    b'formats.org/officeDocument/2006/relationships/footnotes" '
                                    b'Target="footnotes.xml"/></Relationships>')
            dst.writestr(item, data)
        dst.writestr("word/footnotes.xml", FOOTNOTES)
    path.write_bytes(buf.getvalue())


@pytest.fixture
def manuscript(tmp_path: Path) -> Path:
    d = docx.Document()
    d.add_paragraph("The Lakeside Imaging Study", style="Title")                     # 1
    d.add_paragraph("")                                                               # 2 (empty, still counted)
    d.add_heading("Introduction", level=1)                                            # 3
    intro = d.add_paragraph("The fictional Lakeside Imaging Institute collected scans.")  # 4
    add_footnote_ref(intro)
    d.add_heading("Methods", level=1)                                                 # 5
    bold = d.add_paragraph()                                                          # 6
    bold.add_run("Dataset and annotations").bold = True
    d.add_paragraph("Three radiologists annotated every scan.")                       # 7
    numbered = d.add_paragraph()                                                      # 8
    numbered.add_run("2.3 Reference standard").bold = True
    d.add_paragraph("Disagreements went to a fourth reader.", style="List Bullet")    # 9
    d.add_paragraph("Scans with artefacts were excluded.", style="List Number")       # 10
    table = d.add_table(rows=3, cols=3)
    table.cell(0, 0).text, table.cell(0, 1).text, table.cell(0, 2).text = "Split", "Cases", "Sites"
    table.cell(1, 0).text, table.cell(1, 1).text = "train", "100"
    merged = table.cell(1, 1).merge(table.cell(1, 2))
    merged.text = "100 cases"
    table.cell(2, 1).text, table.cell(2, 2).text = "20", "1"
    table.cell(1, 0).merge(table.cell(2, 0)).text = "train or test"  # merged down: the lower cell repeats nothing
    d.add_paragraph("Table 1. Cases per split.", style="Caption")                     # 11
    d.add_heading("Results", level=1)                                                 # 12
    long_heading = " ".join(["This sentence was styled as a heading by mistake"] * 5) + "."
    d.add_heading(long_heading, level=2)                                              # 13
    mixed = d.add_paragraph("Visible text ")                                          # 14
    hidden = mixed.add_run("hidden text ")
    hidden.font.hidden = True
    add_hyperlink(mixed, "linked words")
    mixed._p.append(parse_xml(f'<w:del {nsdecls("w")} w:id="9" w:author="x">'
                              '<w:r><w:delText>deleted words</w:delText></w:r></w:del>'))
    mixed._p.append(parse_xml(f'<w:ins {nsdecls("w")} w:id="10" w:author="x">'
                              '<w:r><w:t xml:space="preserve"> inserted words</w:t></w:r></w:ins>'))
    units = d.add_paragraph("Volumes in mm")                                          # 15
    units.add_run("3").font.superscript = True
    units.add_run(" were read by two experts")
    units.add_run("1,2").font.superscript = True
    units.add_run(".")
    path = tmp_path / "manuscript.docx"
    d.save(path)
    with_footnotes(path)
    return path


def test_headings_with_levels(manuscript):
    doc = read_document(manuscript)
    assert [(b.text, b.level, b.location.paragraph) for b in doc.blocks if b.kind == "heading"] == [
        ("The Lakeside Imaging Study", 1, 1),
        ("Introduction", 1, 3),
        ("Methods", 1, 5),
        ("Dataset and annotations", 2, 6),
        ("2.3 Reference standard", 2, 8),
        ("Results", 1, 12),
    ]
    annotated = next(b for b in doc.blocks if "annotated every scan" in b.text)
    assert annotated.section == ("Methods", "Dataset and annotations")


def test_kinds_and_paragraph_numbers(manuscript):
    doc = read_document(manuscript)
    by_text = {b.text: b for b in doc.blocks}
    assert by_text["Three radiologists annotated every scan."].location.paragraph == 7
    assert by_text["Disagreements went to a fourth reader."].kind == "list-item"
    assert by_text["Scans with artefacts were excluded."].kind == "list-item"
    assert by_text["Table 1. Cases per split."].kind == "caption"
    long = next(b for b in doc.blocks if b.text.startswith("This sentence was styled"))
    assert long.kind == "paragraph" and long.location.paragraph == 13
    assert by_text["Visible text linked words inserted words"].location.paragraph == 14


def test_tables_stay_in_place_row_by_row_without_repeating_merged_cells(manuscript):
    doc = read_document(manuscript)
    kinds = [b.kind for b in doc.blocks]
    first_row = kinds.index("table-row")
    assert doc.blocks[first_row - 1].text == "Scans with artefacts were excluded."
    assert doc.blocks[first_row + 3].text == "Table 1. Cases per split."
    rows = [(b.text, b.location.table, b.location.row) for b in doc.blocks if b.kind == "table-row"]
    assert rows == [("Split | Cases | Sites", 1, 1), ("train or test | 100 cases", 1, 2), ("20 | 1", 1, 3)]
    assert doc.blocks[first_row].location_at(0).describe() == "table 1, row 1, section 2.3 Reference standard"


def test_hidden_and_deleted_text_is_not_read(manuscript):
    doc = read_document(manuscript)
    assert "hidden text" not in doc.text and "deleted words" not in doc.text


def test_superscripts_do_not_glue_into_numbers(manuscript):
    doc = read_document(manuscript)
    # a unit keeps its power and a citation mark stays apart from the count before it
    assert "Volumes in mm³ were read by two experts¹,²." in [b.text for b in doc.blocks]


def test_footnotes_with_the_paragraph_that_cites_them(manuscript):
    doc = read_document(manuscript)
    notes = [b for b in doc.blocks if b.kind == "footnote"]
    assert [(b.text, b.location.paragraph) for b in notes] == [("Funded by the fictional Lakeside Fund.", 4)]
    assert doc.blocks[-1] is notes[0]


def test_sniff_refuses_what_is_not_a_zip(tmp_path):
    fake = tmp_path / "old.docx"
    fake.write_bytes(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\0" * 100)
    with pytest.raises(InputError, match=r"not a DOCX \(it is an old-style Word \.doc file"):
        read_document(fake)
    text = tmp_path / "notes.docx"
    text.write_text("Just some text.", encoding="utf-8")
    with pytest.raises(InputError, match=r"not a DOCX \("):
        read_document(text)


def test_a_zip_without_a_document_part(tmp_path):
    path = tmp_path / "archive.docx"
    with zipfile.ZipFile(path, "w") as zf:
        zf.writestr("readme.txt", "Not a Word document.")
    with pytest.raises(InputError, match="a zip file but not a Word document"):
        read_document(path)


def test_truncated_docx_is_damaged(manuscript, tmp_path):
    data = manuscript.read_bytes()
    cut = tmp_path / "cut.docx"
    cut.write_bytes(data[: len(data) // 2])
    with pytest.raises(InputError, match="the DOCX is damaged or truncated") as info:
        read_document(cut)
    assert str(cut) in str(info.value)


def test_zip_bomb_is_refused_before_unpacking(tmp_path):
    path = tmp_path / "bomb.docx"
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("word/document.xml", "<w:document/>")
        with zf.open("word/media/zeros.bin", "w") as fh:
            chunk = b"\0" * (1 << 20)
            for _ in range(24):
                fh.write(chunk)
    assert path.stat().st_size < 200_000  # 24 MB of zeros in a small file
    limits = Limits(max_inflated_bytes=10 * 1024 * 1024)
    with pytest.raises(InputError, match="--max-inflated-bytes") as info:
        read_document(path, limits)
    assert "would unpack to 25 MB, over the limit of 10 MB" in str(info.value)


def test_damaged_xml_inside_is_an_input_error(manuscript, tmp_path):
    bad = tmp_path / "badxml.docx"
    buf = io.BytesIO()
    with zipfile.ZipFile(manuscript) as src, zipfile.ZipFile(buf, "w") as dst:
        for item in src.infolist():
            data = src.read(item.filename)
            if item.filename == "word/document.xml":
                data = data[: len(data) // 2]
            dst.writestr(item, data)
    bad.write_bytes(buf.getvalue())
    with pytest.raises(InputError, match="damaged"):
        read_document(bad)



def test_an_abstract_first_does_not_hold_the_numbered_chapters(tmp_path):
    # a Word manuscript whose headings are bold paragraphs: ABSTRACT first, then "1.0 INTRODUCTION" ... "4.3"
    d = docx.Document()
    for text, bold in (("A fictional lung nodule detector", True), ("ABSTRACT", True),
                       ("We describe a detector for the fictional Lakeside clinic.", False),
                       ("1.0 INTRODUCTION", True), ("Nodules are common in screening.", False),
                       ("3.0 PROPOSED SYSTEM", True), ("The system segments the lungs first.", False),
                       ("4.3 Reference annotation", True), ("Two readers outlined every nodule.", False)):
        run = d.add_paragraph().add_run(text)
        run.bold = bold
    path = tmp_path / "abstract-first.docx"
    d.save(path)
    doc = read_document(path)
    by_text = {b.text: b for b in doc.blocks}
    assert by_text["We describe a detector for the fictional Lakeside clinic."].role == "abstract"
    assert by_text["Nodules are common in screening."].role == "introduction"
    system = by_text["The system segments the lungs first."]
    assert system.role == "methods" and "ABSTRACT" not in system.section
    annotation = by_text["Two readers outlined every nodule."]
    assert annotation.section[-2:] == ("3.0 PROPOSED SYSTEM", "4.3 Reference annotation")
    assert annotation.role == "methods"  # the last word of its title yields to the section it stands in
