"""Meissner's reduced activity coefficient with the Kusik-Meissner form.

Meissner and Tester, Ind. Eng. Chem. Process Des. Dev. 11, 128-133 (1972); Meissner and Kusik,
AIChE J. 18, 294-298 (1972); in the closed form of Kusik and Meissner (AIChE Symp. Ser. 173,
74, 14 (1978)). With the reduced activity coefficient Gamma = gamma±^(1/|z+ z-|):

    log10 Gamma = log10 [1 + B (1 + 0.1 I)^q - B] + log10 Gamma*,
    B = 0.75 - 0.065 q,
    log10 Gamma* = -0.5107 sqrt(I) / (1 + C sqrt(I)),
    C = 1 + 0.055 q exp(-0.023 I^3),

one parameter q per salt (nonlinear). Evaluated as ln gamma± = |z+ z-| ln Gamma with the
water state's decadic A in place of the printed 25 °C value 0.5107 (0.5098 from the IAPWS
releases at 25 °C), so that the form reaches the limiting law at every temperature; Meissner's
own temperature rule for q is not part of this form. The osmotic coefficient comes from the
harness's Gibbs-Duhem integral.

The bounds on q keep 1 + B((1 + 0.1 I)^q - 1) positive: B < 1 for q > -3.8 and B > 0 for
q < 11.5.
"""

from __future__ import annotations

import numpy as np

from saltbench.models import ActivityModel, Parameter, Validity, hookimpl


class Meissner(ActivityModel):
    id = "meissner"
    name = "Meissner (Kusik-Meissner form)"
    citation = ("H. P. Meissner and C. L. Kusik, AIChE J. 18, 294-298 (1972); C. L. Kusik and "
                "H. P. Meissner, AIChE Symp. Ser. 74 (173), 14-20 (1978)")
    parameters = (
        Parameter("q", "q", "1", 2.0, lower=-3.0, upper=11.0, belongs_to="pair",
                  description="Meissner's q, one per salt"),
    )
    validity = Validity(max_ionic_strength=20.0,
                        note="from memory of Kusik and Meissner (1978): to I of about 20 mol/kg")

    def ln_gamma_pm(self, m, params, ctx):
        e = ctx.electrolyte
        i = e.ionic_strength(m)
        s = np.sqrt(i)
        q = params["q"]
        b = 0.75 - 0.065 * q
        c = 1.0 + 0.055 * q * np.exp(-0.023 * i**3)
        # expm1/log1p keep the first term accurate where it is of order 1e-7 at high dilution.
        first = np.log1p(b * np.expm1(q * np.log1p(0.1 * i)))
        ln_gamma_star = -ctx.dh.a_gamma * s / (1.0 + c * s)
        return e.zz * (first + ln_gamma_star)


@hookimpl
def register_models(context):
    return [Meissner()]
