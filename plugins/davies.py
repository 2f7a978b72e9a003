"""Davies equation (C. W. Davies, J. Chem. Soc. 1938, 2093; Ion Association, Butterworths, 1962).

    log10 gamma_i = -A z_i^2 ( sqrt(I) / (1 + sqrt(I)) - b I ),   b = 0.3 (1962) or 0.2 (1938)

written here on the natural-log basis with A = 3 A_phi. The mean follows from the single-ion
values as ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu, which gives the factor |z+ z-|.
The osmotic coefficient is not part of the published form; the harness obtains it through the
Gibbs-Duhem integral.
"""

from __future__ import annotations

import numpy as np

from saltbench.models import ActivityModel, Parameter, Validity, hookimpl


class Davies(ActivityModel):
    id = "davies"
    name = "Davies"
    citation = "C. W. Davies, Ion Association, Butterworths, London, 1962, p. 41"
    parameters = (
        Parameter("b", "b", "kg/mol", 0.3, lower=0.0, upper=1.0, linear=True, fixed=True,
                  description="coefficient of the linear term; 0.3 (1962) or 0.2 (1938)"),
    )
    validity = Validity(max_ionic_strength=0.5, note="Davies: up to about I = 0.1-0.5 mol/kg")

    def _shape(self, m, params, ctx):
        i = ctx.electrolyte.ionic_strength(m)
        s = np.sqrt(i)
        return -ctx.dh.a_gamma * (s / (1.0 + s) - params["b"] * i)

    def ln_gamma_pm(self, m, params, ctx):
        return ctx.electrolyte.zz * self._shape(m, params, ctx)

    def ln_gamma_ions(self, m, params, ctx):
        f = self._shape(m, params, ctx)
        e = ctx.electrolyte
        return {"cation": e.z_cation**2 * f, "anion": e.z_anion**2 * f}

    def jacobian(self, m, params, ctx):
        i = ctx.electrolyte.ionic_strength(m)
        d_ln = ctx.electrolyte.zz * ctx.dh.a_gamma * i
        return {"b": d_ln}, {"b": d_ln / 2.0}  # ln gamma = c m  <=>  phi - 1 = c m / 2


@hookimpl
def register_models(context):
    return [Davies()]
