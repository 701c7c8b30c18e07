"""Small PDFs drawn line by line with reportlab for the reader's tests (headings, paragraphs, pages)."""

from __future__ import annotations

from pathlib import Path

#: a line: (text, font, size, space below); the font "body" sets ``text`` as a paragraph of 11-point lines
Line = tuple[str, str, float, float]


def draw(path: Path, pages: list[list[Line]], wrap: int = 88) -> None:
    from reportlab.lib.pagesizes import A4
    from reportlab.pdfgen import canvas

    c = canvas.Canvas(str(path), pagesize=A4, invariant=1)
    for lines in pages:
        y = 770
        for text, font, size, below in lines:
            if font == "body":
                c.setFont("Helvetica", 10)
                for k in range(0, len(text), wrap):
                    c.drawString(72, y, text[k:k + wrap])
                    y -= 13
                y -= below
                continue
            c.setFont(font, size)
            c.drawString(72, y, text)
            y -= below
        c.showPage()
    c.save()
