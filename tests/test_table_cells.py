"""Every reader gives a table row's cells apart (Block.cells), the same cells whatever the format; the row's text
joins them with " | " for quoting."""

from __future__ import annotations

import pytest

from checker.reading import read_document

CELLS = [("Site", "Patients", "Images"), ("North", "120", "300"), ("Total", "190", "510")]

SOURCES = {
    "t.md": "| Site | Patients | Images |\n|---|---|---|\n| North | 120 | 300 |\n| Total | 190 | 510 |\n",
    "t.html": ("<html><body><table><tr><th>Site</th><th>Patients</th><th>Images</th></tr>"
               "<tr><td>North</td><td>120</td><td>300</td></tr>"
               "<tr><td>Total</td><td>190</td><td>510</td></tr></table></body></html>"),
    "t.tex": ("\\documentclass{article}\\begin{document}\n\\begin{tabular}{lrr}\n\\hline\n"
              "Site & Patients & Images \\\\\n\\hline\nNorth & 120 & 300 \\\\\nTotal & 190 & 510 \\\\\n"
              "\\hline\n\\end{tabular}\n\\end{document}\n"),
    "t.rst": ("+-------+----------+--------+\n| Site  | Patients | Images |\n+=======+==========+========+\n"
              "| North | 120      | 300    |\n+-------+----------+--------+\n"
              "| Total | 190      | 510    |\n+-------+----------+--------+\n"),
}


@pytest.mark.parametrize("name", sorted(SOURCES))
def test_each_reader_keeps_a_table_rows_cells(name, tmp_path):
    path = tmp_path / name
    path.write_text(SOURCES[name], encoding="utf-8")
    rows = [b for b in read_document(path).blocks if b.kind == "table-row"]
    assert [b.cells for b in rows] == CELLS
    assert [b.text for b in rows] == [" | ".join(c) for c in CELLS]


def test_the_docx_reader_keeps_a_table_rows_cells(tmp_path):
    docx = pytest.importorskip("docx", reason="python-docx writes the test document")
    d = docx.Document()
    d.add_paragraph("The patients per site.")
    table = d.add_table(rows=len(CELLS), cols=3)
    for r, row in enumerate(CELLS):
        for c, text in enumerate(row):
            table.cell(r, c).text = text
    path = tmp_path / "t.docx"
    d.save(str(path))
    rows = [b for b in read_document(path).blocks if b.kind == "table-row"]
    assert [b.cells for b in rows] == CELLS
