"""``data check`` across temperatures: activity coefficients at two temperatures against the
Gibbs-Helmholtz relation, where L_phi data of the salt exist (issue 21, item 1).

The relation (Robinson and Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 2; Pitzer, Activity
Coefficients in Electrolyte Solutions, 2nd ed., 1991, ch. 3):

    d ln gamma± / dT = -L_2 / (nu R T^2),      L_2 = L_phi + m dL_phi/dm              (1)

Method (ours, kept simple):
- L_phi(m) is smoothed by weighted least squares as sum_k c_k m^(k/2), k = 1..K with K = 3 or one
  fewer than the points (no constant: L_phi vanishes at infinite dilution, and its limiting law
  goes as sqrt(m)); then L_2 = sum_k c_k (1 + k/2) m^(k/2) exactly, with its standard
  uncertainty from the fit's covariance. The L_phi group nearest the middle of the interval is
  used.
- For each two neighbouring temperatures T1 < T2 of the activity data (gamma_pm, any dataset),
  at every molality printed at both (within 1e-9 relative) and within the L_phi data's range,
  eq. (1) integrated with L_2 held constant over [T1, T2] gives
      ln gamma±(T2) - ln gamma±(T1) = (L_2 / (nu R)) (1/T2 - 1/T1).
  Holding L_2 constant neglects its temperature derivative (the partial molar heat capacity
  relative to infinite dilution): with L_phi taken near the interval's middle this error is of
  second order, a few 1e-3 in ln gamma± for 25 K (about 30 J/(K mol) times the offset of the
  middle), which ``ALLOWANCE`` covers.
- Flagged where the two sides differ by more than ``SIGMAS`` combined standard uncertainties (the
  two points' stated uncertainties in ln gamma± and u(L_2) carried through the right side) plus
  ``ALLOWANCE``. Intervals wider than ``MAX_INTERVAL_K`` are not judged (the neglected heat
  capacity would matter more than the check).
R is CODATA's through ``scipy.constants``.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.curation.temperatures import temperature_groups

if TYPE_CHECKING:
    import pandas as pd

    from saltbench.curation.checks import CheckReport

SIGMAS = 3.0
ALLOWANCE = 0.005
MAX_INTERVAL_K = 30.0


def _gas_constant() -> float:
    from scipy.constants import R

    return float(R)


def smooth_l_phi(m: np.ndarray, l_phi: np.ndarray, u: np.ndarray
                 ) -> tuple[np.ndarray, np.ndarray, int]:
    """Coefficients c_k (k = 1..K) of L_phi = sum c_k m^(k/2), their covariance, and K."""
    n_terms = int(min(3, max(1, m.size - 1)))
    powers = np.arange(1, n_terms + 1) / 2.0
    a = m[:, None] ** powers[None, :] / u[:, None]
    coef, *_ = np.linalg.lstsq(a, l_phi / u, rcond=None)
    cov = np.linalg.pinv(a.T @ a)
    if m.size > n_terms:  # scatter beyond the stated uncertainties widens the band, never narrows it
        resid = a @ coef - l_phi / u
        cov = cov * max(1.0, float(resid @ resid) / (m.size - n_terms))
    return coef, cov, n_terms


def l2_from_l_phi(coef: np.ndarray, cov: np.ndarray, m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """L_2 = L_phi + m dL_phi/dm from the smooth L_phi, and its standard uncertainty."""
    powers = np.arange(1, coef.size + 1) / 2.0
    g = (1.0 + powers)[None, :] * np.asarray(m, float)[:, None] ** powers[None, :]
    return g @ coef, np.sqrt(np.einsum("ij,jk,ik->i", g, cov, g))


def gibbs_helmholtz(e: Electrolyte, pts: pd.DataFrame) -> CheckReport:
    """The check of this module over one electrolyte's points (all temperatures)."""
    from saltbench.curation.checks import CheckReport, Finding

    rep = CheckReport()
    lphi = pts[pts.property == "L_phi"]
    act = pts[pts.property == "gamma_pm"]
    groups = temperature_groups(act.temperature_k.to_numpy(float)) if len(act) else []
    l_groups = temperature_groups(lphi.temperature_k.to_numpy(float))
    pairs = [(a, b) for a, b in zip(groups, groups[1:]) if b[0] - a[0] <= MAX_INTERVAL_K]
    if not pairs:
        rep.summary.append({"electrolyte": e.name, "dataset": ", ".join(sorted(set(lphi.dataset))),
                            "check": "gibbs-helmholtz", "status": "not applicable",
                            "reason": "needs gamma_pm data at two temperatures at most "
                                      f"{MAX_INTERVAL_K:g} K apart, at molalities printed at both"})
        return rep
    r_gas = _gas_constant()
    for (t1, i1), (t2, i2) in pairs:
        t_mid = 0.5 * (t1 + t2)
        _, il = min(l_groups, key=lambda g: abs(g[0] - t_mid))
        lg = lphi.iloc[il]
        lm, lv, lu = (lg.molality.to_numpy(float), lg.value.to_numpy(float), lg.uncertainty.to_numpy(float))
        coef, cov, _ = smooth_l_phi(lm, lv, lu)
        g1, g2 = act.iloc[i1], act.iloc[i2]
        m1 = g1.molality.to_numpy(float)
        rows = []
        for j in range(len(g2)):
            m = float(g2.molality.iloc[j])
            k = np.flatnonzero(np.abs(m1 - m) <= 1e-9 * m)
            if k.size and m <= lm.max() * (1 + 1e-9):
                rows.append((j, int(k[0])))
        if not rows:
            continue
        j2 = np.array([r[0] for r in rows])
        j1 = np.array([r[1] for r in rows])
        m = g2.molality.to_numpy(float)[j2]
        v2, v1 = g2.value.to_numpy(float)[j2], g1.value.to_numpy(float)[j1]
        u2, u1 = g2.uncertainty.to_numpy(float)[j2] / v2, g1.uncertainty.to_numpy(float)[j1] / v1
        l2, u_l2 = l2_from_l_phi(coef, cov, m)
        factor = (1.0 / t2 - 1.0 / t1) / (e.nu * r_gas)
        diff = (np.log(v2) - np.log(v1)) - l2 * factor
        limit = SIGMAS * np.sqrt(u1 ** 2 + u2 ** 2 + (u_l2 * factor) ** 2) + ALLOWANCE
        sets = f"{'/'.join(sorted(set(g2.dataset.iloc[j2])))} at {t2:.2f} K vs " \
               f"{'/'.join(sorted(set(g1.dataset.iloc[j1])))} at {t1:.2f} K"
        rep.summary.append({"electrolyte": e.name, "dataset": f"{sets} through {lg.dataset.iloc[0]}",
                            "check": "gibbs-helmholtz", "worst_ratio": float(np.max(np.abs(diff) / limit)),
                            "n_points": int(m.size), "temperature_k": round(t2, 2),
                            "from_temperature_k": round(t1, 2)})
        for q in np.flatnonzero(np.abs(diff) > limit):
            r = g2.iloc[j2[q]]
            rep.findings.append(Finding(
                "gibbs-helmholtz", e.name, str(r.dataset), float(m[q]), int(r.line), str(r.file),
                f"ln gamma± changes by {np.log(v2[q]) - np.log(v1[q]):+.4f} from {t1:.2f} K at "
                f"m = {m[q]:g} mol/kg; L_2 = {l2[q]:.0f} J/mol from {lg.dataset.iloc[0]} gives "
                f"{l2[q] * factor:+.4f} (misses by {diff[q]:+.4f}; limit {limit[q]:.4f})",
                float(diff[q]), float(limit[q]), round(t2, 2)))
    return rep
