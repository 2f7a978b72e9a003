"""The Gibbs-Duhem relation for one salt: the osmotic coefficient from ln gamma± by quadrature.

For a solution of one salt at molality m (Robinson and Stokes, Electrolyte Solutions, 2nd ed.,
1959, ch. 2),

    phi - 1 = (1/m) int_0^m m' d ln(gamma±) = ln(gamma±)(m) - int_0^1 ln(gamma±)(m u^2) 2u du.

The second form is integrated by Gauss-Legendre quadrature in u = sqrt(m'/m), where ln(gamma±)
is smooth (the Debye-Hückel sqrt(m) cusp becomes linear in u); 64 nodes reach 1e-12 for every
built-in model. This one module holds the nodes and the formula; the model layer, the fit, the
data check's smoothing function and the contract kit all use it.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

GAUSS_NODES = 64


@lru_cache(maxsize=8)
def unit_nodes(n: int = GAUSS_NODES) -> tuple[np.ndarray, np.ndarray]:
    """Gauss-Legendre nodes and weights on [0, 1] (read-only)."""
    x, w = np.polynomial.legendre.leggauss(n)
    nodes, weights = 0.5 * (x + 1.0), 0.5 * w
    nodes.flags.writeable = weights.flags.writeable = False
    return nodes, weights


@lru_cache(maxsize=8)
def dilution_weights(n: int = GAUSS_NODES) -> np.ndarray:
    """The weights 2 u w of int_0^1 f(m u^2) 2u du at the nodes u (read-only)."""
    u, w = unit_nodes(n)
    out = 2.0 * u * w
    out.flags.writeable = False
    return out


def dilution_grid(m: np.ndarray, n: int = GAUSS_NODES) -> np.ndarray:
    """The molalities m u^2 at which the integral needs ln(gamma±): (len(m) * n,), by molality."""
    u, _ = unit_nodes(n)
    return (np.asarray(m, dtype=float)[:, None] * u[None, :] ** 2).ravel()


def dilution_integral(on_grid: np.ndarray, n_molalities: int, n: int = GAUSS_NODES) -> np.ndarray:
    """int_0^1 f(m u^2) 2u du for each molality, from f on :func:`dilution_grid` (values may
    carry trailing columns: (len(m) * n, ...) in, (len(m), ...) out)."""
    g = np.asarray(on_grid).reshape(n_molalities, n, *np.shape(on_grid)[1:])
    if g.ndim == 2:
        return (g * dilution_weights(n)[None, :]).sum(axis=1)
    return np.einsum("nk...,k->n...", g, dilution_weights(n))


def osmotic_from_ln_gamma(ln_gamma_at_m: np.ndarray, ln_gamma_on_grid: np.ndarray,
                          n: int = GAUSS_NODES) -> np.ndarray:
    """phi from ln(gamma±) at the molalities and on their :func:`dilution_grid`."""
    at_m = np.asarray(ln_gamma_at_m, dtype=float)
    return 1.0 + at_m - dilution_integral(ln_gamma_on_grid, at_m.shape[0], n)
