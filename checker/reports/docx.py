"""The DOCX report: a reporting form to fill in (python-docx), one table row per item with its status, place and
quoted evidence, and an empty column for the authors' response; then findings and cautions."""

from __future__ import annotations

import io
import os
from collections.abc import Sequence
from datetime import datetime, timezone

from ..core.cautions import CAUTIONS
from ..core.status import GAPS_FIRST, is_gap
from ..verdicts.report import Evidence, ItemResult, Report
from .words import glyph, word

COLUMNS = ("Item", "Question", "Status", "Where reported", "Quoted evidence", "Request to the authors",
           "Author's response")
#: column widths in centimetres on a landscape A4 page (27.7 cm of text width); the status column holds the
#: longest status ("– not applicable") on one line at 9 pt
WIDTHS = (3.4, 4.4, 2.8, 2.9, 6.4, 4.2, 3.6)
#: rows in this order: gaps first, so the authors answer them first


def report_date() -> datetime:
    """SOURCE_DATE_EPOCH when set (reproducible builds and tests), else now, in UTC."""
    raw = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if raw:
        try:
            return datetime.fromtimestamp(int(raw), tz=timezone.utc)
        except (ValueError, OverflowError, OSError):
            pass  # a malformed value is ignored, as reproducible-build tools do
    return datetime.now(tz=timezone.utc).replace(microsecond=0)


def _clean(text: str) -> str:
    # XML 1.0 refuses most control characters; python-docx would raise on them
    return "".join(ch for ch in " ".join(text.split()) if ch >= " " or ch == "\t")


def _where(ev: Evidence, r: Report) -> str:
    loc = ev.location
    bits = []
    if loc.file != r.document_path:
        bits.append(os.path.basename(loc.file))
    if loc.page is not None:
        bits.append(f"page {loc.page}")
    if loc.table is not None:
        bits.append(f"table {loc.table}" + (f", row {loc.row}" if loc.row is not None else ""))
    elif loc.paragraph is not None:
        bits.append(f"paragraph {loc.paragraph}")
    if loc.line is not None:
        bits.append(f"line {loc.line}")
    if loc.section:
        bits.append(f"section {loc.section[-1]}")
    return ", ".join(bits) or "—"


def _quote_runs(paragraph, ev: Evidence) -> None:
    """The passage with matched words in bold."""
    text, pos = ev.text, 0
    paragraph.add_run("“")
    for s, t in sorted(ev.matches):
        s, t = max(s, pos), min(t, len(text))
        if s >= t:
            continue
        paragraph.add_run(_piece(text[pos:s]))
        paragraph.add_run(_clean(text[s:t])).bold = True
        pos = t
    paragraph.add_run(_piece(text[pos:]) + "”")


def _piece(text: str) -> str:
    """Text between matches, cleaned, keeping one space where it had space at either end."""
    if not text.strip():
        return " " if text else ""
    return (" " if text[0].isspace() else "") + _clean(text) + (" " if text[-1].isspace() else "")


def _row(table, it: ItemResult, r: Report, verbose: bool) -> None:
    cells = table.add_row().cells
    cells[0].text = ""
    cells[0].paragraphs[0].add_run(_clean(it.title)).bold = True
    cells[1].text = _clean(it.question)
    cells[2].text = ""
    cells[2].paragraphs[0].add_run(f"{glyph(it.status)} {word(it.status)}").bold = True
    shown = it.evidence if verbose else it.evidence[:2]
    cells[3].text = "\n".join(_where(ev, r) for ev in shown) if shown else "not found"
    if it.status not in ("reported",) and it.reason:
        cells[3].add_paragraph().add_run(_clean(it.reason)).italic = True
    cells[4].text = ""  # quotes only
    for i, ev in enumerate(shown):
        _quote_runs(cells[4].paragraphs[0] if i == 0 else cells[4].add_paragraph(), ev)
    cells[5].text = _clean(it.ask) if is_gap(it.status) and it.ask else ""
    cells[6].text = ""


