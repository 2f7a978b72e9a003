"""``data check``: lint every dataset and cross-check what the data say about each other.

Three checks, each against a tolerance stated here and justified in DEVELOPERS.md:

1. Neighbours: each point against its neighbours, left out of its own prediction (see
   :func:`loo_neighbours`): the points of one quantity of one electrolyte, from all its
   datasets, are one pool; each is predicted from the others and flagged when it misses by
   more than its table's last printed digit, and the prediction's own uncertainty, allow. A
   copying slip of one unit in the first or second significant digit, or two digits swapped,
   stands outside that wherever the table is dense enough to be judged
   (``tests/benchmarks/bench_slips.py`` measures how often).
2. Thermodynamic consistency: osmotic data of an electrolyte are smoothed and converted to
   ln gamma± through Gibbs-Duhem, and compared with its activity datasets (and the reverse).
   Flagged above ``CONSISTENCY_LN_GAMMA`` in ln gamma± (0.01, i.e. 1 % in gamma±, about three
   times the 0.003 standard uncertainty of the compilations).
3. Second source: two datasets of the same property are compared at each other's molalities
   through the smooth fit of the denser one; flagged where they differ by more than
   ``SOURCE_SIGMAS`` combined standard uncertainties plus their printed precision.
Only molalities up to the last point of each dataset are compared: no extrapolation.

Each check runs at each temperature apart (issue 21): points are compared only with points
within ``SAME_TEMPERATURE_K`` (0.05 K) of their own temperature, and each finding names it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.curation.smoothing import choose_terms, design, fit_smooth, fit_smooth_joint
from saltbench.curation.temperatures import temperature_groups
from saltbench.water.debye_huckel import debye_huckel_constants

if TYPE_CHECKING:
    import pandas as pd

#: Neighbours check (see ``loo_neighbours``): standard deviations of the prediction allowed
#: beyond half a printed digit, and the share of two predictions' disagreement added to it.
#: Calibrated so that the bundle, as printed, has no finding (tests/benchmarks/bench_slips.py).
NEIGHBOUR_SIGMAS = 5.0
ADEQUACY = 1.5
#: A point is judged only between neighbours within this molality ratio of it (a 1-2-5 grid
#: qualifies) ...
SPARSE_RATIO = 2.55
#: ... and above this molality, where curves steepen and tables thin out, only between
#: neighbours within ``DENSE_RATIO`` (a 0.2 or 0.5 mol/kg step; not 2-5-10-15-20 mol/kg).
SPARSE_MAX_MOLALITY_JUDGED = 1.0
DENSE_RATIO = 1.3
#: A table's end is judged from one side (below that molality) where it and its two nearest
#: neighbours sit within this ratio of each other.
END_RATIO = 2.05
#: At most this many points are named per quantity and electrolyte: each is taken out before
#: the next is looked for, so one slip does not drag its neighbours into the findings.
MAX_FLAGGED_PER_POOL = 3
CONSISTENCY_LN_GAMMA = 0.01
#: properties checked only through the Gibbs-Helmholtz relation, never pooled with activity data
THERMAL_PROPERTIES = ("L_phi", "Cp_phi")
SOURCE_SIGMAS = 3.0
#: A second source is compared at the reference's own molalities, or between reference points
#: no further apart than this ratio, so the comparison never leans on a long interpolation ...
SOURCE_BRACKET_RATIO = 1.5
#: ... by a reference with at least this many points (a two-point column is no smooth curve).
SOURCE_MIN_POINTS = 4


def _bracketed(m: np.ndarray, grid: np.ndarray, ratio: float = SOURCE_BRACKET_RATIO) -> np.ndarray:
    j = np.searchsorted(grid, m)
    ok = np.zeros(len(m), bool)
    exact = np.isin(m, grid)
    inner = (j > 0) & (j < len(grid))
    jj = np.clip(j, 1, len(grid) - 1)
    ok[inner] = (grid[jj[inner]] / grid[jj[inner] - 1]) <= ratio
    return ok | exact


@dataclass
class Finding:
    check: str  # "neighbours", "gibbs-duhem", "second-source", "lint"
    electrolyte: str
    dataset: str
    molality: float | None
    line: int | None
    file: str
    message: str
    value: float | None = None
    limit: float | None = None
    #: the temperature (K) of the points the finding compares; None where it spans several
    temperature_k: float | None = None

    def as_dict(self) -> dict:
        return self.__dict__.copy()


@dataclass
class CheckReport:
    findings: list[Finding] = field(default_factory=list)
    summary: list[dict] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not self.findings


def _series(frame: pd.DataFrame) -> tuple[np.ndarray, np.ndarray, np.ndarray, str]:
    prop = frame.property.iloc[0]
    m = frame.molality.to_numpy(float)
    v = frame.value.to_numpy(float)
    u = frame.uncertainty.to_numpy(float)
    if prop == "gamma_pm":
        return m, np.log(v), u / v, "ln_gamma"
    if prop == "water_activity":
        return m, v, u, "water_activity"
    return m, v, u, "osmotic"


def _precision_y(g: pd.DataFrame, kind: str) -> np.ndarray:
    """One unit of each point's last printed digit, in the checked quantity (ln gamma± or phi)."""
    prec = g["precision"].to_numpy(float)
    if kind != "ln_gamma":
        return prec
    if (g.basis == "linear").all():
        return prec / g.value.to_numpy(float)
    basis = g.basis.to_numpy()
    return np.where(basis == "ln", prec, np.where(basis == "log10", prec * np.log(10.0),
                                                  prec / g.value.to_numpy(float)))


