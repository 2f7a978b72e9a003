"""Bromley's equation: contract, single-ion additivity, and handbook CaCl2 values."""

from pathlib import Path

import numpy as np
import pytest
from _handbook import CACL2_GAMMA, CACL2_M

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.curation.parameters import read_parameter_file
from saltbench.models.contract_kit import assert_model_contract
from saltbench.models.evaluate import evaluate, make_context
from saltbench.plugins.bromley import Bromley, BromleyIons
from saltbench.refdata import __file__ as _refdata

PARAMS = Path(_refdata).parent / "parameters"


@pytest.mark.parametrize("b", [-0.05, 0.0574, 0.2])
def test_contract(b):
    assert_model_contract(Bromley(), params={"B": b})


def test_contract_ions():
    assert_model_contract(BromleyIons(), params={"B_cation": 0.01, "B_anion": 0.06,
                                                 "delta_cation": 0.03, "delta_anion": -0.07})


def test_published_form_decadic():
    # Bromley (1973): log10 gamma± = -A|z+z-|sqrt(I)/(1+sqrt(I))
    #   + (0.06 + 0.6 B)|z+z-| I/(1 + 1.5 I/|z+z-|)^2 + B I, written out here independently.
    e = parse_formula("Na2SO4")
    ctx = make_context(e)
    m = np.array([0.1, 1.0])
    i = e.ionic_strength(m)
    b = -0.0204
    expected = (-ctx.dh.a_gamma_log10 * 2 * np.sqrt(i) / (1 + np.sqrt(i))
                + (0.06 + 0.6 * b) * 2 * i / (1 + 1.5 * i / 2) ** 2 + b * i)
    np.testing.assert_allclose(evaluate(Bromley(), e, m, {"B": b}).ln_gamma_pm / np.log(10),
                               expected, rtol=1e-12)


def test_single_ion_additivity():
    # Bromley (1973): B = B+ + B- + delta+ delta-.
    e = parse_formula("NaCl")
    m = np.array([0.5, 2.0])
    p = {"B_cation": 0.01, "B_anion": 0.05, "delta_cation": 0.2, "delta_anion": -0.1}
    whole = evaluate(Bromley(), e, m, {"B": 0.01 + 0.05 + 0.2 * -0.1})
    np.testing.assert_allclose(evaluate(BromleyIons(), e, m, p).ln_gamma_pm, whole.ln_gamma_pm,
                               rtol=1e-13)


def test_handbook_cacl2_with_bundled_b():
    # CRC CaCl2 column (see _handbook.py) to 2 mol/kg with Bromley's B for CaCl2 from the
    # bundled set (from memory of Bromley 1973, Table 1): within 0.015.
    pf = read_parameter_file(PARAMS / "bromley-1973.csv")
    b = {r.target: r.values["B"] for r in pf.rows}["CaCl2"]
    r = evaluate(Bromley(), parse_formula("CaCl2"), CACL2_M, {"B": b})
    np.testing.assert_allclose(r.gamma_pm, CACL2_GAMMA, atol=0.015)
