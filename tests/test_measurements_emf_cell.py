"""Cells without liquid junction: EMF -> gamma± and the standard EMF by extrapolation."""

import math

import numpy as np
import pytest
from scipy import constants as c

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.measurements import (
    CellSpec,
    emf_from_gamma,
    extrapolate_standard_emf,
    gamma_from_emf,
)

F = c.physical_constants["Faraday constant"][0]

# E°(Ag/AgCl) = 0.22234 V at 25 °C: from memory of Bates and Bower, J. Res. NBS 53, 283 (1954).
E_AGCL = 0.22234

# gamma±(HCl) at 25 °C: from memory of the CRC Handbook table "Mean Activity Coefficients of
# Electrolytes as a Function of Concentration" (HCl column, after Hamer and Wu, J. Phys. Chem.
# Ref. Data 1, 1047 (1972)); verify against the original before use in a regulated method.
HCL_M = np.array([0.001, 0.002, 0.005, 0.010, 0.020, 0.050, 0.100, 0.200, 0.500, 1.000, 2.000])
HCL_GAMMA = np.array([0.965, 0.952, 0.929, 0.905, 0.876, 0.830, 0.796, 0.767, 0.757, 0.809,
                      1.009])


def harned_cell_emf(m, gamma, t=298.15):
    # Pt | H2 | HCl(m) | AgCl | Ag: E = E° - (2RT/F) ln(m gamma±), written out here
    # independently of the code under test (Harned and Owen, 3rd ed., 1958, ch. 11).
    return E_AGCL - 2 * c.R * t / F * np.log(m * gamma)


HCL = CellSpec(parse_formula("HCl"), description="Pt | H2 | HCl(m) | AgCl | Ag")


def test_handbook_hcl_gamma_reduces_back_from_emf():
    e = harned_cell_emf(HCL_M, HCL_GAMMA)
    red = gamma_from_emf(HCL, HCL_M, e, E_AGCL)
    assert np.max(np.abs(red.gamma_pm - HCL_GAMMA)) < 0.001


def test_extrapolation_recovers_bates_bower_e_standard():
    dilute = HCL_M <= 0.1
    e = harned_cell_emf(HCL_M[dilute], HCL_GAMMA[dilute])
    fit = extrapolate_standard_emf(HCL, HCL_M[dilute], e)
    assert abs(fit.e_standard - E_AGCL) < 1e-4
    assert fit.ion_size_fitted and 0 < fit.ion_size < 20
    # The plot points and the line agree with the definition E' = E° + slope m.
    assert np.allclose(fit.line, fit.e_standard + fit.slope * fit.molality)
    assert np.allclose(fit.residuals, fit.e_prime - fit.line)


def test_extrapolation_with_noise_stays_within_its_uncertainty():
    rng = np.random.default_rng(11)
    dilute = HCL_M <= 0.1
    u_e = 3e-5
    e = harned_cell_emf(HCL_M[dilute], HCL_GAMMA[dilute]) + rng.normal(0, u_e, dilute.sum())
    fit = extrapolate_standard_emf(HCL, HCL_M[dilute], e, u_emf=u_e, ion_size=4.3)
    assert fit.uncertainty_basis == "u(E) as given"
    assert abs(fit.e_standard - E_AGCL) < max(3 * fit.u_e_standard, 1e-4)


def test_uncertainty_of_gamma_from_u_emf_and_u_e_standard():
    # u(ln gamma±) = u(E) / (2RT/F) for the hydrogen / silver-chloride cell (first-order
    # propagation of E = E° - (2RT/F) ln(m gamma±); common practice, no source).
    e = harned_cell_emf(HCL_M, HCL_GAMMA)
    red = gamma_from_emf(HCL, HCL_M, e, E_AGCL, u_emf=1e-4, u_e_standard=5e-5)
    k = 2 * c.R * 298.15 / F
    assert np.allclose(red.u_ln_gamma_independent, 1e-4 / k)
    assert red.u_ln_gamma_common == pytest.approx(5e-5 / k)
    assert np.allclose(red.u_gamma_pm, red.gamma_pm * math.hypot(1e-4, 5e-5) / k)


def test_zinc_chloride_cell_uses_three_ions_and_two_electrons():
    # Zn | ZnCl2(m) | AgCl | Ag: Zn + 2 AgCl -> Zn2+ + 2 Cl- + 2 Ag, so
    # E = E° - (RT/2F) ln(a_Zn a_Cl^2) with a_Zn = m gamma, a_Cl = 2 m gamma
    # (cell reaction; common practice, no source). gamma = 0.5 is an arbitrary test input.
    cell = CellSpec(parse_formula("ZnCl2"))
    assert cell.n == 2
    m, g, e0 = 0.05, 0.5, 0.985
    expected = e0 - c.R * 298.15 / (2 * F) * math.log((m * g) * (2 * m * g) ** 2)
    assert float(emf_from_gamma(cell, m, g, e0)[0]) == pytest.approx(expected, abs=1e-12)
    back = gamma_from_emf(cell, m, expected, e0)
    assert float(back.gamma_pm[0]) == pytest.approx(g, rel=1e-10)


def test_extrapolation_needs_more_points_than_parameters():
    with pytest.raises(UserError, match="more than 3 points"):
        extrapolate_standard_emf(HCL, [0.001, 0.01, 0.1], [0.58, 0.46, 0.35])
