"""What a mixture report says, and in which order: a :class:`~saltbench.report.document.Document`
built from a :class:`~saltbench.report.mixture_view.MixtureView`, beside the electrolyte
builder of :mod:`saltbench.report.content` and sharing its blocks where they fit.

Order: what the report covers (the system, its datasets with citations, transcription and
invented marks); findings in brief (the recommendation in ionic strength and the comparison
table of ``compare --mixture``); fitted mixing terms and the binary sets held; residuals and
validity ranges along ionic strength; limits and cautions; reproducing the report; review and
sign-off.
"""

from __future__ import annotations

from saltbench.report.content import (
    ReportFacts,
    _flag_blocks,
    _heldout_table,
    _reproduce,
    add_plugin_sections,
    sign_off_section,
    tolerance_text,
)
from saltbench.report.document import (
    DASH,
    Document,
    Fields,
    Figure,
    Notice,
    Paragraph,
    Section,
    Table,
    molality,
    num,
)
from saltbench.report.mixture_view import MixtureView, in_ionic_strength

#: The columns of ``saltbench compare --mixture``'s table, in words.
COMPARISON_COLUMNS = ["Model", "k", "rms Δln γ±", "max Δln γ±", "rms Δφ", "held-out Δln γ±", "AICc",
                      "valid to I, published (mol/kg)", "valid to I, refitted (mol/kg)", "Verdict"]
INVENTED_TEXT = ("Rows marked INVENTED are invented example data (a made-up scenario for the "
                 "documentation), not measurements. A report on them shows how the method works and "
                 "nothing about any real solution; never use it to choose a model for real work.")


def build_mixture_document(view: MixtureView, facts: ReportFacts) -> Document:
    doc = Document(facts.title, f"saltbench {facts.software_version} · generated {facts.created}",
                   facts.created)
    doc.sections.append(_scope(view, facts))
    doc.sections.append(_findings(view))
    doc.sections.append(_mixing_terms(view))
    doc.sections.append(_along_ionic_strength(view, facts))
    n = add_plugin_sections(doc, facts, 5)
    doc.sections.append(_cautions(view, n))
    doc.sections.append(_reproduce(facts, n + 1))
    doc.sections.append(sign_off_section(n + 2))
    return doc


def _dataset_table(view: MixtureView) -> tuple[list, Table]:
    rows, marks = [], []
    for d in view.datasets[view.system]:
        memo, invented = bool(d.get("from_memory")), bool(d.get("invented"))
        flag = "INVENTED: " if invented else ("FROM MEMORY: " if memo else "")
        typed = d.get("typed") or DASH
        rows.append([d["key"], d["property"], str(d["n_points"]),
                     f"{d['min_ionic_strength']:g} to {d['max_ionic_strength']:g}",
                     d.get("citation") or d.get("source", ""),
                     flag + typed + (f" ({d['table_ref']})" if d.get("table_ref") else ""),
                     d.get("content_hash", "")])
        marks.append("invented" if invented else ("memory" if memo else ""))
    notices: list = []
    if view.invented:
        notices.append(Notice("caution", "Invented data", INVENTED_TEXT))
    if any(d.get("from_memory") for d in view.datasets[view.system]):
        notices.append(Notice("memory", "Data typed from memory",
                              "Rows marked FROM MEMORY were typed from memory of the source, not read off "
                              "the original. Verify them against the original before any regulated or "
                              "safety-related use."))
    table = Table("datasets-mixture", f"Mixture data used for {view.system}",
                  ["Dataset", "Property", "Points", "Ionic strength (mol/kg)", "Source", "Transcription",
                   "Content hash (SHA-256)"], rows, [False, False, True, False, False, False, False],
                  marks, [True, False, False, False, False, False, True])
    return notices, table


