"""Thermal properties of one salt's solution from any model: L_phi, C_p,phi - C°_p,2, L_1.

The excess Gibbs energy per kilogram of water of a solution of one salt at molality m is
(Pitzer, Activity Coefficients in Electrolyte Solutions, 2nd ed., 1991, ch. 3; Harned and Owen,
The Physical Chemistry of Electrolytic Solutions, 3rd ed., 1958, ch. 8; from memory of both)

    G_ex / (w_w R T) = nu m (1 - phi + ln gamma±) = m g(T),   g = nu (1 - phi + ln gamma±),

and the relative enthalpy follows from Gibbs-Helmholtz at constant composition and pressure,

    L = -R T^2 d(G_ex / R T)/dT,   L_phi = L / m = -R T^2 g'(T),
    C_p,phi - C°_p,2 = d L_phi / dT = -R (2 T g' + T^2 g''),
    L_2 (salt)  = -nu R T^2 d ln gamma± / dT,      L_1 (water) = nu m M_w R T^2 d phi / dT.

How it is differentiated: the model is evaluated as it is at five temperatures T + k h
(k = -2..2, h = 0.5 K), each with its parameters at that temperature (a set's temperature form,
given as ``values_at``) and the Debye-Hückel constants of water at that temperature and one
fixed pressure (IAPWS, :func:`saltbench.water.debye_huckel_constants`), never a published A_phi
of one temperature, which has no temperature derivative. g' and g'' are the five-point central
differences of :mod:`saltbench.water.thermal_slopes` (truncation error of order h^4), the same
scheme as the slopes A_H and A_J, so for the Debye-Hückel limiting law L_phi comes out as
nu |z+ z-| (A_H / 2) sqrt(I) to the rounding of the differences (tests/test_thermal.py). A model
needs no change: the harness knows nothing of a particular model.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.models.contract import SolutionModel
from saltbench.models.evaluate import evaluate, make_context
from saltbench.water.debye_huckel import debye_huckel_constants
from saltbench.water.properties import MOLAR_MASS_WATER
from saltbench.water.thermal_slopes import STENCIL, STEP_K, five_point, stencil_pressure


@dataclass(frozen=True)
class ThermalProperties:
    """One model's thermal properties of one salt at molalities ``molality`` and one temperature."""

    molality: np.ndarray
    temperature_k: float
    pressure_pa: float
    relative_enthalpy: np.ndarray  # L_phi, J/mol
    relative_heat_capacity: np.ndarray  # C_p,phi - C°_p,2, J/(K mol)
    d_ln_gamma_pm_dt: np.ndarray  # K^-1
    salt_relative_enthalpy: np.ndarray  # L_2, J/mol
    water_relative_enthalpy: np.ndarray  # L_1, J/mol
    step_k: float


def thermal_properties(model: SolutionModel, electrolyte: Electrolyte, molality,
                       values_at: Callable[[float], Mapping[str, float]], *,
                       temperature_k: float = 298.15, pressure_pa: float | None = None,
                       step_k: float = STEP_K) -> ThermalProperties:
    """L_phi, C_p,phi - C°_p,2, d ln gamma± / dT, L_2 and L_1 of ``electrolyte`` at ``molality``
    from ``model`` with the parameters ``values_at(T)`` gives at each temperature T (see the
    module docstring). ``pressure_pa`` defaults as for the slopes A_H and A_J."""
    from scipy import constants as c

    from saltbench.water.properties import check_temperature

    t = float(temperature_k)
    check_temperature(t)
    h = float(step_k)
    m = np.atleast_1d(np.asarray(molality, dtype=float))
    p = stencil_pressure(t, h, pressure_pa)
    ln_g, phi = [], []
    for k in STENCIL:
        tk = t + k * h
        ev = evaluate(model, electrolyte, m, dict(values_at(tk)),
                      ctx=make_context(electrolyte, dh=debye_huckel_constants(tk, p)))
        ln_g.append(ev.ln_gamma_pm)
        phi.append(ev.osmotic)
    nu = electrolyte.nu
    lg, ph = np.array(ln_g), np.array(phi)
    g = nu * (1.0 - ph + lg)
    g1, g2 = five_point(g, h)
    lg1, _ = five_point(lg, h)
    ph1, _ = five_point(ph, h)
    r = c.R
    return ThermalProperties(
        m, t, p, -r * t * t * g1, -r * (2.0 * t * g1 + t * t * g2), lg1, -nu * r * t * t * lg1,
        nu * m * MOLAR_MASS_WATER * r * t * t * ph1, h)
