"""The electrode commands' documents: JSON-ready dicts of a calibration, its samples and a pH
calibration (numbers in the units their names carry), and the tables people read."""

from __future__ import annotations

import math
from typing import Any

MV = 1000.0


def _u(x: float | None) -> float | None:
    return None if x is None or not math.isfinite(x) else x


def calibration_doc(cal: Any) -> dict:
    """What ``saltbench electrode calibrate --format json`` prints (the issue's interface)."""
    f = cal.fit
    es = cal.set
    lr = f.linear_range
    selectivity: dict[str, dict] = {}
    for s in cal.selectivity:
        selectivity.setdefault(s.interferent, {})
    methods = [{"interferent": s.interferent, "method": s.method, "coefficient": s.coefficient,
                "u_coefficient": s.u_coefficient, "log10_coefficient": s.log10_coefficient,
                "u_log10_coefficient": s.u_log10_coefficient,
                "interferent_activity": s.interferent_activity, "note": s.note}
               for s in cal.selectivity]
    # one coefficient per interferent for scripts: the fitted one where there is one, else the
    # first method listed (every method is in selectivity_methods)
    for j in selectivity:
        first = next(m for m in methods if m["interferent"] == j)
        selectivity[j] = first
    return {
        "set": es.key, "ion": es.ion.name, "temperature_k": es.temperature_k,
        "reference_electrode": es.reference_electrode, "background": es.background_text,
        "convention": cal.convention_label, "model": cal.model_id,
        "fit": f.method,
        "slope_mv_per_decade": f.slope * MV, "u_slope_mv_per_decade": f.u("slope") * MV,
        "nernst_slope_mv_per_decade": f.nernst_slope * MV,
        "slope_percent_nernstian": f.slope_percent, "u_slope_percent_nernstian": f.u_slope_percent,
        "e0_mv": f.e0 * MV, "u_e0_mv": f.u("e0") * MV,
        "a0": f.a0 if f.a0_resolved else None,
        "u_a0": (f.a0 * math.log(10.0) * f.u("log10_a0")) if f.a0_resolved else None,
        "linear_range": None if lr is None else {"low": lr.low, "high": lr.high,
                                                 "n_standards": lr.n_standards, "rule": lr.rule},
        "detection_limit_activity": f.detection_limit,
        "u_detection_limit_activity": _u(f.u_detection_limit),
        "detection_limit_px": None if not f.detection_limit else -math.log10(f.detection_limit),
        "detection_limit_definition": f.lod_definition,
        "selectivity": {j: m["coefficient"] for j, m in selectivity.items()},
        "u_selectivity": {j: m["u_coefficient"] for j, m in selectivity.items()},
        "selectivity_methods": methods,
        "parameters": list(f.names), "values": [float(v) for v in f.values],
        "covariance": [[float(x) for x in row] for row in f.covariance],
        "chi2": f.chi2, "dof": f.dof, "birge_ratio": _u(f.birge_ratio),
        "standards": [{"line": r.line, "label": r.label, "solution": r.salts,
                       "ionic_strength": r.ionic_strength, "molality": r.molality, "gamma": r.gamma,
                       "activity": r.activity, "px": r.px, "interferents": r.interferents,
                       "emf_mv": r.emf * MV, "u_emf_mv": r.u_emf * MV,
                       "residual_mv": float(res) * MV}
                      for r, res in zip(cal.standards, f.residuals)],
        "separate_solutions": [{"line": r.line, "label": r.label, "solution": r.salts,
                                "ionic_strength": r.ionic_strength, "interferents": r.interferents,
                                "emf_mv": r.emf * MV} for r in cal.separate],
        "parameters_from": cal.sources, "notes": list(f.notes) + cal.notes,
        "extrapolated": bool(cal.extrapolation), "extrapolation": cal.extrapolation,
        "caveat": cal.caveat, "cautions": cal.cautions,
    }


def sample_doc(s: Any) -> dict:
    a = s.activity
    c = s.concentration
    return {
        "line": s.line, "label": s.label, "emf_mv": a.emf * MV, "temperature_k": a.temperature_k,
        "activity": a.activity, "u_activity": a.u_activity, "px": a.px,
        "activity_budget": a.budget, "flags": list(a.flags), "known_solution": s.salts,
        "interferents": s.interferents, "ionic_strength": s.ionic_strength,
        "molality": None if c is None else c.molality,
        "u_molality": None if c is None else c.u_molality,
        "gamma": None if c is None else c.gamma,
        "molality_budget": None if c is None else c.budget,
        "molality_by_convention": None if c is None else c.by_model,
        "conventions_refused": None if c is None else c.refused,
        "notes": s.notes,
    }


def ph_doc(run: Any) -> dict:
    c = run.calibration
    es = run.set
    return {
        "set": es.key, "temperature_k": c.temperature_k, "calibration": c.kind,
        "reference_electrode": es.reference_electrode,
        "slope_mv_per_ph": c.slope * MV, "u_slope_mv_per_ph": c.u_slope * MV,
        "nernst_slope_mv_per_ph": c.nernst_slope * MV,
        "slope_percent_nernstian": c.slope_percent, "u_slope_percent_nernstian": c.u_slope_percent,
        "e0_mv": c.e0 * MV, "u_e0_mv": c.u_e0 * MV,
        "covariance": [[float(x) for x in row] for row in c.covariance],
        "chi2": c.chi2, "dof": c.dof,
        "buffers": [{"line": line, "label": label, "ph": float(p), "u_ph": float(up),
                     "emf_mv": float(e) * MV, "residual_mv": float(r) * MV}
                    for (line, label), p, up, e, r in zip(run.buffers, c.ph, c.u_ph, c.emf, c.residuals)],
        "samples": [{"line": line, "label": label, "emf_mv": s.emf * MV, "temperature_k": s.temperature_k,
                     "ph": s.ph, "u_ph": s.u_ph, "budget": s.budget, "flags": list(s.flags)}
                    for line, label, s in run.samples],
        "convention": c.convention, "cautions": list(c.cautions),
    }
