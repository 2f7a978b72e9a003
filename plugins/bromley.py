"""Bromley's equation for strong electrolytes (L. A. Bromley, AIChE J. 19, 313-320 (1973)).

For a single salt at 25 °C Bromley writes (decadic basis)

    log10 gamma± = -A |z+ z-| sqrt(I) / (1 + sqrt(I))
                   + (0.06 + 0.6 B) |z+ z-| I / (1 + 1.5 I / |z+ z-|)^2 + B I

with one B per electrolyte, and proposes the single-ion additivity
    B = B+ + B- + delta+ delta-
(per-ion B and delta). The osmotic coefficient follows from Gibbs-Duhem term by term; Bromley's
paper gives the same result, written with his sigma and psi functions (equation numbers from
memory of Bromley 1973; verify against the original):

    phi - 1 = ln 10 [ -A |z+ z-| sqrt(I) sigma(sqrt(I)) / 3
                      + (0.06 + 0.6 B) |z+ z-| (I/(1+y)^2 - (ln(1+y) + 1/(1+y) - 1)/(rho^2 I))
                      + B I / 2 ],                 rho = 1.5 / |z+ z-|,  y = rho I.

Evaluated on the natural-log basis (A = 3 A_phi); B, B+, B-, delta are declared on the decadic
basis in kg/mol as published. A comes from the water state rather than Bromley's 0.511.
"""

from __future__ import annotations

import math

import numpy as np

from saltbench.models import ActivityModel, Parameter, Validity, hookimpl
from saltbench.models import dh_terms as dh

LN10 = math.log(10.0)
_VALIDITY = Validity(max_ionic_strength=6.0,
                     note="from memory of Bromley (1973): I up to about 6 mol/kg")
_CITATION = "L. A. Bromley, AIChE J. 19, 313-320 (1973)"


class Bromley(ActivityModel):
    id = "bromley"
    name = "Bromley"
    citation = _CITATION
    parameters: tuple[Parameter, ...] = (
        Parameter("B", "B", "kg/mol", 0.05, lower=-0.5, upper=0.5, linear=True, belongs_to="pair",
                  description="Bromley's interaction parameter of the salt (decadic basis)"),
    )
    validity = _VALIDITY

    def _terms(self, m, ctx):
        e = ctx.electrolyte
        i = e.ionic_strength(m)
        s = np.sqrt(i)
        shape, shape_phi = dh.bromley_shape(i, 1.5 / e.zz)
        ln_dh = dh.size_term(ctx.dh.a_gamma, e.zz, s, s)
        phi_dh = dh.size_term_osmotic(ctx.dh.a_gamma, e.zz, s, s)
        return e.zz, i, shape, shape_phi, ln_dh, phi_dh

    def _b(self, params):
        return params["B"]

    def ln_gamma_pm(self, m, params, ctx):
        zz, i, shape, _, ln_dh, _ = self._terms(m, ctx)
        b = self._b(params)
        return ln_dh + LN10 * ((0.06 + 0.6 * b) * zz * shape + b * i)

    def osmotic(self, m, params, ctx):
        zz, i, _, shape_phi, _, phi_dh = self._terms(m, ctx)
        b = self._b(params)
        return 1.0 + phi_dh + LN10 * ((0.06 + 0.6 * b) * zz * shape_phi + b * i / 2.0)

    def _d_b(self, m, ctx):
        zz, i, shape, shape_phi, _, _ = self._terms(m, ctx)
        return LN10 * (0.6 * zz * shape + i), LN10 * (0.6 * zz * shape_phi + i / 2.0)

    def jacobian(self, m, params, ctx):
        d_ln, d_phi = self._d_b(m, ctx)
        return {"B": d_ln}, {"B": d_phi}


class BromleyIons(Bromley):
    id = "bromley-ions"
    name = "Bromley (single-ion additivity)"
    parameters = (
        Parameter("B_cation", "B+", "kg/mol", 0.0, lower=-0.5, upper=0.5, scope="cation",
                  ion_key="B", linear=True, description="Bromley's B of the cation"),
        Parameter("B_anion", "B-", "kg/mol", 0.0, lower=-0.5, upper=0.5, scope="anion",
                  ion_key="B", linear=True, description="Bromley's B of the anion"),
        Parameter("delta_cation", "δ+", "(kg/mol)^1/2", 0.0, lower=-1.0, upper=1.0,
                  scope="cation", ion_key="delta", description="Bromley's delta of the cation"),
        Parameter("delta_anion", "δ-", "(kg/mol)^1/2", 0.0, lower=-1.0, upper=1.0,
                  scope="anion", ion_key="delta", description="Bromley's delta of the anion"),
    )

    def _b(self, params):
        return (params["B_cation"] + params["B_anion"]
                + params["delta_cation"] * params["delta_anion"])

    def jacobian(self, m, params, ctx):
        d_ln, d_phi = self._d_b(m, ctx)
        chain = {"B_cation": 1.0, "B_anion": 1.0, "delta_cation": params["delta_anion"],
                 "delta_anion": params["delta_cation"]}
        return ({k: c * d_ln for k, c in chain.items()}, {k: c * d_phi for k, c in chain.items()})


@hookimpl
def register_models(context):
    return [Bromley(), BromleyIons()]
