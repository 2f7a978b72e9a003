"""Osmotic <-> activity coefficients of one salt by the Gibbs-Duhem relation, with an explicit
extrapolation below the lowest measured molality.

For a single salt in water (Robinson and Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 2,
eqs. 2.19-2.21; Harned and Owen, 3rd ed., 1958, ch. 1):

    ln gamma±(m) = (phi - 1) + int_0^m (phi - 1) / m' dm'                      (1)
    phi(m) - 1   = ln gamma±(m) - (1/m) int_0^m ln gamma±(m') dm'               (2)

Measurements stop at some lowest molality m0; below it a Hückel form is fitted to the lowest
points (Robinson and Stokes ch. 9, eqs. 9.8 and 9.10, with a linear term):

    ln gamma± = -|z+z-| A_gamma sqrt(I) / (1 + B a sqrt(I)) + c m                 (3)
    phi - 1   = -|z+z-| A_phi sqrt(I) sigma(B a sqrt(I)) + c m / 2                 (4)
    sigma(x)  = (3 / x^3) [1 + x - 1/(1 + x) - 2 ln(1 + x)]

with A_gamma = 3 A_phi and B from :func:`saltbench.water.debye_huckel_constants`; a (Å) and c
are fitted. (3) and (4) satisfy (1) and (2) exactly, so the integral from 0 to m0 is analytic:
int_0^m0 (phi - 1)/m' dm' = ln gamma±_fit(m0) - (phi_fit(m0) - 1), and
int_0^m0 ln gamma± dm' = m0 (ln gamma±_fit(m0) - phi_fit(m0) + 1).

Above m0 the integrals use the measured values through a cubic spline in u = sqrt(m) of
(phi - 1)/u, respectively of 2 u ln gamma±, both smooth at small u (the sqrt(m) cusp of the
limiting law becomes regular). Uncertainties are propagated to first order through the whole
reduction (spline and refit) by a numerical Jacobian with respect to the input values.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import FitError, UserError
from saltbench.models.dh_terms import sigma
from saltbench.water.debye_huckel import DebyeHuckel, debye_huckel_constants

Direction = Literal["osmotic->activity", "activity->osmotic"]


@dataclass(frozen=True)
class DiluteExtrapolation:
    """The fitted Hückel form (3)/(4) used below ``below_molality``."""

    electrolyte: Electrolyte
    dh: DebyeHuckel
    ion_size: float  # Å
    c: float  # kg/mol, linear coefficient of ln gamma±
    below_molality: float  # lowest measured molality: values below it are extrapolated
    fitted_to: np.ndarray  # molalities of the points the form was fitted to
    fitted_property: str  # "osmotic" or "ln_gamma_pm"
    form: str = "huckel"
    equation: str = ("ln gamma± = -|z+z-| A_gamma sqrt(I)/(1 + B a sqrt(I)) + c m;  "
                     "phi - 1 = -|z+z-| A_phi sqrt(I) sigma(B a sqrt(I)) + c m/2")

    def _x(self, m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        sqrt_i = np.sqrt(self.electrolyte.ionic_strength(m))
        return sqrt_i, self.dh.b_gamma_per_angstrom * self.ion_size * sqrt_i

    def ln_gamma_pm(self, m: np.ndarray | float) -> np.ndarray:
        m = np.asarray(m, dtype=float)
        sqrt_i, x = self._x(m)
        return -self.electrolyte.zz * self.dh.a_gamma * sqrt_i / (1.0 + x) + self.c * m

    def osmotic(self, m: np.ndarray | float) -> np.ndarray:
        m = np.asarray(m, dtype=float)
        sqrt_i, x = self._x(m)
        return 1.0 - self.electrolyte.zz * self.dh.a_phi * sqrt_i * sigma(x) + self.c * m / 2.0


@dataclass(frozen=True)
class GibbsDuhemResult:
    """Converted values at ``molality``; ``extrapolated`` marks molalities below m0."""

    direction: Direction
    electrolyte: Electrolyte
    molality: np.ndarray
    ln_gamma_pm: np.ndarray
    osmotic: np.ndarray
    u_ln_gamma_pm: np.ndarray
    u_osmotic: np.ndarray
    extrapolated: np.ndarray
    extrapolation: DiluteExtrapolation
    notes: tuple[str, ...] = field(default=())

    @property
    def gamma_pm(self) -> np.ndarray:
        return np.exp(self.ln_gamma_pm)

    @property
    def u_gamma_pm(self) -> np.ndarray:
        return self.gamma_pm * self.u_ln_gamma_pm

    @property
    def extrapolated_below(self) -> float:
        return self.extrapolation.below_molality


def _prepare(molality: np.ndarray, values: np.ndarray, what: str) -> tuple[np.ndarray, np.ndarray]:
    m = np.atleast_1d(np.asarray(molality, dtype=float))
    v = np.atleast_1d(np.asarray(values, dtype=float))
    if m.shape != v.shape or m.ndim != 1:
        raise UserError(f"{m.size} molalities but {v.size} {what} values")
    if m.size < 2:
        raise UserError("the Gibbs-Duhem conversion needs at least 2 measured points")
    if np.any(~np.isfinite(m)) or np.any(m <= 0) or np.any(~np.isfinite(v)):
        raise UserError("molalities must be positive and values finite")
    if np.any(np.diff(m) <= 0):
        raise UserError("molalities must be strictly increasing (sort them and merge duplicates)")
    return m, v


def _fit_dilute(electrolyte: Electrolyte, dh: DebyeHuckel, m: np.ndarray, v: np.ndarray,
                prop: str, ion_size: float | None, weights: np.ndarray) -> DiluteExtrapolation:
    from scipy.optimize import least_squares

    def make(p: np.ndarray) -> DiluteExtrapolation:
        a = float(ion_size) if ion_size is not None else float(p[1])
        return DiluteExtrapolation(electrolyte, dh, a, float(p[0]), float(m[0]), m, prop)

    def resid(p: np.ndarray) -> np.ndarray:
        form = make(p)
        f = form.osmotic(m) if prop == "osmotic" else form.ln_gamma_pm(m)
        return (f - v) * weights

    if ion_size is not None or m.size < 3:
        a_fixed = 4.0 if ion_size is None else float(ion_size)
        p0, bounds = np.array([0.0]), (-np.inf, np.inf)
        sol = least_squares(lambda p: resid(np.array([p[0], a_fixed])), p0, bounds=bounds)
        if not sol.success:
            raise FitError(f"the dilute-range fit did not converge: {sol.message}")
        return DiluteExtrapolation(electrolyte, dh, a_fixed, float(sol.x[0]), float(m[0]), m, prop)
    sol = least_squares(resid, np.array([0.0, 4.0]), bounds=([-np.inf, 0.0], [np.inf, 20.0]))
    if not sol.success:
        raise FitError(f"the dilute-range fit did not converge: {sol.message}")
    return make(sol.x)


def _ion_size_note(ion_size: float | None, n_fit: int) -> str:
    if ion_size is not None:
        return f"dilute-range form fitted with the ion size held at {ion_size:g} Å"
    if n_fit < 3:
        return "fewer than 3 dilute points: ion size held at 4 Å, only c fitted"
    return f"ion size and c fitted to the lowest {n_fit} points"


def _measured_where_given(m: np.ndarray, measured: np.ndarray, at: np.ndarray,
                          estimate: np.ndarray) -> np.ndarray:
    """``estimate`` at ``at``, with the measured value itself wherever ``at`` is a measured
    molality (``m`` sorted ascending)."""
    idx = np.minimum(np.searchsorted(m, at), m.size - 1)
    hit = np.isclose(m[idx], at, rtol=1e-12, atol=0)
    return np.where(hit, measured[idx], estimate)


def _forward_osmotic(electrolyte: Electrolyte, dh: DebyeHuckel, m: np.ndarray, phi: np.ndarray,
                     n_fit: int, ion_size: float | None, weights: np.ndarray,
                     at: np.ndarray) -> tuple[np.ndarray, np.ndarray, DiluteExtrapolation]:
    from scipy.interpolate import CubicSpline

    ext = _fit_dilute(electrolyte, dh, m[:n_fit], phi[:n_fit], "osmotic", ion_size,
                      weights[:n_fit])
    m0 = m[0]
    head = float(ext.ln_gamma_pm(m0) - (ext.osmotic(m0) - 1.0))
    u = np.sqrt(m)
    spline = CubicSpline(u, (phi - 1.0) / u)
    inside = spline(np.sqrt(np.maximum(at, m0))) * np.sqrt(at) + 1.0
    phi_at = np.where(at < m0, ext.osmotic(at), inside)
    phi_at = _measured_where_given(m, phi, at, phi_at)
    tail = np.array([2.0 * spline.integrate(u[0], math.sqrt(x)) if x >= m0 else 0.0 for x in at])
    ln_g = np.where(at < m0, ext.ln_gamma_pm(at), (phi_at - 1.0) + head + tail)
    return ln_g, phi_at, ext


def _forward_activity(electrolyte: Electrolyte, dh: DebyeHuckel, m: np.ndarray, ln_g: np.ndarray,
                      n_fit: int, ion_size: float | None, weights: np.ndarray,
                      at: np.ndarray) -> tuple[np.ndarray, np.ndarray, DiluteExtrapolation]:
    from scipy.interpolate import CubicSpline

    ext = _fit_dilute(electrolyte, dh, m[:n_fit], ln_g[:n_fit], "ln_gamma_pm", ion_size,
                      weights[:n_fit])
    m0 = m[0]
    head = float(m0 * (ext.ln_gamma_pm(m0) - ext.osmotic(m0) + 1.0))
    u = np.sqrt(m)
    spline = CubicSpline(u, 2.0 * u * ln_g)
    lng_spline = CubicSpline(u, ln_g)
    ln_at = np.where(at < m0, ext.ln_gamma_pm(at), lng_spline(np.sqrt(np.maximum(at, m0))))
    ln_at = _measured_where_given(m, ln_g, at, ln_at)
    tail = np.array([spline.integrate(u[0], math.sqrt(x)) if x >= m0 else 0.0 for x in at])
    phi = np.where(at < m0, ext.osmotic(at), 1.0 + ln_at - (head + tail) / at)
    return ln_at, phi, ext


def _convert(direction: Direction, electrolyte: Electrolyte, molality: np.ndarray,
             values: np.ndarray, u_values: np.ndarray | float, temperature_k: float,
             dh: DebyeHuckel | None, fit_points: int, ion_size: float | None,
             at: np.ndarray | list[float] | None) -> GibbsDuhemResult:
    what = "osmotic" if direction == "osmotic->activity" else "ln gamma±"
    m, v = _prepare(molality, values, what)
    dh = dh or debye_huckel_constants(temperature_k)
    u_v = np.broadcast_to(np.asarray(u_values, dtype=float), m.shape)
    weights = 1.0 / u_v if np.all(u_v > 0) else np.ones_like(m)
    n_fit = int(min(max(fit_points, 1), m.size))
    points = m if at is None else np.atleast_1d(np.asarray(at, dtype=float))
    if np.any(points <= 0) or np.any(points > m[-1] * (1 + 1e-12)):
        raise UserError(f"conversion molalities must lie in (0, {m[-1]:g}] mol/kg, the measured "
                        "range; no extrapolation above the highest measured molality")
    forward = _forward_osmotic if direction == "osmotic->activity" else _forward_activity

    def run(vals: np.ndarray) -> tuple[np.ndarray, np.ndarray, DiluteExtrapolation]:
        return forward(electrolyte, dh, m, vals, n_fit, ion_size, weights, points)

    ln_g, phi, ext = run(v)
    if np.any(u_v > 0):
        # First-order propagation through the spline and the dilute refit alike.
        step = 1e-6
        jac_l = np.empty((points.size, m.size))
        jac_p = np.empty((points.size, m.size))
        for j in range(m.size):
            dv = v.copy()
            dv[j] += step
            l2, p2, _ = run(dv)
            jac_l[:, j] = (l2 - ln_g) / step
            jac_p[:, j] = (p2 - phi) / step
        u_ln = np.sqrt((jac_l**2 * u_v**2).sum(axis=1))
        u_phi = np.sqrt((jac_p**2 * u_v**2).sum(axis=1))
    else:
        u_ln = np.zeros_like(points)
        u_phi = np.zeros_like(points)
    notes = (_ion_size_note(ion_size, n_fit),
             f"values below {m[0]:g} mol/kg come from the fitted dilute form, not from data")
    return GibbsDuhemResult(direction, electrolyte, points, ln_g, phi, u_ln, u_phi,
                            points < m[0], ext, notes)


def activity_from_osmotic(electrolyte: Electrolyte, molality: np.ndarray | list[float],
                          osmotic: np.ndarray | list[float], temperature_k: float = 298.15, *,
                          u_osmotic: np.ndarray | float = 0.0, fit_points: int = 5,
                          ion_size: float | None = None, at: np.ndarray | list[float] | None = None,
                          dh: DebyeHuckel | None = None) -> GibbsDuhemResult:
    """ln gamma± from measured osmotic coefficients by eq. (1).

    The Hückel form (4) is fitted to the lowest ``fit_points`` points (ion size and c; the ion
    size is held at ``ion_size`` if given) and used below the lowest molality. ``at`` asks for
    values at other molalities (below m0 they are extrapolated and flagged).
    """
    return _convert("osmotic->activity", electrolyte, np.asarray(molality), np.asarray(osmotic),
                    u_osmotic, temperature_k, dh, fit_points, ion_size, at)


def osmotic_from_activity(electrolyte: Electrolyte, molality: np.ndarray | list[float],
                          gamma_pm: np.ndarray | list[float], temperature_k: float = 298.15, *,
                          u_gamma_pm: np.ndarray | float = 0.0, fit_points: int = 5,
                          ion_size: float | None = None, at: np.ndarray | list[float] | None = None,
                          dh: DebyeHuckel | None = None) -> GibbsDuhemResult:
    """phi from measured mean activity coefficients (linear, not ln) by eq. (2)."""
    g = np.atleast_1d(np.asarray(gamma_pm, dtype=float))
    if np.any(g <= 0):
        raise UserError("activity coefficients must be positive")
    u_ln = np.asarray(u_gamma_pm, dtype=float) / g
    return _convert("activity->osmotic", electrolyte, np.asarray(molality), np.log(g), u_ln,
                    temperature_k, dh, fit_points, ion_size, at)
