"""The Debye-Hückel family: limiting law, ion-size forms, Güntelberg and Hückel's linear term.

All on the natural-log basis with A = 3 A_phi and B = B_gamma in Å^-1 (kg/mol)^1/2:

- Limiting law, Debye and Hückel, Phys. Z. 24, 185 (1923):
      ln gamma± = -A |z+ z-| sqrt(I),                    phi = 1 - A |z+ z-| sqrt(I) / 3
- Extended form with ion size a (same paper):
      ln gamma± = -A |z+ z-| sqrt(I) / (1 + B a sqrt(I))
  and with one size per ion, ln gamma_i = -A z_i^2 sqrt(I) / (1 + B a_i sqrt(I)),
  ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu.
- Güntelberg, Z. Phys. Chem. 123, 199 (1926): the extended form with B a = 1 (kg/mol)^1/2.
- Hückel, Phys. Z. 26, 93 (1925): the extended form plus a term linear in I,
      ln gamma± = -A |z+ z-| sqrt(I) / (1 + B a sqrt(I)) + b I      (b on the ln basis here).

Osmotic coefficients follow analytically through Gibbs-Duhem with Robinson and Stokes' sigma
function (see :mod:`saltbench.models.dh_terms`); a term b I in ln gamma± gives b I / 2 in phi.
"""

from __future__ import annotations

import numpy as np

from saltbench.models import ActivityModel, Parameter, Validity, hookimpl
from saltbench.models import dh_terms as dh
from saltbench.plugins._ionic import CONVENTION, IonicStrengthModel, size_g

_A_SIZE: dict = dict(unit="Å", lower=0.0, upper=20.0)


def _i_s(m, ctx):
    i = ctx.electrolyte.ionic_strength(m)
    return i, np.sqrt(i)


class DebyeHuckelLimiting(IonicStrengthModel):
    id = "debye-huckel-limiting"
    name = "Debye-Hückel limiting law"
    citation = "P. Debye and E. Hückel, Phys. Z. 24, 185-206 (1923)"
    parameters = ()
    validity = Validity(max_ionic_strength=0.001,
                        note="limiting law: I up to about 0.001 mol/kg (common practice, no source)")

    def g_terms(self, request, i, s):
        # g = -A sqrt(I), gbar = (2/3) g
        g = -request.conditions.a_gamma * s
        return g, g / 3.0, {}


class ExtendedDebyeHuckel(ActivityModel):
    id = "extended-debye-huckel"
    stacks_parameter_sets = True
    single_ion_convention = CONVENTION
    name = "Extended Debye-Hückel (one ion size)"
    citation = "P. Debye and E. Hückel, Phys. Z. 24, 185-206 (1923)"
    parameters: tuple[Parameter, ...] = (
        Parameter("a", "a", default=4.0, description="distance of closest approach of the ions",
                  **_A_SIZE),
    )
    validity = Validity(max_ionic_strength=0.1,
                        note="ion-size form: I up to about 0.1 mol/kg (common practice, no source)")

    def _x(self, params, ctx, s):
        return ctx.dh.b_gamma_per_angstrom * params["a"] * s

    def ln_gamma_pm(self, m, params, ctx):
        _, s = _i_s(m, ctx)
        return dh.size_term(ctx.dh.a_gamma, ctx.electrolyte.zz, s, self._x(params, ctx, s))

    def osmotic(self, m, params, ctx):
        _, s = _i_s(m, ctx)
        return 1.0 + dh.size_term_osmotic(ctx.dh.a_gamma, ctx.electrolyte.zz, s,
                                          self._x(params, ctx, s))

    def ln_gamma_ions(self, m, params, ctx):
        _, s = _i_s(m, ctx)
        x, e = self._x(params, ctx, s), ctx.electrolyte
        return {"cation": dh.size_term(ctx.dh.a_gamma, e.z_cation**2, s, x),
                "anion": dh.size_term(ctx.dh.a_gamma, e.z_anion**2, s, x)}

    def jacobian(self, m, params, ctx):
        i, s = _i_s(m, ctx)
        d_ln, d_phi = dh.size_term_d_a(ctx.dh.a_gamma, ctx.electrolyte.zz,
                                       ctx.dh.b_gamma_per_angstrom, i, self._x(params, ctx, s))
        return {"a": d_ln}, {"a": d_phi}


