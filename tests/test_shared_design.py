"""Folds and trial limits of a model whose free parameters all enter linearly are solved on
the design built once (issue: one solve per model and salt): the model is called for the
problem's points once, and each fold or trial reads its rows.

The results must be those of building each fold's problem afresh; the held-out errors are held
to the PRESS identity in tests/test_crossval.py (Allen, Technometrics 16, 125 (1974)).
"""

from __future__ import annotations

import numpy as np
from fitting_models import PowerSeries, synthetic

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import ModelDomainError
from saltbench.fitting import cross_validate, validity_range
from saltbench.fitting.crossval import cross_validate_problem, fold_labels
from saltbench.fitting.least_squares import solve
from saltbench.fitting.problem import build_problem
from saltbench.models import Parameter

NACL = parse_formula("NaCl")
GRID = np.round(np.geomspace(0.01, 4.0, 18), 4)


class CountingSeries(PowerSeries):
    id = "test-counting-series"
    calls = 0

    def ln_gamma_pm(self, m, params, ctx):
        type(self).calls += 1
        return super().ln_gamma_pm(m, params, ctx)


def test_folds_read_the_design_built_once():
    data = synthetic((3.5, 0.08), NACL, GRID, seed=5)
    model = CountingSeries()
    problem = build_problem(model, [(NACL, data)])
    solve(problem)
    before = CountingSeries.calls
    cv = cross_validate_problem(problem, 5)
    assert CountingSeries.calls == before  # no model call for the folds or their predictions
    # ... and the same held-out predictions as folds built afresh from their own data.
    labels = fold_labels(data.molality, 5)
    for f in range(5):
        held = labels == f
        train = build_problem(PowerSeries(), [(NACL, data.subset(~held))])
        theta = solve(train).theta
        test = build_problem(PowerSeries(), [(NACL, data.subset(held))])
        np.testing.assert_allclose(cv.prediction[held], test.predict(theta), rtol=1e-12,
                                   atol=1e-14)


def test_a_subset_reads_the_rows_of_its_roots_design():
    data = synthetic((3.5, 0.08), NACL, GRID, seed=9)
    problem = build_problem(PowerSeries(), [(NACL, data)])
    mask = data.molality <= 1.0
    sub = problem.subset(mask)
    t0 = sub.theta0.copy()
    t0[sub.linear] = 0.0
    offset, design = sub.linear_design(sub.theta0)
    own_offset, own_design = sub._design_now(t0)
    np.testing.assert_allclose(offset, own_offset, rtol=1e-13, atol=1e-15)
    np.testing.assert_allclose(design, own_design, rtol=1e-13, atol=1e-15)
    # a subset of a subset reads the same rows
    sub2 = sub.subset(sub.molality <= 0.2)
    np.testing.assert_allclose(sub2.linear_design(sub2.theta0)[1],
                               design[sub.molality <= 0.2], rtol=1e-13)


class FailsAbove(PowerSeries):
    """Linear in b1, b2, but undefined above 2 mol/kg: the root's design cannot be built."""

    id = "test-fails-above"
    parameters = (Parameter("b1", "b1", "kg/mol", 0.0, linear=True),
                  Parameter("b2", "b2", "kg2/mol2", 0.0, linear=True))

    def ln_gamma_pm(self, m, params, ctx):
        if np.max(m) > 2.0:
            raise ModelDomainError("test model undefined above 2 mol/kg")
        return super().ln_gamma_pm(m, params, ctx)


def test_a_model_failing_beyond_a_subset_leaves_the_subset_to_itself():
    data = synthetic((3.5, 0.08), NACL, GRID, seed=13)
    # the full data fail, the points up to 2 mol/kg do not: the validity scan's trials below
    # 2 mol/kg are solved (each calls the model on its own points, as before).
    v = validity_range(FailsAbove(), NACL, data)
    assert v.max_molality is not None and v.max_molality <= 2.0
    low = data.subset(data.molality <= 2.0)
    cv = cross_validate(FailsAbove(), NACL, low, folds=3)
    assert np.all(np.isfinite(cv.prediction))


def test_the_spread_screen_of_a_fold_reads_its_roots_evaluations():
    from fitting_models import ExtendedDH

    from saltbench.fitting.least_squares import Projection, _screen, spread_points

    data = synthetic((3.5, 0.08), NACL, GRID, seed=17)
    problem = build_problem(ExtendedDH(), [(NACL, data)])
    fold = problem.subset(fold_labels(data.molality, 5) != 2)
    lo, hi = fold.lower[fold.nonlinear], fold.upper[fold.nonlinear]
    points, _ = spread_points(lo, hi, fold.theta0[fold.nonlinear])
    problem.screen_parts(points)  # the root evaluates the model at the screen once
    before = problem.n_evaluations + fold.n_evaluations
    shared = _screen(Projection(fold), points)
    assert problem.n_evaluations + fold.n_evaluations == before
    # ... giving the fold's own reduced sum of squares at each point (the linear b solved for
    # the fold's points alone), as evaluating the fold there does.
    own = Projection(fold)
    direct = np.array([float(np.sum(own.fun(x) ** 2)) for x in points])
    np.testing.assert_allclose(shared, direct, rtol=1e-10)


def test_the_validity_scan_reuses_the_callers_fit_of_all_the_data():
    from fitting_models import ExtendedDH

    from saltbench.fitting.engine import run

    class Counting(ExtendedDH):
        calls = 0

        def ln_gamma_pm(self, m, params, ctx):
            type(self).calls += 1
            return super().ln_gamma_pm(m, params, ctx)

    model = Counting()
    data = synthetic((3.5, 0.08), NACL, GRID, seed=23)
    problem = build_problem(model, [(NACL, data)])
    result = run(problem)
    start = Counting.calls
    with_fit = validity_range(model, NACL, data, full_fit=(problem, result))
    calls_with = Counting.calls - start
    start = Counting.calls
    without = validity_range(model, NACL, data)
    calls_without = Counting.calls - start
    assert with_fit == without  # same range, limits, flags and trial records
    assert calls_with < calls_without  # the top trial was not fitted again
    # a fit of other points is not taken for the top trial
    other = build_problem(model, [(NACL, data.subset(data.molality <= 1.0))])
    other_fit = run(other)
    start = Counting.calls
    assert validity_range(model, NACL, data, full_fit=(other, other_fit)) == without
    assert Counting.calls - start == calls_without


def test_a_restarted_copy_of_the_root_shares_its_design_whole():
    # with_start() keeps every point: its design is the root's, not one row of it.
    data = synthetic((3.5, 0.08), NACL, GRID, seed=29)
    problem = build_problem(PowerSeries(), [(NACL, data)])
    theta = problem.theta0.copy()
    theta[problem.linear] = [1.0, -0.5]
    copy = problem.with_start(theta)
    offset, design = copy.linear_design(copy.theta0)
    assert offset.shape == (data.n,) and design.shape == (data.n, 2)
    np.testing.assert_array_equal(solve(copy).theta, solve(problem).theta)
