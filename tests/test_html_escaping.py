"""File names and document text that reach the HTML pages' titles and headings are escaped: a document named
like a tag, or with a heading holding a tag, adds no element to the page (checked with the standard library's
HTML parser) on the report page, the screening page and the audit page.
"""

from __future__ import annotations

import shutil
from html.parser import HTMLParser
from pathlib import Path

import pytest

from tests.test_bad_input import run

ROOT = Path(__file__).resolve().parent.parent
NAME = '<img src=x onerror="alert(1)">&amp;<b>.md'
#: in code spans, so that the Markdown reader keeps the tags as text (bare tags are markup, and it drops them)
HEADING = '`<script>alert("heading")</script>` Methods `<iframe src="x"></iframe>`'


class _Elements(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[str] = []
        self.attributes: set[str] = set()
        self.title = ""
        self._in_title = False

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attributes.update(name for name, _ in attrs)
        self._in_title = tag == "title"

    def handle_endtag(self, tag):
        self._in_title = False

    def handle_data(self, data):
        if self._in_title:
            self.title += data


@pytest.fixture(scope="module")
def folder(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("escaping")
    text = (ROOT / "fixtures" / "demo" / "wrist-fracture-manuscript.md").read_text(encoding="utf-8")
    text = text.replace("## ", f"## {HEADING} ", 1)
    (out / NAME).write_text(text, encoding="utf-8")
    shutil.copy(ROOT / "fixtures" / "demo" / "kidney-stone-benchmark-proposal.md", out / "other.md")
    return out


def _parsed(path: Path) -> _Elements:
    parser = _Elements()
    parser.feed(path.read_text(encoding="utf-8"))
    return parser


@pytest.mark.parametrize("command", [["check", NAME, "-f", "html", "--verbose"],
                                     ["screen", ".", "--checklist", "validation-study", "-f", "html", "-q"],
                                     ["audit", ".", "--checklist", "validation-study", "-f", "html", "-q"]])
def test_names_and_headings_add_no_element_to_the_page(folder, command):
    out = folder / f"{command[0]}.out.html"
    proc = run([*command, "-o", out.name], cwd=folder, timeout=240)
    assert proc.returncode == 0, proc.stderr
    page = _parsed(out)
    assert "img" not in page.tags and "iframe" not in page.tags and "onerror" not in page.attributes
    assert page.tags.count("script") <= 1  # the page's own script, if it has one
    raw = out.read_text(encoding="utf-8")
    assert "alert(1)" not in raw or "&lt;img src=x onerror=" in raw  # the name shown as text, escaped
    if command[0] == "check":
        assert NAME in page.title  # the title reads as the name, once unescaped
        assert "&lt;script&gt;alert(" in raw  # the heading is quoted as text
