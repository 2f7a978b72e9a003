"""Density and static relative permittivity of liquid water.

Density: IAPWS-95 (Wagner and Pruss, J. Phys. Chem. Ref. Data 31, 387 (2002); IAPWS R6-95).
Relative permittivity: IAPWS R8-97, "Release on the Static Dielectric Constant of Ordinary Water
Substance" (Fernández, Goodwin, Lemmon, Levelt Sengers and Williams, J. Phys. Chem. Ref. Data
26, 1125 (1997)). Both come from the ``iapws`` package (PyPI), a maintained implementation of
the IAPWS releases, rather than code of our own.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from saltbench.errors import UserError

#: kg/mol, from the IUPAC standard atomic weights (2 x 1.008 + 15.999), from memory of the IUPAC table.
MOLAR_MASS_WATER = 0.018015



def water_activity(total_molality: np.ndarray | float, osmotic: np.ndarray | float) -> np.ndarray:
    """a_w = exp(-M_w phi sum_i m_i), ``total_molality`` = sum_i m_i in mol/kg (nu m for one
    salt): the definition of the molal osmotic coefficient (IUPAC Green Book, 3rd ed., 2007,
    2.13)."""
    return np.exp(-np.asarray(total_molality) * MOLAR_MASS_WATER * np.asarray(osmotic, dtype=float))


#: Temperature range (K) saltbench accepts for liquid-water properties: 0 °C to 300 °C.
#: The IAPWS releases extend further; activity models and published parameters rarely do.
T_MIN = 273.15
T_MAX = 573.15

#: Pressure (Pa) used when none is given: 1 atm, or the saturation pressure where that is higher.
P_STANDARD = 101_325.0


@dataclass(frozen=True)
class WaterState:
    temperature_k: float
    pressure_pa: float
    density: float  # kg/m^3
    permittivity: float  # relative static permittivity (dimensionless)


def check_temperature(temperature_k: float) -> None:
    if not (T_MIN <= temperature_k <= T_MAX):
        raise UserError(
            f"temperature {temperature_k:g} K is outside the range saltbench supports for water "
            f"properties ({T_MIN:g} K to {T_MAX:g} K)"
        )


#: Liquid water at 25 °C and 101325 Pa, as IAPWS-95 and IAPWS R8-97 give it through ``iapws``
#: (density kg/m^3, relative permittivity), written out so that a comparison at 25 °C need not
#: import the library (0.3 s of every start); tests/test_water.py holds it to a fresh computation.
KNOWN_STATES: dict[tuple[float, float | None], tuple[float, float]] = {
    (298.15, None): (997.0476367603434, 78.4084823561759)}


@lru_cache(maxsize=512)
def _state(temperature_k: float, pressure_pa: float | None) -> WaterState:
    known = KNOWN_STATES.get((temperature_k, pressure_pa))
    if known is not None:
        return WaterState(temperature_k, P_STANDARD, known[0], known[1])
    return _fresh_state(temperature_k, pressure_pa)


def _fresh_state(temperature_k: float, pressure_pa: float | None) -> WaterState:
    check_temperature(temperature_k)
    return liquid_state(temperature_k, pressure_pa)


def saturation_pressure(temperature_k: float) -> float:
    """Saturation vapour pressure of water in Pa (IAPWS-IF97 region 4, through ``iapws``)."""
    from iapws.iapws97 import _PSat_T

    return float(_PSat_T(float(temperature_k))) * 1e6


def liquid_pressure(temperature_k: float, pressure_pa: float | None) -> float:
    """The pressure used for liquid water at ``temperature_k``: ``pressure_pa``, or 101325 Pa,
    or just above saturation above the normal boiling point. A given pressure below saturation
    is a UserError."""
    p = P_STANDARD if pressure_pa is None else float(pressure_pa)
    if temperature_k > 373.0:
        # Keep the liquid: below saturation the state would be steam.
        p_sat = saturation_pressure(temperature_k)
        if pressure_pa is None:
            p = max(p, p_sat * 1.0001)
        elif p < p_sat:
            raise UserError(
                f"pressure {p:g} Pa is below the saturation pressure {p_sat:.6g} Pa at "
                f"{temperature_k:g} K: water would not be liquid"
            )
    return p


def liquid_state(temperature_k: float, pressure_pa: float | None) -> WaterState:
    """Density and permittivity from IAPWS-95 and R8-97 without the range check of
    :func:`water_state` (a caller differencing in T may step just outside it)."""
    from iapws import IAPWS95  # heavy import kept out of module import time

    p = liquid_pressure(temperature_k, pressure_pa)
    state = IAPWS95(T=float(temperature_k), P=p / 1e6)
    if state.rho is None or state.epsilon is None:
        raise UserError(f"no liquid-water state at {temperature_k:g} K and {p:g} Pa")
    return WaterState(float(temperature_k), p, float(state.rho), float(state.epsilon))


def water_state(temperature_k: float = 298.15, pressure_pa: float | None = None) -> WaterState:
    """Liquid-water density and permittivity at ``temperature_k`` and ``pressure_pa``.

    Without a pressure, 101325 Pa is used, or just above saturation above the normal boiling point.
    """
    return _state(round(float(temperature_k), 9), None if pressure_pa is None else float(pressure_pa))
