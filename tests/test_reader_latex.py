"""The LaTeX reader: includes inside the document's folder only, headings, text from markup, exact lines."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from checker.reading import read_document

MAIN = r"""\documentclass{article}
\usepackage{amsmath}
\newcommand{\ncases}{300}
\title{The Lakeside Imaging Study}
\author{A. Fictional}
\begin{document}
\maketitle
\begin{abstract}
We evaluate a method on \ncases{} scans. % a comment that must go
It reaches 50\% agreement with $n=3$ readers.
\end{abstract}
\section{Introduction}\label{sec:intro}
Prior work~\cite{a,b} shows little.
Our second sentence is on line fourteen
and ends on line fifteen.

A paragraph with a note\footnote{Funded by the fictional Lakeside Fund.} in it.
\input{sections/methods}
\subsection*{Details}
\begin{itemize}
  \item First item
  continues here.
  \item[Rule] No external data.
\end{itemize}
\begin{table}[t]
\caption{Cases per split.}
\begin{tabular}{ll}
\toprule
Split & Cases \\
\midrule
Train & \SI{120}{\milli\metre} \\
Test & \multicolumn{2}{c}{30} \\
\bottomrule
\end{tabular}
\end{table}
The Dice score is
\begin{equation}
D = \frac{2|A\cap B|}{|A|+|B|}
\end{equation}
where $A$ is the mask. See \href{https://example.org/code}{our code} and \mymacro{kept text}.
\paragraph{Run-in.} Text after.
\bibliography{refs}
\end{document}
"""

METHODS = r"""\section{Methods}
Three readers annotated
each scan independently.
"""


@pytest.fixture
def paper(tmp_path: Path) -> Path:
    (tmp_path / "sections").mkdir()
    (tmp_path / "main.tex").write_text(MAIN, encoding="utf-8")
    (tmp_path / "sections" / "methods.tex").write_text(METHODS, encoding="utf-8")
    return tmp_path / "main.tex"


def find(doc, needle):
    for b in doc.blocks:
        if needle in b.text:
            return b
    raise AssertionError(f"{needle!r} not in {[b.text for b in doc.blocks]}")


def test_headings_and_levels(paper):
    doc = read_document(paper)
    headings = [(b.text, b.level) for b in doc.blocks if b.kind == "heading"]
    assert headings == [
        ("The Lakeside Imaging Study", 1),
        ("Abstract", 1),
        ("Introduction", 1),
        ("Methods", 1),
        ("Details", 2),
        ("Run-in.", 4),
        ("References", 1),
    ]
    assert find(doc, "Text after").kind == "paragraph"
    assert find(doc, "We evaluate").role == "abstract"


def test_text_from_markup(paper):
    doc = read_document(paper)
    abstract = find(doc, "We evaluate").text
    assert abstract == "We evaluate a method on 300 scans. It reaches 50% agreement with n=3 readers."
    assert find(doc, "Prior work").text.startswith("Prior work shows little. Our second sentence")
    dice = find(doc, "The Dice score")
    assert "D = 2|A∩B|/|A|+|B|" in dice.text
    assert "our code (https://example.org/code)" in dice.text and "kept text." in dice.text
    assert "Author" not in " ".join(b.text for b in doc.blocks) and "A. Fictional" not in doc.text


def test_lines_and_files_of_every_block(paper, tmp_path):
    doc = read_document(paper)
    intro = find(doc, "Prior work")
    assert intro.location.file == str(paper) and intro.location.line == 13
    assert intro.location_at(intro.text.index("Our second")).line == 14
    assert intro.location_at(intro.text.index("and ends")).line == 15
    methods = find(doc, "Three readers")
    assert methods.location.file == os.path.join(str(tmp_path), "sections", "methods.tex")
    assert methods.location.line == 2 and methods.location_at(methods.text.index("each scan")).line == 3
    assert methods.section == ("Methods",) and methods.role == "methods"
    assert find(doc, "The Lakeside Imaging Study").location.line == 4


def test_lists_tables_captions_and_footnotes(paper):
    doc = read_document(paper)
    items = [b.text for b in doc.blocks if b.kind == "list-item"]
    assert items == ["First item continues here.", "Rule: No external data."]
    assert find(doc, "Cases per split").kind == "caption"
    rows = [(b.text, b.location.table, b.location.row, b.location.line) for b in doc.blocks if b.kind == "table-row"]
    assert rows == [("Split | Cases", 1, 1, 29), ("Train | 120 mm", 1, 2, 31), ("Test | 30", 1, 3, 32)]
    note = find(doc, "Lakeside Fund")
    assert note.kind == "footnote" and note.location.line == 17
    assert find(doc, "A paragraph with a note").text == "A paragraph with a note in it."


def test_includes_outside_the_folder_are_refused(tmp_path):
    outside = tmp_path / "outside"
    outside.mkdir()
    (outside / "secret.tex").write_text("Secret text of another project.", encoding="utf-8")
    doc_dir = tmp_path / "paper"
    doc_dir.mkdir()
    (doc_dir / "link.tex").symlink_to(outside / "secret.tex")
    main = doc_dir / "main.tex"
    main.write_text(
        "Start.\n\\input{../outside/secret}\n\\input{/etc/passwd}\n\\include{link}\nEnd.\n", encoding="utf-8"
    )
    doc = read_document(main)
    assert "Secret" not in doc.text and "root:" not in doc.text
    assert [b.text for b in doc.blocks] == ["Start.", "End."]
    refused = [w for w in doc.warnings if "points outside the document's folder" in w]
    assert len(refused) == 3
    assert refused[0].startswith(f"{main}: line 2: \\input{{../outside/secret}}")


def test_include_cycles_and_missing_files_are_warnings(tmp_path):
    (tmp_path / "a.tex").write_text("Text of a.\n\\input{b}\n", encoding="utf-8")
    (tmp_path / "b.tex").write_text("Text of b.\n\\input{a.tex}\n\\input{missing}\n", encoding="utf-8")
    main = tmp_path / "main.tex"
    main.write_text("\\input{a}\n\\input{a}\n", encoding="utf-8")
    doc = read_document(main)
    # a is read twice (LaTeX would, too), but never inside itself
    assert [b.text for b in doc.blocks] == ["Text of a.", "Text of b.", "Text of a.", "Text of b."]
    assert sum("already being read" in w for w in doc.warnings) == 2
    assert sum("no such file (missing.tex)" in w for w in doc.warnings) == 2
    assert find(doc, "Text of b").location.file == str(tmp_path / "b.tex")


def test_chapters_shift_section_levels(tmp_path):
    main = tmp_path / "thesis.tex"
    main.write_text(
        "\\chapter{Data}\nIntro.\n\\section*{Sources}\nFrom two sites.\n\\subsection{Scanners}\nThree.\n",
        encoding="utf-8",
    )
    doc = read_document(main)
    assert [(b.text, b.level) for b in doc.blocks if b.kind == "heading"] == [
        ("Data", 1), ("Sources", 2), ("Scanners", 3)]


def test_comments_go_but_escaped_percent_stays(tmp_path):
    main = tmp_path / "c.tex"
    main.write_text("Agreement was 95\\% % not this\nover all% glued\ncases.\n", encoding="utf-8")
    doc = read_document(main)
    assert doc.blocks[0].text == "Agreement was 95% over allcases."


def test_unbalanced_braces_warn_and_the_rest_is_read(tmp_path):
    main = tmp_path / "bad.tex"
    main.write_text(
        "\\section{Intro\nText after a broken heading.\n\n\\textbf{never closed\n\n"
        "A stray } brace.\n\nLast paragraph.\n",
        encoding="utf-8",
    )
    doc = read_document(main)
    assert [(b.kind, b.text, b.location.line) for b in doc.blocks] == [
        ("heading", "Intro", 1),
        ("paragraph", "Text after a broken heading.", 2),
        ("paragraph", "never closed", 4),
        ("paragraph", "A stray brace.", 6),
        ("paragraph", "Last paragraph.", 8),
    ]
    assert any("line 1: a heading's '{' is not closed" in w for w in doc.warnings)
    assert any("line 4: a '{' is not closed" in w for w in doc.warnings)
    assert any("line 6: a '}' closes nothing" in w for w in doc.warnings)


def test_thebibliography_gives_references(tmp_path):
    main = tmp_path / "refs.tex"
    main.write_text(
        "\\section{Results}\nGood.\n\\begin{thebibliography}{9}\n\\bibitem{x} A. Author. A fictional paper.\n"
        "\\bibitem{y} B. Author. Another one.\n\\end{thebibliography}\n",
        encoding="utf-8",
    )
    doc = read_document(main)
    refs = [b for b in doc.blocks if b.role == "references" and b.kind != "heading"]
    assert [b.text for b in refs] == ["A. Author. A fictional paper.", "B. Author. Another one."]
    assert refs[1].location.line == 5


def test_verbatim_and_listings_are_not_prose(tmp_path):
    main = tmp_path / "v.tex"
    main.write_text(
        "Before.\n\\begin{verbatim}\nunbalanced { code\n\\end{verbatim}\nAfter \\verb|{x| here.\n",
        encoding="utf-8",
    )
    doc = read_document(main)
    assert "code" not in doc.text and "Before." in doc.text and "After" in doc.text
    assert not any("not closed" in w for w in doc.warnings)


def test_a_sweave_or_knitr_manuscript_is_read_as_latex_without_its_r_chunks(tmp_path):
    # R users write papers as .Rnw (Sweave/knitr): LaTeX with R code chunks between "<<...>>=" and "@" (the
    # format of Sweave's and knitr's manuals); the chunks are code, not prose, and line numbers must still point
    # into the file the author edits
    main = tmp_path / "paper.Rnw"
    main.write_text(
        "\\documentclass{article}\n\\begin{document}\n\\section{Methods}\n"
        "<<setup, echo=FALSE, message=FALSE>>=\nlibrary(lme4)\nscores <- read.csv('scores.csv')\n@\n"
        "Three readers scored each of the 120 scans.\n\n<<>>=\nsummary(scores)\n@\n"
        "Ties were broken by the mean rank.\n\\end{document}\n",
        encoding="utf-8",
    )
    doc = read_document(main)
    assert "read.csv" not in doc.text and "summary(" not in doc.text and "lme4" not in doc.text
    assert find(doc, "Three readers").location.line == 8
    assert find(doc, "Ties were broken").location.line == 13
    assert find(doc, "Three readers").section == ("Methods",)


def test_tangled_markup_is_read_piece_by_piece(tmp_path):
    # environments opened inside two-argument macros make pylatexenc's tolerant parser backtrack
    # exponentially (each repeat triples its work); the reader stops it and reads paragraph by paragraph
    main = tmp_path / "tangle.tex"
    main.write_text("Intro sentence.\n\n" + "\\textcolor{\\begin{itemize}" * 40 + "\n\nA sentence after it.\n",
                    encoding="utf-8")
    doc = read_document(main)
    assert [(b.text, b.location.line) for b in doc.blocks] == [("Intro sentence.", 1), ("A sentence after it.", 5)]
    assert any("too tangled to parse as a whole" in w for w in doc.warnings)


def test_unknown_macros_give_their_text_and_known_ones_their_symbols(tmp_path):
    main = tmp_path / "m.tex"
    main.write_text("Na\\\"ive \\emph{readers} \\mymacro{kept} \\ldots{} 5\\,mm \\textsuperscript{th} "
                    "$\\geq 3$ \\texorpdfstring{yes}{no} \\SI{0.5}{\\percent}\n", encoding="utf-8")
    doc = read_document(main)
    text = doc.blocks[0].text
    for part in ("Naïve", "readers", "kept", "…", "5 mm", "th", "≥3", "yes", "0.5%"):
        assert part in text, (part, text)
    assert "no" not in text.split()
