"""Temperature derivatives of the Debye-Hückel osmotic slope: the enthalpy and heat-capacity slopes.

With A_phi(T, p) from :mod:`saltbench.water.debye_huckel` (IAPWS-95 density, IAPWS R8-97
permittivity), on the basis of Pitzer's equations (Bradley and Pitzer, J. Phys. Chem. 83, 1599
(1979); Pitzer, Activity Coefficients in Electrolyte Solutions, 2nd ed., CRC Press, 1991, ch. 3;
from memory of both):

    A_H = 4 R T^2 (d A_phi / d T)_p          [J kg^1/2 mol^-3/2]   (relative enthalpy, L_phi)
    A_J = (d A_H / d T)_p                    [J K^-1 kg^1/2 mol^-3/2] (heat capacity, C_p,phi)
        = 4 R (2 T A_phi' + T^2 A_phi'')

the slopes of the Debye-Hückel terms of the apparent molar relative enthalpy and heat capacity
(for one salt in the limit of low molality, L_phi -> nu |z+ z-| (A_H / 2) sqrt(I) on Pitzer's
basis). The models' thermal quantities take these slopes; their extended forms are the models'
business.

How they are differentiated: A_phi is a closed function of density and permittivity, each a
smooth function of T at fixed p through the IAPWS equations, but the ``iapws`` package gives
values, not derivatives. The derivatives are five-point central differences,

    f'  ~ (-f(T+2h) + 8 f(T+h) - 8 f(T-h) + f(T-2h)) / (12 h)
    f'' ~ (-f(T+2h) + 16 f(T+h) - 30 f(T) + 16 f(T-h) - f(T-2h)) / (12 h^2)

with h = 0.5 K: truncation error of order h^4, and the density solved to near machine precision
by IAPWS-95, so rounding error of order 1e-15 / h^2. ``tests/test_water_thermal.py`` shows
the result unchanged to 1e-6 relative between h = 0.25, 0.5 and 1 K, and that the integral of
A_J over 25-75 °C gives back the change of A_H (the two slopes are consistent). The stencil may
reach 1 K below 0 °C, into supercooled liquid, which IAPWS-95 describes.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from saltbench.water.properties import check_temperature, liquid_pressure

STEP_K = 0.5
STENCIL = (-2, -1, 0, 1, 2)  # the temperatures T + k h differenced


def five_point(f: np.ndarray, h: float) -> tuple[np.ndarray, np.ndarray]:
    """First and second derivatives at the middle of five values (or rows) f(T + k h),
    k in :data:`STENCIL`, by the differences of the module docstring."""
    d1 = (-f[4] + 8.0 * f[3] - 8.0 * f[1] + f[0]) / (12.0 * h)
    d2 = (-f[4] + 16.0 * f[3] - 30.0 * f[2] + 16.0 * f[1] - f[0]) / (12.0 * h * h)
    return d1, d2


def stencil_pressure(temperature_k: float, step_k: float, pressure_pa: float | None) -> float:
    """One pressure for the whole stencil about ``temperature_k`` (the derivatives are at
    constant p): ``pressure_pa``, or the default liquid pressure of the stencil's hottest point."""
    if pressure_pa is None:
        return liquid_pressure(temperature_k + 2.0 * step_k, None)
    return liquid_pressure(temperature_k, pressure_pa)


@dataclass(frozen=True)
class DebyeHuckelSlopes:
    """A_phi and its enthalpy and heat-capacity slopes at one temperature and pressure."""

    temperature_k: float
    pressure_pa: float
    a_phi: float  # (kg/mol)^1/2
    a_h: float  # J kg^1/2 mol^-3/2
    a_j: float  # J K^-1 kg^1/2 mol^-3/2
    step_k: float  # the differencing step used

    @property
    def a_h_over_rt(self) -> float:
        """A_H / (R T), in (kg/mol)^1/2 (about 0.80 at 25 °C)."""
        from scipy import constants as c

        return self.a_h / (c.R * self.temperature_k)

    @property
    def a_j_over_r(self) -> float:
        """A_J / R, in (kg/mol)^1/2 (about 3.8 at 25 °C)."""
        from scipy import constants as c

        return self.a_j / c.R


def _a_phi(temperature_k: float, pressure_pa: float) -> float:
    import warnings

    from saltbench.water.debye_huckel import a_phi_of_state
    from saltbench.water.properties import liquid_state

    with warnings.catch_warnings():  # the stencil's supercooled points: IAPWS-95 holds there
        warnings.filterwarnings("ignore", message="Using extrapolated values")
        return a_phi_of_state(liquid_state(temperature_k, pressure_pa))


def debye_huckel_slopes(temperature_k: float = 298.15, pressure_pa: float | None = None,
                        step_k: float = STEP_K) -> DebyeHuckelSlopes:
    """A_phi, A_H and A_J of water at ``temperature_k`` (0-300 °C) and ``pressure_pa`` (default
    as for :func:`saltbench.water.water_state`), by the differences of the module docstring."""
    from scipy import constants as c

    t = float(temperature_k)
    check_temperature(t)
    h = float(step_k)
    p = stencil_pressure(t, h, pressure_pa)
    f = np.array([_a_phi(t + k * h, p) for k in STENCIL])
    d1, d2 = five_point(f, h)
    a_h = 4.0 * c.R * t * t * d1
    a_j = 4.0 * c.R * (2.0 * t * d1 + t * t * d2)
    return DebyeHuckelSlopes(t, p, float(f[2]), float(a_h), float(a_j), h)
