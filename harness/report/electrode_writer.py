"""Write an electrode-validation report: the same files, writers, styles and atomic folder as a
comparison report (:mod:`saltbench.report.writer`), from an
:class:`~saltbench.report.electrode_content.ElectrodeView` (:func:`saltbench.api.make_electrode_report`
computes the calibrations first).

Layout of the folder::

    report.html  report.pdf  report.md  manifest.json
    tables/calibrations.csv standards.csv selectivity.csv samples.csv budgets.csv
    figures/<set>.calibration.png

The manifest has the comparison manifest's format, with ``command.electrode`` naming the sets,
the convention, model, parameter sets and candidates, and ``results.electrode``: one record per
calibration and per sample, which ``report --from`` compares on a re-run
(:func:`electrode_agreement`).
"""

from __future__ import annotations

import math
import platform
from pathlib import Path

from saltbench.report.electrode_content import ElectrodeView
from saltbench.report.writer import (
    MANIFEST_NAME,
    ReportResult,
    _write_files,
    default_folder,
    plugin_sections,
    time_stamp,
    write_atomically,
)
from saltbench.scaffold.names import slug

#: relative agreement asked of a re-run's numbers (they come from the same readings and code)
AGREEMENT_RTOL = 1e-6


def default_electrode_title(view: ElectrodeView) -> str:
    return "Electrode method validation: " + ", ".join(item.key for item in view.items)


def _f(x) -> float | None:
    return float(x) if x is not None and math.isfinite(float(x)) else None


def records(view: ElectrodeView) -> dict[str, list[dict]]:
    """The report's results as flat records (SI units: V, mol/kg), by table."""
    cals, stds, sels, samples, budgets = [], [], [], [], []
    for item in view.items:
        key = item.key
        if item.ph is not None:
            c = item.ph.calibration
            u_e0, u_s = (math.sqrt(max(float(c.covariance[i, i]), 0.0)) for i in (0, 1))
            cals.append({"set": key, "kind": "ph", "ion": "H+", "convention": "bates-guggenheim",
                         "e0_v": _f(c.e0), "u_e0_v": u_e0, "slope_v_per_decade": _f(c.slope),
                         "u_slope_v_per_decade": u_s, "slope_percent_nernstian": _f(c.slope_percent),
                         "u_slope_percent_nernstian": 100.0 * u_s / abs(c.nernst_slope),
                         "nernst_slope_v": _f(c.nernst_slope), "chi2": _f(c.chi2), "dof": c.dof,
                         "detection_limit_activity": None, "u_detection_limit_activity": None,
                         "linear_range_low": None, "linear_range_high": None})
            for line, label, s in item.ph.samples:
                samples.append({"set": key, "line": line, "label": label, "emf_v": _f(s.emf), "activity": None,
                                "u_activity": None, "ph": _f(s.ph), "u_ph": _f(s.u_ph), "molality": None,
                                "u_molality": None, "flags": "; ".join(s.flags)})
                budgets += [{"set": key, "line": line, "of": "ph", "component": k, "u": _f(v)}
                            for k, v in s.budget.items()]
            continue
        cal, fit = item.calibration, item.calibration.fit
        rng = fit.linear_range
        cals.append({"set": key, "kind": "electrode", "ion": cal.set.ion.name, "convention": cal.convention_label,
                     "e0_v": _f(fit.e0), "u_e0_v": _f(fit.u("e0")), "slope_v_per_decade": _f(fit.slope),
                     "u_slope_v_per_decade": _f(fit.u("slope")), "slope_percent_nernstian": _f(fit.slope_percent),
                     "u_slope_percent_nernstian": _f(fit.u_slope_percent), "nernst_slope_v": _f(fit.nernst_slope),
                     "chi2": _f(fit.chi2), "dof": fit.dof, "detection_limit_activity": _f(fit.detection_limit),
                     "u_detection_limit_activity": _f(fit.u_detection_limit),
                     "linear_range_low": _f(rng.low) if rng else None,
                     "linear_range_high": _f(rng.high) if rng else None})
        for s, r in zip(cal.standards, fit.residuals):
            stds.append({"set": key, "line": s.line, "label": s.label, "composition": "; ".join(
                f"{n}={m!r}" for n, m in s.salts), "ionic_strength": _f(s.ionic_strength), "molality": _f(s.molality),
                "gamma": _f(s.gamma), "activity": _f(s.activity), "px": _f(s.px), "emf_v": _f(s.emf),
                "residual_v": _f(r)})
        for sel in cal.selectivity:
            sels.append({"set": key, "interferent": sel.interferent, "method": sel.method,
                         "coefficient": _f(sel.coefficient), "u_coefficient": _f(sel.u_coefficient),
                         "interferent_activity": _f(sel.interferent_activity), "note": sel.note})
        for smp in item.samples:
            a, conc = smp.activity, smp.concentration
            samples.append({"set": key, "line": smp.line, "label": smp.label, "emf_v": _f(a.emf),
                            "activity": _f(a.activity), "u_activity": _f(a.u_activity), "ph": None, "u_ph": None,
                            "molality": _f(conc.molality) if conc else None,
                            "u_molality": _f(conc.u_molality) if conc else None, "flags": "; ".join(a.flags)})
            budgets += [{"set": key, "line": smp.line, "of": "activity", "component": k, "u": _f(v)}
                        for k, v in a.budget.items()]
            if conc:
                budgets += [{"set": key, "line": smp.line, "of": "molality", "component": k, "u": _f(v)}
                            for k, v in conc.budget.items()]
    return {"calibrations": cals, "standards": stds, "selectivity": sels, "samples": samples, "budgets": budgets}


