"""The Debye-Hückel enthalpy and heat-capacity slopes A_H and A_J (saltbench.water.thermal_slopes):
against published values at 25 °C, over 0-100 °C, and the accuracy of the differencing."""

import math

import numpy as np
import pytest
from scipy import constants as c
from scipy.integrate import quad

from saltbench.water import debye_huckel_constants, debye_huckel_slopes


def test_slopes_at_25c_against_published_values():
    s = debye_huckel_slopes(298.15)
    # A_H / RT = 0.8018 (kg/mol)^1/2 at 25 °C (from memory of Bradley and Pitzer, J. Phys. Chem. 83,
    # 1599 (1979), as tabulated in Pitzer, Activity Coefficients in Electrolyte Solutions, 2nd ed.,
    # 1991, ch. 3). Their permittivity equation is not IAPWS R8-97, whose temperature derivative
    # differs by about 1 %: tolerance 1.5 %.
    assert s.a_h_over_rt == pytest.approx(0.8018, rel=0.015)
    # A_J / R about 3.9 (kg/mol)^1/2 at 25 °C (from memory of the same sources); the second
    # derivative of the permittivity differs more between formulations: 3.7 to 4.0
    assert 3.7 < s.a_j_over_r < 4.0
    assert s.a_phi == pytest.approx(debye_huckel_constants(298.15).a_phi, rel=1e-12)


def test_the_differences_do_not_depend_on_the_step():
    # truncation error of order h^4, rounding of order 1e-15 / h^2: the step must not matter
    for t in (273.15, 298.15, 348.15):
        a, b = debye_huckel_slopes(t, step_k=0.25), debye_huckel_slopes(t, step_k=1.0)
        assert a.a_h == pytest.approx(b.a_h, rel=1e-6)
        assert a.a_j == pytest.approx(b.a_j, rel=1e-5)


@pytest.mark.parametrize(("t1", "t2"), [(273.15, 323.15), (323.15, 373.15)])
def test_the_slopes_integrate_back(t1, t2):
    # Gibbs-Helmholtz in integral form: A_phi(t2) - A_phi(t1) = integral of A_H / (4 R T^2) dT,
    # and A_H(t2) - A_H(t1) = integral of A_J dT (the definitions, common practice, no source),
    # each integral by scipy's adaptive quadrature of the differenced slopes, at one pressure
    # (0.2 MPa: liquid to 120 °C) since the slopes are derivatives at constant pressure
    p = 2e5
    d_phi = debye_huckel_constants(t2, p).a_phi - debye_huckel_constants(t1, p).a_phi
    by_ah = quad(lambda t: debye_huckel_slopes(t, p).a_h / (4 * c.R * t * t), t1, t2, epsabs=1e-10)[0]
    assert by_ah == pytest.approx(d_phi, rel=1e-6)
    d_ah = debye_huckel_slopes(t2, p).a_h - debye_huckel_slopes(t1, p).a_h
    by_aj = quad(lambda t: debye_huckel_slopes(t, p).a_j, t1, t2, epsabs=1e-8)[0]
    assert by_aj == pytest.approx(d_ah, rel=1e-5)


def test_over_0_to_100c_against_the_remembered_table():
    # A_phi of Archer and Wang (1990) at 0 and 100 °C, 0.3767 and 0.4596 (from memory, as in
    # tests/test_water.py): the mean of A_H / (4 R T^2) over that range must give their difference
    # within the remembered values' 0.001
    mean = quad(lambda t: debye_huckel_slopes(t).a_h / (4 * c.R * t * t), 273.15, 373.15)[0]
    assert mean == pytest.approx(0.4596 - 0.3767, abs=0.0015)
    # both slopes rise with temperature over 0-100 °C (Bradley and Pitzer 1979, from memory)
    grid = np.linspace(273.15, 373.15, 6)
    slopes = [debye_huckel_slopes(t) for t in grid]
    assert all(np.diff([s.a_h for s in slopes]) > 0) and all(np.diff([s.a_j for s in slopes]) > 0)


def test_above_the_boiling_point_the_stencil_keeps_one_pressure():
    s = debye_huckel_slopes(423.15)
    assert s.pressure_pa > 4.7e5  # above the saturation pressure at 150 °C (about 4.76e5 Pa, IAPWS-IF97)
    assert math.isfinite(s.a_h) and math.isfinite(s.a_j) and s.a_h > debye_huckel_slopes(373.15).a_h
