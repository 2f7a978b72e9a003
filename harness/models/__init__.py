"""The model contract, hook specifications, plugin discovery and the evaluation layer.

Plugin authors need only this module::

    from saltbench.models import ActivityModel, Parameter, Validity, hookimpl
"""

from saltbench.models.contract import (
    ActivityModel,
    EvalContext,
    ModelInfo,
    Parameter,
    Validity,
)
from saltbench.models.hookspecs import PluginContext, hookimpl

__all__ = [
    "ActivityModel", "EvalContext", "ModelInfo", "Parameter", "Validity", "PluginContext",
    "hookimpl",
]
