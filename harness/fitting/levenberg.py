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


def _step(s: list[float], ur: list[float], radius: float) -> tuple[list[float], bool]:
    """The Levenberg-Marquardt step in the rotated scaled coordinates (V' D delta) whose
    length is at most ``radius``: the Gauss-Newton step when it is shorter, else the damped one
    whose length is the radius within 10 %, its damping found by Hebden's Newton iteration on
    1/|p(lambda)| (Moré 1978, sec. 5). Also whether the radius bounded it. On plain floats: a
    fit has one to a few nonlinear parameters, where each numpy call costs more than the sum."""
    k = len(s)
    cut = s[0] * max(k, 1) * _EPS if k and s[0] > 0 else math.inf
    su = [si * ui if si > cut else 0.0 for si, ui in zip(s, ur)]
    s2 = [si * si if si > cut else 1.0 for si in s]
    p = [a / b for a, b in zip(su, s2)]
    norm = math.sqrt(math.fsum(x * x for x in p))
    if norm <= radius:
        return p, False
    lam = 0.0
    for _ in range(20):
        q = math.fsum(x * x / (d + lam) for x, d in zip(p, s2))
        lam += norm * norm / q * (norm - radius) / radius
        p = [a / (d + lam) for a, d in zip(su, s2)]
        norm = math.sqrt(math.fsum(x * x for x in p))
        if abs(norm - radius) <= 0.1 * radius:
            break
    return p, True


class Walk:
    """One minimisation (see the module) as a sequence of requests: it asks for the residuals
    or the Jacobian at :attr:`point` (:attr:`want`), and its caller answers with
    :meth:`give_residuals` or :meth:`give_jacobian` until :attr:`want` is None. :func:`minimise`
    answers one walk; :func:`minimise_together` answers several at once, so that a caller who
    evaluates several parameter vectors in one call (the folds of a cross-validation) makes one
    call per round for all of them. Each walk takes exactly the steps it would take alone."""

    def __init__(self, x0: np.ndarray, lower: np.ndarray, upper: np.ndarray, *,
                 ftol: float = 1e-10, xtol: float = 1e-10, gtol: float = 1e-10,
                 max_nfev: int | None = None) -> None:
        self.lower = np.asarray(lower, dtype=float)
        self.upper = np.asarray(upper, dtype=float)
        self.x = np.clip(np.asarray(x0, dtype=float), self.lower, self.upper)
        self._lo, self._hi = self.lower.tolist(), self.upper.tolist()
        self.k = self.x.size
        self.limit = max_nfev if max_nfev is not None else 100 * self.k
        self.ftol, self.xtol, self.gtol = ftol, xtol, gtol
        self.nfev = self.njev = 0
        self.status: int | None = None
        #: What the walk waits for at :attr:`point`: "residuals", "jacobian", or None (ended).
        self.want: str | None = "residuals"
        self.point = self.x
        self.r: np.ndarray | None = None
        self.cost = math.inf
        self.j = np.zeros((0, self.k))
        self.scale: np.ndarray | None = None
        self.radius = 1.0

    def give_residuals(self, r_new: np.ndarray) -> None:
        """The residuals at :attr:`point` (non-finite ones reject a trial step; at the start
        point they raise ValueError)."""
        self.nfev += 1
        if self.r is None:
            if not np.isfinite(r_new).all():
                raise ValueError("the residuals are not finite at the start point")
            self.r, self.cost = r_new, 0.5 * float(r_new @ r_new)
            self.want = "jacobian"
            return
        r, cost = self.r, self.cost
        x_new, delta = self.point, self._delta
        assert self.scale is not None  # set with the first Jacobian
        step_norm = math.sqrt(math.fsum(d * d for d in delta))
        # A sum is finite only if every term is; the elementwise test runs only when it is not.
        finite = math.isfinite(np.add.reduce(r_new)) or bool(np.isfinite(r_new).all())
        cost_new = 0.5 * float(r_new @ r_new) if finite else math.inf
        linear = r + self.j @ np.array(delta)
        predicted = cost - 0.5 * float(linear @ linear)
        actual = cost - cost_new
        rho = actual / predicted if predicted > 0 else (1.0 if actual > 0 else -1.0)
        scaled_norm = math.sqrt(math.fsum((d * c) ** 2 for d, c in zip(delta, self.scale.tolist())))
        if rho < 0.25:
            self.radius = 0.25 * scaled_norm if scaled_norm > 0 else 0.25 * self.radius
        elif rho > 0.75 and self._bounded:
            self.radius *= 2.0
        converged_f = actual < self.ftol * cost and rho > 0.25
        if converged_f or step_norm < self.xtol * (self.xtol + self._x_norm):
            self.status = 2 if converged_f else 3
        if actual > 0:
            self.x, self.r, self.cost = x_new, r_new, cost_new
            self.point = x_new
            self.want = "jacobian" if self.status is None else None
        elif self.status is not None:
            self.want = None
        else:
            self._propose()

    def give_jacobian(self, j: np.ndarray) -> None:
        """The Jacobian of the residuals at :attr:`point` (the last accepted point)."""
        self.njev += 1
        self.j = j
        norms = np.sqrt(np.einsum("ij,ij->j", j, j))
        if self.scale is None:
            self.scale = np.where(norms > 0, norms, 1.0)
            self.radius = math.sqrt(float(np.sum((self.x * self.scale) ** 2))) or 1.0
        else:
            self.scale = np.maximum(self.scale, norms)
        self._decompose()

    def _decompose(self) -> None:
        x, r, j, scale = self.x, self.r, self.j, self.scale
        assert r is not None and scale is not None
        g = (j.T @ r).tolist()  # gradient of the cost
        xs, sc = x.tolist(), scale.tolist()
        free = [i for i, (xi, gi, lo, hi) in enumerate(zip(xs, g, self._lo, self._hi))
                if not ((xi <= lo and gi > 0) or (xi >= hi and gi < 0))]
        if not free or max(abs(g[i]) / sc[i] for i in free) < self.gtol:
            self.status, self.want = 1, None
            return
        every = len(free) == self.k
        u, s, self._vt = thin_svd(j / scale if every else j[:, free] / scale[free])
        self._free = None if every else free
        self._s, self._ur = s.tolist(), (-(u.T @ r)).tolist()
        self._x_norm = math.sqrt(math.fsum(v * v for v in xs))
        self._propose()

    def _propose(self) -> None:
        if self.nfev >= self.limit:
            self.status, self.want = 0, None
            return
        assert self.scale is not None
        p, self._bounded = _step(self._s, self._ur, self.radius)
        rotated = self._vt.T @ np.array(p)
        if self._free is None:
            step = (rotated / self.scale).tolist()
        else:
            step = [0.0] * self.k
            for i, v in zip(self._free, (rotated / self.scale[self._free]).tolist()):
                step[i] = v
        xs = self.x.tolist()
        new = [min(max(xi + di, lo), hi) for xi, di, lo, hi in zip(xs, step, self._lo, self._hi)]
        self._delta = [a - b for a, b in zip(new, xs)]
        self.point, self.want = np.array(new), "residuals"

    def result(self) -> Minimum:
        assert self.status is not None  # only an ended walk has one
        return Minimum(self.x, self.status, self.nfev, self.njev,
                       active_bounds(self.x, self.lower, self.upper, self.xtol))


