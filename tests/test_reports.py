"""The markdown, html, docx and lines renderers: golden files for the demo manuscript, round trips against the
JSON, escaping of hostile document text, and real renderings in a headless browser and in LibreOffice.

After a reviewed change: python -m pytest tests/test_reports.py --update-golden
"""

from __future__ import annotations

import io
import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import jsonschema
import pytest
import yaml

from checker.engine import check_document
from checker.reports import RenderOptions, info, names, render

from .conftest import DEMO, ROOT

GOLDEN = Path(__file__).resolve().parent / "golden"
MANUSCRIPT = Path("fixtures/demo/wrist-fracture-manuscript.md")  # relative: paths in reports are as given
PROPOSAL = Path("fixtures/demo/kidney-stone-benchmark-proposal.md")
SCHEMA = json.loads((ROOT / "checker" / "schema" / "report.schema.json").read_text())
OPTS = RenderOptions(color=False)
EPOCH = "1767225600"  # 2026-01-01 00:00 UTC, so the form's date is fixed
LINE = re.compile(r"^(?P<path>[^\n]+?):(?P<line>\d+):(?P<col>\d+): (?P<status>[a-z-]+) (?P<id>[\w.-]+): (?P<msg>.+)$")

_cache: dict[tuple[str, str], object] = {}


def report_of(path: Path | str, checklist: str = "auto"):
    """Check a document once per test session, from the repository root so that its path stays relative."""
    key = (str(path), checklist)
    if key not in _cache:
        here = os.getcwd()
        os.chdir(ROOT)
        try:
            _cache[key] = check_document(path, checklist)
        finally:
            os.chdir(here)
    return _cache[key]


@pytest.fixture(scope="module")
def demo():
    return report_of(MANUSCRIPT)


def docx_text(data: bytes) -> str:
    """What a reader of the form sees: paragraphs and table cells in order, with bold runs in **stars**."""
    import docx

    doc = docx.Document(io.BytesIO(data))
    out = []

    def para(p):
        return "".join(f"**{r.text}**" if r.bold else r.text for r in p.runs)

    body = doc.element.body
    for child in body.iterchildren():
        tag = child.tag.rsplit("}", 1)[-1]
        if tag == "p":
            out.append(para(docx.text.paragraph.Paragraph(child, doc)))
        elif tag == "tbl":
            for row in docx.table.Table(child, doc).rows:
                out.append(" | ".join("\\n".join(para(p) for p in c.paragraphs) for c in row.cells))
    return "\n".join(out) + "\n"


def _golden(name: str, text: str, update: bool) -> None:
    golden = GOLDEN / name
    if update or not golden.exists():
        if os.environ.get("CI") and not update:
            pytest.fail(f"golden file {golden.name} is missing; run with --update-golden and commit it")
        golden.write_text(text, encoding="utf-8")
    assert text == golden.read_text(encoding="utf-8"), f"{name} differs; if the change is right, --update-golden"


def test_new_formats_are_registered_with_the_cli_choices():
    assert {"markdown", "html", "docx", "lines"} <= set(names())
    assert info("docx").binary and info("docx").suffix == ".docx"
    assert not info("html").binary and info("html").suffix == ".html"


@pytest.mark.parametrize("fmt, suffix", [("markdown", "md"), ("html", "html"), ("lines", "txt")])
def test_text_formats_equal_their_golden_files(fmt, suffix, demo, update_golden):
    _golden(f"{MANUSCRIPT.name}.{fmt}.{suffix}", render(fmt, [demo], OPTS), update_golden)


