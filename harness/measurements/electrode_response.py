"""Response of an ion-selective electrode: the Nikolsky-Eisenman equation fitted by weighted
least squares, its detection limit and its linear range.

The response to the primary ion i (charge z_i) in the presence of interfering ions j (charge z_j)
is the Nikolsky-Eisenman equation (IUPAC recommendations: Umezawa, Bühlmann, Umezawa, Tohda and
Amemiya, Pure Appl. Chem. 72, 1851 (2000), and Umezawa, Umezawa, Bühlmann et al., Pure Appl.
Chem. 74, 923 (2002)):

    E = E0 + S log10(a_i + sum_j K_ij a_j^(z_i/z_j) + a_0)                           (1)

with S the practical slope (V per decade; R T ln10 / (z_i F) when Nernstian) and a_0 >= 0 the
electrode's own low-level response (primary ion leached from the membrane, impurities of the
standards): a term of our own that lumps what flattens the response at low activity besides the
named interferents. E0 and S enter linearly; a_0 and the K_ij are fitted as log10 values so they
stay positive. The weights are 1/u(E)^2; the covariance is (J^T W J)^-1, multiplied by the
reduced chi-square when that exceeds 1 (the data scatter more than u(E) says; common practice,
no source).

Which terms are fitted:
- K_ij only for an interferent whose level a_j^(z_i/z_j) varies among the standards (its largest
  level at least twice its smallest, zero counting as smallest); an interferent held at one level
  is inseparable from a_0 and is given by the fixed-interference method instead
  (:mod:`saltbench.measurements.electrode_selectivity`).
- a_0 when it is resolved: a fit in which a_0 stays below a thousandth of the lowest standard's
  activity (or its standard error exceeds its value several times) is repeated without it, and the
  result says a_0 was not resolved.

Detection limit (Buck and Lindner, Pure Appl. Chem. 66, 2527 (1994); Umezawa et al. 2000): the
activity at which the extrapolated linear response E0 + S log10 a_i crosses the low-activity
asymptote E0 + S log10 B, B = a_0 + sum_j K_ij a_j^(z_i/z_j) at the interferent levels of the
lowest standard. For eq. (1) the two lines cross at a_i = B exactly, so a_LOD = B; its standard
uncertainty follows from the covariance. Without a resolved a_0 and without interferents in the
lowest standard there is no asymptote in the data and no detection limit is given.

Linear range (our rule, stated with every result): standards are taken from the highest
activity down; the range is the widest such run of at least 3 standards whose weighted straight
line E = b + s log10 a_i leaves every one of them within ``RANGE_RESIDUAL_MULTIPLE`` (3) times
its u(E). The run stops at the first standard whose inclusion breaks the rule. Only standards at
the lowest level of every interferent take part (a fixed-interference series is curved by design).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from saltbench.errors import FitError, UserError
from saltbench.measurements.nernst import CALIBRATION_CAUTION, nernst_slope

#: Residual multiple of u(E) within which a run of standards counts as linear (our rule).
RANGE_RESIDUAL_MULTIPLE = 3.0
RANGE_RULE = (f"widest run of standards from the highest activity down (at least 3) whose weighted "
              f"straight line in log10 a_i leaves each within {RANGE_RESIDUAL_MULTIPLE:g} u(E)")
LOD_DEFINITION = ("IUPAC: intersection of the extrapolated linear response with the low-activity "
                  "asymptote (Buck and Lindner, Pure Appl. Chem. 66, 2527 (1994))")
MODEL_NAME = "Nikolsky-Eisenman, weighted least squares"
#: An interferent is fitted when its largest level is at least this multiple of its smallest.
VARIES_BY = 2.0


@dataclass(frozen=True)
class ResponseData:
    """Calibration standards: primary-ion activity, interferent activities, potential in V."""

    activity: np.ndarray  # a_i of each standard
    emf: np.ndarray  # V
    u_emf: np.ndarray  # V, standard uncertainty of each reading
    charge: int  # z_i
    temperature_k: float
    interferents: dict[str, np.ndarray] = field(default_factory=dict)  # a_j per standard
    interferent_charges: dict[str, int] = field(default_factory=dict)

    def level(self, name: str, activity: np.ndarray | float | None = None) -> np.ndarray:
        """a_j^(z_i/z_j) of interferent ``name`` (its standards' activities by default)."""
        a = self.interferents[name] if activity is None else np.asarray(activity, dtype=float)
        return np.power(np.maximum(a, 0.0), self.charge / self.interferent_charges[name])


@dataclass(frozen=True)
class LinearRange:
    low: float  # lowest activity of the run
    high: float
    n_standards: int
    slope: float  # V per decade, of the straight line through the run
    u_slope: float
    rule: str = RANGE_RULE


@dataclass(frozen=True)
class ResponseFit:
    """The fitted response, eq. (1). ``names`` label ``values`` and ``covariance``: ``e0`` (V),
    ``slope`` (V/decade), ``log10_a0``, ``log10_K(<ion>)``."""

    names: tuple[str, ...]
    values: np.ndarray
    covariance: np.ndarray
    data: ResponseData
    residuals: np.ndarray  # V, measured minus fitted
    chi2: float
    dof: int
    nernst_slope: float  # V/decade at the temperature, for z_i
    a0_resolved: bool
    detection_limit: float | None
    u_detection_limit: float | None
    lod_levels: dict[str, float]  # interferent activities of the lowest standard, used for the LOD
    linear_range: LinearRange | None
    notes: tuple[str, ...] = ()
    method: str = MODEL_NAME
    lod_definition: str = LOD_DEFINITION
    caution: str = CALIBRATION_CAUTION

    def value(self, name: str) -> float:
        return float(self.values[self.names.index(name)])

    def u(self, name: str) -> float:
        i = self.names.index(name)
        return float(math.sqrt(max(self.covariance[i, i], 0.0)))

    @property
    def e0(self) -> float:
        return self.value("e0")

    @property
    def slope(self) -> float:
        return self.value("slope")

    @property
    def slope_percent(self) -> float:
        return 100.0 * self.slope / self.nernst_slope

    @property
    def u_slope_percent(self) -> float:
        return 100.0 * self.u("slope") / abs(self.nernst_slope)

    @property
    def a0(self) -> float:
        return 10.0 ** self.value("log10_a0") if "log10_a0" in self.names else 0.0

    @property
    def fitted_interferents(self) -> tuple[str, ...]:
        return tuple(n[len("log10_K("):-1] for n in self.names if n.startswith("log10_K("))

    def selectivity(self, ion: str) -> float:
        return 10.0 ** self.value(f"log10_K({ion})")

    @property
    def birge_ratio(self) -> float:
        return math.sqrt(self.chi2 / self.dof) if self.dof > 0 else float("nan")

    def background(self, levels: dict[str, float] | None = None) -> float:
        """B = a_0 + sum_j K_ij a_j^(z_i/z_j) at interferent activities ``levels``."""
        return float(_background(self.names, self.values, self.data, levels or {}))

    def predict(self, activity: np.ndarray, levels: dict[str, np.ndarray] | None = None) -> np.ndarray:
        """E (V) of eq. (1) at primary activities ``activity`` and interferent ``levels``."""
        a = np.asarray(activity, dtype=float)
        b = _background(self.names, self.values, self.data, levels or {})
        return self.e0 + self.slope * np.log10(a + b)


    def curve(self, points: int = 200) -> tuple[np.ndarray, np.ndarray]:
        """(a_i, E) of the fitted response for a calibration plot: from a decade below the lower
        of the lowest standard and the detection limit to the highest standard, at the
        interferent levels of the lowest standard (those of the detection limit)."""
        low = float(np.min(self.data.activity))
        if self.detection_limit is not None:
            low = min(low, self.detection_limit)
        a = np.logspace(math.log10(low) - 1.0, math.log10(float(np.max(self.data.activity))), points)
        return a, self.predict(a, {k: np.full(points, v) for k, v in self.lod_levels.items()})


def _background(names, values, data: ResponseData, levels) -> np.ndarray | float:
    b: np.ndarray | float = 0.0
    for n, v in zip(names, values):
        if n == "log10_a0":
            b = b + 10.0 ** v
        elif n.startswith("log10_K("):
            ion = n[len("log10_K("):-1]
            b = b + 10.0 ** v * data.level(ion, levels.get(ion, 0.0))
    return b


def _wls_line(x: np.ndarray, e: np.ndarray, u: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Weighted straight line e = c0 + c1 x: coefficients, covariance (unscaled), residuals."""
    w = 1.0 / u**2
    design = np.column_stack([np.ones_like(x), x])
    a = design.T @ (design * w[:, None])
    coef = np.linalg.solve(a, design.T @ (w * e))
    return coef, np.linalg.inv(a), e - design @ coef


def linear_range(data: ResponseData) -> LinearRange | None:
    """The linear range by :data:`RANGE_RULE`, over the standards at the lowest level of every
    interferent (those of a fixed-interference series are curved by design); None when the top
    3 standards already break it."""
    keep = np.ones(data.activity.size, dtype=bool)
    for n in data.interferents:
        lvl = data.level(n)
        keep &= lvl <= float(np.min(lvl)) * (1 + 1e-9)
    act, emf, ue = data.activity[keep], data.emf[keep], data.u_emf[keep]
    order = np.argsort(-act, kind="stable")
    x, e, u = np.log10(act[order]), emf[order], ue[order]
    best = None
    for k in range(3, x.size + 1):
        if np.ptp(x[:k]) == 0:
            continue
        coef, cov, r = _wls_line(x[:k], e[:k], u[:k])
        if np.any(np.abs(r) > RANGE_RESIDUAL_MULTIPLE * u[:k]):
            break
        best = (k, coef, cov)
    if best is None:
        return None
    k, coef, cov = best
    a = act[order]
    return LinearRange(float(a[k - 1]), float(a[0]), k, float(coef[1]), float(math.sqrt(cov[1, 1])))


def _varies(levels: np.ndarray) -> bool:
    lo, hi = float(np.min(levels)), float(np.max(levels))
    return hi > 0 and hi >= VARIES_BY * lo


def fit_response(data: ResponseData) -> ResponseFit:
    """Fit eq. (1) to calibration standards (at least 3, differing in activity)."""
    from scipy.optimize import least_squares

    a, e, u = (np.asarray(v, dtype=float).ravel() for v in (data.activity, data.emf, data.u_emf))
    if not (a.size == e.size == u.size):
        raise UserError(f"{a.size} activities, {e.size} potentials and {u.size} uncertainties")
    if a.size < 3:
        raise UserError("a calibration needs at least 3 standards")
    if np.any(a <= 0) or np.any(u <= 0) or not np.all(np.isfinite(e)):
        raise UserError("standards' activities and u(E) must be positive, potentials finite")
    if np.ptp(np.log10(a)) == 0:
        raise UserError("calibration standards must differ in primary-ion activity")
    s_n = nernst_slope(data.temperature_k, data.charge)
    fitted_k = [n for n in data.interferents if _varies(data.level(n))]
    notes = [f"K({n}) not fitted: its level is the same in every standard (see the "
             "fixed-interference value)" for n in data.interferents if n not in fitted_k]

    # start: the straight line through the upper half of the standards
    order = np.argsort(-a)
    top = order[: max(3, a.size // 2)]
    coef, _, _ = _wls_line(np.log10(a[top]), e[top], u[top])
    e0_start, s_start = float(coef[0]), float(coef[1]) if coef[1] != 0 else s_n
    low = order[-1]
    b_guess = 10.0 ** ((e[low] - e0_start) / s_start) - a[low]
    b_guess = b_guess if b_guess > 0 else 1e-3 * float(a.min())

    def run(with_a0: bool):
        names = ["e0", "slope"] + (["log10_a0"] if with_a0 else []) + [f"log10_K({n})" for n in fitted_k]

        def resid(p: np.ndarray) -> np.ndarray:
            with np.errstate(over="ignore", invalid="ignore"):
                b = _background(names, p, data, data.interferents)
                total = np.nan_to_num(np.maximum(a + b, 1e-300), nan=1e300, posinf=1e300)
            return (p[0] + p[1] * np.log10(total) - e) / u

        best = None
        for shift in (0.0, -1.0, 1.0, -3.0):
            start = [e0_start, s_start]
            if with_a0:
                start.append(math.log10(b_guess) + shift)
            for n in fitted_k:
                lvl = float(np.max(data.level(n)))
                start.append(math.log10(b_guess / lvl) + shift if lvl > 0 else -3.0)
            sol = least_squares(resid, np.array(start), x_scale="jac", method="trf", max_nfev=4000)
            if best is None or sol.cost < best.cost:
                best = sol
        assert best is not None
        return names, best

    names, sol = run(True)
    a0_resolved = True
    cov = _covariance(sol.jac)
    if "log10_a0" in names:
        i = names.index("log10_a0")
        lg, ulg = sol.x[i], math.sqrt(max(cov[i, i], 0.0)) if np.all(np.isfinite(cov)) else float("inf")
        if lg < math.log10(a.min()) - 3.0 or not math.isfinite(ulg) or ulg > 1.0:
            names, sol = run(False)
            cov = _covariance(sol.jac)
            a0_resolved = False
            notes.append("a_0 (the electrode's own low-level response) is not resolved by these "
                         "standards and was left out of the fit")
    if not np.all(np.isfinite(cov)):
        raise FitError("the response fit is singular: the standards do not determine its terms "
                       "(too few levels of an interferent, or too few standards)")
    resid_v = e - (sol.x[0] + sol.x[1] * np.log10(a + _background(names, sol.x, data, data.interferents)))
    chi2 = float(np.sum((resid_v / u) ** 2))
    dof = a.size - len(names)
    if dof > 0 and chi2 / dof > 1.0:
        cov = cov * (chi2 / dof)
    if dof <= 0:
        notes.append("as many terms as standards: no degrees of freedom to check the fit")

    low_levels = {n: float(data.interferents[n][low]) for n in data.interferents}
    lod = u_lod = None
    b_low = _background(names, sol.x, data, low_levels)
    if b_low > 0:
        lod = float(b_low)
        grad = np.zeros(len(names))
        for k, n in enumerate(names):
            if n == "log10_a0":
                grad[k] = math.log(10.0) * 10.0 ** sol.x[k]
            elif n.startswith("log10_K("):
                ion = n[len("log10_K("):-1]
                grad[k] = math.log(10.0) * 10.0 ** sol.x[k] * float(data.level(ion, low_levels[ion]))
        u_lod = float(math.sqrt(max(grad @ cov @ grad, 0.0)))
    else:
        notes.append("no detection limit: the standards show no low-activity asymptote")
    return ResponseFit(tuple(names), np.asarray(sol.x, dtype=float), cov, data, resid_v, chi2, dof,
                       s_n, a0_resolved, lod, u_lod, low_levels, linear_range(data), tuple(notes))


def _covariance(jac: np.ndarray) -> np.ndarray:
    """(J^T J)^-1 of the weighted residuals' Jacobian; NaN when singular."""
    jtj = jac.T @ jac
    try:
        if np.linalg.cond(jtj) > 1e14:
            return np.full(jtj.shape, np.nan)
        return np.linalg.inv(jtj)
    except np.linalg.LinAlgError:
        return np.full(jtj.shape, np.nan)
