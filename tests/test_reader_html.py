"""The HTML reader: the page's own text without chrome or hidden parts, with exact source lines."""

from __future__ import annotations

import codecs
from pathlib import Path

from checker.reading import read_document

PAGE = """\
<!DOCTYPE html>
<html><head><meta charset="utf-8"><title>Lakeside benchmark</title>
<style>p { color: red }</style>
<script>var note = "<p>not text</p>";
</script></head>
<body>
<nav><a href="/">Home</a> <a href="/data">Data</a></nav>
<header><div class="banner">Site banner of the fictional Lakeside Imaging Institute</div></header>
<main>
<article><header><h1>Lakeside Segmentation Benchmark</h1></header>
<p>Three radiologists annotated every scan.
Each had at least <em>five years</em> of experience, see
<a href="https://example.org/lakeside/protocol">the protocol</a>.</p>
<div>Loose text in a division
<p>An inner paragraph.</p> and text after it.</div>
<h2 id="data">Data</h2>
<ul><li>Train: 100 cases<ul><li>from two sites</li></ul></li><li><p>Test: 20 cases</p></li></ul>
<table><caption>Table 1. Cases per split</caption>
<thead><tr><th>Split</th><th>Cases</th></tr></thead>
<tbody><tr><td>train</td><td colspan="2">100</td></tr>
<tr><td rowspan="2">test</td><td>20</td></tr></tbody></table>
<p hidden>Hidden paragraph.</p><p style="color: red; display:none">Undisplayed.</p>
<span aria-hidden="true">Icon text</span><noscript>Enable scripts.</noscript>
<aside>Related links</aside><template><p>Template text</p></template>
<!-- a comment
over two lines -->
<figure><img src="f.png" alt="plot"><figcaption>Figure 2: Dice per case.</figcaption></figure>
<dl><dt>Dice</dt><dd>Overlap of two masks.</dd></dl>
<blockquote>No external data may be used.</blockquote>
<h3>Ranking &amp; statistics</h3>
<p>Ranks come from<br>mean Dice.</p>
</article></main>
<footer>Copyright notice</footer>
</body></html>
"""


def read(tmp_path: Path, content: str | bytes, name: str = "page.html"):
    path = tmp_path / name
    if isinstance(content, str):
        path.write_text(content, encoding="utf-8")
    else:
        path.write_bytes(content)
    return read_document(path)


def find(doc, needle):
    for b in doc.blocks:
        if needle in b.text:
            return b
    raise AssertionError(f"{needle!r} not in {[b.text for b in doc.blocks]}")


def test_chrome_scripts_and_hidden_parts_are_dropped(tmp_path):
    doc = read(tmp_path, PAGE)
    text = " ".join(b.text for b in doc.blocks)
    for gone in ("not text", "color", "Home", "Site banner", "Hidden paragraph", "Undisplayed", "Icon text",
                 "Enable scripts", "Related links", "Template text", "comment", "Copyright", "Lakeside benchmark"):
        assert gone not in text, gone


def test_blocks_kinds_and_order(tmp_path):
    doc = read(tmp_path, PAGE)
    assert [(b.kind, b.text) for b in doc.blocks] == [
        ("heading", "Lakeside Segmentation Benchmark"),
        ("paragraph", "Three radiologists annotated every scan. Each had at least five years of experience, see "
                      "the protocol (https://example.org/lakeside/protocol)."),
        ("paragraph", "Loose text in a division"),
        ("paragraph", "An inner paragraph."),
        ("paragraph", "and text after it."),
        ("heading", "Data"),
        ("list-item", "Train: 100 cases"),
        ("list-item", "from two sites"),
        ("list-item", "Test: 20 cases"),
        ("caption", "Table 1. Cases per split"),
        ("table-row", "Split | Cases"),
        ("table-row", "train | 100"),
        ("table-row", "test | 20"),
        ("caption", "Figure 2: Dice per case."),
        ("paragraph", "Dice"),
        ("paragraph", "Overlap of two masks."),
        ("paragraph", "No external data may be used."),
        ("heading", "Ranking & statistics"),
        ("paragraph", "Ranks come from mean Dice."),
    ]
    levels = [(b.text, b.level) for b in doc.blocks if b.kind == "heading"]
    assert levels == [("Lakeside Segmentation Benchmark", 1), ("Data", 2), ("Ranking & statistics", 3)]


def test_source_lines_are_exact(tmp_path):
    doc = read(tmp_path, PAGE)
    para = find(doc, "Three radiologists")
    assert para.location.line == 11
    assert para.location_at(para.text.index("Each had")).line == 12
    assert para.location_at(para.text.index("the protocol")).line == 13
    assert find(doc, "An inner paragraph").location.line == 15
    rows = [(b.text, b.location.table, b.location.row, b.location.line) for b in doc.blocks if b.kind == "table-row"]
    assert rows == [("Split | Cases", 1, 1, 19), ("train | 100", 1, 2, 20), ("test | 20", 1, 3, 21)]
    assert find(doc, "Dice per case").location.line == 27  # after a comment spanning two lines
    ranks = find(doc, "Ranks come from")
    assert ranks.location.line == 31 and ranks.location_at(ranks.text.index("mean")).line == 31


