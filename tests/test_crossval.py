"""Cross-validation over molality: fold assignment, held-out residuals, failures.

Synthetic data are invented (tests/fitting_models.py): stated parameters plus stated noise.
"""

from __future__ import annotations

import numpy as np
import pytest
from fitting_models import ExtendedDH, NaNModel, PowerSeries, synthetic

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.fitting import cross_validate, fit
from saltbench.fitting.crossval import fold_labels
from saltbench.fitting.flags import FlagKind

NACL = parse_formula("NaCl")
GRID = np.round(np.arange(0.1, 3.01, 0.1), 2)  # invented molality grid, mol/kg


def test_interleaved_folds_follow_molality_rank():
    rng = np.random.default_rng(0)
    m = rng.permutation(np.arange(1, 11) / 10.0)
    labels = fold_labels(m, 3, "interleaved")
    ranked = labels[np.argsort(m)]
    assert list(ranked) == [0, 1, 2, 0, 1, 2, 0, 1, 2, 0]


def test_contiguous_folds_are_blocks_of_neighbouring_molalities():
    m = np.random.default_rng(1).permutation(np.arange(1, 13) / 4.0)
    labels = fold_labels(m, 4, "contiguous")
    ranked = labels[np.argsort(m)]
    assert list(ranked) == [0, 0, 0, 1, 1, 1, 2, 2, 2, 3, 3, 3]


def test_bad_fold_requests_are_user_errors():
    with pytest.raises(UserError, match="2 <= folds"):
        fold_labels(np.arange(1, 4.0), 5)
    with pytest.raises(UserError, match="unknown cross-validation scheme"):
        fold_labels(np.arange(1, 4.0), 2, "random")


def _hat(data):
    """Hat matrix of the weighted linear design of PowerSeries at these points (independent)."""
    m, w = data.molality, 1.0 / data.uncertainty
    x = np.column_stack([np.where(data.is_osmotic, m / 2, m),
                         np.where(data.is_osmotic, 2 * m**2 / 3, m**2)]) * w[:, None]
    return x @ np.linalg.solve(x.T @ x, x.T), w


def test_leave_one_out_of_a_linear_fit_matches_the_press_identity():
    # For linear least squares the held-out residual is e_i / (1 - h_ii), h the hat matrix
    # (Allen, Technometrics 16, 125 (1974), PRESS; from memory), on the weighted scale.
    data = synthetic((3.5, 0.08), NACL, GRID, seed=21)
    cv = cross_validate(PowerSeries(), NACL, data, folds="loo")
    full = fit(PowerSeries(), NACL, data)
    h, _ = _hat(data)
    expected = full.residual / (1.0 - np.diag(h))
    np.testing.assert_allclose(cv.residual, expected, rtol=1e-7, atol=1e-12)
    assert cv.folds == data.n and cv.flags == []
    assert cv.rms_ln_gamma == pytest.approx(np.sqrt(np.mean(expected[~data.is_osmotic] ** 2)))


def test_k_fold_of_a_linear_fit_matches_the_block_identity():
    # Held-out residuals of a deleted block S are (I - H_SS)^-1 e_S (the block form of the same
    # identity; e.g. Cook and Weisberg, Residuals and Influence in Regression, 1982; from memory).
    data = synthetic((3.5, 0.08), NACL, GRID, seed=22)
    cv = cross_validate(PowerSeries(), NACL, data, folds=5, scheme="contiguous")
    e = fit(PowerSeries(), NACL, data).residual
    h, w = _hat(data)
    for f in range(5):
        s = cv.fold == f
        expected = np.linalg.solve(np.eye(s.sum()) - h[np.ix_(s, s)], (e * w)[s]) / w[s]
        np.testing.assert_allclose(cv.residual[s], expected, rtol=1e-7, atol=1e-12)


def test_exact_data_give_vanishing_held_out_error():
    data = synthetic((4.0, 0.05), NACL, GRID)
    cv = cross_validate(ExtendedDH(), NACL, data, folds=5)
    assert cv.rms_ln_gamma < 1e-9 and cv.rms_phi < 1e-9


def test_held_out_error_exceeds_the_fit_error_for_a_misfitting_model():
    # A two-term power series cannot follow the ion-size form closely at this noise level; the
    # held-out RMS must exceed the in-sample RMS (optimism of the training error; common
    # practice, no source).
    data = synthetic((1.5, 0.2), NACL, GRID, seed=23, u_ln=1e-4, u_phi=1e-4)
    full = fit(PowerSeries(), NACL, data)
    cv = cross_validate(PowerSeries(), NACL, data, folds=5)
    assert cv.rms_ln_gamma > full.residual_stats["ln_gamma"]["rms"]
    d = cv.to_dict()
    assert len(d["points"]) == data.n and d["held_out"]["osmotic"]["n"] == 30


def test_failing_model_is_reported_not_raised():
    data = synthetic((4.0, 0.05), NACL, GRID)
    cv = cross_validate(NaNModel(), NACL, data, folds=3)
    assert np.all(np.isnan(cv.prediction))
    assert len(cv.flags) == 3
    assert [f["fold"] for f in cv.flags] == [1, 2, 3]
    assert all(f.kind in (FlagKind.FOLD_UNSOLVED, FlagKind.FOLD_HELDOUT_ERROR) for f in cv.flags)
    assert all("model error" in text for text in cv.to_dict()["flags"])
    assert cv.to_dict()["held_out"]["ln_gamma"]["rms"] is None
