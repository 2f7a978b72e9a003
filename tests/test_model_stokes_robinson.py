"""Stokes-Robinson hydration equation: contract, self-consistency, handbook CaCl2 values."""

import numpy as np
import pytest
from _handbook import CACL2_GAMMA, CACL2_M

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import ModelDomainError, ModelError
from saltbench.models.contract_kit import assert_model_contract
from saltbench.models.evaluate import evaluate
from saltbench.plugins.debye_huckel import ExtendedDebyeHuckel
from saltbench.plugins.stokes_robinson import StokesRobinson
from saltbench.water import MOLAR_MASS_WATER


@pytest.mark.parametrize("h,a", [(0.0, 4.0), (3.5, 3.97), (12.0, 4.73), (13.7, 5.02)])
def test_contract(h, a):
    assert_model_contract(StokesRobinson(), params={"h": h, "a": a})


def test_published_equation_holds_with_own_water_activity():
    # Stokes and Robinson (1948): ln gamma± = DH - (h/nu) ln a_w - ln(1 + 0.018 (nu - h) m),
    # checked with the model's own a_w = exp(-nu m M_w phi).
    e = parse_formula("NaCl")
    m = np.array([0.1, 1.0, 3.0])
    p = {"h": 3.5, "a": 3.97}
    r = evaluate(StokesRobinson(), e, m, p)
    dh = evaluate(ExtendedDebyeHuckel(), e, m, {"a": 3.97}).ln_gamma_pm
    rhs = dh - 3.5 / 2 * np.log(r.water_activity) - np.log1p(MOLAR_MASS_WATER * (2 - 3.5) * m)
    np.testing.assert_allclose(r.ln_gamma_pm, rhs, rtol=1e-12)


def test_handbook_cacl2():
    # CRC CaCl2 column (see _handbook.py) to 1 mol/kg with h = 12.0, a = 4.73 Å (from memory of
    # Stokes and Robinson 1948): within 0.005.
    sel = CACL2_M <= 1.0
    r = evaluate(StokesRobinson(), parse_formula("CaCl2"), CACL2_M[sel], {"h": 12.0, "a": 4.73})
    np.testing.assert_allclose(r.gamma_pm, CACL2_GAMMA[sel], atol=0.005)


def test_refuses_more_hydration_than_water():
    # h m M_w >= 1 would bind all the water (Stokes and Robinson 1948, the physical picture).
    with pytest.raises((ModelDomainError, ModelError)):
        evaluate(StokesRobinson(), parse_formula("NaCl"), [5.0], {"h": 12.0, "a": 4.0})


def test_not_supported_for_2_2():
    with pytest.raises(ModelDomainError):
        evaluate(StokesRobinson(), parse_formula("MgSO4"), [0.1])


def test_osmotic_coefficient_holds_near_the_hydration_limit():
    # At r m = h m M_w = 0.9987 the integrand of the closed form peaks as 1/(1 - r m) near u = 1;
    # the adaptive quadrature there keeps phi consistent with ln gamma± by Gibbs-Duhem (the
    # reference integral with 1024 nodes, converged to 1e-13 at this point; common practice, no
    # source) where the fixed 64 nodes were off by 2e-5.
    from saltbench.chemistry.electrolyte import parse_formula
    from saltbench.models.evaluate import evaluate, make_context, osmotic_by_gibbs_duhem
    from saltbench.water.debye_huckel import debye_huckel_constants

    e = parse_formula("KBr")
    m = np.array([3.6, 3.9, 3.99542056])
    params = {"h": 13.875, "a": 0.0}
    ctx = make_context(e, dh=debye_huckel_constants(273.15))
    ev = evaluate(StokesRobinson(), e, m, params, ctx=ctx)
    gd = osmotic_by_gibbs_duhem(StokesRobinson(), m, params, ctx, nodes=1024)
    np.testing.assert_allclose(ev.osmotic, gd, rtol=0, atol=1e-10)


@pytest.mark.parametrize("salt,h,a,m", [
    ("NaCl", 3.5, 3.97, [0.01, 0.5, 2.0, 4.0]),
    # r m = h m M_w above 0.9: the rows where the derivative integrals go adaptive too
    ("CaCl2", 12.0, 4.73, [0.5, 0.95 / (12.0 * MOLAR_MASS_WATER), 0.998 / (12.0 * MOLAR_MASS_WATER)]),
])
def test_analytic_derivatives_match_central_differences(salt, h, a, m):
    # d ln gamma± / d p and d phi / d p from the closed-form derivative integrals against central
    # differences of the model's own values (a step of 1e-6 relative leaves errors near 1e-9;
    # common practice, no source).
    from saltbench.models.evaluate import make_context

    e = parse_formula(salt)
    m = np.asarray(m)
    model, p = StokesRobinson(), {"h": h, "a": a}
    ctx = make_context(e)
    ln, phi, d_ln, d_phi = model.values_and_jacobian(m, p, ctx)
    np.testing.assert_allclose(ln, model.ln_gamma_pm(m, p, ctx), rtol=1e-14)
    for name in p:
        step = 1e-6 * p[name]
        up, down = dict(p, **{name: p[name] + step}), dict(p, **{name: p[name] - step})
        num_ln = (model.ln_gamma_pm(m, up, ctx) - model.ln_gamma_pm(m, down, ctx)) / (2 * step)
        num_phi = (model.osmotic(m, up, ctx) - model.osmotic(m, down, ctx)) / (2 * step)
        np.testing.assert_allclose(d_ln[name], num_ln, rtol=1e-6, atol=1e-8)
        np.testing.assert_allclose(d_phi[name], num_phi, rtol=1e-6, atol=1e-8)