def test_lines_past_65535_are_still_counted(tmp_path):
    # libxml2 stops counting at 65535; the reader goes on counting the text's own newlines
    page = "<html><body>\n<p>First.</p>\n" + "<i></i>\n" * 70_000 + "<p>The last sentence\nwraps.</p>\n</body></html>"
    doc = read(tmp_path, page)
    last = doc.blocks[-1]
    assert last.text == "The last sentence wraps."
    assert last.location.line == 70_003
    assert last.location_at(last.text.index("wraps")).line == 70_004


def test_meta_charset_decides_the_encoding(tmp_path):
    page = '<html><head><meta charset="iso-8859-1"></head><body><p>Caf\u00e9 r\u00e9sum\u00e9</p></body></html>'
    doc = read(tmp_path, page.encode("cp1252"))
    assert doc.blocks[0].text == "Caf\u00e9 r\u00e9sum\u00e9" and doc.warnings == ()


def test_bom_wins_and_undeclared_non_utf8_falls_back_with_a_warning(tmp_path):
    page = "<p>Na\u00efve \u2013 readers</p>"
    doc = read(tmp_path, codecs.BOM_UTF16_LE + page.encode("utf-16-le"), "bom.html")
    assert doc.blocks[0].text == "Na\u00efve \u2013 readers" and doc.warnings == ()
    doc = read(tmp_path, page.encode("cp1252"), "plain.html")
    assert doc.blocks[0].text == "Na\u00efve \u2013 readers"
    assert any("not UTF-8; read as Latin-1" in w for w in doc.warnings)


def test_layout_tables_are_read_as_flowing_text(tmp_path):
    page = """<table><tr><td><h2>Methods</h2><p>We trained one model.</p></td>
<td><p>Side note.</p></td></tr></table><table><tr><td>a</td><td>b</td></tr></table>"""
    doc = read(tmp_path, page)
    assert [(b.kind, b.text, b.location.table) for b in doc.blocks] == [
        ("heading", "Methods", None),
        ("paragraph", "We trained one model.", None),
        ("paragraph", "Side note.", None),
        ("table-row", "a | b", 1),
    ]


def test_xhtml_with_xml_declaration(tmp_path):
    page = ('<?xml version="1.0" encoding="utf-8"?>\n'
            '<html xmlns="http://www.w3.org/1999/xhtml"><body>\n<p>Two readers.</p></body></html>')
    doc = read(tmp_path, page, "page.xhtml")
    assert [(b.text, b.location.line) for b in doc.blocks] == [("Two readers.", 3)]


def test_superscripts_do_not_glue_into_numbers(tmp_path):
    doc = read(tmp_path, "<p>Volumes in mm<sup>3</sup> were read by two experts<sup>12</sup>; H<sub>2</sub>O.</p>")
    assert doc.blocks[0].text == "Volumes in mm³ were read by two experts¹²; H₂O."


def _site(pages: int) -> str:
    """A saved site: several whole pages, one after another, each with its own navigation and footer."""
    out = []
    for k in range(1, pages + 1):
        out.append(f"""<!-- saved page {k} -->
<!DOCTYPE html>
<html lang="en"><head><title>Page {k}</title><script>var page = {k};</script></head>
<body>
<nav><a href="/">Home</a> <a href="/rules">Rules</a> <a href="/data">Data</a></nav>
<h1>Fictional Lakeside challenge, page {k}</h1>
<p>Paragraph {k} says that the organisers annotated {10 * k} cases by hand.</p>
<footer>Copyright the fictional Lakeside organisers</footer>
</body>
</html>
""")
    return "\n".join(out)


def test_a_saved_site_with_several_html_documents_is_read_whole(tmp_path):
    import lxml.html

    site = _site(4)
    path = tmp_path / "site.html"
    path.write_text(site, encoding="utf-8")
    doc = read_document(path)
    text = doc.text
    for k in range(1, 5):
        assert f"Paragraph {k} says that the organisers annotated {10 * k} cases by hand." in text
    # the source line of each page's paragraph is its line in the file
    lines = site.split("\n")
    for b in doc.blocks:
        assert b.text.split()[0] in lines[b.location.line - 1], (b.text, b.location.line)
    # each page's heading starts a section of its own
    assert [b.text for b in doc.blocks if b.kind == "heading"] == [
        f"Fictional Lakeside challenge, page {k}" for k in range(1, 5)]
    # lxml (libxml2) alone reads only the first document of the file: the failure this guards against
    assert "Paragraph 2" not in lxml.html.document_fromstring(site).text_content()
    # navigation and footers are still left out, and the user is told how much of them
    assert "Home" not in text and "Copyright" not in text
    assert any("navigation (12 words)" in w and "page headers and footers (20 words)" in w for w in doc.warnings), \
        doc.warnings


def test_a_page_with_nothing_left_out_has_no_note(tmp_path):
    path = tmp_path / "plain.html"
    path.write_text("<html><body><h1>Data</h1><p>Forty scans.</p><script>x = 1</script></body></html>",
                    encoding="utf-8")
    assert read_document(path).warnings == ()
