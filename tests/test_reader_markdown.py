"""The Markdown reader: front matter, lines per sentence, tables, links with their addresses, no code."""

from __future__ import annotations

from pathlib import Path

from checker.reading import read_document

PAGE = """\
---
title: "Lakeside Segmentation Benchmark"
layout: page
---
<!-- source: pages/overview.md -->
# Overview

The fictional Lakeside Imaging Institute hosts this benchmark.
Three radiologists annotated every scan,
and a fourth one settled disagreements.

## Data
Code is available at [our repository](https://example.org/lakeside/code), see also <https://example.org/data>.
Logos: ![Lakeside logo](logo.png) and <b>bold</b> words<br>here.

| Split | Cases | Sites |
|-------|------:|-------|
| train | 100   | 2     |
| test  | 20    | 1 \\| 2 |

```python
print("this is code, not prose")
```

    indented code is not prose either

> Quoted policy: no external data
> may be used.

- first item
  continues on a second line
- second item
  1. nested item

Ranking
-------

Participants are ranked by mean Dice.
<!-- a comment
spanning lines -->
After the comment.
"""


def read(tmp_path: Path, text: str, name: str = "page.md"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return read_document(path)


def find(doc, needle):
    for b in doc.blocks:
        if needle in b.text:
            return b
    raise AssertionError(f"{needle!r} not in {[b.text for b in doc.blocks]}")


def test_headings_from_front_matter_atx_and_setext(tmp_path):
    doc = read(tmp_path, PAGE)
    headings = [(b.text, b.level, b.location.line) for b in doc.blocks if b.kind == "heading"]
    assert headings == [
        ("Lakeside Segmentation Benchmark", 1, 2),
        ("Overview", 1, 6),
        ("Data", 2, 12),
        ("Ranking", 2, 35),
    ]
    assert not any("layout" in b.text or "source:" in b.text for b in doc.blocks)


def test_each_line_of_a_paragraph_keeps_its_source_line(tmp_path):
    doc = read(tmp_path, PAGE)
    para = find(doc, "hosts this benchmark")
    assert para.kind == "paragraph" and para.location.line == 8
    assert para.location_at(para.text.index("Three radiologists")).line == 9
    assert para.location_at(para.text.index("a fourth one")).line == 10
    assert para.section == ("Overview",)  # the front-matter title stands beside the page's own top heading


def test_links_keep_their_address_and_html_is_reduced_to_text(tmp_path):
    doc = read(tmp_path, PAGE)
    para = find(doc, "Code is available")
    assert para.text.startswith(
        "Code is available at our repository (https://example.org/lakeside/code), see also https://example.org/data."
    )
    assert para.text.endswith("Logos: Lakeside logo and bold words here.")
    assert para.location_at(para.text.index("Logos")).line == 14


def test_table_rows_header_included(tmp_path):
    doc = read(tmp_path, PAGE)
    rows = [(b.text, b.location.table, b.location.row, b.location.line) for b in doc.blocks if b.kind == "table-row"]
    assert rows == [
        ("Split | Cases | Sites", 1, 1, 16),
        ("train | 100 | 2", 1, 2, 18),
        ("test | 20 | 1 | 2", 1, 3, 19),
    ]


def test_code_is_dropped_quotes_and_lists_kept(tmp_path):
    doc = read(tmp_path, PAGE)
    assert not any("code, not prose" in b.text or "indented code" in b.text for b in doc.blocks)
    quote = find(doc, "Quoted policy")
    assert quote.kind == "paragraph" and quote.text == "Quoted policy: no external data may be used."
    assert quote.location_at(quote.text.index("may be used")).line == 28
    items = [(b.text, b.location.line) for b in doc.blocks if b.kind == "list-item"]
    assert items == [("first item continues on a second line", 30), ("second item", 32), ("nested item", 33)]
    first = doc.blocks[[b.text for b in doc.blocks].index("first item continues on a second line")]
    assert first.location_at(first.text.index("continues")).line == 31


def test_comments_are_dropped_and_lines_after_them_stay_right(tmp_path):
    doc = read(tmp_path, PAGE)
    assert not any("spanning lines" in b.text or "source:" in b.text for b in doc.blocks)
    after = find(doc, "After the comment")
    assert after.location.line == 41 and after.text == "After the comment."
    assert find(doc, "ranked by mean Dice").role in ("evaluation", "body")


def test_raw_html_blocks_are_read_as_html_with_their_lines(tmp_path):
    text = """\
# Results

<table>
  <tr><th>Team</th><th>Dice</th></tr>
  <tr><td>Heron</td><td>0.91</td></tr>
</table>

| a | b |
|---|---|
| 1 | 2 |

<p align="center">Centred
statement.</p>
"""
    doc = read(tmp_path, text)
    rows = [(b.text, b.location.table, b.location.row, b.location.line) for b in doc.blocks if b.kind == "table-row"]
    assert rows == [("Team | Dice", 1, 1, 4), ("Heron | 0.91", 1, 2, 5), ("a | b", 2, 1, 8), ("1 | 2", 2, 2, 10)]
    centred = find(doc, "Centred")
    assert centred.location.line == 12 and centred.location_at(centred.text.index("statement")).line == 13


def test_unclosed_front_matter_is_a_thematic_break_not_hidden_text(tmp_path):
    doc = read(tmp_path, "---\nThe Lakeside protocol has two readers.\n")
    assert find(doc, "two readers").location.line == 2


def test_utf8_bom_and_toml_front_matter(tmp_path):
    path = tmp_path / "notes.md"
    path.write_bytes(b"\xef\xbb\xbf+++\ntitle = 'Lakeside notes'\n+++\nBody text here.\n")
    doc = read_document(path)
    assert [(b.kind, b.text, b.location.line) for b in doc.blocks] == [
        ("heading", "Lakeside notes", 2),
        ("paragraph", "Body text here.", 4),
    ]
