"""Osmotic coefficients from water-activity readings and from vapour-pressure ratios.

Definition of the molal osmotic coefficient (IUPAC Green Book, Cohen et al., Quantities, Units and
Symbols in Physical Chemistry, 3rd ed., 2007, section 2.11; Robinson and Stokes, Electrolyte
Solutions, 2nd ed., 1959, eq. 2.13):

    ln a_w = -nu m M_w phi                                                   (1)

with M_w from :data:`saltbench.water.MOLAR_MASS_WATER`. Uncertainty to first order:

    u(phi)^2 = (u(a_w) / (a_w nu m M_w))^2 + (phi u(m) / m)^2                (2)

Vapour pressure: a_w = p / p*  (ideal-vapour approximation: the fugacity ratio is replaced by the
pressure ratio. Near 25 °C the neglected second-virial correction to ln a_w is of order
(B - V_w)(p - p*)/(R T), below 1e-4 for dilute-to-moderate solutions; it grows with temperature.)
Without p* the saturation pressure of pure water at T from IAPWS-IF97 (``iapws`` package) is used.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import UserError
from saltbench.water.properties import MOLAR_MASS_WATER, water_activity

IDEAL_VAPOUR_NOTE = (
    "a_w = p/p*: ideal-vapour approximation (fugacity ratio taken as pressure ratio)"
)


@dataclass(frozen=True)
class WaterActivityReduction:
    electrolyte: Electrolyte
    molality: np.ndarray
    water_activity: np.ndarray
    u_water_activity: np.ndarray
    osmotic: np.ndarray
    u_osmotic: np.ndarray
    note: str = ""


def _arr(name: str, values: np.ndarray | float) -> np.ndarray:
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    if np.any(~np.isfinite(arr)) or np.any(arr <= 0):
        raise UserError(f"{name} must be positive finite numbers")
    return arr


def osmotic_from_water_activity(electrolyte: Electrolyte, molality: np.ndarray | float,
                                water_activity: np.ndarray | float, *,
                                u_water_activity: np.ndarray | float = 0.0,
                                u_molality: np.ndarray | float = 0.0,
                                note: str = "") -> WaterActivityReduction:
    """phi = -ln a_w / (nu m M_w), eq. (1), with u(phi) from eq. (2)."""
    m = _arr("molalities", molality)
    a_w = _arr("water activities", water_activity)
    if a_w.shape != m.shape:
        raise UserError(f"{m.size} molalities but {a_w.size} water activities")
    if np.any(a_w > 1.0):
        raise UserError("a water activity above 1 is impossible over a salt solution")
    scale = electrolyte.nu * m * MOLAR_MASS_WATER
    phi = -np.log(a_w) / scale
    u_a = np.broadcast_to(np.asarray(u_water_activity, float), m.shape)
    u_m = np.broadcast_to(np.asarray(u_molality, float), m.shape)
    u_phi = np.hypot(u_a / (a_w * scale), phi * u_m / m)
    return WaterActivityReduction(electrolyte, m, a_w, np.asarray(u_a), phi, u_phi, note)


def water_activity_from_osmotic(electrolyte: Electrolyte, molality: np.ndarray | float,
                                osmotic: np.ndarray | float) -> np.ndarray:
    """a_w = exp(-nu m M_w phi), eq. (1)."""
    m = _arr("molalities", molality)
    return water_activity(electrolyte.nu * m, osmotic)


def saturation_pressure(temperature_k: float) -> float:
    """Vapour pressure of pure water in Pa at ``temperature_k`` (IAPWS-IF97 via ``iapws``), within
    the temperatures saltbench takes."""
    from saltbench.water.properties import check_temperature
    from saltbench.water.properties import saturation_pressure as p_sat

    check_temperature(float(temperature_k))
    return p_sat(temperature_k)


def osmotic_from_vapour_pressure(electrolyte: Electrolyte, molality: np.ndarray | float,
                                 pressure_pa: np.ndarray | float,
                                 saturation_pressure_pa: float | None = None,
                                 temperature_k: float = 298.15, *,
                                 u_pressure_pa: np.ndarray | float = 0.0,
                                 u_saturation_pressure_pa: float = 0.0,
                                 u_molality: np.ndarray | float = 0.0) -> WaterActivityReduction:
    """phi from the vapour pressure p over the solution and p* over pure water (both in Pa)."""
    p = _arr("vapour pressures", pressure_pa)
    p_star = saturation_pressure(temperature_k) if saturation_pressure_pa is None \
        else float(saturation_pressure_pa)
    if p_star <= 0:
        raise UserError("the vapour pressure of pure water must be positive")
    a_w = p / p_star
    u_p = np.broadcast_to(np.asarray(u_pressure_pa, float), p.shape)
    u_a = a_w * np.hypot(u_p / p, u_saturation_pressure_pa / p_star)
    return osmotic_from_water_activity(electrolyte, molality, a_w, u_water_activity=u_a,
                                       u_molality=u_molality, note=IDEAL_VAPOUR_NOTE)
