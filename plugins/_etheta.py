"""Pitzer's unsymmetrical mixing terms Etheta and Etheta' for ions of like sign and unlike charge.

Source: K. S. Pitzer, J. Solution Chem. 4, 249 (1975) (the electrostatic mixing terms of ions of
the same sign and different charges, from the Debye-Hückel limiting-law cluster integrals), in the
form used by C. E. Harvie, N. Møller and J. H. Weare, Geochim. Cosmochim. Acta 48, 723 (1984),
appendix. With A_phi the Debye-Hückel osmotic slope and I the ionic strength:

    x_ij       = 6 z_i z_j A_phi sqrt(I)
    Etheta_ij  = (z_i z_j / (4 I)) [J(x_ij) - J(x_ii)/2 - J(x_jj)/2]
    Etheta'_ij = -Etheta_ij / I + (z_i z_j / (8 I^2)) [x_ij J'(x_ij) - x_ii J'(x_ii)/2
                                                       - x_jj J'(x_jj)/2]

so Etheta' = d Etheta / d I, and both vanish for z_i = z_j. J is the integral

    J(x) = x/4 - 1 + (1/x) int_0^inf [1 - exp(-(x/y) e^-y)] y^2 dy.

The numerical method: Pitzer (1975), eq. 47, the four-constant approximation

    J(x) = x / (4 + C1 x^-C2 exp(-C3 x^C4)),   C1 = 4.581, C2 = 0.7237, C3 = 0.0120, C4 = 0.528

(the constants typed from memory of Pitzer (1975) as also quoted in Pitzer, Activity Coefficients
in Electrolyte Solutions, 2nd ed., 1991, ch. 3; verify against the original before use in a
regulated method). J' here is the exact derivative of that approximation, not a second fit, so
the mixture equations built on it stay the derivatives of one excess Gibbs energy (the
cross-differential identity and Gibbs-Duhem hold to rounding, whatever the approximation's error).

Accuracy measured against the defining integral by scipy.integrate.quad
(tests/test_pitzer_etheta.py): for 0.05 <= x <= 300 the approximation is within 1.5 % of J
(0.294 against 0.297 at x = 2) and within 0.008 absolute up to x = 10; below x = 0.05 the relative
error grows (35 % at x = 0.001) while the absolute error stays below 1e-5. J' is within 1.9 % of
the integral's derivative for 0.05 <= x <= 300. Etheta itself is within 1.8 % of Etheta from the
integral for 1-2, 1-3 and 2-3 mixing at 0.01 <= I <= 10 mol/kg (A_phi = 0.392). In a mixture x
runs from about 0.1 to 25 (2-2 interactions at I = 6 mol/kg).
"""

from __future__ import annotations

import numpy as np

C1, C2, C3, C4 = 4.581, 0.7237, 0.0120, 0.528  # Pitzer (1975), eq. 47 (from memory)


def j_and_derivative(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """J(x) and J'(x) of Pitzer's eq. 47 approximation, elementwise; 0 and 0 at x = 0."""
    x = np.asarray(x, dtype=float)
    pos = x > 0.0
    xs = np.where(pos, x, 1.0)
    xc4 = xs**C4
    q = C1 * np.exp(-C2 * np.log(xs) - C3 * xc4)  # C1 x^-C2 exp(-C3 x^C4)
    d = 4.0 + q
    j = xs / d
    dj = (4.0 + q * (1.0 + C2 + C3 * C4 * xc4)) / (d * d)
    return np.where(pos, j, 0.0), np.where(pos, dj, 0.0)


def etheta(z_i: float, z_j: float, ionic_strength: np.ndarray, a_phi: np.ndarray | float
           ) -> tuple[np.ndarray, np.ndarray]:
    """(Etheta_ij, Etheta'_ij) for charges ``z_i``, ``z_j`` (same sign) at each ionic strength.

    Zero where the charges are equal or I = 0 (no solution): the terms then have no part.
    """
    i = np.asarray(ionic_strength, dtype=float)
    if z_i == z_j:
        zero = np.zeros(np.broadcast(i, a_phi).shape)
        return zero, zero.copy()
    et, etp = etheta_of_types(((z_i, z_j),), i, a_phi)
    return et[0], etp[0]


def etheta_of_types(types, ionic_strength: np.ndarray, a_phi: np.ndarray | float
                    ) -> tuple[np.ndarray, np.ndarray]:
    """Etheta and Etheta' (T, N) for each pair of unequal charges (z_i, z_j) of ``types`` (T),
    at each ionic strength (N,); ``a_phi`` a number or (N,).

    The cost is one sqrt, one log and one exp shared by all, and one exp per distinct product
    z_i z_j: x = z_i z_j 6 A_phi sqrt(I), so ln x and x^C4 are those of 6 A_phi sqrt(I) shifted
    and scaled by constants. J and J' are eq. 47 and its exact derivative, as
    :func:`j_and_derivative` gives them (the same values to rounding).
    """
    # each pair in one order: the same sums in the same order for (z_i, z_j) and (z_j, z_i)
    types = [tuple(sorted((float(zi), float(zj)))) for zi, zj in types]
    i = np.asarray(ionic_strength, dtype=float)
    pos = i > 0.0
    everywhere = bool(pos.all())
    safe = i if everywhere else np.where(pos, i, 1.0)
    base = np.sqrt(safe)
    base *= 6.0 * np.asarray(a_phi, dtype=float)  # x / (z_i z_j)
    log_base = np.log(base)
    base_c4 = np.multiply(log_base, C4)
    np.exp(base_c4, out=base_c4)  # (x / z_i z_j)^C4
    log_base *= -C2
    # J(x) / (z_i z_j) and x J'(x) / (z_i z_j) once per distinct product of charges, as rows
    products = list(dict.fromkeys(float(zz) for zi, zj in types
                                  for zz in (zi * zj, zi * zi, zj * zj)))
    zz_col = np.array(products)[:, None]
    # all products at once, (P, N): C3 x^C4, then q = C1 x^-C2 exp(-C3 x^C4)
    u = base_c4 * (C3 * zz_col**C4)
    q = np.subtract(log_base, u)
    np.exp(q, out=q)
    q *= C1 * zz_col**-C2
    r = q + 4.0
    np.divide(1.0, r, out=r)  # 1 / (4 + q)
    j_rows = base * r  # J / zz = (x / zz) / (4 + q)
    u *= C4
    u += 1.0 + C2
    u *= q
    u += 4.0
    u *= r
    xdj_rows = np.multiply(u, j_rows, out=u)  # x J' / zz = (x / zz) (4 + q(1 + C2 + C4 C3 x^C4)) / (4 + q)^2
    # Etheta = (z_i z_j / 4I) [J(x_ij) - J(x_ii)/2 - J(x_jj)/2], and the same of x J' / 8I^2
    weights = np.zeros((len(types), len(products)))
    for t, (zi, zj) in enumerate(types):
        zij = zi * zj
        for zz, c in ((zi * zj, 1.0), (zi * zi, -0.5), (zj * zj, -0.5)):
            weights[t, products.index(zz)] += zij * c * zz
    inv = 1.0 / safe
    et = weights @ j_rows
    et *= 0.25 * inv
    etp = weights @ xdj_rows
    etp *= 0.125 * inv * inv
    etp -= et * inv
    if not everywhere:
        et[:, ~pos] = 0.0
        etp[:, ~pos] = 0.0
    return et, etp
