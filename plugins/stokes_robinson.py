"""Stokes and Robinson's hydration equation (J. Am. Chem. Soc. 70, 1870-1878 (1948)).

    ln gamma± = -A |z+ z-| sqrt(I) / (1 + B a sqrt(I)) - (h / nu) ln a_w - ln(1 + M_w (nu - h) m)

with h the hydration number of the salt, a the ion size and M_w the molar mass of water (the
paper prints 0.018 kg/mol; we use saltbench.water.MOLAR_MASS_WATER). Stokes and Robinson put the
measured water activity into the equation. Here a_w is the model's own: a_w = exp(-nu m M_w phi)
with phi the model's osmotic coefficient, so that the model is thermodynamically consistent
without outside data. Then -(h/nu) ln a_w = h M_w m phi, and Gibbs-Duhem,
d[m (phi - 1)]/dm = m d ln gamma± / dm, becomes a linear equation for psi = m phi:

    psi' (1 - r m) = 1 + m f'(m) - p m / (1 + p m),     p = M_w (nu - h),  r = h M_w,

f being the Debye-Hückel term. Integrating from 0 (derived here; not in the 1948 paper):

    m phi = ln[(1 + p m) / (1 - r m)] / (M_w nu) + int_0^m m' f'(m') / (1 - r m') dm',
    int_0^m ... = -A |z+ z-| sqrt(I) m int_0^1 u^2 / ((1 + x u)^2 (1 - r m u^2)) du,

x = B a sqrt(I), which is evaluated by 64-point Gauss-Legendre quadrature (smooth in u for
r m < 1), and adaptively where r m > 0.9 (its peak at u = 1 grows as 1/(1 - r m)). No
iteration is needed. The equation has no meaning once r m >= 1 (all the water bound as
hydration) or p m <= -1; there the model raises a domain error.
"""

from __future__ import annotations

import numpy as np

from saltbench.chemistry.gibbs_duhem import unit_nodes
from saltbench.errors import ModelDomainError
from saltbench.models import ActivityModel, Parameter, Validity, hookimpl
from saltbench.models import dh_terms as dh
from saltbench.water import MOLAR_MASS_WATER

_U, _W = unit_nodes()  # Gauss-Legendre on [0, 1]
#: Above this r m the integrand's peak near u = 1 (height 1/(1 - r m)) is too narrow for the 64
#: fixed nodes (at r m = 0.9987 they are off by 2e-5 in phi); there an adaptive quadrature
#: (scipy.integrate.quad) takes over, row by row.
_NEAR_BOUND = 0.9


def _adaptive(x: float, c: float) -> float:
    """int_0^1 u^2 / ((1 + x u)^2 (1 - c u^2)) du by adaptive quadrature, for c near 1."""
    from scipy.integrate import quad

    value, _ = quad(lambda u: u * u / ((1.0 + x * u) ** 2 * (1.0 - c * u * u)), 0.0, 1.0,
                    epsabs=1e-14, epsrel=1e-13, limit=200)
    return value


class StokesRobinson(ActivityModel):
    id = "stokes-robinson"
    name = "Stokes-Robinson hydration"
    citation = "R. H. Stokes and R. A. Robinson, J. Am. Chem. Soc. 70, 1870-1878 (1948)"
    # Stokes and Robinson treated 1-1, 2-1 and 3-1 salts; 2-2 salts associate (from memory of
    # Robinson and Stokes, Electrolyte Solutions, 1959, ch. 9).
    charge_types = frozenset({(1, 1), (2, 1), (1, 2), (3, 1)})
    parameters = (
        Parameter("h", "h", "1", 3.5, lower=0.0, upper=25.0,
                  description="hydration number of the salt (water molecules per formula unit)"),
        Parameter("a", "a", "Å", 4.0, lower=0.0, upper=20.0, description="ion-size parameter"),
    )
    validity = Validity(max_molality=4.0,
                        note="from memory of Stokes and Robinson (1948): fits to about 4 mol/kg")

    def _phi(self, m, params, ctx):
        e = ctx.electrolyte
        m = np.asarray(m, dtype=float)
        h, mw = params["h"], MOLAR_MASS_WATER
        p, r = mw * (e.nu - h), h * mw
        if np.any(r * m >= 1.0) or np.any(p * m <= -1.0):
            raise ModelDomainError(
                f"Stokes-Robinson with h = {h:g} is undefined above m = {1.0 / r if r else np.inf:.3g}"
                " mol/kg (the hydration would bind more water than there is)")
        i = e.ionic_strength(m)
        s = np.sqrt(i)
        x = ctx.dh.b_gamma_per_angstrom * params["a"] * s
        u = _U[None, :]
        integrand = u**2 / ((1.0 + x[:, None] * u) ** 2 * (1.0 - r * m[:, None] * u**2))
        integral = integrand @ _W
        near = r * m > _NEAR_BOUND
        if near.any():
            integral[near] = [_adaptive(float(xk), float(ck)) for xk, ck in zip(x[near], r * m[near])]
        q = -ctx.dh.a_gamma * e.zz * s * integral  # = (1/m) int_0^m m' f' /(1 - r m')
        mixing = (np.log1p(p * m) - np.log1p(-r * m)) / (mw * e.nu * m)
        return mixing + q, s, x

    def osmotic(self, m, params, ctx):
        return self._phi(m, params, ctx)[0]

    def ln_gamma_pm(self, m, params, ctx):
        e = ctx.electrolyte
        m = np.asarray(m, dtype=float)
        phi, s, x = self._phi(m, params, ctx)
        h, mw = params["h"], MOLAR_MASS_WATER
        return (dh.size_term(ctx.dh.a_gamma, e.zz, s, x) + h * mw * m * phi
                - np.log1p(mw * (e.nu - h) * m))


@hookimpl
def register_models(context):
    return [StokesRobinson()]
