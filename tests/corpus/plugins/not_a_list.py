"""A drop-in plugin whose register_models returns one model, not a list (malformed on purpose)."""
import numpy as np

from saltbench.models import ActivityModel, hookimpl


class Lonely(ActivityModel):
    id = "lonely"
    name = "Lonely"
    citation = "invented for saltbench's malformed-plugin corpus"

    def ln_gamma_pm(self, m, params, ctx):
        return np.zeros_like(m)


@hookimpl
def register_models(context):
    return Lonely()
