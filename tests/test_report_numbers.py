"""Numbers in the report equal those of ``saltbench compare --format json`` for the same options:
exactly in the CSV tables and the manifest, to the printed digits in the HTML tables."""

from __future__ import annotations

import csv
import json
import math
from html.parser import HTMLParser
from pathlib import Path

import pytest
from test_report_common import ELECTROLYTES, MODELS, run, shared_report

NUMERIC = ["n_params", "n_points", "rms_ln_gamma", "max_ln_gamma", "rms_osmotic", "max_osmotic",
           "chi2_reduced", "heldout_rms_ln_gamma", "heldout_rms_osmotic", "aicc", "bic",
           "valid_up_to_published", "valid_up_to_refit"]
# HTML table -> {column heading: compare JSON field} (the tables' own headings)
HTML_COLUMNS = {
    "verdicts": {"k": "n_params", "valid to, published (mol/kg)": "valid_up_to_published",
                 "valid to, refitted (mol/kg)": "valid_up_to_refit"},
    "errors": {"rms Δln γ±": "rms_ln_gamma", "max Δln γ±": "max_ln_gamma", "rms Δφ": "rms_osmotic",
               "max Δφ": "max_osmotic", "held-out Δln γ±": "heldout_rms_ln_gamma",
               "held-out Δφ": "heldout_rms_osmotic", "AICc": "aicc"},
}


@pytest.fixture(scope="module")
def both(tmp_path_factory: pytest.TempPathFactory, seeded_store_file: Path) -> tuple[dict, list[dict]]:
    rep = shared_report(tmp_path_factory, seeded_store_file)
    code, out, err = run(rep["store"], "compare", *ELECTROLYTES, "--models", MODELS, "--jobs", "1",
                         "--format", "json")
    assert code == 0, err
    return rep, json.loads(out)


def _by_key(records):
    return {(r["electrolyte"], r["model"]): r for r in records}


def test_csv_results_equal_compare_json_exactly(both) -> None:
    rep, records = both
    with open(rep["out"] / "tables" / "results.csv", newline="", encoding="utf-8") as fh:
        rows = _by_key(csv.DictReader(fh))
    expected = _by_key(records)
    assert set(rows) == set(expected)
    for key, r in expected.items():
        for field in NUMERIC:
            cell = rows[key][field]
            assert (cell == "") == (r[field] is None), (key, field)
            if r[field] is not None:
                assert float(cell) == r[field], (key, field)
        assert rows[key]["verdict"] == r["verdict"]
        assert rows[key]["recommended"] == ("true" if r["recommended"] else "false")


def test_csv_parameters_equal_compare_json_exactly(both) -> None:
    rep, records = both
    with open(rep["out"] / "tables" / "parameters.csv", newline="", encoding="utf-8") as fh:
        rows = {(r["electrolyte"], r["model"], r["parameter"]): r for r in csv.DictReader(fh)}
    n = 0
    for r in records:
        for p in r["parameters"]:  # compare lists the fitted (free) parameters
            row = rows[(r["electrolyte"], r["model"], p["name"])]
            assert float(row["value"]) == p["value"]
            assert (row["stderr"] == "") == (p["stderr"] is None)
            if p["stderr"] is not None:
                assert float(row["stderr"]) == p["stderr"]
            n += 1
    assert n >= 5  # Pitzer's three and one each for Bromley and extended Debye-Hückel, twice over


def test_manifest_records_equal_compare_json(both) -> None:
    rep, records = both
    manifest = json.loads((rep["out"] / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["results"]["records"] == records


class _Tables(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tables: dict[str, list[list[str]]] = {}
        self._key = None
        self._cell: list[str] | None = None
        self._skip = 0

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "table" and a.get("data-table"):
            self._key = a["data-table"]
            self.tables[self._key] = []
        elif self._key and tag == "tr":
            self.tables[self._key].append([])
        elif self._key and tag in ("td", "th"):
            self._cell = []
        elif tag == "span" and "badge" in (a.get("class") or ""):
            self._skip += 1

    def handle_endtag(self, tag):
        if tag == "table":
            self._key = None
        elif tag in ("td", "th") and self._cell is not None and self._key:
            self.tables[self._key][-1].append("".join(self._cell).strip())
            self._cell = None
        elif tag == "span" and self._skip:
            self._skip -= 1

    def handle_data(self, data):
        if self._cell is not None and not self._skip:
            self._cell.append(data)


def test_html_verdict_tables_show_the_compare_numbers(both) -> None:
    rep, records = both
    p = _Tables()
    p.feed((rep["out"] / "report.html").read_text(encoding="utf-8"))
    expected = _by_key(records)
    for table, columns in HTML_COLUMNS.items():
        head, *body = p.tables[table]
        assert len(body) == len(expected)
        for row in body:
            cells = dict(zip(head, row))
            r = expected[(cells["Electrolyte"], cells["Model"])]
            for col, field in columns.items():
                if r[field] is None:
                    assert cells[col] == "–", (col, r[field])
                else:  # four significant figures are printed
                    assert math.isclose(float(cells[col]), r[field], rel_tol=5e-4), (col, cells[col], r[field])
            if table == "verdicts":
                assert cells["Verdict"] == r["verdict"]
    recs = {r["Electrolyte"]: r for r in (dict(zip(p.tables["recommendations"][0], x))
                                          for x in p.tables["recommendations"][1:])}
    for name in ELECTROLYTES:
        best = [r["model"] for r in records if r["electrolyte"] == name and r["recommended"]]
        assert recs[name]["Recommended model"] == (best[0] if best else "none")


def test_residual_figures_rest_on_the_fitted_residuals(both) -> None:
    """The residuals the report re-evaluates for its figures reproduce each fit's RMS."""
    from saltbench.api import Session, compare
    from saltbench.comparison.settings import CompareSettings
    from saltbench.report.residuals import refit_residuals

    rep, records = both
    s = Session(rep["store"])
    comp = compare(s, list(ELECTROLYTES), CompareSettings(models=tuple(MODELS.split(","))))
    res = refit_residuals(comp, s.registry, {n: s.electrolyte(n) for n in ELECTROLYTES})
    for r in records:
        got = res[(r["electrolyte"], r["model"])]
        assert math.isclose(got.rms("ln_gamma"), r["rms_ln_gamma"], rel_tol=1e-9)
        if r["rms_osmotic"] is not None:
            assert math.isclose(got.rms("osmotic"), r["rms_osmotic"], rel_tol=1e-9)
    s.store.close()
