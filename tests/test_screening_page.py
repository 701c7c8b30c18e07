"""The screening outputs a committee reads: the CSV (any reader parses it, one row per document), the HTML page
(titles, group bands, cells that open their evidence, filters, a neutral look, 1,400 px, A4 landscape) and the
DOCX table, rendered in a real browser and in LibreOffice where they are installed."""

from __future__ import annotations

import csv
import io
import json
import random
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from checker.many.batch import run_batch
from checker.many.screen import build_screen, short_names, sidecar
from checker.reports import render

DEMO = Path(__file__).resolve().parent.parent / "fixtures" / "demo"
CHROMIUM = next((shutil.which(n) for n in ("chromium", "chromium-browser") if shutil.which(n)), None)
SOFFICE = shutil.which("libreoffice") or shutil.which("soffice")


@pytest.fixture(scope="module")
def screen(tmp_path_factory):
    """Six manuscripts (the demo with paragraphs left out by a fixed-seed draw) and two proposals, each checked
    against its own checklist as a batch with per-document choice returns them, and one unreadable file."""
    folder = tmp_path_factory.mktemp("round") / "submissions"
    (folder / "a").mkdir(parents=True)
    (folder / "b").mkdir()
    paras = (DEMO / "wrist-fracture-manuscript.md").read_text(encoding="utf-8").split("\n\n")
    rng = random.Random(11)
    manuscripts = []
    for n in range(6):
        keep = [p for i, p in enumerate(paras) if i < 3 or rng.random() < 0.7]
        # two folders hold a file of the same name: short names must still tell them apart
        path = folder / ("a" if n % 2 else "b") / (f"study-{n}.md" if n < 4 else "revised.md")
        path.write_text("\n\n".join(keep), encoding="utf-8")
        manuscripts.append(str(path))
    proposals = []
    for n in range(2):
        path = folder / f"proposal-{n}.md"
        shutil.copy(DEMO / "kidney-stone-benchmark-proposal.md", path)
        proposals.append(str(path))
    bad = folder / "scan.pdf"
    bad.write_text("<html><body>Sign in</body></html>", encoding="utf-8")
    results = run_batch(manuscripts + [str(bad)], "validation-study", jobs=2)
    results += run_batch(proposals, "benchmark-proposal", jobs=1)
    return build_screen(results, "chosen per document", seconds=1.0)


def test_csv_has_one_header_row_and_one_row_per_document(screen):
    # external reader: pandas.read_csv with its defaults, beside the standard csv module
    pd = pytest.importorskip("pandas", reason="pandas is not installed (it comes with statsmodels, a test extra)")
    text = render("csv", screen)
    rows = list(csv.reader(io.StringIO(text)))
    assert len(rows) == 1 + len(screen.rows) == 10
    assert len({len(r) for r in rows}) == 1
    assert not any(r and r[0].startswith("#") for r in rows)
    frame = pd.read_csv(io.StringIO(text))
    assert len(frame) == len(screen.rows)
    assert list(frame.columns[:4]) == ["path", "checklist", "error", "completeness"]
    by_path = frame.set_index("path")
    manuscript = next(r for r in screen.rows if r.checklist == "validation-study")
    assert by_path.loc[manuscript.path, "data.source"] == manuscript.statuses[[i for i, _ in screen.checklists[0].items]
                                                                             .index("data.source")]
    assert "not a PDF" in by_path.loc[next(r.path for r in screen.rows if r.error), "error"]
    # an item of the other checklist is blank, not a status
    proposal = next(r for r in screen.rows if r.checklist == "benchmark-proposal")
    only_manuscripts = [i for i, _ in screen.checklists[0].items if i not in dict(screen.checklists[1].items)]
    assert only_manuscripts and pd.isna(by_path.loc[proposal.path, only_manuscripts[0]])
    notes = sidecar(screen)
    assert notes["summary"] == {"documents": 9, "errors": 1, "checked": 8, "skipped": 0}
    assert any("triage aid" in c for c in notes["cautions"]) and "half of partial" in notes["score"]


