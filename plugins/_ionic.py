"""Models of ionic strength and ion pairs, for solutions of any number of salts.

For the models here every ion's activity coefficient is

    ln gamma_i = z_i^2 g(I) + sum_k lambda_ik m_k,

with one function g of ionic strength shared by all ions (the Debye-Hückel part) and lambda_ik
a coefficient for each pair of ions of opposite charge (zero unless the model has one;
lambda_ik = lambda_ki). This is the derivative with respect to m_i of an excess Gibbs energy per
kilogram of water, G_ex / (R T w_w) = 2 int_0^I g dI' + sum_c sum_a lambda_ca m_c m_a, so the
cross-differential identity d ln gamma_i / d m_k = d ln gamma_k / d m_i holds and the osmotic
coefficient follows as phi - 1 = (sum_i m_i ln gamma_i - G_ex/(R T w_w)) / sum_i m_i:

    phi - 1 = [2 I (g - gbar) + sum_c sum_a lambda_ca m_c m_a] / sum_i m_i,
    gbar = (1/I) int_0^I g dI'

(the excess Gibbs energy route to phi, e.g. Robinson and Stokes, Electrolyte Solutions, 2nd ed.,
1959, ch. 2; Guggenheim and Turgeon, Trans. Faraday Soc. 51, 747 (1955) for the pair sum). For
one salt 2 I / sum_i m_i = |z+ z-|, and these reduce to the one-salt forms of each model. The
mean of a neutral salt is ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu, and
ln a_w = -M_w phi sum_i m_i.
"""

from __future__ import annotations

import numpy as np

from saltbench.models import dh_terms as dh
from saltbench.models.assemble import assemble
from saltbench.models.contract import Computed, ParameterKey, Request, SolutionModel

#: The convention the single-ion values of these models rest on: each ion's value is the
#: model's own ionic-strength form (Guggenheim, J. Phys. Chem. 33, 842 (1929)).
CONVENTION = "the model's own single-ion form (non-thermodynamic; only means are measurable)"

Terms = tuple[np.ndarray, np.ndarray, dict[ParameterKey, tuple[np.ndarray, np.ndarray]]]


class IonicStrengthModel(SolutionModel):
    """Base of the models above: subclasses give g(I) and, where they have them, lambda_ca."""

    mixtures = True
    computes = frozenset({"ln_gamma", "ln_gamma_pm", "osmotic", "water_activity"})
    single_ion_convention = CONVENTION

    def g_terms(self, request: Request, i: np.ndarray, s: np.ndarray) -> Terms:
        """(g, g - gbar, {key: (d g / d p, d (g - gbar) / d p)}) as arrays (S, N)."""
        raise NotImplementedError

    def pair_terms(self, request: Request) -> dict[tuple[str, str], tuple[np.ndarray, ParameterKey]]:
        """lambda_ca (S, 1) or (S, N) on the natural-log basis for each (cation, anion) pair
        with one, and the key d lambda / d key = ``scale`` belongs to (see ``pair_scale``)."""
        return {}

    pair_scale = 1.0  # d lambda_ca / d (its parameter)

    def compute(self, request: Request) -> Computed:
        comp = request.composition
        m = comp.molality  # (N, K)
        i = comp.ionic_strength
        s = np.sqrt(i)
        z2 = comp.charges**2
        total = m.sum(axis=1)
        g, excess, dg = self.g_terms(request, i, s)
        n_sets = request.n_sets
        shape = (n_sets, comp.n)
        g = np.broadcast_to(g, shape)
        # ln gamma of every ion: (S, N, K)
        ln_ions = g[:, :, None] * z2[None, None, :]
        osm = 1.0 + 2.0 * i * np.broadcast_to(excess, shape) / total
        wrt = set(request.wrt)
        d_ions: dict[ParameterKey, np.ndarray] = {}
        d_osm: dict[ParameterKey, np.ndarray] = {}
        for key, (d_g, d_ex) in dg.items():
            if key in wrt:
                d_ions[key] = np.broadcast_to(d_g, shape)[:, :, None] * z2[None, None, :]
                d_osm[key] = 2.0 * i * np.broadcast_to(d_ex, shape) / total
        pairs = self.pair_terms(request)
        if pairs:
            ln_ions = ln_ions.copy()
            for (c, a), (lam, key) in pairs.items():
                ic, ia = comp.index(c), comp.index(a)
                lam = np.broadcast_to(lam, shape)
                ln_ions[:, :, ic] += lam * m[:, ia]
                ln_ions[:, :, ia] += lam * m[:, ic]
                osm = osm + lam * m[:, ic] * m[:, ia] / total
                if key in wrt:
                    d = np.zeros(shape + (len(comp.ions),))
                    d[:, :, ic] = self.pair_scale * m[:, ia]
                    d[:, :, ia] = self.pair_scale * m[:, ic]
                    d_ions[key] = d_ions.get(key, 0.0) + d
                    d_osm[key] = d_osm.get(key, 0.0) + np.broadcast_to(
                        self.pair_scale * m[:, ic] * m[:, ia] / total, shape)
        return assemble(request, ln_ions, d_ions, osm, d_osm)


def size_g(a_gamma: np.ndarray, s: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """g and g - gbar of the ion-size term -A sqrt(I) / (1 + x), x proportional to sqrt(I)."""
    return dh.size_term(a_gamma, 1.0, s, x), dh.size_term_osmotic(a_gamma, 1.0, s, x)
