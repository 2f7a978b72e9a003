"""A drop-in plugin whose model returns an array of the wrong shape (faulty on purpose)."""
import numpy as np

from saltbench.models import ActivityModel, Parameter, hookimpl


class WrongShape(ActivityModel):
    id = "bad-model"
    name = "Wrong shape"
    citation = "invented for saltbench's faulty-plugin corpus"
    parameters = (Parameter("b", "b", "kg/mol", 0.1, lower=-1.0, upper=1.0, linear=True),)

    def ln_gamma_pm(self, m, params, ctx):
        return np.zeros(np.size(m) + 1)


@hookimpl
def register_models(context):
    return [WrongShape()]
