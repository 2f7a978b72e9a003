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

Mixtures (Bromley 1973, the multicomponent equations; from memory of the paper, verify the
equation numbers against the original). For ion i in a solution of several salts

    log10 gamma_i = -A z_i^2 sqrt(I) / (1 + sqrt(I)) + F_i,
    F_i = sum over the ions j of opposite charge of  Bdot_ij Z_ij^2 m_j,
    Bdot_ij = (0.06 + 0.6 B_ij) |z_i z_j| / (1 + 1.5 I / |z_i z_j|)^2 + B_ij,
    Z_ij = (|z_i| + |z_j|) / 2,

with B_ij the one-salt B of the pair (``B[cation/anion]``, so the bundled per-salt set supplies
each pair). Bromley's mean, log10 gamma±_12 = -A |z1 z2| sqrt(I)/(1 + sqrt(I))
+ |z1 z2|/(|z1| + |z2|) (F_1/|z1| + F_2/|z2|), is exactly the stoichiometric mean
(nu1 log gamma_1 + nu2 log gamma_2)/nu of these single-ion values (nu1/nu = |z2|/(|z1| + |z2|)),
so the model gives both; for one salt F_1/|z1| + F_2/|z2| collapses to Bdot I and the one-salt
equation above returns. The single-ion values rest on Bromley's own form (non-thermodynamic).

The osmotic coefficient of a mixture is the Gibbs-Duhem integral of these ln gamma_i along the
mixture's dilution path (see :mod:`saltbench.plugins._mixing`), in closed form: for each
cation-anion pair the one-salt osmotic partner of each term,

    phi - 1 = [2 I (g - gbar) + 2 ln 10 sum_c sum_a Z_ca^2 m_c m_a
               ((0.06 + 0.6 B_ca) |z_c z_a| psi_ca(I) + B_ca / 2)] / sum_i m_i,

