"""Fits of one linear problem to many subsets of its points, from one design.

The folds of a cross-validation and the trial limits of a validity scan fit the same parameters
to subsets of the same points. Where every free parameter enters linearly the prediction is
offset + D theta_L, with the offset and the design D built once on the problem's root
(``shared_design`` of :class:`~saltbench.fitting.protocol.Problem`); a fit to a subset is then the
weighted least-squares solve of the rows of D it keeps. :class:`MaskedLinear` weights D once and
solves each mask of a stack on its rows with
:func:`~saltbench.fitting.least_squares.solve_weighted`: the same decomposition of the same
numbers that :func:`~saltbench.fitting.least_squares.solve` makes for ``problem.subset(mask)``,
so each fit, its flags (:func:`~saltbench.fitting.result.fit_flags`) and its predictions equal
those made through a problem of its own, bit for bit, without building that problem, its data
blocks, its solver state or its result. A decomposition per mask, rather than one of a stack
of masked designs or of normal equations, keeps that equality: the normal equations square the
condition number, and a stacked decomposition rounds differently.

A mask whose solve meets a failure (a decomposition that does not converge, values that are not
finite) is answered None: the caller takes the general path for it (a problem of its own and
``solve``), which reports the failure as it always did.
"""

from __future__ import annotations

import math

import numpy as np

from saltbench.errors import ModelDomainError, ModelError
from saltbench.fitting.least_squares import LINEAR_MESSAGE, Solution, solve_weighted
from saltbench.fitting.protocol import Problem

# What least_squares.solve turns into a model-error flag (besides ValueError).
_FAILURES = (ModelError, ModelDomainError, FloatingPointError, np.linalg.LinAlgError, ValueError)


class MaskedLinear:
    """A problem whose free parameters all enter linearly, solvable on any subset of its points.

    Make one with :meth:`of`; ``solve(mask)`` is ``least_squares.solve(problem.subset(mask))``
    without the subset problem, ``predict(mask, theta)`` is ``problem.subset(mask).predict(theta)``.
    """

    def __init__(self, problem: Problem, offset: np.ndarray, design: np.ndarray) -> None:
        self.problem = problem
        self.offset = offset
        self.design = design
        # Weighted once for every mask; a row's quotient does not depend on the other rows.
        self.weighted = design / problem.sigma[:, None]
        self.rhs = (problem.obs - offset) / problem.sigma

    @classmethod
    def of(cls, problem: Problem) -> MaskedLinear | None:
        """The masked solver of ``problem``; None unless every free parameter of it enters
        linearly and its root's design is known (the model did not fail on the root's points)."""
        shared = problem.shared_design()
        return None if shared is None else cls(problem, *shared)

    def solve(self, mask: np.ndarray) -> Solution | None:
        """The weighted least-squares fit to the points picked by the boolean ``mask``, equal to
        ``least_squares.solve(problem.subset(mask))``; None where that would report a failure."""
        p = self.problem
        rows = np.asarray(mask).nonzero()[0]  # the same values as a boolean index, gathered faster
        try:
            lin = solve_weighted(p, self.weighted[rows], self.rhs[rows], projection=False)
        except _FAILURES:
            return None
        theta = p.theta0.copy()
        theta[p.linear] = lin.x
        pred = self.offset[rows] + self.design[rows] @ theta[p.linear]
        resid = (p.obs[rows] - pred) / p.sigma[rows]
        # A sum is finite only if every term is (see least_squares.Projection.set_point).
        if not math.isfinite(np.add.reduce(resid)):
            return None
        return Solution(theta, pred, lin.weighted, True, LINEAR_MESSAGE, [], dict(lin.pinned), 0,
                        lin.svd, resid)

    def solve_all(self, masks: np.ndarray) -> list[Solution | None]:
        """:meth:`solve` for each row of the boolean stack ``masks`` (fits x points)."""
        return [self.solve(mask) for mask in masks]

    def predict(self, mask: np.ndarray, theta: np.ndarray) -> np.ndarray:
        """The model's values at the points picked by ``mask`` for the full parameter vector
        ``theta`` (held-out points of a fold, say), as ``problem.subset(mask).predict(theta)``."""
        return self.offset[mask] + self.design[mask] @ theta[self.problem.linear]
