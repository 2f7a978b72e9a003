"""Pitzer's unsymmetrical mixing terms: J(x) of Pitzer (1975), eq. 47, against its defining
integral, and the properties Etheta must have.

The reference is the defining integral of Pitzer, J. Solution Chem. 4, 249 (1975),
J(x) = x/4 - 1 + (1/x) int_0^inf [1 - exp(-(x/y) e^-y)] y^2 dy, computed with
scipy.integrate.quad (a general-purpose reference library); J'(x) by differentiating under the
integral sign. The tolerances are the accuracy measured for the approximation and stated in
plugins/_etheta.py; they would catch a wrong constant (C1 = 4.58 instead of 4.581 moves J(2) by
0.02 %, which they do not catch; C2 = 0.7 instead of 0.7237 moves it by 4 %, which they do).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from saltbench.plugins._etheta import etheta, j_and_derivative


def _integral_j(x: float) -> float:
    v, _ = quad(lambda y: -math.expm1(-(x / y) * math.exp(-y)) * y * y, 0.0, math.inf,
                limit=400, epsabs=1e-14, epsrel=1e-12)
    return x / 4.0 - 1.0 + v / x


def _integral_dj(x: float) -> float:
    v1, _ = quad(lambda y: -math.expm1(-(x / y) * math.exp(-y)) * y * y, 0.0, math.inf,
                 limit=400, epsabs=1e-14, epsrel=1e-12)
    v2, _ = quad(lambda y: math.exp(-(x / y) * math.exp(-y) - y) * y, 0.0, math.inf,
                 limit=400, epsabs=1e-14, epsrel=1e-12)
    return 0.25 - v1 / x**2 + v2 / x


X = np.geomspace(0.05, 300.0, 60)


def test_the_quadrature_reference_is_itself_right():
    # J(1) = 0.1164 (from memory of Pitzer (1975), table of J; also Pitzer (1991), ch. 3), and
    # the derivative by differentiation under the integral equals central differences
    assert _integral_j(1.0) == pytest.approx(0.1164, abs=1e-4)
    h = 1e-4
    assert _integral_dj(2.0) == pytest.approx((_integral_j(2 + h) - _integral_j(2 - h)) / (2 * h),
                                              rel=1e-7)


def test_j_against_the_defining_integral():
    j, _ = j_and_derivative(X)
    ref = np.array([_integral_j(x) for x in X])
    # measured: largest relative deviation 1.5 % for 0.05 <= x <= 300 (near x = 0.1)
    np.testing.assert_allclose(j, ref, rtol=0.016)
    small = X <= 10.0
    assert np.max(np.abs(j - ref)[small]) < 0.008
    # below x = 0.05 the relative error grows, the absolute one stays small
    tiny = np.geomspace(1e-3, 0.05, 12)
    ref_tiny = np.array([_integral_j(x) for x in tiny])
    assert np.max(np.abs(j_and_derivative(tiny)[0] - ref_tiny)) < 1e-5


def test_j_prime_against_the_integral_derivative():
    _, dj = j_and_derivative(X)
    ref = np.array([_integral_dj(x) for x in X])
    # measured: largest relative deviation 1.9 % for 0.05 <= x <= 300
    np.testing.assert_allclose(dj, ref, rtol=0.02)


def test_j_prime_is_the_derivative_of_j_itself():
    # exact derivative of the approximation: what keeps the mixture equations consistent
    h = 1e-6 * X
    up, dn = j_and_derivative(X + h)[0], j_and_derivative(X - h)[0]
    np.testing.assert_allclose(j_and_derivative(X)[1], (up - dn) / (2 * h), rtol=1e-7)


def test_j_vanishes_at_zero():
    j, dj = j_and_derivative(np.array([0.0]))
    assert j[0] == 0.0 and dj[0] == 0.0


def test_etheta_is_symmetric_and_zero_for_equal_charges():
    i = np.array([0.01, 0.5, 1.0, 6.0])
    a_phi = np.full(i.shape, 0.392)
    for zi, zj in ((1, 2), (-1, -2), (1, 3), (2, 3)):
        e_ij, ep_ij = etheta(zi, zj, i, a_phi)
        e_ji, ep_ji = etheta(zj, zi, i, a_phi)
        np.testing.assert_array_equal(e_ij, e_ji)
        np.testing.assert_array_equal(ep_ij, ep_ji)
        assert np.all(e_ij != 0.0)
    for z in (1, 2, -1, -2):
        e, ep = etheta(z, z, i, a_phi)
        assert np.all(e == 0.0) and np.all(ep == 0.0)


def test_etheta_prime_is_the_ionic_strength_derivative():
    # Etheta' = d Etheta / d I (Pitzer 1975): central differences in I
    i = np.array([0.05, 0.5, 2.0, 6.0])
    a_phi = np.full(i.shape, 0.392)
    h = 1e-6 * i
    for zi, zj in ((1, 2), (-1, -2), (2, 3)):
        fd = (etheta(zi, zj, i + h, a_phi)[0] - etheta(zi, zj, i - h, a_phi)[0]) / (2 * h)
        np.testing.assert_allclose(etheta(zi, zj, i, a_phi)[1], fd, rtol=1e-6)


def _etheta_by_quadrature(zi: int, zj: int, i: float, a_phi: float) -> float:
    x = {(p, q): 6.0 * p * q * a_phi * math.sqrt(i) for p in (zi, zj) for q in (zi, zj)}
    return zi * zj / (4.0 * i) * (_integral_j(x[zi, zj]) - 0.5 * _integral_j(x[zi, zi])
                                  - 0.5 * _integral_j(x[zj, zj]))


def test_etheta_against_the_defining_integral():
    # Etheta from the quadrature J (Pitzer 1975's definition) against Etheta from eq. 47: the
    # J errors partly cancel in the difference; measured within 3 % for these cases. Etheta is
    # negative for unlike charges (J is convex in ln x and x_ij is the geometric mean of x_ii and
    # x_jj, common practice, no source)
    for zi, zj in ((1, 2), (-1, -2), (2, 3), (1, 3)):
        for i in (0.1, 1.0, 6.0):
            ref = _etheta_by_quadrature(zi, zj, i, 0.392)
            got = etheta(zi, zj, np.array([i]), np.array([0.392]))[0][0]
            assert ref < 0.0
            assert got == pytest.approx(ref, rel=0.03), (zi, zj, i)