def _document(doc, r: Report, verbose: bool, when: datetime) -> None:
    from docx.shared import Cm, Pt

    doc.add_heading("Reporting form", level=0)
    meta = doc.add_table(rows=0, cols=2)
    meta.style = "Table Grid"
    pages = f", {r.pages} pages" if r.pages else ""
    counts = r.summary
    for k, v in (
        ("Document", f"{r.document_path} ({r.document_format}{pages}, {r.words:,} words)"),
        ("Checklist", f"{r.checklist_title} ({r.checklist_id}, version {r.checklist_version})"),
        ("Date", when.strftime("%Y-%m-%d")),
        ("Items", ", ".join(f"{counts[s]} {word(s)}" for s in GAPS_FIRST)),
        ("Checked by", f"studygap {r.tool_version}"),
    ):
        cells = meta.add_row().cells
        cells[0].text = k
        cells[0].paragraphs[0].runs[0].bold = True
        cells[1].text = _clean(v)
    set_widths(meta, (4.0, 23.7))
    for row in meta.rows:
        for cell in row.cells:
            for p in cell.paragraphs:
                for run in p.runs:
                    run.font.size = Pt(10)
    doc.add_paragraph(
        "Please answer each item in the last column: where the manuscript now reports it (section and page), "
        "or why it does not apply. Items are listed with the gaps first.")
    for w in r.warnings:
        doc.add_paragraph("Note: " + _clean(w)).runs[0].italic = True

    table = doc.add_table(rows=1, cols=len(COLUMNS))
    table.style = "Table Grid"
    table.autofit = False
    for cell, name in zip(table.rows[0].cells, COLUMNS):
        cell.text = name
        cell.paragraphs[0].runs[0].bold = True
    repeat_header(table.rows[0])
    for status in GAPS_FIRST:
        for it in r.items:
            if it.status == status:
                _row(table, it, r, verbose)
    set_widths(table, WIDTHS)
    for row in table.rows:
        for cell, w in zip(row.cells, WIDTHS):
            cell.width = Cm(w)
            for p in cell.paragraphs:
                for run in p.runs:
                    run.font.size = Pt(9)

    if r.findings:
        doc.add_heading("Findings across items", level=1)
        for f in r.findings:
            p = doc.add_paragraph(style="List Bullet")
            p.add_run(f"{_clean(f.title)} ({f.id}, {f.severity}): ").bold = True
            p.add_run(_clean(f.message))
            for ev in f.evidence[: (None if verbose else 3)]:
                q = doc.add_paragraph()
                q.paragraph_format.left_indent = Cm(1)
                _quote_runs(q, ev)
                q.add_run(f" ({_where(ev, r)})").italic = True
    doc.add_heading("Please keep in mind", level=1)
    for c in CAUTIONS["report"]:
        doc.add_paragraph(c, style="List Bullet")


def set_widths(table, widths_cm) -> None:
    """Column widths that both Word and LibreOffice honour: on the grid columns and on every cell."""
    from docx.shared import Cm

    table.autofit = False
    for col, w in zip(table.columns, widths_cm):
        col.width = Cm(w)
    for row in table.rows:
        for cell, w in zip(row.cells, widths_cm):
            cell.width = Cm(w)


def shade(cell, fill: str) -> None:
    """A cell's background (hex RGB without #)."""
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    tc_pr = cell._tc.get_or_add_tcPr()
    el = OxmlElement("w:shd")
    el.set(qn("w:val"), "clear")
    el.set(qn("w:color"), "auto")
    el.set(qn("w:fill"), fill)
    tc_pr.append(el)


def repeat_header(row) -> None:
    """Repeat the header row on every page of a long table."""
    from docx.oxml import OxmlElement
    from docx.oxml.ns import qn

    tr_pr = row._tr.get_or_add_trPr()
    el = OxmlElement("w:tblHeader")
    el.set(qn("w:val"), "true")
    tr_pr.append(el)


def landscape_document(title: str, when: datetime):
    """A python-docx Document on landscape A4 with narrow margins and fixed properties (same inputs, same bytes)."""
    from docx import Document
    from docx.enum.section import WD_ORIENT
    from docx.shared import Cm

    doc = Document()
    sec = doc.sections[0]
    sec.orientation = WD_ORIENT.LANDSCAPE
    sec.page_width, sec.page_height = Cm(29.7), Cm(21.0)
    sec.left_margin = sec.right_margin = Cm(1.0)
    sec.top_margin = sec.bottom_margin = Cm(1.5)
    props = doc.core_properties
    props.title = title
    props.author = props.last_modified_by = "studygap"
    # fixed dates keep the file the same for the same inputs and SOURCE_DATE_EPOCH
    props.created = props.modified = when.replace(tzinfo=None)
    props.revision = 1
    return doc


def save(doc, when: datetime) -> bytes:
    """The document's bytes, with every zip entry stamped with ``when`` instead of the clock, so that the same
    inputs and SOURCE_DATE_EPOCH give the same file (python-docx stamps entries with the current second)."""
    import zipfile

    raw = io.BytesIO()
    doc.save(raw)
    stamp = max(when, datetime(1980, 1, 1, tzinfo=timezone.utc)).timetuple()[:6]
    out = io.BytesIO()
    with zipfile.ZipFile(io.BytesIO(raw.getvalue())) as src, \
            zipfile.ZipFile(out, "w", compression=zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            entry = zipfile.ZipInfo(info.filename, date_time=stamp)
            entry.compress_type = zipfile.ZIP_DEFLATED
            entry.external_attr = info.external_attr
            dst.writestr(entry, src.read(info.filename))
    return out.getvalue()


def render(reports: Sequence[Report], options) -> bytes:
    from docx.enum.text import WD_BREAK

    when = report_date()
    doc = landscape_document("studygap reporting form", when)
    for i, r in enumerate(reports):
        if i:
            doc.add_paragraph().add_run().add_break(WD_BREAK.PAGE)
        _document(doc, r, options.verbose, when)
    return save(doc, when)
