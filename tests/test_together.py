"""Refits advanced together (saltbench.fitting.together, levenberg.minimise_together): each walk
takes the steps it takes alone, a model that stacks parameter sets gives what it gives set by
set, and a cross-validation gives the folds' results of the one-at-a-time path.

The test problems are published (Moré, Garbow and Hillstrom, ACM Trans. Math. Softw. 7, 17
(1981)); the fit data are invented (tests/fitting_models.py: stated parameters plus stated
noise). The comparisons of the stacked path with the one-at-a-time path are self-consistency
checks of the harness: the one-at-a-time path is the one checked against outside references
in test_levenberg.py, test_crossval.py and test_spread_starts.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from fitting_models import ExtendedDH, NaNBelowSize, synthetic
from test_levenberg import box3d_parts, rosenbrock, rosenbrock_jac

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.fitting.crossval import cross_validate_problem
from saltbench.fitting.least_squares import solve
from saltbench.fitting.levenberg import Walk, minimise, minimise_together
from saltbench.fitting.problem import build_problem
from saltbench.fitting.together import can_refit_together, refit_together, solve_together

INF = np.inf
NACL = parse_formula("NaCl")
CACL2 = parse_formula("CaCl2")
GRID = np.round(np.arange(0.05, 2.51, 0.05), 2)  # invented molality grid, mol/kg


class StackedDH(ExtendedDH):
    """The test model, declared able to take each parameter as an (S, 1) array (its formulas
    broadcast as they are)."""

    id = "test-ext-dh-stacked"
    stacks_parameter_sets = True


class StackedNaNBelowSize(NaNBelowSize):
    id = "test-nan-region-stacked"
    stacks_parameter_sets = True

    def ln_gamma_pm(self, m, params, ctx):
        out = ExtendedDH.ln_gamma_pm(self, m, params, ctx)
        return np.where(np.asarray(params["a"]) >= 3.0, out, np.nan)


def _answer(fun, jac):
    def residuals(idx, points):
        return [fun(x) for x in points]

    def jacobians(idx, points):
        return [jac(x) for x in points]

    return residuals, jacobians


@pytest.mark.parametrize("bounds", [(np.full(2, -INF), np.full(2, INF)),
                                    (np.array([-2.0, -INF]), np.array([0.5, INF]))])
def test_walks_together_take_the_steps_each_takes_alone(bounds):
    # Rosenbrock (Moré, Garbow and Hillstrom 1981, problem 1) from its standard start and
    # three others, with and without a bound that holds the minimum back.
    lo, hi = bounds
    starts = [np.array([-1.2, 1.0]), np.array([0.0, 0.0]), np.array([2.0, -1.0]),
              np.array([-0.5, 3.0])]
    alone = [minimise(rosenbrock, rosenbrock_jac, x, lo, hi, max_nfev=500) for x in starts]
    walks = [Walk(x, lo, hi, max_nfev=500) for x in starts]
    together = minimise_together(*_answer(rosenbrock, rosenbrock_jac), walks)
    for a, t in zip(alone, together):
        assert t is not None
        assert a.x.tobytes() == t.x.tobytes()  # bit for bit
        assert (a.status, a.nfev, a.njev) == (t.status, t.nfev, t.njev)
        assert list(a.active_mask) == list(t.active_mask)


def test_a_walk_answered_none_leaves_and_the_others_go_on():
    # Box three-dimensional function (Moré, Garbow and Hillstrom 1981, problem 12).
    starts = [np.array([0.0, 10.0, 20.0]), np.array([0.5, 5.0, 2.0]), np.array([0.1, 9.0, 1.5])]
    lo, hi = np.full(3, -INF), np.full(3, INF)
    calls = []

    def residuals(idx, points):
        calls.append(list(idx))
        return [None if i == 1 and len(calls) > 2 else box3d_parts(x)[0]
                for i, x in zip(idx, points)]

    def jacobians(idx, points):
        return [box3d_parts(x)[1] for x in points]

    walks = [Walk(x, lo, hi, max_nfev=1000) for x in starts]
    out = minimise_together(residuals, jacobians, walks)
    assert out[1] is None
    for i in (0, 2):
        alone = minimise(lambda x: box3d_parts(x)[0], lambda x: box3d_parts(x)[1], starts[i],
                         lo, hi, max_nfev=1000)
        assert out[i] is not None and out[i].x.tobytes() == alone.x.tobytes()
    assert all(1 not in c for c in calls[3:])  # asked no more once out


def _problem(model, electrolyte=NACL, seed=3):
    data = synthetic((4.2, 0.06), electrolyte, GRID, seed=seed)
    return build_problem(model, [(electrolyte, data)])


@pytest.mark.parametrize("osmotic,jacobian", [(True, True), (False, True), (True, False),
                                              (False, False)])
def test_stacked_values_and_derivatives_equal_those_set_by_set(osmotic, jacobian):
    # Stacked against one call per set: analytic phi or its Gibbs-Duhem integral, analytic
    # derivatives or differences (of stacked values, with the steps of the one-set path).
    stacked = _problem(StackedDH(osmotic, jacobian))
    alone = _problem(ExtendedDH(osmotic, jacobian))
    thetas = np.array([[4.2, 0.06], [3.0, -0.1], [7.5, 0.3], [0.5, 0.0], [20.0, 2.0]])
    pred = stacked.stack_predict(thetas)
    derivs = stacked.stack_derivatives(thetas, [0, 1])
    for s, theta in enumerate(thetas):
        np.testing.assert_allclose(pred[s], alone.predict(theta), rtol=1e-13, atol=1e-15)
        np.testing.assert_allclose(derivs[s], alone.derivatives(theta, [0, 1]),
                                   rtol=1e-13 if jacobian else 1e-7, atol=1e-12)


def test_a_model_that_does_not_stack_is_called_set_by_set_with_the_same_numbers():
    p = _problem(ExtendedDH())
    thetas = np.array([[4.2, 0.06], [3.0, -0.1]])
    assert not can_refit_together(p)
    assert p.stack_predict(thetas)[1].tobytes() == p.predict(thetas[1]).tobytes()


def test_a_set_where_the_model_fails_is_not_finite_and_the_others_are_kept():
    p = _problem(StackedNaNBelowSize())
    pred = p.stack_predict(np.array([[4.0, 0.0], [2.0, 0.0], [5.0, 0.1]]))
    assert np.isfinite(pred[[0, 2]]).all()
    # the model gives NaN ln(gamma±) below 3 Å (its analytic phi stays finite)
    assert not np.isfinite(pred[1][~p.is_osm]).any()
    assert np.isfinite(pred[1][p.is_osm]).all()


@pytest.mark.parametrize("model,alone,electrolyte", [
    (StackedDH(), ExtendedDH(), NACL),
    (StackedDH(False, False), ExtendedDH(False, False), CACL2),
    (StackedNaNBelowSize(), NaNBelowSize(), NACL),
])
@pytest.mark.parametrize("folds", [5, "loo"])
def test_cross_validation_together_equals_the_folds_one_at_a_time(model, alone, electrolyte, folds):
    stacked, single = _problem(model, electrolyte), _problem(alone, electrolyte)
    assert can_refit_together(stacked) and not can_refit_together(single)
    a = cross_validate_problem(stacked, folds)
    b = cross_validate_problem(single, folds)
    # The walks take the same steps; the stacked evaluation may round differently in the last
    # place, so the minima agree to within the minimiser's tolerance (1e-10 relative in chi2).
    np.testing.assert_allclose(a.prediction, b.prediction, rtol=1e-7, atol=1e-10)
    assert [str(f) for f in a.flags] == [str(f) for f in b.flags]
    assert a.folds_run == b.folds_run


def test_solve_together_equals_solve_of_each_subset():
    p = _problem(StackedDH(), seed=11).with_start(np.array([9.0, 0.5]))
    rng = np.random.default_rng(5)
    train = rng.random((4, p.n)) < 0.7
    together = solve_together(p, train)
    for row, (sub, sol) in zip(train, together):
        assert sub.n == int(row.sum())
        ref = solve(p.subset(row))
        assert sol.converged == ref.converged
        np.testing.assert_allclose(sol.theta, ref.theta, rtol=1e-7)
        np.testing.assert_allclose(sol.prediction, ref.prediction, rtol=1e-9, atol=1e-12)
        assert sol.jacobian is None  # left out: the folds read parameters and predictions


def test_refits_from_given_starts_reach_the_minimum_of_each_start():
    p = _problem(StackedDH(), seed=2)
    train = np.ones((3, p.n), dtype=bool)
    starts = [np.array([0.6]), np.array([10.0]), np.array([19.0])]
    found = refit_together(p, train, starts)
    for x0, f in zip(starts, found):
        ref = solve(p.with_start(np.array([x0[0], 0.0])).subset(np.ones(p.n, bool)), spread=False)
        assert f is not None
        np.testing.assert_allclose(f.theta, ref.theta, rtol=1e-6)


class StackedBadJacobian(StackedDH):
    """Declares stacking, but its Jacobian is one dict where two are due."""

    id = "test-bad-jacobian-stacked"

    def jacobian(self, m, params, ctx):
        return (ExtendedDH.jacobian(self, m, params, ctx)[0],)


def test_a_malformed_stacked_jacobian_is_a_failure_of_each_set_not_a_crash():
    # The one-set path calls it a model error (jacobian must return two dicts); stacked, each
    # set then fails on its own and is not finite, as a failing value would be.
    p = _problem(StackedBadJacobian())
    derivs = p.stack_derivatives(np.array([[4.2, 0.06], [3.0, -0.1]]), [0])
    assert not np.isfinite(derivs).any()
