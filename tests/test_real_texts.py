"""External check on real text: the dataset descriptions that scikit-learn and nilearn ship as reST files.

Source: scikit-learn's ``sklearn/datasets/descr/*.rst`` and nilearn's ``nilearn/datasets/description/*.rst``,
found through the installed packages (never imported: find_spec of the top-level package only locates it).
Each file is read by the text reader; its blocks must sit on the source lines that hold them, and the same blocks
rendered as DOCX, Markdown and HTML must come back out of those readers with the same kinds and texts.
"""

from __future__ import annotations

import html
import importlib.util
import re
from itertools import groupby
from pathlib import Path

import docx
import pytest

from checker.reading import read_document


def _shipped(package: str, *parts: str) -> list[Path]:
    spec = importlib.util.find_spec(package)
    if spec is None or not spec.submodule_search_locations:
        return []
    folder = Path(list(spec.submodule_search_locations)[0]).joinpath(*parts)
    return sorted(folder.glob("*.rst"))


SKLEARN = _shipped("sklearn", "datasets", "descr")
NILEARN = _shipped("nilearn", "datasets", "description")
FILES = [pytest.param(p, id=f"sklearn/{p.name}") for p in SKLEARN] + [
    pytest.param(p, id=f"nilearn/{p.name}") for p in NILEARN
]


def _norm(text: str) -> str:
    return " ".join(text.split())


def test_the_descriptions_are_installed():
    if not SKLEARN:
        pytest.skip("scikit-learn is not installed (it is in the test extras)")
    if not NILEARN:
        pytest.skip("nilearn is not installed; `pip install nilearn` adds its 40-odd descriptions to this check")
    assert len(SKLEARN) >= 10 and len(NILEARN) >= 20


@pytest.fixture(scope="module")
def blocks_by_file():
    return {}


def _read_text(path: Path, cache: dict):
    if path not in cache:
        cache[path] = read_document(path, fmt="text")
    return cache[path]


@pytest.mark.parametrize("path", FILES)
def test_every_block_stands_on_its_source_line(path, blocks_by_file):
    doc = _read_text(path, blocks_by_file)
    lines = path.read_text(encoding="utf-8").split("\n")
    assert doc.blocks and doc.blocks[0].kind == "heading" and doc.blocks[0].level == 1
    # the title is the line above the first underline (or between an overline and underline)
    title_line = doc.blocks[0].location.line
    assert re.fullmatch(r"([=\-~^*#])\1{2,}\s*", lines[title_line])
    for block in doc.blocks:
        starts = [(m.offset, m.line) for m in block.marks] or [(0, block.location.line)]
        for offset, line in starts:
            word = re.sub(r"^\W+|\W+$", "", block.text[offset:].split()[0])
            assert word in lines[line - 1], (block.text, line, lines[line - 1])
        # reST markup does not leak into the text
        assert not re.search(r":[a-z]+:`|``|^\.\. |^\s*[=\-~]{4,}\s*$", block.text), block.text


def _docx(blocks, path: Path) -> None:
    d = docx.Document()
    for table, rows in groupby(blocks, key=lambda b: b.location.table if b.kind == "table-row" else None):
        rows = list(rows)
        if table is None:
            for b in rows:
                if b.kind == "heading":
                    d.add_heading(b.text, level=min(b.level or 1, 9))
                elif b.kind == "list-item":
                    d.add_paragraph(b.text, style="List Bullet")
                elif b.kind == "caption":
                    d.add_paragraph(b.text, style="Caption")
                else:
                    d.add_paragraph(b.text)
            continue
        cells = [r.text.split(" | ") for r in rows]
        t = d.add_table(rows=len(cells), cols=max(map(len, cells)))
        for i, row in enumerate(cells):
            for j, cell in enumerate(row):
                t.cell(i, j).text = cell
    d.save(path)


_MD_PUNCT = re.compile(r"([!-/:-@\[-`{-~])")


def _md_escape(text: str) -> str:
    return _MD_PUNCT.sub(r"\\\1", text)


def _markdown(blocks, path: Path) -> None:
    out: list[str] = []
    for table, rows in groupby(blocks, key=lambda b: b.location.table if b.kind == "table-row" else None):
        rows = list(rows)
        if table is None:
            for b in rows:
                if b.kind == "heading":
                    out.append("#" * min(b.level or 1, 6) + " " + _md_escape(b.text))
                elif b.kind == "list-item":
                    out.append("- " + _md_escape(b.text))
                else:
                    out.append(_md_escape(b.text))
                out.append("")
            continue
        cells = [r.text.split(" | ") for r in rows]
        width = max(map(len, cells))
        for i, row in enumerate(cells):
            row = row + [""] * (width - len(row))
            out.append("| " + " | ".join(_md_escape(c) for c in row) + " |")
            if i == 0:
                out.append("|" + "---|" * width)
        out.append("")
    path.write_text("\n".join(out), encoding="utf-8")


