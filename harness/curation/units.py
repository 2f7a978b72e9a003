"""Unit and scale conversions at the edge: temperatures, pressures, concentration scales.

Scale relations (Robinson and Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 2):
    molarity c (mol/L), solution density rho (kg/L):  m = c / (rho - c M2)
    salt mole fraction x (formula units):             m = x / ((1 - x) M_w)
    rational coefficient f± (ion mole fractions):     gamma± = f± / (1 + nu m M_w)
    molar coefficient y±:                             gamma± = y± c / (m rho_w)
"""

from __future__ import annotations

import re

import numpy as np

from saltbench.water.properties import MOLAR_MASS_WATER

_TEMPERATURE = re.compile(r"^\s*(-?\d+(?:\.\d+)?)\s*(°?\s*C|K)\s*$", re.IGNORECASE)
_PRESSURE = re.compile(r"^\s*(\d+(?:\.\d+)?(?:[eE][-+]?\d+)?)\s*(Pa|kPa|MPa|bar|atm)\s*$")
_PRESSURE_FACTORS = {"Pa": 1.0, "kPa": 1e3, "MPa": 1e6, "bar": 1e5, "atm": 101325.0}


def parse_temperature(text: str) -> float:
    """'25 C', '25 °C' or '298.15 K' -> kelvin. Raises ValueError with a plain message."""
    m = _TEMPERATURE.match(text)
    if not m:
        raise ValueError(f"expected a temperature with its unit, e.g. '25 C' or '298.15 K', found {text!r}")
    value, unit = float(m.group(1)), m.group(2).replace("°", "").replace(" ", "").upper()
    if unit == "K":
        if value < 200.0:
            raise ValueError(f"{value:g} K looks like a Celsius temperature given as K "
                             f"(did you mean '{value:g} C'?)")
        return value
    return value + 273.15


def parse_pressure(text: str) -> float:
    m = _PRESSURE.match(text)
    if not m:
        raise ValueError(f"expected a pressure with its unit (Pa, kPa, MPa, bar, atm), found {text!r}")
    return float(m.group(1)) * _PRESSURE_FACTORS[m.group(2)]


def molality_from_molarity(c: np.ndarray, density_kg_per_l: np.ndarray, salt_molar_mass: float) -> np.ndarray:
    return np.asarray(c) / (np.asarray(density_kg_per_l) - np.asarray(c) * salt_molar_mass)


def molality_from_mole_fraction(x: np.ndarray) -> np.ndarray:
    x = np.asarray(x)
    return x / ((1.0 - x) * MOLAR_MASS_WATER)


def gamma_from_rational(f: np.ndarray | float, m: np.ndarray, nu: int) -> np.ndarray:
    return np.asarray(f) / (1.0 + nu * np.asarray(m) * MOLAR_MASS_WATER)


def gamma_from_molar(y: np.ndarray | float, c: np.ndarray, m: np.ndarray,
                     water_density_kg_per_l: float | np.ndarray) -> np.ndarray:
    return np.asarray(y) * np.asarray(c) / (np.asarray(m) * water_density_kg_per_l)
