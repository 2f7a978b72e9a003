"""Potentiometric selectivity coefficients K_ij by the methods of the IUPAC recommendations
(Umezawa, Bühlmann, Umezawa, Tohda and Amemiya, Pure Appl. Chem. 72, 1851 (2000), the
separate-solution and fixed-interference methods, from memory of the recommendation; verify
against the original before use in a regulated method).

- Separate-solution method (SSM): the potential E_i of a solution of the primary ion alone at
  activity a_i and E_j of a solution of the interferent alone at a_j give

      log10 K_ij = (E_j - E_i) z_i F / (R T ln10) + log10(a_i / a_j^(z_i/z_j))         (1)

  i.e. (E_j - E_i) / S + log10(a_i / a_j^(z_i/z_j)) with S the slope, Nernstian by default. The
  recommendation warns that the value is biased when either ion's response is not Nernstian
  (a slope more than 5 % from Nernstian is noted with the value; the 5 % is common practice, no
  source);
  with the electrode's fitted slope S in place of the Nernstian one, and E_i read off the fitted
  linear response at any a_i, eq. (1) gives K_ij = 10^((E_j - E0)/S) / a_j^(z_i/z_j).
- Fixed-interference method (FIM): standards of varying a_i in a constant background a_j of the
  interferent; the detection limit a_i(LOD), the intersection of the extrapolated linear
  response with the asymptote (:mod:`saltbench.measurements.electrode_response`), gives

      K_ij = a_i(LOD) / a_j^(z_i/z_j)                                                    (2)

  which counts the electrode's own low-level response as interference (an upper bound on K_ij).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from saltbench.errors import UserError
from saltbench.measurements.electrode_response import ResponseFit
from saltbench.measurements.nernst import nernst_slope

SSM = "separate-solution method (IUPAC 2000)"
FIM = "fixed-interference method (IUPAC 2000)"
FITTED = "Nikolsky-Eisenman fit over standards of varying interferent level"


@dataclass(frozen=True)
class Selectivity:
    """One K_ij with its method, the interferent activity it rests on and its uncertainty."""

    interferent: str
    method: str
    coefficient: float
    u_coefficient: float
    interferent_activity: float | None  # a_j of the solutions used (None for the fit)
    note: str = ""

    @property
    def log10_coefficient(self) -> float:
        return math.log10(self.coefficient)

    @property
    def u_log10_coefficient(self) -> float:
        return self.u_coefficient / (self.coefficient * math.log(10.0))


def _power(a_j: float, z_i: int, z_j: int) -> float:
    if a_j <= 0:
        raise UserError("the interferent's activity must be positive")
    if z_j == 0 or z_i == 0:
        raise UserError("primary and interfering ions must be charged")
    return a_j ** (z_i / z_j)


def separate_solution_log10(e_i: float, a_i: float, e_j: float, a_j: float, z_i: int, z_j: int,
                            temperature_k: float = 298.15, slope: float | None = None) -> float:
    """log10 K_ij by eq. (1); ``slope`` in V per decade (the Nernstian R T ln10/(z_i F) by
    default)."""
    if a_i <= 0:
        raise UserError("the primary ion's activity must be positive")
    s = nernst_slope(temperature_k, z_i) if slope is None else float(slope)
    return (e_j - e_i) / s + math.log10(a_i / _power(a_j, z_i, z_j))


def fixed_interference(a_lod: float, u_a_lod: float, a_j: float, z_i: int, z_j: int,
                       interferent: str) -> Selectivity:
    """K_ij by eq. (2) from a detection limit measured in a fixed background a_j."""
    level = _power(a_j, z_i, z_j)
    return Selectivity(interferent, FIM, a_lod / level, u_a_lod / level, a_j,
                       "includes the electrode's own low-level response: an upper bound")


def separate_solution_from_fit(fit: ResponseFit, e_j: float, u_e_j: float, a_j: float, z_j: int,
                               interferent: str) -> Selectivity:
    """K_ij by eq. (1) with E_i read off the fitted linear response and the fitted slope; its
    uncertainty combines u(E_j) with the covariance of E0 and S."""
    z_i = fit.data.charge
    e0, s = fit.e0, fit.slope
    log_k = separate_solution_log10(e0, 1.0, e_j, a_j, z_i, z_j, fit.data.temperature_k, slope=s)
    i0, i_s = fit.names.index("e0"), fit.names.index("slope")
    g = np.zeros(len(fit.names))
    g[i0], g[i_s] = -1.0 / s, -(e_j - e0) / s**2
    u_log = math.sqrt(max(float(g @ fit.covariance @ g), 0.0) + (u_e_j / s) ** 2)
    k = 10.0 ** log_k
    note = "" if abs(fit.slope_percent - 100.0) <= 5.0 else (
        f"the primary ion's slope is {fit.slope_percent:.1f} % of Nernstian: the IUPAC "
        "recommendation warns that SSM values are then biased")
    return Selectivity(interferent, SSM, k, k * math.log(10.0) * u_log, a_j, note)