def _figures(view: ElectrodeView) -> dict[str, list]:
    from saltbench.report.electrode_figures import calibration_figure, ph_figure

    out = {}
    for i, item in enumerate(view.items, start=1):
        stem = f"{slug(item.key) or 'set'}-{i}.calibration"
        out[item.key] = [ph_figure(item.ph, stem) if item.ph is not None
                         else calibration_figure(item.calibration, stem)]
    return out


def write_electrode_report(session, view: ElectrodeView, *, title: str | None = None, folder: Path | None = None,
                           command: str = "", argv: list[str] | None = None,
                           created: str | None = None) -> ReportResult:
    """Write every file of the electrode report ``view`` into ``folder`` (default
    ``reports/<slug of the title>``)."""
    from saltbench import __version__
    from saltbench.report.content import ReportFacts
    from saltbench.report.electrode_content import build_electrode_document
    from saltbench.report.manifest import FORMAT, clean, platform_info, software
    from saltbench.report.tables import to_csv

    title = (title or "").strip() or default_electrode_title(view)
    folder = (Path(folder) if folder else default_folder(title, [item.key for item in view.items])).resolve()
    created = created or time_stamp()
    reg = session.registry
    plugins = [{"name": p.name, "kind": p.kind, "path": p.path, "version": p.version} for p in reg.plugins]
    store_path = str(session.store.path) if session.store.path else "(in memory)"
    store_hash = session.content_hash()
    figures = _figures(view)
    facts = ReportFacts(title=title, created=created, command=command, software_version=__version__,
                        python=platform.python_version(), platform=platform.platform(),
                        store_path=store_path, store_hash=store_hash, manifest_name=MANIFEST_NAME,
                        plugins=plugins, models={}, figures=figures,
                        extra_sections=plugin_sections(reg, view, "render_electrode"))
    doc = build_electrode_document(view, facts)
    recs = records(view)
    tables = {f"{name}.csv": to_csv(rows, list(rows[0]) if rows else ["set"]) for name, rows in recs.items()}

    def manifest_for(files: dict[str, str]) -> dict:
        return clean({
            "format": FORMAT,
            "created": created,
            "title": title,
            "software": software(),
            "plugins": plugins,
            "command": {"line": command, "argv": list(argv or []), "electrolytes": [],
                        "electrode": [item.key for item in view.items], "convention": view.convention,
                        "model": view.model_id, "sets": list(view.sets), "candidates": list(view.candidates)},
            "store": {"path": store_path, "content_hash": store_hash},
            "datasets": [],
            "electrode_sets": [{"key": item.key, "kind": item.set.kind, "source": item.set.source,
                                "typed": item.set.typed} for item in view.items],
            "platform": platform_info(),
            "results": {"records": [], "recommendations": [], "electrode": recs},
            "files": files,
        })

    written, manifest = write_atomically(folder, lambda tmp: _write_files(tmp, doc, figures, tables), manifest_for)
    return ReportResult(folder, written, view, manifest)


def electrode_agreement(old: dict, new: dict):
    """Whether a re-run's electrode results equal the manifest's (numbers to
    :data:`AGREEMENT_RTOL`, text exactly), as a :class:`saltbench.report.manifest.Agreement`."""
    from saltbench.report.manifest import Agreement, input_notes

    diffs: list[str] = []
    before, now = old["results"].get("electrode", {}), new["results"]["electrode"]
    for table in sorted(set(before) | set(now)):
        a, b = before.get(table, []), now.get(table, [])
        if len(a) != len(b):
            diffs.append(f"{table}: {len(a)} rows then, {len(b)} now")
            continue
        for i, (ra, rb) in enumerate(zip(a, b)):
            for k in sorted(set(ra) | set(rb)):
                x, y = ra.get(k), rb.get(k)
                same = (math.isclose(x, y, rel_tol=AGREEMENT_RTOL, abs_tol=1e-15)
                        if isinstance(x, float) and isinstance(y, float) else x == y)
                if not same:
                    diffs.append(f"{table}[{i}] ({rb.get('set')}) {k}: {x!r} then, {y!r} now")
    return Agreement(not diffs, diffs, input_notes(old, new))
