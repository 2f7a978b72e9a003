"""Davies equation (C. W. Davies, J. Chem. Soc. 1938, 2093; Ion Association, Butterworths, 1962).

    log10 gamma_i = -A z_i^2 ( sqrt(I) / (1 + sqrt(I)) - b I ),   b = 0.3 (1962) or 0.2 (1938)

written here on the natural-log basis with A = 3 A_phi, for solutions of any number of salts
(see :mod:`saltbench.plugins._ionic`). The mean follows from the single-ion values as
ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu, which gives the factor |z+ z-| for one salt.
The osmotic coefficient is not part of the published form; it follows here from the same excess
Gibbs energy in closed form (the contract kit checks it against the Gibbs-Duhem integral).
"""

from __future__ import annotations

from saltbench.models import Parameter, Validity, hookimpl
from saltbench.models.contract import ParameterKey
from saltbench.plugins._ionic import IonicStrengthModel, size_g


class Davies(IonicStrengthModel):
    id = "davies"
    name = "Davies"
    citation = "C. W. Davies, Ion Association, Butterworths, London, 1962, p. 41"
    parameters = (
        Parameter("b", "b", "kg/mol", 0.3, lower=0.0, upper=1.0, linear=True, fixed=True,
                  belongs_to="model",
                  description="coefficient of the linear term; 0.3 (1962) or 0.2 (1938)"),
    )
    validity = Validity(max_ionic_strength=0.5, note="Davies: up to about I = 0.1-0.5 mol/kg")

    def g_terms(self, request, i, s):
        # g = -A (sqrt(I)/(1 + sqrt(I)) - b I): the ion-size term with B a = 1 plus A b I,
        # whose mean over 0..I is half its value.
        a = request.conditions.a_gamma
        key = ParameterKey("b")
        b = request.value(key)
        g, excess = size_g(a, s, s)
        g, excess = g + a * b * i, excess + a * b * i / 2.0
        return g, excess, {key: (a * i, a * i / 2.0)}


@hookimpl
def register_models(context):
    return [Davies()]
