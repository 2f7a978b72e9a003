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

Large requests are evaluated by a compiled kernel of the same equations and coefficients
(:mod:`saltbench.plugins._pitzer_kernel`, with numba, the optional extra ``fast``), chosen by
:mod:`saltbench.plugins._pitzer_choice`; ``tests/test_pitzer_kernel.py`` holds the two equal.
"""

from __future__ import annotations

from collections import OrderedDict
from dataclasses import dataclass

import numpy as np

from saltbench.models.assemble import assemble
from saltbench.models.contract import Computed, ParameterKey, Request
from saltbench.plugins import _pitzer_choice
from saltbench.plugins._etheta import etheta

_SERIES_BELOW = 1e-2  # x below which g, g' and their derivatives come from Taylor series
_PAIR_NAMES = ("beta0", "beta1", "beta2", "C_phi", "alpha1", "alpha2")
_ROW_CHUNK = 8192  # rows per block of the product of coefficients and features (see _contract)


# -- what the ions fix: the layout ----------------------------------------------------------------
@dataclass(frozen=True)
class _Layout:
    """Everything of a mixture evaluation that depends only on the ions (their names, charges
    and order), not on parameter values: the keys read, in one order, and where each value
    goes. Made once per ion list (:func:`_layout`); values change between calls (a fit)."""

    k: int
    z: np.ndarray  # (K,)
    cat: np.ndarray  # composition columns of the cations
    an: np.ndarray  # ... of the anions
    pc: np.ndarray  # (P,) cation column of each cation-anion pair
    pa: np.ndarray  # (P,) anion column
    c_scale: np.ndarray  # (P,) 1 / (2 sqrt|z_c z_a|): C = C_phi c_scale
    default_alpha: np.ndarray  # (P, 2) alpha1, alpha2 where a pair's values are 0
    like: np.ndarray  # (L, 2) columns of the like-charged pairs (theta), each pair once
    triplets: np.ndarray  # (R, 3) columns of the triplets (psi): two like ions, one other
    keys: tuple[ParameterKey, ...]  # pair keys by name then pair, theta keys, psi keys
    qj: np.ndarray  # (Q,) first column of each product m_j m_k, j < k
    qk: np.ndarray  # (Q,) second column
    q_of: np.ndarray  # (K, K) position of m_j m_k among the products (-1 on the diagonal)
    types: tuple[tuple[float, float], ...]  # distinct charge pairs of unlike-charged like pairs
    like_type: np.ndarray  # (L,) index into ``types``, -1 for equal charges
    z_and_one: np.ndarray  # (2, K): |z| and 1, for Z and sum m in one product

    @property
    def n_pairs(self) -> int:
        return len(self.pc)


_LAYOUTS: OrderedDict = OrderedDict()
_LAYOUTS_KEPT = 32


def _layout(names: tuple[str, ...], charges: np.ndarray, default_alphas) -> _Layout:
    """The layout of ``names`` (cached on the names, the charges and ``default_alphas``)."""
    key = (names, tuple(float(c) for c in charges), default_alphas)
    hit = _LAYOUTS.get(key)
    if hit is not None:
        _LAYOUTS.move_to_end(key)
        return hit
    z = np.asarray(charges, dtype=float)
    k = len(names)
    cat, an = np.flatnonzero(z > 0), np.flatnonzero(z < 0)
    pairs = [(c, a) for c in cat for a in an]
    pc = np.array([c for c, _ in pairs], dtype=np.intp)
    pa = np.array([a for _, a in pairs], dtype=np.intp)
    keys = [ParameterKey(name, (names[c], names[a])) for name in _PAIR_NAMES for c, a in pairs]
    like: list[tuple[int, int]] = []
    triplets: list[tuple[int, int, int]] = []
    types: list[tuple[float, float]] = []
    like_type: list[int] = []
    for side in (cat, an):
        for p in range(len(side)):
            for q in range(p + 1, len(side)):
                j, jj = side[p], side[q]
                like.append((j, jj))
                keys.append(ParameterKey("theta", (names[j], names[jj])))
                if z[j] != z[jj]:
                    lo_z, hi_z = sorted((abs(float(z[j])), abs(float(z[jj]))))
                    zz = (lo_z, hi_z)
                    if zz not in types:
                        types.append(zz)
                    like_type.append(types.index(zz))
                else:
                    like_type.append(-1)
    for side, other, first in ((cat, an, True), (an, cat, False)):
        for p in range(len(side)):
            for q in range(p + 1, len(side)):
                j, jj = side[p], side[q]
                for o in other:
                    triplets.append((int(j), int(jj), int(o)))
                    keys.append(ParameterKey("psi", (names[j], names[jj], names[o]) if first
                                             else (names[o], names[j], names[jj])))
    qj, qk = np.triu_indices(k, 1)
    q_of = np.full((k, k), -1, dtype=np.intp)
    q_of[qj, qk] = q_of[qk, qj] = np.arange(len(qj))
    default = np.array([default_alphas(int(z[c]), int(-z[a])) for c, a in pairs],
                       dtype=float).reshape(len(pairs), 2)
    out = _Layout(k, z, cat, an, pc, pa, 1.0 / (2.0 * np.sqrt(z[pc] * -z[pa])), default,
                  np.array(like, dtype=np.intp).reshape(-1, 2),
                  np.array(triplets, dtype=np.intp).reshape(-1, 3), tuple(keys), qj, qk, q_of,
                  tuple(types), np.array(like_type, dtype=np.intp),
                  np.stack([np.abs(z), np.ones(k)]))
    _LAYOUTS[key] = out
    if len(_LAYOUTS) > _LAYOUTS_KEPT:
        _LAYOUTS.popitem(last=False)
    return out


# -- functions of the ionic strength ---------------------------------------------------------------
def _g_terms(x: np.ndarray, slopes: bool = False, two_over_x2: np.ndarray | None = None
             ) -> tuple[np.ndarray, ...]:
    """(e^-x, g, g') elementwise, and (dg/dx, dg'/dx) after them when ``slopes``; Taylor series
    where x < 0.01 (the closed forms lose digits to cancellation there). ``two_over_x2`` may
    give 2/x^2 where the caller has it cheaper.

    g' = e^-x - g: -2 [1 - (1 + x + x^2/2) e^-x] / x^2 is g's numerator less x^2 e^-x.
    """
    e = np.exp(-x)
    any_small = bool(x.min(initial=np.inf) < _SERIES_BELOW)
    small: np.ndarray = x < _SERIES_BELOW if any_small else np.zeros((), dtype=bool)
    xs: np.ndarray = np.where(small, 1.0, x) if any_small else x
    es: np.ndarray = np.where(small, np.exp(-1.0), e) if any_small else e
    g = 1.0 + xs
    g *= es
    np.subtract(1.0, g, out=g)
    if two_over_x2 is None or any_small:
        g /= xs * xs
        g *= 2.0  # 2 [1 - (1 + x) e^-x] / x^2
    else:
        g *= two_over_x2
    gp = es - g
    out: list[np.ndarray] = [e, g, gp]
    if slopes:
        dg = 2.0 * es / xs - 2.0 * g / xs
        dgp = -es - 2.0 * gp / xs
        out += [dg, dgp]
    if any_small:
        # g = 1 - 2x/3 + x^2/4 - x^3/15 + x^4/72; g' = -x/3 + x^2/4 - x^3/10 + x^4/36
        series = [1.0 + x * (-2.0 / 3.0 + x * (0.25 + x * (-1.0 / 15.0 + x / 72.0))),
                  x * (-1.0 / 3.0 + x * (0.25 + x * (-0.1 + x / 36.0))),
                  -2.0 / 3.0 + x * (0.5 + x * (-0.2 + x / 18.0)),
                  -1.0 / 3.0 + x * (0.5 + x * (-0.3 + x / 9.0))]
        out[1:] = [np.where(small, ser, v) for ser, v in zip(series, out[1:])]
    return tuple(out)


class _Alphas:
    """The functions of x = alpha sqrt(I), computed once per distinct alpha.

    ``slot[s, p, k]`` says which row of ``e``, ``g``, ``gp`` (U, N) holds the function of
    pair p's alpha(k+1) in set s. When alpha is one number per set and pair (the usual case)
    the rows are the distinct values (2.0, 1.4 and 12 in practice); when a temperature form
    gives alpha a value per row, each set, pair and k has its own row.
    """

    def __init__(self, alpha: np.ndarray) -> None:
        n_sets, rows, n_pairs, _ = alpha.shape
        if rows == 1:
            unique, where = np.unique(alpha[:, 0], return_inverse=True)
            self.slot = where.reshape(n_sets, n_pairs, 2)
            self.values = unique[:, None]  # (U, 1)
        else:
            self.slot = np.arange(n_sets * n_pairs * 2).reshape(n_sets, n_pairs, 2)
            self.values = alpha.transpose(0, 2, 3, 1).reshape(-1, rows)  # (U, N)
        self.n = self.values.shape[0]

    def x(self, s: np.ndarray, lo: int = 0, hi: int | None = None) -> np.ndarray:
        """alpha sqrt(I) (U, n) for the rows lo:hi, whose sqrt(I) is ``s``."""
        per_row = self.values.shape[1] != 1
        return (self.values[:, lo:hi] if per_row else self.values) * s

    def block(self, s: np.ndarray, inv_i: np.ndarray, lo: int, hi: int
              ) -> tuple[np.ndarray, ...]:
        """(e, g, g') (U, n) for the rows lo:hi, whose sqrt(I) and 1/I are ``s``, ``inv_i``."""
        per_row = self.values.shape[1] != 1
        alpha = self.values[:, lo:hi] if per_row else self.values
        return _g_terms(alpha * s, two_over_x2=(2.0 / (alpha * alpha)) * inv_i)

    def terms(self, s: np.ndarray, slopes: bool = False) -> tuple[np.ndarray, ...]:
        """(e, g, g') (U, N), and the slopes after them, for all rows (the derivatives)."""
        return _g_terms(self.x(s), slopes)


# -- the evaluation ---------------------------------------------------------------------------------
def _gather(request: Request, keys: tuple[ParameterKey, ...]) -> np.ndarray:
    """The values of ``keys`` stacked on a last axis: (S, 1, len(keys)), or (S, N, len(keys))
    when any of them varies by row (a temperature form)."""
    got = [request.value(key) for key in keys]
    rows = max((v.shape[1] for v in got), default=1)
    out = np.empty((request.n_sets, rows, len(keys)))
    for j, v in enumerate(got):
        out[:, :, j] = v
    return out


@dataclass(frozen=True)
class _Weights:
    """The coefficients of one request, (S, R, outputs, features) (R = 1, or N for values per
    row): ``ln`` maps all features (m, m g_u, m Etheta_t, m Z, then the products m_j m_k,
    j < k) to the part of each ion's ln gamma linear in them; ``pairs`` maps the products to
    the sums over pairs that the functions of I weight: per alpha function u the sum of
    m_c m_a beta (B' in F, B^phi in phi), per charge type t the sum of m_j m_k over its like
    pairs (Etheta', Etheta + I Etheta'), sum m_j m_k (beta0 or theta), sum m_c m_a C, then
    (with triplets) K rows of psi's part of ln gamma alone (for phi, by Euler's theorem)."""

    ln: np.ndarray
    pairs: np.ndarray
    n_alpha: int
    n_types: int
    # with ``split`` (the compiled kernel): C of each pair (S, R, P) and psi of each triplet
    # (S, R, triplets), whose terms are then left out of ``ln``'s |z_i| C entries and of the
    # rows of ``pairs`` for phi (the kernel forms sum m_c m_a C and sum psi m m m once)
    c_mx: np.ndarray | None = None
    psi: np.ndarray | None = None


def _weights(lay: _Layout, vals: np.ndarray, alphas: _Alphas, split: bool = False) -> _Weights:
    """The coefficient matrices of :class:`_Weights` from parameter values (S, R, keys).

    ``split`` leaves the terms |z_i| sum m_c m_a C (in ln gamma and phi) and psi's part of phi
    out of the matrices and gives C and psi beside them: they are sums over pairs and triplets
    times one factor per ion, which the compiled kernel forms once rather than once per ion."""
    k, n_pairs, n_types, n_alpha = lay.k, lay.n_pairs, len(lay.types), alphas.n
    n_sets, rows = vals.shape[:2]
    n_lin = (2 + n_alpha + n_types) * k
    o_type = n_alpha
    o_zero = o_type + n_types
    o_r = o_zero + 1
    n_q = len(lay.qj)
    ln = np.zeros((n_sets, rows, k, n_lin + n_q + 1))
    ln[..., -1] = lay.z * lay.z  # the last feature is F (one set): z_i^2 F
    pairs = np.zeros((n_sets, rows, o_r + k, n_q))
    pc, pa = lay.pc, lay.pa
    q_pair = lay.q_of[pc, pa]
    beta0 = vals[:, :, :n_pairs]
    c_mx = vals[:, :, 3 * n_pairs:4 * n_pairs] * lay.c_scale
    theta = vals[:, :, 6 * n_pairs:6 * n_pairs + len(lay.like)]
    psi = vals[:, :, 6 * n_pairs + len(lay.like):]
    lj, lk = lay.like[:, 0], lay.like[:, 1]
    # block 0 (times m): 2 beta0 of each pair and 2 theta of each like pair
    for rows_, cols, v in ((pc, pa, beta0), (pa, pc, beta0), (lj, lk, theta), (lk, lj, theta)):
        ln[:, :, rows_, cols] = 2.0 * v
    # blocks 1..U (times g_u m): 2 beta1 or beta2 of each pair, in the block of its alpha
    for s in range(n_sets):
        for kk in (0, 1):
            beta = vals[s, :, (1 + kk) * n_pairs:(2 + kk) * n_pairs].T  # (P, R)
            off = k * (1 + alphas.slot[s, :, kk])
            ln[s, :, pc, off + pa] += 2.0 * beta
            ln[s, :, pa, off + pc] += 2.0 * beta
            pairs[s, :, alphas.slot[s, :, kk], q_pair] += beta
    # blocks of the charge types (times Etheta_t m): 2 for each of their like pairs
    for t in range(n_types):
        mine = lay.like_type == t
        tj, tk = lj[mine], lk[mine]
        off = k * (1 + n_alpha + t)
        ln[:, :, tj, off + tk] = 2.0
        ln[:, :, tk, off + tj] = 2.0
        pairs[:, :, o_type + t, lay.q_of[tj, tk]] = 1.0
    # last block (times Z m): C of each pair
    off = k * (1 + n_alpha + n_types)
    ln[:, :, pc, off + pa] = c_mx
    ln[:, :, pa, off + pc] = c_mx
    # the products: |z_i| C (|z_i| sum m_c m_a C) and psi's part of ln gamma (d/dm_i of
    # sum psi m m m); the rows r_i of phi get |z_i| C and a third of psi's part
    z_abs = np.abs(lay.z)[:, None]
    if not split:
        ln[:, :, :, n_lin + q_pair] = z_abs * c_mx[:, :, None, :]
        pairs[:, :, o_r:, q_pair] = z_abs * c_mx[:, :, None, :]
    tri = lay.triplets
    for i, (a, b) in ((0, (1, 2)), (1, (0, 2)), (2, (0, 1))):
        # within one statement each entry is one triplet's (the member and the other two)
        cols = lay.q_of[tri[:, a], tri[:, b]]
        ln[:, :, tri[:, i], n_lin + cols] += psi
        if not split:
            pairs[:, :, o_r + tri[:, i], cols] += psi / 3.0
    pairs[:, :, o_zero, q_pair] = beta0
    pairs[:, :, o_zero, lay.q_of[lj, lk]] = theta
    if split:
        return _Weights(ln, pairs, n_alpha, n_types, c_mx, psi)
    return _Weights(ln, pairs, n_alpha, n_types)


def _features(lay: _Layout, mt: np.ndarray, scales: list[np.ndarray]) -> np.ndarray:
    """(n_features, n) for molalities ``mt`` (K, n): m, then m times each row of each array of
    ``scales`` ((B, n) each: the alpha functions g_u, the Etheta of each charge type, Z), then
    m_j m_k (j < k), then a row left for the Debye-Hückel function F (unset)."""
    k = lay.k
    n = mt.shape[1]
    n_scaled = sum(len(f) for f in scales)
    x = np.empty(((1 + n_scaled) * k + len(lay.qj) + 1, n))  # the last row is for F
    x[:k] = mt
    off = k
    for f in scales:  # one product per array: m times each of its rows
        np.multiply(f[:, None, :], mt, out=x[off:off + len(f) * k].reshape(len(f), k, n))
        off += len(f) * k
    for j in range(k - 1):
        np.multiply(mt[j + 1:], mt[j], out=x[off:off + k - 1 - j])
        off += k - 1 - j
    return x


def _apply(w: np.ndarray, x: np.ndarray, lo: int, hi: int, out: np.ndarray | None = None
           ) -> np.ndarray:
    """sum_f w[s, r, o, f] x[f, n] -> (S, O, n) for the rows lo:hi (x holds those rows)."""
    if w.shape[1] == 1:
        return np.matmul(w[:, 0], x, out=out)
    return np.einsum("snof,fn->son", w[:, lo:hi], x, out=out)


def _rows(a: np.ndarray, lo: int, hi: int) -> np.ndarray:
    """Rows lo:hi of a per-row array (last axis N), or the array itself when it has one."""
    return a if a.shape[-1] == 1 else a[..., lo:hi]


class _Mixture:
    """One request's evaluation, rows in blocks of _ROW_CHUNK: every intermediate array of a
    block stays in the processor's cache, where numpy's elementwise operations run several
    times faster than on arrays of 100 000 rows."""

    def __init__(self, request: Request, lay: _Layout, alphas: _Alphas, w: _Weights) -> None:
        comp = request.composition
        self.comp = comp
        self.lay, self.alphas, self.w = lay, alphas, w
        self.m = comp.molality  # (N, K); each block takes its rows as (K, n)
        cond = request.conditions
        self.a_phi = cond.a_phi  # (N,)
        # Etheta's A_phi: one number when the rows share their conditions
        self.a_phi_et = float(cond.dh[0].a_phi) if len(cond.dh) == 1 else None
        self.b = request.value(ParameterKey("b"))  # (S, 1) or (S, N)
        self.n_sets = request.n_sets

    @property
    def i(self) -> np.ndarray:
        """The ionic strength (N,) (the composition keeps it once worked out; the compiled
        kernel works out its own)."""
        return self.comp.ionic_strength

    def run(self) -> tuple[np.ndarray, np.ndarray]:
        """ln gamma (S, K, N) and phi (S, N)."""
        n = self.m.shape[0]
        ln = np.empty((self.n_sets, self.lay.k, n))
        phi = np.empty((self.n_sets, n))
        step = max(1, _ROW_CHUNK // self.n_sets)
        for lo in range(0, n, step):
            hi = min(n, lo + step)
            self._block(lo, hi, ln[:, :, lo:hi], phi[:, lo:hi])
        return ln, phi

    def _block(self, lo: int, hi: int, ln_out: np.ndarray, phi_out: np.ndarray) -> None:
        lay, w = self.lay, self.w
        k, n_alpha, n_types = lay.k, w.n_alpha, w.n_types
        mt = np.ascontiguousarray(self.m[lo:hi].T)  # (K, n): a copy in the cache
        i = self.i[lo:hi]
        i_safe = i if i.min(initial=1.0) > 0.0 else np.where(i > 0.0, i, 1.0)
        inv_i = 1.0 / i_safe
        s = np.sqrt(i)
        a_phi = self.a_phi[lo:hi]
        big_z, total = lay.z_and_one @ mt
        e, g, gp = self.alphas.block(s, inv_i, lo, hi)  # (U, n)
        et = np.empty((n_types, hi - lo))
        etp = np.empty((n_types, hi - lo))
        a_et = a_phi if self.a_phi_et is None else self.a_phi_et
        for t, (z1, z2) in enumerate(lay.types):
            et[t], etp[t] = etheta(z1, z2, i, a_et)
        x = _features(lay, mt, [g, et, big_z[None]])
        n_lin = (2 + n_alpha + n_types) * k
        sums = _apply(w.pairs, x[n_lin:-1], lo, hi)  # (S, O, n)
        # F = -A_phi [s/(1 + b s) + (2/b) ln(1 + b s)] + sum m_c m_a B' + sum m_j m_k Etheta'
        b = _rows(self.b, lo, hi)
        bs = b * s
        s_bs = bs + 1.0
        np.divide(s, s_bs, out=s_bs)
        f = np.log1p(bs)
        f *= 2.0 / b
        f += s_bs
        f *= -a_phi
        gp *= inv_i
        for u in range(n_alpha):
            f += sums[:, u] * gp[u]
        for t in range(n_types):
            f += sums[:, n_alpha + t] * etp[t]
        # ln gamma_i = (the features' part)_i + z_i^2 F: F is the last feature when one set
        # is asked (the usual case), added after the product when several are
        one_set = f.shape[0] == 1
        x[-1] = f[0] if one_set else 0.0
        _apply(w.ln, x, lo, hi, out=ln_out)
        if not one_set:
            ln_out += (lay.z * lay.z)[:, None] * f[:, None, :]
        # sum_i m_i (phi - 1) / 2 = -A_phi I^1.5/(1 + b s) + sum m_c m_a (B^phi + Z C)
        #      + sum m_j m_k (theta + Etheta + I Etheta') + sum psi m m m
        ex = phi_out
        np.multiply(s_bs, -a_phi * i, out=ex)
        ex += sums[:, n_alpha + n_types]
        for u in range(n_alpha):
            ex += sums[:, u] * e[u]
        for t in range(n_types):
            et[t] += i * etp[t]
            ex += sums[:, n_alpha + t] * et[t]
        r = sums[:, n_alpha + n_types + 1:]
        r *= mt
        ex += r.sum(axis=1)
        ex *= 2.0 / (total if total.min(initial=1.0) > 0.0 else np.where(total > 0.0, total, 1.0))
        ex += 1.0


def compute_mixture(request: Request, default_alphas) -> Computed:
    """Every ion's ln gamma, the means asked for, phi and a_w of ``request`` (any composition
    without neutral species), with derivatives for the keys in ``request.wrt``.

    ``default_alphas(z_cation, |z_anion|) -> (alpha1, alpha2)`` gives a pair's alphas where its
    parameters are 0.

    The sums over ions are products of coefficient matrices (from the parameter values,
    :func:`_weights`) with features of each row (m, m g_u, m Etheta_t, m Z and the products
    m_j m_k), whose outputs the functions of I then weight (:class:`_Mixture`). Large requests
    take the compiled kernel of the same equations and coefficients where numba is installed
    (:mod:`saltbench.plugins._pitzer_choice`); derivatives always come from numpy.
    """
    comp = request.composition
    lay = _layout(comp.names, comp.charges, default_alphas)
    n_sets = request.n_sets
    vals = _gather(request, lay.keys)  # (S, R, keys)
    n_pairs = lay.n_pairs
    alpha = vals[:, :, 4 * n_pairs:6 * n_pairs].reshape(n_sets, -1, 2, n_pairs).swapaxes(2, 3)
    alpha = np.where(alpha == 0.0, lay.default_alpha, alpha)  # 0: the charge-type value
    per_row_alpha = alpha.shape[1] != 1 and bool((alpha != alpha[:, :1]).any())
    alphas = _Alphas(alpha if per_row_alpha else alpha[:, :1])
    ln, phi, total, mixture = _run(request, lay, alphas, vals)
    d_ions, d_osm = _derivatives(request, comp, lay, alphas, mixture)
    return assemble(request, ln.transpose(0, 2, 1), d_ions, phi, d_osm, total=total)


def _run(request: Request, lay: _Layout, alphas: _Alphas, vals: np.ndarray
         ) -> tuple[np.ndarray, np.ndarray, np.ndarray | None, _Mixture]:
    """ln gamma (S, K, N) and phi (S, N) by the compiled kernel where
    :mod:`saltbench.plugins._pitzer_choice` picks it, else by numpy; sum_i m_i (N,) where the
    kernel gives it (None from numpy); and the evaluation's state, which the derivatives read."""
    kernel = _pitzer_choice.compiled_for(request.composition.n)
    if kernel is not None:
        mixture = _Mixture(request, lay, alphas, _weights(lay, vals, alphas, split=True))
        try:
            ln, phi, total = kernel.evaluate(lay, alphas.values, mixture.w, mixture.m,
                                             mixture.a_phi, mixture.b)
        except Exception as exc:  # numba could not compile here: numpy from now on
            _pitzer_choice.KERNEL.failed(exc)
        else:
            _pitzer_choice.KERNEL.proven = True
            return ln, phi, total, mixture
    mixture = _Mixture(request, lay, alphas, _weights(lay, vals, alphas))
    ln, phi = mixture.run()
    return ln, phi, None, mixture


def _derivatives(request: Request, comp, lay: _Layout, alphas: _Alphas, mixture: _Mixture):
    """d ln gamma (S, N, K) and d phi (S, N) for each key of ``request.wrt``."""
    if not request.wrt:
        return {}, {}
    m = comp.molality
    i = mixture.i
    i_safe = np.where(i > 0.0, i, 1.0)
    s = np.sqrt(i)
    big_z = m @ np.abs(lay.z)
    total = m.sum(axis=1)
    total = np.where(total > 0.0, total, 1.0)
    b, a_phi = mixture.b, mixture.a_phi
    terms: list[tuple[np.ndarray, ...]] = []

    def g_terms() -> tuple[np.ndarray, ...]:  # (e, g, g', dg, dg') for all rows, when needed
        if not terms:
            terms.append(alphas.terms(s, slopes=True))
        return terms[0]

    z = comp.charges
    z2 = z**2
    names = comp.names
    n_sets, n = request.n_sets, comp.n
    shape = (n_sets, n)
    d_ions: dict[ParameterKey, np.ndarray] = {}
    d_osm: dict[ParameterKey, np.ndarray] = {}
    two_over_total = 2.0 / total
    pair_of = {(names[c], names[a]): p for p, (c, a) in enumerate(zip(lay.pc, lay.pa))}
    for key in request.wrt:
        name, owner = key.name, key.owner
        d = np.zeros((n_sets, n, len(names)))
        if name == "b" and not owner:
            one_bs = 1.0 + b * s
            log_bs = np.log1p(b * s)
            df = -a_phi * (-s * s / (one_bs * one_bs) - (2.0 / (b * b)) * log_bs
                           + (2.0 / b) * s / one_bs)
            d += df[:, :, None] * z2[None, None, :]
            d_ions[key] = d
            d_osm[key] = two_over_total * a_phi * i_safe * s * s / (one_bs * one_bs)
            continue
        p = pair_of.get(owner) if len(owner) == 2 else None
        if p is not None:
            jc, ja = lay.pc[p], lay.pa[p]
            mc, ma = m[:, jc], m[:, ja]
            mm = mc * ma
            if name in ("beta0", "beta1", "beta2"):
                if name == "beta0":
                    gx, gpx, ex = np.ones(n), np.zeros(n), np.ones(n)
                else:
                    slot = alphas.slot[:, p, 0 if name == "beta1" else 1]  # (S,)
                    e_, g_, gp_ = g_terms()[:3]
                    gx, gpx, ex = g_[slot], gp_[slot] / i_safe, e_[slot]
                d += (mm * gpx)[..., None] * z2
                d[:, :, jc] += 2.0 * ma * gx
                d[:, :, ja] += 2.0 * mc * gx
                d_osm[key] = np.broadcast_to(two_over_total * mm * ex, shape)
            elif name == "C_phi":
                k = lay.c_scale[p]
                d += (mm * k)[None, :, None] * np.abs(z)
                d[:, :, jc] += big_z * ma * k
                d[:, :, ja] += big_z * mc * k
                d_osm[key] = np.broadcast_to(two_over_total * mm * big_z * k, shape)
            elif name in ("alpha1", "alpha2"):
                which = 1 if name == "alpha1" else 2
                beta = request.value(ParameterKey(f"beta{which}", owner))  # (S, 1) or (S, N)
                slot = alphas.slot[:, p, which - 1]
                e, _, _, dg, dgp = (t[slot] for t in g_terms())
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
            for q, j in enumerate(cols):
                others = [mols[r] for r in range(len(cols)) if r != q]
                prod = others[0] if len(others) == 1 else others[0] * others[1]
                d[:, :, j] += (2.0 if name == "theta" else 1.0) * prod
            d_ions[key] = d
            d_osm[key] = np.broadcast_to(two_over_total * np.prod(mols, axis=0), shape)
    return d_ions, d_osm
