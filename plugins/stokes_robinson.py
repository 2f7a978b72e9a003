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
iteration is needed. The derivatives in h and a (``jacobian``) differentiate the same
integral under the integral sign, on the same nodes (c = r m, d/dh = M_w m d/dc, d/da = B sqrt(I)
d/dx); a fit needs no extra model calls for them. The equation has no meaning once r m >= 1
(all the water bound as hydration) or p m <= -1; there the model raises a domain error, or,
called with several parameter sets at once (``stacks_parameter_sets``), gives NaN in the rows of
the sets concerned.
"""

from __future__ import annotations

import numpy as np

from saltbench.chemistry.gibbs_duhem import unit_nodes
from saltbench.errors import ModelDomainError
from saltbench.models import ActivityModel, Parameter, Validity, hookimpl
from saltbench.models import dh_terms as dh
from saltbench.models.contract import stacked_sets
from saltbench.water import MOLAR_MASS_WATER

_U, _W = unit_nodes()  # Gauss-Legendre on [0, 1]
#: Above this r m the integrand's peak near u = 1 (height 1/(1 - r m)) is too narrow for the 64
#: fixed nodes (at r m = 0.9987 they are off by 2e-5 in phi); there an adaptive quadrature
#: (scipy.integrate.quad) takes over, row by row.
_NEAR_BOUND = 0.9


def _adaptive(x: float, c: float, power: tuple[int, int] = (2, 1), extra: int = 2) -> float:
    """int_0^1 u^extra / ((1 + x u)^power[0] (1 - c u^2)^power[1]) du by adaptive quadrature,
    for c near 1 (extra = 2, power = (2, 1) is the integral of phi; the others its derivatives)."""
    from scipy.integrate import quad

    px, pc = power
    value, _ = quad(lambda u: u**extra / ((1.0 + x * u) ** px * (1.0 - c * u * u) ** pc), 0.0, 1.0,
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

    stacks_parameter_sets = True

    def _phi(self, m, h, a, ctx, derivatives=False):
        """phi, sqrt(I), x and, with ``derivatives``, (d phi/d h, d phi/d a), for floats h and a
        or, from :meth:`_stacked`, arrays (S, 1) of them inside the domain."""
        e = ctx.electrolyte
        m = np.asarray(m, dtype=float)
        mw = MOLAR_MASS_WATER
        p, r = mw * (e.nu - h), h * mw
        if np.any(r * m >= 1.0) or np.any(p * m <= -1.0):
            raise ModelDomainError(
                f"Stokes-Robinson with h = {h:g} is undefined above m = {1.0 / r if r else np.inf:.3g}"
                " mol/kg (the hydration would bind more water than there is)")
        i = e.ionic_strength(m)
        s = np.sqrt(i)
        x = ctx.dh.b_gamma_per_angstrom * a * s
        u = _U[None, :]
        c = r * m
        if x.shape != c.shape:  # stacked sets in one of h and a only: both (S, N)
            x, c = np.broadcast_arrays(x, c)
        bind = 1.0 / (1.0 - c[..., None] * u**2)
        ion = 1.0 / (1.0 + x[..., None] * u)
        integrand = u**2 * ion**2 * bind
        integral = integrand @ _W
        # Element by element where the peak is narrow, for (N,) as for (S, N) (flat order).
        near = c > _NEAR_BOUND
        if near.any():
            integral[near] = [_adaptive(float(xk), float(ck)) for xk, ck in zip(x[near], c[near])]
        scale = -ctx.dh.a_gamma * e.zz * s
        q = scale * integral  # = (1/m) int_0^m m' f' /(1 - r m')
        mixing = (np.log1p(p * m) - np.log1p(-c)) / (mw * e.nu * m)
        if not derivatives:
            return mixing + q, s, x, None
        # d/dc and d/dx of the integral, on the same nodes (adaptive where the peak is narrow)
        by_c = (integrand * u**2 * bind) @ _W
        by_x = (-2.0 * integrand * u * ion) @ _W
        if near.any():
            by_c[near] = [_adaptive(float(xk), float(ck), (2, 2), 4) for xk, ck in zip(x[near], c[near])]
            by_x[near] = [-2.0 * _adaptive(float(xk), float(ck), (3, 1), 3)
                          for xk, ck in zip(x[near], c[near])]
        d_h = (1.0 / (1.0 - c) - 1.0 / (1.0 + p * m)) / e.nu + scale * by_c * mw * m
        d_a = scale * by_x * ctx.dh.b_gamma_per_angstrom * s
        return mixing + q, s, x, (d_h, d_a)

    def osmotic(self, m, params, ctx):
        if stacked_sets(params):
            return self._stacked(m, params, ctx, "phi")
        return self._phi(m, params["h"], params["a"], ctx)[0]

    def ln_gamma_pm(self, m, params, ctx):
        if stacked_sets(params):
            return self._stacked(m, params, ctx, "ln")
        return self._evaluate(m, params["h"], params["a"], ctx, False)[0]

    def jacobian(self, m, params, ctx):
        """Analytic derivatives in h and a (the integrals' derivatives on the same nodes)."""
        if stacked_sets(params):
            return self._stacked(m, params, ctx, "jacobian")
        return self._evaluate(m, params["h"], params["a"], ctx, True)[2:]

    def values_and_jacobian(self, m, params, ctx):
        if stacked_sets(params):
            return self._stacked(m, params, ctx, "all")
        return self._evaluate(m, params["h"], params["a"], ctx, True)

    def _stacked(self, m, params, ctx, what):
        """One of the functions above for S parameter sets, with NaN in place of a domain error:
        a set with r m >= 1 or p m <= -1 at any molality is computed with the stand-in h = 0
        (so nothing overflows or warns) and its row then set to NaN."""
        m = np.asarray(m, dtype=float)
        mw = MOLAR_MASS_WATER
        h = np.broadcast_to(np.asarray(params["h"], dtype=float), (stacked_sets(params), 1))
        outside = np.any((h * mw * m >= 1.0) | (mw * (ctx.electrolyte.nu - h) * m <= -1.0),
                         axis=1, keepdims=True)
        h = np.where(outside, 0.0, h)
        with np.errstate(all="ignore"):  # an ion size out of its bounds may still divide by 0
            if what == "phi":
                return _blank(self._phi(m, h, params["a"], ctx)[0], outside)
            out = self._evaluate(m, h, params["a"], ctx, what != "ln")
            return _blank(out[0] if what == "ln" else out[2:] if what == "jacobian" else out,
                          outside)

    def _evaluate(self, m, h, a, ctx, derivatives):
        e = ctx.electrolyte
        m = np.asarray(m, dtype=float)
        phi, s, x, d_phi = self._phi(m, h, a, ctx, derivatives)
        mw = MOLAR_MASS_WATER
        a_gamma = ctx.dh.a_gamma
        ln_g = dh.size_term(a_gamma, e.zz, s, x) + h * mw * m * phi - np.log1p(mw * (e.nu - h) * m)
        if d_phi is None:
            return ln_g, phi, {}, {}
        phi_h, phi_a = d_phi
        # d size_term / d a = A |z+ z-| s x_a / (1 + x)^2, x_a = B s
        size_a = a_gamma * e.zz * s * ctx.dh.b_gamma_per_angstrom * s / (1.0 + x) ** 2
        d_ln = {"h": mw * m * phi + h * mw * m * phi_h + mw * m / (1.0 + mw * (e.nu - h) * m),
                "a": size_a + h * mw * m * phi_a}
        d_os = {"h": phi_h, "a": phi_a}
        wrt = ctx.wrt
        if wrt is not None:
            d_ln = {k: v for k, v in d_ln.items() if k in wrt}
            d_os = {k: v for k, v in d_os.items() if k in wrt}
        return ln_g, phi, d_ln, d_os


def _blank(out, rows):
    """``out`` (an array, or tuples and dicts of them) with NaN in the ``rows`` (S, 1) marked."""
    if isinstance(out, dict):
        return {k: _blank(v, rows) for k, v in out.items()}
    if isinstance(out, tuple):
        return tuple(_blank(v, rows) for v in out)
    return np.where(rows, np.nan, out)


@hookimpl
def register_models(context):
    return [StokesRobinson()]
