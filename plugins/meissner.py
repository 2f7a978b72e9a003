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

Mixtures: the Kusik-Meissner mixing rule (Kusik and Meissner 1978, from memory of the paper;
Meissner and Kusik 1972 for its origin; verify against the original before relying on it). For
cation 1 and anion 2 in a solution of cations 1, 3, 5... and anions 2, 4, 6...:

    log10 Gamma_12 = z1/(z1 + z2) [Y_2 log10 Gamma°_12 + Y_4 log10 Gamma°_14 + ...]
                   + z2/(z1 + z2) [X_1 log10 Gamma°_12 + X_3 log10 Gamma°_32 + ...],

charges as magnitudes, Gamma°_ij the reduced coefficient of salt ij alone (its own q, key
``q[cation/anion]``) at the ionic strength I of the mixture, and X_i = m_i z_i^2 / sum over
cations of m z^2, Y_j = m_j z_j^2 / sum over anions of m z^2 the ionic-strength fractions among
the cations and among the anions. (We normalise each bracket's fractions to sum to one, the
reading under which the rule gives back one salt alone; whether the paper writes them over the
cations' and anions' shares or over the total I is from memory and to be verified.) Then
ln gamma±_12 = |z1 z2| ln Gamma_12.

Every such mean is exactly the stoichiometric mean (nu1 ln gamma_1 + nu2 ln gamma_2)/nu of
        ln gamma_c = z_c^2 sum_a Y_a ln Gamma°_ca(I),   ln gamma_a = z_a^2 sum_c X_c ln Gamma°_ca(I),
(because nu1/nu = z2/(z1 + z2)); the model uses these ion-wise values internally and offers only
the means, since the rule is not published as a single-ion convention. The osmotic coefficient
of a mixture is their Gibbs-Duhem integral along the mixture's dilution path (fractions fixed,
see :mod:`saltbench.plugins._mixing`):

    phi - 1 = sum_c sum_a m_c z_c^2 m_a z_a^2 (1/S_a + 1/S_c) (phi°_ca(I) - 1) / |z_c z_a| / sum_i m_i

with S_c, S_a the sums of m z^2 over cations and anions, phi°_ca(I) the osmotic coefficient of
salt ca alone at the mixture's I (its one-salt Gibbs-Duhem integral, by the harness's
Gauss-Legendre rule). For one salt this is phi° itself. The rule is not the derivative of one
excess Gibbs energy: with one q for every pair it is an ionic-strength model (exact); with
different q per pair the cross-differential identity fails (measured in
``tests/test_mixture_rules.py``), so the phi above holds along the dilution path only. Symmetric
in exchanging the labels of two salts by construction (sums over ions). Mixtures get no
analytic derivatives in q (the harness differences them).
"""

from __future__ import annotations

import numpy as np

from saltbench.chemistry.gibbs_duhem import dilution_weights, unit_nodes
from saltbench.models import Parameter, Validity, hookimpl
from saltbench.models.contract import ParameterKey
from saltbench.plugins._mixing import IonTerms, MixtureRuleModel, ions_by_sign


def ln_reduced(i, s, q, a_gamma):
    """ln Gamma, the reduced activity coefficient of Kusik and Meissner's form, at ionic
    strength ``i`` (sqrt ``s``) for Meissner's ``q``; arrays broadcast together."""
    b = 0.75 - 0.065 * q
    c = 1.0 + 0.055 * q * np.exp(-0.023 * i**3)
    # expm1/log1p keep the first term accurate where it is of order 1e-7 at high dilution.
    first = np.log1p(b * np.expm1(q * np.log1p(0.1 * i)))
    ln_gamma_star = -a_gamma * s / (1.0 + c * s)
    return first + ln_gamma_star


class Meissner(MixtureRuleModel):
    id = "meissner"
    stacks_parameter_sets = True
    name = "Meissner (Kusik-Meissner form)"
    citation = ("H. P. Meissner and C. L. Kusik, AIChE J. 18, 294-298 (1972); C. L. Kusik and "
                "H. P. Meissner, AIChE Symp. Ser. 74 (173), 14-20 (1978)")
    parameters = (
        Parameter("q", "q", "1", 2.0, lower=-3.0, upper=11.0, belongs_to="pair",
                  description="Meissner's q, one per salt"),
    )
    validity = Validity(max_ionic_strength=20.0,
                        note="from memory of Kusik and Meissner (1978): to I of about 20 mol/kg")

    mixture_computes = frozenset({"ln_gamma_pm", "osmotic", "water_activity"})

    def ln_gamma_pm(self, m, params, ctx):
        e = ctx.electrolyte
        i = e.ionic_strength(m)
        return e.zz * ln_reduced(i, np.sqrt(i), params["q"], ctx.dh.a_gamma)

    def ion_terms(self, request) -> IonTerms:
        comp = request.composition
        m, z2 = comp.molality, comp.charges**2
        i = comp.ionic_strength
        s = np.sqrt(i)
        a = request.conditions.a_gamma
        u, _ = unit_nodes()
        weights = dilution_weights()
        path_i = i[:, None] * u**2  # (N, nodes): the dilution path of each solution
        path_s, path_a = np.sqrt(path_i), a[:, None]
        shares = m * z2  # m z^2 of each ion
        cations, anions = ions_by_sign(comp)
        s_c = shares[:, cations].sum(axis=1)
        s_a = shares[:, anions].sum(axis=1)
        shape = (request.n_sets, comp.n)
        ln_ions = np.zeros(shape + z2.shape)
        excess = np.zeros(shape)
        for jc in cations:
            for ja in anions:
                q = request.value(ParameterKey("q", (comp.names[jc], comp.names[ja])))
                ln_g = np.broadcast_to(ln_reduced(i, s, q, a), shape)
                along = ln_reduced(path_i, path_s, q[:, :, None], path_a) @ weights
                ln_ions[:, :, jc] += z2[jc] * (shares[:, ja] / s_a) * ln_g
                ln_ions[:, :, ja] += z2[ja] * (shares[:, jc] / s_c) * ln_g
                # ln Gamma° - its dilution integral = (phi°_ca - 1) / |z_c z_a|
                excess += shares[:, jc] * shares[:, ja] * (1.0 / s_a + 1.0 / s_c) * (ln_g - along)
        phi = 1.0 + excess / m.sum(axis=1)
        return ln_ions, {}, phi, {}


@hookimpl
def register_models(context):
    return [Meissner()]
