"""User text with markup in it (a citation, a title) reaches the report as text, in HTML, Markdown
and the browser.

Scenario of our own: the invented "Heron Bay test bench" sends NaCl activity coefficients under a
citation whose title and author carry markup. Every value in the dataset below is invented for
this test and is not a measurement.
"""

from __future__ import annotations

import html
import re
from html.parser import HTMLParser
from pathlib import Path

import pytest
from conftest import copy_store, write
from test_report_common import non_blank, open_page, run

MARKUP = "<script>alert(1)</script> **bold** [link](x)"

BIB = f"""\
[heron-bay-2026]
authors: Heron <b>Bay</b> Bench
title: {MARKUP}
publisher: saltbench test scenario (invented)
year: 2026
note: invented source for a test scenario; not a real publication
"""

# Invented values (a smooth made-up curve near, but not copied from, any table).
DATA = """\
# saltbench dataset 1
# electrolyte: NaCl
# property: gamma_pm
# temperature: 25 C
# source: heron-bay-2026
# table: run 3 (invented)
# precision: 0.001
# uncertainty: 0.004
# typed: measured by the invented Heron Bay test bench (invented values)
molality,value
0.01,0.903
0.02,0.872
0.05,0.821
0.1,0.779
0.2,0.735
0.5,0.682
1.0,0.659
"""

TITLE = "<img src=x onerror=alert(2)> *Heron* report"


@pytest.fixture(scope="module")
def markup_report(tmp_path_factory: pytest.TempPathFactory, seeded_store_file: Path) -> Path:
    root = tmp_path_factory.mktemp("markup")
    store = copy_store(seeded_store_file, root / "store.sqlite")
    bib = write(root / "in" / "heron.sources.txt", BIB)
    data = write(root / "in" / "NaCl.gamma_pm.heron-bay-2026.csv", DATA)
    code, out, err = run(store, "data", "add", str(bib), str(data))
    assert code == 0, out + err
    code, out, err = run(store, "report", "NaCl", "--models", "davies,extended-debye-huckel", "--data",
                         "heron-bay-2026", "--title", TITLE, "--out", str(root / "out"), "--jobs", "1")
    assert code == 0, out + err
    return root / "out"


class _Collect(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[tuple[str, dict]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    def handle_data(self, data):
        self.text.append(data)


def test_markup_in_citation_and_title_is_text_in_html(markup_report: Path) -> None:
    page = (markup_report / "report.html").read_text(encoding="utf-8")
    p = _Collect()
    p.feed(page)
    tags = [t for t, _ in p.tags]
    assert "script" not in tags and "b" not in tags
    assert all(a.get("src", "").startswith("data:image/png;base64,") for t, a in p.tags if t == "img")
    assert not any(k.startswith("on") for _, a in p.tags for k in a)
    text = "".join(p.text)
    assert MARKUP in text  # the citation, shown as typed
    assert "Heron <b>Bay</b> Bench" in text
    assert TITLE in text
    assert html.escape("<script>alert(1)</script>") in page


def test_markup_in_citation_and_title_is_text_in_markdown(markup_report: Path) -> None:
    from markdown_it import MarkdownIt

    md = (markup_report / "report.md").read_text(encoding="utf-8")
    rendered = MarkdownIt("commonmark").enable("table").render(md)
    assert "<script" not in rendered
    # the markup comes out as text: escaped in the rendered HTML, no element made from it
    assert html.escape("<script>alert(1)</script>", quote=False) in rendered
    assert "<strong>bold</strong>" not in rendered
    assert '<a href="x">' not in rendered
    assert "<b>Bay</b>" not in rendered and html.escape("<b>Bay</b>", quote=False) in rendered
    assert "<img src=\"x\"" not in rendered and "<img src=x" not in rendered
    plain = html.unescape(re.sub(r"<[^>]+>", "", rendered))
    assert MARKUP in plain and TITLE in plain


def test_markup_report_runs_no_script_in_browser(markup_report: Path, tmp_path: Path) -> None:
    info = open_page(markup_report / "report.html", tmp_path / "profile")
    assert info["scripts"] == 0
    assert info["dialogs"] == [] and info["exceptions"] == [] and info["console_errors"] == []
    assert MARKUP in info["text"] and TITLE in info["text"]
    assert len(info["images"]) == 3 and all(i["width"] > 0 for i in info["images"])
    share, _ = non_blank(info["screenshot"])
    assert share > 0.01
