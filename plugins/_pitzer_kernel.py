"""The compiled kernel of Pitzer's mixture equations (numba): every ion's ln gamma and phi.

The same equations, constants and coefficients as the numpy path of
:mod:`saltbench.plugins._pitzer_mixture` (``_Mixture._block``; sources and equation numbers in
its docstring and in :mod:`saltbench.plugins._etheta`), fused: numpy makes one pass over a block
of compositions per operation, and the K^2 sums of the mixture equations need many; here each
block of compositions is read once, its functions of I (g and g' per distinct alpha, Etheta and
Etheta' per charge type by Pitzer's (1975) eq. 47, F) are worked out row by row, and the two
coefficient products (the part of ln gamma linear in the parameters, and the sums over pairs
that the functions of I weight) run over the nonzero coefficients only, with the rows of the
block innermost so the compiler can use the processor's vector instructions.

The coefficients are those the numpy path builds (``_weights``), read as their nonzero entries
by :func:`evaluate`; so a change to which parameter enters where is made once, in
``_weights``. What is written twice, here and in ``_Mixture._block``, is the per-row part: the
functions of I, F, the terms in C and psi that ``_weights(..., split=True)`` leaves out, and the
assembly of phi; ``tests/test_pitzer_kernel.py`` holds the two equal.

Importing this module imports numba (the optional extra ``fast``): ``_pitzer_choice`` imports
it only when a request is large enough, never at start-up.

Every constant of another module (Etheta's C1 to C4, the bound of the Taylor series of g) comes
in as an argument, not as a global: numba's cache is checked against this file alone, and would
keep a global's old value after a change elsewhere.
"""

from __future__ import annotations

import numba
import numpy as np
from llvmlite import ir
from numba import types
from numba.extending import intrinsic

from saltbench.plugins._etheta import C1, C2, C3, C4
from saltbench.plugins._pitzer_mixture import _SERIES_BELOW, _Layout, _Weights

BLOCK = 256  # compositions per block: its features (about 64 x BLOCK) stay in the L2 cache, and the
# loops over them are long enough for the cost of entering each to be small
_OPTIONS = {"fastmath": False, "error_model": "numpy", "parallel": False}


def _njit(fn=None, **extra):
    """``numba.njit`` with an on-disk cache where numba finds a writable place for one (beside
    this file, or numba's user-wide cache folder); where it finds none it refuses ``cache=True``
    with a RuntimeError, and the kernel is then compiled once per process instead.

    ``error_model="numpy"``: a division by zero gives inf as in numpy instead of a check per
    division (there is none: I and sum m are replaced by 1 where they are 0, as in numpy).
    """
    def wrap(f):
        try:
            return numba.njit(cache=True, **_OPTIONS, **extra)(f)
        except RuntimeError:
            return numba.njit(**_OPTIONS, **extra)(f)

    return wrap if fn is None else wrap(fn)


# -- exp and log the compiler can vectorise -------------------------------------------------------
# The C library's exp and log are calls the compiler cannot turn into vector instructions, and
# they were a third of the kernel's time. These are the textbook forms (range reduction by
# powers of 2 with ln 2 split in two parts, as in Cody and Waite, Software Manual for the
# Elementary Functions, 1980; Taylor series of the reduced argument), within an ulp or two of
# numpy's exp and log (tests/test_pitzer_kernel.py), on the arguments the kernel gives them.
@intrinsic
def _as_float(typingctx, bits):  # pragma: no cover - compiled
    """The float64 whose bits are the int64 ``bits``."""
    def codegen(context, builder, signature, args):
        return builder.bitcast(args[0], ir.DoubleType())
    return types.float64(types.int64), codegen


@intrinsic
def _as_bits(typingctx, x):  # pragma: no cover - compiled
    """The bits of the float64 ``x`` as an int64."""
    def codegen(context, builder, signature, args):
        return builder.bitcast(args[0], ir.IntType(64))
    return types.int64(types.float64), codegen


