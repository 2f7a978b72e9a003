"""Specific ion interaction theory (SIT) for a single salt.

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

Evaluated on the natural-log basis; eps is declared in kg/mol on the decadic basis as published.
"""

from __future__ import annotations

import math

import numpy as np

from saltbench.models import ActivityModel, Parameter, Validity, hookimpl
from saltbench.plugins import _dh_terms as dh

LN10 = math.log(10.0)
SIT_BA = 1.5  # (kg/mol)^1/2, B a of the SIT Debye-Hückel term at all temperatures


class SIT(ActivityModel):
    id = "sit"
    name = "Specific ion interaction theory (SIT)"
    citation = ("I. Grenthe, J. Fuger, R. J. M. Konings et al., Chemical Thermodynamics of "
                "Uranium, NEA/OECD, North-Holland, 1992, appendix B; L. Ciavatta, Ann. Chim. "
                "(Rome) 70, 551-567 (1980)")
    parameters = (
        Parameter("eps", "ε", "kg/mol", 0.0, lower=-1.0, upper=1.0, linear=True,
                  description="ion interaction coefficient eps(cation, anion), decadic basis"),
    )
    validity = Validity(max_ionic_strength=3.5,
                        note="from memory of Grenthe et al. (1992): I up to about 3.5 mol/kg")

    def _parts(self, m, params, ctx):
        e = ctx.electrolyte
        s = np.sqrt(e.ionic_strength(m))
        k = e.nu_cation * e.nu_anion / e.nu
        return e, s, SIT_BA * s, k * np.asarray(m, dtype=float)

    def ln_gamma_pm(self, m, params, ctx):
        e, s, x, km = self._parts(m, params, ctx)
        return dh.size_term(ctx.dh.a_gamma, e.zz, s, x) + LN10 * params["eps"] * 2.0 * km

    def osmotic(self, m, params, ctx):
        e, s, x, km = self._parts(m, params, ctx)
        return 1.0 + dh.size_term_osmotic(ctx.dh.a_gamma, e.zz, s, x) + LN10 * params["eps"] * km

    def ln_gamma_ions(self, m, params, ctx):
        e, s, x, _ = self._parts(m, params, ctx)
        m = np.asarray(m, dtype=float)
        eps = LN10 * params["eps"]
        return {"cation": dh.size_term(ctx.dh.a_gamma, e.z_cation**2, s, x) + eps * e.nu_anion * m,
                "anion": dh.size_term(ctx.dh.a_gamma, e.z_anion**2, s, x) + eps * e.nu_cation * m}

    def jacobian(self, m, params, ctx):
        _, _, _, km = self._parts(m, params, ctx)
        return {"eps": 2.0 * LN10 * km}, {"eps": LN10 * km}


@hookimpl
def register_models(context):
    return [SIT()]
