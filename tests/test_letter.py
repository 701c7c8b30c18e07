"""The review letter (Markdown requests) and the one vocabulary of status words across formats."""

from __future__ import annotations

import dataclasses
import re

import pytest

from checker.matching.checklist import builtin_ids, load_checklist
from checker.core.output import MARKDOWN_MARK
from checker.verdicts.report import FacetResult, ItemResult, Report
from checker.reports import RenderOptions, render
from checker.reports.markdown import MAX_REQUESTS, ranked_gaps, request

from .test_reports import MANUSCRIPT, PROPOSAL, report_of

# a finite verb that takes the facet as its object, followed in the same clause by a participle: the shape of
# "the document mentions classes or prevalence mentioned"
DANGLING = re.compile(r"\b(?:mentions|reports|gives|describes|names|states)\b[^.;:—]*?\b"
                      r"(?:mentioned|named|given|described|disclosed|stated|reported)\b")
DOUBLED = re.compile(r"\b(\w+)\s+\1\b", re.IGNORECASE)


def _report(cid: str, items: tuple[ItemResult, ...]) -> Report:
    cl = load_checklist(cid)
    return Report("0", "paper.pdf", "pdf", 4, 3000, "0" * 64, cl.id, cl.title, cl.version, items,
                  groups=tuple((g.id, g.title) for g in cl.groups))


def every_request():
    """Every item of every built-in checklist, as missing and as partial with each facet found in turn."""
    for cid in builtin_ids():
        cl = load_checklist(cid)
        for it in cl.items:
            facets = [FacetResult(f.id, f.title, False, 0.0, 0) for f in it.facets]
            base = ItemResult(it.id, it.group, it.title, it.question, " ".join(it.ask.split()), "missing",
                              tuple(facets), (), (), "nothing found for: " + "; ".join(f.title for f in facets))
            yield cid, base
            yield cid, dataclasses.replace(base, reason="only mentioned in sections that count little")
            for k in range(len(facets)):
                found = tuple(dataclasses.replace(f, found=(i == k)) for i, f in enumerate(facets))
                yield cid, dataclasses.replace(base, status="partial", facets=found, reason="found: x")
                lacking = "; ".join(f.title for i, f in enumerate(facets) if i != k)
                yield cid, dataclasses.replace(base, status="partial", facets=found,
                                               reason=f"found: {facets[k].title} — not found: {lacking}")


def test_every_request_template_reads_as_grammatical_sentences():
    checked = 0
    for cid, item in every_request():
        text = request(item, _report(cid, (item,)))
        plain = text.replace("**", "")
        assert not DOUBLED.search(plain), plain
        assert not DANGLING.search(plain), plain
        assert "  " not in plain and not re.search(r"\s[,.;]", plain), plain
        assert plain.endswith((".", "?")), plain
        assert "((" not in plain and "))" not in plain, plain
        # whole sentences: after the title, each sentence opens with a capital and holds a verb
        body = plain[len(item.title) + 1:].strip()
        for sentence in re.split(r"(?<=[.?])\s+", body):
            assert sentence[:1].isupper(), (sentence, plain)
            assert re.search(r"\b(?:found|find|could|please|state|report|give|describe|explain|name|add|is|are|"
                             r"say|list|provide|define|indicate|mention|specify|clarify)\b", sentence, re.I), sentence
        assert not re.search(r"\b(?:found|report) (?:described|given|named|mentioned)\b", plain), plain
        checked += 1
    assert checked > 150


def test_partial_request_asks_only_for_what_is_missing():
    cl = load_checklist("validation-study")
    it = next(i for i in cl.items if i.id == "methods.implementation")
    facets = tuple(FacetResult(f.id, f.title, i == 0, 1.0 if i == 0 else 0.0, 1 if i == 0 else 0)
                   for i, f in enumerate(it.facets))
    item = ItemResult(it.id, it.group, it.title, it.question, it.ask, "partial", facets, (), (), "found: software",
                      lacking=(it.facets[1].title,))
    text = request(item, _report("validation-study", (item,)))
    assert f"could you also report {it.facets[1].title}?" in text
    assert " ".join(it.ask.split())[:40] not in text  # the item's whole request (every setting it lists) is not repeated


