"""The Nernst slope, EMF <-> activity, and the practical slope of an electrode from a calibration.

For an electrode reversible to an ion i of charge number z_i (IUPAC Green Book, Cohen et al.,
Quantities, Units and Symbols in Physical Chemistry, 3rd ed., 2007, section 2.13):

    E = E' + (R T / (z_i F)) ln a_i                                   (1)

so the theoretical slope per decade of activity is

    S_N = R T ln(10) / F   (divided by z_i)                           (2)

59.16 mV at 25 °C. R and F are CODATA values through ``scipy.constants``. A calibration fits
E = E0 + S log10 a by ordinary least squares (e.g. Bates, Determination of pH, 2nd ed., 1973,
ch. 10; the regression itself is textbook linear least squares) and reports S as a percentage of
z_i-scaled S_N with the standard error of the slope.

Caution: an electrode calibration carried out with this module is a numerical reduction only. For
clinical, environmental or other regulated measurements follow the applicable standard method,
local codes and accredited laboratory practice.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from saltbench.errors import UserError

CALIBRATION_CAUTION = (
    "Numerical reduction only: for clinical, environmental or other regulated measurements follow "
    "the applicable standard method, local codes and accredited laboratory practice."
)


def _check_temperature(temperature_k: float) -> float:
    t = float(temperature_k)
    if not (t > 0.0 and math.isfinite(t)):
        raise UserError(f"temperature must be a positive number of kelvin, got {temperature_k!r}")
    return t


def thermal_voltage(temperature_k: float) -> float:
    """R T / F in volts at ``temperature_k`` (CODATA constants)."""
    from scipy import constants as c

    return c.R * _check_temperature(temperature_k) / c.physical_constants["Faraday constant"][0]


def nernst_slope(temperature_k: float = 298.15, charge: int = 1) -> float:
    """Theoretical slope R T ln10 / (z F) in volts per decade of activity, eq. (2)."""
    if charge == 0:
        raise UserError("an electrode responds to a charged species: charge must not be 0")
    return thermal_voltage(temperature_k) * math.log(10.0) / charge


def emf_from_activity(activity: np.ndarray | float, e_zero: float, temperature_k: float = 298.15,
                      charge: int = 1) -> np.ndarray:
    """E = E' + (R T / z F) ln a, eq. (1), in volts."""
    a = np.asarray(activity, dtype=float)
    if np.any(a <= 0):
        raise UserError("activities must be positive")
    return e_zero + thermal_voltage(temperature_k) / charge * np.log(a)


def activity_from_emf(emf: np.ndarray | float, e_zero: float, temperature_k: float = 298.15,
                      charge: int = 1, slope: float | None = None) -> np.ndarray:
    """Inverse of eq. (1): a = 10^((E - E') / S).

    ``slope`` (V/decade) is the electrode's practical slope from a calibration; by default the
    theoretical Nernst slope for ``charge``.
    """
    s = nernst_slope(temperature_k, charge) if slope is None else float(slope)
    if s == 0:
        raise UserError("the electrode slope must not be zero")
    return 10.0 ** ((np.asarray(emf, dtype=float) - e_zero) / s)


@dataclass(frozen=True)
class Calibration:
    """Least-squares line E = intercept + slope log10(a) through calibration points."""

    slope: float  # V per decade
    u_slope: float  # standard error of the slope, V per decade
    intercept: float  # V, E at a = 1
    u_intercept: float
    covariance: np.ndarray  # 2x2, (intercept, slope)
    nernst_slope: float  # theoretical, V per decade, for the given charge and temperature
    temperature_k: float
    charge: int
    log10_activity: np.ndarray
    emf: np.ndarray
    residuals: np.ndarray
    caution: str = CALIBRATION_CAUTION

    @property
    def slope_percent(self) -> float:
        """Practical slope as a percentage of the theoretical Nernst slope."""
        return 100.0 * self.slope / self.nernst_slope

    @property
    def u_slope_percent(self) -> float:
        return 100.0 * self.u_slope / abs(self.nernst_slope)

    def activity(self, emf: np.ndarray | float) -> np.ndarray:
        """Activity of a sample from its EMF with this calibration line."""
        return activity_from_emf(emf, self.intercept, self.temperature_k, self.charge, self.slope)


def calibrate_electrode(activity: np.ndarray, emf: np.ndarray, temperature_k: float = 298.15,
                        charge: int = 1) -> Calibration:
    """Fit E against log10(a) for calibration standards of known activity (at least 3 points).

    The slope's standard error is the usual one from the residual variance with n - 2 degrees
    of freedom.
    """
    a = np.asarray(activity, dtype=float).ravel()
    e = np.asarray(emf, dtype=float).ravel()
    if a.shape != e.shape:
        raise UserError(f"{a.size} activities but {e.size} EMF readings")
    if a.size < 3:
        raise UserError("a calibration needs at least 3 standards to give a slope uncertainty")
    if np.any(a <= 0) or not np.all(np.isfinite(e)):
        raise UserError("calibration activities must be positive and EMF readings finite")
    x = np.log10(a)
    if np.ptp(x) == 0:
        raise UserError("calibration standards must differ in activity")
    design = np.column_stack([np.ones_like(x), x])
    coef, *_ = np.linalg.lstsq(design, e, rcond=None)
    resid = e - design @ coef
    dof = a.size - 2
    s2 = float(resid @ resid) / dof
    cov = s2 * np.linalg.inv(design.T @ design)
    return Calibration(
        slope=float(coef[1]), u_slope=float(math.sqrt(cov[1, 1])),
        intercept=float(coef[0]), u_intercept=float(math.sqrt(cov[0, 0])), covariance=cov,
        nernst_slope=nernst_slope(temperature_k, charge), temperature_k=float(temperature_k),
        charge=int(charge), log10_activity=x, emf=e, residuals=resid,
    )
