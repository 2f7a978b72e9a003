"""EMF readings of a cell without liquid junction in a mixture, H2 | HCl(m1), NaCl(m2) | AgCl | Ag:
the readings file, its reduction to gamma±(HCl) in the mixture, the mixture dataset it becomes and
the errors a bad file gets. Synthetic EMFs are made here from the Nernst equation written out
independently of saltbench, with gamma± from Harned's rule at a stated coefficient."""

from __future__ import annotations

import json
import math
import sqlite3
from pathlib import Path

import numpy as np
import pytest
from conftest import write
from scipy import constants as c

F = c.physical_constants["Faraday constant"][0]  # CODATA 2018 through scipy.constants
R = c.R
T = 298.15
# E°(Ag/AgCl) = 0.22234 V at 25 °C: from memory of Bates and Bower, J. Res. NBS 53, 283 (1954).
E_AGCL = 0.22234
# gamma±(HCl) alone at 25 °C: from memory of the CRC Handbook table "Mean Activity Coefficients of
# Electrolytes as a Function of Concentration" (HCl column, after Hamer and Wu, J. Phys. Chem. Ref.
# Data 1, 1047 (1972)), as in tests/test_readings_reduce.py.
HCL_M = np.array([0.001, 0.002, 0.005, 0.010, 0.020, 0.050, 0.100])
HCL_GAMMA = np.array([0.965, 0.952, 0.929, 0.905, 0.876, 0.832, 0.797])
GAMMA_HCL_AT_1 = 0.811  # the same table at 1 mol/kg
# Harned's rule at constant ionic strength I: log10 gamma±(HCl) = log10 gamma°±(HCl, I) - alpha m(NaCl)
# (Harned and Owen, The Physical Chemistry of Electrolytic Solutions, 3rd ed., 1958, ch. 14). The
# coefficient is stated for the test, near the size Harned and Owen report for HCl-NaCl at I = 1
# (about 0.03 kg/mol, from memory).
ALPHA = 0.031
M_NACL = np.array([0.0, 0.1, 0.25, 0.4, 0.55, 0.7, 0.85, 0.95])  # at I = m(HCl) + m(NaCl) = 1

BIB = """[own-notebook-9]
authors: A. Operator
title: Bench notebook 9 (test entry)
publisher: test bench
year: 2024
"""


def harned_gamma(m_nacl: np.ndarray) -> np.ndarray:
    return GAMMA_HCL_AT_1 * 10.0 ** (-ALPHA * m_nacl)


def cell_emf(m_hcl: np.ndarray, m_nacl: np.ndarray, gamma: np.ndarray, e0: float = E_AGCL) -> np.ndarray:
    # H2 | HCl(m1), NaCl(m2) | AgCl | Ag: E = E° - (RT/F) ln(m_H+ m_Cl- gamma±^2), m_H+ = m1,
    # m_Cl- = m1 + m2 (Harned and Owen 1958, ch. 14), written out here, independently of saltbench.
    return e0 - R * T / F * np.log(m_hcl * (m_hcl + m_nacl) * gamma**2)


def readings_file(path: Path, m_hcl, m_nacl, emf_v, header: str = "", key: str = "hcl-nacl-cell") -> Path:
    rows = "".join(f"{a!r},{b!r},{e!r}\n" for a, b, e in zip(map(float, m_hcl), map(float, m_nacl),
                                                           map(float, emf_v)))
    return write(path, f"""# saltbench readings 1
# kind: emf
# id: {key}
# electrolyte: HCl
# background: NaCl
# temperature: 25 C
# source: own-notebook-9
# typed: measured by the test operator at bench 9
# cell: Pt | H2 | HCl(m1), NaCl(m2) | AgCl | Ag
# u_emf: 0.01 mV
{header}molality,background_molality,emf_v
{rows}""")


@pytest.fixture
def bib(tmp_path: Path) -> Path:
    return write(tmp_path / "nb.sources.txt", BIB)


def _mixture_series() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    m_nacl = M_NACL
    m_hcl = 1.0 - m_nacl
    return m_hcl, m_nacl, cell_emf(m_hcl, m_nacl, harned_gamma(m_nacl))


