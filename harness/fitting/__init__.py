"""Fitting: weighted least squares with covariance, cross-validation and validity ranges.

Works on in-memory data (:class:`FitData`); models are called only through
:func:`saltbench.models.evaluate.call_model`, with the same checks as ``evaluate``.
Modules: ``data`` (observations), ``problem`` (parameter vector, predictions, derivatives),
``least_squares`` (variable projection), ``result``
(covariance, statistics, flags), ``criteria`` (AIC, AICc, BIC), ``uncertainty`` (propagation),
``crossval`` (held-out error), ``validity`` (validity ranges), ``engine`` (entry points);
``protocol`` (what the solver and its kin ask of a problem), ``mixture_data``,
``mixture_problem`` and ``mixture`` (the same on data whose points are mixtures).
"""

from saltbench.fitting.crossval import CrossValidation, cross_validate
from saltbench.fitting.data import FitData
from saltbench.fitting.engine import fit, fit_joint
from saltbench.fitting.mixture import (
    MixtureValidityRange,
    cross_validate_mixture,
    fit_mixture,
    mixture_validity,
)
from saltbench.fitting.mixture_data import MixtureData
from saltbench.fitting.problem import parse_assignments
from saltbench.fitting.result import FitResult
from saltbench.fitting.uncertainty import Propagation, propagate
from saltbench.fitting.validity import ValidityRange, validity_range

__all__ = [
    "CrossValidation", "FitData", "FitResult", "MixtureData", "MixtureValidityRange",
    "Propagation", "ValidityRange", "cross_validate", "cross_validate_mixture", "fit",
    "fit_joint", "fit_mixture", "mixture_validity", "parse_assignments", "propagate",
    "validity_range",
]
