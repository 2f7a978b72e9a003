"""A Levenberg-Marquardt minimiser for the few nonlinear parameters of a fit, within bounds.

The fits here have one to a few nonlinear parameters (the linear ones are projected out by
:mod:`saltbench.fitting.least_squares`) and tens to hundreds of points; a general trust-region
code spends most of its time on its own per-call and per-step bookkeeping, not on the problem.
This one does only what such a problem needs:

* the step of Levenberg and Marquardt, delta = -(J'J + lambda D'D)^-1 J'r, in the columns
  scaled to unit norm (Marquardt's scaling, kept as the largest norm seen so far), with lambda
  chosen so that the scaled step stays within a trust radius (Moré, in Numerical Analysis,
  Lecture Notes in Mathematics 630, 105 (1978): Hebden's iteration for lambda, sec. 5), from one
  singular value decomposition of the scaled Jacobian per accepted point, so that every trial
  step costs a few multiplications;
* the radius updated from the gain ratio rho of actual to predicted reduction: a quarter of the
  step's length below rho = 1/4, doubled above 3/4 when the radius bounded the step; it starts
  at the scaled length of the start point (1 at zero), as in scipy's trust-region methods;
* bounds by projection: a trial point is clipped into the box, and a parameter on its bound
  whose gradient points out of the box is held there for the step (a projected
  Levenberg-Marquardt method: Kanzow, Yamashita and Fukushima, J. Comput. Appl. Math. 172, 375
  (2004));
* the stopping rules of scipy.optimize.least_squares, with the same meaning of ``ftol``,
  ``xtol`` and ``gtol``: a relative reduction of the cost below ftol on a step whose gain ratio
  exceeds 1/4, a step shorter than xtol (xtol + |x|), or a largest scaled gradient component
  below gtol; ``max_nfev`` residual evaluations at most (default 100 per parameter).

A residual function that returns non-finite values at a trial point rejects the step (the
radius shrinks); at the start point it raises ValueError, as scipy does.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from saltbench.fitting.lapack import thin_svd

_EPS = float(np.finfo(float).eps)

MESSAGES = {
    0: "the largest number of residual evaluations was reached",
    1: "the scaled gradient is below gtol",
    2: "the relative reduction of the cost is below ftol",
    3: "the step is below xtol",
}


@dataclass
class Minimum:
    """What :func:`minimise` found, named as scipy's OptimizeResult fields that the fit reads."""

    x: np.ndarray
    status: int  # > 0 converged (see MESSAGES), 0 out of evaluations
    nfev: int
    njev: int
    active_mask: np.ndarray  # -1 on the lower bound, 1 on the upper, 0 inside

    @property
    def message(self) -> str:
        return MESSAGES[self.status]


def active_bounds(x: np.ndarray, lower: np.ndarray, upper: np.ndarray, rtol: float) -> np.ndarray:
    """-1 where x sits on its lower bound, 1 on its upper (within rtol max(1, |bound|))."""
    out = np.zeros(x.size, dtype=int)
    with np.errstate(invalid="ignore"):
        lo = np.isfinite(lower) & (x - lower <= rtol * np.maximum(1.0, np.abs(lower)))
        hi = np.isfinite(upper) & (upper - x <= rtol * np.maximum(1.0, np.abs(upper)))
    out[lo] = -1
    out[hi & ~lo] = 1
    return out


def _step(s: np.ndarray, ur: np.ndarray, radius: float) -> tuple[np.ndarray, bool]:
    """The Levenberg-Marquardt step in the rotated scaled coordinates (V' D delta) whose
    length is at most ``radius``: the Gauss-Newton step when it is shorter, else the damped one
    whose length is the radius within 10 %, its damping found by Hebden's Newton iteration on
    1/|p(lambda)| (Moré 1978, sec. 5). Also whether the radius bounded it."""
    keep = s > s[0] * max(s.size, 1) * _EPS if s.size and s[0] > 0 else np.zeros(s.size, bool)
    su = np.where(keep, s * ur, 0.0)
    s2 = np.where(keep, s * s, 1.0)
    p = su / s2
    norm = math.sqrt(float(p @ p))
    if norm <= radius:
        return p, False
    lam = 0.0
    for _ in range(20):
        q = float(np.sum(p * p / (s2 + lam)))
        lam += norm * norm / q * (norm - radius) / radius
        p = su / (s2 + lam)
        norm = math.sqrt(float(p @ p))
        if abs(norm - radius) <= 0.1 * radius:
            break
    return p, True


def minimise(fun: Callable[[np.ndarray], np.ndarray],
             jac: Callable[[np.ndarray], np.ndarray],
             x0: np.ndarray, lower: np.ndarray, upper: np.ndarray, *,
             ftol: float = 1e-10, xtol: float = 1e-10, gtol: float = 1e-10,
             max_nfev: int | None = None) -> Minimum:
    """Minimise 0.5 |fun(x)|^2 for lower <= x <= upper from ``x0`` (see the module)."""
    lower = np.asarray(lower, dtype=float)
    upper = np.asarray(upper, dtype=float)
    x = np.clip(np.asarray(x0, dtype=float), lower, upper)
    k = x.size
    limit = max_nfev if max_nfev is not None else 100 * k
    r = fun(x)
    nfev, njev = 1, 0
    if not np.isfinite(r).all():
        raise ValueError("the residuals are not finite at the start point")
    cost = 0.5 * float(r @ r)
    j = jac(x)
    njev += 1
    scale = np.sqrt(np.einsum("ij,ij->j", j, j))
    scale = np.where(scale > 0, scale, 1.0)
    radius = math.sqrt(float(np.sum((x * scale) ** 2))) or 1.0
    status: int | None = None
    while status is None:
        g = j.T @ r  # gradient of the cost
        blocked = ((x <= lower) & (g > 0)) | ((x >= upper) & (g < 0))
        free = ~blocked
        if not free.any() or float(np.max(np.abs(g[free]) / scale[free])) < gtol:
            status = 1
            break
        u, s, vt = thin_svd(j[:, free] / scale[free])
        ur = -(u.T @ r)
        x_norm = math.sqrt(float(x @ x))
        while True:
            if nfev >= limit:
                status = 0
                break
            p, bounded = _step(s, ur, radius)
            step = np.zeros(k)
            step[free] = (vt.T @ p) / scale[free]
            x_new = np.clip(x + step, lower, upper)
            delta = x_new - x
            step_norm = math.sqrt(float(delta @ delta))
            r_new = fun(x_new)
            nfev += 1
            cost_new = 0.5 * float(r_new @ r_new) if np.isfinite(r_new).all() else math.inf
            linear = r + j @ delta
            predicted = cost - 0.5 * float(linear @ linear)
            actual = cost - cost_new
            rho = actual / predicted if predicted > 0 else (1.0 if actual > 0 else -1.0)
            scaled_norm = math.sqrt(float(np.sum((delta * scale) ** 2)))
            if rho < 0.25:
                radius = 0.25 * scaled_norm if scaled_norm > 0 else 0.25 * radius
            elif rho > 0.75 and bounded:
                radius *= 2.0
            converged_f = actual < ftol * cost and rho > 0.25
            if converged_f or step_norm < xtol * (xtol + x_norm):
                status = 2 if converged_f else 3
            if actual > 0:
                x, r, cost = x_new, r_new, cost_new
                if status is None:
                    j = jac(x)
                    njev += 1
                    scale = np.maximum(scale, np.sqrt(np.einsum("ij,ij->j", j, j)))
                break
            if status is not None:
                break
    return Minimum(x, status, nfev, njev, active_bounds(x, lower, upper, xtol))
