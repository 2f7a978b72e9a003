"""Osmotic <-> activity coefficients through Gibbs-Duhem, on handbook NaCl values."""

import math

import numpy as np
import pytest

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.measurements import activity_from_osmotic, osmotic_from_activity, sigma
from saltbench.water import debye_huckel_constants

# NaCl at 25 °C: osmotic and mean activity coefficients from memory of Robinson and Stokes,
# Electrolyte Solutions, 2nd ed. (1959), Appendix 8.10; verify against the original before use
# in a regulated method.
M = np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0, 1.2, 1.4, 1.6, 1.8, 2.0, 2.5,
              3.0, 3.5, 4.0, 4.5, 5.0, 5.5, 6.0])
PHI = np.array([0.9324, 0.9245, 0.9215, 0.9203, 0.9209, 0.9230, 0.9257, 0.9288, 0.9320, 0.9355,
                0.9428, 0.9513, 0.9616, 0.9723, 0.9833, 1.0130, 1.0453, 1.0796, 1.1158, 1.1531,
                1.1916, 1.2312, 1.2706])
GAMMA = np.array([0.778, 0.735, 0.710, 0.693, 0.681, 0.673, 0.667, 0.662, 0.659, 0.657, 0.654,
                  0.655, 0.657, 0.662, 0.668, 0.688, 0.714, 0.746, 0.783, 0.826, 0.874, 0.928,
                  0.986])
NACL = parse_formula("NaCl")


def test_handbook_osmotic_coefficients_give_handbook_gamma():
    out = activity_from_osmotic(NACL, M, PHI)
    assert np.max(np.abs(out.gamma_pm - GAMMA)) < 0.003
    assert out.extrapolated_below == pytest.approx(0.1)
    assert not out.extrapolated.any()
    assert out.extrapolation.form == "huckel"


def test_handbook_gamma_gives_handbook_osmotic_coefficients():
    out = osmotic_from_activity(NACL, M, GAMMA)
    assert np.max(np.abs(out.osmotic - PHI)) < 0.003


def test_values_below_the_lowest_point_are_flagged_as_extrapolated():
    out = activity_from_osmotic(NACL, M, PHI, at=[0.01, 0.05, 0.1, 0.25])
    assert out.extrapolated.tolist() == [True, True, False, False]
    assert any("below 0.1 mol/kg" in n for n in out.notes)
    # gamma±(NaCl, 0.01 mol/kg) = 0.902 and 0.05 mol/kg = 0.821: from memory of the CRC Handbook
    # table "Mean Activity Coefficients of Electrolytes as a Function of Concentration".
    assert out.gamma_pm[:2] == pytest.approx([0.902, 0.821], abs=0.003)


def test_limiting_law_factor_of_three_between_osmotic_and_activity_slopes():
    # phi - 1 = -A_phi sqrt(m) implies ln gamma± = -3 A_phi sqrt(m) for a 1-1 salt
    # (Debye and Hückel, Phys. Z. 24, 185 (1923); Robinson and Stokes ch. 9).
    a_phi = debye_huckel_constants(298.15).a_phi
    m = np.geomspace(1e-6, 1e-4, 12)
    out = activity_from_osmotic(NACL, m, 1 - a_phi * np.sqrt(m), ion_size=0.0)
    assert out.ln_gamma_pm == pytest.approx(-3 * a_phi * np.sqrt(m), abs=2e-6)


def test_sigma_function():
    # sigma(1) = 3 (1 + 1 - 1/2 - 2 ln 2) (closed form, Robinson and Stokes eq. 9.10);
    # sigma(0) = 1; the series and closed form join at x = 0.05.
    assert float(sigma(1.0)) == pytest.approx(3 * (1.5 - 2 * math.log(2)), rel=1e-12)
    assert float(sigma(0.0)) == 1.0
    x = np.array([0.0499999, 0.0500001])
    assert abs(float(sigma(x)[0] - sigma(x)[1])) < 1e-6


def test_linear_propagation_agrees_with_monte_carlo():
    # Check of first-order propagation against sampling (common practice, no source).
    u = 0.002
    lin = activity_from_osmotic(NACL, M, PHI, u_osmotic=u)
    rng = np.random.default_rng(3)
    draws = np.array([activity_from_osmotic(NACL, M, PHI + rng.normal(0, u, M.size)).ln_gamma_pm
                      for _ in range(150)])
    spread = draws.std(axis=0, ddof=1)
    assert np.allclose(lin.u_ln_gamma_pm, spread, rtol=0.25)


def test_unsorted_molalities_and_out_of_range_requests_are_refused():
    with pytest.raises(UserError, match="strictly increasing"):
        activity_from_osmotic(NACL, M[::-1], PHI[::-1])
    with pytest.raises(UserError, match="no extrapolation above"):
        activity_from_osmotic(NACL, M, PHI, at=[7.0])
