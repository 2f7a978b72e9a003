"""Reduction of stored readings through the command line: round trips against handbook values,
the link from a reduced dataset to its readings and method, and re-reduction after a fix."""

from __future__ import annotations

import json
import math
import sqlite3
from pathlib import Path

import numpy as np
import pytest
from conftest import REFDATA, write
from scipy import constants as c
from scipy.interpolate import CubicSpline
from scipy.optimize import brentq

F = c.physical_constants["Faraday constant"][0]
# E°(Ag/AgCl) = 0.22234 V at 25 °C: from memory of Bates and Bower, J. Res. NBS 53, 283 (1954).
E_AGCL = 0.22234
# gamma±(HCl) at 25 °C: from memory of the CRC Handbook table "Mean Activity Coefficients of
# Electrolytes as a Function of Concentration" (HCl column, after Hamer and Wu, J. Phys. Chem. Ref.
# Data 1, 1047 (1972)), as bundled in refdata/datasets/HCl.gamma_pm.crc-handbook.csv.
HCL_M = np.array([0.001, 0.002, 0.005, 0.010, 0.020, 0.050, 0.100, 0.200, 0.500, 1.000, 2.000])
HCL_GAMMA = np.array([0.965, 0.952, 0.929, 0.905, 0.876, 0.832, 0.797, 0.768, 0.759, 0.811, 1.009])
# Molal osmotic coefficients at 25 °C: from memory of Robinson and Stokes, Electrolyte Solutions,
# 2nd ed. (1959), appendix (as bundled in refdata/datasets/*.osmotic.robinson-stokes-1959.csv).
NACL_M = np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0, 1.2, 1.4])
NACL_PHI = np.array([0.9324, 0.9245, 0.9215, 0.9203, 0.9209, 0.9230, 0.9257, 0.9288, 0.9320,
                     0.9355, 0.9428, 0.9513])
KCL_M = np.array([0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0])
KCL_PHI = np.array([0.9130, 0.9063, 0.9017, 0.8989, 0.8976, 0.8970, 0.8970, 0.8971, 0.8974])
# Molar mass of water 2 x 1.008 + 15.999 = 18.015 g/mol: IUPAC abridged standard atomic weights
# (from memory of the IUPAC table).
M_W = 0.018015

BIB = """[own-notebook-5]
authors: A. Operator
title: Bench notebook 5 (test entry)
publisher: test bench
year: 2024
"""


def _emf_file(path: Path, m: np.ndarray, emf_v: np.ndarray, extra: str = "") -> Path:
    rows = "".join(f"{a:.4f},{e * 1000:.4f}\n" for a, e in zip(m, emf_v))
    return write(path, f"""# saltbench readings 1
# kind: emf
# id: hcl-cell
# electrolyte: HCl
# temperature: 25 C
# source: own-notebook-5
# typed: measured by the test operator at bench 5
# cell: Pt | H2 | HCl(m) | AgCl | Ag
# u_emf: 0.01 mV
{extra}molality,emf_mv
{rows}""")


def harned_emf(m: np.ndarray, gamma: np.ndarray, t: float = 298.15) -> np.ndarray:
    # Pt | H2 | HCl(m) | AgCl | Ag: E = E° - (2RT/F) ln(m gamma±) (Harned and Owen, The Physical
    # Chemistry of Electrolytic Solutions, 3rd ed., 1958, ch. 11), written out independently.
    return E_AGCL - 2 * c.R * t / F * np.log(m * gamma)


def _add(run_main, store: Path, *paths: Path) -> None:
    code, _, err = run_main("readings", "add", *map(str, paths), store=store)
    assert (code, err) == (0, ""), err


def _reduce(run_main, store: Path, *args: str) -> list[dict]:
    code, out, err = run_main("readings", "reduce", *args, "--format", "json", store=store)
    assert code == 0, err
    return json.loads(out)


@pytest.fixture
def bib(tmp_path: Path) -> Path:
    return write(tmp_path / "nb.sources.txt", BIB)