def _add_and_reduce(run_main, store: Path, *paths: Path, key: str = "hcl-nacl-cell") -> dict:
    code, _, err = run_main("readings", "add", *map(str, paths), store=store)
    assert (code, err) == (0, ""), err
    code, out, err = run_main("readings", "reduce", key, "--format", "json", store=store)
    assert code == 0, err
    [rec] = json.loads(out)
    return rec


def test_the_reduction_function_inverts_the_nernst_equation_to_1e_9() -> None:
    from saltbench.chemistry.electrolyte import parse_formula
    from saltbench.measurements.emf_cell import CellSpec
    from saltbench.measurements.emf_mixture import gamma_from_emf_mixture

    m_hcl, m_nacl, emf = _mixture_series()
    red = gamma_from_emf_mixture(CellSpec(parse_formula("HCl")), parse_formula("NaCl"), m_hcl, m_nacl,
                                 emf, E_AGCL, T, u_emf=1e-5, u_e_standard=2e-5)
    assert np.max(np.abs(red.ln_gamma_pm - np.log(harned_gamma(m_nacl)))) < 1e-9
    # first-order propagation: u(ln gamma±) = u(E) / (2RT/F) independent, u(E°) / (2RT/F) common
    # (common practice, no source)
    k = 2 * R * T / F
    assert np.allclose(red.u_ln_gamma_independent, 1e-5 / k, rtol=1e-12)
    assert red.u_ln_gamma_common == pytest.approx(2e-5 / k, rel=1e-12)


def test_a_background_of_the_anion_side_counts_its_anion_twice_where_nu_is_two() -> None:
    # NaCl in MgCl2: m_Na = m1, m_Cl = m1 + 2 m2 (electroneutrality; common practice, no source);
    # E = E° - (2RT/F) ln(sqrt(m_Na m_Cl) gamma±) for a Na-reversible electrode / AgCl cell.
    from saltbench.chemistry.electrolyte import parse_formula
    from saltbench.measurements.emf_cell import CellSpec
    from saltbench.measurements.emf_mixture import gamma_from_emf_mixture

    m1, m2, g, e0 = np.array([0.2, 0.5]), np.array([0.1, 0.3]), np.array([0.7, 0.65]), 0.1
    emf = e0 - R * T / F * np.log(m1 * (m1 + 2 * m2) * g**2)
    red = gamma_from_emf_mixture(CellSpec(parse_formula("NaCl")), parse_formula("MgCl2"), m1, m2, emf, e0, T)
    assert np.max(np.abs(red.gamma_pm - g)) < 1e-12


def test_file_to_store_to_mixture_dataset_with_given_e_standard(run_main, seeded_store, bib, tmp_path) -> None:
    from saltbench.api import Session, mixture_points

    m_hcl, m_nacl, emf = _mixture_series()
    f = readings_file(tmp_path / "cell.csv", m_hcl, m_nacl, emf,
                      f"# e_standard: {E_AGCL} V\n# u_e_standard: 0.02 mV\n")
    rec = _add_and_reduce(run_main, seeded_store, bib, f)
    assert rec["method"] == "nernst-mixture-given-e0"
    assert rec["dataset"] == "hcl-nacl-cell.ln_gamma_pm" and rec["background"] == "NaCl"
    session = Session(seeded_store)
    [pts] = mixture_points(session, "hcl-nacl-cell.ln_gamma_pm")
    assert tuple(pts.quantity) == ("ln_gamma_pm", "HCl") and pts.system == "HCl + NaCl"
    names = list(pts.composition.names)
    order = np.argsort(pts.composition.molality[:, names.index("Na+")])
    got = pts.values[order]
    assert np.max(np.abs(got - np.log(harned_gamma(M_NACL)))) < 1e-9
    # I = m(HCl) + m(NaCl) = 1 for every point (IUPAC Green Book, 3rd ed., 2007, 2.13)
    assert np.allclose(pts.ionic_strength, 1.0, rtol=1e-12)
    k = 2 * R * T / F
    assert np.allclose(pts.uncertainties, math.hypot(1e-5, 2e-5) / k, rtol=1e-9)
    # the same dataset is found by system, as compare --mixture and fit --mixture look it up
    assert [p.key for p in mixture_points(session, "NaCl + HCl")] == ["hcl-nacl-cell.ln_gamma_pm"]
    session.store.close()
    code, out, err = run_main("readings", "list", "--format", "json", store=seeded_store)
    assert code == 0, err
    [row] = [r for r in json.loads(out) if r["key"] == "hcl-nacl-cell"]
    assert row["dataset"] == "hcl-nacl-cell.ln_gamma_pm" and row["status"] == "current"