def _many_gaps(cid: str) -> Report:
    cl = load_checklist(cid)
    items = tuple(ItemResult(i.id, i.group, i.title, i.question, i.ask, "missing", (), (), (), "nothing found")
                  for i in cl.items)
    return _report(cid, items)


def test_letter_ranks_by_importance_caps_at_ten_and_groups_by_section():
    r = _many_gaps("validation-study")
    ranked = ranked_gaps(r)
    assert ranked[0].group == "data" and ranked[-1].group == "governance"
    dataset = ranked_gaps(_many_gaps("dataset-description"))
    # the order depends on the kind of document: access and licence come early for a dataset, late for a paper
    assert [it.group for it in dataset].index("availability") < [it.group for it in ranked].index("availability")
    md = render("markdown", [r], RenderOptions(color=False))
    letter = md[md.index("Requests to the authors"):]
    numbers = re.findall(r"^(\d+)\. \*\*", letter, re.MULTILINE)
    assert numbers == [str(n) for n in range(1, MAX_REQUESTS + 1)]
    assert "#### Data and cohort" in letter
    assert f"{len(r.items) - MAX_REQUESTS} further items were not found" in letter
    every = render("markdown", [r], RenderOptions(color=False, all_requests=True))
    assert len(re.findall(r"^\d+\. \*\*", every, re.MULTILINE)) == len(r.items)


WORDS = ("reported", "partial", "missing", "not applicable", "waived")
OLD_WORDS = ("Not found", "Partly reported", "Partially reported", "not-applicable")


@pytest.mark.parametrize("fmt", ["terminal", "markdown", "html"])
def test_one_vocabulary_of_status_words(fmt):
    r = report_of(MANUSCRIPT)
    text = render(fmt, [r], RenderOptions(color=False))
    for old in OLD_WORDS:
        assert old not in text.replace('data-status="not-applicable"', "").replace("s-not-applicable", "")\
            .replace("--not-applicable", ""), (fmt, old)
    low = text.lower()
    for w in WORDS:
        assert w in low, (fmt, w)


def test_html_filter_covers_all_five_statuses_and_gives_no_command_line_advice():
    r = report_of(PROPOSAL)
    page = render("html", [r], RenderOptions(color=False, verbose=False))
    for s in ("reported", "partial", "missing", "not-applicable", "waived"):
        assert f'data-status="{s}"' in page
    assert "--verbose" not in page and "use --" not in page


def test_docx_form_shows_the_same_words_and_puts_requests_in_their_own_column(monkeypatch):
    import io

    import docx

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    r = report_of(MANUSCRIPT)
    doc = docx.Document(io.BytesIO(render("docx", [r], RenderOptions(color=False))))
    table = doc.tables[1]
    head = [c.text for c in table.rows[0].cells]
    assert head == ["Item", "Question", "Status", "Where reported", "Quoted evidence", "Request to the authors",
                    "Author's response"]
    for row, it in zip(table.rows[1:], ranked := [it for s in ("missing", "partial", "reported", "not-applicable",
                                                                "waived") for it in r.items if it.status == s]):
        cells = [c.text for c in row.cells]
        assert cells[0] == it.title and it.id not in cells[0]
        assert cells[2].split(" ", 1)[1] in WORDS
        assert "Request" not in cells[4] and (not cells[4] or cells[4].startswith("“"))
        assert bool(cells[5]) == (it.status in ("missing", "partial") and bool(it.ask))
    assert ranked
    from checker.reports.docx import WIDTHS

    # landscape A4 with 1 cm margins leaves 27.7 cm; the status column holds "– not applicable" at 9 pt on one line
    assert sum(WIDTHS) <= 27.7 + 1e-9 and WIDTHS[2] >= 2.8


