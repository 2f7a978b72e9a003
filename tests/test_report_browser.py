"""The HTML report in a real headless browser (Debian's Chromium): it loads without console
errors or network requests, every figure is present and drawn, and the page is not blank."""

from __future__ import annotations

from pathlib import Path

import pytest
from test_report_common import ELECTROLYTES, non_blank, open_page, print_overflow, shared_report

FIGURES_PER_ELECTROLYTE = 3  # coefficients, residuals, validity ranges


@pytest.fixture(scope="module")
def page(tmp_path_factory: pytest.TempPathFactory, seeded_store_file: Path) -> dict:
    rep = shared_report(tmp_path_factory, seeded_store_file)
    return open_page(rep["out"] / "report.html", tmp_path_factory.mktemp("chromium-profile"))


def test_page_loads_without_errors_or_network(page: dict) -> None:
    assert page["console_errors"] == []
    assert page["log_errors"] == []
    assert page["exceptions"] == []
    assert page["requests"] == []  # self-contained: nothing fetched beyond the file itself
    assert page["scripts"] == 0


def test_every_figure_is_present_and_drawn(page: dict) -> None:
    n = FIGURES_PER_ELECTROLYTE * len(ELECTROLYTES)
    assert page["figures"] == n
    assert len(page["images"]) == n
    for img in page["images"]:
        assert img["complete"] and img["width"] > 500 and img["height"] > 150, img
        assert img["shown"] > 300, img  # laid out at a readable width, not collapsed


def test_screenshot_is_not_blank(page: dict) -> None:
    share, levels = non_blank(page["screenshot"])
    assert share > 0.02 and levels > 20


def test_page_text_has_every_section(page: dict) -> None:
    text = page["text"]
    for heading in ("What this report covers", "Findings in brief", "Limits and cautions",
                    "Reproducing this report", "Review and sign-off", *ELECTROLYTES):
        assert heading in text


# Text width of a page at 96 CSS px per inch with the stylesheet's 14 mm side margins:
# A4 is 210 mm wide (ISO 216), Letter 8.5 in (ANSI/ASME Y14.1); the narrower one decides.
A4_TEXT_PX = round((210 - 2 * 14) / 25.4 * 96)
LETTER_TEXT_PX = round((8.5 * 25.4 - 2 * 14) / 25.4 * 96)


@pytest.mark.parametrize("width", [A4_TEXT_PX, LETTER_TEXT_PX], ids=["A4", "Letter"])
def test_print_layout_fits_the_paper_width(tmp_path_factory, seeded_store_file: Path, width: int) -> None:
    rep = shared_report(tmp_path_factory, seeded_store_file)
    info = print_overflow(rep["out"] / "report.html", tmp_path_factory.mktemp("chromium-print"), width)
    assert info["width"] == width
    assert info["over"] == []
