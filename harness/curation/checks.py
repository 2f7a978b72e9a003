"""``data check``: lint every dataset and cross-check what the data say about each other.

Three checks, each against a tolerance stated here and justified in DEVELOPERS.md:

1. Neighbours: each point against a smooth Gibbs-Duhem-consistent fit of the rest of its own
   dataset (exact leave-one-out residual of a weighted linear fit). A point is flagged when it
   misses by more than ``OUTLIER_SIGMAS`` of its stated uncertainty plus half a printed digit:
   a copying slip of one digit in the second or third decimal stands far outside that.
2. Thermodynamic consistency: osmotic data of an electrolyte are smoothed and converted to
   ln gamma± through Gibbs-Duhem, and compared with its activity datasets (and the reverse).
   Flagged above ``CONSISTENCY_LN_GAMMA`` in ln gamma± (0.01, i.e. 1 % in gamma±, about three
   times the 0.003 standard uncertainty of the compilations).
3. Second source: two datasets of the same property are compared at each other's molalities
   through the smooth fit; flagged where they differ by more than ``SOURCE_SIGMAS`` combined
   standard uncertainties plus their printed precision.
Only molalities up to the last point of each dataset are compared: no extrapolation.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.curation.smoothing import fit_smooth, fit_smooth_joint
from saltbench.water.debye_huckel import debye_huckel_constants

OUTLIER_SIGMAS = 4.0
CONSISTENCY_LN_GAMMA = 0.01
SOURCE_SIGMAS = 3.0
#: A point is judged against neighbours (or another source) only when they bracket it within
#: this molality ratio: the usual 1-2-5 table grid qualifies, a jump from 2 to 5 mol/kg does not.
BRACKET_RATIO = 1.6
#: Points on sparser grids (up to this ratio) are judged with ``SPARSE_FACTOR`` times the limit;
#: beyond it (and at the ends of a dataset) a point is left to the other two checks.
SPARSE_RATIO = 2.55
SPARSE_FACTOR = 6.0
#: ... and only up to this molality, where the curves are gentle enough for a smooth fit of a
#: sparse grid to judge a point; above it, sparse points are left to the other checks.
SPARSE_MAX_MOLALITY = 0.5
#: A second source is compared at the reference's own molalities, or between reference points
#: no further apart than this ratio, so the comparison never leans on a long interpolation.
SOURCE_BRACKET_RATIO = 1.5


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


def check_electrolyte(e: Electrolyte, pts: pd.DataFrame, meta: pd.DataFrame) -> CheckReport:
    rep = CheckReport()
    groups = {key: g.sort_values("molality") for key, g in pts.groupby("dataset", sort=True)}
    fits = {}
    for key, g in groups.items():
        m, y, u, kind = _series(g)
        if kind == "water_activity":
            continue
        dh = debye_huckel_constants(float(g.temperature_k.iloc[0]))
        prec = float(meta.loc[meta.key == key, "precision"].iloc[0])
        prec_y = prec / g.value.to_numpy(float) if kind == "ln_gamma" else np.full_like(m, prec)
        if len(m) < 4:
            fit, _ = fit_smooth(e, dh, m, y, u, kind, n_terms=max(1, len(m) - 1))
            fits[key] = (fit, kind, m, y, u, prec_y, g)
            continue
        fit, loo = fit_smooth(e, dh, m, y, u, kind)
        fits[key] = (fit, kind, m, y, u, prec_y, g)
        limit = OUTLIER_SIGMAS * u + 0.5 * prec_y
        # only points whose neighbours on both sides are close enough to judge them by
        gap = np.full(len(m), np.inf)
        gap[1:-1] = np.maximum(m[2:] / m[1:-1], m[1:-1] / m[:-2])
        # a sparse 1-2-5 grid judges a point more loosely: it still catches gross slips
        limit = np.where(gap <= BRACKET_RATIO, limit, SPARSE_FACTOR * limit)
        judged = (gap <= BRACKET_RATIO) | ((gap <= SPARSE_RATIO) & (m <= SPARSE_MAX_MOLALITY))
        loo = np.where(judged, loo, 0.0)
        worst = float(np.max(np.abs(loo) / limit))
        rep.summary.append({"electrolyte": e.name, "dataset": key, "check": "neighbours",
                            "worst_ratio": worst, "n_points": len(m)})
        for i in np.flatnonzero(np.abs(loo) > limit):
            rep.findings.append(Finding(
                "neighbours", e.name, key, float(m[i]), int(g.line.iloc[i]), str(g.file.iloc[i]),
                f"{g.property.iloc[0]} {g.value.iloc[i]:g} at m = {m[i]:g} mol/kg disagrees with its "
                f"neighbours by {loo[i]:+.4f} ({'ln gamma' if kind == 'ln_gamma' else 'phi'}); "
                f"limit {limit[i]:.4f}", float(loo[i]), float(limit[i])))
    keys = list(fits)
    for a in keys:
        fa, ka, ma, ya, ua, pa, ga = fits[a]
        for b in keys:
            fb, kb, mb, yb, ub, pb, gb = fits[b]
            if a >= b and ka == kb or a == b:
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
