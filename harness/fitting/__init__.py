"""Fitting: weighted least squares with covariance, cross-validation and validity ranges.

Works on in-memory data (:class:`FitData`); models are evaluated only through
:mod:`saltbench.models.evaluate`.
"""

from saltbench.fitting.data import FitData
from saltbench.fitting.engine import fit, fit_joint
from saltbench.fitting.problem import parse_assignments
from saltbench.fitting.result import FitResult

__all__ = ["FitData", "FitResult", "fit", "fit_joint", "parse_assignments"]
