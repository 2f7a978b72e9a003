"""Fits of a linear model to subsets of its points from one design (saltbench.fitting.masked).

References: numpy.linalg.lstsq (a general-purpose library) on the weighted design of the
PowerSeries test model, written out here independently, on the rows each fold keeps; and the
general path (a problem of its own for each subset, solved by least_squares.solve), which every
masked fit, flag and held-out prediction must equal exactly, since the comparison's verdicts
and golden outputs rest on it. Data are invented (tests/fitting_models.py).
"""

from __future__ import annotations

import numpy as np
import pytest
from fitting_models import NearTwin, PowerSeries, Twin, synthetic

import saltbench.fitting.crossval as crossval_module
import saltbench.fitting.validity as validity_module
from saltbench.chemistry.electrolyte import parse_formula
from saltbench.fitting import FitData, cross_validate, validity_range
from saltbench.fitting.crossval import fold_labels
from saltbench.fitting.flags import FlagKind, texts
from saltbench.fitting.least_squares import solve
from saltbench.fitting.masked import MaskedLinear
from saltbench.fitting.problem import build_problem
from saltbench.models import ActivityModel, Parameter
from saltbench.water import debye_huckel_constants

NACL = parse_formula("NaCl")
GRID = np.round(np.arange(0.1, 4.01, 0.1), 2)  # invented molality grid, mol/kg


def _ln_gamma_data(seed: int = 5) -> FitData:
    return synthetic((3.8, 0.06), NACL, GRID, seed=seed, kinds=("ln_gamma",))


def test_each_fold_is_the_least_squares_solution_of_the_rows_it_keeps():
    # ln gamma± = -A sqrt(m)/(1 + sqrt(m)) + b1 m + b2 m^2 for a 1-1 salt (PowerSeries): the
    # offset and design written out here, solved by numpy's lstsq on each fold's rows.
    data = _ln_gamma_data()
    problem = build_problem(PowerSeries(), [(NACL, data)])
    masked = MaskedLinear.of(problem)
    assert masked is not None
    m, u = data.molality, data.uncertainty
    a_gamma = debye_huckel_constants(298.15).a_gamma
    offset = -a_gamma * np.sqrt(m) / (1.0 + np.sqrt(m))
    design = np.column_stack([m, m**2])
    labels = fold_labels(m, 5)
    for f in range(5):
        keep = labels != f
        sol = masked.solve(keep)
        assert sol is not None
        expected = np.linalg.lstsq(design[keep] / u[keep, None],
                                   (data.value[keep] - offset[keep]) / u[keep], rcond=None)[0]
        np.testing.assert_allclose(sol.theta, expected, rtol=1e-9)
        # ... and exactly what a problem of the fold's own gives
        general = solve(problem.subset(keep))
        assert np.array_equal(sol.theta, general.theta)
        assert np.array_equal(sol.prediction, general.prediction)
        assert sol.at_bound == general.at_bound and texts(sol.flags) == texts(general.flags)
        held = ~keep
        assert np.array_equal(masked.predict(held, sol.theta),
                              problem.subset(held).predict(sol.theta))


def _general_path(monkeypatch) -> None:
    """Send cross-validation and the validity scan down the path of a problem per subset."""
    monkeypatch.setattr(crossval_module.MaskedLinear, "of", classmethod(lambda cls, p: None))


@pytest.mark.parametrize("model, bounds", [
    (PowerSeries(), None),
    (PowerSeries(), {"b2": (-0.005, 0.0)}),  # b2 pinned at its lower bound in the trials
    (Twin(), None),  # singular: every trial fails, with the flag that says why
    (NearTwin(), None),  # ill-conditioned
])
def test_a_validity_scan_and_its_folds_equal_the_general_path(monkeypatch, model, bounds):
    data = synthetic((3.8, 0.06), NACL, GRID, seed=9)
    assert MaskedLinear.of(build_problem(model, [(NACL, data)], bounds=bounds)) is not None

    def run():
        scan = validity_range(model, NACL, data, bounds=bounds)
        cv = cross_validate(model, NACL, data, bounds=bounds)
        return scan, cv

    fast_scan, fast_cv = run()
    with monkeypatch.context() as mp:
        _general_path(mp)
        assert validity_module.MaskedLinear.of(build_problem(model, [(NACL, data)])) is None
        slow_scan, slow_cv = run()
    assert fast_scan.to_dict() == slow_scan.to_dict()
    assert fast_scan.trials  # the scan ran trials
    assert np.array_equal(fast_cv.prediction, slow_cv.prediction, equal_nan=True)
    assert texts(fast_cv.flags) == texts(slow_cv.flags)
    if bounds:
        assert any("b2" in f and "bound" in f for t in fast_scan.trials for f in t["flags"])
    if isinstance(model, Twin):
        assert fast_scan.max_molality is None
        assert any(f.kind is FlagKind.TRIAL_FAILED for f in fast_scan.flags)


class LinearNaNAbove2(ActivityModel):
    """ln gamma± = b m, not finite above 2 mol/kg: the root's design cannot be built."""

    id = "test-linear-nan-above-2"
    name = "test linear, NaN above 2 mol/kg"
    citation = "test model"
    parameters = (Parameter("b", "b", "kg/mol", 0.0, linear=True),)

    def ln_gamma_pm(self, m, params, ctx):
        m = np.asarray(m, dtype=float)
        return np.where(m > 2.0, np.nan, params["b"] * m)


def test_a_model_failing_on_the_root_points_takes_the_general_path():
    data = _ln_gamma_data()
    problem = build_problem(LinearNaNAbove2(), [(NACL, data)])
    assert MaskedLinear.of(problem) is None
    cv = cross_validate(LinearNaNAbove2(), NACL, data)
    assert any(f.kind is FlagKind.FOLD_UNSOLVED for f in cv.flags)


@pytest.mark.parametrize("judge", ["fit", "heldout"])
def test_a_mixture_scan_equals_the_general_path(monkeypatch, judge):
    # SIT's eps of HCl + NaCl fitted to Pitzer-generated points (tests/test_fit_mixture.py):
    # its misfit grows with ionic strength, so the scan both passes and fails trial limits.
    from test_fit_mixture import SIT_DH, SIT_FREE, pitzer_data

    from saltbench.fitting.mixture import cross_validate_mixture, mixture_validity
    from saltbench.fitting.mixture_problem import build_mixture_problem
    from saltbench.models.quantities import ln_gamma_pm
    from saltbench.plugins.sit import SIT

    data, _, _, _ = pitzer_data(0, noise=False, psi=-0.03)
    data = data.subset(np.array([q == ln_gamma_pm("HCl") for q in data.quantities]))
    problem = build_mixture_problem(SIT(), data, free=SIT_FREE, dh=SIT_DH)
    assert MaskedLinear.of(problem.subset(problem.molality <= 2.0)) is not None

    def run():
        return (mixture_validity(SIT(), data, free=SIT_FREE, dh=SIT_DH, tolerance_ln_gamma=0.003,
                                 judge=judge),
                cross_validate_mixture(SIT(), data, free=SIT_FREE, dh=SIT_DH, folds=4))

    fast, fast_cv = run()
    with monkeypatch.context() as mp:
        _general_path(mp)
        slow, slow_cv = run()
    assert fast.to_dict() == slow.to_dict()
    assert fast.max_ionic_strength is not None and fast.max_ionic_strength < 3.0
    assert np.array_equal(fast_cv.prediction, slow_cv.prediction)