_LOG2E = 1.4426950408889634
_LN2_HI = 6.93147180369123816490e-01  # ln 2 in two parts: k * _LN2_HI is exact for |k| < 2^11
_LN2_LO = 1.90821492927058770002e-10
_SQRT2 = 1.4142135623730951


@_njit(inline="always")
def _exp(x):  # pragma: no cover - compiled
    """e^x: x = k ln 2 + r, |r| <= ln2 / 2, e^r by its Taylor series to r^13 (the rest below
    1e-17 relative), times 2^k built from its bits; 0 below -708 and inf above 709."""
    xc = min(max(x, -708.0), 709.0)
    kf = np.floor(xc * _LOG2E + 0.5)
    r = (xc - kf * _LN2_HI) - kf * _LN2_LO
    r2 = r * r
    r4 = r2 * r2
    # Estrin's scheme: the same series in fewer dependent steps
    a0 = 1.0 + r
    a1 = 1.0 / 2.0 + r * (1.0 / 6.0)
    a2 = 1.0 / 24.0 + r * (1.0 / 120.0)
    a3 = 1.0 / 720.0 + r * (1.0 / 5040.0)
    a4 = 1.0 / 40320.0 + r * (1.0 / 362880.0)
    a5 = 1.0 / 3628800.0 + r * (1.0 / 39916800.0)
    a6 = 1.0 / 479001600.0 + r * (1.0 / 6227020800.0)
    b0 = a0 + r2 * a1
    b1 = a2 + r2 * a3
    b2 = a4 + r2 * a5
    p = b0 + r4 * (b1 + r4 * (b2 + r4 * a6))
    y = p * _as_float((np.int64(kf) + 1023) << 52)
    return 0.0 if x < -708.0 else (np.inf if x > 709.0 else y)


@_njit(inline="always")
def _log(x):  # pragma: no cover - compiled
    """ln x for a positive normal x: x = 2^e m with sqrt(1/2) < m <= sqrt(2), ln m = 2 atanh(s),
    s = (m - 1)/(m + 1), |s| < 0.172, by its series to s^23 (the rest below 1e-17 relative)."""
    bits = _as_bits(x)
    e = (bits >> 52) - 1023
    m = _as_float((bits & 0x000FFFFFFFFFFFFF) | 0x3FF0000000000000)
    big = m > _SQRT2
    m = m * 0.5 if big else m
    e = e + 1 if big else e
    f = m - 1.0
    s = f / (2.0 + f)
    s2 = s * s
    s4 = s2 * s2
    c0 = 2.0 / 3.0 + s2 * (2.0 / 5.0)
    c1 = 2.0 / 7.0 + s2 * (2.0 / 9.0)
    c2 = 2.0 / 11.0 + s2 * (2.0 / 13.0)
    c3 = 2.0 / 15.0 + s2 * (2.0 / 17.0)
    c4 = 2.0 / 19.0 + s2 * (2.0 / 21.0)
    big_r = s2 * (c0 + s4 * (c1 + s4 * (c2 + s4 * (c3 + s4 * (c4 + s4 * (2.0 / 23.0))))))
    ef = float(e)
    return ef * _LN2_HI + ((f - s * (f - big_r)) + ef * _LN2_LO)  # ln(1 + f) = f - s (f - R)


@_njit(inline="always")
def _log1p(y):  # pragma: no cover - compiled
    """ln(1 + y) for y >= 0, accurate where y is small: ln(u) y / (u - 1), u = 1 + y (the
    rounding of u cancels; Goldberg, ACM Computing Surveys 23, 5 (1991), theorem 4)."""
    u = 1.0 + y
    d = u - 1.0
    return y if d == 0.0 else _log(u) * (y / d)


@_njit
def exp_and_log(x, y, ex, lg, lp):  # pragma: no cover - compiled
    """The kernel's exp of ``x``, log of ``y`` > 0 and log1p of ``y`` (for their tests)."""
    for r in range(x.shape[0]):
        ex[r] = _exp(x[r])
    for r in range(y.shape[0]):
        lg[r] = _log(y[r])
        lp[r] = _log1p(y[r])


