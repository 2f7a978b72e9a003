"""Refits of one problem to several subsets of its points, advanced together.

The folds of a cross-validation refit the same parameters to subsets of the same points, each
from the full-data optimum. Where a free parameter is nonlinear, each refit is a minimisation
(:mod:`saltbench.fitting.levenberg`), and alone each spends most of its time calling the model
and passing its values through the problem's layers, a few dozen points at a time. Here the
subsets advance together (:func:`~saltbench.fitting.levenberg.minimise_together`): each round
evaluates the model once for every subset that waits for residuals, on all of the problem's
points with one parameter set per subset (:meth:`FitProblem.stack_predict`), and once for every
subset that waits for a Jacobian. A model that evaluates several parameter sets in one call
(``stacks_parameter_sets``) is then called once per round instead of once per subset.

Each subset's linear parameters are solved on its own rows, with its own residuals and
projected Jacobian, by the same functions as
:func:`saltbench.fitting.least_squares.solve` uses; each walk takes the steps it would take
alone, so the minimum is the one ``solve`` would find from the same start (the model's values
are the same numbers unless a stacked evaluation rounds differently). Where a subset meets
anything out of the ordinary at a point (the stacked values not finite at one of its points,
a linear parameter on a bound), that point is evaluated for the subset alone by the solver's
own code, which gives what ``solve`` gives there (a rejected step carries the model's
message). A subset whose own solve would abort (no finite residuals at its start, no finite
derivatives at an accepted point) leaves the stack and is answered None: the caller solves it
on its own, where the failure is handled and reported as it always was.
"""

from __future__ import annotations

import numpy as np

from saltbench.fitting.least_squares import (
    Abort,
    FoundMinimum,
    LinearSolution,
    Projection,
    solve_weighted,
)
from saltbench.fitting.levenberg import Walk, minimise_together

_FAILURES = (np.linalg.LinAlgError, ValueError, FloatingPointError)
#: A subset's state at a point: the point's bytes, theta, linear solution, prediction, residuals.
_State = tuple[bytes, np.ndarray, LinearSolution | None, np.ndarray, np.ndarray]


def can_refit_together(problem: object) -> bool:
    """Whether :func:`refit_together` serves ``problem``: a one-salt problem with a free
    nonlinear parameter whose model evaluates several parameter sets in one call."""
    return bool(getattr(problem, "stacks", False)) and bool(problem.nonlinear.size)  # type: ignore[attr-defined]


class _Subsets:
    """The residuals and projected Jacobians of each subset at its own nonlinear parameters.

    Where the stacked values are not finite at a subset's points, or its linear parameters
    meet a bound, the point is evaluated for that subset alone by the solver's own code
    (:class:`~saltbench.fitting.least_squares.Projection`), which gives what ``solve`` of the
    subset gives there: its residuals, or a rejected step with the model's message, or an
    abort that takes the subset out."""

    def __init__(self, problem, train: np.ndarray, subsets: list | None = None) -> None:
        self.p = problem
        self.train = train
        self.subsets = subsets if subsets is not None else [None] * len(train)
        self.rows = [np.flatnonzero(t) for t in train]
        self.obs = [problem.obs[r] for r in self.rows]
        self.sigma = [problem.sigma[r] for r in self.rows]
        # Per subset, its state at the last point evaluated and at the last point accepted
        # (the one whose Jacobian was asked for): key, theta, linear solution, prediction,
        # residuals; and the model's messages at the points rejected on the way.
        self.last: list[_State | None] = [None] * len(self.rows)
        self.accepted: list[_State | None] = [None] * len(self.rows)
        self.failures: list[list[str]] = [[] for _ in self.rows]

    def found(self, i: int, walk: Walk) -> FoundMinimum:
        """Walk ``i``'s minimum with the subset's state there."""
        key = walk.x.tobytes()
        state = self.last[i]
        if state is None or state[0] != key:
            state = self.accepted[i]
        assert state is not None and state[0] == key  # the minimum is a point accepted
        return FoundMinimum(walk.result(), state[1], state[3], state[4], state[2],
                            tuple(self.failures[i]))

    def _alone(self, i: int) -> Projection:
        sub = self.subsets[i]
        if sub is None:
            sub = self.subsets[i] = self.p.subset(self.train[i])
        return Projection(sub)

    def _residuals_alone(self, i: int, x: np.ndarray) -> np.ndarray:
        proj = self._alone(i)
        r = proj.fun(x)
        self.failures[i] += proj.failures
        if not proj.failures:
            self.last[i] = (x.tobytes(), proj.theta, proj.lin, proj.pred, r)  # type: ignore[assignment]
        return r

    def _thetas(self, points: list[np.ndarray]) -> np.ndarray:
        p = self.p
        thetas = np.repeat(p.theta0[None, :], len(points), axis=0)
        thetas[:, p.nonlinear] = np.asarray(points, dtype=float).reshape(len(points), -1)
        return thetas

    def residuals(self, idx: list[int], points: list[np.ndarray]) -> list[np.ndarray | None]:
        p = self.p
        thetas = self._thetas(points)
        if p.linear.size:
            thetas[:, p.linear] = 0.0
            offset = p.stack_predict(thetas)
            design = p.stack_derivatives(thetas, p.linear)
        else:
            pred_all = p.stack_predict(thetas)
        out: list[np.ndarray | None] = []
        for s, i in enumerate(idx):
            x = np.asarray(points[s], dtype=float)
            rows, sigma = self.rows[i], self.sigma[i]
            theta = thetas[s]
            lin = None
            if p.linear.size:
                off, d = offset[s, rows], design[s, rows]
                if not (np.isfinite(off).all() and np.isfinite(d).all()):
                    out.append(self._residuals_alone(i, x))
                    continue
                try:
                    lin = solve_weighted(p, d / sigma[:, None], (self.obs[i] - off) / sigma,
                                         projection=True)
                except _FAILURES:
                    lin = None
                if lin is None or lin.pinned:  # the subset's own path handles a bound
                    out.append(self._residuals_alone(i, x))
                    continue
                theta = theta.copy()
                theta[p.linear] = lin.x
                pred = off + d @ lin.x
            else:
                pred = pred_all[s, rows]
            resid = (self.obs[i] - pred) / sigma
            if not np.isfinite(resid).all():
                out.append(self._residuals_alone(i, x))
                continue
            self.last[i] = (x.tobytes(), theta, lin, pred, resid)
            out.append(resid)
        return out

    def jacobians(self, idx: list[int], points: list[np.ndarray]) -> list[np.ndarray | None]:
        p = self.p
        # Asked for at the point just accepted, the last one evaluated.
        states = [self.last[i] for i in idx]
        thetas = np.array([state[1] for state in states])  # type: ignore[index]
        derivs = p.stack_derivatives(thetas, p.nonlinear)
        out: list[np.ndarray | None] = []
        for s, i in enumerate(idx):
            self.accepted[i] = states[s]
            j = -derivs[s, self.rows[i]] / self.sigma[i][:, None]
            if not np.isfinite(j).all():
                proj = self._alone(i)
                try:
                    out.append(proj.jac(np.asarray(points[s], dtype=float)))
                except Abort:
                    out.append(None)  # the subset's own solve fails here: it reports that
                continue
            lin = states[s][2]  # type: ignore[index]
            if lin is not None:
                basis = lin.basis
                if basis.shape[1]:
                    j = j - basis @ (basis.T @ j)
            out.append(j)
        return out


