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

from saltbench.models.assemble import assemble
from saltbench.models.contract import Computed, ParameterKey, Request
from saltbench.plugins._etheta import etheta

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


def _rows(request: Request, keys: list[ParameterKey]) -> int:
    """N when any of ``keys`` varies by row (a temperature form), else 1."""
    n = request.composition.n
    return n if any(request.value(k).shape[1] != 1 for k in keys) else 1


def _gather(request: Request, keys: list[ParameterKey], rows: int) -> np.ndarray:
    """The values of ``keys`` stacked on a last axis: (S, rows, len(keys))."""
    out = np.empty((request.n_sets, rows, len(keys)))
    for j, key in enumerate(keys):
        out[:, :, j] = np.broadcast_to(request.value(key), out.shape[:2])
    return out


def _apply(w: np.ndarray, p: np.ndarray) -> np.ndarray:
    """sum_m w[n, m] p[s, n, k, m] -> (S, N, K): a matrix product when p is the same for every
    row (its axis 1 of length 1), elementwise otherwise."""
    if p.shape[1] == 1:
        s, k, m = p.shape[0], p.shape[2], p.shape[3]
        # one contiguous (N, M) x (M, S K) product (numpy hands a strided batch to slow loops)
        flat = np.ascontiguousarray(w) @ np.ascontiguousarray(p[:, 0].reshape(s * k, m).T)
        return flat.reshape(w.shape[0], s, k).transpose(1, 0, 2)
    return np.einsum("nm,snkm->snk", w, p)


def _dot(w: np.ndarray, p: np.ndarray) -> np.ndarray:
    """sum_m w[n, m] p[s, n, m] -> (S, N), as :func:`_apply`."""
    return _apply(w, p[:, :, None, :])[:, :, 0]


class _Pairs:
    """Per cation-anion pair values (S, Np, Kc, Ka) (Np = 1 unless they vary by row) and the
    functions of alpha sqrt(I) (S or 1, N, Kc, Ka) of one request."""

    def __init__(self, request: Request, cations: list[str], anions: list[str],
                 alphas: dict[str, np.ndarray], s: np.ndarray) -> None:
        kc, ka = len(cations), len(anions)
        names = (*_LINEAR_PAIR, "alpha1", "alpha2")
        keys = [ParameterKey(name, (c, a)) for name in names for c in cations for a in anions]
        rows = _rows(request, keys)
        flat = _gather(request, keys, rows).reshape(request.n_sets, rows, len(names), kc, ka)
        self.values = {name: flat[:, :, j] for j, name in enumerate(names)}
        self.terms = {}
        for k in (1, 2):
            name = f"alpha{k}"
            # 0 stands for the charge-type default (see Pitzer.alphas_for)
            alpha = np.where(self.values[name] == 0.0, alphas[name], self.values[name])
            self.values[name] = alpha
            if alpha.shape[:2] == (1, 1):
                # one alpha per pair for all rows and sets: one function of sqrt(I) per distinct
                # value (2.0, 1.4, 12 in practice), gathered to the pairs
                unique, where = np.unique(alpha[0, 0], return_inverse=True)
                terms = _g_terms(unique[:, None] * s[None, :])  # each (U, N)
                idx = where.reshape(kc, ka)
                self.terms[k] = tuple(part.T[None, :, idx] for part in terms)
            else:
                self.terms[k] = _g_terms(alpha * s[None, :, None, None])


def _like(request: Request, names: list[str], charges: np.ndarray, others: list[str],
          cation_side: bool, i: np.ndarray, a_phi: np.ndarray, cache: dict):
    """theta (S, Np, K', K'), Etheta and Etheta' (N, K', K') of the like-charged ions ``names``
    and psi (S, Np, K', K', K_other) of their triplets with ``others`` (zero on the diagonals)."""
    kk, ko = len(names), len(others)
    n_sets = request.n_sets
    pairs = [(p, q) for p in range(kk) for q in range(p + 1, kk)]
    t_keys = [ParameterKey("theta", (names[p], names[q])) for p, q in pairs]
    p_keys = [ParameterKey("psi", (names[p], names[q], o) if cation_side
                           else (o, names[p], names[q])) for p, q in pairs for o in others]
    rows = _rows(request, t_keys + p_keys)
    theta = np.zeros((n_sets, rows, kk, kk))
    psi = np.zeros((n_sets, rows, kk, kk, ko))
    n = request.composition.n
    et = np.zeros((n, kk, kk))
    etp = np.zeros((n, kk, kk))
    if pairs:
        tv = _gather(request, t_keys, rows)
        pv = _gather(request, p_keys, rows).reshape(n_sets, rows, len(pairs), ko)
        for j, (p, q) in enumerate(pairs):
            theta[:, :, p, q] = theta[:, :, q, p] = tv[:, :, j]
            psi[:, :, p, q] = psi[:, :, q, p] = pv[:, :, j]
            if charges[p] != charges[q]:
                zz = tuple(sorted((float(charges[p]), float(charges[q]))))
                if zz not in cache:  # one evaluation per pair of charges, for both signs
                    cache[zz] = etheta(zz[0], zz[1], i, a_phi)
                et[:, p, q] = et[:, q, p] = cache[zz][0]
                etp[:, p, q] = etp[:, q, p] = cache[zz][1]
    return theta, et, etp, psi


