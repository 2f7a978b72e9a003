"""The electrode-validation report as a plain document (:mod:`saltbench.report.document`): what it
covers, each calibration (fit, standards on their convention, selectivity, samples with their
uncertainty budgets) or pH calibration, the limits and cautions, how to reproduce it, sign-off.

Everything shown comes from the typed results of :func:`saltbench.api.electrode_calibrate`,
:func:`saltbench.api.electrode_samples` and :func:`saltbench.api.ph_calibrate`; numbers are
formatted here, once, for every output format.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from saltbench.report.content import ReportFacts, _reproduce, add_plugin_sections, sign_off_section
from saltbench.report.document import DASH, Bullets, Document, Fields, Figure, Notice, Paragraph, Section, Table, num

MV = 1e3
REGULATED = ("An electrode method's validation is the laboratory's own responsibility. The numbers here are a "
             "numerical reduction of the readings given: for clinical, drinking-water, environmental or other "
             "regulated measurements follow the applicable standard method, local codes and accredited "
             "laboratory practice, and have the validation reviewed by the person the quality system names.")


@dataclass
class ElectrodeItem:
    """One set in the report: an ion-selective calibration with its samples, or a pH calibration."""

    calibration: Any = None  # saltbench.api.ElectrodeCalibration
    samples: list = field(default_factory=list)  # saltbench.api.ElectrodeSample
    ph: Any = None  # saltbench.api.PhCalibrationRun

    @property
    def key(self) -> str:
        return (self.calibration or self.ph).set.key

    @property
    def set(self):
        return (self.calibration or self.ph).set


@dataclass
class ElectrodeView:
    """What the electrode report shows: its items, the convention asked for, and the candidates
    whose spread enters each sample's budget."""

    items: list[ElectrodeItem]
    convention: str
    model_id: str | None
    sets: list[str]
    candidates: list[str]


def _mv(x: float | None, digits: int = 5) -> str:
    return DASH if x is None or not math.isfinite(x) else num(x * MV, digits)


def _pm(x: float | None, u: float | None, digits: int = 4) -> str:
    if x is None or not math.isfinite(x):
        return DASH
    return f"{num(x, digits)} ± {num(u, 2)}" if u is not None and math.isfinite(u) else num(x, digits)


def _salts(salts) -> str:
    return ", ".join(f"{name} {m:g}" for name, m in salts) or DASH


def build_electrode_document(view: ElectrodeView, facts: ReportFacts) -> Document:
    doc = Document(facts.title, f"saltbench {facts.software_version} · generated {facts.created}", facts.created)
    doc.sections.append(_scope(view))
    n = 2
    for item in view.items:
        doc.sections.append(_ph_section(item, facts, n) if item.ph is not None else _ise_section(item, facts, n))
        n += 1
    n = add_plugin_sections(doc, facts, n)
    doc.sections.append(_cautions(view, n))
    doc.sections.append(_reproduce(facts, n + 1))
    doc.sections.append(sign_off_section(n + 2))
    return doc


def _scope(view: ElectrodeView) -> Section:
    rows, marks = [], []
    for item in view.items:
        es = item.set
        what = (f"pH, {len(item.ph.buffers)} buffers" if item.ph is not None
                else f"{es.ion.name}, {len(item.calibration.standards)} standards")
        rows.append([es.key, what, f"{es.temperature_k:g} K", es.electrode or DASH, es.reference_electrode or DASH,
                     es.source, es.typed])
        marks.append("invented" if es.invented else "memory" if es.from_memory else "")
    conv = view.convention + (f" ({view.model_id})" if view.model_id else "")
    blocks: list = [
        Paragraph("This report records the calibration of ion-selective and pH electrodes for a laboratory's "
                  "method validation: the response slope against the Nernstian slope, the linear range, the "
                  "detection limit, selectivity against the ions the samples contain, and sample results with "
                  "their uncertainty. Standards are put on single-ion activities with a stated convention; "
                  "every activity, pX and coefficient below rests on that convention."),
        Fields([
            ("Convention for the standards' activities", conv),
            ("Candidates in each sample's budget", ", ".join(view.candidates) or DASH),
            ("Parameter sets asked for first", ", ".join(view.sets) or "the stored published sets"),
            ("Response equation", "E = E0 + S log10(a_i + Σ_j K_ij a_j^(z_i/z_j) + a_0) (Nikolsky-Eisenman; "
                                  "Umezawa et al., Pure Appl. Chem. 72, 1851 (2000))"),
            ("Detection limit", "IUPAC: the intersection of the extrapolated linear response with the "
                                "low-activity asymptote (Buck and Lindner, Pure Appl. Chem. 66, 2527 (1994))"),
        ]),
        Table("electrode-sets", "Calibration sets", ["Set", "Ion, points", "Temperature", "Electrode",
                                                     "Reference electrode", "Source", "How typed"],
              rows, [False] * 7, marks),
    ]
    if any(item.set.invented for item in view.items):
        blocks.insert(1, Notice("caution", "Invented data", "Rows marked invented are made-up example readings "
                                "(saltbench documentation), not measurements: a report on them shows how the "
                                "method works and nothing about any real electrode."))
    return Section("scope", "1 What this report covers", blocks)


