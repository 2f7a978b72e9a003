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
# The series runs only on the elements that need it, so typical data (x > 0.1 above
# I ~ 0.006 mol/kg) never pay for it.
_SERIES_BELOW = 0.1
_N = 22
_n = np.arange(_N)
_SIGMA_COEF = 3.0 * (-1.0) ** _n * (_n + 1) / (_n + 3)
_TAU_COEF = (-1.0) ** _n * (_n + 1) * (_n + 2) / (_n + 4)
_k = np.arange(2, _N + 2)
_PSI_COEF = (-1.0) ** _k * (_k - 1) / _k


def _series(coef: np.ndarray, x: np.ndarray) -> np.ndarray:
    """sum_n coef[n] x^n for the (few) small arguments ``x``.

    Powers by one broadcast and a dot product rather than Horner's rule: two numpy calls
    instead of 44 on these short arrays. With x < 0.1 the terms fall tenfold each, so the
    rounding error stays near eps times the first term, as with Horner's rule.
    """
    return (x[:, None] ** _n) @ coef


def _piecewise(x: np.ndarray, closed, coef: np.ndarray) -> np.ndarray:
    """``closed(x)`` where x >= _SERIES_BELOW, the power series with ``coef`` below.

    Each branch runs only on its own elements; most data never reach the series, and then the
    closed form runs once on the whole array with no masking.
    """
    small = x < _SERIES_BELOW
    if not small.any():
        return closed(x)
    out = np.empty_like(x)
    big = ~small
    out[big] = closed(x[big])
    out[small] = _series(coef, x[small])
    return out


def _sigma_closed(x: np.ndarray) -> np.ndarray:
    return 3.0 / x**3 * (1.0 + x - 1.0 / (1.0 + x) - 2.0 * np.log1p(x))


def _tau_closed(x: np.ndarray) -> np.ndarray:
    j = x - 3.0 * np.log1p(x) + 3.0 * x / (1.0 + x) + 0.5 * (1.0 / (1.0 + x) ** 2 - 1.0)
    return 2.0 * j / x**4


def sigma(x: np.ndarray) -> np.ndarray:
    """Robinson and Stokes' sigma(x); sigma(0) = 1."""
    return _piecewise(np.asarray(x, dtype=float), _sigma_closed, _SIGMA_COEF)


def tau(x: np.ndarray) -> np.ndarray:
    """(2/x^4) int_0^x t^3/(1+t)^3 dt; tau(0) = 1/2."""
    return _piecewise(np.asarray(x, dtype=float), _tau_closed, _TAU_COEF)


def size_term(a_gamma: float | np.ndarray, z2: float, sqrt_i: np.ndarray, x: np.ndarray) -> np.ndarray:
    """ln gamma_i of the ion-size term: -A z^2 sqrt(I) / (1 + x)."""
    return -a_gamma * z2 * sqrt_i / (1.0 + x)


def size_term_osmotic(a_gamma: float | np.ndarray, z2: float, sqrt_i: np.ndarray, x: np.ndarray) -> np.ndarray:
    """phi - 1 of the ion-size term: -(A z^2 / 3) sqrt(I) sigma(x)."""
    return -a_gamma * z2 * sqrt_i * sigma(x) / 3.0


def size_term_d_a(a_gamma: float | np.ndarray, z2: float, b: float | np.ndarray, i: np.ndarray,
                  x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(d ln gamma_i / d a, d phi / d a) of the ion-size term, a in the unit of 1/B."""
    return a_gamma * z2 * b * i / (1.0 + x) ** 2, a_gamma * z2 * b * i * tau(x)


def bromley_shape(i: np.ndarray, rho: float) -> tuple[np.ndarray, np.ndarray]:
    """(I / (1 + rho I)^2, its osmotic partner) for Bromley's middle term."""
    i = np.asarray(i, dtype=float)
    y = rho * i
    shape = i / (1.0 + y) ** 2
    # mean = (1/(rho^2 I)) [ln(1 + y) + 1/(1 + y) - 1] = I psi(y), psi by its series at small y
    small = y < _SERIES_BELOW
    if not small.any():
        mean = (np.log1p(y) + 1.0 / (1.0 + y) - 1.0) / (rho**2 * i)
    else:
        mean = np.empty_like(y)
        big = ~small
        yb = y[big]
        mean[big] = (np.log1p(yb) + 1.0 / (1.0 + yb) - 1.0) / (rho**2 * i[big])
        mean[small] = i[small] * _series(_PSI_COEF, y[small])
    return shape, shape - mean
