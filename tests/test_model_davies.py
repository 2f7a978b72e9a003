"""Davies equation: contract, published form, and handbook values at low ionic strength."""

import numpy as np
import pytest
from _handbook import CACL2_GAMMA, CACL2_M

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.models.contract_kit import assert_model_contract
from saltbench.models.evaluate import evaluate, make_context
from saltbench.plugins.davies import Davies


@pytest.mark.parametrize("b", [0.2, 0.3])
def test_contract(b):
    assert_model_contract(Davies(), params={"b": b})


def test_published_form_decadic():
    # Davies (1962), p. 41: log10 gamma_i = -A z^2 (sqrt(I)/(1+sqrt(I)) - 0.3 I).
    e = parse_formula("MgSO4")
    ctx = make_context(e)
    i = 0.04
    m = e.molality_at_ionic_strength(i)
    expected = -ctx.dh.a_gamma_log10 * 4 * (np.sqrt(i) / (1 + np.sqrt(i)) - 0.3 * i)
    r = evaluate(Davies(), e, [m])
    assert r.ln_gamma_pm[0] / np.log(10) == pytest.approx(expected, rel=1e-12)


def test_handbook_cacl2_below_i_0_1():
    # Davies claims about 1-2 % up to I = 0.1 (from memory of Davies 1962); CRC CaCl2 column
    # (see _handbook.py) up to m = 0.02 (I = 0.06): within 0.01.
    sel = CACL2_M <= 0.02
    r = evaluate(Davies(), parse_formula("CaCl2"), CACL2_M[sel])
    np.testing.assert_allclose(r.gamma_pm, CACL2_GAMMA[sel], atol=0.01)
