"""Cells without liquid junction: EMF <-> mean activity coefficient, and the standard EMF by
extrapolation to infinite dilution.

A cell whose two electrodes are reversible to the cation and to the anion of one salt
M(nu+) X(nu-), e.g. Pt | H2 | HCl(m) | AgCl | Ag, forms ``s`` formula units of salt per cell
reaction with ``n`` electrons transferred. Its EMF is (Harned and Owen, The Physical Chemistry of
Electrolytic Solutions, 3rd ed., 1958, ch. 11; Robinson and Stokes, Electrolyte Solutions, 2nd
ed., 1959, ch. 8, eq. 8.4):

    E = E° - (s R T / (n F)) ln(a+^nu+ a-^nu-)
      = E° - k ln(Q m gamma±),      k = s nu R T / (n F),  Q = (nu+^nu+ nu-^nu-)^(1/nu)     (1)

For the hydrogen / silver-chloride cell s = n = 1, nu = 2, Q = 1: E = E° - (2RT/F) ln(m gamma±).

Standard EMF (Hitchcock, J. Am. Chem. Soc. 50, 2076 (1928); Harned and Owen ch. 11): with the
extended Debye-Hückel form ln gamma± = -|z+z-| A_gamma sqrt(I) / (1 + B a sqrt(I)) + b m,

    E' = E + k ln(Q m) - k |z+z-| A_gamma sqrt(I) / (1 + B a sqrt(I)) = E° - k b m          (2)

is linear in m; its intercept at m = 0 is E°. The ion-size parameter a is fitted with E° and b
by nonlinear least squares (``ion_size`` fixes it instead). A_gamma (natural-log basis) and
B come from :func:`saltbench.water.debye_huckel_constants`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import FitError, UserError
from saltbench.measurements.nernst import thermal_voltage
from saltbench.water.debye_huckel import DebyeHuckel, debye_huckel_constants


@dataclass(frozen=True)
class CellSpec:
    """A cell without liquid junction for one salt: ``n`` electrons, ``s`` formula units formed.

    ``electrons`` defaults to nu+ z+ (one formula unit formed by the two electrodes reversible to
    its ions); give it explicitly for a cell written otherwise.
    """

    electrolyte: Electrolyte
    electrons: int | None = None
    salt_per_reaction: float = 1.0
    description: str = ""

    @property
    def n(self) -> int:
        e = self.electrolyte
        return self.electrons if self.electrons is not None else e.nu_cation * e.z_cation

    @property
    def q(self) -> float:
        """(nu+^nu+ nu-^nu-)^(1/nu): mean ionic molality m± = Q m."""
        e = self.electrolyte
        return float((e.nu_cation**e.nu_cation * e.nu_anion**e.nu_anion) ** (1.0 / e.nu))

    def k(self, temperature_k: float) -> float:
        """k = s nu R T / (n F) in volts, eq. (1)."""
        if self.n <= 0 or self.salt_per_reaction <= 0:
            raise UserError("a cell needs a positive electron number and salt count")
        rt_f = thermal_voltage(temperature_k)
        return self.salt_per_reaction * self.electrolyte.nu * rt_f / self.n


def _positive(name: str, values: np.ndarray | float) -> np.ndarray:
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    if np.any(~np.isfinite(arr)) or np.any(arr <= 0):
        raise UserError(f"{name} must be positive finite numbers")
    return arr


def emf_from_gamma(cell: CellSpec, molality: np.ndarray | float, gamma_pm: np.ndarray | float,
                   e_standard: float, temperature_k: float = 298.15) -> np.ndarray:
    """Cell EMF in volts from eq. (1)."""
    m = _positive("molalities", molality)
    g = _positive("activity coefficients", gamma_pm)
    return e_standard - cell.k(temperature_k) * np.log(cell.q * m * g)


@dataclass(frozen=True)
class EmfReduction:
    """Mean activity coefficients reduced from EMF readings with a given E°.

    ``u_ln_gamma_independent`` comes from each reading's u(E) (and u(m)); ``u_ln_gamma_common``
    from u(E°), the same for every point and fully correlated between them.
    """

    molality: np.ndarray
    emf: np.ndarray
    e_standard: float
    u_e_standard: float
    ln_gamma_pm: np.ndarray
    u_ln_gamma_independent: np.ndarray
    u_ln_gamma_common: float
    temperature_k: float

    @property
    def gamma_pm(self) -> np.ndarray:
        return np.exp(self.ln_gamma_pm)

    @property
    def u_ln_gamma_pm(self) -> np.ndarray:
        return np.hypot(self.u_ln_gamma_independent, self.u_ln_gamma_common)

    @property
    def u_gamma_pm(self) -> np.ndarray:
        return self.gamma_pm * self.u_ln_gamma_pm


def gamma_from_emf(cell: CellSpec, molality: np.ndarray | float, emf: np.ndarray | float,
                   e_standard: float, temperature_k: float = 298.15, *,
                   u_emf: np.ndarray | float = 0.0, u_e_standard: float = 0.0,
                   u_molality: np.ndarray | float = 0.0) -> EmfReduction:
    """Invert eq. (1): ln gamma± = (E° - E)/k - ln(Q m), with first-order uncertainties."""
    m = _positive("molalities", molality)
    e = np.atleast_1d(np.asarray(emf, dtype=float))
    if e.shape != m.shape:
        raise UserError(f"{m.size} molalities but {e.size} EMF readings")
    k = cell.k(temperature_k)
    ln_g = (e_standard - e) / k - np.log(cell.q * m)
    u_e = np.broadcast_to(np.asarray(u_emf, dtype=float), m.shape)
    u_m = np.broadcast_to(np.asarray(u_molality, dtype=float), m.shape)
    u_ind = np.hypot(u_e / k, u_m / m)
    return EmfReduction(m, e, float(e_standard), float(u_e_standard), ln_g, u_ind,
                        float(u_e_standard) / k, float(temperature_k))


@dataclass(frozen=True)
class StandardEmf:
    """Result of the extrapolation of eq. (2) to infinite dilution.

    ``molality`` and ``e_prime`` are the points of the extrapolation plot (E' against m);
    ``line`` is the fitted straight line at those molalities, so a report can draw both.
    """

    e_standard: float  # V
    u_e_standard: float  # V
    ion_size: float  # Å, fitted or fixed
    u_ion_size: float  # Å; 0 when fixed
    slope: float  # dE'/dm in V kg/mol, equal to -k b
    b: float  # kg/mol, linear coefficient of ln gamma±
    ion_size_fitted: bool
    molality: np.ndarray
    e_prime: np.ndarray
    line: np.ndarray
    residuals: np.ndarray
    covariance: np.ndarray  # over (E°, slope, ion size) or (E°, slope) when a is fixed
    residual_sd: float  # V, sqrt(sum of squared residuals / degrees of freedom)
    chi2_reduced: float | None  # only with u(E) given
    uncertainty_basis: str  # "u(E) as given" or "residual scatter"
    temperature_k: float
    method: str = "Hitchcock extrapolation with extended Debye-Hückel term, linear in m"


def _dh_term(cell: CellSpec, m: np.ndarray, a_angstrom: float, dh: DebyeHuckel) -> np.ndarray:
    sqrt_i = np.sqrt(cell.electrolyte.ionic_strength(m))
    return cell.electrolyte.zz * dh.a_gamma * sqrt_i / (1.0 + dh.b_gamma_per_angstrom
                                                          * a_angstrom * sqrt_i)


def e_prime(cell: CellSpec, molality: np.ndarray, emf: np.ndarray, ion_size: float,
            temperature_k: float = 298.15, dh: DebyeHuckel | None = None) -> np.ndarray:
    """E' of eq. (2) in volts for an ion size in Å."""
    dh = dh or debye_huckel_constants(temperature_k)
    m = _positive("molalities", molality)
    k = cell.k(temperature_k)
    dh_term = _dh_term(cell, m, ion_size, dh)
    return np.asarray(emf, dtype=float) + k * np.log(cell.q * m) - k * dh_term


def extrapolate_standard_emf(cell: CellSpec, molality: np.ndarray, emf: np.ndarray,
                             temperature_k: float = 298.15, *,
                             u_emf: np.ndarray | float | None = None,
                             ion_size: float | None = None, ion_size_start: float = 4.0,
                             dh: DebyeHuckel | None = None) -> StandardEmf:
    """E° from eq. (2); fits E°, the slope and (unless ``ion_size`` is given) a in Å.

    With ``u_emf`` the covariance uses those standard uncertainties as they are; without, it is
    scaled by the residual variance. Needs at least one more point than fitted parameters.
    """
    from scipy.optimize import least_squares

    m = _positive("molalities", molality)
    e = np.atleast_1d(np.asarray(emf, dtype=float))
    if e.shape != m.shape or not np.all(np.isfinite(e)):
        raise UserError("EMF readings must be finite and as many as the molalities")
    dh = dh or debye_huckel_constants(temperature_k)
    k = cell.k(temperature_k)
    fit_a = ion_size is None
    n_par = 3 if fit_a else 2
    if m.size <= n_par:
        raise UserError(f"the extrapolation needs more than {n_par} points, got {m.size}")
    sigma = np.ones_like(m) if u_emf is None else np.broadcast_to(
        np.asarray(u_emf, dtype=float), m.shape).copy()
    if np.any(sigma <= 0):
        raise UserError("u(E) must be positive")

    def model(p: np.ndarray) -> np.ndarray:
        a = p[2] if ion_size is None else float(ion_size)
        # E = E° + slope m - k ln(Qm) + k DH(a): eq. (2) solved for E, so residuals are in E.
        return p[0] + p[1] * m - k * np.log(cell.q * m) + k * _dh_term(cell, m, a, dh)

    a0 = float(ion_size_start if ion_size is None else ion_size)
    ep0 = e_prime(cell, m, e, a0, temperature_k, dh)
    slope0, e0 = np.polyfit(m, ep0, 1)
    p0 = np.array([e0, slope0, a0] if fit_a else [e0, slope0])
    bounds = ([-np.inf, -np.inf, 0.0], [np.inf, np.inf, 20.0]) if fit_a else (-np.inf, np.inf)
    sol = least_squares(lambda p: (model(p) - e) / sigma, p0, bounds=bounds, x_scale="jac")
    if not sol.success:
        raise FitError(f"the standard-EMF extrapolation did not converge: {sol.message}")
    dof = m.size - n_par
    chi2 = float(sol.fun @ sol.fun) / dof
    resid_e = model(sol.x) - e
    residual_sd = float(math.sqrt(resid_e @ resid_e / dof))
    jtj = sol.jac.T @ sol.jac
    try:
        cov = np.linalg.inv(jtj)
    except np.linalg.LinAlgError as exc:
        raise FitError("the standard-EMF extrapolation is singular (ion size not determined); "
                       "fix the ion size") from exc
    if u_emf is None:
        cov = cov * chi2
        basis = "residual scatter"
    else:
        basis = "u(E) as given"
    a_fit = float(sol.x[2]) if ion_size is None else float(ion_size)
    ep = e_prime(cell, m, e, a_fit, temperature_k, dh)
    line = sol.x[0] + sol.x[1] * m
    return StandardEmf(
        e_standard=float(sol.x[0]), u_e_standard=float(math.sqrt(cov[0, 0])),
        ion_size=a_fit, u_ion_size=float(math.sqrt(cov[2, 2])) if fit_a else 0.0,
        slope=float(sol.x[1]), b=float(-sol.x[1] / k), ion_size_fitted=fit_a,
        molality=m, e_prime=ep, line=line, residuals=ep - line, covariance=cov,
        residual_sd=residual_sd, chi2_reduced=None if u_emf is None else chi2,
        uncertainty_basis=basis, temperature_k=float(temperature_k),
    )