def test_extrapolated_e_standard_from_the_readings_of_hcl_alone(run_main, seeded_store, bib, tmp_path) -> None:
    from saltbench.api import Session, mixture_points

    m_hcl, m_nacl, emf = _mixture_series()
    # readings of HCl alone (background 0) from the handbook gamma± feed the extrapolation
    pure = cell_emf(HCL_M, np.zeros_like(HCL_M), HCL_GAMMA)
    f = readings_file(tmp_path / "cell.csv", np.r_[HCL_M, m_hcl[1:]], np.r_[np.zeros_like(HCL_M), m_nacl[1:]],
                      np.r_[pure, emf[1:]])
    rec = _add_and_reduce(run_main, seeded_store, bib, f)
    assert rec["method"] == "nernst-mixture-extrapolated-e0"
    assert abs(rec["details"]["e_standard_v"] - E_AGCL) < 1e-4  # as for one salt (test_readings_reduce)
    session = Session(seeded_store)
    [pts] = mixture_points(session, "hcl-nacl-cell.ln_gamma_pm")
    names = list(pts.composition.names)
    mix = pts.composition.molality[:, names.index("Na+")] > 0
    m2 = pts.composition.molality[mix, names.index("Na+")]
    # E° within 0.1 mV moves ln gamma± by at most 1e-4 V / (2RT/F) = 0.002
    assert np.max(np.abs(pts.values[mix] - np.log(harned_gamma(m2)))) < 0.002
    session.store.close()


def test_compare_and_fit_on_the_mixture_find_the_reduced_dataset(run_main, seeded_store, bib, tmp_path) -> None:
    m_hcl, m_nacl, emf = _mixture_series()
    f = readings_file(tmp_path / "cell.csv", m_hcl, m_nacl, emf, f"# e_standard: {E_AGCL} V\n")
    _add_and_reduce(run_main, seeded_store, bib, f)
    code, out, err = run_main("fit", "--mixture", "HCl + NaCl", "--model", "pitzer", "--format", "json",
                              store=seeded_store)
    assert code == 0, err
    fit = json.loads(out)
    assert fit["residuals"]["n_points"] == M_NACL.size
    code, out, err = run_main("compare", "--mixture", "HCl + NaCl", "--format", "json", store=seeded_store)
    assert code == 0, err
    assert {r["model"] for r in json.loads(out)} >= {"pitzer", "sit"}


def test_reducing_again_replaces_the_mixture_dataset(run_main, seeded_store, bib, tmp_path) -> None:
    m_hcl, m_nacl, emf = _mixture_series()
    f = readings_file(tmp_path / "cell.csv", m_hcl, m_nacl, emf, f"# e_standard: {E_AGCL} V\n")
    _add_and_reduce(run_main, seeded_store, bib, f)
    f = readings_file(tmp_path / "cell.csv", m_hcl, m_nacl, emf + 1e-4, f"# e_standard: {E_AGCL} V\n")
    rec = _add_and_reduce(run_main, seeded_store, bib, f)
    with sqlite3.connect(seeded_store) as conn:
        n = conn.execute("SELECT count(*) FROM mixture_datasets WHERE key = 'hcl-nacl-cell.ln_gamma_pm'").fetchone()[0]
    assert n == 1
    # +0.1 mV lowers every ln gamma± by 1e-4 / (2RT/F)
    got = np.array([p["value"] for p in sorted(rec["points"], key=lambda p: p["background_molality"])])
    assert np.allclose(got, np.log(harned_gamma(M_NACL)) - 1e-4 / (2 * R * T / F), atol=1e-9)


def _drop_emf(text: str) -> str:
    lines = text.splitlines()
    i = next(n for n, s in enumerate(lines) if s.startswith("0.9,0.1,"))
    lines[i] = "0.9,0.1,"
    return "\n".join(lines) + "\n"


