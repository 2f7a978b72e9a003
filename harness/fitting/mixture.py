"""Fitting, cross-validating and judging a model on mixture data.

The entry points set up a :class:`~saltbench.fitting.mixture_problem.MixtureProblem` and hand it
to the same machinery as one-salt fits: :func:`saltbench.fitting.least_squares.solve` (variable
projection; no iterative optimiser when every free parameter is linear, as the mixing terms of
Pitzer and SIT are), :func:`saltbench.fitting.result.build_result` (standard errors,
correlations, flags), :func:`saltbench.fitting.crossval.cross_validate_problem` (folds ranked by
ionic strength) and :func:`saltbench.fitting.validity.scan` (the validity search, by the same
rules as for one salt, along ionic strength).

In a :class:`~saltbench.fitting.result.FitResult` of a mixture fit, parameter names are
``str(ParameterKey)`` (``theta[H+/Na+]``), ``electrolyte`` names the salts of the compositions
(``HCl + NaCl``), and the per-point array ``molality`` holds each point's ionic strength (the
scan coordinate). Likewise ``CrossValidation.molality`` and the trial limits of a
:class:`MixtureValidityRange` are ionic strengths (mol/kg).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any, Literal

from saltbench.fitting.crossval import CrossValidation, cross_validate_problem
from saltbench.fitting.flags import Flag, texts
from saltbench.fitting.least_squares import solve
from saltbench.fitting.mixture_data import MixtureData
from saltbench.fitting.mixture_problem import KeyLike, build_mixture_problem
from saltbench.fitting.result import FitResult, build_result
from saltbench.fitting.validity import json_number, json_trials, limit_reason, scan, tolerances
from saltbench.models.contract import SolutionModel
from saltbench.water.debye_huckel import DebyeHuckel


def fit_mixture(model: SolutionModel, data: MixtureData, *,
                held: Mapping[KeyLike, float] | None = None,
                free: Iterable[KeyLike] | None = None,
                bounds: Mapping[KeyLike, tuple[float, float]] | None = None,
                start: Mapping[KeyLike, float] | None = None,
                dh: DebyeHuckel | None = None,
                covariance_scaling: str = "birge",
                max_evaluations: int | None = None) -> FitResult:
    """Weighted least-squares fit of ``model``'s ``free`` keys to mixture ``data``, the ``held``
    keys at the values given (see :func:`~saltbench.fitting.mixture_problem.build_mixture_problem`
    for the keys, their defaults and the errors). ``covariance_scaling`` as for
    :func:`saltbench.fitting.fit` (``"none"`` for data whose uncertainties are exact)."""
    problem = build_mixture_problem(model, data, held=held, free=free, bounds=bounds,
                                    start=start, dh=dh)
    solution = solve(problem, max_evaluations=max_evaluations)
    return build_result(problem, solution, covariance_scaling=covariance_scaling)


def cross_validate_mixture(model: SolutionModel, data: MixtureData, *,
                           held: Mapping[KeyLike, float] | None = None,
                           free: Iterable[KeyLike] | None = None,
                           bounds: Mapping[KeyLike, tuple[float, float]] | None = None,
                           start: Mapping[KeyLike, float] | None = None,
                           dh: DebyeHuckel | None = None,
                           folds: int | str = 5,
                           scheme: str = "interleaved") -> CrossValidation:
    """k-fold (``folds=k``) or leave-one-out (``folds="loo"``) held-out error of the refitted
    model, folds ranked by ionic strength (``interleaved``: every fold spans the range;
    ``contiguous``: blocks of neighbouring ionic strengths)."""
    problem = build_mixture_problem(model, data, held=held, free=free, bounds=bounds,
                                    start=start, dh=dh)
    return cross_validate_problem(problem, folds, scheme)


@dataclass(frozen=True)
class MixtureValidityRange:
    """How far up in ionic strength a model stays within tolerance of mixture data.

    ``limited_by`` reads as for one salt: ``tolerance`` (a point or trial beyond it ends the
    range), ``data`` (the data end first) or ``none-valid``. Trial limits are ionic strengths.
    """

    max_ionic_strength: float | None  # mol/kg; None when no point is valid
    limited_by: Literal["tolerance", "data", "none-valid"]
    first_failing_ionic_strength: float | None
    tolerance: dict[str, float]
    mode: Literal["fixed", "refit"]
    highest_data_ionic_strength: float
    flags: list[Flag] = field(default_factory=list)
    trials: list[dict[str, Any]] = field(default_factory=list, repr=False)

    def to_dict(self) -> dict[str, Any]:
        num = json_number
        return {"max_ionic_strength": num(self.max_ionic_strength),
                "limited_by": self.limited_by,
                "first_failing_ionic_strength": num(self.first_failing_ionic_strength),
                "tolerance": dict(self.tolerance), "mode": self.mode,
                "highest_data_ionic_strength": num(self.highest_data_ionic_strength),
                "flags": texts(self.flags), "trials": json_trials(self.trials)}


def mixture_validity(model: SolutionModel, data: MixtureData, *,
                     held: Mapping[KeyLike, float] | None = None,
                     free: Iterable[KeyLike] | None = None,
                     bounds: Mapping[KeyLike, tuple[float, float]] | None = None,
                     start: Mapping[KeyLike, float] | None = None,
                     dh: DebyeHuckel | None = None,
                     refit: bool = True,
                     tolerance_ln_gamma: float = 0.01, tolerance_phi: float = 0.01,
                     judge: Literal["fit", "heldout"] = "fit",
                     folds: int = 5, scheme: str = "interleaved",
                     stop_early: bool = False) -> MixtureValidityRange:
    """Highest ionic strength up to which ``model`` stays within tolerance of ``data``.

    With ``refit`` (the default) the ``free`` keys are refitted at each trial limit (the points
    up to it) and judged by ``judge`` (``"fit"``: every point within tolerance of that fit;
    ``"heldout"``: of cross-validated predictions), exactly as
    :func:`saltbench.fitting.validity_range` judges one salt. With ``refit=False`` the model
    is judged as given: ``held`` values, the rest at their implied defaults, nothing fitted.
    """
    tol = tolerances(tolerance_ln_gamma, tolerance_phi)
    problem = build_mixture_problem(model, data, held=held, free=() if not refit else free,
                                    bounds=bounds, start=start, dh=dh, require_free=refit)
    found = scan(problem, tol, theta=None if refit else problem.theta0, judge=judge,
                 folds=folds, scheme=scheme, stop_early=stop_early)
    flags = list(found.flags)
    top = float(problem.molality.max())
    limited_by = limit_reason(found.last_ok, found.first_fail, top, flags)
    return MixtureValidityRange(found.last_ok, limited_by, found.first_fail, tol, found.mode,
                                top, flags, found.trials)
