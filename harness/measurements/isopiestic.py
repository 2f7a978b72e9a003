"""Isopiestic equilibrium: osmotic coefficients of a sample from a reference salt.

Solutions that have come to the same water activity through the vapour share ln a_w, so
(Robinson and Sinclair, J. Am. Chem. Soc. 56, 1830 (1934); Robinson and Stokes, Electrolyte
Solutions, 2nd ed., 1959, ch. 8, eq. 8.1):

    nu m phi = nu_ref m_ref phi_ref(m_ref)                                   (1)
    phi = R phi_ref,   R = nu_ref m_ref / (nu m)                                  (2)

R is the isopiestic ratio. phi_ref comes from a callable (e.g. a model evaluation or an
interpolation of a reference table). First-order uncertainty:

    u(phi)^2 = (phi u(m)/m)^2 + ((nu_ref/(nu m)) (phi_ref + m_ref dphi_ref/dm_ref) u(m_ref))^2
               + (R u(phi_ref))^2                                             (3)

with dphi_ref/dm_ref by a central difference of the callable.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import UserError
from saltbench.water.properties import water_activity

OsmoticFunction = Callable[[np.ndarray], np.ndarray]


@dataclass(frozen=True)
class IsopiesticResult:
    electrolyte: Electrolyte
    reference: Electrolyte
    molality: np.ndarray
    reference_molality: np.ndarray
    reference_osmotic: np.ndarray
    isopiestic_ratio: np.ndarray
    osmotic: np.ndarray
    u_osmotic: np.ndarray
    water_activity: np.ndarray  # a_w = exp(-nu_ref m_ref M_w phi_ref), shared by both solutions


def _array(name: str, values: np.ndarray | float, positive: bool = True) -> np.ndarray:
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    if np.any(~np.isfinite(arr)) or (positive and np.any(arr <= 0)):
        raise UserError(f"{name} must be positive finite numbers")
    return arr


def osmotic_from_isopiestic(electrolyte: Electrolyte, molality: np.ndarray | float,
                            reference: Electrolyte, reference_molality: np.ndarray | float,
                            reference_osmotic: OsmoticFunction, *,
                            u_molality: np.ndarray | float = 0.0,
                            u_reference_molality: np.ndarray | float = 0.0,
                            u_reference_osmotic: np.ndarray | float | OsmoticFunction = 0.0,
                            ) -> IsopiesticResult:
    """phi of ``electrolyte`` at ``molality`` in isopiestic equilibrium with ``reference``.

    ``reference_osmotic`` maps reference molalities (array, mol/kg) to phi_ref; so may
    ``u_reference_osmotic`` (or give a number).
    """
    m = _array("sample molalities", molality)
    m_r = _array("reference molalities", reference_molality)
    if m.shape != m_r.shape:
        raise UserError(f"{m.size} sample molalities but {m_r.size} reference molalities")
    phi_r = _array("reference osmotic coefficients", reference_osmotic(m_r))
    if phi_r.shape != m_r.shape:
        raise UserError("the reference osmotic function returned the wrong number of values")
    ratio = reference.nu * m_r / (electrolyte.nu * m)
    phi = ratio * phi_r
    h = 1e-4 * m_r
    dphi_r = (np.asarray(reference_osmotic(m_r + h), float)
              - np.asarray(reference_osmotic(m_r - h), float)) / (2 * h)
    u_phi_r = (np.asarray(u_reference_osmotic(m_r), float) if callable(u_reference_osmotic)
               else np.broadcast_to(np.asarray(u_reference_osmotic, float), m.shape))
    u_m = np.broadcast_to(np.asarray(u_molality, float), m.shape)
    u_mr = np.broadcast_to(np.asarray(u_reference_molality, float), m.shape)
    terms = np.stack([
        phi * u_m / m,
        reference.nu / (electrolyte.nu * m) * (phi_r + m_r * dphi_r) * u_mr,
        ratio * u_phi_r,
    ])
    u_phi = np.sqrt((terms**2).sum(axis=0))
    a_w = water_activity(reference.nu * m_r, phi_r)
    return IsopiesticResult(electrolyte, reference, m, m_r, phi_r, ratio, phi, u_phi, a_w)
