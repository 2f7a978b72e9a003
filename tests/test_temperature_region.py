"""Validity over temperature and molality (issue 21, item 5): ``compare`` and ``report`` with
``--temperatures``.

The data are synthetic and invented for these tests (a thermostatted cell series at 0, 25, 50 and
75 °C, "Tern Marsh bench"): ln gamma± of NaCl generated from the Pitzer equations with the
Silvester-Pitzer temperature coefficients of NaCl as bundled (Silvester and Pitzer, J. Phys.
Chem. 81, 1822 (1977), from memory, as tabulated in Pitzer, Activity Coefficients in Electrolyte
Solutions, 2nd ed., 1991; each parameter carried linearly in T - 298.15 K, computed here by hand),
plus normal noise of standard deviation 0.001 (seed 7). In the "stepped" series every value above a
stated molality at each temperature is shifted by +0.05, five times the tolerance, so the
published set holds there exactly up to the last data molality below the step: the expected
region is known from the construction, not from our output.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import pytest
from conftest import write

TR = 298.15
# Silvester and Pitzer (1977), NaCl: 25 °C value and first temperature derivative (1/K), from memory
# (as in refdata/parameters/silvester-pitzer-1977.csv)
SP_NACL = {"beta0": (0.0765, 7.159e-4), "beta1": (0.2664, 7.005e-4), "C_phi": (0.00127, -10.54e-5)}
GRID = np.array([0.1, 0.2, 0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0])
TEMPS_C = (0, 25, 50, 75)
# the molality above which the stepped series leaves the model, and the region that follows:
# the highest grid molality below each step
STEP = {0: 1.2, 25: 2.2, 50: 3.5, 75: 4.5}
EXPECTED_REACH = {0: 1.0, 25: 2.0, 50: 3.0, 75: 4.0}
SHIFT = 0.05
NOISE = 0.001

SOURCES = """[tern-steps-2026]
authors: A. Operator
title: Invented thermostatted cell series with a step (invented for the tests)
publisher: saltbench tests
year: 2026
note: invented for the tests

