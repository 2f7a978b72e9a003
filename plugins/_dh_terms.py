"""Shared pieces of the Debye-Hückel family: the ion-size term, its osmotic partner, derivatives.

The ion-size term of Debye and Hückel (Phys. Z. 24, 185 (1923)) for one ion, natural-log basis,

    ln gamma_i = -A z_i^2 sqrt(I) / (1 + x),        x = B a sqrt(I),

has, through the Gibbs-Duhem relation phi - 1 = ln gamma - (1/I) int_0^I ln gamma dI' (valid
for a single salt, where I is proportional to m), the osmotic partner

    phi - 1 = -(A z_i^2 / 3) sqrt(I) sigma(x),
    sigma(x) = (3 / x^3) [1 + x - 1/(1 + x) - 2 ln(1 + x)],

the sigma function of Robinson and Stokes (Electrolyte Solutions, 2nd ed., 1959, ch. 9, the
osmotic coefficient from the Debye-Hückel equation with ion size; equation number from memory of
that text, eq. 9.9). We derived it again here; the contract kit checks it numerically against
the Gibbs-Duhem integral. Its derivative with respect to the ion size a is

    d ln gamma_i / d a = A z_i^2 B I / (1 + x)^2,
    d phi / d a        = A z_i^2 B I tau(x),   tau(x) = (2 / x^4) J(x),
    J(x) = int_0^x t^3/(1+t)^3 dt = x - 3 ln(1+x) + 3x/(1+x) + (1/(1+x)^2 - 1)/2.

Both closed forms lose digits to cancellation at small x, where their power series are used
instead: sigma = 3 sum (-1)^n (n+1)/(n+3) x^n, tau = sum (-1)^n (n+1)(n+2)/(n+4) x^n.

The same construction for the Bromley term c I / (1 + rho I)^2 gives
    phi - 1 = c I / (1 + y)^2 - (c / (rho^2 I)) [ln(1 + y) + 1/(1 + y) - 1],   y = rho I,
with the series c I sum_{k>=2} (-1)^k (k-1)/k y^(k-2) for small y.
"""

from __future__ import annotations

import numpy as np

# Below this argument the closed forms lose digits to cancellation (about eps / x^3: 2e-13
# relative at x = 0.1); the 22-term series is exact to rounding there (22 x 0.1^22 ~ 2e-21).
# Horner's rule runs only on the elements that need it, so typical data (x > 0.1 above
# I ~ 0.006 mol/kg) never pay for the series.
_SERIES_BELOW = 0.1
_N = 22
_n = np.arange(_N)
_SIGMA_COEF = 3.0 * (-1.0) ** _n * (_n + 1) / (_n + 3)
_TAU_COEF = (-1.0) ** _n * (_n + 1) * (_n + 2) / (_n + 4)
_k = np.arange(2, _N + 2)
_PSI_COEF = (-1.0) ** _k * (_k - 1) / _k


def _series(coef: np.ndarray, x: np.ndarray) -> np.ndarray:
    out = np.zeros_like(x)
    small = x < _SERIES_BELOW
    if not small.any():
        return out
    xs = x[small]
    acc = np.full_like(xs, coef[-1])
    for c in coef[-2::-1]:
        acc = acc * xs + c
    out[small] = acc
    return out


def sigma(x: np.ndarray) -> np.ndarray:
    """Robinson and Stokes' sigma(x); sigma(0) = 1."""
    x = np.asarray(x, dtype=float)
    small = x < _SERIES_BELOW
    xs = np.where(small, 1.0, x)  # keeps the closed form away from 0/0 where it is not used
    closed = 3.0 / xs**3 * (1.0 + xs - 1.0 / (1.0 + xs) - 2.0 * np.log1p(xs))
    return np.where(small, _series(_SIGMA_COEF, np.where(small, x, 0.0)), closed)


def tau(x: np.ndarray) -> np.ndarray:
    """(2/x^4) int_0^x t^3/(1+t)^3 dt; tau(0) = 1/2."""
    x = np.asarray(x, dtype=float)
    small = x < _SERIES_BELOW
    xs = np.where(small, 1.0, x)
    j = xs - 3.0 * np.log1p(xs) + 3.0 * xs / (1.0 + xs) + 0.5 * (1.0 / (1.0 + xs) ** 2 - 1.0)
    return np.where(small, _series(_TAU_COEF, np.where(small, x, 0.0)), 2.0 * j / xs**4)


def size_term(a_gamma: float, z2: float, sqrt_i: np.ndarray, x: np.ndarray) -> np.ndarray:
    """ln gamma_i of the ion-size term: -A z^2 sqrt(I) / (1 + x)."""
    return -a_gamma * z2 * sqrt_i / (1.0 + x)


def size_term_osmotic(a_gamma: float, z2: float, sqrt_i: np.ndarray, x: np.ndarray) -> np.ndarray:
    """phi - 1 of the ion-size term: -(A z^2 / 3) sqrt(I) sigma(x)."""
    return -a_gamma * z2 * sqrt_i * sigma(x) / 3.0


def size_term_d_a(a_gamma: float, z2: float, b: float, i: np.ndarray,
                  x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(d ln gamma_i / d a, d phi / d a) of the ion-size term, a in the unit of 1/B."""
    return a_gamma * z2 * b * i / (1.0 + x) ** 2, a_gamma * z2 * b * i * tau(x)


def bromley_shape(i: np.ndarray, rho: float) -> tuple[np.ndarray, np.ndarray]:
    """(I / (1 + rho I)^2, its osmotic partner) for Bromley's middle term."""
    i = np.asarray(i, dtype=float)
    y = rho * i
    small = y < _SERIES_BELOW
    ys = np.where(small, 1.0, y)
    isafe = np.where(small, 1.0, i)
    closed = (np.log1p(ys) + 1.0 / (1.0 + ys) - 1.0) / (rho**2 * isafe)
    mean = np.where(small, i * _series(_PSI_COEF, np.where(small, y, 0.0)), closed)
    shape = i / (1.0 + y) ** 2
    return shape, shape - mean