@dataclass
class _Pool:
    """Every point of one quantity of one electrolyte at one temperature, from all its datasets."""

    kind: str
    temperature_k: float
    m: np.ndarray
    y: np.ndarray
    rounding: np.ndarray   # standard deviation of rounding to the printed digit (prec / sqrt 12)
    half_digit: np.ndarray
    stated: np.ndarray     # stated standard uncertainty, in y
    dataset: np.ndarray    # index into ``frames``
    frames: list[pd.DataFrame]
    row: np.ndarray        # row within its frame


def _pools(groups: dict[str, pd.DataFrame]) -> list[_Pool]:
    # the caller hands one temperature's points (``check_electrolyte``)
    by: dict[str, list[pd.DataFrame]] = {}
    for g in groups.values():
        kind = _series(g)[3]
        if kind != "water_activity":
            by.setdefault(kind, []).append(g)
    pools = []
    for kind, frames in by.items():
        t = round(float(np.mean(np.concatenate([g.temperature_k.to_numpy(float) for g in frames]))), 2)
        series = [_series(g) for g in frames]
        prec = np.concatenate([_precision_y(g, kind) for g in frames])
        # a table is smooth to its last printed digit: its scatter is rounding (a remembered value
        # is held to the same, and cut where it fails: DEVELOPERS.md, "Adding a dataset")
        pools.append(_Pool(kind, t, np.concatenate([s[0] for s in series]), np.concatenate([s[1] for s in series]),
                           prec / np.sqrt(12.0), 0.5 * prec, np.concatenate([s[2] for s in series]),
                           np.concatenate([np.full(len(g), i) for i, g in enumerate(frames)]), frames,
                           np.concatenate([np.arange(len(g)) for g in frames])))
    return pools


def _nearest(pool: _Pool, i: int | np.integer, active: np.ndarray, below: bool, k: int = 3) -> np.ndarray:
    """Up to ``k`` nearest active points on one side of point i, its own dataset's first."""
    side = (pool.m < pool.m[i]) if below else (pool.m > pool.m[i])
    idx = np.flatnonzero(side & active)
    idx = idx[np.argsort(-pool.m[idx] if below else pool.m[idx], kind="stable")]
    own = idx[pool.dataset[idx] == pool.dataset[i]]
    return np.concatenate([own, idx[pool.dataset[idx] != pool.dataset[i]]])[:k] if len(own) < k else own[:k]


def _judged(m: np.ndarray, i: int | np.integer, lo: np.ndarray, hi: np.ndarray) -> bool:
    """Whether point i's neighbours are close enough to judge it by (see the ratios above)."""
    ratio = lambda a, b: max(a, b) / min(a, b)
    if len(lo) and len(hi):
        bracket = DENSE_RATIO if m[i] > SPARSE_MAX_MOLALITY_JUDGED else SPARSE_RATIO
        return ratio(m[i], m[lo[0]]) <= bracket and ratio(m[i], m[hi[0]]) <= bracket
    one = lo if len(lo) else hi
    return (len(one) >= 2 and m[i] <= SPARSE_MAX_MOLALITY_JUDGED
            and ratio(m[i], m[one[0]]) <= END_RATIO and ratio(m[one[0]], m[one[1]]) <= END_RATIO)


