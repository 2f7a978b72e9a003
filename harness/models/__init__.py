"""The model contract, hook specifications, plugin discovery and the evaluation layer.

Plugin authors need only this module (and :mod:`saltbench.models.quantities` for quantity
names, :mod:`saltbench.models.dh_terms` for the Debye-Hückel terms)::

    from saltbench.models import SolutionModel, Parameter, ParameterKey, Computed, hookimpl

Models written for one salt subclass :class:`ActivityModel` (the contract before solutions).
"""

from saltbench.models.contract import (
    ActivityModel,
    Computed,
    Conditions,
    EvalContext,
    ModelInfo,
    Parameter,
    ParameterKey,
    Request,
    SolutionModel,
    Validity,
)
from saltbench.models.hookspecs import PluginContext, hookimpl

__all__ = [
    "ActivityModel", "Computed", "Conditions", "EvalContext", "ModelInfo", "Parameter",
    "ParameterKey", "PluginContext", "Request", "SolutionModel", "Validity", "hookimpl",
]
