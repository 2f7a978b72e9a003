"""Cells without liquid junction in a mixture: EMF <-> mean activity coefficient of the measured
salt in the presence of a background salt that shares one of its ions.

The cell, e.g. Pt | H2 | HCl(m1), NaCl(m2) | AgCl | Ag, has electrodes reversible to the cation M
and the anion X of the measured salt M(nu+) X(nu-); the background salt (NX or MY) adds to the
molality of the ion it shares. With ``s`` formula units of MX formed per cell reaction and ``n``
electrons (Harned and Owen, The Physical Chemistry of Electrolytic Solutions, 3rd ed., 1958,
ch. 14; Robinson and Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 15):

    E = E° - (s R T / (n F)) ln(m_M^nu+ m_X^nu- gamma±^nu)                             (1)

where m_M and m_X are the total molalities of the two ions in the mixture and gamma± is the mean
molal activity coefficient of MX in it. Hence, with k = s nu R T / (n F) (R, F from CODATA 2018
through ``scipy.constants``, as in :mod:`saltbench.measurements.nernst`):

    ln gamma± = (E° - E) / k - (nu+ ln m_M + nu- ln m_X) / nu                          (2)

For HCl in NaCl: ln gamma±(HCl) = (E° - E) F / (2 R T) - ln(m1 (m1 + m2)) / 2. With m2 = 0 it
is the one-salt equation of :mod:`saltbench.measurements.emf_cell`.

Uncertainties (first order): u(E) / k and the measured salt's molality,
|d ln gamma± / d m1| u(m1) = (nu+^2 / m_M + nu-^2 / m_X) u(m1) / nu, independent per point;
u(E°) / k, common to every point and fully correlated. The background molality is taken as exact.
"""

from __future__ import annotations

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import UserError
from saltbench.measurements.emf_cell import CellSpec, EmfReduction


def shared_ion(salt: Electrolyte, background: Electrolyte) -> str:
    """'cation' or 'anion': which ion of ``salt`` the background salt shares. UserError when it
    shares none, or both (then it is the same salt)."""
    same_cation = salt.cation.name == background.cation.name
    same_anion = salt.anion.name == background.anion.name
    if same_cation and same_anion:
        raise UserError(f"the background salt {background.name} is the measured salt itself")
    if not (same_cation or same_anion):
        raise UserError(f"the background salt {background.name} shares no ion with {salt.name}; "
                        "the cell's electrodes respond to the measured salt's ions, so the background "
                        f"must be a salt of {salt.cation.name} or of {salt.anion.name}")
    return "cation" if same_cation else "anion"


def ion_molalities(salt: Electrolyte, background: Electrolyte, molality: np.ndarray,
                   background_molality: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(m_M, m_X): total molalities of the measured salt's cation and anion in the mixture."""
    which = shared_ion(salt, background)
    m1 = np.asarray(molality, dtype=float)
    m2 = np.asarray(background_molality, dtype=float)
    m_cation = salt.nu_cation * m1 + (background.nu_cation * m2 if which == "cation" else 0.0)
    m_anion = salt.nu_anion * m1 + (background.nu_anion * m2 if which == "anion" else 0.0)
    return m_cation, m_anion


def _arrays(molality, background_molality) -> tuple[np.ndarray, np.ndarray]:
    m1 = np.atleast_1d(np.asarray(molality, dtype=float))
    m2 = np.broadcast_to(np.asarray(background_molality, dtype=float), m1.shape)
    if np.any(~np.isfinite(m1)) or np.any(m1 <= 0):
        raise UserError("molalities of the measured salt must be positive finite numbers")
    if np.any(~np.isfinite(m2)) or np.any(m2 < 0):
        raise UserError("background molalities must be finite and not negative")
    return m1, np.array(m2)


def _ln_ion_product(cell: CellSpec, background: Electrolyte, m1: np.ndarray,
                    m2: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    e = cell.electrolyte
    m_c, m_a = ion_molalities(e, background, m1, m2)
    return (e.nu_cation * np.log(m_c) + e.nu_anion * np.log(m_a)) / e.nu, m_c, m_a


def emf_from_gamma_mixture(cell: CellSpec, background: Electrolyte, molality, background_molality,
                           gamma_pm, e_standard: float, temperature_k: float = 298.15) -> np.ndarray:
    """Cell EMF in volts from eq. (1)."""
    m1, m2 = _arrays(molality, background_molality)
    g = np.broadcast_to(np.asarray(gamma_pm, dtype=float), m1.shape)
    if np.any(~np.isfinite(g)) or np.any(g <= 0):
        raise UserError("activity coefficients must be positive finite numbers")
    ln_q, _, _ = _ln_ion_product(cell, background, m1, m2)
    return e_standard - cell.k(temperature_k) * (ln_q + np.log(g))


def gamma_from_emf_mixture(cell: CellSpec, background: Electrolyte, molality, background_molality,
                           emf, e_standard: float, temperature_k: float = 298.15, *,
                           u_emf: np.ndarray | float = 0.0, u_e_standard: float = 0.0,
                           u_molality: np.ndarray | float = 0.0) -> EmfReduction:
    """Eq. (2) with first-order uncertainties; ``molality`` of the returned reduction is the
    measured salt's."""
    m1, m2 = _arrays(molality, background_molality)
    e = np.atleast_1d(np.asarray(emf, dtype=float))
    if e.shape != m1.shape or np.any(~np.isfinite(e)):
        raise UserError(f"{m1.size} compositions but {e.size} finite EMF readings")
    k = cell.k(temperature_k)
    ln_q, m_c, m_a = _ln_ion_product(cell, background, m1, m2)
    ln_g = (e_standard - e) / k - ln_q
    s = cell.electrolyte
    d_ln_g_d_m1 = (s.nu_cation**2 / m_c + s.nu_anion**2 / m_a) / s.nu
    u_e = np.broadcast_to(np.asarray(u_emf, dtype=float), m1.shape)
    u_m = np.broadcast_to(np.asarray(u_molality, dtype=float), m1.shape)
    u_ind = np.hypot(u_e / k, d_ln_g_d_m1 * u_m)
    return EmfReduction(m1, e, float(e_standard), float(u_e_standard), ln_g, u_ind,
                        float(u_e_standard) / k, float(temperature_k))
