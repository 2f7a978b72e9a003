"""Truesdell-Jones and b-dot: the ion-size term plus a term linear in ionic strength.

- Truesdell and Jones, J. Res. U.S. Geol. Surv. 2, 233-248 (1974), their single-ion equation
      log10 gamma_i = -A z_i^2 sqrt(I) / (1 + B a_i sqrt(I)) + b_i I
  with an ion-size a_i and a linear coefficient b_i for each ion.
- Helgeson, Am. J. Sci. 267, 729-804 (1969), the "b-dot" equation
      log10 gamma_i = -A z_i^2 sqrt(I) / (1 + B a sqrt(I)) + b_dot I
  with one b_dot shared by all ions (here one per electrolyte) and, for a single salt, one a.

Evaluated on the natural-log basis (A = 3 A_phi); the b_i and b_dot are declared on the decadic
basis in which they are published and multiplied by ln 10 inside. The mean is
ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu; the osmotic coefficient is analytic (Robinson
and Stokes' sigma function for the size term, b I / 2 for the linear one; see ``saltbench.models.dh_terms``).
"""

from __future__ import annotations

import math

import numpy as np

from saltbench.models import ActivityModel, Parameter, Validity, hookimpl
from saltbench.models import dh_terms as dh
from saltbench.plugins._ionic import CONVENTION

LN10 = math.log(10.0)
_A_SIZE: dict = dict(unit="Å", lower=0.0, upper=20.0)
_B_LIN: dict = dict(unit="kg/mol", lower=-1.0, upper=1.0, linear=True)


class TruesdellJones(ActivityModel):
    id = "truesdell-jones"
    single_ion_convention = CONVENTION
    name = "Truesdell-Jones"
    citation = "A. H. Truesdell and B. F. Jones, J. Res. U.S. Geol. Surv. 2, 233-248 (1974)"
    parameters = (
        Parameter("a_cation", "a+", default=4.0, scope="cation", ion_key="a",
                  description="ion-size parameter of the cation", **_A_SIZE),
        Parameter("a_anion", "a-", default=4.0, scope="anion", ion_key="a",
                  description="ion-size parameter of the anion", **_A_SIZE),
        Parameter("b_cation", "b+", default=0.0, scope="cation", ion_key="b",
                  description="linear coefficient of the cation (decadic basis, as published)",
                  **_B_LIN),
        Parameter("b_anion", "b-", default=0.0, scope="anion", ion_key="b",
                  description="linear coefficient of the anion (decadic basis, as published)",
                  **_B_LIN),
    )
    validity = Validity(max_ionic_strength=2.0,
                        note="from memory of Truesdell and Jones (1974): fitted to about I = 2 "
                             "mol/kg in NaCl-type solutions")

    def _ions(self, m, params, ctx, what: str):
        """Per ion: ln gamma_i (``what="ln"``), phi_i - 1 (``"phi"``) or the d/da pair (``"d_a"``).

        Only the asked quantity is computed: the fitting engine calls ln_gamma_pm, osmotic and
        jacobian separately, and the osmotic and derivative terms cost more than ln gamma.
        """
        e, a, bg = ctx.electrolyte, ctx.dh.a_gamma, ctx.dh.b_gamma_per_angstrom
        i = e.ionic_strength(m)
        s = np.sqrt(i)
        out = {}
        for side, z in (("cation", e.z_cation), ("anion", e.z_anion)):
            x = bg * params[f"a_{side}"] * s
            if what == "ln":
                out[side] = dh.size_term(a, z**2, s, x) + LN10 * params[f"b_{side}"] * i
            elif what == "phi":
                out[side] = dh.size_term_osmotic(a, z**2, s, x) + LN10 * params[f"b_{side}"] * i / 2.0
            else:
                out[side] = dh.size_term_d_a(a, z**2, bg, i, x)
        return e, i, out

    def ln_gamma_ions(self, m, params, ctx):
        return self._ions(m, params, ctx, "ln")[2]

    def ln_gamma_pm(self, m, params, ctx):
        e, _, out = self._ions(m, params, ctx, "ln")
        return (e.nu_cation * out["cation"] + e.nu_anion * out["anion"]) / e.nu

    def osmotic(self, m, params, ctx):
        e, _, out = self._ions(m, params, ctx, "phi")
        return 1.0 + (e.nu_cation * out["cation"] + e.nu_anion * out["anion"]) / e.nu

    def jacobian(self, m, params, ctx):
        e, i, out = self._ions(m, params, ctx, "d_a")
        d_ln, d_phi = {}, {}
        for side, nu in (("cation", e.nu_cation), ("anion", e.nu_anion)):
            w = nu / e.nu
            da_ln, da_phi = out[side]
            d_ln[f"a_{side}"], d_phi[f"a_{side}"] = w * da_ln, w * da_phi
            d_ln[f"b_{side}"], d_phi[f"b_{side}"] = w * LN10 * i, w * LN10 * i / 2.0
        return d_ln, d_phi


class BDot(ActivityModel):
    id = "b-dot"
    single_ion_convention = CONVENTION
    name = "b-dot (Helgeson)"
    citation = "H. C. Helgeson, Am. J. Sci. 267, 729-804 (1969)"
    parameters = (
        Parameter("a", "å", default=4.0, description="ion-size parameter", **_A_SIZE),
        Parameter("b_dot", "ḃ", default=0.041,
                  description="b-dot, decadic basis as published; 0.041 kg/mol is Helgeson's "
                              "25 °C value for NaCl solutions (from memory of Helgeson 1969)",
                  **_B_LIN),
    )
    validity = Validity(max_ionic_strength=3.0,
                        note="from memory of Helgeson (1969): NaCl-dominated solutions to about "
                             "3 mol/kg")

    def _parts(self, m, params, ctx):
        e = ctx.electrolyte
        i = e.ionic_strength(m)
        s = np.sqrt(i)
        return e, i, s, ctx.dh.b_gamma_per_angstrom * params["a"] * s, LN10 * params["b_dot"]

    def ln_gamma_pm(self, m, params, ctx):
        e, i, s, x, lin = self._parts(m, params, ctx)
        return dh.size_term(ctx.dh.a_gamma, e.zz, s, x) + lin * i

    def osmotic(self, m, params, ctx):
        e, i, s, x, lin = self._parts(m, params, ctx)
        return 1.0 + dh.size_term_osmotic(ctx.dh.a_gamma, e.zz, s, x) + lin * i / 2.0

    def ln_gamma_ions(self, m, params, ctx):
        e, i, s, x, lin = self._parts(m, params, ctx)
        return {"cation": dh.size_term(ctx.dh.a_gamma, e.z_cation**2, s, x) + lin * i,
                "anion": dh.size_term(ctx.dh.a_gamma, e.z_anion**2, s, x) + lin * i}

    def jacobian(self, m, params, ctx):
        e, i, s, x, _ = self._parts(m, params, ctx)
        da_ln, da_phi = dh.size_term_d_a(ctx.dh.a_gamma, e.zz, ctx.dh.b_gamma_per_angstrom, i, x)
        return {"a": da_ln, "b_dot": LN10 * i}, {"a": da_phi, "b_dot": LN10 * i / 2.0}


@hookimpl
def register_models(context):
    return [TruesdellJones(), BDot()]