def test_docx_form_equals_its_golden_text(demo, update_golden, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    text = docx_text(render("docx", [demo], OPTS))
    assert "2026-01-01" in text
    _golden(f"{MANUSCRIPT.name}.docx.txt", text, update_golden)


def test_docx_form_has_one_row_per_item_and_an_empty_response_column(demo, monkeypatch):
    import docx

    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    doc = docx.Document(io.BytesIO(render("docx", [demo], OPTS)))
    form = doc.tables[1]
    header = [c.text for c in form.rows[0].cells]
    assert header[-1] == "Author's response" and "Quoted evidence" in header and "Where reported" in header
    rows = form.rows[1:]
    assert len(rows) == len(demo.items)
    assert all(r.cells[-1].text == "" for r in rows)
    src = next(it for it in demo.items if it.id == "data.source")
    row = next(r for r in rows if r.cells[0].text == src.title)  # the item's title, not its id
    assert row.cells[2].text == "● reported"
    assert f"line {src.evidence[0].location.line}" in row.cells[3].text
    assert src.evidence[0].text[:40] in row.cells[4].text
    assert doc.core_properties.created.year == 2026


def test_lines_parse_back_to_the_same_items_and_statuses_as_the_json(demo):
    data = json.loads(render("json", [demo], OPTS))
    parsed = [LINE.match(line) for line in render("lines", [demo], OPTS).splitlines()]
    assert all(parsed), "every line follows path:line:column: status id: message"
    items = {m["id"]: m["status"] for m in parsed if m["status"] in ("missing", "partial")}
    expected = {it["id"]: it["status"] for it in data["items"] if it["status"] in ("missing", "partial")}
    assert items == expected and expected
    findings = [(m["id"], m["status"]) for m in parsed if m["status"] not in ("missing", "partial")]
    assert findings == [(f["id"], f["severity"]) for f in data["findings"]]
    for m in parsed:
        it = next((x for x in data["items"] if x["id"] == m["id"]), None)
        assert m["path"] == str(MANUSCRIPT) and m["col"] == "1"
        if it is not None and it["evidence"]:
            assert int(m["line"]) == it["evidence"][0]["location"]["line"]
        elif it is not None:
            assert m["line"] == "1"  # a missing item has no place: the top of the file


def test_lines_use_the_page_for_pdfs():
    r = report_of(DEMO.relative_to(ROOT) / "wrist-fracture-manuscript.pdf")
    out = render("lines", [r], OPTS).splitlines()
    partial = next(it for it in r.items if it.status == "partial" and it.evidence)
    line = next(x for x in out if f" {partial.id}: " in x)
    assert line.split(":")[1] == str(partial.evidence[0].location.page)


def test_markdown_requests_are_numbered_and_name_what_was_found(demo):
    md = render("markdown", [demo], OPTS)
    summary, _, requests = md.partition("Requests to the authors")
    assert "validation-study" in summary and "does not show that the study is sound" in summary
    numbered = re.findall(r"^(\d+)\. (.+)$", requests, flags=re.MULTILINE)
    gaps = [it for it in demo.items if it.status in ("missing", "partial")]
    assert [int(n) for n, _ in numbered] == list(range(1, len(gaps) + 1))
    for it in gaps:
        text = next(t for _, t in numbered if it.title in t)
        if it.status == "missing":
            assert it.ask[:40] in text
        if it.status == "partial":
            found = [f.title for f in it.facets if f.found]
            lacking = it.lacking  # decided by the verdicts, not by the renderer
            assert lacking and all(f in text for f in found) and all(f in text for f in lacking)
            assert re.search(r"\(line \d+", text), "the request says where the found part is"
    # sections in the agreed order: gaps first
    order = [md.index(h) for h in ("### Partial", "### Missing", "### Reported")]
    assert order == sorted(order)
    assert "**" in md.split("### Reported")[1]  # matched words in bold


def test_markdown_escapes_document_text(tmp_path):
    r = report_of(_hostile(tmp_path), "validation-study")
    md = render("markdown", [r], OPTS)
    assert "<script>" not in md and "\\<script\\>" in md
    assert "`<" not in md


def _hostile(tmp_path: Path) -> Path:
    doc = tmp_path / "hostile.md"
    doc.write_text(
        "# A study\n\n## Methods\n\n"
        "Two radiologists independently annotated each image `<script>alert(1)</script>` and "
        "`<img src=x onerror=alert(1)>` with \"quotes\" & ampersands.\n",
        encoding="utf-8")
    return doc


def test_html_escapes_hostile_document_text(tmp_path):
    r = report_of(_hostile(tmp_path), "validation-study")
    assert any("<script>" in ev.text for it in r.items for ev in it.evidence), "the sentence became evidence"
    page = render("html", [r], OPTS)
    assert page.count("<script>") == 1  # ours, at the end of the body
    assert page.index("<script>") > page.index("</main>")
    assert "<img" not in page and "onerror=alert(1)>" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page and "&lt;img src=x onerror=alert(1)&gt;" in page
    assert "Content-Security-Policy" in page and "script-src 'sha256-" in page


def test_html_is_self_contained_and_shows_statuses_in_words(demo):
    page = render("html", [demo], OPTS)
    assert not re.search(r"""(src|href)=["']?(https?:)?//""", page), "nothing is fetched from the network"
    assert "@import" not in page and "@font-face" not in page and "@media print" in page
    for word in ("Reported", "Partial", "Missing"):
        assert f"{word} (" in page
    assert page.count('class="item s-') == len(demo.items)
    # without script every item is visible; only the (then useless) filter controls start hidden
    assert not re.search(r'<article class="item[^>]*hidden', page)
    assert '<fieldset class="filters" id="filters" hidden>' in page
    assert "<mark>" in page and "does not show that the study is sound" in page


def test_html_gives_one_section_per_document():
    rs = [report_of(MANUSCRIPT), report_of(PROPOSAL)]
    page = render("html", rs, RenderOptions(color=False, many=True))
    assert page.count('<section class="doc"') == 2 and page.count('id="filters"') == 1
    assert str(MANUSCRIPT) in page and str(PROPOSAL) in page


def test_renderers_other_than_terminal_never_colour(demo):
    for fmt in ("markdown", "html", "lines"):
        assert "\x1b[" not in render(fmt, [demo], RenderOptions(color=True))


def test_docx_date_follows_source_date_epoch(demo, monkeypatch):
    from checker.reports.docx import report_date

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "0")
    assert report_date().year == 1970
    monkeypatch.delenv("SOURCE_DATE_EPOCH")
    assert report_date().year >= 2025


