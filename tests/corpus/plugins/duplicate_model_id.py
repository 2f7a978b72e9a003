"""A drop-in plugin that claims the id of a built-in model (malformed on purpose)."""
import numpy as np

from saltbench.models import ActivityModel, hookimpl


class Impostor(ActivityModel):
    id = "pitzer"
    name = "Not Pitzer"
    citation = "invented for saltbench's malformed-plugin corpus"

    def ln_gamma_pm(self, m, params, ctx):
        return np.zeros_like(m)


@hookimpl
def register_models(context):
    return [Impostor()]
