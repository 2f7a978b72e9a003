"""Weighted least squares by variable projection.

Residuals are r_i = (y_i - f_i(theta)) / u_i. Parameters that enter f linearly (declared
``linear``) are eliminated exactly: at fixed nonlinear parameters theta_N the model is
f = c(theta_N) + D(theta_N) theta_L and theta_L follows from a linear least-squares solve
(bounded-variable least squares when a bound is hit; Stark and Parker, Comput. Stat. 10, 129
(1995)). The remaining function of theta_N alone is minimised by the trust-region reflective
method of scipy.optimize.least_squares (Branch, Coleman and Li, SIAM J. Sci. Comput. 21, 1
(1999)), with the Jacobian of Kaufman's approximation to variable projection (Kaufman, BIT 15,
49 (1975); Golub and Pereyra, Inverse Problems 19, R1 (2003), sec. 3): the plain Jacobian with
respect to theta_N projected onto the orthogonal complement of the columns of D. When every free
parameter is linear no iterative optimiser runs.

Model failures never escape: a plugin error at a trial point rejects the step (the optimiser
shrinks its trust region); at the start point it ends the fit with a flag.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from saltbench.errors import ModelDomainError, ModelError
from saltbench.fitting.problem import FitProblem

_MODEL_FAILURES = (ModelError, ModelDomainError, FloatingPointError, np.linalg.LinAlgError)


@dataclass
class Solution:
    """What the solver found; :func:`saltbench.fitting.result.build_result` turns it into a report."""

    theta: np.ndarray  # full parameter vector (free and held)
    prediction: np.ndarray | None  # None when the model failed at the solution
    jacobian: np.ndarray | None  # d prediction / d theta[free] / u, shape (n, k)
    converged: bool
    message: str
    flags: list[str] = field(default_factory=list)
    at_bound: dict[int, str] = field(default_factory=dict)  # global index -> "lower" | "upper"
    iterations: int = 0


class _Abort(Exception):
    pass


class _Projection:
    """theta_N -> projected residuals and Jacobian, caching the last point (fun then jac)."""

    def __init__(self, problem: FitProblem) -> None:
        self.p = problem
        self.key: bytes | None = None
        self.theta = problem.theta0.copy()
        self.resid = np.zeros(problem.n)
        self.pred = np.zeros(problem.n)
        self.basis = np.zeros((problem.n, 0))
        self.design = np.zeros((problem.n, 0))
        self.linear_at_bound: dict[int, str] = {}
        self.failures: list[str] = []

    def set_point(self, x: np.ndarray) -> None:
        key = np.asarray(x, dtype=float).tobytes()
        if key == self.key:
            return
        p = self.p
        theta = self.theta.copy()
        theta[p.nonlinear] = x
        if p.linear.size:
            offset, design = p.linear_design(theta)
            theta[p.linear], self.basis, self.linear_at_bound = solve_linear(
                p, offset, design)
            self.design = design
            pred = offset + design @ theta[p.linear]
        else:
            pred = p.predict(theta)
        resid = (p.obs - pred) / p.sigma
        if not np.all(np.isfinite(resid)):
            raise ModelError(f"model {p.model.id}: residuals are not finite")
        self.theta, self.key, self.resid, self.pred = theta, key, resid, pred

    def fun(self, x: np.ndarray) -> np.ndarray:
        try:
            self.set_point(x)
        except _MODEL_FAILURES as exc:
            self.failures.append(str(exc))
            self.key = None
            return np.full(self.p.n, np.nan)
        return self.resid

    def jac(self, x: np.ndarray, *_: object) -> np.ndarray:
        try:
            self.set_point(x)
            j = -self.p.derivatives(self.theta, self.p.nonlinear) / self.p.sigma[:, None]
        except _MODEL_FAILURES as exc:
            self.failures.append(str(exc))
            raise _Abort(str(exc)) from exc
        if self.basis.shape[1]:
            j = j - self.basis @ (self.basis.T @ j)
        return j


def solve_linear(problem: FitProblem, offset: np.ndarray, design: np.ndarray
                 ) -> tuple[np.ndarray, np.ndarray, dict[int, str]]:
    """Weighted linear least squares in the free linear parameters, within their bounds.

    Returns the values, an orthonormal basis of the weighted design columns of the parameters
    left off their bounds (for the projection), and the parameters pinned at a bound.
    """
    idx = problem.linear
    a = design / problem.sigma[:, None]
    rhs = (problem.obs - offset) / problem.sigma
    x = np.linalg.lstsq(a, rhs, rcond=None)[0]
    lo, hi = problem.lower[idx], problem.upper[idx]
    pinned: dict[int, str] = {}
    if np.any(x < lo) or np.any(x > hi):
        from scipy.optimize import lsq_linear

        x = lsq_linear(a, rhs, bounds=(lo, hi), method="bvls", tol=1e-12).x
        tol = 1e-10 * np.maximum(1.0, np.abs(x))
        for j, g in enumerate(idx):
            if abs(x[j] - lo[j]) <= tol[j]:
                pinned[int(g)], x[j] = "lower", lo[j]
            elif abs(x[j] - hi[j]) <= tol[j]:
                pinned[int(g)], x[j] = "upper", hi[j]
    keep = [j for j, g in enumerate(idx) if int(g) not in pinned]
    sub = a[:, keep]
    if sub.shape[1]:
        u, s, _ = np.linalg.svd(sub, full_matrices=False)
        basis = u[:, s > s[0] * max(sub.shape) * np.finfo(float).eps] if s[0] > 0 else u[:, :0]
    else:
        basis = np.zeros((a.shape[0], 0))
    return x, basis, pinned


def solve(problem: FitProblem, *, max_evaluations: int | None = None,
          tolerance: float = 1e-10) -> Solution:
    """Minimise the weighted sum of squares of ``problem``; never raises for a model failure."""
    p = problem
    proj = _Projection(p)
    theta = p.theta0.copy()
    flags: list[str] = []
    converged, message, iterations = True, "", 0
    at_bound: dict[int, str] = {}
    try:
        if p.nonlinear.size == 0:
            proj.set_point(np.zeros(0))
            theta = proj.theta
            message = ("all free parameters are linear: solved by linear least squares"
                       if p.k else "no free parameters: evaluated only")
        else:
            from scipy.optimize import least_squares

            lb, ub = p.lower[p.nonlinear], p.upper[p.nonlinear]
            x0 = np.clip(p.theta0[p.nonlinear], lb, ub)
            res = least_squares(proj.fun, x0, jac=proj.jac, bounds=(lb, ub), method="trf",
                                x_scale="jac", ftol=tolerance, xtol=tolerance, gtol=tolerance,
                                max_nfev=max_evaluations)
            iterations = int(res.nfev)
            proj.set_point(res.x)
            theta = proj.theta
            converged = bool(res.status > 0)
            message = str(res.message)
            if not converged:
                flags.append(f"did not converge: {message}")
            for j, g in enumerate(p.nonlinear):
                if res.active_mask[j]:
                    at_bound[int(g)] = "lower" if res.active_mask[j] < 0 else "upper"
        at_bound.update(proj.linear_at_bound)
    except (_Abort, ValueError, *_MODEL_FAILURES) as exc:
        reason = proj.failures[-1] if proj.failures else str(exc)
        return Solution(theta, None, None, False, reason, [f"model error: {reason}"])
    if proj.failures:
        flags.append(f"model failed at some trial parameters (steps rejected): "
                     f"{proj.failures[-1]}")
    try:
        prediction = proj.pred
        if p.nonlinear.size == 0 and p.linear.size:
            # Affine in every free parameter: the Jacobian is the design matrix, at any point.
            jac = proj.design / p.sigma[:, None]
        else:
            jac = p.derivatives(theta, p.free, base=prediction) / p.sigma[:, None]
    except _MODEL_FAILURES as exc:
        return Solution(theta, None, None, False, str(exc), flags + [f"model error: {exc}"])
    return Solution(theta, prediction, jac, converged, message, flags, at_bound, iterations)
