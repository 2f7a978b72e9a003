"""Pitzer's equations for a solution of any number of cations and anions (no neutral species).

Sources: K. S. Pitzer, Activity Coefficients in Electrolyte Solutions, 2nd ed., CRC Press, 1991,
ch. 3 (the general mixture equations), in the form of C. E. Harvie, N. Møller and J. H. Weare,
Geochim. Cosmochim. Acta 48, 723 (1984), eqs. 1-7 and their appendix (equation numbers from
memory). M, c, c' run over cations, X, a, a' over anions, sums over c < c' and a < a' count each
pair once:

    ln gamma_M = z_M^2 F + sum_a m_a (2 B_Ma + Z C_Ma) + sum_c m_c (2 Phi_Mc + sum_a m_a psi_Mca)
                 + sum_a<a' m_a m_a' psi_Maa' + |z_M| sum_c sum_a m_c m_a C_ca
    ln gamma_X = z_X^2 F + sum_c m_c (2 B_cX + Z C_cX) + sum_a m_a (2 Phi_Xa + sum_c m_c psi_cXa)
                 + sum_c<c' m_c m_c' psi_cc'X + |z_X| sum_c sum_a m_c m_a C_ca
    F = -A_phi [sqrt(I)/(1 + b sqrt(I)) + (2/b) ln(1 + b sqrt(I))] + sum_c sum_a m_c m_a B'_ca
        + sum_c<c' m_c m_c' Phi'_cc' + sum_a<a' m_a m_a' Phi'_aa'
    sum_i m_i (phi - 1) = 2 [-A_phi I^1.5 / (1 + b sqrt(I)) + sum_c sum_a m_c m_a (B^phi_ca + Z C_ca)
        + sum_c<c' m_c m_c' (Phi^phi_cc' + sum_a m_a psi_cc'a)
        + sum_a<a' m_a m_a' (Phi^phi_aa' + sum_c m_c psi_caa')]

    B^phi = beta0 + beta1 e^-x1 + beta2 e^-x2,   B = beta0 + beta1 g(x1) + beta2 g(x2),
    B' = [beta1 g'(x1) + beta2 g'(x2)] / I,      x_k = alpha_k sqrt(I),
    g(x) = 2 [1 - (1 + x) e^-x] / x^2,           g'(x) = -2 [1 - (1 + x + x^2/2) e^-x] / x^2,
    C = C_phi / (2 sqrt|z_M z_X|),               Z = sum_i m_i |z_i|,
    Phi_ij = theta_ij + Etheta_ij,  Phi'_ij = Etheta'_ij,  Phi^phi_ij = theta_ij + Etheta_ij + I Etheta'_ij

with Etheta, Etheta' of :mod:`saltbench.plugins._etheta` (Pitzer 1975). All of beta0, beta1,
beta2, C_phi, theta and psi enter linearly, so their derivatives are the coefficient arrays below;
alpha1, alpha2 and b have their own. The water activity is ln a_w = -M_w phi sum_i m_i (IUPAC
Green Book, 3rd ed., 2007, 2.13); the mean of a neutral salt (nu+ ln gamma+ + nu- ln gamma-)/nu.

Single ions: the values above are the model's own (the split of the Debye-Hückel term F as
z_i^2 F), a non-thermodynamic convention; only means and the osmotic coefficient are measurable.
For one cation and one anion the equations are those of one salt (Pitzer 1991, ch. 3, eqs. 49-51).
"""

from __future__ import annotations

import numpy as np

from saltbench.models.contract import Computed, ParameterKey, Request
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, Quantity
from saltbench.plugins._etheta import etheta
from saltbench.water.properties import MOLAR_MASS_WATER, water_activity

_SERIES_BELOW = 1e-2  # x below which g, g' and their derivatives come from Taylor series
_LINEAR_PAIR = ("beta0", "beta1", "beta2", "C_phi")