def test_emf_series_with_given_e_standard_reduces_back_to_handbook_gamma(
        run_main, seeded_store, bib, tmp_path) -> None:
    f = _emf_file(tmp_path / "hcl.csv", HCL_M, harned_emf(HCL_M, HCL_GAMMA),
                  f"# e_standard: {E_AGCL} V\n# u_e_standard: 0.02 mV\n")
    _add(run_main, seeded_store, bib, f)
    [rec] = _reduce(run_main, seeded_store, "hcl-cell")
    assert rec["method"] == "nernst-given-e0" and rec["dataset"] == "hcl-cell.gamma_pm"
    got = np.array([p["value"] for p in rec["points"]])
    assert np.max(np.abs(got - HCL_GAMMA)) < 0.001
    # u(ln gamma±) = hypot(u(E), u(E°)) / (2RT/F) (first-order propagation; common practice, no source)
    k = 2 * c.R * 298.15 / F
    u = np.array([p["uncertainty"] for p in rec["points"]])
    assert np.allclose(u, got * math.hypot(1e-5, 2e-5) / k, rtol=1e-6)


def test_extrapolation_recovers_the_standard_emf_within_0_1_mv(run_main, seeded_store, bib, tmp_path) -> None:
    f = _emf_file(tmp_path / "hcl.csv", HCL_M, harned_emf(HCL_M, HCL_GAMMA))
    _add(run_main, seeded_store, bib, f)
    code, out, err = run_main("readings", "show", "hcl-cell", "--format", "json", store=seeded_store)
    assert code == 0, err
    ext = json.loads(out)["extrapolation"]
    assert abs(ext["e_standard_v"] - E_AGCL) < 1e-4
    # only readings up to the default 0.1 mol/kg enter the extrapolation
    assert max(p["molality"] for p in ext["points"]) == pytest.approx(0.1)
    for p in ext["points"]:
        assert p["residual_v"] == pytest.approx(p["e_prime_v"] - p["line_v"], abs=1e-12)
    [rec] = _reduce(run_main, seeded_store, "hcl-cell")
    assert rec["method"] == "nernst-extrapolated-e0"
    got = np.array([p["value"] for p in rec["points"]])
    # E° within 0.1 mV moves ln gamma± by at most 1e-4 V / (2RT/F) = 0.002 (relative)
    assert np.max(np.abs(got / HCL_GAMMA - 1)) < 0.002 + 0.0006


def test_show_draws_the_extrapolation_plot(run_main, seeded_store, bib, tmp_path) -> None:
    f = _emf_file(tmp_path / "hcl.csv", HCL_M, harned_emf(HCL_M, HCL_GAMMA))
    _add(run_main, seeded_store, bib, f)
    png = tmp_path / "e0.png"
    code, out, err = run_main("readings", "show", "hcl-cell", "--plot", str(png), store=seeded_store)
    assert code == 0, err
    assert "plot data, E' against m" in out and "Caution:" in out
    # PNG signature (ISO/IEC 15948; common practice, no source)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def _isopiestic_pairs() -> np.ndarray:
    # NaCl molality in isopiestic equilibrium with each KCl molality: equal nu m phi (both 1-1),
    # from the two handbook osmotic columns (NaCl interpolated by a cubic spline).
    spline = CubicSpline(NACL_M, NACL_PHI)
    return np.array([brentq(lambda x, target=mk * pk: x * spline(x) - target, 0.1, 1.4)
                     for mk, pk in zip(KCL_M, KCL_PHI)])


def test_isopiestic_kcl_against_nacl_reduces_back_to_handbook_phi(run_main, seeded_store, bib, tmp_path) -> None:
    ref = _isopiestic_pairs()
    rows = "".join(f"{a:.4f},{b:.5f}\n" for a, b in zip(KCL_M, ref))
    f = write(tmp_path / "kcl-iso.csv", f"""# saltbench readings 1
# kind: isopiestic
# electrolyte: KCl
# temperature: 25 C
# source: own-notebook-5
# typed: measured by the test operator at bench 5
# reference: NaCl
# reference_model: pitzer
# reference_params: pitzer-mayorga-1973
# u_reference_molality: 0.05 %
# u_molality: 0.05 %
# u_reference_osmotic: 0.001
molality,reference_molality
{rows}""")
    _add(run_main, seeded_store, bib, f)
    [rec] = _reduce(run_main, seeded_store, "kcl-iso")
    assert rec["method"] == "isopiestic-ratio" and rec["property"] == "osmotic"
    assert "pitzer-mayorga-1973" in rec["note"]
    got = np.array([p["value"] for p in rec["points"]])
    assert np.max(np.abs(got - KCL_PHI)) < 0.002
    assert all(p["uncertainty"] > 0.001 for p in rec["points"])  # includes u(phi_ref) = 0.001