def _html(blocks, path: Path) -> None:
    out = ["<!DOCTYPE html><html><head><meta charset='utf-8'></head><body><main>"]
    for table, rows in groupby(blocks, key=lambda b: b.location.table if b.kind == "table-row" else None):
        rows = list(rows)
        if table is None:
            for b in rows:
                t = html.escape(b.text)
                if b.kind == "heading":
                    n = min(b.level or 1, 6)
                    out.append(f"<h{n}>{t}</h{n}>")
                elif b.kind == "list-item":
                    out.append(f"<ul><li>{t}</li></ul>")
                elif b.kind == "caption":
                    out.append(f"<figure><figcaption>{t}</figcaption></figure>")
                else:
                    out.append(f"<p>{t}</p>")
            continue
        out.append("<table>")
        for r in rows:
            out.append("<tr>" + "".join(f"<td>{html.escape(c)}</td>" for c in r.text.split(" | ")) + "</tr>")
        out.append("</table>")
    out.append("</main></body></html>")
    path.write_text("\n".join(out), encoding="utf-8")


def _shape(blocks, caption_as: str = "caption"):
    return [
        (caption_as if b.kind == "caption" else b.kind, b.level if b.kind == "heading" else None, _norm(b.text))
        for b in blocks
    ]


@pytest.mark.parametrize("path", FILES)
def test_the_same_text_comes_out_of_every_format(path, tmp_path, blocks_by_file):
    doc = _read_text(path, blocks_by_file)
    expected = _shape(doc.blocks)
    _docx(doc.blocks, tmp_path / "d.docx")
    _markdown(doc.blocks, tmp_path / "d.md")
    _html(doc.blocks, tmp_path / "d.html")
    assert _shape(read_document(tmp_path / "d.docx").blocks) == expected
    assert _shape(read_document(tmp_path / "d.html").blocks) == expected
    # Markdown has no captions: they come back as paragraphs
    assert _shape(read_document(tmp_path / "d.md").blocks, "paragraph") == _shape(doc.blocks, "paragraph")


def _render_module():
    import importlib.util as iu

    from checker import __file__ as pkg

    spec = iu.spec_from_file_location("studygap_render", Path(pkg).resolve().parent.parent / "fixtures" / "render.py")
    mod = iu.module_from_spec(spec)
    import sys

    sys.modules[spec.name] = mod  # its dataclasses look themselves up there
    spec.loader.exec_module(mod)
    return mod


PDF_FILES = FILES[::4]  # every fourth description: PDF rendering is the slow part


@pytest.mark.parametrize("path", PDF_FILES)
def test_the_same_sentences_come_out_of_a_pdf_rendering(path, tmp_path, blocks_by_file):
    # The description, rendered to Markdown and from there to PDF with the fixture renderer (reportlab), gives
    # back the same sentences through the PDF reader (line breaks, page breaks, headers and page numbers between).
    from checker.matching.nlp import segment

    render = _render_module()
    doc = _read_text(path, blocks_by_file)
    md = tmp_path / "d.md"  # the renderer's plain Markdown dialect: no backslash escapes
    lines = []
    for b in doc.blocks:
        if b.kind == "table-row":
            continue  # tables are compared by the DOCX/HTML/Markdown check above
        prefix = "#" * min(b.level or 1, 3) + " " if b.kind == "heading" else "- " if b.kind == "list-item" else ""
        lines += [prefix + b.text.replace("*", "").replace("_", " "), ""]
    md.write_text("\n".join(lines), encoding="utf-8")
    pdf = tmp_path / "d.pdf"
    render.render(md, pdf=pdf)
    quotes = str.maketrans("“”‘’", "\"\"''")  # typographic quotes may come back straight
    want = [_norm(s.text).translate(quotes) for s in segment(read_document(md)).sentences
            if len(s.text.split()) >= 4 and s.kind != "heading"]
    got = {_norm(s.text).translate(quotes) for s in segment(read_document(pdf)).sentences}
    got_text = _norm(" ".join(sorted(got)))
    found = sum(1 for s in want if s in got or s in got_text)
    assert want and found / len(want) >= 0.95, [s for s in want if s not in got and s not in got_text][:5]