def _scope(view: MixtureView, facts: ReportFacts) -> Section:
    s, comp = view.settings, view.comparison
    rec = view.recommendation
    order = [o.model for o in comp.outcomes]  # type: ignore[attr-defined]
    versions = {p["name"]: p.get("version", "") for p in facts.plugins}
    model_rows = []
    for mid in order:
        info = facts.models.get(mid, {})
        model_rows.append([mid, info.get("name", mid), info.get("plugin", ""),
                           versions.get(info.get("plugin", ""), "")])
    salts = sorted({salt for d in view.dataset_rows for salt in d.salts})
    held = (", ".join(view.sets_asked) + ", then the published sets" if view.sets_asked
            else "the published sets of each model")
    notices, table = _dataset_table(view)
    return Section("scope", "1 What this report covers", [
        Paragraph("This report records how closely each activity model reproduces measurements on "
                  f"mixtures of {view.system}, so that a laboratory can choose the model for solutions of "
                  "this kind and the ionic strength up to which it may be used."),
        Paragraph("How the models are judged. The binary parameters (each salt alone in water) are held "
                  "at stored parameter sets; only a model's mixing terms (for Pitzer's equations, θ for "
                  "like-charged ion pairs and ψ for triplets) are refitted to the mixture data, and a model "
                  "without mixing terms is judged as it stands. As for one salt, a model holds up to the "
                  "highest ionic strength I at which it, fitted to every point up to I, stays within the "
                  "tolerance at each of those points; held-out errors come from cross-validation with the "
                  "folds ranked by ionic strength. The recommendation is the model with the fewest fitted "
                  "parameters that holds over the range and is not materially less accurate than the most "
                  "accurate one."),
        Fields([
            ("System", f"{view.system} ({', '.join(salts)})" if salts else view.system),
            ("Temperature", f"{s.temperature_k:g} K ({s.temperature_k - 273.15:.2f} °C)"),
            ("Ionic-strength range", f"data up to {comp.max_ionic_strength:g} mol/kg "  # type: ignore[attr-defined]
             f"({comp.n_points} points), judged up to {rec.target_molality:g} mol/kg"),  # type: ignore[attr-defined]
            ("Tolerance", tolerance_text(s)),
            ("Held-out error", f"{s.folds_text} over ionic strength"),
            ("Datasets", f"{view.asked} only" if view.one_dataset
             else "every stored mixture dataset of the system"),
            ("Binary values held at", held),
            ("Models", ", ".join(order)),
        ]),
        *notices,
        table,
        Table("models", "Models compared", ["Model id", "Name", "Plugin", "Plugin version"], model_rows,
              [False] * 4),
    ])


def comparison_rows(view: MixtureView) -> tuple[list[list[str]], list[str]]:
    """The rows of ``compare --mixture``'s table, and the recommended model's mark."""
    rows, marks = [], []
    for o in view.comparison.outcomes:  # type: ignore[attr-defined]
        r = o.record()
        held = r["heldout_rms_ln_gamma"]
        held_text = num(held) if held is not None or r["heldout_rms_osmotic"] is None \
            else f"{num(r['heldout_rms_osmotic'])} (φ)"
        rows.append([r["model"], str(r["n_params"]), num(r["rms_ln_gamma"]), num(r["max_ln_gamma"]),
                     num(r["rms_osmotic"]), held_text, num(r["aicc"]), molality(r["valid_up_to_published"]),
                     molality(r["valid_up_to_refit"]),
                     in_ionic_strength(o.verdict.text) if o.verdict else ""])
        marks.append("recommended" if r["recommended"] else "")
    return rows, marks


def _findings(view: MixtureView) -> Section:
    rows, marks = comparison_rows(view)
    rec = view.recommendation
    blocks: list = [
        Fields([("Recommendation", view.statement),
                ("Judged up to", f"I = {rec.target_molality:g} mol/kg"),
                ("Recommended model", rec.model or "none")]),
        Table("comparison", f"Each model on the mixture data (tolerance {tolerance_text(view.settings)}); "
              "k: fitted mixing terms; valid to I: the highest ionic strength within tolerance with every "
              "value as published and with the mixing terms refitted; the recommended model is marked",
              COMPARISON_COLUMNS, rows, [False] + [True] * 8 + [False], marks),
    ]
    if view.invented:
        blocks.insert(0, Notice("caution", "Invented data", "This report rests on invented example data; "
                                "its recommendation says nothing about any real solution."))
    return Section("findings", "2 Findings in brief", blocks)


