"""Concentration cells and calibrations against a reference solution of known activity.

Two cells of the same kind, or one electrode pair dipped in turn into a reference solution and a
sample, give the activity ratio from the EMF difference alone; E° cancels (Harned and Owen,
The Physical Chemistry of Electrolytic Solutions, 3rd ed., 1958, ch. 10; Bates, Determination of
pH, 2nd ed., 1973, ch. 10).

Mean activity, cell without liquid junction of :class:`~saltbench.measurements.emf_cell.CellSpec`
(eq. 1 of :mod:`saltbench.measurements.emf_cell` written for both solutions):

    E_s - E_r = -k ln(a±,s / a±,r),   k = s nu R T / (n F)                         (1)

Single ion, electrode reversible to ion i of charge z_i, with its practical slope S (V/decade;
by default the Nernst slope R T ln10 / (z_i F)):

    E_s - E_r = S log10(a_i,s / a_i,r)                                              (2)

A single-ion activity ratio measured across a liquid junction also carries the junction potential
difference, which this reduction does not estimate; and a single-ion activity on its own rests on
a non-thermodynamic convention.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from saltbench.errors import UserError
from saltbench.measurements.emf_cell import CellSpec
from saltbench.measurements.nernst import CALIBRATION_CAUTION, nernst_slope

SINGLE_ION_NOTE = (
    "Single-ion activity from one electrode: the liquid-junction potential is not corrected and "
    "the value rests on a non-thermodynamic convention; only mean quantities are measurable."
)


@dataclass(frozen=True)
class ActivityRatio:
    """a_sample / a_reference from an EMF difference, with its standard uncertainty."""

    kind: str  # "mean" or "single-ion"
    delta_emf: np.ndarray  # E_sample - E_reference, V
    ratio: np.ndarray
    u_ratio: np.ndarray
    volts_per_neper: float  # the factor k (mean) or S / ln 10 (single ion)
    temperature_k: float
    note: str = ""


@dataclass(frozen=True)
class SampleActivity:
    """A sample's activity (mean ionic or single-ion) from a reference of known activity."""

    ratio: ActivityRatio
    activity: np.ndarray
    u_activity: np.ndarray
    molality: np.ndarray | None
    gamma: np.ndarray | None  # gamma± (mean) or gamma_i (single ion) when a molality is given
    u_gamma: np.ndarray | None
    caution: str = CALIBRATION_CAUTION


def mean_activity_ratio(cell: CellSpec, delta_emf: np.ndarray | float,
                        temperature_k: float = 298.15, *,
                        u_delta_emf: np.ndarray | float = 0.0) -> ActivityRatio:
    """a±(sample) / a±(reference) from E_sample - E_reference, eq. (1)."""
    d = np.atleast_1d(np.asarray(delta_emf, dtype=float))
    k = cell.k(temperature_k)
    ratio = np.exp(-d / k)
    u = ratio * np.broadcast_to(np.asarray(u_delta_emf, dtype=float), d.shape) / k
    return ActivityRatio("mean", d, ratio, u, k, float(temperature_k))


def ion_activity_ratio(delta_emf: np.ndarray | float, charge: int, temperature_k: float = 298.15,
                       *, slope: float | None = None, u_slope: float = 0.0,
                       u_delta_emf: np.ndarray | float = 0.0) -> ActivityRatio:
    """a_i(sample) / a_i(reference) from E_sample - E_reference, eq. (2).

    ``slope`` is the electrode's practical slope in V/decade (from
    :func:`saltbench.measurements.nernst.calibrate_electrode`); u(ratio) includes u(slope).
    """
    d = np.atleast_1d(np.asarray(delta_emf, dtype=float))
    s = nernst_slope(temperature_k, charge) if slope is None else float(slope)
    if s == 0 or math.copysign(1, s) != math.copysign(1, charge):
        raise UserError("the electrode slope must be non-zero and of the sign of the ion's charge")
    log_r = d / s
    ratio = 10.0 ** log_r
    u_d = np.broadcast_to(np.asarray(u_delta_emf, dtype=float), d.shape)
    u_log = np.hypot(u_d / s, log_r * u_slope / s)
    return ActivityRatio("single-ion", d, ratio, ratio * math.log(10.0) * u_log, s / math.log(10.0),
                         float(temperature_k), SINGLE_ION_NOTE)


def _sample(ratio: ActivityRatio, a_ref: float, u_a_ref: float,
            molality: np.ndarray | float | None, nu_factor: float) -> SampleActivity:
    if a_ref <= 0:
        raise UserError("the reference activity must be positive")
    a = ratio.ratio * a_ref
    rel = np.hypot(ratio.u_ratio / ratio.ratio, u_a_ref / a_ref)
    u_a = a * rel
    if molality is None:
        return SampleActivity(ratio, a, u_a, None, None, None)
    m = np.broadcast_to(np.asarray(molality, dtype=float), a.shape)
    if np.any(m <= 0):
        raise UserError("molalities must be positive")
    g = a / (nu_factor * m)
    return SampleActivity(ratio, a, u_a, np.asarray(m), g, g * rel)


def mean_activity_from_reference(cell: CellSpec, emf_sample: np.ndarray | float,
                                 emf_reference: float, a_pm_reference: float,
                                 temperature_k: float = 298.15, *,
                                 u_emf: float = 0.0, u_a_reference: float = 0.0,
                                 molality: np.ndarray | float | None = None) -> SampleActivity:
    """Mean ionic activity a± of samples against a reference solution of the same salt.

    ``u_emf`` is the standard uncertainty of each reading (sample and reference alike). With the
    sample ``molality``, gamma± = a± / (Q m) is returned as well.
    """
    d = np.asarray(emf_sample, dtype=float) - float(emf_reference)
    r = mean_activity_ratio(cell, d, temperature_k, u_delta_emf=math.sqrt(2.0) * u_emf)
    return _sample(r, float(a_pm_reference), float(u_a_reference), molality, cell.q)


def ion_activity_from_reference(emf_sample: np.ndarray | float, emf_reference: float,
                                a_reference: float, charge: int, temperature_k: float = 298.15,
                                *, slope: float | None = None, u_slope: float = 0.0,
                                u_emf: float = 0.0, u_a_reference: float = 0.0,
                                molality: np.ndarray | float | None = None) -> SampleActivity:
    """Single-ion activity a_i of samples against a reference of known a_i, eq. (2)."""
    d = np.asarray(emf_sample, dtype=float) - float(emf_reference)
    r = ion_activity_ratio(d, charge, temperature_k, slope=slope, u_slope=u_slope,
                           u_delta_emf=math.sqrt(2.0) * u_emf)
    return _sample(r, float(a_reference), float(u_a_reference), molality, 1.0)