@_njit(inline="always")
def _g_row(a, two_a2, s, inv, series_below):  # pragma: no cover - compiled
    """(e^-x, g, g') at x = a s, as _pitzer_mixture._g_terms (series below ``series_below``)."""
    xx = a * s
    e = _exp(-xx)
    g_closed = (1.0 - (1.0 + xx) * e) * (two_a2 * inv)
    g_series = 1.0 + xx * (-2.0 / 3.0 + xx * (0.25 + xx * (-1.0 / 15.0 + xx / 72.0)))
    gp_series = xx * (-1.0 / 3.0 + xx * (0.25 + xx * (-0.1 + xx / 36.0)))
    small = xx < series_below
    return e, (g_series if small else g_closed), (gp_series if small else e - g_closed)


@_njit
def _kernel(m, z, a_phi, b, alpha, c2, c4, prod_c3, prod_c1, type_w, n_types, ln_o, ln_f, ln_w, pr_o,
            pr_f, pr_w, pair_q, c_w, tri_q, tri_c, psi_w, series_below, ln_out, phi_out,
            total_out):  # pragma: no cover
    """ln gamma (S, K, N), phi (S, N) and sum_i m_i (N,) into ``ln_out``, ``phi_out``,
    ``total_out``.

    m (N, K) molalities; z (K,) charges; a_phi (N,); b (S, 1 or N); alpha (U, 1 or N) the
    distinct alphas (or one per row); c2, c4 Pitzer's (1975) C2 and C4, and prod_c3, prod_c1
    (P,) C3 zz^C4 and C1 zz^-C2 of each
    distinct product zz of charges Etheta needs, type_w (T, P) its weights per charge type;
    ln_o, ln_f, ln_w (S, nnz, 1 or N): output row, feature and value of each nonzero
    coefficient of ln gamma's product; pr_o, pr_f, pr_w the same for the sums over pairs (the
    feature counted from the first product m_j m_k); pair_q (P,) the product m_c m_a of each
    cation-anion pair and c_w (S, P, 1 or N) its C; tri_q (R,) the product of the two like ions
    of each triplet, tri_c (R,) its third ion, psi_w (S, R, 1 or N) its psi. Every loop over
    the rows of a block is innermost, so that it runs on vector instructions.
    """
    n, k = m.shape
    n_sets = ln_out.shape[0]
    n_alpha = alpha.shape[0]
    n_prod = prod_c3.shape[0]
    n_lin = (2 + n_alpha + n_types) * k
    n_q = k * (k - 1) // 2
    o_zero = n_alpha + n_types
    n_out = o_zero + 1  # the sums over pairs the functions of I weight, and sum m_j m_k (beta0, theta)
    oz = (1 + n_alpha + n_types) * k
    blk = BLOCK
    x = np.empty((n_lin + n_q, blk))
    s_ = np.empty(blk)
    i_ = np.empty(blk)
    inv_ = np.empty(blk)
    tot_ = np.empty(blk)
    zs_ = np.empty(blk)
    aphi_ = np.empty(blk)
    e_ = np.empty((n_alpha, blk))
    g_ = np.empty((n_alpha, blk))
    gp_ = np.empty((n_alpha, blk))
    et_ = np.empty((n_types, blk))
    etp_ = np.empty((n_types, blk))
    base_ = np.empty(blk)
    lb_ = np.empty(blk)
    bc4_ = np.empty(blk)
    jr = np.empty((n_prod, blk))
    xr = np.empty((n_prod, blk))
    acc = np.empty((k, blk))
    sums = np.empty((n_out, blk))
    f_ = np.empty(blk)
    sbs_ = np.empty(blk)
    ex_ = np.empty(blk)
    cc_ = np.empty(blk)
    ps_ = np.empty(blk)
    z2 = z * z
    z_abs = np.abs(z)
    alpha_per_row = alpha.shape[1] != 1
    b_per_row = b.shape[1] != 1
    w_per_row = ln_w.shape[2] != 1
    nnz_ln = ln_o.shape[0]
    nnz_pr = pr_o.shape[0]
    n_pairs = pair_q.shape[0]
    n_tri = tri_q.shape[0]
    for lo in range(0, n, blk):
        nb = min(blk, n - lo)
        # molalities (K, nb); I = 1/2 sum z^2 m, Z = sum |z| m, sum m
        for r in range(nb):
            for j in range(k):
                x[j, r] = m[lo + r, j]
        for r in range(nb):
            i_[r] = 0.0
            zs_[r] = 0.0
            tot_[r] = 0.0
        for j in range(k):
            for r in range(nb):
                v = x[j, r]
                i_[r] += v * z2[j]
                zs_[r] += v * z_abs[j]
                tot_[r] += v
        for r in range(nb):
            ii = i_[r] * 0.5
            i_[r] = ii
            s_[r] = np.sqrt(ii)
            inv_[r] = 1.0 / (ii if ii > 0.0 else 1.0)
            tt = tot_[r]
            total_out[lo + r] = tt
            tot_[r] = tt if tt > 0.0 else 1.0
            aphi_[r] = a_phi[lo + r]
        # e^-x, g, g' per alpha
        for u in range(n_alpha):
            if alpha_per_row:
                for r in range(nb):
                    a = alpha[u, lo + r]
                    e_[u, r], g_[u, r], gp_[u, r] = _g_row(a, 2.0 / (a * a), s_[r], inv_[r],
                                                           series_below)
            else:
                a = alpha[u, 0]
                two_a2 = 2.0 / (a * a)
                for r in range(nb):
                    e_[u, r], g_[u, r], gp_[u, r] = _g_row(a, two_a2, s_[r], inv_[r], series_below)
        # Etheta, Etheta' per charge type (Pitzer 1975, eq. 47 and its exact derivative), as
        # _etheta.etheta_of_types: x / zz = 6 A_phi sqrt(I), one log and one exp per row, one
        # exp per distinct product zz of charges
        if n_types > 0:
            for r in range(nb):
                base = s_[r] * (6.0 * aphi_[r])
                base = base if i_[r] > 0.0 else 1.0
                lb = _log(base)
                base_[r] = base
                bc4_[r] = _exp(lb * c4)
                lb_[r] = lb * -c2
            for p in range(n_prod):
                c3p = prod_c3[p]
                c1p = prod_c1[p]
                for r in range(nb):
                    u3 = bc4_[r] * c3p
                    q = _exp(lb_[r] - u3) * c1p
                    rr = 1.0 / (q + 4.0)
                    jj = base_[r] * rr
                    jr[p, r] = jj
                    xr[p, r] = ((((u3 * c4) + (1.0 + c2)) * q + 4.0) * rr) * jj
            for t in range(n_types):
                for r in range(nb):
                    et_[t, r] = 0.0
                    etp_[t, r] = 0.0
                for p in range(n_prod):
                    wt = type_w[t, p]
                    if wt != 0.0:
                        for r in range(nb):
                            et_[t, r] += wt * jr[p, r]
                            etp_[t, r] += wt * xr[p, r]
                for r in range(nb):
                    inv = inv_[r]
                    et = et_[t, r] * (0.25 * inv)
                    etp = etp_[t, r] * (0.125 * inv * inv) - et * inv
                    pos = i_[r] > 0.0
                    et_[t, r] = et if pos else 0.0
                    etp_[t, r] = etp if pos else 0.0
        # the features: m g_u, m Etheta_t, m Z, then the products m_j m_k (j < k)
        for u in range(n_alpha):
            off = (1 + u) * k
            for j in range(k):
                for r in range(nb):
                    x[off + j, r] = x[j, r] * g_[u, r]
        for t in range(n_types):
            off = (1 + n_alpha + t) * k
            for j in range(k):
                for r in range(nb):
                    x[off + j, r] = x[j, r] * et_[t, r]
        for j in range(k):
            for r in range(nb):
                x[oz + j, r] = x[j, r] * zs_[r]
        off = n_lin
        for j in range(k - 1):
            for jj in range(j + 1, k):
                for r in range(nb):
                    x[off, r] = x[j, r] * x[jj, r]
                off += 1
        for s in range(n_sets):
            # the sums over pairs
            for o in range(n_out):
                for r in range(nb):
                    sums[o, r] = 0.0
            for q in range(nnz_pr):
                o = pr_o[q]
                f = n_lin + pr_f[q]
                if w_per_row:
                    for r in range(nb):
                        sums[o, r] += pr_w[s, q, lo + r] * x[f, r]
                else:
                    w = pr_w[s, q, 0]
                    for r in range(nb):
                        sums[o, r] += w * x[f, r]
            # sum m_c m_a C, and sum psi m_j m_k m_o over the triplets
            for r in range(nb):
                cc_[r] = 0.0
                ps_[r] = 0.0
            for p in range(n_pairs):
                f = n_lin + pair_q[p]
                if w_per_row:
                    for r in range(nb):
                        cc_[r] += c_w[s, p, lo + r] * x[f, r]
                else:
                    w = c_w[s, p, 0]
                    for r in range(nb):
                        cc_[r] += w * x[f, r]
            for t in range(n_tri):
                f = n_lin + tri_q[t]
                c = tri_c[t]
                if w_per_row:
                    for r in range(nb):
                        ps_[r] += psi_w[s, t, lo + r] * (x[f, r] * x[c, r])
                else:
                    w = psi_w[s, t, 0]
                    for r in range(nb):
                        ps_[r] += w * (x[f, r] * x[c, r])
            # F = -A_phi [s/(1 + b s) + (2/b) ln(1 + b s)] + sum m_c m_a B' + sum m_j m_k Etheta'
            for r in range(nb):
                bb = b[s, lo + r] if b_per_row else b[s, 0]
                sr = s_[r]
                bs = bb * sr
                sbs = sr / (bs + 1.0)
                sbs_[r] = sbs
                f_[r] = (_log1p(bs) * (2.0 / bb) + sbs) * -aphi_[r]
            for u in range(n_alpha):
                for r in range(nb):
                    f_[r] += sums[u, r] * (gp_[u, r] * inv_[r])
            for t in range(n_types):
                for r in range(nb):
                    f_[r] += sums[n_alpha + t, r] * etp_[t, r]
            # ln gamma: the coefficient product, then z_i^2 F + |z_i| sum m_c m_a C
            for j in range(k):
                for r in range(nb):
                    acc[j, r] = 0.0
            for q in range(nnz_ln):
                o = ln_o[q]
                f = ln_f[q]
                if w_per_row:
                    for r in range(nb):
                        acc[o, r] += ln_w[s, q, lo + r] * x[f, r]
                else:
                    w = ln_w[s, q, 0]
                    for r in range(nb):
                        acc[o, r] += w * x[f, r]
            for j in range(k):
                zj = z2[j]
                za = z_abs[j]
                for r in range(nb):
                    ln_out[s, j, lo + r] = acc[j, r] + zj * f_[r] + za * cc_[r]
            # sum_i m_i (phi - 1) / 2 = -A_phi I^1.5/(1 + b s) + sum m_c m_a (B^phi + Z C)
            #      + sum m_j m_k (theta + Etheta + I Etheta') + sum psi m m m
            for r in range(nb):
                ex_[r] = sbs_[r] * (-aphi_[r] * i_[r]) + sums[o_zero, r]
            for u in range(n_alpha):
                for r in range(nb):
                    ex_[r] += sums[u, r] * e_[u, r]
            for t in range(n_types):
                for r in range(nb):
                    ex_[r] += sums[n_alpha + t, r] * (et_[t, r] + i_[r] * etp_[t, r])
            for r in range(nb):
                phi_out[s, lo + r] = (ex_[r] + (zs_[r] * cc_[r] + ps_[r])) * (2.0 / tot_[r]) + 1.0