def _outer(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """x[n, i] y[n, j] flattened to (N, I*J)."""
    return (x[:, :, None] * y[:, None, :]).reshape(x.shape[0], -1)


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
    kc, ka = len(cat), len(an)
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
        kc, ka, 2)
    alphas = {"alpha1": defaults[:, :, 0], "alpha2": defaults[:, :, 1]}
    pairs = _Pairs(request, cations, anions, alphas, s)
    pv = pairs.values
    e1, g1, gp1 = pairs.terms[1][:3]
    e2, g2, gp2 = pairs.terms[2][:3]
    mca = mc[:, :, None] * ma[:, None, :]  # (N, Kc, Ka)
    mca_flat = mca.reshape(n, -1)
    # the parts of B, B' and B^phi that vary with I, summed over the pairs where weighted
    b_phi = pv["beta1"] * e1 + pv["beta2"] * e2  # + beta0
    b_mx = pv["beta1"] * g1 + pv["beta2"] * g2  # + beta0
    b_prime_sum = ((pv["beta1"] * gp1 + pv["beta2"] * gp2) * mca).reshape(
        b_mx.shape[0], n, -1).sum(axis=-1) / i_safe
    c_scale = 1.0 / (2.0 * np.sqrt(np.outer(zc, za)))  # (Kc, Ka)
    c_mx = pv["C_phi"] * c_scale  # (S, Np, Kc, Ka)
    beta0 = pv["beta0"]

    cache: dict = {}
    th_c, et_c, etp_c, psi_c = _like(request, cations, zc, anions, True, i, a_phi, cache)
    th_a, et_a, etp_a, psi_a = _like(request, anions, za, cations, False, i, a_phi, cache)

    # F and the Debye-Hückel parts
    one_bs = 1.0 + b * s
    f = (-a_phi * (s / one_bs + (2.0 / b) * np.log1p(b * s)) + b_prime_sum
         + 0.5 * np.einsum("nc,nd,ncd->n", mc, mc, etp_c)
         + 0.5 * np.einsum("na,nb,nab->n", ma, ma, etp_a))
    c_sum = _dot(mca_flat, c_mx.reshape(c_mx.shape[0], c_mx.shape[1], -1))  # (S, N)
    zc_ = big_z[None, :, None]

    # cations: sum_a m_a (2 B_Ma + Z C_Ma) + 2 sum_c m_c Phi_Mc + psi terms + |z_M| sum C
    ln_c = (zc**2 * f[:, :, None]
            + 2.0 * (b_mx * ma[None, :, None, :]).sum(axis=-1)
            + _apply(ma, 2.0 * beta0) + zc_ * _apply(ma, c_mx)
            + 2.0 * _apply(mc, th_c) + 2.0 * np.einsum("nd,ncd->nc", mc, et_c)[None]
            + _apply(mca_flat, psi_c.reshape(*psi_c.shape[:3], -1))
            + 0.5 * _apply(_outer(ma, ma), psi_a.transpose(0, 1, 4, 2, 3).reshape(
                *psi_a.shape[:2], kc, -1))
            + zc * c_sum[:, :, None])
    ln_a = (za**2 * f[:, :, None]
            + 2.0 * (b_mx * mc[None, :, :, None]).sum(axis=-2)
            + _apply(mc, 2.0 * beta0.swapaxes(-1, -2)) + zc_ * _apply(mc, c_mx.swapaxes(-1, -2))
            + 2.0 * _apply(ma, th_a) + 2.0 * np.einsum("nb,nab->na", ma, et_a)[None]
            + _apply(_outer(ma, mc), psi_a.reshape(*psi_a.shape[:3], -1))
            + 0.5 * _apply(_outer(mc, mc), psi_c.transpose(0, 1, 4, 2, 3).reshape(
                *psi_c.shape[:2], ka, -1))
            + za * c_sum[:, :, None])
    ln_ions = np.empty((n_sets, n, k_ions))
    ln_ions[:, :, cat] = ln_c
    ln_ions[:, :, an] = ln_a

    mcc, maa = _outer(mc, mc), _outer(ma, ma)
    excess = (-a_phi * i * s / one_bs
              + (b_phi * mca).reshape(b_phi.shape[0], n, -1).sum(axis=-1)
              + _dot(mca_flat, beta0.reshape(*beta0.shape[:2], -1)) + big_z * c_sum
              + 0.5 * _dot(mcc, th_c.reshape(*th_c.shape[:2], -1))
              + 0.5 * (mcc * (et_c + i[:, None, None] * etp_c).reshape(n, -1)).sum(axis=-1)
              + 0.5 * _dot(_outer(mcc, ma), psi_c.reshape(*psi_c.shape[:2], -1))
              + 0.5 * _dot(maa, th_a.reshape(*th_a.shape[:2], -1))
              + 0.5 * (maa * (et_a + i[:, None, None] * etp_a).reshape(n, -1)).sum(axis=-1)
              + 0.5 * _dot(_outer(maa, mc), psi_a.reshape(*psi_a.shape[:2], -1)))
    osm = 1.0 + 2.0 * np.broadcast_to(excess, (n_sets, n)) / total_safe

    d_ions, d_osm = _derivatives(request, comp, cations, anions, cat, an, pairs, s, i_safe,
                                 big_z, total_safe, b, a_phi)
    return assemble(request, ln_ions, d_ions, osm, d_osm)


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
