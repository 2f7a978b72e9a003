"""Weighted least squares by variable projection.

Residuals are r_i = (y_i - f_i(theta)) / u_i. Parameters that enter f linearly (declared
``linear``) are eliminated exactly: at fixed nonlinear parameters theta_N the model is
f = c(theta_N) + D(theta_N) theta_L and theta_L follows from a linear least-squares solve
(bounded-variable least squares when a bound is hit; Stark and Parker, Comput. Stat. 10, 129
(1995)). The remaining function of theta_N alone is minimised with the Jacobian of Kaufman's
approximation to variable projection (Kaufman, BIT 15, 49 (1975); Golub and Pereyra, Inverse
Problems 19, R1 (2003), sec. 3): the plain Jacobian with respect to theta_N projected onto the
orthogonal complement of the columns of D. When every free parameter is linear no iterative
optimiser runs.

Two minimisers share the work. A problem's fit from its own start uses the trust-region
reflective method of scipy.optimize.least_squares (Branch, Coleman and Li, SIAM J. Sci. Comput.
21, 1 (1999)): from a start far from the minimum the path decides which minimum is found, and
its reflective steps keep inside the bounds. The many refits that start near a minimum (each
fold of a cross-validation and each trial limit of a validity scan, seeded from a neighbouring
optimum) and the refinements of spread starts use :func:`saltbench.fitting.levenberg.minimise`,
with the same tolerances, at a fraction of scipy's fixed cost per call. On the bundled data the
two give the same verdicts, ranges and flags; the numbers of a refit differ by less than 1e-6
relative (the optimisers stop at different points within the tolerance).

When every free parameter is linear, one singular value decomposition of the weighted design
with its columns scaled to unit norm gives the solution and also the covariance and condition
number of :mod:`saltbench.fitting.result` (the Jacobian is then that design); scaling the columns
leaves the least-squares solution unchanged.

Model failures never escape: a plugin error at a trial point rejects the step (the optimiser
shrinks its trust region); at the start point it ends the fit with a flag.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import NamedTuple

import numpy as np

from saltbench.errors import ModelDomainError, ModelError
from saltbench.fitting.flags import Flag, FlagKind, flag
from saltbench.fitting.lapack import thin_svd
from saltbench.fitting.levenberg import Minimum, minimise
from saltbench.fitting.protocol import Problem

_MODEL_FAILURES = (ModelError, ModelDomainError, FloatingPointError, np.linalg.LinAlgError)


_EPS = float(np.finfo(float).eps)
_NO_BASIS = np.zeros((0, 0))  # nothing to project out (no free linear parameter, or no projection)


class ScaledSVD(NamedTuple):
    """a / norms = u diag(s) vt, the columns of ``a`` scaled to unit norm (zero columns kept)."""

    norms: np.ndarray
    u: np.ndarray
    s: np.ndarray
    vt: np.ndarray


def scaled_svd(a: np.ndarray) -> ScaledSVD:
    norms = np.sqrt(np.einsum("ij,ij->j", a, a))
    # zero columns stay zero (divided by 1); the test runs on a few plain numbers
    positive = all(x > 0 for x in norms.tolist())
    u, s, vt = thin_svd(a / (norms if positive else np.where(norms > 0, norms, 1.0)))
    return ScaledSVD(norms, u, s, vt)


def _rank(svd: ScaledSVD, shape: tuple[int, int]) -> int:
    """Singular values above eps max(shape) of the largest count (numpy's lstsq default)."""
    s = svd.s.tolist()  # a few numbers: plain Python counts them
    if not s or not s[0] > 0:
        return 0
    tol = s[0] * max(shape) * _EPS
    return sum(1 for x in s if x > tol)


@dataclass
class Solution:
    """What the solver found; :func:`saltbench.fitting.result.build_result` turns it into a report."""

    theta: np.ndarray  # full parameter vector (free and held)
    prediction: np.ndarray | None  # None when the model failed at the solution
    jacobian: np.ndarray | None  # d prediction / d theta[free] / u, shape (n, k)
    converged: bool
    message: str
    flags: list[Flag] = field(default_factory=list)
    at_bound: dict[int, str] = field(default_factory=dict)  # global index -> "lower" | "upper"
    iterations: int = 0
    # The decomposition of ``jacobian`` when the solver already has it (every free parameter
    # linear: the Jacobian is the weighted design), so that the report need not repeat it.
    jacobian_svd: ScaledSVD | None = None
    weighted_residual: np.ndarray | None = None  # (y - prediction) / u, when known


class FoundMinimum(NamedTuple):
    """A local minimum in the free nonlinear parameters found by the caller
    (:mod:`saltbench.fitting.together`), with the problem's state there: the full parameter
    vector (linear parameters solved), the prediction, the weighted residuals and the linear
    solution (None without free linear parameters)."""

    minimum: Minimum
    theta: np.ndarray
    prediction: np.ndarray
    residual: np.ndarray
    linear: LinearSolution | None
    failures: tuple[str, ...] = ()  # the model's messages at steps rejected on the way


#: The solver's message for a problem whose free parameters all enter linearly.
LINEAR_MESSAGE = "all free parameters are linear: solved by linear least squares"


class Abort(Exception):
    pass


class Projection:
    """theta_N -> projected residuals and Jacobian, caching the last point (fun then jac)."""

    def __init__(self, problem: Problem) -> None:
        self.p = problem
        self.key: bytes | None = None
        self.theta = problem.theta0
        # set by the first set_point, which comes before any use
        self.resid: np.ndarray | None = None
        self.pred: np.ndarray | None = None
        self.lin: LinearSolution | None = None  # with free linear parameters: their solution
        self.failures: list[str] = []

    def adopt(self, found: FoundMinimum) -> None:
        """Take ``found`` as the last point evaluated (its state is what set_point would give)."""
        self.key = np.asarray(found.minimum.x, dtype=float).tobytes()
        self.theta, self.resid, self.pred, self.lin = (found.theta, found.residual,
                                                       found.prediction, found.linear)
        self.failures[:] = found.failures

    def set_point(self, x: np.ndarray) -> None:
        key = np.asarray(x, dtype=float).tobytes()
        if key == self.key:
            return
        p = self.p
        theta = self.theta.copy()
        theta[p.nonlinear] = x
        if p.linear.size:
            offset, design = p.linear_design(theta)
            lin = solve_linear(p, offset, design, projection=bool(p.nonlinear.size))
            theta[p.linear], self.lin = lin.x, lin
            pred = offset + design @ theta[p.linear]
        else:
            self.lin = None
            pred = p.predict(theta)
        resid = (p.obs - pred) / p.sigma
        # A sum is finite only if every term is; the elementwise test runs only when it is not.
        if not math.isfinite(np.add.reduce(resid)) and not np.isfinite(resid).all():
            raise ModelError(f"model {p.model.id}: residuals are not finite")
        self.theta, self.key, self.resid, self.pred = theta, key, resid, pred

    @property
    def linear_at_bound(self) -> dict[int, str]:
        """The free linear parameters held on a bound at the last point (global index)."""
        return {} if self.lin is None else self.lin.pinned

    @property
    def basis(self) -> np.ndarray:
        """The basis that the Jacobian is projected off (the linear solution decomposes it when
        first asked: a trial point the optimiser rejects never needs it)."""
        return _NO_BASIS if self.lin is None else self.lin.basis

    def fun(self, x: np.ndarray) -> np.ndarray:
        try:
            self.set_point(x)
        except _MODEL_FAILURES as exc:
            self.failures.append(str(exc))
            self.key = None
            return np.full(self.p.n, np.nan)
        assert self.resid is not None  # set_point has just set it
        return self.resid

    def jac(self, x: np.ndarray, *_: object) -> np.ndarray:
        try:
            self.set_point(x)
            j = -self.p.derivatives(self.theta, self.p.nonlinear) / self.p.sigma[:, None]
        except _MODEL_FAILURES as exc:
            self.failures.append(str(exc))
            raise Abort(str(exc)) from exc
        basis = self.basis
        if basis.shape[1]:
            j = j - basis @ (basis.T @ j)
        return j


@dataclass
class LinearSolution:
    x: np.ndarray  # the free linear parameters
    keep: list[int] | None  # with a projection: the columns left off their bounds
    pinned: dict[int, str]  # global index -> "lower" | "upper"
    weighted: np.ndarray  # design / u
    svd: ScaledSVD | None  # of ``weighted``, when it was needed
    _basis: np.ndarray | None = field(default=None, repr=False)

    @property
    def basis(self) -> np.ndarray:
        """Orthonormal basis of the weighted columns ``keep`` (none without a projection),
        decomposed on first use: a point the optimiser rejects never needs it."""
        if self._basis is None:
            self._basis = _NO_BASIS
            if self.keep:
                sub = self.weighted[:, self.keep]
                u, s, _ = np.linalg.svd(sub, full_matrices=False)
                self._basis = u[:, s > s[0] * max(sub.shape) * _EPS] if s[0] > 0 else u[:, :0]
        return self._basis


def solve_linear(problem: Problem, offset: np.ndarray, design: np.ndarray, *,
                 projection: bool = True) -> LinearSolution:
    """Weighted linear least squares in the free linear parameters, within their bounds.

    With ``projection`` (nonlinear parameters are free) it also gives an orthonormal basis of
    the weighted design columns of the parameters left off their bounds, computed as it always
    was: the optimiser's path through a flat or symmetric minimum can hinge on its last digits.
    Without, the basis is not needed and one decomposition of the scaled design gives the
    solution and, later, the covariance.
    """
    a = design / problem.sigma[:, None]
    rhs = (problem.obs - offset) / problem.sigma
    return solve_weighted(problem, a, rhs, projection=projection)


def solve_weighted(problem: Problem, a: np.ndarray, rhs: np.ndarray, *,
                   projection: bool = True) -> LinearSolution:
    """:func:`solve_linear` on the weighted design ``a`` (design / u) and right-hand side
    ``rhs`` ((y - offset) / u) of any rows of ``problem``'s points: the bounds and indices of
    the free linear parameters are ``problem``'s (those of a subset of its points too)."""
    idx = problem.linear
    svd = None
    if projection:
        x = np.linalg.lstsq(a, rhs, rcond=None)[0]
    else:
        svd = scaled_svd(a)
        if _rank(svd, a.shape) == a.shape[1]:
            x = (svd.vt.T @ ((svd.u.T @ rhs) / svd.s)) / svd.norms
        else:  # rank-deficient: numpy's minimum-norm solution, as without the scaling
            x = np.linalg.lstsq(a, rhs, rcond=None)[0]
    lo, hi = problem.linear_lower, problem.linear_upper
    pinned: dict[int, str] = {}
    if problem.linear_bounded and ((x < lo).any() or (x > hi).any()):
        from scipy.optimize import lsq_linear

        x = lsq_linear(a, rhs, bounds=(lo, hi), method="bvls", tol=1e-12).x
        tol = 1e-10 * np.maximum(1.0, np.abs(x))
        for j, g in enumerate(idx):
            if abs(x[j] - lo[j]) <= tol[j]:
                pinned[int(g)], x[j] = "lower", lo[j]
            elif abs(x[j] - hi[j]) <= tol[j]:
                pinned[int(g)], x[j] = "upper", hi[j]
    keep = [j for j, g in enumerate(idx) if int(g) not in pinned] if projection else None
    return LinearSolution(x, keep, pinned, a, svd)


#: Starts of the spread screen, as fractions of each nonlinear parameter's range, bounds
#: included (a minimum often sits on a bound): one parameter, nine points; two, a 4 x 4
#: grid; more, the first sixteen points of a Halton sequence in the box. An unbounded side
#: is taken as 10 max(1, |start|) away from the start.
SPREAD_1D = tuple(i / 8 for i in range(9))
SPREAD_2D = (0.0, 1 / 3, 2 / 3, 1.0)
SPREAD_MANY = 16
#: A spread start's minimum counts as lower when its chi-square is below the first one's by
#: more than this fraction (and 1e-9 absolute): differences within it are the optimiser's
#: tolerance, not another minimum.
SPREAD_RTOL = 1e-6
#: At most this many screened points (the lowest first) are refined by the local optimiser,
#: and only those whose chi-square is below this multiple of the first minimum's. A point far
#: above it rarely lies in a lower basin: on the bundled data every refinement that found a
#: lower minimum started below 12 times the first minimum (one exception, 175 times, gained
#: 0.2 % in chi-square), while more than nine in ten refinements found nothing new.
SPREAD_REFINE = 2
SPREAD_PROMISE = 20.0


def _halton(count: int, dims: int) -> np.ndarray:
    """The unscrambled Halton points 1..count in [0, 1)^dims (radical inverses in the first
    primes): the same values as ``scipy.stats.qmc.Halton(dims, scramble=False)`` after its
    first point, written out because importing scipy.stats takes about a second."""
    primes = (2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37)[:dims]
    out = np.empty((count, dims))
    for j, b in enumerate(primes):
        for i in range(count):
            f, r, k = 1.0, 0.0, i + 1
            while k:
                f /= b
                r += f * (k % b)
                k //= b
            out[i, j] = r
    return out


def spread_points(lower: np.ndarray, upper: np.ndarray, start: np.ndarray
                  ) -> tuple[np.ndarray, tuple[int, ...] | None]:
    """Well-spread points (rows) in the box [lower, upper] around ``start``, and the shape of
    the grid they form (None when they are not a grid)."""
    reach = 10.0 * np.maximum(1.0, np.abs(start))
    lo = np.where(np.isfinite(lower), lower, start - reach)
    hi = np.where(np.isfinite(upper), upper, start + reach)
    d = start.size
    shape: tuple[int, ...] | None
    if d == 1:
        frac, shape = np.array(SPREAD_1D)[:, None], (len(SPREAD_1D),)
    elif d == 2:
        g = np.array(SPREAD_2D)
        frac = np.stack(np.meshgrid(g, g, indexing="ij"), axis=-1).reshape(-1, 2)
        shape = (g.size, g.size)
    else:
        frac, shape = _halton(SPREAD_MANY, d), None
    return lo + frac * (hi - lo), shape


def screen_minima(values: np.ndarray, shape: tuple[int, ...] | None) -> list[int]:
    """Indices of the screened points that are lowest among their grid neighbours (all
    points when they form no grid), finite ones only, lowest first."""
    v = np.asarray(values, dtype=float)
    if shape is None:
        picks = [i for i in range(v.size) if np.isfinite(v[i])]
    else:
        grid = v.reshape(shape)
        padded = np.pad(grid, 1, constant_values=np.inf)
        ok = np.isfinite(grid)
        for axis in range(grid.ndim):
            for step in (-1, 1):
                sl = [slice(1, -1)] * grid.ndim
                sl[axis] = slice(1 + step, grid.shape[axis] + 1 + step)
                ok &= grid <= padded[tuple(sl)]
        picks = list(np.flatnonzero(ok.ravel()))
    return [int(i) for i in sorted(picks, key=lambda i: v[i])]


def _chi2(resid: np.ndarray) -> float:
    return float(resid @ resid) if np.isfinite(resid).all() else math.inf


def _screen(proj: Projection, points: np.ndarray) -> np.ndarray:
    """The reduced sum of squares at each of ``points`` (inf where the model fails): from the
    values and designs shared with the problem's root (one set of model calls for a fit, its
    folds and its trial limits), else by evaluating the problem at each point."""
    p = proj.p
    parts = p.screen_parts(points)
    if parts is None:
        return np.array([_chi2(proj.fun(x)) for x in points])
    out = np.full(len(points), math.inf)
    for j in [j for j, part in enumerate(parts) if part is None]:
        # The model failed at this point on the root's data; these may not reach there.
        if p.is_subset:
            out[j] = _chi2(proj.fun(points[j]))
    plain = [j for j, part in enumerate(parts) if part is not None and part[1] is None]
    if plain:
        resid = (p.obs - np.array([parts[j][0] for j in plain])) / p.sigma  # type: ignore[index]
        out[plain] = _sums_of_squares(resid)
    designed = [j for j, part in enumerate(parts) if part is not None and part[1] is not None]
    if designed:
        out[designed] = _screen_designed(p, [parts[j] for j in designed])  # type: ignore[misc]
    return out


def _sums_of_squares(resid: np.ndarray) -> np.ndarray:
    """Each row's sum of squares, inf where a term is not finite."""
    with np.errstate(all="ignore"):
        chi = np.einsum("ij,ij->i", resid, resid)
    return np.where(np.isfinite(chi), chi, math.inf)


def _screen_designed(p: Problem, parts: list[tuple[np.ndarray, np.ndarray]]) -> np.ndarray:
    """The reduced sum of squares of each (offset, design) of ``parts`` with the linear
    parameters solved: all in one stacked decomposition of the scaled weighted designs, as
    :func:`solve_linear` makes for one; a design of lower rank, non-finite, or whose solution
    leaves the bounds goes through :func:`solve_linear` itself (inf where that fails)."""
    offset = np.array([q[0] for q in parts])
    design = np.array([q[1] for q in parts])
    a = design / p.sigma[None, :, None]
    rhs = (p.obs - offset) / p.sigma
    out = np.full(len(parts), math.inf)
    with np.errstate(all="ignore"):
        finite = np.isfinite(a).all(axis=(1, 2)) & np.isfinite(rhs).all(axis=1)
        norms = np.sqrt(np.einsum("pij,pij->pj", a, a))
        scaled = np.where(finite[:, None, None], a / np.where(norms > 0, norms, 1.0)[:, None, :], 0.0)
        u, s, vt = np.linalg.svd(scaled, full_matrices=False)
        tol = s[:, :1] * max(a.shape[1], a.shape[2]) * _EPS
        full = finite & (s[:, 0] > 0) & (s > tol).all(axis=1) & (norms > 0).all(axis=1)
        x = np.einsum("pkj,pk->pj", vt, np.einsum("pnk,pn->pk", u, rhs) / np.where(full[:, None], s, 1.0))
        x /= np.where(norms > 0, norms, 1.0)
        if p.linear_bounded:
            full &= ((x >= p.linear_lower) & (x <= p.linear_upper)).all(axis=1)
        pred = offset + np.einsum("pnj,pj->pn", design, x)
        out[full] = _sums_of_squares((p.obs - pred[full]) / p.sigma)
    for j in np.flatnonzero(finite & ~full).tolist():
        try:
            pred_j = offset[j] + design[j] @ solve_linear(p, offset[j], design[j], projection=False).x
        except _MODEL_FAILURES:
            continue
        out[j] = _chi2((p.obs - pred_j) / p.sigma)
    return out


class SpreadPlan(NamedTuple):
    """What the spread screen of a fit found: the chi-square of its first minimum and the
    starts to refine (see :func:`_spread_starts`)."""

    chi2_first: float
    starts: list[np.ndarray]


def _spread_plan(proj: Projection, first, lower: np.ndarray, upper: np.ndarray
                 ) -> SpreadPlan | None:
    """Screen well-spread points around ``first`` (None when the first minimum's chi-square
    is not finite)."""
    chi_first = _chi2(proj.fun(first.x))
    if not math.isfinite(chi_first):
        return None
    points, shape = spread_points(lower, upper, first.x)
    screened = _screen(proj, points)
    # The grid point next to the first minimum (within half a step) lies in its basin.
    step = np.ptp(points, axis=0) / (max(shape) - 1 if shape else 1)
    near = np.all(np.abs(points - first.x) <= 0.5 * step, axis=1) if shape else \
        np.zeros(len(points), dtype=bool)
    below = [i for i in screen_minima(screened, shape)
             if not near[i] and screened[i] < SPREAD_PROMISE * chi_first][:SPREAD_REFINE]
    return SpreadPlan(chi_first, [points[i] for i in below])


def spread_plan(problem: Problem, first: FoundMinimum) -> SpreadPlan | None:
    """The spread screen :func:`solve` would make of ``problem`` from the local minimum
    ``first`` (for a caller that refines the starts of several fits together and gives them
    back to :func:`solve` as ``planned``)."""
    proj = Projection(problem)
    proj.adopt(first)
    nl = problem.nonlinear
    return _spread_plan(proj, first.minimum, problem.lower[nl], problem.upper[nl])


def _spread_starts(proj: Projection, local, first, lower: np.ndarray, upper: np.ndarray,
                   planned: tuple[SpreadPlan | None, list[FoundMinimum | None]] | None = None):
    """Screen well-spread starts and refine the most promising.

    The reduced sum of squares (the linear parameters solved at each point) is evaluated at
    :func:`spread_points`; the local optimiser is started again from the (at most
    ``SPREAD_REFINE``) lowest points that are lower than their grid neighbours and than
    ``SPREAD_PROMISE`` times the first minimum, other than the grid point next to that
    minimum, each in a basin of its own. The lowest minimum is kept; when it is
    lower than the first by more than ``SPREAD_RTOL`` the result carries a ``several-minima``
    flag with both values. A multi-start by screening, as in global optimisation practice
    (e.g. Rinnooy Kan and Timmer, Math. Program. 39, 27 (1987), whose clustering it reduces to
    its first step). ``planned`` is the screen's plan and the minima refined from its starts
    when the caller has them (None for a start it could not refine: ``local`` refines it).
    """
    best = first
    # The model failing at a screened point says nothing about the fit kept: only the failures
    # on the path to the kept minimum are reported.
    kept_failures = list(proj.failures)
    plan = planned[0] if planned is not None else _spread_plan(proj, first, lower, upper)
    if plan is None:
        proj.failures[:] = kept_failures
        return first, None
    refined = planned[1] if planned is not None else [None] * len(plan.starts)
    chi_best, start, kept = plan.chi2_first, None, None
    for x, found in zip(plan.starts, refined):
        proj.failures.clear()
        if found is not None:
            res, c = found.minimum, _chi2(found.residual)
            proj.failures[:] = found.failures
        else:
            try:
                res = local(x)
            except (Abort, ValueError, *_MODEL_FAILURES):
                continue
            c = _chi2(proj.fun(res.x))
        if res.status > 0 and c < chi_best * (1 - SPREAD_RTOL) - 1e-9:
            best, chi_best, start, kept = res, c, x, found
            kept_failures = list(proj.failures)
    proj.failures[:] = kept_failures
    if start is None:
        return first, None
    if kept is not None:
        proj.adopt(kept)
    names = [proj.p.names[g] for g in proj.p.nonlinear]
    return best, flag(FlagKind.SEVERAL_MINIMA, chi2_first=plan.chi2_first, chi2=chi_best,
                      first=dict(zip(names, first.x.tolist())),
                      start=dict(zip(names, start.tolist())),
                      found=dict(zip(names, best.x.tolist())))


def solve(problem: Problem, *, max_evaluations: int | None = None,
          tolerance: float = 1e-10, spread: bool = True, first: FoundMinimum | None = None,
          planned: tuple[SpreadPlan | None, list[FoundMinimum | None]] | None = None,
          jacobian: bool = True) -> Solution:
    """Minimise the weighted sum of squares of ``problem``; never raises for a model failure.

    With nonlinear free parameters and ``spread`` (the default), the local minimum found from
    the problem's start is checked against well-spread starts (:func:`spread_points`); see
    :func:`_spread_starts`. ``first`` is that local minimum when the caller has found it
    already (the folds of a cross-validation minimised together,
    :mod:`saltbench.fitting.together`), and ``planned`` its spread screen with the minima
    refined from it (see :func:`spread_plan`). ``jacobian=False`` leaves out the Jacobian at the
    solution (and so the check that the model gives finite derivatives there), for a caller
    that reads only the parameters and the prediction."""
    p = problem
    proj = Projection(p)
    theta = p.theta0.copy()
    flags: list[Flag] = []
    converged, message, iterations = True, "", 0
    at_bound: dict[int, str] = {}
    try:
        if p.nonlinear.size == 0:
            proj.set_point(np.zeros(0))
            theta = proj.theta
            message = LINEAR_MESSAGE if p.k else "no free parameters: evaluated only"
        else:
            lb, ub = p.lower[p.nonlinear], p.upper[p.nonlinear]
            x0 = np.clip(p.theta0[p.nonlinear], lb, ub)
            def local(x: np.ndarray):
                return minimise(proj.fun, proj.jac, x, lb, ub, ftol=tolerance, xtol=tolerance,
                                gtol=tolerance, max_nfev=max_evaluations)

            if first is not None:
                proj.adopt(first)
                res = first.minimum
            elif p.is_refit:
                res = local(x0)
            else:
                # From the root problem's own start, the path decides which minimum the fit
                # and so every verdict rests on: scipy's trust-region reflective method, whose
                # steps keep inside the bounds (see the module).
                from scipy.optimize import least_squares

                res = least_squares(proj.fun, x0, jac=proj.jac, bounds=(lb, ub), method="trf",
                                    x_scale="jac", ftol=tolerance, xtol=tolerance,
                                    gtol=tolerance, max_nfev=max_evaluations)
            iterations = int(res.nfev)
            if spread:
                res, found = _spread_starts(proj, local, res, lb, ub, planned)
                if first is not None and res is first.minimum:
                    proj.adopt(first)  # the state there, as the screen left other points
                if found is not None:
                    flags.append(found)
            proj.set_point(res.x)
            theta = proj.theta
            converged = bool(res.status > 0)
            message = str(res.message)
            if not converged:
                flags.append(flag(FlagKind.DID_NOT_CONVERGE, detail=message))
            for j, g in enumerate(p.nonlinear):
                if res.active_mask[j]:
                    at_bound[int(g)] = "lower" if res.active_mask[j] < 0 else "upper"
        at_bound.update(proj.linear_at_bound)
    except (Abort, ValueError, *_MODEL_FAILURES) as exc:
        reason = proj.failures[-1] if proj.failures else str(exc)
        return Solution(theta, None, None, False, reason, [flag(FlagKind.MODEL_ERROR, detail=reason)])
    if proj.failures:
        flags.append(flag(FlagKind.STEPS_REJECTED, detail=proj.failures[-1]))
    try:
        prediction = proj.pred
        jac_svd = None
        if not jacobian:
            jac = None
        elif p.nonlinear.size == 0 and p.linear.size:
            # Affine in every free parameter: the Jacobian is the design matrix, at any point.
            assert proj.lin is not None  # set with the free linear parameters
            jac, jac_svd = proj.lin.weighted, proj.lin.svd
        else:
            jac = p.derivatives(theta, p.free, base=prediction) / p.sigma[:, None]
    except _MODEL_FAILURES as exc:
        return Solution(theta, None, None, False, str(exc), flags + [flag(FlagKind.MODEL_ERROR, detail=str(exc))])
    return Solution(theta, prediction, jac, converged, message, flags, at_bound, iterations,
                    jac_svd, proj.resid)