def _demo_documents() -> list[Path]:
    out = sorted(p for p in DEMO.iterdir() if p.suffix in (".md", ".pdf", ".docx") and p.name != "README.md")
    out += sorted(DEMO.glob("*/main.tex"))
    return [p.relative_to(ROOT) for p in out]


@pytest.mark.parametrize("path", _demo_documents(), ids=lambda p: str(p.relative_to("fixtures/demo")))
def test_json_of_every_demo_document_follows_the_schema(path):
    data = json.loads(render("json", [report_of(path)], OPTS))
    jsonschema.validate(data, SCHEMA)


def test_pre_commit_hook_runs_the_lines_format():
    hooks = yaml.safe_load((ROOT / ".pre-commit-hooks.yaml").read_text(encoding="utf-8"))
    hook = hooks[0]
    assert hook["entry"] == "studygap check --fail-on missing --format lines"
    assert re.search(hook["files"], "paper/main.tex") and re.search(hook["files"], "draft.md")
    assert not re.search(hook["files"], "setup.py")


# ---- real renderings: a headless browser and an office suite, where installed ----

CHROMIUM = next((shutil.which(n) for n in ("chromium", "chromium-browser") if shutil.which(n)), None)
SOFFICE = shutil.which("libreoffice") or shutil.which("soffice")


def _dump_dom(html_file: Path, tmp_path: Path) -> str:
    args = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync",
            f"--user-data-dir={tmp_path / 'profile'}", "--dump-dom", html_file.as_uri()]
    done = subprocess.run(args, check=False, capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stderr[-2000:]
    return done.stdout


@pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (apt-get install chromium)")
def test_html_runs_in_a_real_browser_with_working_filters(demo, tmp_path):
    page = render("html", [demo], OPTS)
    # start with "reported" unticked: the page's own script must then hide exactly the reported items
    page = page.replace('checked data-status="reported"', 'data-status="reported"', 1)
    target = tmp_path / "report.html"
    target.write_text(page, encoding="utf-8")
    dom = _dump_dom(target, tmp_path)
    assert 'data-filters="ready"' in dom, "the inline script ran"
    assert re.search(r'<fieldset class="filters" id="filters">', dom), "the filters are shown once script runs"
    articles = re.findall(r'<article class="item s-[^"]+" data-status="([^"]+)"[^>]*?(hidden="")?>', dom)
    assert len(articles) == len(demo.items)
    assert all(bool(h) == (s == "reported") for s, h in articles)
    n_shown = sum(1 for it in demo.items if it.status != "reported")
    assert f"Showing {n_shown} of {len(demo.items)} items." in dom


@pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (apt-get install chromium)")
def test_hostile_text_does_not_run_in_a_real_browser(tmp_path):
    r = report_of(_hostile(tmp_path), "validation-study")
    target = tmp_path / "hostile.html"
    target.write_text(render("html", [r], OPTS), encoding="utf-8")
    dom = _dump_dom(target, tmp_path)
    assert "<img" not in dom and dom.count("<script>") == 1 and 'data-filters="ready"' in dom


@pytest.mark.skipif(SOFFICE is None, reason="LibreOffice is not installed (apt-get install libreoffice-writer-nogui)")
def test_docx_form_opens_in_libreoffice(demo, tmp_path, monkeypatch):
    from pypdf import PdfReader

    monkeypatch.setenv("SOURCE_DATE_EPOCH", EPOCH)
    form = tmp_path / "form.docx"
    form.write_bytes(render("docx", [demo], OPTS))
    env = dict(os.environ, HOME=str(tmp_path))  # a fresh LibreOffice profile, not the user's
    done = subprocess.run([SOFFICE, "--headless", f"-env:UserInstallation={(tmp_path / 'lo').as_uri()}",
                           "--convert-to", "pdf", "--outdir", str(tmp_path), str(form)],
                          check=False, capture_output=True, text=True, timeout=90, env=env)
    pdf = tmp_path / "form.pdf"
    assert pdf.exists(), done.stdout + done.stderr
    text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(pdf).pages)
    assert "Reporting form" in text and "Author's response" in text
    assert "Where the data came from" in text and "2026-01-01" in text


def test_what_a_partial_item_lacks_reaches_the_json_report_as_decided(demo):
    """"lacking" is decided once, by the verdicts: the JSON report carries it for every item (empty unless partial),
    it agrees with the reason the verdicts wrote, and the report still validates against the shipped schema."""
    data = json.loads(render("json", [demo], OPTS))
    by_id = {it.id: it for it in demo.items}
    partial = [it for it in data["items"] if it["status"] == "partial"]
    assert partial, "the demo has partial items"
    for it in data["items"]:
        assert it["lacking"] == list(by_id[it["id"]].lacking)
        assert bool(it["lacking"]) == (it["status"] == "partial")
        for title in it["lacking"]:
            assert title in it["reason"]
    schema = json.loads((ROOT / "checker" / "schema" / "report.schema.json").read_text(encoding="utf-8"))
    assert "lacking" in schema["$defs"]["item"]["properties"]
    jsonschema.validate(data, schema)
