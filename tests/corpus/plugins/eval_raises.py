"""A drop-in plugin whose model raises during evaluation (faulty on purpose)."""
from saltbench.models import ActivityModel, Parameter, hookimpl


class Raises(ActivityModel):
    id = "bad-model"
    name = "Raises on evaluation"
    citation = "invented for saltbench's faulty-plugin corpus"
    parameters = (Parameter("b", "b", "kg/mol", 0.1, lower=-1.0, upper=1.0, linear=True),)

    def ln_gamma_pm(self, m, params, ctx):
        raise ZeroDivisionError("corpus model divides by zero")


@hookimpl
def register_models(context):
    return [Raises()]