def refit_together(problem, train: np.ndarray, starts: list[np.ndarray] | None = None, *,
                   tolerance: float = 1e-10, max_evaluations: int | None = None,
                   subsets: list | None = None) -> list[FoundMinimum | None]:
    """For each row of the boolean stack ``train`` (subsets x points): the local minimum in
    the free nonlinear parameters that :func:`saltbench.fitting.least_squares.solve` of
    ``problem.subset(row)`` reaches from ``problem``'s start (or from that row's entry of
    ``starts``, values of the free nonlinear parameters) before its spread screen, or None
    where the subset left the stack (see the module). ``subsets`` are the problems
    ``problem.subset(row)`` where the caller has made them."""
    p = problem
    lb, ub = p.lower[p.nonlinear], p.upper[p.nonlinear]
    if starts is None:
        starts = [np.clip(p.theta0[p.nonlinear], lb, ub)] * len(train)
    walks = [Walk(x0, lb, ub, ftol=tolerance, xtol=tolerance, gtol=tolerance,
                  max_nfev=max_evaluations) for x0 in starts]
    state = _Subsets(p, np.asarray(train, dtype=bool), subsets)
    minima = minimise_together(state.residuals, state.jacobians, walks)
    return [None if m is None else state.found(i, walks[i]) for i, m in enumerate(minima)]


def solve_together(problem, train: np.ndarray, *, jacobian: bool = False) -> list:
    """(subset, :func:`saltbench.fitting.least_squares.solve` of it) for each subset
    ``problem.subset(row)`` of the rows of ``train``: the first minimisations together, each
    subset's spread screen on its own, then every refinement of every subset together. The
    Jacobian at each solution only with ``jacobian`` (a cross-validation reads parameters and
    predictions only)."""
    from saltbench.fitting.least_squares import solve, spread_plan

    train = np.asarray(train, dtype=bool)
    subsets = [problem.subset(row) for row in train]
    firsts = refit_together(problem, train, subsets=subsets)
    plans = [None if f is None else spread_plan(sub, f) for sub, f in zip(subsets, firsts)]
    pairs = [(i, x) for i, plan in enumerate(plans) if plan is not None for x in plan.starts]
    refined = refit_together(problem, train[[i for i, _ in pairs]], [x for _, x in pairs],
                             subsets=[subsets[i] for i, _ in pairs]) if pairs else []
    by_subset: list[list[FoundMinimum | None]] = [[] for _ in subsets]
    for (i, _), found in zip(pairs, refined):
        by_subset[i].append(found)
    return [(sub, solve(sub, jacobian=jacobian) if first is None else
             solve(sub, first=first, planned=(plan, found), jacobian=jacobian))
            for sub, first, plan, found in zip(subsets, firsts, plans, by_subset)]