def _ise_section(item: ElectrodeItem, facts: ReportFacts, n: int) -> Section:
    cal = item.calibration
    fit, es = cal.fit, cal.set
    rng = fit.linear_range
    lod = fit.detection_limit
    fields = [
        ("Primary ion", es.ion.name),
        ("Background (ionic-strength adjuster)", es.background_text or "none"),
        ("Convention", f"{cal.convention_label}: {cal.caveat}"),
        ("Slope S", f"{_pm(fit.slope * MV, fit.u('slope') * MV, 5)} mV/decade"),
        ("Nernstian slope at the temperature", f"{num(fit.nernst_slope * MV, 5)} mV/decade (CODATA R, F)"),
        ("Slope, % of Nernstian", _pm(fit.slope_percent, fit.u_slope_percent, 4)),
        ("E0", f"{_pm(fit.e0 * MV, fit.u('e0') * MV, 6)} mV"),
        ("Fit", f"weighted least squares, χ² = {num(fit.chi2, 3)} on {fit.dof} degrees of freedom"),
        ("Linear range", DASH if rng is None else
         f"a = {num(rng.low, 3)} to {num(rng.high, 3)} ({rng.n_standards} standards; slope "
         f"{_pm(rng.slope * MV, rng.u_slope * MV, 4)} mV/decade). Rule: {rng.rule}"),
        ("Detection limit (activity)", DASH if lod is None else
         f"{_pm(lod, fit.u_detection_limit, 3)} (pX {num(-math.log10(lod), 3) if lod > 0 else DASH})"),
    ]
    std_rows = [[str(s.line), s.label or DASH, _salts(s.salts), num(s.ionic_strength, 4), num(s.molality, 4),
                 num(s.gamma, 4), num(s.activity, 4), num(s.px, 4), _mv(s.emf), _mv(r, 3)]
                for s, r in zip(cal.standards, fit.residuals)]
    sec = Section(f"electrode-{n}", f"{n} Calibration {es.key}: {es.ion.name}", [Fields(fields)])
    for note in (*fit.notes, *cal.notes):
        sec.blocks.append(Paragraph(f"Note: {note}"))
    if cal.extrapolation:
        sec.blocks.append(Notice("caution", "Beyond the convention's range", "; ".join(cal.extrapolation)))
    img = facts.figures.get(es.key, [])
    sec.children.append(Section(f"electrode-plot-{n}", f"{n}.1 Calibration plot",
                                [Figure(f.key, f.caption, f.alt, f.png) for f in img]
                                or [Paragraph("Figure not available.")]))
    heading = f"{n}.2 Standards on the {cal.convention_label} convention"
    sec.children.append(Section(f"electrode-standards-{n}", heading, [
        Table(f"standards-{n}", "Standards: composition (mol/kg, background included), ionic strength I (mol/kg), "
              "the primary ion's molality m, activity coefficient γ, activity a and pX, the measured potential "
              "and its residual from the fitted response",
              ["Line", "Label", "Composition", "I", "m", "γ", "a", "pX", "E/mV", "E − fit/mV"], std_rows,
              [False, False, False] + [True] * 7)]))
    sel_rows = [[s.interferent, s.method, _pm(s.coefficient, s.u_coefficient, 3),
                 num(math.log10(s.coefficient), 3) if s.coefficient > 0 else DASH,
                 num(s.interferent_activity, 3), s.note or ""] for s in cal.selectivity]
    sel_blocks: list = ([Table(f"selectivity-{n}", "Selectivity coefficients K_ij, each by its method (IUPAC: "
                               "fitted in the response, fixed-interference method, separate-solution method)",
                               ["Interferent", "Method", "K_ij ± u", "log10 K_ij", "a_j used", "Note"],
                               sel_rows, [False, False, True, True, True, False])]
                        if sel_rows else [Paragraph("No interferent was varied or measured alone: no selectivity "
                                                    "coefficient is determined by these readings.")])
    sec.children.append(Section(f"electrode-selectivity-{n}", f"{n}.3 Selectivity", sel_blocks))
    sec.children.append(Section(f"electrode-samples-{n}", f"{n}.4 Samples", _sample_blocks(item, n)))
    return sec