def etheta_constants(types: tuple[tuple[float, float], ...]
                     ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The constants of Etheta for charge types ``types`` (as the layout lists them): per
    distinct product zz of charges, C3 zz^C4 and C1 zz^-C2, and the weights (T, P) with which
    Etheta_t = (1 / 4I) sum_p w[t, p] J(x_p) / zz_p (as :func:`_etheta.etheta_of_types`)."""
    products: list[float] = []
    for zi, zj in types:
        for zz in (zi * zj, zi * zi, zj * zj):
            if zz not in products:
                products.append(zz)
    weights = np.zeros((len(types), len(products)))
    for t, (zi, zj) in enumerate(types):
        zij = zi * zj
        for zz, c in ((zi * zj, 1.0), (zi * zi, -0.5), (zj * zj, -0.5)):
            weights[t, products.index(zz)] += zij * c * zz
    zz_col = np.array(products, dtype=float)
    return C3 * zz_col**C4, C1 * zz_col**-C2, weights


def _nonzero(coef: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Rows, columns and values (S, nnz, R) of the entries of ``coef`` (S, R, O, F) that are
    nonzero in any set or row, by row then column."""
    rows, cols = np.nonzero(np.any(coef != 0.0, axis=(0, 1)))
    values = np.ascontiguousarray(coef[:, :, rows, cols].transpose(0, 2, 1))
    return rows.astype(np.intp), cols.astype(np.intp), values


def evaluate(lay: _Layout, alpha_values: np.ndarray, w: _Weights, molality: np.ndarray,
             a_phi: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """ln gamma (S, K, N) and phi (S, N), as ``_Mixture.run`` gives them, and sum_i m_i (N,).

    ``alpha_values`` (U, 1 or N) are the distinct alphas (``_Alphas.values``), ``w`` the
    coefficients of ``_weights(..., split=True)``, ``molality`` (N, K), ``a_phi`` (N,) and ``b``
    (S, 1 or N). The first call in a process compiles the kernel or loads it from numba's cache.
    """
    if w.c_mx is None or w.psi is None:
        raise ValueError("the kernel takes the coefficients of _weights(..., split=True)")
    m = np.ascontiguousarray(molality, dtype=float)
    n_sets = w.ln.shape[0]
    n = m.shape[0]
    ln_o, ln_f, ln_w = _nonzero(w.ln[..., :-1])  # the last column is F's, added in the kernel
    pr_o, pr_f, pr_w = _nonzero(w.pairs)
    if pr_o.size and pr_o.max() > w.n_alpha + w.n_types:
        raise ValueError("the sums over pairs have rows for phi: not split coefficients")
    prod_c3, prod_c1, type_w = etheta_constants(lay.types)
    tri = lay.triplets
    ln = np.empty((n_sets, lay.k, n))
    phi = np.empty((n_sets, n))
    total = np.empty(n)
    _kernel(m, np.ascontiguousarray(lay.z, dtype=float),
            np.ascontiguousarray(np.broadcast_to(a_phi, (n,)), dtype=float),
            np.ascontiguousarray(b, dtype=float), np.ascontiguousarray(alpha_values, dtype=float),
            C2, C4, prod_c3, prod_c1, type_w.reshape(len(lay.types), len(prod_c3)), len(lay.types),
            ln_o, ln_f, ln_w, pr_o, pr_f, pr_w,
            lay.q_of[lay.pc, lay.pa].astype(np.intp), _per_key(w.c_mx),
            lay.q_of[tri[:, 0], tri[:, 1]].astype(np.intp), tri[:, 2].astype(np.intp),
            _per_key(w.psi), _SERIES_BELOW, ln, phi, total)
    return ln, phi, total


def _per_key(values: np.ndarray) -> np.ndarray:
    """Values (S, R, keys) as (S, keys, R), rows innermost."""
    return np.ascontiguousarray(values.transpose(0, 2, 1), dtype=float)