[tern-clean-2026]
authors: A. Operator
title: Invented thermostatted cell series (invented for the tests)
publisher: saltbench tests
year: 2026
note: invented for the tests
"""


def _truth(t_k: float, m: np.ndarray) -> np.ndarray:
    from saltbench.api import plugin_registry
    from saltbench.chemistry.electrolyte import parse_formula
    from saltbench.models.evaluate import evaluate, make_context

    e = parse_formula("NaCl")
    values = {k: c0 + c1 * (t_k - TR) for k, (c0, c1) in SP_NACL.items()}
    return evaluate(plugin_registry().model("pitzer"), e, m, values, ctx=make_context(e, t_k)).ln_gamma_pm


def _dataset(source: str, tc: int, values: np.ndarray) -> str:
    rows = "\n".join(f"{m:g},{v:.6f}" for m, v in zip(GRID, values))
    return (f"# saltbench dataset 1\n# electrolyte: NaCl\n# property: gamma_pm\n# basis: ln\n# scale: molality\n"
            f"# temperature: {tc} C\n# source: {source}\n# table: invented\n# precision: 0.000001\n"
            f"# uncertainty: {NOISE}\n# typed: measured by A. Operator, Tern Marsh bench (invented)\n"
            f"molality,value\n{rows}\n")


@pytest.fixture(scope="module")
def region_store(tmp_path_factory, seeded_store_file) -> Path:
    from conftest import copy_store

    from saltbench.api import Session

    folder = tmp_path_factory.mktemp("tern")
    write(folder / "tern.sources.txt", SOURCES)
    rng = np.random.default_rng(7)
    for tc in TEMPS_C:
        clean = _truth(273.15 + tc, GRID) + rng.normal(0.0, NOISE, GRID.size)
        write(folder / f"NaCl.gamma_pm.tern-clean-{tc}.csv", _dataset("tern-clean-2026", tc, clean))
        stepped = clean + np.where(GRID > STEP[tc], SHIFT, 0.0)
        write(folder / f"NaCl.gamma_pm.tern-steps-{tc}.csv", _dataset("tern-steps-2026", tc, stepped))
    store = copy_store(seeded_store_file, folder / "store.sqlite")
    session = Session(store)
    session.add([folder])
    session.store.close()
    return store


def _region(store: Path, source: str, models: tuple[str, ...] = ("pitzer",), *, beyond: bool = False,
            across=None):
    from saltbench.api import Session, compare_over_temperature
    from saltbench.comparison.settings import CompareSettings

    settings = CompareSettings(models=models, datasets=(source,), temperatures_k=(273.15, 353.15),
                               published_beyond_range=beyond)
    return compare_over_temperature(Session(store), ["NaCl"], settings, across=across)


def _cells(over, model: str, kind: str) -> dict[int, object]:
    from saltbench.comparison.region import ColumnKind

    col = over.regions["NaCl"].column(model, ColumnKind(kind))
    assert col is not None
    return {round(c.temperature_k - 273.15): c for c in col.cells}


def test_the_published_region_is_the_one_the_data_were_built_with(region_store) -> None:
    from saltbench.comparison.region import CellState

    over = _region(region_store, "tern-steps-2026")
    assert over.regions["NaCl"].temperatures_k == (273.15, 298.15, 323.15, 348.15)
    cells = _cells(over, "pitzer", "published")
    for tc in (0, 25, 50):  # inside 0-50 °C, where the bundled set says its form holds
        assert cells[tc].state is CellState.WITHIN, cells[tc]
        assert cells[tc].reach == pytest.approx(EXPECTED_REACH[tc], rel=1e-12)
        assert cells[tc].set_id == "silvester-pitzer-1977" and not cells[tc].data_end
    # 75 °C lies outside the set's 0-50 °C: not judged, not extrapolated silently
    assert cells[75].state is CellState.NOT_JUDGED and cells[75].reach is None
    assert cells[75].set_range_k == (273.15, 323.15)
    assert cells[75].text == "not judged"
    statement = over.regions["NaCl"].statement
    assert "silvester-pitzer-1977" in statement and "over 0-50 °C" in statement
    assert "not judged at 75 °C: outside 0-50 °C" in statement


def test_asked_to_judge_beyond_the_authors_range_the_region_goes_on(region_store) -> None:
    from saltbench.comparison.region import CellState
    from saltbench.fitting.flags import FlagKind

    over = _region(region_store, "tern-steps-2026", beyond=True)
    cells = _cells(over, "pitzer", "published")
    assert [cells[tc].reach for tc in TEMPS_C] == pytest.approx([EXPECTED_REACH[tc] for tc in TEMPS_C])
    assert cells[75].state is CellState.WITHIN
    # marked as judged beyond the authors' temperatures, there and only there
    assert [cells[tc].beyond for tc in TEMPS_C] == [False, False, False, True]
    assert cells[75].text == "4^"
    assert "at 75 °C judged beyond the temperatures its authors fitted it to" in over.regions["NaCl"].statement
    # the comparison at 75 °C still carries the mark that the set was used beyond its range
    out = next(o for o in over.comparisons[348.15].outcomes["NaCl"] if o.model == "pitzer")
    assert any(f.kind is FlagKind.PUBLISHED_TEMPERATURE_RANGE for f in out.flags)


def test_a_set_of_one_temperature_is_judged_at_that_temperature_only(region_store) -> None:
    from saltbench.comparison.region import CellState

    # the bundled Bromley set holds values at 25 °C only (no temperature form)
    over = _region(region_store, "tern-clean-2026", ("bromley",))
    cells = _cells(over, "bromley", "published")
    assert cells[25].state in (CellState.WITHIN, CellState.NONE_VALID)
    for tc in (0, 50, 75):
        assert cells[tc].state is CellState.NOT_JUDGED
        assert cells[tc].set_range_k == (298.15, 298.15)


def test_a_model_refitted_to_its_own_clean_data_holds_to_the_end_at_every_temperature(region_store) -> None:
    """Data made by the Pitzer equations with noise a tenth of the tolerance: refitted, the same
    equations stay within tolerance to the highest molality at every temperature (a fact of the
    trade: a model describes data of its own form; common practice, no source)."""
    from saltbench.comparison.region import CellState

    over = _region(region_store, "tern-clean-2026")
    for kind in ("refitted", "published"):
        cells = _cells(over, "pitzer", kind)
        judged = TEMPS_C if kind == "refitted" else (0, 25, 50)
        for tc in judged:
            assert cells[tc].state is CellState.WITHIN and cells[tc].reach == pytest.approx(6.0), (kind, tc)
            assert cells[tc].data_end and cells[tc].text == "6*"
    region = over.regions["NaCl"]
    assert {t: rec.model for t, rec in region.recommended.items()} == dict.fromkeys(region.temperatures_k,
                                                                                        "pitzer")
    assert "refitted at each temperature: Pitzer [pitzer] up to 6 mol/kg over 0-75 °C" in region.statement


def test_judge_cells_takes_the_last_molality_below_the_first_miss() -> None:
    from saltbench.comparison.region import CellState, judge_cells
    from saltbench.fitting.data import FitData

    m = np.array([0.1, 0.5, 1.0, 2.0, 0.1, 0.5, 1.0, 2.0])
    t = np.array([298.15] * 4 + [318.15] * 4)
    value = np.zeros(8)
    pred = np.array([0.0, 0.005, 0.02, 0.0, 0.02, 0.0, 0.0, 0.0])  # misses at 1.0 (25 °C), at 0.1 (45 °C)
    data = FitData(m, value, np.full(8, 0.001), "ln_gamma", "x")
    cells = judge_cells(pred, data, t, [298.15, 318.15], {"ln_gamma": 0.01, "osmotic": 0.01})
    assert cells[0].state is CellState.WITHIN and cells[0].reach == 0.5 and not cells[0].data_end
    assert cells[1].state is CellState.NONE_VALID


def test_a_fit_across_temperatures_plugs_in_as_a_third_column(region_store) -> None:
    """The seam for fitting across temperatures: a callable given every temperature's data at once.
    Here a stand-in that returns the stated truth (the data's own generating model) gives the
    constructed region; one that raises gives failed cells, not a stopped comparison."""
    from saltbench.comparison.region import CellState
    from saltbench.errors import SaltbenchError

    seen = {}

    def truth(model, electrolyte, data, temperature_k):
        seen["n"], seen["temps"] = data.n, sorted(set(temperature_k.tolist()))
        return np.concatenate([_truth(t, np.array([m])) for m, t in zip(data.molality, temperature_k)])

    over = _region(region_store, "tern-steps-2026", across=truth)
    assert seen == {"n": 4 * GRID.size, "temps": [273.15, 298.15, 323.15, 348.15]}
    cells = _cells(over, "pitzer", "across")
    assert [cells[tc].reach for tc in TEMPS_C] == pytest.approx([EXPECTED_REACH[tc] for tc in TEMPS_C])
    assert "fitted across temperatures, Pitzer [pitzer]" in over.regions["NaCl"].statement

    def broken(model, electrolyte, data, temperature_k):
        raise SaltbenchError("no temperature form for this model")

    cells = _cells(_region(region_store, "tern-steps-2026", across=broken), "pitzer", "across")
    assert all(c.state is CellState.FAILED and "no temperature form" in c.detail for c in cells.values())


def test_compare_cli_prints_the_region_tables_and_json(run_main, region_store) -> None:
    code, out, err = run_main("compare", "NaCl", "--data", "tern-steps-2026", "--models", "pitzer",
                              "--temperatures", "0:80 C", "--jobs", "1", store=region_store)
    assert code == 0, err
    lines = out.splitlines()
    header = next(i for i, line in enumerate(lines) if "published set" in line)
    rows = [line.split() for line in lines[header + 3:header + 7]]
    assert rows == [["0", "273.15", "1"], ["25", "298.15", "2"], ["50", "323.15", "3"],
                    ["75", "348.15", "not", "judged"]]
    code, out, err = run_main("compare", "NaCl", "--data", "tern-steps-2026", "--models", "pitzer",
                              "--temperatures", "273.15:353.15", "--format", "json", "--jobs", "1",
                              store=region_store)
    assert code == 0, err
    doc = json.loads(out)
    pub = {r["temperature_c"]: r for r in doc["region"] if r["column"] == "published"}
    assert pub[75.0]["state"] == "not-judged" and pub[50.0]["valid_up_to"] == pytest.approx(3.0)
    assert {r["temperature_k"] for r in doc["per_temperature"]} == {273.15, 298.15, 323.15, 348.15}
    assert doc["recommendations"][0]["electrolyte"] == "NaCl"


@pytest.mark.parametrize("args, message", [
    (["--temperatures", "50:0 C"], "Error: --temperatures: '50:0 C' is not a range (LO must be below HI)"),
    (["--temperatures", "warm"], "Error: --temperatures: expected LO:HI, e.g. '273.15:323.15' (K) or '0:50 C', "
                                 "found 'warm'"),
    (["--temperatures", "0:50 F"], "Error: --temperatures: expected a temperature with its unit, e.g. '25 C' or "
                                   "'298.15 K', found '50 F'"),
    (["--temperatures", "0:50"], "Error: --temperatures: 50 K looks like a Celsius temperature given as K "
                                 "(did you mean '50 C'?)"),
    (["--temperatures", "0:900 C"], "Error: --temperatures: '0:900 C' lies outside liquid water's 200-650 K"),
    (["--published-beyond-range"], "Error: --published-beyond-range goes with --temperatures"),
    (["--temperatures", "100:120 C"], "Error: no data for NaCl between 373.15 and 393.15 K; its data are at "
                                      "273.15, 298.15, 323.15, 348.15 K"),
])
@pytest.mark.parametrize("command", ["compare", "report"])
def test_bad_temperature_options_are_one_line_and_exit_2(run_main, region_store, tmp_path, command, args,
                                                         message) -> None:
    extra = ["--out", str(tmp_path / "r")] if command == "report" else []
    code, out, err = run_main(command, "NaCl", *args, *extra, store=region_store)
    assert code == 2
    assert err.strip() == message
    assert not (tmp_path / "r").exists()


def test_temperatures_do_not_go_with_a_mixture(run_main, region_store) -> None:
    code, _, err = run_main("compare", "--mixture", "HCl + NaCl", "--temperatures", "0:50 C", store=region_store)
    assert code == 2 and err.strip() == "Error: --temperatures goes with electrolytes, not with --mixture"


def test_report_has_the_region_section_figure_csv_and_reruns_from_its_manifest(run_main, region_store,
                                                                              tmp_path) -> None:
    out_dir = tmp_path / "rep"
    code, out, err = run_main("report", "NaCl", "--data", "tern-steps-2026", "--models", "pitzer,davies",
                              "--temperatures", "0:80 C", "--out", str(out_dir), "--jobs", "1", store=region_store)
    assert code == 0, err
    assert "NaCl: Pitzer [pitzer] with the published set silvester-pitzer-1977" in out
    md = (out_dir / "report.md").read_text(encoding="utf-8")
    assert "2.1 Validity over temperature and molality" in md and "2.1.1 NaCl" in md
    assert "figures/nacl-1.region.png" in md
    html = (out_dir / "report.html").read_text(encoding="utf-8")
    assert "Validity over temperature and molality" in html and "not judged" in html
    png = (out_dir / "figures" / "nacl-1.region.png").read_bytes()
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert (out_dir / "report.pdf").read_bytes()[:5] == b"%PDF-"
    with (out_dir / "tables" / "region.csv").open(encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    pub = {r["temperature_c"]: r for r in rows if r["model"] == "pitzer" and r["column"] == "published"}
    assert [float(pub[f"{tc}.0" if tc else "0.0"]["valid_up_to"]) for tc in (0, 25, 50)] == [1.0, 2.0, 3.0]
    assert pub["75.0"]["state"] == "not-judged" and pub["75.0"]["set_range_k"] == "273.15-323.15"
    manifest = json.loads((out_dir / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["command"]["settings"]["temperatures_k"] == [273.15, 353.15]
    assert manifest["temperature_region"]["range_k"] == [273.15, 353.15]
    assert manifest["temperature_region"]["reference_k"] == 298.15
    assert "--temperatures 273.15:353.15" in manifest["command"]["line"]

    code, out, err = run_main("report", "--from", str(out_dir / "manifest.json"), "--jobs", "1", store=region_store)
    assert code == 0, err
    assert "Results agree with the manifest." in out
    again = json.loads((tmp_path / "rep-rerun" / "manifest.json").read_text(encoding="utf-8"))
    assert again["temperature_region"]["records"] == manifest["temperature_region"]["records"]

    # a region cell changed in the manifest is found by the re-run
    cell = next(r for r in manifest["temperature_region"]["records"]
                if r["model"] == "pitzer" and r["column"] == "published" and r["temperature_c"] == 50.0)
    cell["valid_up_to"] = 5.0
    edited = tmp_path / "edited" / "manifest.json"
    write(edited, json.dumps(manifest))
    code, out, _ = run_main("report", "--from", str(edited), "--out", str(tmp_path / "rerun2"), "--jobs", "1",
                            store=region_store)
    assert code == 1
    assert "NaCl pitzer (published) at 323.15 K.valid_up_to: 5.0 then, 3.0 now" in out


def test_without_temperatures_the_settings_record_is_as_before() -> None:
    from saltbench.comparison.settings import CompareSettings

    d = CompareSettings().to_dict()
    assert "temperatures_k" not in d and "published_beyond_range" not in d
    d = CompareSettings(temperatures_k=(273.15, 323.15), published_beyond_range=True).to_dict()
    assert d["temperatures_k"] == [273.15, 323.15] and d["published_beyond_range"] is True


def test_a_salt_without_data_at_the_detailed_temperature_is_still_in_the_region(region_store, tmp_path) -> None:
    """KCl's bundled data are all at 25 °C; the report details 50 °C, where only NaCl has data."""
    from saltbench.api import Session, make_report
    from saltbench.comparison.settings import CompareSettings

    settings = CompareSettings(models=("pitzer",), temperatures_k=(273.15, 353.15), temperature_k=323.15)
    result = make_report(Session(region_store), ["NaCl", "KCl"], settings, folder=tmp_path / "two")
    assert result.manifest["command"]["electrolytes"] == ["NaCl", "KCl"]
    assert result.manifest["temperature_region"]["temperatures_k"]["KCl"] == [298.15]
    assert result.manifest["temperature_region"]["reference_k"] == 323.15
    md = (tmp_path / "two" / "report.md").read_text(encoding="utf-8")
    assert "KCl has no data at 50 °C and appears only here." in md
    assert "2.1.2 KCl" in md and "## 3 NaCl" in md and "## 4 KCl" not in md


def test_the_temperatures_are_those_of_the_data_chosen(region_store, run_main) -> None:
    over = _region(region_store, "NaCl.gamma_pm.tern-steps-50")
    assert over.regions["NaCl"].temperatures_k == (323.15,)
    assert "at 50 °C only" in over.regions["NaCl"].statement
    code, _, err = run_main("compare", "NaCl", "--data", "no-such-source", "--temperatures", "0:80 C",
                            store=region_store)
    assert code == 2 and err.startswith("Error: --data: no dataset, source or origin 'no-such-source' for NaCl")
    code, _, err = run_main("compare", "NaCl", "--data", "tern-steps-2026", "--temperatures", "30:40 C",
                            store=region_store)
    assert code == 2 and err.strip() == ("Error: no data for NaCl between 303.15 and 313.15 K; its data are at "
                                         "273.15, 298.15, 323.15, 348.15 K")
    code, _, err = run_main("compare", "NaCl", "--data", "NaCl.gamma_pm.tern-steps-0", "--temperatures", "20:80 C",
                            store=region_store)
    assert code == 2 and err.strip() == ("Error: no data for NaCl between 293.15 and 353.15 K; its data chosen are "
                                         "at 273.15 K")


def test_compare_all_lists_the_salts_without_data_in_the_range(run_main, region_store) -> None:
    code, out, err = run_main("compare", "--all", "--models", "davies", "--temperatures", "0:10 C", "--format",
                              "json", "--jobs", "1", store=region_store)
    assert code == 0, err
    doc = json.loads(out)
    assert {r["electrolyte"] for r in doc["region"]} == {"NaCl"}
    assert "KCl" in doc["without_data"] and "NaCl" not in doc["without_data"]


def test_worker_processes_give_the_region_of_one_process(region_store) -> None:
    """Every temperature's tasks share one pool; each result must land at its own temperature."""
    from saltbench.api import Session, compare_over_temperature
    from saltbench.comparison.settings import CompareSettings

    settings = CompareSettings(models=("pitzer", "davies"), datasets=("tern-steps-2026",),
                               temperatures_k=(273.15, 353.15))
    one = compare_over_temperature(Session(region_store), ["NaCl"], settings, jobs=1)
    two = compare_over_temperature(Session(region_store), ["NaCl"], settings, jobs=2)
    assert two.records() == one.records()
    assert [c.settings.temperature_k for c in two.comparisons.values()] == list(two.comparisons)


def test_the_region_figure_is_the_same_bytes_twice_and_has_a_panel_per_column(region_store) -> None:
    from saltbench.report.figures import model_styles
    from saltbench.report.region_figures import region_figure

    def across(model, electrolyte, data, temperature_k):
        return np.concatenate([_truth(t, np.array([m])) for m, t in zip(data.molality, temperature_k)])

    region = _region(region_store, "tern-steps-2026", across=across).regions["NaCl"]
    styles = model_styles(["pitzer"])
    first, second = region_figure(region, styles, "k"), region_figure(region, styles, "k")
    assert first.png == second.png and first.png[:8] == b"\x89PNG\r\n\x1a\n"
    assert [str(k) for k in region.kinds()] == ["published", "refitted", "across"]


def test_the_statement_reads_each_stretch_of_temperatures_by_its_outcome() -> None:
    """Wording from typed cells and recommendations built by hand (no comparison run)."""
    from saltbench.comparison.ranking import Recommendation, RecommendationKind
    from saltbench.comparison.region import CellState, ColumnKind, ElectrolyteRegion, ModelRegion, RegionCell

    temps = (273.15, 298.15, 323.15)
    region = ElectrolyteRegion("NaCl", temps, model_names={"bdot": "B-dot", "pitzer": "Pitzer"})
    region.columns.append(ModelRegion("pitzer", "Pitzer", ColumnKind.PUBLISHED, tuple(
        RegionCell(t, CellState.NOT_JUDGED, set_id="s", set_range_k=(298.15, 298.15)) for t in temps)))
    region.recommended = {
        273.15: Recommendation("NaCl", None, 2.0, kind=RecommendationKind.TOO_FEW_POINTS, n_points=2),
        298.15: Recommendation("NaCl", "bdot", 0.5),
        323.15: Recommendation("NaCl", "bdot", 0.5)}
    assert region.statement == ("no published set could be judged: every one lies outside the temperatures its "
                                "authors fitted it to; refitted at each temperature: too few points to judge at 0 °C "
                                "only; B-dot [bdot] up to 0.5 mol/kg over 25-50 °C (2 data temperatures).")


def test_the_built_in_fit_across_temperatures_holds_on_data_of_its_own_form(region_store) -> None:
    """The third column made by saltbench's own fit across temperatures (settings.across_form):
    data generated by Pitzer's equations with parameters linear in T (the Silvester-Pitzer NaCl
    derivatives, from memory, above) lie inside the reference-expansion form, so one fit to all
    four temperatures holds to the highest molality at each (common practice, no source: a model
    describes data of its own form). The setting is recorded only when given."""
    from dataclasses import replace

    from saltbench.api import Session, compare_over_temperature
    from saltbench.comparison.region import CellState
    from saltbench.comparison.settings import CompareSettings

    settings = CompareSettings(models=("pitzer",), datasets=("tern-clean-2026",),
                               temperatures_k=(273.15, 353.15), across_form="reference-expansion")
    over = compare_over_temperature(Session(region_store), ["NaCl"], settings)
    cells = _cells(over, "pitzer", "across")
    assert all(cells[tc].state is CellState.WITHIN and cells[tc].reach == pytest.approx(6.0) for tc in TEMPS_C)
    assert settings.to_dict()["across_form"] == "reference-expansion"
    assert "across_form" not in replace(settings, across_form=None).to_dict()
    # the same data with a step: the one fit cannot follow it and falls short at every temperature
    stepped = compare_over_temperature(Session(region_store), ["NaCl"],
                                       replace(settings, datasets=("tern-steps-2026",)))
    reach = _cells(stepped, "pitzer", "across")
    assert all(reach[tc].reach is None or reach[tc].reach < 6.0 for tc in TEMPS_C)


def test_fit_across_on_the_command_line(run_main, region_store) -> None:
    code, out, err = run_main("--store", str(region_store), "compare", "NaCl", "--models", "pitzer",
                              "--data", "tern-clean-2026", "--temperatures", "0:80 C",
                              "--fit-across", "reference-expansion")
    assert code == 0, err
    assert "across" in out.lower()
    code, out, err = run_main("--store", str(region_store), "compare", "NaCl", "--fit-across", "constant")
    assert code == 2 and "--fit-across goes with --temperatures" in err


def test_fit_across_does_not_go_with_a_mixture_or_an_electrode(run_main, region_store) -> None:
    for args, where in ((("compare", "--mixture", "HCl + NaCl"), "--mixture"),
                        (("report", "--mixture", "HCl + NaCl"), "--mixture"),
                        (("report", "--electrode", "any-set"), "--electrode")):
        code, _, err = run_main("--store", str(region_store), *args, "--fit-across", "linear")
        assert code == 2 and f"--fit-across goes with electrolytes, not with {where}" in err
        assert len(err.strip().splitlines()) == 1
