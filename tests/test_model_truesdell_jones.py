"""Truesdell-Jones and b-dot: contract, reductions, and handbook CaCl2 values."""

import numpy as np
from _handbook import CACL2_GAMMA, CACL2_M

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.models.contract_kit import assert_model_contract
from saltbench.models.evaluate import evaluate
from saltbench.plugins.debye_huckel import ExtendedDebyeHuckel, ExtendedDebyeHuckelIons
from saltbench.plugins.truesdell_jones import BDot, TruesdellJones

# Truesdell and Jones (1974), their table of a and b: Ca+2 a = 5.0 Å, b = 0.165; Cl- a = 3.5 Å,
# b = 0.015 kg/mol (from memory of Truesdell and Jones 1974).
TJ_CACL2 = {"a_cation": 5.0, "b_cation": 0.165, "a_anion": 3.5, "b_anion": 0.015}


def test_contract():
    assert_model_contract(TruesdellJones())
    assert_model_contract(TruesdellJones(), params=TJ_CACL2)
    assert_model_contract(BDot())


def test_zero_linear_terms_reduce_to_extended_debye_huckel():
    # Both published forms are the Debye-Hückel ion-size term plus b I (Truesdell and Jones
    # 1974; Helgeson 1969): with b = 0 they are that term alone.
    e = parse_formula("Na2SO4")
    m = np.geomspace(1e-3, 0.5, 6)
    tj = evaluate(TruesdellJones(), e, m, {"a_cation": 4.0, "a_anion": 5.0})
    ions = evaluate(ExtendedDebyeHuckelIons(), e, m, {"a_cation": 4.0, "a_anion": 5.0})
    np.testing.assert_allclose(tj.ln_gamma_pm, ions.ln_gamma_pm, rtol=1e-13)
    bd = evaluate(BDot(), e, m, {"a": 4.5, "b_dot": 0.0})
    ext = evaluate(ExtendedDebyeHuckel(), e, m, {"a": 4.5})
    np.testing.assert_allclose(bd.ln_gamma_pm, ext.ln_gamma_pm, rtol=1e-13)


def test_b_dot_term_is_decadic_and_charge_independent():
    # Helgeson (1969): b_dot I adds to log10 gamma_i of every ion without a z^2 factor.
    e = parse_formula("LaCl3")
    m = np.array([0.1, 0.3])
    d = (evaluate(BDot(), e, m, {"b_dot": 0.05}, ions=True).ln_gamma_ions["cation"]
         - evaluate(BDot(), e, m, {"b_dot": 0.0}, ions=True).ln_gamma_ions["cation"])
    np.testing.assert_allclose(d / np.log(10), 0.05 * e.ionic_strength(m), rtol=1e-12)


def test_handbook_cacl2_with_published_ion_parameters():
    # CRC CaCl2 column (see _handbook.py) to 1 mol/kg (I = 3, inside the authors' range for
    # NaCl-type waters, which we stretch to a 2-1 salt): within 0.01.
    sel = CACL2_M <= 1.0
    r = evaluate(TruesdellJones(), parse_formula("CaCl2"), CACL2_M[sel], TJ_CACL2)
    np.testing.assert_allclose(r.gamma_pm, CACL2_GAMMA[sel], atol=0.01)
