"""Meissner's method (Kusik-Meissner form): contract, reductions, and NaCl values."""

from pathlib import Path

import numpy as np
import pytest

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.curation.datasets import read_dataset
from saltbench.curation.parameters import read_parameter_file
from saltbench.models.contract_kit import assert_model_contract
from saltbench.models.evaluate import evaluate
from saltbench.plugins.debye_huckel import Guntelberg
from saltbench.plugins.meissner import Meissner
from saltbench.refdata import __file__ as _refdata

REFDATA = Path(_refdata).parent


@pytest.mark.parametrize("q", [-3.0, -0.19, 2.23, 6.69, 11.0])
def test_contract_over_q_range(q):
    assert_model_contract(Meissner(), params={"q": q})


def test_q_zero_is_guntelberg_form():
    # Kusik and Meissner (1978): with q = 0 the first factor is 1 and C = 1, leaving
    # log10 Gamma = -A sqrt(I)/(1 + sqrt(I)): Güntelberg's form for the reduced coefficient.
    for f in ("NaCl", "CaCl2", "MgSO4"):
        e = parse_formula(f)
        m = np.geomspace(1e-3, 3.0, 7)
        np.testing.assert_allclose(evaluate(Meissner(), e, m, {"q": 0.0}).ln_gamma_pm,
                                   evaluate(Guntelberg(), e, m).ln_gamma_pm, rtol=1e-12)


def test_reduced_coefficient_scales_with_charge_product():
    # Meissner and Kusik (1972): Gamma = gamma±^(1/|z+z-|) is one curve of I for a given q.
    m_nacl, m_mgso4 = np.array([1.2]), np.array([0.3])  # both I = 1.2 mol/kg
    g1 = evaluate(Meissner(), parse_formula("NaCl"), m_nacl, {"q": 1.0}).ln_gamma_pm
    g4 = evaluate(Meissner(), parse_formula("MgSO4"), m_mgso4, {"q": 1.0}).ln_gamma_pm
    assert g4[0] / 4 == pytest.approx(g1[0], rel=1e-12)


def test_nacl_with_bundled_q():
    # NaCl with q = 2.23 (bundled set, from memory of Kusik and Meissner 1978) against the
    # bundled NaCl gamma± (from memory of Robinson and Stokes 1959) to 4 mol/kg: within 0.015.
    pf = read_parameter_file(REFDATA / "parameters" / "kusik-meissner-1978.csv")
    q = {r.target: r.values["q"] for r in pf.rows}["NaCl"]
    d = read_dataset(REFDATA / "datasets" / "NaCl.gamma_pm.robinson-stokes-1959.csv")
    sel = d.molality <= 4.0
    r = evaluate(Meissner(), d.electrolyte, d.molality[sel], {"q": q})
    np.testing.assert_allclose(r.gamma_pm, d.value[sel], atol=0.015)
