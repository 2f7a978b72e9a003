"""Debye-Hückel family: contract, limiting forms, and Kielland's table of single-ion values."""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.curation.parameters import read_parameter_file
from saltbench.models.contract_kit import assert_model_contract
from saltbench.models.evaluate import evaluate, make_context
from saltbench.plugins import debye_huckel as dhm
from saltbench.refdata import __file__ as _refdata_init

PARAMS = Path(_refdata_init).parent / "parameters"

MODELS = [dhm.DebyeHuckelLimiting(), dhm.ExtendedDebyeHuckel(), dhm.ExtendedDebyeHuckelIons(),
          dhm.Guntelberg(), dhm.Huckel()]


@pytest.mark.parametrize("model", MODELS, ids=lambda m: m.id)
def test_contract(model):
    assert_model_contract(model)


def test_contract_with_other_parameters():
    assert_model_contract(dhm.Huckel(), params={"a": 6.0, "b": 0.15})
    assert_model_contract(dhm.ExtendedDebyeHuckelIons(), params={"a_cation": 9.0, "a_anion": 3.0})


def test_limiting_slope_at_25c():
    # A_phi = 0.3915 (kg/mol)^1/2 at 25 °C: Archer and Wang, J. Phys. Chem. Ref. Data 19, 371
    # (1990) (from memory of that paper). ln gamma± = -3 A_phi sqrt(m) for NaCl.
    e = parse_formula("NaCl")
    r = evaluate(dhm.DebyeHuckelLimiting(), e, [1e-4])
    assert r.ln_gamma_pm[0] == pytest.approx(-3 * 0.3915 * 1e-2, rel=1e-3)
    assert 1 - r.osmotic[0] == pytest.approx(0.3915 * 1e-2, rel=1e-3)


def test_extended_form_reduces_to_limiting_law_for_zero_size():
    # a = 0 is the limiting law by construction of the formula (Debye and Hückel 1923).
    e = parse_formula("CaCl2")
    m = np.geomspace(1e-4, 0.03, 5)
    lim = evaluate(dhm.DebyeHuckelLimiting(), e, m)
    ext = evaluate(dhm.ExtendedDebyeHuckel(), e, m, {"a": 0.0})
    np.testing.assert_allclose(ext.ln_gamma_pm, lim.ln_gamma_pm, rtol=1e-13)
    np.testing.assert_allclose(ext.osmotic, lim.osmotic, rtol=1e-13)


def test_guntelberg_is_extended_form_with_ba_one():
    # Güntelberg (1926): B a = 1 (kg/mol)^1/2.
    e = parse_formula("Na2SO4")
    ctx = make_context(e)
    a = 1.0 / ctx.dh.b_gamma_per_angstrom
    m = np.array([0.001, 0.01, 0.03])
    g = evaluate(dhm.Guntelberg(), e, m)
    x = evaluate(dhm.ExtendedDebyeHuckel(), e, m, {"a": a})
    np.testing.assert_allclose(g.ln_gamma_pm, x.ln_gamma_pm, rtol=1e-13)
    np.testing.assert_allclose(g.osmotic, x.osmotic, rtol=1e-12)


# Kielland's table of single-ion activity coefficients at 25 °C, as reproduced in Freeze and
# Cherry, Groundwater (1979), appendix IV (public online copy), read off that copy:
# (charge, size in Å) -> gamma_i at I = 0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1.
KIELLAND_I = [0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1]
KIELLAND_TABLE = {
    (1, 2.5): [0.975, 0.964, 0.945, 0.924, 0.898, 0.85, 0.80, 0.75],
    (1, 3.0): [0.975, 0.964, 0.945, 0.925, 0.899, 0.85, 0.805, 0.755],
    (1, 4.0): [0.975, 0.964, 0.947, 0.928, 0.902, 0.86, 0.82, 0.775],
    (1, 6.0): [0.975, 0.965, 0.948, 0.929, 0.907, 0.87, 0.835, 0.80],
    (1, 9.0): [0.975, 0.967, 0.950, 0.933, 0.914, 0.88, 0.86, 0.83],
    (2, 4.5): [0.903, 0.867, 0.805, 0.742, 0.665, 0.55, 0.455, 0.37],
    (2, 5.0): [0.903, 0.868, 0.805, 0.744, 0.67, 0.555, 0.465, 0.38],
    (2, 6.0): [0.905, 0.870, 0.809, 0.749, 0.675, 0.57, 0.485, 0.405],
    (2, 8.0): [0.906, 0.872, 0.813, 0.755, 0.69, 0.595, 0.52, 0.45],
    (3, 4.0): [0.796, 0.725, 0.612, 0.505, 0.395, 0.25, 0.16, 0.095],
    (3, 9.0): [0.802, 0.738, 0.632, 0.54, 0.445, 0.325, 0.245, 0.18],
}
# The same copy prints the constants Kielland's values rest on at 25 °C: A = 0.5085,
# B = 0.3281 x 10^8 (decadic A; B per cm, i.e. 0.3281 per Å).
KIELLAND_A10, KIELLAND_B = 0.5085, 0.3281
# A salt with the charge of each table row as its cation: the table's ion is the cation.
SALT_FOR_CHARGE = {1: "NaCl", 2: "CaCl2", 3: "LaCl3"}


