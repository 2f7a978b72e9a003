"""A drop-in plugin whose model id breaks the id rule (malformed on purpose)."""
import numpy as np

from saltbench.models import ActivityModel, hookimpl


class BadId(ActivityModel):
    id = "Bad_Model"
    name = "Bad id"
    citation = "invented for saltbench's malformed-plugin corpus"

    def ln_gamma_pm(self, m, params, ctx):
        return np.zeros_like(m)


@hookimpl
def register_models(context):
    return [BadId()]