def _mixing_terms(view: MixtureView) -> Section:
    outs = view.comparison.outcomes  # type: ignore[attr-defined]
    rows = []
    for o in outs:
        for p in (o.fit or {}).get("parameters", []):
            if not p.get("fixed"):
                rows.append([o.model, p["name"], num(p["value"], 6), num(p["stderr"], 3), p.get("unit") or ""])
    blocks: list = [Table("mixing-terms", f"Mixing terms refitted to the {view.system} data (standard errors "
                          "from the covariance, scaled by the Birge ratio when the scatter exceeds the stated "
                          "uncertainties)", ["Model", "Parameter", "Value", "Standard error", "Unit"], rows,
                          [False, False, True, True, False])]
    if not rows:
        blocks.insert(0, Paragraph("No model had a mixing term these data determine; every model was "
                                   "judged as it stands."))
    held = [[h.model, h.set_id, h.source, "yes: verify before regulated use" if h.from_memory else "no"]
            for h in view.held_sets]
    if any(h.from_memory for h in view.held_sets):
        blocks.append(Notice("memory", "Parameter sets typed from memory",
                             "Sets marked as typed from memory were typed from memory of their publication, "
                             "not read off the original. Verify them before any regulated use."))
    blocks.append(Table("held-sets", "Parameter sets the other values were held at",
                        ["Model", "Parameter set", "Source", "Typed from memory"], held, [False] * 4,
                        ["memory" if h.from_memory else "" for h in view.held_sets], [False, True, False, False]))
    for o in outs:
        corr = (o.fit or {}).get("correlation") or {}
        names = corr.get("names") or []
        if len(names) < 2:
            continue
        crow = [[n] + [num(v, 3) for v in row] for n, row in zip(names, corr.get("matrix") or [])]
        blocks.append(Table(f"correlation-mixture-{o.model}", f"Correlation of the fitted mixing terms of "
                            f"{o.model}", [""] + list(names), crow, [False] + [True] * len(names)))
    return Section("mixing-terms", "3 Fitted mixing terms and held parameter sets", blocks)


def _along_ionic_strength(view: MixtureView, facts: ReportFacts) -> Section:
    figs = {f.key.rsplit(".", 1)[-1]: f for f in facts.figures.get(view.system, [])}
    sec = Section("ionic-strength", "4 Along ionic strength")
    for sub, (kind, heading) in enumerate([("residuals", "Residuals and the tolerance band"),
                                           ("validity", "How far each model holds")], start=1):
        f = figs.get(kind)
        blocks = [Figure(f.key, f.caption, f.alt, f.png)] if f else [Paragraph("Figure not available.")]
        sec.children.append(Section(f"{kind}-mixture", f"4.{sub} {heading}", blocks))
    outs = view.comparison.outcomes  # type: ignore[attr-defined]
    sec.children.append(Section("heldout-mixture", "4.3 Held-out error and information criteria",
                                [_heldout_table(outs, view.system, 4)]))
    sec.children.append(Section("flags-mixture", "4.4 Flagged fits", _flag_blocks(outs, [], [], [])))
    return sec


def _cautions(view: MixtureView, index: int) -> Section:
    s = view.settings
    items = [
        Notice("caution", "Regulated or safety-related use",
               "For dosing, scale or corrosion limits, regulated measurements or any use where an error "
               "could harm people, property or the environment, verify these results under your local "
               "codes and licensed practice before relying on them. This report records a numerical "
               "comparison; it is not a certification of a method."),
        Notice("caution", "Single-ion activities",
               "Single-ion activity coefficients cannot be measured. A mixture model's value for one ion "
               "(behind a pH or ion-selective electrode reading, or a saturation index) rests on a "
               "non-thermodynamic convention such as a liquid-junction assumption or a rule for splitting "
               "γ± between the ions. This report judges mean activity and osmotic coefficients only."),
        Notice("caution", "Extrapolation beyond the data",
               "A validity range holds only inside the ionic-strength range and the salt proportions of "
               "the data compared here, and for this tolerance. Other proportions of the same salts, "
               "other salts or higher ionic strength are not covered."),
        Notice("caution", "Binary parameters held",
               "Each model's binary parameters were held at the sets listed; with other binary sets the "
               "refitted mixing terms and the verdicts change. Use the mixing terms only with the binary "
               "set they were fitted beside."),
        Notice("caution", "Temperature",
               f"All results are for {s.temperature_k:g} K ({s.temperature_k - 273.15:.2f} °C). Fitted "
               "terms and validity ranges do not carry over to other temperatures or pressures."),
    ]
    if view.invented:
        items.append(Notice("caution", "Invented data", INVENTED_TEXT))
    if any(r.from_memory for r in view.dataset_rows) or any(h.from_memory for h in view.held_sets):
        items.append(Notice("memory", "Values typed from memory",
                            "Some data or parameter sets behind this report were typed from memory of their "
                            "source. Check them against the originals before the report is used for a "
                            "regulated method."))
    return Section("cautions", f"{index} Limits and cautions", items)