class ExtendedDebyeHuckelIons(ActivityModel):
    id = "extended-debye-huckel-ions"
    stacks_parameter_sets = True
    single_ion_convention = CONVENTION
    name = "Extended Debye-Hückel (one size per ion)"
    citation = ("P. Debye and E. Hückel, Phys. Z. 24, 185-206 (1923); per-ion sizes as tabulated "
                "by J. Kielland, J. Am. Chem. Soc. 59, 1675-1678 (1937)")
    parameters = (
        Parameter("a_cation", "a+", default=4.0, scope="cation", ion_key="a",
                  description="ion-size parameter of the cation", **_A_SIZE),
        Parameter("a_anion", "a-", default=4.0, scope="anion", ion_key="a",
                  description="ion-size parameter of the anion", **_A_SIZE),
    )
    validity = Validity(max_ionic_strength=0.1,
                        note="Kielland's table stops at I = 0.1 mol/kg")

    def _parts(self, m, params, ctx):
        i, s = _i_s(m, ctx)
        e, bg = ctx.electrolyte, ctx.dh.b_gamma_per_angstrom
        return (i, s, (e.nu_cation / e.nu, e.z_cation**2, bg * params["a_cation"] * s),
                (e.nu_anion / e.nu, e.z_anion**2, bg * params["a_anion"] * s))

    def ln_gamma_ions(self, m, params, ctx):
        _, s, (_, zc, xc), (_, za, xa) = self._parts(m, params, ctx)
        a = ctx.dh.a_gamma
        return {"cation": dh.size_term(a, zc, s, xc), "anion": dh.size_term(a, za, s, xa)}

    def ln_gamma_pm(self, m, params, ctx):
        _, s, (fc, zc, xc), (fa, za, xa) = self._parts(m, params, ctx)
        a = ctx.dh.a_gamma
        return fc * dh.size_term(a, zc, s, xc) + fa * dh.size_term(a, za, s, xa)

    def osmotic(self, m, params, ctx):
        _, s, (fc, zc, xc), (fa, za, xa) = self._parts(m, params, ctx)
        a = ctx.dh.a_gamma
        return 1.0 + fc * dh.size_term_osmotic(a, zc, s, xc) + fa * dh.size_term_osmotic(a, za, s, xa)

    def jacobian(self, m, params, ctx):
        i, _, (fc, zc, xc), (fa, za, xa) = self._parts(m, params, ctx)
        a, bg = ctx.dh.a_gamma, ctx.dh.b_gamma_per_angstrom
        lc, pc = dh.size_term_d_a(a, zc, bg, i, xc)
        la, pa = dh.size_term_d_a(a, za, bg, i, xa)
        return {"a_cation": fc * lc, "a_anion": fa * la}, {"a_cation": fc * pc, "a_anion": fa * pa}


class Guntelberg(IonicStrengthModel):
    id = "guntelberg"
    name = "Güntelberg"
    citation = "E. Güntelberg, Z. Phys. Chem. 123, 199-247 (1926)"
    parameters = ()
    validity = Validity(max_ionic_strength=0.1,
                        note="Güntelberg: I up to about 0.1 mol/kg (common practice, no source)")

    def g_terms(self, request, i, s):
        g, excess = size_g(request.conditions.a_gamma, s, s)
        return g, excess, {}


class Huckel(ExtendedDebyeHuckel):
    id = "huckel"
    stacks_parameter_sets = True  # b I broadcasts as the size term does
    name = "Hückel (ion size and linear term)"
    citation = "E. Hückel, Phys. Z. 26, 93-147 (1925)"
    parameters = ExtendedDebyeHuckel.parameters + (
        Parameter("b", "b", "kg/mol", 0.0, lower=-2.0, upper=2.0, linear=True,
                  description="coefficient of the term linear in I (natural-log basis)"),
    )
    validity = Validity(max_ionic_strength=1.0,
                        note="Hückel's form: I up to about 1 mol/kg (common practice, no source)")

    def ln_gamma_pm(self, m, params, ctx):
        i = ctx.electrolyte.ionic_strength(m)
        return super().ln_gamma_pm(m, params, ctx) + params["b"] * i

    def osmotic(self, m, params, ctx):
        i = ctx.electrolyte.ionic_strength(m)
        return super().osmotic(m, params, ctx) + params["b"] * i / 2.0

    def ln_gamma_ions(self, m, params, ctx):
        # The linear term is shared by both ions so that their mean is ln gamma±.
        i = ctx.electrolyte.ionic_strength(m)
        ions = super().ln_gamma_ions(m, params, ctx)
        return {k: v + params["b"] * i for k, v in ions.items()}

    def jacobian(self, m, params, ctx):
        i = ctx.electrolyte.ionic_strength(m)
        d_ln, d_phi = super().jacobian(m, params, ctx)
        return {**d_ln, "b": i}, {**d_phi, "b": i / 2.0}


@hookimpl
def register_models(context):
    return [DebyeHuckelLimiting(), ExtendedDebyeHuckel(), ExtendedDebyeHuckelIons(), Guntelberg(),
            Huckel()]
