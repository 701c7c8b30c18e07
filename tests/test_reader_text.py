"""The plain-text and reST reader: encodings, paragraphs, guessed headings and exact lines."""

from __future__ import annotations

import codecs
from pathlib import Path

import pytest

from checker.core.errors import InputError
from checker.reading import read_document
from checker.reading.text import LineText, decode_bytes, numbered_heading_level


def write(tmp_path: Path, name: str, content: str | bytes) -> Path:
    path = tmp_path / name
    if isinstance(content, str):
        path.write_text(content, encoding="utf-8")
    else:
        path.write_bytes(content)
    return path


def find(doc, needle: str):
    for i, block in enumerate(doc.blocks):
        if needle in block.text:
            return i, block
    raise AssertionError(f"{needle!r} not found in {[b.text for b in doc.blocks]}")


REPORT = """\
THE LAKESIDE IMAGING INSTITUTE

1 Introduction

The fictional Lakeside Imaging Institute collected
scans from three sites. Each scan was read twice.

2.1 Data
Two radiologists annotated every
scan independently. Disagreements were settled
by a third reader.

- first bullet
  wraps here
- second bullet

3. Results
We report Dice and the Hausdorff distance for every case in the test set of the study here.
"""


def test_paragraphs_and_headings_with_levels(tmp_path):
    doc = read_document(write(tmp_path, "report.txt", REPORT))
    headings = [(b.text, b.level) for b in doc.blocks if b.kind == "heading"]
    assert headings == [
        ("THE LAKESIDE IMAGING INSTITUTE", 1),
        ("1 Introduction", 1),
        ("2.1 Data", 2),
        ("3. Results", 1),
    ]
    _, para = find(doc, "collected")
    assert para.kind == "paragraph"
    assert para.text == ("The fictional Lakeside Imaging Institute collected scans from three sites. "
                         "Each scan was read twice.")
    assert para.section == ("1 Introduction",)
    items = [b.text for b in doc.blocks if b.kind == "list-item"]
    assert items == ["first bullet wraps here", "second bullet"]


def test_every_sentence_maps_to_its_own_line(tmp_path):
    doc = read_document(write(tmp_path, "report.txt", REPORT))
    _, para = find(doc, "Two radiologists")
    assert para.location.line == 9
    assert para.location_at(para.text.index("Two radiologists")).line == 9
    assert para.location_at(para.text.index("Disagreements")).line == 10
    assert para.location_at(para.text.index("by a third")).line == 11
    _, heading = find(doc, "2.1 Data")
    assert heading.location.line == 8
    _, item = find(doc, "first bullet")
    assert item.location.line == 13 and item.location_at(item.text.index("wraps")).line == 14


def test_rst_underlined_headings_take_levels_in_order_of_first_use(tmp_path):
    text = """\
.. _lakeside_dataset:

Lakeside scans
==============

Notes
-----
Acquired at the fictional Lakeside Imaging Institute, see :func:`lakeside.fetch` and ``load()``.

Access
------
**Open** to all.

Sub part
~~~~~~~~
Deeper text.

.. rubric:: References

- A. Author. A fictional paper.
"""
    doc = read_document(write(tmp_path, "lakeside.rst", text))
    headings = [(b.text, b.level) for b in doc.blocks if b.kind == "heading"]
    assert headings == [("Lakeside scans", 1), ("Notes", 2), ("Access", 2), ("Sub part", 3), ("References", 4)]
    _, notes = find(doc, "Acquired")
    assert notes.text == "Acquired at the fictional Lakeside Imaging Institute, see lakeside.fetch and load()."
    assert notes.location.line == 8
    assert all(".. _" not in b.text and "===" not in b.text for b in doc.blocks)
    _, ref = find(doc, "A fictional paper")
    assert ref.kind == "list-item" and ref.role == "references"


def test_rst_simple_table_rows_and_field_lists(tmp_path):
    text = """\
Counts
------

:Number of cases: 120
:Sites: 3

=====  =====  ======
Split  Cases  Sites
=====  =====  ======
train  100    2
test   20     1
=====  =====  ======

After the table.
"""
    doc = read_document(write(tmp_path, "counts.rst", text))
    fields = [b.text for b in doc.blocks if b.kind == "list-item"]
    assert fields == ["Number of cases: 120", "Sites: 3"]
    rows = [(b.text, b.location.table, b.location.row, b.location.line) for b in doc.blocks if b.kind == "table-row"]
    assert rows == [("Split | Cases | Sites", 1, 1, 8), ("train | 100 | 2", 1, 2, 10), ("test | 20 | 1", 1, 3, 11)]
    assert find(doc, "After the table")[1].kind == "paragraph"