def test_water_activity_example_reduces_by_the_definition_of_phi(run_main, seeded_store) -> None:
    ex = REFDATA / "examples" / "readings-fenwick-quay"
    _add(run_main, seeded_store, ex)  # the folder: its bibliography and both invented sets
    [rec] = _reduce(run_main, seeded_store, "readings-fqcl-water-activity")
    text = (ex / "readings-fqcl-water-activity.csv").read_text()
    table = [line.split(",") for line in text.splitlines() if line[:1].isdigit()]
    m = np.array([float(a) for a, _ in table])
    aw = np.array([float(b) for _, b in table])
    # ln a_w = -nu m M_w phi (IUPAC Green Book, 3rd ed., 2007, section 2.11), nu = 2
    phi = -np.log(aw) / (2 * m * M_W)
    got = np.array([p["value"] for p in rec["points"]])
    assert np.allclose(got, phi, rtol=1e-9)


def test_reduced_dataset_links_back_to_its_readings_and_method(run_main, seeded_store, bib, tmp_path) -> None:
    f = _emf_file(tmp_path / "hcl.csv", HCL_M, harned_emf(HCL_M, HCL_GAMMA), f"# e_standard: {E_AGCL} V\n")
    _add(run_main, seeded_store, bib, f)
    _reduce(run_main, seeded_store, "hcl-cell")
    conn = sqlite3.connect(seeded_store)
    row = conn.execute(
        "SELECT d.origin, d.typed, d.note, d.source, m.key, m.file, r.method, r.method_version, "
        "r.input_hash = m.content_hash FROM reductions r JOIN datasets d ON d.id = r.dataset_id "
        "JOIN measurement_sets m ON m.id = r.set_id WHERE d.key = 'hcl-cell.gamma_pm'").fetchone()
    conn.close()
    origin, typed, note, source, key, file, method, version, current = row
    assert (origin, source, key, file, method, version, current) == (
        "user", "own-notebook-5", "hcl-cell", str(f), "nernst-given-e0", "1", 1)
    assert typed.startswith("measured ") and "nernst-given-e0 v1" in note
    # The reduced dataset is ordinary data: data show lists it beside the handbook columns.
    code, out, _ = run_main("data", "show", "HCl", "--format", "json", store=seeded_store)
    keys = {d["key"] for d in json.loads(out)["datasets"]}
    assert {"hcl-cell.gamma_pm", "HCl.gamma_pm.crc-handbook"} <= keys
    code, out, _ = run_main("readings", "list", "--format", "json", store=seeded_store)
    assert code == 0
    [listed] = json.loads(out)
    assert (listed["status"], listed["dataset"]) == ("current", "hcl-cell.gamma_pm")


def test_a_fixed_file_and_one_reduce_replace_the_reduced_dataset(run_main, seeded_store, bib, tmp_path) -> None:
    wrong = HCL_GAMMA.copy()
    wrong[5] = 0.900  # a typing slip at 0.05 mol/kg
    path = tmp_path / "hcl.csv"
    _add(run_main, seeded_store, bib, _emf_file(path, HCL_M, harned_emf(HCL_M, wrong),
                                                f"# e_standard: {E_AGCL} V\n"))
    [first] = _reduce(run_main, seeded_store, "hcl-cell")
    assert abs(first["points"][5]["value"] - 0.900) < 0.001
    conn = sqlite3.connect(seeded_store)
    ds_id = conn.execute("SELECT id FROM datasets WHERE key = 'hcl-cell.gamma_pm'").fetchone()[0]
    conn.close()
    code, out, _ = run_main("readings", "add", str(bib), str(_emf_file(
        path, HCL_M, harned_emf(HCL_M, HCL_GAMMA), f"# e_standard: {E_AGCL} V\n")), store=seeded_store)
    assert code == 0 and "updated   measurement set hcl-cell" in out
    code, out, _ = run_main("readings", "list", "--format", "json", store=seeded_store)
    assert json.loads(out)[0]["status"] == "stale: readings changed"
    [second] = _reduce(run_main, seeded_store, "--all")
    assert abs(second["points"][5]["value"] - HCL_GAMMA[5]) < 0.001
    conn = sqlite3.connect(seeded_store)
    rows = conn.execute("SELECT id FROM datasets WHERE key = 'hcl-cell.gamma_pm'").fetchall()
    n_points = conn.execute("SELECT COUNT(*) FROM points WHERE dataset_id = ?", (ds_id,)).fetchone()[0]
    n_red = conn.execute("SELECT COUNT(*) FROM reductions").fetchone()[0]
    conn.close()
    assert rows == [(ds_id,)] and n_points == HCL_M.size and n_red == 1
    code, out, _ = run_main("readings", "list", "--format", "json", store=seeded_store)
    assert json.loads(out)[0]["status"] == "current"