g = -A sqrt(I)/(1 + sqrt(I)) its Debye-Hückel part, psi_ca(I) = 1/(1 + y)^2 -
(ln(1 + y) + 1/(1 + y) - 1)/y^2 with y = 1.5 I/|z_c z_a|. This is the structure of Bromley's
own mixture osmotic equation (pair terms of the one-salt phi, from memory of the paper) and it
reduces exactly to the one-salt phi above. The rule is not the derivative of one excess Gibbs
energy: Bdot_ij depends on I through 1.5/|z_i z_j|, so d ln gamma_i/d m_k (through I) and
d ln gamma_k/d m_i differ wherever pairs of different charge products meet (a 1-1 + 2-2
mixture); with one charge product throughout (NaCl + KCl) the defect is only that of unequal
B. The measured defects are in ``tests/test_mixture_rules.py`` and in ``mixing_rule_defect``.
"""

from __future__ import annotations

import math

import numpy as np

from saltbench.models import Parameter, Validity, hookimpl
from saltbench.models import dh_terms as dh
from saltbench.models.contract import ParameterKey
from saltbench.plugins._mixing import IonTerms, MixtureRuleModel, ions_by_sign

LN10 = math.log(10.0)
_VALIDITY = Validity(max_ionic_strength=6.0,
                     note="from memory of Bromley (1973): I up to about 6 mol/kg")
_CITATION = "L. A. Bromley, AIChE J. 19, 313-320 (1973)"
_BROMLEY_CONVENTION = "Bromley's own single-ion form (1973; non-thermodynamic)"
DEFECT_PER_MIDDLE_TERM = 1.8  # kg/mol per unit of 0.06 + 0.6 B; see Bromley.mixing_rule_defect


class Bromley(MixtureRuleModel):
    id = "bromley"
    name = "Bromley"
    citation = _CITATION
    single_ion_convention = _BROMLEY_CONVENTION
    mixture_computes = frozenset({"ln_gamma", "ln_gamma_pm", "osmotic", "water_activity"})

    def mixing_rule_defect(self, composition, values, dh):
        # Only the middle term breaks the identity (the B I term is a symmetric pair sum), and it
        # is proportional to 0.06 + 0.6 B: the defect is DEFECT_PER_MIDDLE_TERM times the largest
        # |0.06 + 0.6 B| of the pairs, measured on the contract kit's test mixtures (1.783 kg/mol
        # in NaCl + MgSO4: 0.1605 at the default B = 0.05, -2.201 against -2.041 at I = 0.31;
        # 0.0799 in NaCl + CaCl2 + Na2SO4; 1e-11 in NaCl + KCl). Not a bound for other mixtures.
        cations = [i.name for i in composition.ions if i.charge > 0]
        anions = [i.name for i in composition.ions if i.charge < 0]
        b = [self._pair_b_value(values, c, a) for c in cations for a in anions]
        return DEFECT_PER_MIDDLE_TERM * max(abs(0.06 + 0.6 * v) for v in b)

    def _pair_b_value(self, values, cation: str, anion: str) -> float:
        return float(values[ParameterKey("B", (cation, anion))])
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

    def ln_gamma_ions(self, m, params, ctx):
        # Bromley's F_i for one salt: the cation sees nu- m anions, the anion nu+ m cations.
        e = ctx.electrolyte
        i = e.ionic_strength(m)
        s = np.sqrt(i)
        b = self._b(params)
        bdot = (0.06 + 0.6 * b) * e.zz / (1.0 + 1.5 * i / e.zz) ** 2 + b
        zbar2 = ((abs(e.z_cation) + abs(e.z_anion)) / 2.0) ** 2
        a = ctx.dh.a_gamma
        return {"cation": dh.size_term(a, e.z_cation**2, s, s) + LN10 * bdot * zbar2 * e.nu_anion * m,
                "anion": dh.size_term(a, e.z_anion**2, s, s) + LN10 * bdot * zbar2 * e.nu_cation * m}

    def _pair_b(self, request, cation: str, anion: str):
        """B of one cation-anion pair (S, 1) or (S, N), and d B / d key for its keys."""
        key = ParameterKey("B", (cation, anion))
        return request.value(key), {key: 1.0}

    def ion_terms(self, request) -> IonTerms:
        comp = request.composition
        m, z = comp.molality, comp.charges
        i = comp.ionic_strength
        s = np.sqrt(i)
        total = m.sum(axis=1)
        shape = (request.n_sets, comp.n)
        a = request.conditions.a_gamma
        ln_ions = np.empty(shape + z.shape)
        ln_ions[...] = (dh.size_term(a, 1.0, s, s)[:, None] * z**2)[None]
        phi = np.empty(shape)
        phi[...] = 1.0 + 2.0 * i * dh.size_term_osmotic(a, 1.0, s, s) / total
        wrt = set(request.wrt)
        d_ions: dict = {}
        d_phi: dict = {}
        cations, anions = ions_by_sign(comp)
        for jc in cations:
            for ja in anions:
                zz = abs(z[jc] * z[ja])
                zbar2 = ((abs(z[jc]) + abs(z[ja])) / 2.0) ** 2
                shape_ln, shape_phi = dh.bromley_shape(i, 1.5 / zz)
                per_ln, per_phi = shape_ln / i, shape_phi / i
                b, chain = self._pair_b(request, comp.names[jc], comp.names[ja])
                mc, ma = m[:, jc], m[:, ja]
                lam = LN10 * zbar2 * ((0.06 + 0.6 * b) * zz * per_ln + b)
                ln_ions[:, :, jc] += lam * ma
                ln_ions[:, :, ja] += lam * mc
                pair_phi = 2.0 * LN10 * zbar2 * mc * ma / total
                phi += pair_phi * ((0.06 + 0.6 * b) * zz * per_phi + b / 2.0)
                if not wrt.intersection(chain):
                    continue
                d_lam = LN10 * zbar2 * (0.6 * zz * per_ln + 1.0)
                d_pair_phi = pair_phi * (0.6 * zz * per_phi + 0.5)
                for key, factor in chain.items():
                    if key in wrt:
                        d = d_ions.setdefault(key, np.zeros(shape + z.shape))
                        d[:, :, jc] += factor * d_lam * ma
                        d[:, :, ja] += factor * d_lam * mc
                        d_phi[key] = d_phi.get(key, np.zeros(shape)) + factor * d_pair_phi
        return ln_ions, d_ions, phi, d_phi


class BromleyIons(Bromley):
    id = "bromley-ions"
    name = "Bromley (single-ion additivity)"

    def _pair_b_value(self, values, cation: str, anion: str) -> float:
        return float(values[ParameterKey("B", (cation,))] + values[ParameterKey("B", (anion,))]
                     + values[ParameterKey("delta", (cation,))]
                     * values[ParameterKey("delta", (anion,))])
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

    def _pair_b(self, request, cation: str, anion: str):
        # B = B+ + B- + delta+ delta- for each pair (Bromley 1973, single-ion additivity)
        bc, ba = ParameterKey("B", (cation,)), ParameterKey("B", (anion,))
        dc, da = ParameterKey("delta", (cation,)), ParameterKey("delta", (anion,))
        delta_c, delta_a = request.value(dc), request.value(da)
        b = request.value(bc) + request.value(ba) + delta_c * delta_a
        return b, {bc: 1.0, ba: 1.0, dc: delta_a, da: delta_c}


@hookimpl
def register_models(context):
    return [Bromley(), BromleyIons()]