def _single_ion(charge, size, dh=None):
    e = parse_formula(SALT_FOR_CHARGE[charge])
    ctx = make_context(e)
    if dh is not None:
        ctx = type(ctx)(e, dh(ctx.dh))
    m = e.molality_at_ionic_strength(np.array(KIELLAND_I))
    model = dhm.ExtendedDebyeHuckelIons()
    return np.exp(model.ln_gamma_ions(m, {"a_cation": size, "a_anion": 3.0}, ctx)["cation"])


def _kielland_constants(dh):
    return replace(dh, a_phi=KIELLAND_A10 * math.log(10) / 3, b_gamma=KIELLAND_B * 1e10)


# Kielland printed the values at the higher ionic strengths in steps of 0.005 or 0.01 and
# worked them by hand; 0.006 is what those digits support (common practice, no source).
KIELLAND_TOLERANCE = 0.006


@pytest.mark.parametrize("row", sorted(KIELLAND_TABLE), ids=lambda r: f"z{r[0]}-a{r[1]}")
def test_kielland_table_with_his_constants(row):
    printed = np.array(KIELLAND_TABLE[row])
    ours = _single_ion(*row, dh=_kielland_constants)
    assert np.all(np.abs(ours - printed) <= KIELLAND_TOLERANCE), (ours.round(4), printed)


@pytest.mark.parametrize("row", sorted(KIELLAND_TABLE), ids=lambda r: f"z{r[0]}-a{r[1]}")
def test_kielland_table_with_iapws_constants(row):
    # With today's IAPWS-based constants (A10 = 0.5098, B = 0.3284 at 25 °C) the table is met
    # within the same rounding allowance widened by 0.002 for the 0.25 % larger A.
    printed = np.array(KIELLAND_TABLE[row])
    ours = _single_ion(*row)
    assert np.all(np.abs(ours - printed) <= KIELLAND_TOLERANCE + 0.002), (ours.round(4), printed)


def test_kielland_file_sizes_reproduce_table_rows():
    # The bundled ion-size file must put ions in the rows of the same table (Freeze and Cherry
    # 1979, appendix IV, reproducing Kielland 1937): K+ and Cl- at 3 Å, Na+ at 4, H+ at 9,
    # SO4-2 at 4.5, Ca+2 at 6, Mg+2 at 8, Al+3 at 9.
    pf = read_parameter_file(PARAMS / "kielland-1937.csv")
    assert pf.model == dhm.ExtendedDebyeHuckelIons.id and pf.target_kind == "ion"
    sizes = {r.target: r.values["a"] for r in pf.rows}
    expected = {"K+": 3, "Cl-": 3, "Na+": 4, "H+": 9, "SO4-2": 4.5, "Ca+2": 6, "Mg+2": 8, "Al+3": 9}
    assert {k: sizes[k] for k in expected} == expected
    for r in pf.rows:
        assert 2.0 <= r.values["a"] <= 11.0


def test_huckel_linear_term_raises_gamma_at_high_ionic_strength():
    # Hückel (1925): a positive b gives the rise of gamma± at high molality seen for NaCl
    # (gamma± has a minimum near 1 mol/kg: Hamer and Wu 1972, common practice, no source).
    e = parse_formula("NaCl")
    r = evaluate(dhm.Huckel(), e, [0.25, 0.5, 1.0, 2.0, 4.0], {"a": 4.0, "b": 0.1})
    assert np.argmin(r.gamma_pm) in (1, 2, 3) and r.gamma_pm[-1] > r.gamma_pm[2]
    flat = evaluate(dhm.Huckel(), e, [0.25, 0.5, 1.0, 2.0, 4.0], {"a": 4.0, "b": 0.0})
    assert np.all(np.diff(flat.gamma_pm) < 0)  # without b the size term alone only falls
