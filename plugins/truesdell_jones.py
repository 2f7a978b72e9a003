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

Mixtures: both equations are single-ion equations in the ionic strength, and are used as
written for every ion of a solution of several salts: Truesdell-Jones with each ion's own a_i
and b_i (keys ``a[ion]``, ``b[ion]``), b-dot with one å and one b-dot for the whole solution
(keys ``a`` and ``b_dot``), as Helgeson used it for NaCl-dominated solutions (from memory of
Helgeson 1969). The osmotic coefficient is their Gibbs-Duhem integral along the mixture's
dilution path (:mod:`saltbench.plugins._mixing`), per ion the one-salt partner of each term:

    phi - 1 = sum_i (m_i / sum_j m_j) [-(A z_i^2 / 3) sqrt(I) sigma(B a_i sqrt(I)) + ln 10 b_i I / 2],

which for one salt is the one-salt phi above. Neither is the derivative of one excess Gibbs
energy in general: d ln gamma_i / d m_k = (z_k^2 / 2) f_i'(I) equals d ln gamma_k / d m_i only
when f_i'/z_i^2 is the same for every ion, i.e. one ion size and b_i proportional to z_i^2.
Truesdell-Jones with its per-ion values and b-dot (whose b-dot I is not scaled by z_i^2) break
the cross-differential identity in solutions of mixed charge types; the defect is measured in
``tests/test_mixture_rules.py``.
"""

from __future__ import annotations

import math

import numpy as np

from saltbench.models import Parameter, Validity, hookimpl
from saltbench.models import dh_terms as dh
from saltbench.models.contract import ParameterKey
from saltbench.plugins._ionic import CONVENTION
from saltbench.plugins._mixing import IonTerms, MixtureRuleModel

LN10 = math.log(10.0)
_A_SIZE: dict = dict(unit="Å", lower=0.0, upper=20.0)
_B_LIN: dict = dict(unit="kg/mol", lower=-1.0, upper=1.0, linear=True)


_MIXTURE_COMPUTES = frozenset({"ln_gamma", "ln_gamma_pm", "osmotic", "water_activity"})


def _ionic_strength_terms(request, sizes, linear) -> IonTerms:
    """ln gamma_i = -A z_i^2 sqrt(I)/(1 + B a_i sqrt(I)) + ln 10 b_i I for every ion, with phi.

    ``sizes`` and ``linear`` give, per ion column, the key of its a_i and of its b_i (decadic).
    """
    comp = request.composition
    m, z2 = comp.molality, comp.charges**2
    i = comp.ionic_strength
    s = np.sqrt(i)
    frac = m / m.sum(axis=1)[:, None]
    cond = request.conditions
    a, bg = cond.a_gamma, cond.b_gamma_per_angstrom
    shape = (request.n_sets, comp.n)
    ln_ions = np.empty(shape + z2.shape)
    phi = np.ones(shape)
    wrt = set(request.wrt)
    d_ions: dict = {}
    d_phi: dict = {}
    for k in range(z2.size):
        size_key, lin_key = sizes[k], linear[k]
        x = bg * request.value(size_key) * s
        lin = LN10 * request.value(lin_key) * i
        ln_ions[:, :, k] = dh.size_term(a, z2[k], s, x) + lin
        phi += frac[:, k] * (dh.size_term_osmotic(a, z2[k], s, x) + lin / 2.0)
        if size_key in wrt:
            da_ln, da_phi = dh.size_term_d_a(a, z2[k], bg, i, x)
            d = d_ions.setdefault(size_key, np.zeros(shape + z2.shape))
            d[:, :, k] += da_ln
            d_phi[size_key] = d_phi.get(size_key, np.zeros(shape)) + frac[:, k] * da_phi
        if lin_key in wrt:
            d = d_ions.setdefault(lin_key, np.zeros(shape + z2.shape))
            d[:, :, k] += LN10 * i
            d_phi[lin_key] = d_phi.get(lin_key, np.zeros(shape)) + frac[:, k] * LN10 * i / 2.0
    return ln_ions, d_ions, phi, d_phi


def _defect(composition, values, dh, sizes, linear) -> float:
    """The cross-differential defect of ln gamma_i = f_i(I), exactly: with I_k the ionic strength
    of salt k at 1 mol/kg and G_j = sum over the ions of salt j of nu_i f_i'(I),
    nu_j d ln gamma±_j/d m_k = I_k G_j, so the defect between salts j and k is
    |I_k G_j - I_j G_k|; f_i' = z_i^2 d/dI[-A sqrt(I)/(1 + B a_i sqrt(I))] + ln 10 b_i. The
    largest over the rows and every two salts (plus 1e-6 of itself for rounding)."""
    i = composition.ionic_strength
    s = np.sqrt(i)
    names = composition.names
    slope = {}
    for n, ion in enumerate(composition.ions):
        x = dh.b_gamma_per_angstrom * float(values[sizes[n]]) * s
        slope[names[n]] = (-dh.a_gamma * ion.charge**2 / (2.0 * s * (1.0 + x) ** 2)
                           + LN10 * float(values[linear[n]]))
    salts = composition.salts
    g = {e.name: e.nu_cation * slope[e.cation.name] + e.nu_anion * slope[e.anion.name]
         for e in salts}
    worst = 0.0
    for n, j in enumerate(salts):
        for k in salts[n + 1:]:
            gap = np.abs(k.ionic_strength(1.0) * g[j.name] - j.ionic_strength(1.0) * g[k.name])
            worst = max(worst, float(np.max(gap)))
    return worst * (1.0 + 1e-6)


class TruesdellJones(MixtureRuleModel):
    id = "truesdell-jones"
    stacks_parameter_sets = True
    single_ion_convention = CONVENTION
    mixture_computes = _MIXTURE_COMPUTES
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

    def mixing_rule_defect(self, composition, values, dh):
        names = composition.names
        return _defect(composition, values, dh, [ParameterKey("a", (n,)) for n in names],
                       [ParameterKey("b", (n,)) for n in names])

    def ion_terms(self, request) -> IonTerms:
        names = request.composition.names
        return _ionic_strength_terms(request, [ParameterKey("a", (n,)) for n in names],
                                     [ParameterKey("b", (n,)) for n in names])


class BDot(MixtureRuleModel):
    id = "b-dot"
    stacks_parameter_sets = True
    single_ion_convention = CONVENTION
    mixture_computes = _MIXTURE_COMPUTES
    name = "b-dot (Helgeson)"
    citation = "H. C. Helgeson, Am. J. Sci. 267, 729-804 (1969)"
    # One å and one b-dot for a whole solution ("model"-wide keys), as Helgeson used them.
    parameters = (
        Parameter("a", "å", default=4.0, description="ion-size parameter", belongs_to="model",
                  **_A_SIZE),
        Parameter("b_dot", "ḃ", default=0.041, belongs_to="model",
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

    def values_and_jacobian(self, m, params, ctx):
        """ln gamma±, phi and the derivatives in ``ctx.wrt`` (all without it) from one pass over
        the shared terms, by the expressions of the three functions above: a fit asks for all
        three at each step, and for the design in b-dot only its (cheap) column."""
        e, i, s, x, lin = self._parts(m, params, ctx)
        ln_g = dh.size_term(ctx.dh.a_gamma, e.zz, s, x) + lin * i
        phi = 1.0 + dh.size_term_osmotic(ctx.dh.a_gamma, e.zz, s, x) + lin * i / 2.0
        d_ln, d_phi = {}, {}
        if ctx.wrt is None or "a" in ctx.wrt:
            d_ln["a"], d_phi["a"] = dh.size_term_d_a(ctx.dh.a_gamma, e.zz,
                                                     ctx.dh.b_gamma_per_angstrom, i, x)
        if ctx.wrt is None or "b_dot" in ctx.wrt:
            d_ln["b_dot"], d_phi["b_dot"] = LN10 * i, LN10 * i / 2.0
        return ln_g, phi, d_ln, d_phi

    def mixing_rule_defect(self, composition, values, dh):
        # With one å the size term is an ionic-strength model; b-dot I adds ln 10 b-dot I_k to
        # d ln gamma±_j/d m_k of every salt, so the defect between salts j and k is
        # ln 10 |b-dot| |nu_j I_k - nu_k I_j| (0.566 kg/mol in NaCl + MgSO4 at b-dot = 0.041).
        k = len(composition.names)
        return _defect(composition, values, dh, [ParameterKey("a")] * k,
                       [ParameterKey("b_dot")] * k)

    def ion_terms(self, request) -> IonTerms:
        k = len(request.composition.names)
        return _ionic_strength_terms(request, [ParameterKey("a")] * k, [ParameterKey("b_dot")] * k)


@hookimpl
def register_models(context):
    return [TruesdellJones(), BDot()]