def test_screen_command_writes_the_csv_notes_beside_it(tmp_path, capsys):
    from checker.cli import screen as screen_cmd
    from tests.test_screen_audit import parse

    folder = tmp_path / "in"
    folder.mkdir()
    shutil.copy(DEMO / "wrist-fracture-manuscript.md", folder / "one.md")
    (folder / "slides.pptx").write_bytes(b"PK\x03\x04")
    out = tmp_path / "screen.csv"
    assert screen_cmd.run(parse("screen", str(folder), "--checklist", "validation-study", "-f", "csv", "-o",
                                str(out), "-j", "1", "-q")) == 0
    assert len(list(csv.reader(io.StringIO(out.read_text(encoding="utf-8"))))) == 2
    notes = json.loads((tmp_path / "screen.meta.json").read_text(encoding="utf-8"))
    assert notes["checklist"]["id"] == "validation-study"
    assert notes["skipped"] == [{"path": str(folder / "slides.pptx"), "reason": "not a kind of file studygap reads (.pptx)"}]
    assert "slides.pptx: not a kind of file studygap reads (.pptx)" in capsys.readouterr().err
    assert screen_cmd.run(parse("screen", str(folder), "-f", "docx", "-q")) == 2
    assert "give -o PATH.docx" in capsys.readouterr().err


def test_short_names_tell_files_apart():
    assert short_names(["x/a/r.md", "x/b/r.md", "x/c.md"]) == ["a/r.md", "b/r.md", "c.md"]
    assert short_names(["/long/folder/name/study.pdf"]) == ["study.pdf"]


def test_page_names_items_shows_groups_and_opens_every_cell(screen):
    page = render("html", screen)
    manuscripts = screen.checklists[0]
    # item titles in the headings, ids on hover
    title, iid = manuscripts.items[0][1], manuscripts.items[0][0]
    assert f'title="{title} ({iid})"><span>{title}</span>' in page
    # one band per group of each checklist
    assert page.count('<th class="band') == sum(len(dict.fromkeys(c.item_groups)) for c in screen.checklists)
    # short names, full paths on hover
    assert ">a/revised.md</th>" in page and ">b/revised.md</th>" in page
    # every cell links to a detail that exists; a missing cell's detail says what was looked for
    targets = re.findall(r'<td class="c s-([a-z-]+)[^"]*" data-g="[^"]+"><a href="#(e\d+-\d+)"', page)
    assert len(targets) == sum(len(c.items) * len(screen.rows_of(c.id)) for c in screen.checklists)
    for status, target in targets:
        assert f'id="{target}"' in page
    missing = next(t for s, t in targets if s == "missing")
    detail = page[page.index(f'id="{missing}"'):]
    detail = detail[: detail.index("</div>")]
    assert "Looked for and not found:" in detail and "The item asks:" in detail
    reported = next(t for s, t in targets if s == "reported")
    detail = page[page.index(f'id="{reported}"'):]
    assert "<blockquote>" in detail[: detail.index("</div>")]
    # the unreadable file is named with its reason, once, without repeating its path
    assert "scan.pdf</span>: not a PDF" in page
    # filters by all five statuses and by every group; no command-line advice on a web page
    for s in ("reported", "partial", "missing", "not-applicable", "waived"):
        assert f'data-status="{s}"' in page
    assert "--verbose" not in page and "--checklist" not in page


def test_page_has_a_neutral_look_of_its_own():
    """No traffic-light fills: every colour of the page's style is a grey or a slate tint (channels within 40 of
    each other), except the one focus ring."""
    from checker.reports import screening

    colours = set(re.findall(r"#[0-9a-fA-F]{6}\b|#[0-9a-fA-F]{3}\b", screening.CSS))
    assert colours
    for c in colours - {"#2d5d8a"}:
        hexes = c[1:] if len(c) == 7 else "".join(ch * 2 for ch in c[1:])
        r, g, b = (int(hexes[i:i + 2], 16) for i in (0, 2, 4))
        assert max(r, g, b) - min(r, g, b) <= 40, c


