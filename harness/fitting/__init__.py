"""Fitting: weighted least squares with covariance, cross-validation and validity ranges.

Works on in-memory data (:class:`FitData`); models are called only through
:func:`saltbench.models.evaluate.call_model`, with the same checks as ``evaluate``.
Modules: ``data`` (observations), ``problem`` (parameter vector, predictions, derivatives),
``least_squares`` (variable projection), ``result``
(covariance, statistics, flags), ``criteria`` (AIC, AICc, BIC), ``uncertainty`` (propagation),
``crossval`` (held-out error), ``validity`` (validity ranges), ``engine`` (entry points).
"""

from saltbench.fitting.crossval import CrossValidation, cross_validate
from saltbench.fitting.data import FitData
from saltbench.fitting.engine import fit, fit_joint
from saltbench.fitting.problem import parse_assignments
from saltbench.fitting.result import FitResult
from saltbench.fitting.uncertainty import Propagation, propagate
from saltbench.fitting.validity import ValidityRange, validity_range

__all__ = [
    "CrossValidation", "FitData", "FitResult", "Propagation", "ValidityRange",
    "cross_validate", "fit", "fit_joint", "parse_assignments", "propagate", "validity_range",
]
