"""The PDF report: every page rendered by poppler is non-blank, and its text holds the verdict
table (each electrolyte, model and verdict of the comparison)."""

from __future__ import annotations

import json
import re
import subprocess
from pathlib import Path

import pytest
from test_report_common import non_blank, poppler, shared_report


@pytest.fixture(scope="module")
def report(tmp_path_factory: pytest.TempPathFactory, seeded_store_file: Path) -> dict:
    return shared_report(tmp_path_factory, seeded_store_file)


def test_every_pdf_page_is_non_blank(report: dict, tmp_path: Path) -> None:
    subprocess.run([poppler("pdftoppm"), "-r", "40", "-png", str(report["out"] / "report.pdf"),
                    str(tmp_path / "page")], check=True)
    pages = sorted(tmp_path.glob("page*.png"))
    assert len(pages) >= 4
    for p in pages:
        share, levels = non_blank(p.read_bytes())
        assert share > 0.005 and levels > 5, p.name


def test_pdf_text_holds_the_verdict_table(report: dict) -> None:
    text = subprocess.run([poppler("pdftotext"), "-layout", str(report["out"] / "report.pdf"), "-"],
                          check=True, capture_output=True, text=True).stdout
    assert "Findings in brief" in text
    assert "Verdict per model" in text
    records = json.loads((report["out"] / "manifest.json").read_text(encoding="utf-8"))["results"]["records"]
    lines = text.splitlines()
    for r in records:
        # the first printed line of each row: electrolyte, model, k, both validity ranges, and the
        # verdict's first word (the verdict wraps below within its column)
        pub, ref = (("–" if v is None else f"{v:g}") for v in (r["valid_up_to_published"],
                                                                r["valid_up_to_refit"]))
        pattern = re.compile(rf"^\s*{re.escape(r['electrolyte'])}(\s+\[recommended\])?\s+"
                             rf"{re.escape(r['model'])}\s+{r['n_params']}\s+{re.escape(pub)}\s+"
                             rf"{re.escape(ref)}\s+{re.escape(r['verdict'].split()[0])}")
        assert any(pattern.search(line) for line in lines), (r["electrolyte"], r["model"])