def _chromium(args: list[str], tmp_path: Path) -> subprocess.CompletedProcess:
    base = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync",
            f"--user-data-dir={tmp_path / 'profile'}"]
    done = subprocess.run(base + args, check=False, capture_output=True, text=True, timeout=90)
    assert done.returncode == 0, done.stderr[-2000:]
    return done


@pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (apt-get install chromium)")
def test_page_filters_run_and_the_matrix_fits_1400_px_in_a_real_browser(screen, tmp_path):
    page = render("html", screen)
    # start with one group unticked: the page's own script must hide exactly that group's columns
    group = re.search(r'data-group="(0-[^"]+)"', page).group(1)
    page = page.replace(f'checked data-group="{group}"', f'data-group="{group}"', 1)
    target = tmp_path / "screen.html"
    target.write_text(page, encoding="utf-8")
    dom = _chromium(["--window-size=1400,900", "--dump-dom", target.as_uri()], tmp_path).stdout
    assert 'data-controls="ready"' in dom
    cells = [(re.search(r'data-g="([^"]+)"', a).group(1), 'hidden=""' in a)
             for a in re.findall(r"<t[dh] ([^>]*data-g=[^>]*)>", dom)]
    assert cells and any(g == group for g, _ in cells)
    assert all(h == (g == group) for g, h in cells)
    # width: measured by a copy of the page with one more script (and no script policy), in a 1,400 px window
    probe = render("html", screen)
    probe = re.sub(r'<meta http-equiv="Content-Security-Policy"[^>]*>', "", probe)
    probe = probe.replace("</body>", "<script>document.body.setAttribute('data-width',"
                                     "Math.max.apply(null,[].map.call(document.querySelectorAll('table.matrix'),"
                                     "function(t){return t.getBoundingClientRect().right;})));</script></body>")
    target.write_text(probe, encoding="utf-8")
    dom = _chromium(["--window-size=1400,900", "--dump-dom", target.as_uri()], tmp_path).stdout
    right = float(re.search(r'data-width="([\d.]+)"', dom).group(1))
    assert right <= 1400 - 16, f"the matrix ends at {right} px"


@pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (apt-get install chromium)")
def test_page_prints_on_a4_landscape(screen, tmp_path):
    from pypdf import PdfReader

    target = tmp_path / "screen.html"
    target.write_text(render("html", screen), encoding="utf-8")
    pdf = tmp_path / "screen.pdf"
    _chromium(["--no-pdf-header-footer", f"--print-to-pdf={pdf}", target.as_uri()], tmp_path)
    reader = PdfReader(pdf)
    box = reader.pages[0].mediabox
    assert round(float(box.width)) == 842 and round(float(box.height)) == 595  # A4 landscape in points
    first = " ".join(reader.pages[0].extract_text().split())
    # the manuscripts' matrix is on the first page whole: its first and last item headings and its footer row
    items = screen.checklists[0].items
    assert "Reported in" in first and "Intended use" in first
    assert "Behind each cell" not in " ".join(p.extract_text() for p in reader.pages)  # evidence is for the screen
    assert len(items) > 20


def _docx_to_pdf(docx: Path, tmp_path: Path) -> Path:
    import os

    env = dict(os.environ, HOME=str(tmp_path))
    done = subprocess.run([SOFFICE, "--headless", f"-env:UserInstallation={(tmp_path / 'lo').as_uri()}",
                           "--convert-to", "pdf", "--outdir", str(tmp_path), str(docx)],
                          check=False, capture_output=True, text=True, timeout=120, env=env)
    pdf = tmp_path / (docx.stem + ".pdf")
    assert pdf.exists(), done.stdout + done.stderr
    return pdf


