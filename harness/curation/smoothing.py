"""A flexible, Gibbs-Duhem-consistent smoothing function for one electrolyte's data.

ln gamma± is expanded as the Debye-Hückel-Pitzer long-range term (fixed by A_phi; Pitzer,
J. Phys. Chem. 77, 268 (1973), eq. 19) plus linear combinations of basis functions of molality:
powers m^p and the Pitzer-type exponential terms. Each basis function's osmotic partner follows
from the Gibbs-Duhem integral (saltbench.chemistry.gibbs_duhem), so a fit to osmotic data predicts
activity coefficients and vice versa with no further assumption. This is a data-checking tool,
not an activity model: it has no physical parameters and is never ranked against models.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.gibbs_duhem import dilution_grid, dilution_integral
from saltbench.water.debye_huckel import DebyeHuckel

B_PITZER = 1.2


def _dh_ln_gamma(m: np.ndarray, e: Electrolyte, dh: DebyeHuckel) -> np.ndarray:
    s = np.sqrt(e.ionic_strength(m))
    return -e.zz * dh.a_phi * (s / (1 + B_PITZER * s) + (2 / B_PITZER) * np.log1p(B_PITZER * s))


def _basis(m: np.ndarray, e: Electrolyte, n_terms: int) -> np.ndarray:
    s = np.sqrt(e.ionic_strength(m))
    alpha = 1.4 if e.charge_type == (2, 2) else 2.0
    x = alpha * s
    with np.errstate(divide="ignore", invalid="ignore"):
        g = np.where(x > 1e-6, 2 * (1 - (1 + x) * np.exp(-x)) / np.where(x > 0, x * x, 1), 1 - 2 * x / 3)
    cols = [m * g, m, m ** 1.5, m ** 2, m ** 2.5, m ** 3, m ** 3.5, m ** 4]
    if e.charge_type == (2, 2):
        x2 = 12.0 * s
        g2 = np.where(x2 > 1e-6, 2 * (1 - (1 + x2) * np.exp(-x2)) / np.where(x2 > 0, x2 * x2, 1), 1 - 2 * x2 / 3)
        cols.insert(1, m * g2)
    return np.column_stack(cols[:n_terms])


def _osmotic_partner(fn, m: np.ndarray) -> np.ndarray:
    # phi - 1 = f(m) - int_0^1 f(m u^2) 2u du, column by column
    return fn(m) - dilution_integral(fn(dilution_grid(m)), m.size)


@dataclass
class SmoothFit:
    electrolyte: Electrolyte
    dh: DebyeHuckel
    coef: np.ndarray
    n_terms: int

    def ln_gamma(self, m: np.ndarray) -> np.ndarray:
        m = np.asarray(m, float)
        return _dh_ln_gamma(m, self.electrolyte, self.dh) + _basis(m, self.electrolyte, self.n_terms) @ self.coef

    def osmotic(self, m: np.ndarray) -> np.ndarray:
        m = np.asarray(m, float)
        dh_part = _osmotic_partner(lambda x: _dh_ln_gamma(x, self.electrolyte, self.dh)[:, None], m)[:, 0]
        cols = _osmotic_partner(lambda x: _basis(x, self.electrolyte, self.n_terms), m)
        return 1.0 + dh_part + cols @ self.coef


def design(e: Electrolyte, dh: DebyeHuckel, m: np.ndarray, kind: str, n_terms: int) -> tuple[np.ndarray, np.ndarray]:
    """(offset, columns) such that prediction = offset + columns @ coef."""
    if kind == "ln_gamma":
        return _dh_ln_gamma(m, e, dh), _basis(m, e, n_terms)
    dh_part = _osmotic_partner(lambda x: _dh_ln_gamma(x, e, dh)[:, None], m)[:, 0]
    return 1.0 + dh_part, _osmotic_partner(lambda x: _basis(x, e, n_terms), m)


def choose_terms(n_points: int, m_max: float) -> int:
    """Enough flexibility for the range, never more than the points can support."""
    wanted = 3 if m_max <= 0.2 else 4 if m_max <= 1.0 else 5 if m_max <= 4 else 6 if m_max <= 10 else 8
    return max(1, min(wanted, n_points - 2))


def fit_smooth(e: Electrolyte, dh: DebyeHuckel, m: np.ndarray, y: np.ndarray, u: np.ndarray,
               kind: str, n_terms: int | None = None) -> tuple[SmoothFit, np.ndarray]:
    """Weighted linear fit; returns the fit and the leave-one-out residuals (y - prediction)."""
    m, y, u = (np.asarray(a, float) for a in (m, y, u))
    k = n_terms or choose_terms(len(m), float(m.max()))
    off, cols = design(e, dh, m, kind, k)
    w = 1.0 / u
    a = cols * w[:, None]
    b = (y - off) * w
    coef, *_ = np.linalg.lstsq(a, b, rcond=None)
    resid = y - off - cols @ coef
    # leverage of the weighted problem -> exact leave-one-out residuals of a linear fit
    q, _ = np.linalg.qr(a)
    h = np.clip((q * q).sum(axis=1), 0, 1 - 1e-9)
    return SmoothFit(e, dh, coef, k), resid / (1 - h)


def fit_smooth_joint(e: Electrolyte, dh: DebyeHuckel, parts: list[tuple[np.ndarray, np.ndarray, np.ndarray, str]],
                     n_terms: int | None = None) -> tuple[SmoothFit, list[np.ndarray]]:
    """One smooth function fitted to several (m, y, u, kind) series at once; residuals per series."""
    m_all = np.concatenate([p[0] for p in parts])
    k = n_terms or choose_terms(len(m_all), float(m_all.max()))
    offs, cols, ys, ws = [], [], [], []
    for m, y, u, kind in parts:
        off, c = design(e, dh, np.asarray(m, float), kind, k)
        offs.append(off)
        cols.append(c)
        ys.append(np.asarray(y, float))
        ws.append(1.0 / np.asarray(u, float))
    off, c, y, w = (np.concatenate(x) for x in (offs, cols, ys, ws))
    coef, *_ = np.linalg.lstsq(c * w[:, None], (y - off) * w, rcond=None)
    resid = y - off - c @ coef
    out, start = [], 0
    for m, *_ in parts:
        out.append(resid[start:start + len(m)])
        start += len(m)
    return SmoothFit(e, dh, coef, k), out