def loo_neighbours(e: Electrolyte, pool: _Pool, active: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Leave-one-out residual of every active point against its neighbours, and its limit.

    The quantity judged is the part beyond the Debye-Hückel term (which carries the steep dilute
    shape). Each point is predicted without itself twice: by a quadratic in sqrt(m) through its
    nearest neighbours (two on each side; three from one side at a table's end), and by the
    smooth Gibbs-Duhem-consistent series of :mod:`smoothing` fitted to every other point. The
    prediction is their mean; the limit is half a printed digit, plus ``NEIGHBOUR_SIGMAS``
    standard deviations of the local prediction (the neighbours' rounding; for neighbours from
    another dataset also both datasets' stated uncertainties, since two evaluations differ
    smoothly by about that much), plus ``ADEQUACY`` times half the two predictions'
    disagreement: where the curve bends more than either follows, they disagree and the limit
    widens; a slip in the point itself moves neither. Points whose neighbours are too far apart
    to judge them (``_judged``) get no limit (inf): they are left to the other checks.
    """
    dh = debye_huckel_constants(pool.temperature_k)
    idx = np.flatnonzero(active)
    resid = np.full(len(pool.m), np.nan)
    limit = np.full(len(pool.m), np.inf)
    if len(idx) < 3:
        return resid, limit
    off, cols = design(e, dh, pool.m, pool.kind, choose_terms(len(idx), float(pool.m[idx].max())))
    cols = cols / np.maximum(np.abs(cols[idx]).max(axis=0), 1e-300)
    excess = pool.y - off
    x = np.sqrt(pool.m)
    for i in idx:
        lo, hi = _nearest(pool, i, active, True), _nearest(pool, i, active, False)
        if not _judged(pool.m, i, lo, hi):
            continue
        near = np.concatenate([lo[:2], hi[:2]]) if len(lo) and len(hi) else (lo if len(lo) else hi)[:3]
        # another dataset's point carries both datasets' stated uncertainty as well as its rounding
        sd = np.where(pool.dataset == pool.dataset[i], pool.rounding,
                      np.sqrt(pool.rounding ** 2 + pool.stated ** 2 + pool.stated[i] ** 2))
        design_ = np.vander(x[near] - x[i], 2 if len(near) == 2 else 3, increasing=True) / sd[near, None]
        weights = np.linalg.pinv(design_)[0] / sd[near]  # local prediction = weights @ excess[near]
        local = float(weights @ excess[near])
        sd_local = float(np.sqrt(np.sum((weights * sd[near]) ** 2)))
        others = idx[idx != i]
        smooth_weights = (cols[i] @ np.linalg.pinv(cols[others] / sd[others, None], rcond=1e-10)) / sd[others]
        smooth = float(smooth_weights @ excess[others])
        resid[i] = excess[i] - 0.5 * (local + smooth)
        limit[i] = (pool.half_digit[i] + NEIGHBOUR_SIGMAS * np.hypot(sd_local, pool.rounding[i])
                    + ADEQUACY * 0.5 * abs(local - smooth))
    return resid, limit


def _neighbours(e: Electrolyte, groups: dict[str, pd.DataFrame], rep: CheckReport) -> None:
    for pool in _pools(groups):
        active = np.ones(len(pool.m), bool)
        if len(pool.m) < 3:
            continue
        for _ in range(MAX_FLAGGED_PER_POOL):
            resid, limit = loo_neighbours(e, pool, active)
            ratio = np.where(active & np.isfinite(limit), np.abs(np.nan_to_num(resid)) / limit, 0.0)
            worst = int(np.argmax(ratio))
            if ratio[worst] <= 1.0:
                break
            g = pool.frames[pool.dataset[worst]]
            r = pool.row[worst]
            rep.findings.append(Finding(
                "neighbours", e.name, str(g.dataset.iloc[r]), float(pool.m[worst]), int(g.line.iloc[r]),
                str(g.file.iloc[r]),
                f"{g.property.iloc[r]} {g.value.iloc[r]:g} at m = {pool.m[worst]:g} mol/kg disagrees with its "
                f"neighbours by {resid[worst]:+.4f} ({'ln gamma' if pool.kind == 'ln_gamma' else 'phi'}); "
                f"limit {limit[worst]:.4f}", float(resid[worst]), float(limit[worst])))
            active[worst] = False
            if active.sum() < 3:
                break
        for d, g in enumerate(pool.frames):
            sel = pool.dataset == d
            rep.summary.append({"electrolyte": e.name, "dataset": str(g.dataset.iloc[0]), "check": "neighbours",
                                "worst_ratio": float(np.max(ratio[sel])), "n_points": int(sel.sum()),
                                "n_judged": int(np.sum(np.isfinite(limit[sel])))})


def check_electrolyte(e: Electrolyte, pts: pd.DataFrame) -> CheckReport:
    """Every check of one electrolyte's points, at each temperature apart (points within
    ``SAME_TEMPERATURE_K`` of each other are at one temperature): a point is compared only with
    points at its own temperature. Findings and summary rows carry that temperature. Thermal
    data (L_phi, Cp_phi) are not pooled with activity data; with L_phi data at hand, ln gamma±
    at two temperatures is checked against the Gibbs-Helmholtz relation (:mod:`thermal_checks`).
    """
    rep = CheckReport()
    activity = pts[~pts.property.isin(THERMAL_PROPERTIES)] if len(pts) else pts
    for t, idx in temperature_groups(activity.temperature_k.to_numpy(float)) if len(activity) else []:
        part = _check_at_one_temperature(e, activity.iloc[idx])
        for f in part.findings:
            f.temperature_k = round(t, 2)
        for row in part.summary:
            row["temperature_k"] = round(t, 2)
        rep.findings += part.findings
        rep.summary += part.summary
    if len(pts) and (pts.property == "L_phi").any():
        from saltbench.curation.thermal_checks import gibbs_helmholtz

        part = gibbs_helmholtz(e, pts)
        rep.findings += part.findings
        rep.summary += part.summary
    return rep


def _check_at_one_temperature(e: Electrolyte, pts: pd.DataFrame) -> CheckReport:
    rep = CheckReport()
    groups = {str(key): g.sort_values("molality") for key, g in pts.groupby("dataset", sort=True)}
    fits: dict[str, tuple] = {}
    for key, g in groups.items():
        m, y, u, kind = _series(g)
        if kind == "water_activity":
            continue
        dh = debye_huckel_constants(round(float(g.temperature_k.mean()), 6))
        prec_y = _precision_y(g, kind)
        fit, _ = fit_smooth(e, dh, m, y, u, kind, n_terms=max(1, len(m) - 1) if len(m) < 4 else None)
        fits[key] = (fit, kind, m, y, u, prec_y, g)
    _neighbours(e, groups, rep)
    keys = list(fits)
    for a0 in keys:
        for b0 in keys:
            if a0 >= b0 and fits[a0][1] == fits[b0][1] or a0 == b0:
                continue
            # the denser of two sources of one property is the reference the other is judged by
            a, b = (b0, a0) if fits[a0][1] == fits[b0][1] and len(fits[a0][2]) < len(fits[b0][2]) else (a0, b0)
            fa, ka, ma, ya, ua, pa, ga = fits[a]
            fb, kb, mb, yb, ub, pb, gb = fits[b]
            if ka == kb and len(ma) < SOURCE_MIN_POINTS:
                continue
            if ka == kb:
                # second source: b's points against a's smooth curve where a's points bracket them closely
                inside = _bracketed(mb, ma)
                if not np.any(inside):
                    continue
                pred = fa.ln_gamma(mb[inside]) if kb == "ln_gamma" else fa.osmotic(mb[inside])
                diff = yb[inside] - pred
                check = "second-source"
                limit = (SOURCE_SIGMAS * np.hypot(ub[inside], np.interp(mb[inside], ma, ua))
                         + pb[inside] + np.interp(mb[inside], ma, pa))
                idx = np.flatnonzero(inside)
                how = f"{a} (smoothed)"
            else:
                if ka != "osmotic":
                    continue  # each osmotic/activity pair once
                # one Gibbs-Duhem-consistent smooth function through both, over their common range
                top = min(ma.max(), mb.max()) * (1 + 1e-9)
                sa, sb = ma <= top, mb <= top
                if sa.sum() < 3 or sb.sum() < 3:
                    continue
                dh = fa.dh
                _, (ra, rb) = fit_smooth_joint(e, dh, [(ma[sa], ya[sa], ua[sa], ka), (mb[sb], yb[sb], ub[sb], kb)])
                check = "gibbs-duhem"
                diff = rb
                limit = np.full(diff.shape, CONSISTENCY_LN_GAMMA)
                idx = np.flatnonzero(sb)
                how = f"{a} through one Gibbs-Duhem-consistent fit"
                worst_phi = float(np.max(np.abs(ra)) / CONSISTENCY_LN_GAMMA)
                if worst_phi > 1:
                    i = int(np.argmax(np.abs(ra)))
                    ia = np.flatnonzero(sa)[i]
                    rep.findings.append(Finding(
                        check, e.name, a, float(ma[ia]), int(ga.line.iloc[ia]), str(ga.file.iloc[ia]),
                        f"osmotic at m = {ma[ia]:g} mol/kg cannot be reconciled with {b} through "
                        f"Gibbs-Duhem (misses by {ra[i]:+.4f}; limit {CONSISTENCY_LN_GAMMA})",
                        float(ra[i]), CONSISTENCY_LN_GAMMA))
            worst = float(np.max(np.abs(diff) / limit))
            rep.summary.append({"electrolyte": e.name, "dataset": f"{b} vs {a}", "check": check,
                                "worst_ratio": worst, "n_points": int(len(diff))})
            for j in np.flatnonzero(np.abs(diff) > limit):
                i = idx[j]
                rep.findings.append(Finding(
                    check, e.name, b, float(mb[i]), int(gb.line.iloc[i]), str(gb.file.iloc[i]),
                    f"{gb.property.iloc[0]} at m = {mb[i]:g} mol/kg differs from {how} by "
                    f"{diff[j]:+.4f}; limit {limit[j]:.4f}", float(diff[j]), float(limit[j])))
    return rep