def _g_terms(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(e^-x, g, g', dg/dx, dg'/dx) elementwise; Taylor series where x < 0.01 (the closed forms
    lose digits to cancellation there)."""
    e = np.exp(-x)
    small = x < _SERIES_BELOW
    xs = np.where(small, 1.0, x)
    es = np.where(small, np.exp(-1.0), e)
    g = 2.0 * (1.0 - (1.0 + xs) * es) / (xs * xs)
    gp = -2.0 * (1.0 - (1.0 + xs + 0.5 * xs * xs) * es) / (xs * xs)
    dg = 2.0 * es / xs - 2.0 * g / xs
    dgp = -es - 2.0 * gp / xs
    if np.any(small):
        # g = 1 - 2x/3 + x^2/4 - x^3/15 + x^4/72; g' = -x/3 + x^2/4 - x^3/10 + x^4/36
        g = np.where(small, 1.0 + x * (-2.0 / 3.0 + x * (0.25 + x * (-1.0 / 15.0 + x / 72.0))), g)
        gp = np.where(small, x * (-1.0 / 3.0 + x * (0.25 + x * (-0.1 + x / 36.0))), gp)
        dg = np.where(small, -2.0 / 3.0 + x * (0.5 + x * (-0.2 + x / 18.0)), dg)
        dgp = np.where(small, -1.0 / 3.0 + x * (0.5 + x * (-0.3 + x / 9.0)), dgp)
    return e, g, gp, dg, dgp


class _Pairs:
    """Per cation-anion pair arrays (S, N, Kc, Ka) of one composition and request."""

    def __init__(self, request: Request, cations: list[str], anions: list[str],
                 alphas, s: np.ndarray) -> None:
        shape = (request.n_sets, request.composition.n, len(cations), len(anions))
        self.shape = shape
        self.values: dict[str, np.ndarray] = {}
        for name in (*_LINEAR_PAIR, "alpha1", "alpha2"):
            arr = np.empty(shape)
            for ci, c in enumerate(cations):
                for ai, a in enumerate(anions):
                    arr[:, :, ci, ai] = np.broadcast_to(
                        request.value(ParameterKey(name, (c, a))), shape[:2])
            self.values[name] = arr
        # 0 stands for the charge-type default (see Pitzer.alphas_for)
        for name in ("alpha1", "alpha2"):
            arr = self.values[name]
            zero = arr == 0.0
            if zero.any():
                arr[zero] = np.broadcast_to(alphas[name], shape)[zero]
        root = s[None, :, None, None]
        self.terms = {k: _g_terms(self.values[f"alpha{k}"] * root) for k in (1, 2)}


def compute_mixture(request: Request, default_alphas) -> Computed:
    """Every ion's ln gamma, the means asked for, phi and a_w of ``request`` (any composition
    without neutral species), with derivatives for the keys in ``request.wrt``.

    ``default_alphas(z_cation, |z_anion|) -> (alpha1, alpha2)`` gives a pair's alphas where its
    parameters are 0.
    """
    comp = request.composition
    m = comp.molality
    z = comp.charges
    n, k_ions = m.shape
    n_sets = request.n_sets
    cat = np.flatnonzero(z > 0)
    an = np.flatnonzero(z < 0)
    cations = [comp.names[j] for j in cat]
    anions = [comp.names[j] for j in an]
    zc, za = z[cat], -z[an]
    mc, ma = m[:, cat], m[:, an]
    i = comp.ionic_strength
    pos = i > 0.0
    i_safe = np.where(pos, i, 1.0)
    s = np.sqrt(i)
    big_z = m @ np.abs(z)
    total = m.sum(axis=1)
    total_safe = np.where(total > 0.0, total, 1.0)
    a_phi = request.conditions.a_phi  # (N,)
    b = np.broadcast_to(request.value(ParameterKey("b")), (n_sets, n))

    defaults = np.array([[default_alphas(int(c), int(a)) for a in za] for c in zc]).reshape(
        len(cat), len(an), 2)
    alphas = {"alpha1": defaults[:, :, 0], "alpha2": defaults[:, :, 1]}
    pairs = _Pairs(request, cations, anions, alphas, s)
    pv = pairs.values
    e1, g1, gp1, dg1, dgp1 = pairs.terms[1]
    e2, g2, gp2, dg2, dgp2 = pairs.terms[2]
    inv_i = (1.0 / i_safe)[None, :, None, None]
    b_phi = pv["beta0"] + pv["beta1"] * e1 + pv["beta2"] * e2
    b_mx = pv["beta0"] + pv["beta1"] * g1 + pv["beta2"] * g2
    b_prime = (pv["beta1"] * gp1 + pv["beta2"] * gp2) * inv_i
    c_scale = 1.0 / (2.0 * np.sqrt(np.outer(zc, za)))  # (Kc, Ka)
    c_mx = pv["C_phi"] * c_scale
    mca = mc[:, :, None] * ma[:, None, :]  # (N, Kc, Ka)

    # like-charged pairs: theta (S, N, K', K'), Etheta (N, K', K'), and psi of the triplets
    def like(names: list[str], charges: np.ndarray, others: list[str], cation_side: bool):
        kk = len(names)
        theta = np.zeros((n_sets, n, kk, kk))
        et = np.zeros((n, kk, kk))
        etp = np.zeros((n, kk, kk))
        psi = np.zeros((n_sets, n, kk, kk, len(others)))
        for p in range(kk):
            for q in range(p + 1, kk):
                t = np.broadcast_to(request.value(ParameterKey("theta", (names[p], names[q]))),
                                    (n_sets, n))
                theta[:, :, p, q] = theta[:, :, q, p] = t
                if charges[p] != charges[q]:
                    e, ep = etheta(float(charges[p]), float(charges[q]), i, a_phi)
                    et[:, p, q] = et[:, q, p] = e
                    etp[:, p, q] = etp[:, q, p] = ep
                for o, other in enumerate(others):
                    owner = ((names[p], names[q], other) if cation_side
                             else (other, names[p], names[q]))
                    v = np.broadcast_to(request.value(ParameterKey("psi", owner)), (n_sets, n))
                    psi[:, :, p, q, o] = psi[:, :, q, p, o] = v
        return theta, et, etp, psi

    th_c, et_c, etp_c, psi_c = like(cations, zc, anions, True)
    th_a, et_a, etp_a, psi_a = like(anions, za, cations, False)
    phi_c, phi_a = th_c + et_c, th_a + et_a
    iv = i[:, None, None]
    phiphi_c = phi_c + iv * etp_c
    phiphi_a = phi_a + iv * etp_a

    # F and the Debye-Hückel parts
    one_bs = 1.0 + b * s
    f_dh = -a_phi * (s / one_bs + (2.0 / b) * np.log1p(b * s))  # (S, N)
    f = (f_dh + np.einsum("nca,snca->sn", mca, b_prime)
         + 0.5 * np.einsum("nc,nd,ncd->n", mc, mc, etp_c)
         + 0.5 * np.einsum("na,nb,nab->n", ma, ma, etp_a))
    c_sum = np.einsum("nca,snca->sn", mca, c_mx)

    ln_c = (zc**2 * f[:, :, None]
            + np.einsum("na,snca->snc", ma, 2.0 * b_mx + big_z[None, :, None, None] * c_mx)
            + 2.0 * np.einsum("nd,sncd->snc", mc, phi_c)
            + np.einsum("nda,sncda->snc", mca, psi_c)
            + 0.5 * np.einsum("na,nb,snabc->snc", ma, ma, psi_a)
            + zc * c_sum[:, :, None])
    # ln gamma_X: sum_a m_a sum_c m_c psi_cXa = sum_b sum_c m_b m_c psi_a[X, b, c]
    ln_a = (za**2 * f[:, :, None]
            + np.einsum("nc,snca->sna", mc, 2.0 * b_mx + big_z[None, :, None, None] * c_mx)
            + 2.0 * np.einsum("nb,snab->sna", ma, phi_a)
            + np.einsum("ncb,snabc->sna", mca, psi_a)
            + 0.5 * np.einsum("nc,nd,sncda->sna", mc, mc, psi_c)
            + za * c_sum[:, :, None])
    ln_ions = np.empty((n_sets, n, k_ions))
    ln_ions[:, :, cat] = ln_c
    ln_ions[:, :, an] = ln_a

    excess = (-a_phi * i * s / one_bs
              + np.einsum("nca,snca->sn", mca, b_phi + big_z[None, :, None, None] * c_mx)
              + 0.5 * np.einsum("nc,nd,sncd->sn", mc, mc, phiphi_c)
              + 0.5 * np.einsum("nc,nd,na,sncda->sn", mc, mc, ma, psi_c)
              + 0.5 * np.einsum("na,nb,snab->sn", ma, ma, phiphi_a)
              + 0.5 * np.einsum("na,nb,nc,snabc->sn", ma, ma, mc, psi_a))
    osm = 1.0 + 2.0 * excess / total_safe

    d_ions, d_osm = _derivatives(request, comp, cations, anions, cat, an, pairs, s, i_safe,
                                 big_z, total_safe, b, a_phi)
    values: dict[Quantity, np.ndarray] = {}
    derivs: dict[Quantity, dict[ParameterKey, np.ndarray]] = {}
    a_w = None
    for q in request.quantities:
        if q.kind == "ln_gamma":
            j = comp.index(q.of)
            values[q] = ln_ions[:, :, j]
            derivs[q] = {key: d[:, :, j] for key, d in d_ions.items()}
        elif q.kind == "ln_gamma_pm":
            salt = comp.salt(q.of)
            jc, ja = comp.index(salt.cation.name), comp.index(salt.anion.name)
            fc, fa = salt.nu_cation / salt.nu, salt.nu_anion / salt.nu
            values[q] = fc * ln_ions[:, :, jc] + fa * ln_ions[:, :, ja]
            derivs[q] = {key: fc * d[:, :, jc] + fa * d[:, :, ja] for key, d in d_ions.items()}
        elif q == OSMOTIC:
            values[q], derivs[q] = osm, dict(d_osm)
        elif q == WATER_ACTIVITY:
            a_w = water_activity(total, osm) if a_w is None else a_w
            values[q] = a_w
            derivs[q] = {key: -MOLAR_MASS_WATER * total * a_w * d for key, d in d_osm.items()}
    return Computed(values, derivs)


def _derivatives(request: Request, comp, cations, anions, cat, an, pairs: _Pairs, s, i_safe,
                 big_z, total, b, a_phi):
    """d ln gamma (S, N, K) and d phi (S, N) for each key of ``request.wrt``."""
    m = comp.molality
    z = comp.charges
    z2 = z**2
    n_sets, n = request.n_sets, comp.n
    shape = (n_sets, n)
    d_ions: dict[ParameterKey, np.ndarray] = {}
    d_osm: dict[ParameterKey, np.ndarray] = {}
    two_over_total = 2.0 / total
    for key in request.wrt:
        name, owner = key.name, key.owner
        d = np.zeros((n_sets, n, len(comp.names)))
        if name == "b" and not owner:
            one_bs = 1.0 + b * s
            log_bs = np.log1p(b * s)
            df = -a_phi * (-s * s / (one_bs * one_bs) - (2.0 / (b * b)) * log_bs
                           + (2.0 / b) * s / one_bs)
            d += df[:, :, None] * z2[None, None, :]
            d_ions[key] = d
            d_osm[key] = two_over_total * a_phi * i_safe * s * s / (one_bs * one_bs)
            continue
        if len(owner) == 2 and owner[0] in cations and owner[1] in anions:
            ci, ai = cations.index(owner[0]), anions.index(owner[1])
            jc, ja = cat[ci], an[ai]
            mc, ma = m[:, jc], m[:, ja]
            mm = mc * ma
            if name in ("beta0", "beta1", "beta2"):
                if name == "beta0":
                    gx, gpx, ex = np.ones(n), np.zeros(n), np.ones(n)
                else:
                    terms = pairs.terms[1 if name == "beta1" else 2]
                    gx = terms[1][:, :, ci, ai]
                    gpx = terms[2][:, :, ci, ai] / i_safe
                    ex = terms[0][:, :, ci, ai]
                d += (mm * gpx)[..., None] * z2
                d[:, :, jc] += 2.0 * ma * gx
                d[:, :, ja] += 2.0 * mc * gx
                d_osm[key] = np.broadcast_to(two_over_total * mm * ex, shape)
            elif name == "C_phi":
                k = 1.0 / (2.0 * np.sqrt(z[jc] * -z[ja]))
                d += (mm * k)[None, :, None] * np.abs(z)
                d[:, :, jc] += big_z * ma * k
                d[:, :, ja] += big_z * mc * k
                d_osm[key] = np.broadcast_to(two_over_total * mm * big_z * k, shape)
            elif name in ("alpha1", "alpha2"):
                which = 1 if name == "alpha1" else 2
                beta = pairs.values[f"beta{which}"][:, :, ci, ai]
                e, _, _, dg, dgp = (t[:, :, ci, ai] for t in pairs.terms[which])
                d += (mm * beta * dgp * s / i_safe)[..., None] * z2
                d[:, :, jc] += 2.0 * ma * beta * dg * s
                d[:, :, ja] += 2.0 * mc * beta * dg * s
                d_osm[key] = two_over_total * mm * (-beta * s * e)
            else:
                continue
            d_ions[key] = d
            continue
        if name in ("theta", "psi") and len(owner) in (2, 3):
            cols = [comp.index(o) for o in owner]
            mols = [m[:, j] for j in cols]
            for p, j in enumerate(cols):
                others = [mols[q] for q in range(len(cols)) if q != p]
                prod = others[0] if len(others) == 1 else others[0] * others[1]
                d[:, :, j] += (2.0 if name == "theta" else 1.0) * prod
            d_ions[key] = d
            d_osm[key] = np.broadcast_to(two_over_total * np.prod(mols, axis=0), shape)
    return d_ions, d_osm