def _drop_column(text: str) -> str:
    head, _, table = text.partition("molality,background_molality,emf_v\n")
    rows = [r.split(",") for r in table.splitlines()]
    return head + "molality,emf_v\n" + "".join(f"{r[0]},{r[2]}\n" for r in rows)


def _count_sets(path: Path) -> int:
    with sqlite3.connect(path) as conn:
        return int(conn.execute("SELECT count(*) FROM measurement_sets").fetchone()[0])


@pytest.mark.parametrize(("edit", "field"), [
    (lambda t: t.replace("# background: NaCl", "# background: KBr"), "background"),
    (lambda t: t.replace("# background: NaCl", "# background: HCl"), "background"),
    (lambda t: _drop_emf(t), "emf_v"),
    (lambda t: t.replace("\n0.9,0.1,", "\n0.9,-0.1,", 1), "background_molality"),
    (lambda t: t.replace("\n0.9,0.1,", "\n-0.9,0.1,", 1), "molality"),
    (lambda t: _drop_column(t), None),
])
def test_a_bad_mixture_readings_file_is_refused_in_one_line(run_main, seeded_store, bib, tmp_path, edit, field) -> None:
    m_hcl, m_nacl, emf = _mixture_series()
    good = readings_file(tmp_path / "cell.csv", m_hcl, m_nacl, emf, f"# e_standard: {E_AGCL} V\n")
    bad = write(tmp_path / "bad.csv", edit(good.read_text()))
    before = _count_sets(seeded_store)
    code, out, err = run_main("readings", "add", str(bib), str(bad), store=seeded_store)
    assert code == 2
    [line] = err.strip().splitlines()
    assert line.startswith("Error: ") and "bad.csv:" in line and "Traceback" not in err
    if field:
        assert f"field '{field}'" in line
    else:
        assert "needs a 'background_molality' column" in line
    assert _count_sets(seeded_store) == before  # nothing half-written


def test_extrapolate_without_readings_of_the_salt_alone_is_refused(run_main, seeded_store, bib, tmp_path) -> None:
    m_hcl, m_nacl, emf = _mixture_series()
    f = readings_file(tmp_path / "cell.csv", m_hcl[1:], m_nacl[1:], emf[1:], "# e_standard: extrapolate\n")
    code, _, err = run_main("readings", "add", str(bib), str(f), store=seeded_store)
    assert code == 2 and "field 'e_standard'" in err and "background_molality 0" in err


EXAMPLE = Path(__file__).resolve().parents[1] / "refdata" / "examples" / "readings-kestrel-bay"
SCRIPT = Path(__file__).resolve().parents[1] / "refdata" / "tools" / "make_mixture_readings_example.py"


def test_the_invented_example_is_what_its_script_writes_and_reduces_back_to_its_rule(run_main, seeded_store) -> None:
    import importlib.util

    spec = importlib.util.spec_from_file_location("make_mixture_readings_example", SCRIPT)
    assert spec is not None and spec.loader is not None
    script = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(script)
    f = EXAMPLE / script.NAME
    assert f.read_text(encoding="utf-8") == script.text()
    assert "INVENTED" in f.read_text(encoding="utf-8") and "INVENTED" in (EXAMPLE / "README.md").read_text()
    rec = _add_and_reduce(run_main, seeded_store, EXAMPLE, key="readings-hcl-nacl-emf")
    # E° from the readings of HCl alone, within 0.1 mV of the stated value
    assert abs(rec["details"]["e_standard_v"] - E_AGCL) < 1e-4
    mix = [p for p in rec["points"] if p["background_molality"] > 0]
    m2 = np.array([p["background_molality"] for p in mix])
    got = np.array([p["value"] for p in mix])
    # the file's rule (Harned's rule, invented coefficient) within the noise: 0.02 mV is 4e-4 in
    # ln gamma±, the extrapolated E° adds at most 0.002
    assert np.max(np.abs(got - np.log(GAMMA_HCL_AT_1 * 10.0 ** (-script.ALPHA * m2)))) < 0.002 + 4 * 4e-4