def _sample_blocks(item: ElectrodeItem, n: int) -> list:
    if not item.samples:
        return [Paragraph("The set holds no sample readings.")]
    rows, budget_rows = [], []
    for s in item.samples:
        act, conc = s.activity, s.concentration
        rows.append([str(s.line), s.label or DASH, _mv(act.emf), _pm(act.activity, act.u_activity, 4),
                     num(-math.log10(act.activity), 4) if act.activity else DASH,
                     _pm(conc.molality, conc.u_molality, 4) if conc else DASH,
                     "; ".join(act.flags) or DASH])
        for component, u in act.budget.items():
            budget_rows.append([s.label or str(s.line), "activity", component, num(u, 2)])
        if conc:
            for component, u in conc.budget.items():
                budget_rows.append([s.label or str(s.line), "molality (mol/kg)", component, num(u, 2)])
    blocks: list = [Table(f"samples-{n}", "Sample results: the primary ion's activity and, where the sample's "
                          "composition or the adjuster is known, its molality, each with its combined standard "
                          "uncertainty; flags say where a result lies outside what the calibration supports",
                          ["Line", "Label", "E/mV", "a ± u", "pX", "m ± u (mol/kg)", "Flags"], rows,
                          [False, False, True, True, True, True, False])]
    blocks.append(Table(f"budgets-{n}", "Uncertainty budgets: each component's standard uncertainty (the "
                        "activity-coefficient model component is the candidates' half-range taken as rectangular)",
                        ["Sample", "Of", "Component", "u"], budget_rows, [False, False, False, True]))
    notes = [f"{s.label or s.line}: {note}" for s in item.samples for note in s.notes]
    if notes:
        blocks.append(Bullets(notes))
    return blocks


def _ph_section(item: ElectrodeItem, facts: ReportFacts, n: int) -> Section:
    run = item.ph
    cal, es = run.calibration, run.set
    u_e0, u_s = (math.sqrt(cal.covariance[i, i]) if cal.covariance[i, i] > 0 else None for i in (0, 1))
    fields = [
        ("Calibration", f"{cal.kind}, buffers from pH {num(cal.ph_range[0], 4)} to {num(cal.ph_range[1], 4)}"),
        ("Slope S", f"{_pm(cal.slope * MV, None if u_s is None else u_s * MV, 5)} mV per pH unit"),
        ("Nernstian slope at the temperature", f"{num(cal.nernst_slope * MV, 5)} mV per pH unit (CODATA R, F)"),
        ("Slope, % of Nernstian", num(cal.slope_percent, 4)),
        ("E0", f"{_pm(cal.e0 * MV, None if u_e0 is None else u_e0 * MV, 6)} mV"),
        ("Convention", cal.convention),
    ]
    buffer_rows = [[str(line), label or DASH, num(ph, 4), num(u, 2), _mv(e), _mv(r, 3)]
                   for (line, label), ph, u, e, r in zip(run.buffers, cal.ph, cal.u_ph, cal.emf, cal.residuals)]
    sample_rows = [[str(line), label or DASH, _mv(s.emf), _pm(s.ph, s.u_ph, 4), "; ".join(s.flags) or DASH]
                   for line, label, s in run.samples]
    img = facts.figures.get(es.key, [])
    sec = Section(f"electrode-{n}", f"{n} pH calibration {es.key}", [Fields(fields)])
    sec.children.append(Section(f"electrode-plot-{n}", f"{n}.1 Calibration plot",
                                [Figure(f.key, f.caption, f.alt, f.png) for f in img]
                                or [Paragraph("Figure not available.")]))
    sec.children.append(Section(f"electrode-buffers-{n}", f"{n}.2 Buffers", [
        Table(f"buffers-{n}", "Buffers: pH and its standard uncertainty as the user's certificates give them, the "
              "potential and its residual from the calibration line",
              ["Line", "Buffer", "pH", "u(pH)", "E/mV", "E − fit/mV"], buffer_rows,
              [False, False, True, True, True, True])]))
    sec.children.append(Section(f"electrode-samples-{n}", f"{n}.3 Samples", [
        Table(f"ph-samples-{n}", "Samples' pH with its combined standard uncertainty",
              ["Line", "Label", "E/mV", "pH ± u", "Flags"], sample_rows, [False, False, True, True, False])
        if sample_rows else Paragraph("The set holds no sample readings.")]))
    return sec


def _cautions(view: ElectrodeView, n: int) -> Section:
    items: list[str] = []
    for item in view.items:
        if item.calibration is not None:
            items += [item.calibration.caveat, *item.calibration.cautions]
        else:
            items += list(item.ph.calibration.cautions)
    return Section("cautions", f"{n} Limits and cautions", [
        Notice("caution", "Regulated measurements", REGULATED),
        Bullets([x for x in dict.fromkeys(items) if x != REGULATED]),
        Paragraph("Single-ion activities cannot be measured thermodynamically: a pX or pH is defined only by the "
                  "convention named beside it, and results on different conventions must not be mixed."),
    ])