def test_method_override_that_cannot_apply_is_a_clear_error(run_main, seeded_store, bib, tmp_path) -> None:
    _add(run_main, seeded_store, bib, _emf_file(tmp_path / "hcl.csv", HCL_M, harned_emf(HCL_M, HCL_GAMMA)))
    code, out, err = run_main("readings", "reduce", "hcl-cell", "--method", "nernst-given-e0",
                              store=seeded_store)
    assert (code, out) == (2, "")
    assert err.strip() == ("Error: measurement set hcl-cell: nernst-given-e0 needs e_standard in "
                           "the file")
    code, _, err = run_main("readings", "reduce", "hcl-cell", "--method", "isopiestic-ratio",
                            store=seeded_store)
    assert code == 2 and "unknown reduction method 'isopiestic-ratio' for emf readings" in err


def test_electrode_calibration_reports_slope_as_percent_of_nernst(run_main, seeded_store, bib, tmp_path) -> None:
    # Nernst slope RT ln10 / F = 59.16 mV per decade at 25 °C (CODATA R and F); readings made
    # with an electrode at 98 % of it.
    slope = 0.98 * c.R * 298.15 * math.log(10) / F
    acts = np.array([0.001, 0.01, 0.1, 0.5])
    rows = "".join(f"{a},{(0.1 + slope * math.log10(a)) * 1000:.4f}\n" for a in acts)
    f = write(tmp_path / "na-cal.csv", f"""# saltbench readings 1
# kind: electrode_calibration
# electrolyte: NaCl
# ion: Na+
# temperature: 25 C
# source: own-notebook-5
# typed: measured by the test operator at bench 5
# u_emf: 0.05 mV
activity,emf_mv
{rows}""")
    _add(run_main, seeded_store, bib, f)
    [rec] = _reduce(run_main, seeded_store, "na-cal")
    assert rec["dataset"] is None
    assert rec["details"]["nernst_slope_v_per_decade"] * 1000 == pytest.approx(59.16, abs=0.005)
    assert rec["details"]["slope_percent"] == pytest.approx(98.0, abs=0.01)
    assert any("local codes" in x for x in rec["cautions"])


def test_convert_kcl_osmotic_to_gamma_states_its_extrapolation(run_main, seeded_store) -> None:
    code, out, err = run_main("convert", "KCl", "--from", "osmotic", "--format", "json", store=seeded_store)
    assert code == 0, err
    doc = json.loads(out)
    assert doc["dataset"] == "KCl.osmotic.robinson-stokes-1959"
    assert doc["extrapolation"]["below_molality"] == pytest.approx(0.1)
    assert "extrapolation, not data" in doc["extrapolation"]["statement"]
    at1 = next(p for p in doc["points"] if p["molality"] == pytest.approx(1.0))
    # gamma±(KCl, 1 mol/kg, 25 °C) = 0.604: from memory of the CRC Handbook mean activity
    # coefficient table (bundled as KCl.gamma_pm.crc-handbook).
    assert at1["gamma_pm"] == pytest.approx(0.604, abs=0.004)
    code, _, err = run_main("convert", "HCl", "--from", "gamma", store=seeded_store)
    assert code == 2 and "choose one with --dataset" in err