def test_screen_docx_is_one_landscape_table_per_checklist(screen, monkeypatch):
    import docx

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    data = render("docx", screen)
    doc = docx.Document(io.BytesIO(data))
    sec = doc.sections[0]
    assert sec.page_width > sec.page_height
    assert len(doc.tables) == 2  # one per checklist
    table = doc.tables[0]
    rows = screen.rows_of("validation-study")
    assert len(table.columns) == 1 + len(rows)
    texts = [c.text for c in table.rows[0].cells]
    assert texts[0] == "Item" and "a/revised.md" in texts
    body = "\n".join(c.text for row in table.rows for c in row.cells)
    assert "● reported" in body and "○ missing" in body and "Intended use" in body
    assert data == render("docx", screen)  # same inputs, same bytes


@pytest.mark.skipif(SOFFICE is None, reason="LibreOffice is not installed (apt-get install libreoffice-writer-nogui)")
def test_screen_docx_opens_in_libreoffice_landscape(screen, tmp_path, monkeypatch):
    from pypdf import PdfReader

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    path = tmp_path / "screening.docx"
    path.write_bytes(render("docx", screen))
    reader = PdfReader(_docx_to_pdf(path, tmp_path))
    box = reader.pages[0].mediabox
    assert float(box.width) > float(box.height)
    text = " ".join(" ".join(p.extract_text().split()) for p in reader.pages)
    assert "Screening table" in text and "Intended use" in text and "a/revised.md" in text


def test_checklist_auto_chooses_per_document_and_shows_them_apart(tmp_path, capsys):
    from checker.cli import screen as screen_cmd
    from tests.test_screen_audit import parse

    folder = tmp_path / "in"
    folder.mkdir()
    shutil.copy(DEMO / "wrist-fracture-manuscript.md", folder / "paper.md")
    shutil.copy(DEMO / "kidney-stone-benchmark-proposal.md", folder / "proposal.md")
    out = tmp_path / "screen.json"
    assert screen_cmd.run(parse("screen", str(folder), "--checklist", "auto", "-f", "json", "-o", str(out), "-j", "1",
                                "-q")) == 0
    data = json.loads(out.read_text(encoding="utf-8"))
    assert {c["id"]: c["documents"] for c in data["checklists"]} == {"validation-study": 1, "benchmark-proposal": 1}
    assert [d["checklist"] for d in data["documents"]] == ["validation-study", "benchmark-proposal"]
    assert "each document" in data["checklist"]["choice"]


def test_report_page_status_colours_follow_the_same_neutral_scale():
    """The single-document page marks statuses with the same kind of ink as the screening page: greys and slate
    tints, no green, amber or red."""
    from checker.reports import html

    for status in ("reported", "partial", "missing", "not-applicable", "waived"):
        value = re.search(rf"--{status}:(#[0-9a-fA-F]{{6}})", html.CSS).group(1)
        r, g, b = (int(value[i:i + 2], 16) for i in (1, 3, 5))
        assert max(r, g, b) - min(r, g, b) <= 40, (status, value)


@pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed (apt-get install chromium)")
def test_hostile_text_in_a_cell_does_not_run_in_a_real_browser(tmp_path):
    doc = tmp_path / "<img src=x onerror=alert(2)>.md"
    doc.write_text("# A study\n\n## Methods\n\nTwo radiologists independently annotated each image "
                   "`<script>alert(1)</script>` and `<img src=x onerror=alert(1)>` with \"quotes\" & ampersands.\n",
                   encoding="utf-8")
    screen = build_screen(run_batch([str(doc)], "validation-study", jobs=1), "validation-study, named by the user")
    assert any("<script>" in text for row in screen.rows for c in row.cells for text, _ in c.quotes)
    page = render("html", screen)
    assert page.count("<script>") == 1 and "<img" not in page
    target = tmp_path / "screen.html"
    target.write_text(page, encoding="utf-8")
    dom = _chromium(["--dump-dom", target.as_uri()], tmp_path).stdout
    assert "<img" not in dom and dom.count("<script>") == 1 and 'data-controls="ready"' in dom
