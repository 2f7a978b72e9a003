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
functions of I, F and the assembly of phi; ``tests/test_pitzer_kernel.py`` holds the two equal.

Importing this module imports numba (the optional extra ``fast``): ``_pitzer_mixture`` imports
it only when a request is large enough, never at start-up.
"""

from __future__ import annotations

import numba
import numpy as np

from saltbench.plugins._etheta import C1, C2, C3, C4
from saltbench.plugins._pitzer_mixture import _SERIES_BELOW, _Layout, _Weights

BLOCK = 64  # compositions per block: the features (about 64 x BLOCK) stay in the L1 cache


def _njit(fn):
    """``numba.njit`` with an on-disk cache where numba finds a writable place for one (beside
    this file, or numba's user-wide cache folder); where it finds none it refuses ``cache=True``
    with a RuntimeError, and the kernel is then compiled once per process instead.

    ``error_model="numpy"``: a division by zero gives inf as in numpy instead of a check per
    division (there is none: I and sum m are replaced by 1 where they are 0, as in numpy).
    """
    options = {"fastmath": False, "error_model": "numpy", "parallel": False}
    try:
        return numba.njit(cache=True, **options)(fn)
    except RuntimeError:
        return numba.njit(**options)(fn)


@_njit
def _kernel(m, z, a_phi, b, alpha, prod_c3, prod_c1, type_w, n_types,
            ln_o, ln_f, ln_w, pr_o, pr_f, pr_w, series_below, ln_out, phi_out):  # pragma: no cover
    """ln gamma (S, K, N) and phi (S, N) into ``ln_out``, ``phi_out``.

    m (N, K) molalities; z (K,) charges; a_phi (N,); b (S, 1 or N); alpha (U, 1 or N) the
    distinct alphas (or one per row); prod_c3, prod_c1 (P,) C3 zz^C4 and C1 zz^-C2 of each
    distinct product zz of charges Etheta needs, type_w (T, P) its weights per charge type;
    ln_o, ln_f, ln_w (S, nnz, 1 or N): output row, feature and value of each nonzero
    coefficient of ln gamma's product; pr_o, pr_f, pr_w the same for the sums over pairs (the
    feature counted from the first product m_j m_k).
    """
    n, k = m.shape
    n_sets = ln_out.shape[0]
    n_alpha = alpha.shape[0]
    n_prod = prod_c3.shape[0]
    n_lin = (2 + n_alpha + n_types) * k
    n_q = k * (k - 1) // 2
    n_out = n_alpha + n_types + 1 + k
    o_zero = n_alpha + n_types
    blk = BLOCK
    x = np.empty((n_lin + n_q, blk))
    s_ = np.empty(blk)
    i_ = np.empty(blk)
    inv_ = np.empty(blk)
    tot_ = np.empty(blk)
    aphi_ = np.empty(blk)
    e_ = np.empty((n_alpha, blk))
    g_ = np.empty((n_alpha, blk))
    gp_ = np.empty((n_alpha, blk))
    et_ = np.empty((n_types, blk))
    etp_ = np.empty((n_types, blk))
    jr = np.empty(n_prod)
    xr = np.empty(n_prod)
    acc = np.empty((k, blk))
    sums = np.empty((n_out, blk))
    f_ = np.empty(blk)
    sbs_ = np.empty(blk)
    z2 = z * z
    z_abs = np.abs(z)
    alpha_per_row = alpha.shape[1] != 1
    b_per_row = b.shape[1] != 1
    w_per_row = ln_w.shape[2] != 1
    nnz_ln = ln_o.shape[0]
    nnz_pr = pr_o.shape[0]
    for lo in range(0, n, blk):
        nb = min(blk, n - lo)
        # molalities (K, nb), I = 1/2 sum z^2 m, Z = sum |z| m, sum m
        for r in range(nb):
            ii = 0.0
            zz = 0.0
            tt = 0.0
            for j in range(k):
                v = m[lo + r, j]
                x[j, r] = v
                ii += v * z2[j]
                zz += v * z_abs[j]
                tt += v
            ii *= 0.5
            i_[r] = ii
            s_[r] = np.sqrt(ii)
            inv_[r] = 1.0 / (ii if ii > 0.0 else 1.0)
            tot_[r] = tt if tt > 0.0 else 1.0
            aphi_[r] = a_phi[lo + r]
            x[(1 + n_alpha + n_types) * k, r] = zz  # Z for now; times m below
        # e^-x, g, g' per alpha (Taylor series below x = series_below, as _g_terms)
        for u in range(n_alpha):
            for r in range(nb):
                a = alpha[u, lo + r] if alpha_per_row else alpha[u, 0]
                xx = a * s_[r]
                e = np.exp(-xx)
                e_[u, r] = e
                if xx < series_below:
                    g_[u, r] = 1.0 + xx * (-2.0 / 3.0 + xx * (0.25 + xx * (-1.0 / 15.0 + xx / 72.0)))
                    gp_[u, r] = xx * (-1.0 / 3.0 + xx * (0.25 + xx * (-0.1 + xx / 36.0)))
                else:
                    g = 1.0 - (1.0 + xx) * e
                    g *= (2.0 / (a * a)) * inv_[r]
                    g_[u, r] = g
                    gp_[u, r] = e - g
        # Etheta, Etheta' per charge type (Pitzer 1975, eq. 47 and its exact derivative)
        if n_types > 0:
            for r in range(nb):
                ii = i_[r]
                if ii > 0.0:
                    base = np.sqrt(ii) * (6.0 * aphi_[r])
                    log_base = np.log(base)
                    base_c4 = np.exp(log_base * C4)
                    log_base *= -C2
                    for p in range(n_prod):
                        u3 = base_c4 * prod_c3[p]
                        q = np.exp(log_base - u3) * prod_c1[p]
                        rr = 1.0 / (q + 4.0)
                        jj = base * rr
                        jr[p] = jj
                        xr[p] = ((((u3 * C4) + (1.0 + C2)) * q + 4.0) * rr) * jj
                    inv = inv_[r]
                    for t in range(n_types):
                        sj = 0.0
                        sx = 0.0
                        for p in range(n_prod):
                            sj += type_w[t, p] * jr[p]
                            sx += type_w[t, p] * xr[p]
                        et = sj * (0.25 * inv)
                        et_[t, r] = et
                        etp_[t, r] = sx * (0.125 * inv * inv) - et * inv
                else:
                    for t in range(n_types):
                        et_[t, r] = 0.0
                        etp_[t, r] = 0.0
        # the features: m g_u, m Etheta_t, m Z, then the products m_j m_k (j < k)
        oz = (1 + n_alpha + n_types) * k
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
        for j in range(k - 1, -1, -1):  # Z's row is overwritten last
            for r in range(nb):
                x[oz + j, r] = x[j, r] * x[oz, r]
        off = n_lin
        for j in range(k - 1):
            for jj in range(j + 1, k):
                for r in range(nb):
                    x[off, r] = x[j, r] * x[jj, r]
                off += 1
        for s in range(n_sets):
            # the sums over pairs, then F
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
            for r in range(nb):
                bb = b[s, lo + r] if b_per_row else b[s, 0]
                sr = s_[r]
                bs = bb * sr
                sbs = sr / (bs + 1.0)
                sbs_[r] = sbs
                ff = np.log1p(bs) * (2.0 / bb) + sbs
                ff *= -aphi_[r]
                inv = inv_[r]
                for u in range(n_alpha):
                    ff += sums[u, r] * (gp_[u, r] * inv)
                for t in range(n_types):
                    ff += sums[n_alpha + t, r] * etp_[t, r]
                f_[r] = ff
            # ln gamma: the coefficient product, then z_i^2 F
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
                for r in range(nb):
                    ln_out[s, j, lo + r] = acc[j, r] + z2[j] * f_[r]
            # sum_i m_i (phi - 1) / 2 = -A_phi I^1.5/(1 + b s) + sum m_c m_a (B^phi + Z C)
            #      + sum m_j m_k (theta + Etheta + I Etheta') + sum psi m m m
            for r in range(nb):
                ii = i_[r]
                ex = sbs_[r] * (-aphi_[r] * ii)
                ex += sums[o_zero, r]
                for u in range(n_alpha):
                    ex += sums[u, r] * e_[u, r]
                for t in range(n_types):
                    ex += sums[n_alpha + t, r] * (et_[t, r] + ii * etp_[t, r])
                rs = 0.0
                for j in range(k):
                    rs += sums[o_zero + 1 + j, r] * x[j, r]
                ex += rs
                ex *= 2.0 / tot_[r]
                phi_out[s, lo + r] = ex + 1.0


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
             a_phi: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """ln gamma (S, K, N) and phi (S, N), as ``_Mixture.run`` gives them.

    ``alpha_values`` (U, 1 or N) are the distinct alphas (``_Alphas.values``), ``w`` the
    coefficients of ``_weights``, ``molality`` (N, K), ``a_phi`` (N,) and ``b`` (S, 1 or N).
    The first call in a process compiles the kernel or loads it from numba's cache.
    """
    m = np.ascontiguousarray(molality, dtype=float)
    n_sets = w.ln.shape[0]
    n = m.shape[0]
    ln_o, ln_f, ln_w = _nonzero(w.ln[..., :-1])  # the last column is F's, added in the kernel
    pr_o, pr_f, pr_w = _nonzero(w.pairs)
    prod_c3, prod_c1, type_w = etheta_constants(lay.types)
    ln = np.empty((n_sets, lay.k, n))
    phi = np.empty((n_sets, n))
    _kernel(m, np.ascontiguousarray(lay.z, dtype=float),
            np.ascontiguousarray(np.broadcast_to(a_phi, (n,)), dtype=float),
            np.ascontiguousarray(b, dtype=float), np.ascontiguousarray(alpha_values, dtype=float),
            prod_c3, prod_c1, type_w.reshape(len(lay.types), len(prod_c3)), len(lay.types),
            ln_o, ln_f, ln_w, pr_o, pr_f, pr_w, _SERIES_BELOW, ln, phi)
    return ln, phi
