"""pH electrode calibration with standard buffers: two-point and multi-point.

The operational pH scale (Buck et al., Measurement of pH. Definition, standards, and procedures,
Pure Appl. Chem. 74, 2169 (2002), section 9): a cell with a pH-responsive electrode reads

    E = E0 - S pH,        S = k R T ln10 / F  (k = 1 for a Nernstian electrode)          (1)

calibrated with buffers whose pH values the user enters from their certificates. Two buffers
give E0 and S exactly (bracketing calibration); three or more are fitted by weighted least
squares with the effective variance u(E)^2 + S^2 u(pH)^2 (iterated on S), the covariance
scaled by the reduced chi-square when it exceeds 1. A buffer's pH value is conventional: it was
assigned under the Bates-Guggenheim convention for gamma(Cl-), defined only for I <= 0.1 mol/kg
(Bates and Guggenheim, Pure Appl. Chem. 1, 163 (1960); Buck et al. 2002); a buffer stated above
that ionic strength is refused where it is read. A sample's pH is (E0 - E) / S_T with S_T the
slope carried to the sample's temperature in proportion to T; its uncertainty combines the
calibration covariance, u(E) and u(T) to first order (JCGM 100:2008, eq. 13).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from saltbench.errors import UserError
from saltbench.measurements.conventions import BATES_GUGGENHEIM_MAX_I, PH_CAUTION
from saltbench.measurements.nernst import CALIBRATION_CAUTION, nernst_slope

CONVENTION_NOTE = (
    "Buffer pH values are conventional, assigned under the Bates-Guggenheim convention "
    "(log10 gamma(Cl-) = -A sqrt(I) / (1 + 1.5 sqrt(I))), defined only for I <= "
    f"{BATES_GUGGENHEIM_MAX_I:g} mol/kg (Buck et al., Pure Appl. Chem. 74, 2169 (2002)).")


@dataclass(frozen=True)
class PhCalibration:
    """E = e0 - slope pH through the buffers (slope positive, V per pH unit)."""

    e0: float
    slope: float
    covariance: np.ndarray  # 2x2 of (e0, slope)
    temperature_k: float
    ph: np.ndarray
    u_ph: np.ndarray
    emf: np.ndarray
    u_emf: np.ndarray
    residuals: np.ndarray  # V
    chi2: float
    dof: int
    nernst_slope: float
    convention: str = CONVENTION_NOTE
    cautions: tuple[str, ...] = (PH_CAUTION, CALIBRATION_CAUTION)

    @property
    def kind(self) -> str:
        return "two-point" if self.ph.size == 2 else "multi-point"

    @property
    def u_e0(self) -> float:
        return float(math.sqrt(self.covariance[0, 0]))

    @property
    def u_slope(self) -> float:
        return float(math.sqrt(self.covariance[1, 1]))

    @property
    def slope_percent(self) -> float:
        return 100.0 * self.slope / self.nernst_slope

    @property
    def u_slope_percent(self) -> float:
        return 100.0 * self.u_slope / self.nernst_slope

    @property
    def ph_range(self) -> tuple[float, float]:
        return float(self.ph.min()), float(self.ph.max())


def calibrate_ph(ph: np.ndarray, emf: np.ndarray, u_emf: np.ndarray, u_ph: np.ndarray | None = None,
                 temperature_k: float = 298.15) -> PhCalibration:
    """Fit eq. (1) to two or more buffers of different pH."""
    p = np.asarray(ph, dtype=float).ravel()
    e = np.asarray(emf, dtype=float).ravel()
    ue = np.broadcast_to(np.asarray(u_emf, dtype=float), p.shape).astype(float)
    up = np.zeros_like(p) if u_ph is None else np.broadcast_to(np.asarray(u_ph, dtype=float), p.shape).astype(float)
    if p.size < 2 or e.size != p.size:
        raise UserError("a pH calibration needs at least two buffers, each with one potential")
    if np.ptp(p) == 0:
        raise UserError("the buffers must differ in pH")
    if np.any(ue <= 0) or np.any(up < 0):
        raise UserError("u(E) must be positive and u(pH) not negative")
    design = np.column_stack([np.ones_like(p), -p])
    slope = nernst_slope(temperature_k, 1)
    for _ in range(5):
        w = 1.0 / (ue**2 + (slope * up) ** 2)
        normal = design.T @ (design * w[:, None])
        coef = np.linalg.solve(normal, design.T @ (w * e))
        if abs(coef[1] - slope) <= 1e-12 * abs(slope):
            slope = float(coef[1])
            break
        slope = float(coef[1])
    if slope <= 0:
        raise UserError("the potential rises with pH: not the response of a pH electrode "
                        "(check the buffers' order and the sign of the readings)")
    cov = np.linalg.inv(normal)
    resid = e - design @ coef
    chi2 = float(np.sum(w * resid**2))
    dof = p.size - 2
    if dof > 0 and chi2 / dof > 1.0:
        cov = cov * (chi2 / dof)
    return PhCalibration(float(coef[0]), slope, cov, float(temperature_k), p, up, e, ue, resid, chi2,
                         dof, nernst_slope(temperature_k, 1))


@dataclass(frozen=True)
class SamplePh:
    emf: float
    temperature_k: float
    ph: float
    u_ph: float
    budget: dict[str, float]
    flags: tuple[str, ...] = ()


def sample_ph(cal: PhCalibration, emf: float, u_emf: float, *, temperature_k: float | None = None,
              u_temperature_k: float = 0.0) -> SamplePh:
    """pH of a sample at potential ``emf`` (V) with its uncertainty budget and flags (outside the
    buffers' bracket; read more than 1 K from the calibration temperature)."""
    t = cal.temperature_k if temperature_k is None else float(temperature_k)
    s_t = cal.slope * t / cal.temperature_k
    ph = (cal.e0 - emf) / s_t
    ratio = t / cal.temperature_k
    g = np.array([1.0 / s_t, -(cal.e0 - emf) / (s_t * cal.slope)])
    budget = {"calibration": float(math.sqrt(max(g @ cal.covariance @ g, 0.0))),
              "reading": float(u_emf / s_t),
              "temperature": float(abs(ph / t) * u_temperature_k)}
    flags = []
    lo, hi = cal.ph_range
    if not (lo <= ph <= hi):
        flags.append(f"pH {ph:.3f} lies outside the buffers' bracket {lo:g} to {hi:g}")
    if abs(ratio - 1.0) * cal.temperature_k > 1.0:
        flags.append(f"read at {t:g} K, calibrated at {cal.temperature_k:g} K: the buffers' pH values "
                     "and E0 change with temperature and are not corrected")
    u = float(math.sqrt(sum(v**2 for v in budget.values())))
    return SamplePh(float(emf), t, float(ph), u, budget, tuple(flags))
