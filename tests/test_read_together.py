"""Several files read as one document (a website's pages, a paper and its supplement), and the main files of a
LaTeX project that reads a section file."""

from __future__ import annotations

from pathlib import Path

import pytest

from checker.core.errors import InputError
from checker.reading import files_in_order, read_document, read_together
from checker.reading.latex import main_files_for


def _site(folder: Path) -> list[Path]:
    pages = {
        "page1.md": "# Lakeside challenge\n\nThe fictional Lakeside challenge segments kidney stones.\n",
        "page2.md": "# Data\n\nForty scans came from two fictional hospitals.\n",
        "page10.html": "<html><body><h1>Ranking</h1><p>Teams are ranked by mean Dice.</p></body></html>",
    }
    for name, text in pages.items():
        (folder / name).write_text(text, encoding="utf-8")
    return files_in_order(folder)


def test_pages_are_read_in_the_order_their_names_give(tmp_path):
    assert [p.name for p in _site(tmp_path)] == ["page1.md", "page2.md", "page10.html"]


def test_several_files_are_one_document_and_every_place_names_its_file(tmp_path):
    files = _site(tmp_path)
    doc = read_together(files)
    alone = [read_document(p) for p in files]
    assert doc.words == sum(d.words for d in alone)
    assert [b.text for b in doc.blocks] == [b.text for d in alone for b in d.blocks]
    by_text = {b.text: b for b in doc.blocks}
    ranked = by_text["Teams are ranked by mean Dice."]
    assert ranked.location.file == str(files[2]) and ranked.section == ("Ranking",)
    assert ranked.location_at(0).describe(main=doc.path).startswith("page10.html")
    # each file's sections start afresh: the first page's heading does not hold the second page
    assert by_text["Forty scans came from two fictional hospitals."].section == ("Data",)
    assert by_text["Forty scans came from two fictional hospitals."].role == "data"
    assert doc.path == str(files[0]) and doc.format == "markdown"
    assert read_together(files).sha256 == doc.sha256 != read_together(files[:2]).sha256


def test_a_bad_file_among_them_is_named(tmp_path):
    files = _site(tmp_path)
    (tmp_path / "empty.md").write_text("", encoding="utf-8")
    with pytest.raises(InputError) as err:
        read_together([*files, tmp_path / "empty.md"])
    assert "empty.md" in str(err.value)


def test_a_section_file_belongs_to_the_main_file_that_inputs_it(tmp_path):
    (tmp_path / "sections").mkdir()
    (tmp_path / "paper.tex").write_text(
        "\\documentclass{article}\n\\begin{document}\n\\input{sections/intro}\n% \\input{sections/old}\n"
        "\\end{document}\n", encoding="utf-8")
    (tmp_path / "sections" / "intro.tex").write_text("\\section{Introduction}\n\\input{sections/data}\n",
                                                     encoding="utf-8")
    (tmp_path / "sections" / "data.tex").write_text("\\section{Data}\nForty scans.\n", encoding="utf-8")
    (tmp_path / "sections" / "old.tex").write_text("\\section{Old}\n", encoding="utf-8")
    (tmp_path / "notes.tex").write_text("\\documentclass{article}\n\\begin{document}Notes\\end{document}\n",
                                        encoding="utf-8")
    main = (tmp_path / "paper.tex").resolve()
    assert main_files_for(tmp_path / "sections" / "data.tex") == [main]  # through intro.tex
    assert main_files_for(tmp_path / "sections" / "intro.tex") == [main]
    assert main_files_for(tmp_path / "sections" / "old.tex") == []  # only a commented-out \input names it
    assert main_files_for(tmp_path / "paper.tex") == []  # a main file is its own document
