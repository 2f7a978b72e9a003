"""No section heading of the PDF report is left alone at the foot of a page (a fact of typesetting:
common practice, no source)."""

from __future__ import annotations

import subprocess

from test_report_common import poppler

from saltbench.report.document import Document, Paragraph, Section
from saltbench.report.pdf import write_pdf


def _document() -> Document:
    # paragraphs of growing length put the headings at every height of the page in turn
    sections = []
    for i in range(1, 40):
        body = " ".join(["An invented sentence about a salt and its activity."] * (3 + (i * 7) % 23))
        sections.append(Section(f"s{i}", f"{i} Heading number {i}", [Paragraph(body)]))
    return Document("Headings test (invented text)", "sub", "2026-01-01T00:00:00Z", sections)


def _pages(pdf) -> list[list[str]]:
    out = subprocess.run([poppler("pdftotext"), "-layout", str(pdf), "-"], check=True, capture_output=True,
                         text=True).stdout
    return [[ln.strip() for ln in page.splitlines() if ln.strip()] for page in out.split("\f") if page.strip()]


def test_no_heading_ends_a_page(tmp_path) -> None:
    pdf = tmp_path / "h.pdf"
    write_pdf(_document(), pdf, "test")
    pages = _pages(pdf)
    assert len(pages) >= 5
    for n, lines in enumerate(pages[:-1], start=1):
        body = [ln for ln in lines if not ln.endswith(f"page {n}")]  # the footer
        assert body and not body[-1].startswith(tuple(f"{i} Heading number" for i in range(1, 40))), (n, body[-1])
    headings = [ln for lines in pages for ln in lines if "Heading number" in ln]
    assert len(headings) == 39