def test_the_documented_mixture_readings_file_reads_as_written() -> None:
    from saltbench.curation.readings import read_readings

    doc = (Path(__file__).resolve().parents[1] / "DEVELOPERS.md").read_text(encoding="utf-8")
    section = doc.split("### Raw readings in a mixture", 1)[1]
    block = section.split("```\n", 2)[1]
    ms = read_readings("DEVELOPERS.md", block)
    assert ms.method == "nernst-mixture-extrapolated-e0" and ms.settings["background"] == "NaCl"
    assert ms.background_molality is not None and ms.background_molality.tolist() == [0.0, 0.1]


def test_show_lists_the_background_molality_of_each_reading(run_main, seeded_store, bib, tmp_path) -> None:
    m_hcl, m_nacl, emf = _mixture_series()
    f = readings_file(tmp_path / "cell.csv", m_hcl[1:], m_nacl[1:], emf[1:], f"# e_standard: {E_AGCL} V\n")
    code, _, err = run_main("readings", "add", str(bib), str(f), store=seeded_store)
    assert code == 0, err
    code, out, err = run_main("readings", "show", "hcl-nacl-cell", "--format", "json", store=seeded_store)
    assert code == 0, err
    doc = json.loads(out)
    got = sorted((r["molality"], r["background_molality"]) for r in doc["readings"])
    assert got == sorted(zip(m_hcl[1:].tolist(), m_nacl[1:].tolist()))
    assert doc["extrapolation"] is None  # E° given and no readings of HCl alone


def test_a_set_changed_between_one_salt_and_mixture_reduces_to_the_right_kind_of_dataset(
        run_main, seeded_store, bib, tmp_path) -> None:
    m_hcl, m_nacl, emf = _mixture_series()
    mixed = readings_file(tmp_path / "cell.csv", m_hcl, m_nacl, emf, f"# e_standard: {E_AGCL} V\n")
    _add_and_reduce(run_main, seeded_store, bib, mixed)
    # the same id, now readings of HCl alone: a one-salt gamma± dataset replaces the mixture one
    pure = cell_emf(HCL_M, np.zeros_like(HCL_M), HCL_GAMMA)
    rows = "".join(f"{a!r},{e!r}\n" for a, e in zip(HCL_M.tolist(), pure.tolist()))
    text = mixed.read_text().replace("# background: NaCl\n", "").split("molality,background_molality")[0]
    one = write(tmp_path / "cell.csv", text + "molality,emf_v\n" + rows)
    rec = _add_and_reduce(run_main, seeded_store, bib, one)
    assert rec["dataset"] == "hcl-nacl-cell.gamma_pm"
    with sqlite3.connect(seeded_store) as conn:
        assert conn.execute("SELECT count(*) FROM mixture_datasets WHERE key LIKE 'hcl-nacl-cell%'").fetchone() == (0,)
    # and back: the one-salt dataset goes, the mixture dataset returns
    rec = _add_and_reduce(run_main, seeded_store, bib, readings_file(tmp_path / "cell.csv", m_hcl, m_nacl, emf,
                                                                    f"# e_standard: {E_AGCL} V\n"))
    assert rec["dataset"] == "hcl-nacl-cell.ln_gamma_pm"
    code, out, err = run_main("readings", "list", "--format", "json", store=seeded_store)
    [row] = [r for r in json.loads(out) if r["key"] == "hcl-nacl-cell"]
    assert row["dataset"] == "hcl-nacl-cell.ln_gamma_pm" and row["status"] == "current"
    with sqlite3.connect(seeded_store) as conn:
        assert conn.execute("SELECT count(*) FROM datasets WHERE key = 'hcl-nacl-cell.gamma_pm'").fetchone() == (0,)


def test_removing_the_reduced_mixture_dataset_leaves_the_set_not_reduced(run_main, seeded_store, bib, tmp_path) -> None:
    m_hcl, m_nacl, emf = _mixture_series()
    f = readings_file(tmp_path / "cell.csv", m_hcl, m_nacl, emf, f"# e_standard: {E_AGCL} V\n")
    _add_and_reduce(run_main, seeded_store, bib, f)
    code, _, err = run_main("data", "remove", "hcl-nacl-cell.ln_gamma_pm", store=seeded_store)
    assert code == 0, err
    code, out, err = run_main("readings", "list", "--format", "json", store=seeded_store)
    [row] = [r for r in json.loads(out) if r["key"] == "hcl-nacl-cell"]
    assert row["status"] == "not reduced" and row["dataset"] is None
