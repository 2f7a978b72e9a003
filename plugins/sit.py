"""Specific ion interaction theory (SIT), for solutions of one or more salts.

Brønsted, J. Am. Chem. Soc. 44, 877 (1922); Scatchard, Chem. Rev. 19, 309 (1936); Guggenheim,
Phil. Mag. 19, 588 (1935); in the form of Ciavatta, Ann. Chim. (Rome) 70, 551 (1980) and of the
NEA TDB reviews (Grenthe, Fuger et al., Chemical Thermodynamics of Uranium, 1992, appendix B):

    log10 gamma_i = -z_i^2 D + sum_j eps(i, j) m_j,     D = A sqrt(I) / (1 + 1.5 sqrt(I))

with A on the decadic basis and 1.5 (kg/mol)^1/2 the value of B a fixed at all temperatures. For
one salt the cation sees nu- m anions and the anion nu+ m cations, so

    log10 gamma± = -|z+ z-| D + eps (2 nu+ nu- / nu) m.

Osmotic coefficient (derived here through Gibbs-Duhem; D has the form of the ion-size term with
x = 1.5 sqrt(I), hence Robinson and Stokes' sigma function):

    phi - 1 = ln 10 [ -|z+ z-| (A / 3) sqrt(I) sigma(1.5 sqrt(I)) + eps (nu+ nu- / nu) m ].

Evaluated on the natural-log basis; eps is declared in kg/mol on the decadic basis as published,
one value per cation-anion pair (pairs of like charge have none in SIT). For solutions of several
salts see :mod:`saltbench.plugins._ionic`, of which these are the one-salt forms.
"""

from __future__ import annotations

import math

from saltbench.models import Parameter, Validity, hookimpl
from saltbench.models.contract import ParameterKey
from saltbench.plugins._ionic import IonicStrengthModel, size_g

LN10 = math.log(10.0)
SIT_BA = 1.5  # (kg/mol)^1/2, B a of the SIT Debye-Hückel term at all temperatures


class SIT(IonicStrengthModel):
    id = "sit"
    name = "Specific ion interaction theory (SIT)"
    citation = ("I. Grenthe, J. Fuger, R. J. M. Konings et al., Chemical Thermodynamics of "
                "Uranium, NEA/OECD, North-Holland, 1992, appendix B; L. Ciavatta, Ann. Chim. "
                "(Rome) 70, 551-567 (1980)")
    parameters = (
        Parameter("eps", "ε", "kg/mol", 0.0, lower=-1.0, upper=1.0, linear=True,
                  belongs_to="pair",
                  description="ion interaction coefficient eps(cation, anion), decadic basis"),
    )
    validity = Validity(max_ionic_strength=3.5,
                        note="from memory of Grenthe et al. (1992): I up to about 3.5 mol/kg")
    pair_scale = LN10

    def g_terms(self, request, i, s):
        return size_g(request.conditions.a_gamma, s, SIT_BA * s) + ({},)

    def pair_terms(self, request):
        comp = request.composition
        cations = [ion.name for ion in comp.ions if ion.charge > 0]
        anions = [ion.name for ion in comp.ions if ion.charge < 0]
        out = {}
        for c in cations:
            for a in anions:
                key = ParameterKey("eps", (c, a))
                out[(c, a)] = (LN10 * request.value(key), key)
        return out


@hookimpl
def register_models(context):
    return [SIT()]