def test_rst_code_and_comments_are_not_text(tmp_path):
    text = """\
Usage
=====

Load it like this::

    data = load()

.. code-block:: python

    print("not prose")

.. a comment that
   spans two lines

Plain closing sentence.
"""
    doc = read_document(write(tmp_path, "usage.rst", text))
    texts = [b.text for b in doc.blocks]
    assert texts == ["Usage", "Load it like this:", "Plain closing sentence."]


@pytest.mark.parametrize(
    "encoded, warning",
    [
        (codecs.BOM_UTF8 + "Caf\u00e9 protocol \u2013 two readers.".encode("utf-8"), None),
        (codecs.BOM_UTF16_LE + "Caf\u00e9 protocol \u2013 two readers.".encode("utf-16-le"), None),
        (codecs.BOM_UTF16_BE + "Caf\u00e9 protocol \u2013 two readers.".encode("utf-16-be"), None),
        (codecs.BOM_UTF32_LE + "Caf\u00e9 protocol \u2013 two readers.".encode("utf-32-le"), None),
        ("Caf\u00e9 protocol \u2013 two readers.".encode("cp1252"), "not UTF-8; read as Latin-1"),
        ("Caf\u00e9 protocol \u2013 two readers.".encode("utf-16-le"), "looks like UTF-16-LE"),
    ],
)
def test_encodings(tmp_path, encoded, warning):
    doc = read_document(write(tmp_path, "enc.txt", encoded))
    assert doc.blocks[0].text == "Caf\u00e9 protocol \u2013 two readers."
    if warning is None:
        assert doc.warnings == ()
    else:
        assert any(warning in w for w in doc.warnings)


def test_nul_bytes_are_removed_with_a_warning(tmp_path):
    doc = read_document(write(tmp_path, "nul.txt", b"Three\x00 readers annotated\x00\x00 each scan."))
    assert doc.blocks[0].text == "Three readers annotated each scan."
    assert any("removed 3 NUL characters" in w for w in doc.warnings)


def test_line_endings_cr_and_crlf_count_as_editors_do(tmp_path):
    doc = read_document(write(tmp_path, "crlf.txt", b"First line.\r\n\r\nSecond para\rwraps.\x0cStill line three."))
    _, para = find(doc, "Second para")
    assert para.location.line == 3
    assert para.location_at(para.text.index("wraps")).line == 4


def test_a_single_enormous_line_is_one_block(tmp_path):
    doc = read_document(write(tmp_path, "huge.txt", "scan " * 1_000_000))
    assert len(doc.blocks) == 1 and doc.blocks[0].text.count("scan") == 1_000_000
    assert doc.blocks[0].marks == ()


def test_binary_input_is_refused_with_its_kind(tmp_path):
    with pytest.raises(InputError, match="it looks like a PDF"):
        read_document(write(tmp_path, "paper.txt", b"%PDF-1.7\n..."))


def test_hyphen_at_line_end_joins_the_word_and_keeps_the_hyphen():
    b = LineText()
    b.add("inter-\nrater agreement of the well-\nKnown scale", 5)
    text, marks = b.build()
    assert text == "inter-rater agreement of the well- Known scale"
    assert [m.line for m in marks] == [5, 6, 7]


def test_numbered_heading_levels():
    assert numbered_heading_level("2.1 Data") == 2
    assert numbered_heading_level("3 Results") == 1
    assert numbered_heading_level("A.2 Extra analyses") == 2
    assert numbered_heading_level("IV. DISCUSSION") == 1
    assert numbered_heading_level("3 patients were excluded.") is None
    assert numbered_heading_level("12 of the 40 scans were read by a third reader in the fictional clinic") is None


def test_decode_prefers_declared_encoding():
    text, warnings = decode_bytes("na\u00efve".encode("cp1252"), declared="cp1252")
    assert text == "na\u00efve" and warnings == []
