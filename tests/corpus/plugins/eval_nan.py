"""A drop-in plugin whose model returns NaN (faulty on purpose)."""
import numpy as np

from saltbench.models import ActivityModel, Parameter, hookimpl


class ReturnsNaN(ActivityModel):
    id = "bad-model"
    name = "Returns NaN"
    citation = "invented for saltbench's faulty-plugin corpus"
    parameters = (Parameter("b", "b", "kg/mol", 0.1, lower=-1.0, upper=1.0, linear=True),)

    def ln_gamma_pm(self, m, params, ctx):
        return np.full_like(np.asarray(m, dtype=float), np.nan)


@hookimpl
def register_models(context):
    return [ReturnsNaN()]
