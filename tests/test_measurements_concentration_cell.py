"""Concentration cells and calibrations against a reference solution."""

import math

import numpy as np
import pytest
from scipy import constants as c

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.measurements import (
    CellSpec,
    ion_activity_from_reference,
    ion_activity_ratio,
    mean_activity_from_reference,
    mean_activity_ratio,
)

F = c.physical_constants["Faraday constant"][0]
K2 = 2 * c.R * 298.15 / F  # 2RT/F for HCl in the hydrogen / silver-chloride cell

# gamma±(HCl) at 0.01 and 0.1 mol/kg, 25 °C: from memory of the CRC Handbook table "Mean
# Activity Coefficients of Electrolytes as a Function of Concentration" (HCl column).
G_001, G_01 = 0.905, 0.796

HCL = CellSpec(parse_formula("HCl"))


def test_mean_activity_ratio_of_two_harned_cells():
    # E(m) = E° - (2RT/F) ln(m gamma±) for each cell, so E° cancels in the difference
    # (Harned and Owen, 3rd ed., 1958, ch. 10).
    delta = -K2 * math.log(0.1 * G_01) + K2 * math.log(0.01 * G_001)
    r = mean_activity_ratio(HCL, delta)
    assert float(r.ratio[0]) == pytest.approx(0.1 * G_01 / (0.01 * G_001), rel=1e-10)


def test_gamma_of_a_sample_against_a_reference_solution():
    e_ref = 0.35
    e_s = e_ref - K2 * math.log(0.1 * G_01 / (0.01 * G_001))
    out = mean_activity_from_reference(HCL, e_s, e_ref, 0.01 * G_001, molality=0.1,
                                       u_emf=1e-4, u_a_reference=1e-5)
    assert float(out.gamma[0]) == pytest.approx(G_01, rel=1e-10)
    # First-order propagation: both readings carry u(E); k = 2RT/F (common practice, no source).
    rel = math.hypot(math.sqrt(2) * 1e-4 / K2, 1e-5 / (0.01 * G_001))
    assert float(out.u_activity[0]) == pytest.approx(float(out.activity[0]) * rel, rel=1e-9)
    assert "regulated" in out.caution


def test_single_ion_ratio_is_one_decade_per_nernst_slope():
    # 59.16 mV per decade for z = +1, -59.16 mV for z = -1, 29.58 mV for z = +2 at 25 °C
    # (Nernst equation with CODATA constants; common practice, no source).
    assert float(ion_activity_ratio(0.059160, +1).ratio[0]) == pytest.approx(10.0, rel=1e-4)
    assert float(ion_activity_ratio(-0.059160, -1).ratio[0]) == pytest.approx(10.0, rel=1e-4)
    assert float(ion_activity_ratio(0.029580, +2).ratio[0]) == pytest.approx(10.0, rel=1e-4)
    assert "convention" in ion_activity_ratio(0.01, 1).note


def test_single_ion_with_practical_slope_and_its_uncertainty():
    out = ion_activity_from_reference(0.157, 0.1, 1e-3, +1, slope=0.057, u_slope=0.0005,
                                      molality=0.0125)
    assert float(out.activity[0]) == pytest.approx(1e-2, rel=1e-10)
    assert float(out.gamma[0]) == pytest.approx(0.8, rel=1e-10)
    # d log10 r / d S = -log10(r) / S: one decade and u(S)/S = 0.877 % (common practice).
    expected = 1e-2 * math.log(10) * (1.0 * 0.0005 / 0.057)
    assert float(out.u_activity[0]) == pytest.approx(expected, rel=1e-9)


def test_slope_of_the_wrong_sign_is_refused():
    with pytest.raises(UserError, match="sign of the ion's charge"):
        ion_activity_ratio(0.05, -1, slope=0.059)


def test_arrays_are_reduced_elementwise():
    d = np.array([0.0, 0.05916, -0.05916])
    r = ion_activity_ratio(d, 1)
    assert np.allclose(r.ratio, [1.0, 10.0, 0.1], rtol=1e-4)