def test_terminal_status_column_never_runs_into_the_title():
    # "not-applicable" filled the old 14-character column and ran into the title ("not-applicableComparators")
    cl = load_checklist("validation-study")
    items = tuple(ItemResult(i.id, i.group, i.title, i.question, i.ask, s, (), (), (), "because")
                  for i, s in zip(cl.items, ["not-applicable", "waived", "partial", "missing", "reported"] * 10))
    text = render("terminal", [_report("validation-study", items)], RenderOptions(color=False, width=100))
    for it in items:
        line = next(ln for ln in text.splitlines() if f"[{it.id}]" in ln)
        status_part, title_part = line[:20], line[20:]
        assert status_part.strip().endswith(WORDS[("reported", "partial", "missing", "not-applicable", "waived")
                                                  .index(it.status)]), line
        assert title_part.startswith(it.title), line


def test_letter_format_holds_only_the_requests_by_section():
    r = report_of(MANUSCRIPT)
    text = render("letter", [r], RenderOptions(color=False))
    gaps = ranked_gaps(r)
    assert text.startswith(f"{MARKDOWN_MARK}\n# Requests to the authors: {r.document_path}")  # the mark: see output.py
    assert len(re.findall(r"^\d+\. \*\*", text, re.MULTILINE)) == min(len(gaps), MAX_REQUESTS)
    heads = re.findall(r"^## (.+)$", text, re.MULTILINE)
    assert heads == list(dict.fromkeys(r.group_title(it.group) for it in gaps[:MAX_REQUESTS]))
    assert "> " not in text and "####" not in text  # no quoted passages or item blocks: a letter, not the report
    assert "whether the study is sound" in text
    assert len(text.split()) < 120 * min(len(gaps), MAX_REQUESTS) + 150


SOFFICE = __import__("shutil").which("libreoffice") or __import__("shutil").which("soffice")


@pytest.mark.skipif(SOFFICE is None, reason="LibreOffice is not installed (apt-get install libreoffice-writer-nogui)")
def test_docx_form_status_words_stay_whole_in_libreoffice(tmp_path, monkeypatch):
    """The status column once broke its words ("reference.annotato" / "rs"); laid out by LibreOffice on landscape
    A4, every status stays on one line beside its glyph, and no item id stands in the item column."""
    import os
    import subprocess

    from pypdf import PdfReader

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    r = report_of(MANUSCRIPT)
    form = tmp_path / "form.docx"
    form.write_bytes(render("docx", [r], RenderOptions(color=False)))
    env = dict(os.environ, HOME=str(tmp_path))
    subprocess.run([SOFFICE, "--headless", f"-env:UserInstallation={(tmp_path / 'lo').as_uri()}", "--convert-to",
                    "pdf", "--outdir", str(tmp_path), str(form)], check=False, capture_output=True, timeout=120,
                   env=env)
    reader = PdfReader(tmp_path / "form.pdf")
    box = reader.pages[0].mediabox
    assert float(box.width) > float(box.height)
    lines = [ln.strip() for p in reader.pages for ln in p.extract_text().splitlines()]
    text = "\n".join(lines)
    for it in r.items:
        assert it.id not in text, it.id
    glyphs = {"reported": "●", "partial": "◐", "missing": "○", "not-applicable": "–", "waived": "◇"}
    for status, n in r.summary.items():
        if n:
            assert text.count(f"{glyphs[status]} {WORDS[('reported', 'partial', 'missing', 'not-applicable', 'waived').index(status)]}") >= n, status


def test_docx_files_are_the_same_bytes_for_the_same_inputs(monkeypatch):
    # python-docx stamps zip entries with the clock's second; the renderers stamp them with SOURCE_DATE_EPOCH
    import time

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    r = report_of(MANUSCRIPT)
    first = render("docx", [r], RenderOptions(color=False))
    time.sleep(1.05)
    assert render("docx", [r], RenderOptions(color=False)) == first