def minimise(fun: Callable[[np.ndarray], np.ndarray],
             jac: Callable[[np.ndarray], np.ndarray],
             x0: np.ndarray, lower: np.ndarray, upper: np.ndarray, *,
             ftol: float = 1e-10, xtol: float = 1e-10, gtol: float = 1e-10,
             max_nfev: int | None = None) -> Minimum:
    """Minimise 0.5 |fun(x)|^2 for lower <= x <= upper from ``x0`` (see the module)."""
    walk = Walk(x0, lower, upper, ftol=ftol, xtol=xtol, gtol=gtol, max_nfev=max_nfev)
    while walk.want is not None:
        if walk.want == "residuals":
            walk.give_residuals(fun(walk.point))
        else:
            walk.give_jacobian(jac(walk.point))
    return walk.result()


def minimise_together(residuals: Callable[[list[int], list[np.ndarray]], list[np.ndarray | None]],
                      jacobians: Callable[[list[int], list[np.ndarray]], list[np.ndarray | None]],
                      walks: list[Walk]) -> list[Minimum | None]:
    """Advance ``walks`` together: each round asks ``residuals`` for every walk that waits for
    residuals and ``jacobians`` for every walk that waits for a Jacobian, each in one call with
    the walks' indices and points. An answer None, or non-finite residuals at a walk's start,
    takes that walk out (its result is None: the caller minimises it on its own, where the
    failure is reported as it always was)."""
    out: list[Minimum | None] = [None] * len(walks)
    alive = list(range(len(walks)))
    while alive:
        for want, call in (("residuals", residuals), ("jacobian", jacobians)):
            idx = [i for i in alive if walks[i].want == want]
            if not idx:
                continue
            answers = call(idx, [walks[i].point for i in idx])
            for i, a in zip(idx, answers):
                w = walks[i]
                try:
                    if a is None:
                        raise ValueError("left the stack")
                    if want == "residuals":
                        w.give_residuals(a)
                    else:
                        w.give_jacobian(a)
                except ValueError:
                    w.want, w.status = None, None
        for i in alive:
            if walks[i].want is None and walks[i].status is not None:
                out[i] = walks[i].result()
        alive = [i for i in alive if walks[i].want is not None]
    return out
