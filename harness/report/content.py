"""What the report says, and in which order: a :class:`~saltbench.report.document.Document` built
from a comparison, its figures and the facts needed to reproduce it.

Order: what the report covers; findings in brief; one section per electrolyte (data used,
figures, fitted parameters, held-out error and information criteria, flagged fits); limits and
cautions; how to reproduce it; review and sign-off.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from saltbench.fitting.flags import describe
from saltbench.report.document import (
    DASH,
    Bullets,
    Document,
    Fields,
    Figure,
    Notice,
    Paragraph,
    Section,
    SignOff,
    Table,
    molality,
    num,
)

PROPERTY_NAMES = {"gamma_pm": "mean activity coefficient γ±", "osmotic": "osmotic coefficient φ",
                  "water_activity": "water activity (used as φ)"}

VERDICT_COLUMNS = ["Electrolyte", "Model", "k", "valid to, published (mol/kg)",
                   "valid to, refitted (mol/kg)", "Verdict"]
ERROR_COLUMNS = ["Electrolyte", "Model", "rms Δln γ±", "max Δln γ±", "rms Δφ", "max Δφ",
                 "held-out Δln γ±", "held-out Δφ", "AICc"]


@dataclass
class ReportFacts:
    """Everything beyond the comparison itself that the report states."""

    title: str
    created: str
    command: str
    software_version: str
    python: str
    platform: str
    store_path: str
    store_hash: str
    manifest_name: str
    plugins: list[dict] = field(default_factory=list)  # name, kind, path, version
    models: dict[str, dict] = field(default_factory=dict)  # id -> {"name", "plugin"}
    electrolytes: dict[str, str] = field(default_factory=dict)  # name -> charge type label
    figures: dict[str, list] = field(default_factory=dict)  # electrolyte -> [FigureImage]
    extra_sections: list[tuple[str, str, str]] = field(default_factory=list)  # plugin, title, text


def tolerance_text(settings) -> str:
    return f"|Δ ln γ±| ≤ {settings.tol_ln_gamma:g} and |Δφ| ≤ {settings.tol_phi:g}"


def verdict_rows(comparison) -> tuple[list[list[str]], list[list[str]], list[str]]:
    """Rows of the verdict table and of the error table, and the row marks they share."""
    verdicts, errors, marks = [], [], []
    for outs in comparison.outcomes.values():
        for o in outs:
            r = o.record()
            verdicts.append([r["electrolyte"], r["model"], str(r["n_params"]),
                             molality(r["valid_up_to_published"]), molality(r["valid_up_to_refit"]),
                             o.verdict.text if o.verdict else ""])
            errors.append([r["electrolyte"], r["model"], num(r["rms_ln_gamma"]), num(r["max_ln_gamma"]),
                           num(r["rms_osmotic"]), num(r["max_osmotic"]), num(r["heldout_rms_ln_gamma"]),
                           num(r["heldout_rms_osmotic"]), num(r["aicc"])])
            marks.append("recommended" if r["recommended"] else "")
    return verdicts, errors, marks


def add_plugin_sections(doc: Document, facts: ReportFacts, n: int) -> int:
    """Append the plugins' sections (``facts.extra_sections``) numbered from ``n``; the next number."""
    for plugin, title, text in facts.extra_sections:
        paragraphs = [Paragraph(p.strip()) for p in text.split("\n\n") if p.strip()]
        doc.sections.append(Section(f"plugin-{n}", f"{n} {title}",
                                    [*paragraphs, Paragraph(f"(Section contributed by plugin {plugin}.)")]))
        n += 1
    return n


def build_document(comparison, facts: ReportFacts) -> Document:
    s = comparison.settings
    doc = Document(facts.title, f"saltbench {facts.software_version} · generated {facts.created}",
                   facts.created)
    doc.sections.append(_scope(comparison, facts))
    doc.sections.append(_findings(comparison))
    for i, name in enumerate(comparison.outcomes, start=3):
        doc.sections.append(_electrolyte(comparison, facts, name, i))
    n = add_plugin_sections(doc, facts, len(comparison.outcomes) + 3)
    doc.sections.append(_cautions(comparison, n, s))
    doc.sections.append(_reproduce(facts, n + 1))
    doc.sections.append(sign_off_section(n + 2))
    return doc


def sign_off_section(index: int) -> Section:
    return Section("sign-off", f"{index} Review and sign-off", [
        Paragraph("To be completed by the laboratory. By signing, the reviewer confirms that the data, "
                  "tolerance and range suit the intended method; saltbench does not make that judgement."),
        SignOff(["Prepared by", "Reviewed by"])])


def _scope(comparison, facts: ReportFacts) -> Section:
    s = comparison.settings
    ranges = []
    for name, data in comparison.data.items():
        rec = comparison.recommendations[name]
        ranges.append(f"{name}: data {float(data.molality.min()):g} to {float(data.molality.max()):g} "
                      f"mol/kg, judged up to {rec.target_molality:g} mol/kg")
    names = [f"{n} ({facts.electrolytes.get(n, '?')})" for n in comparison.outcomes]
    order = list(dict.fromkeys(o.model for outs in comparison.outcomes.values() for o in outs))
    versions = {p["name"]: p.get("version", "") for p in facts.plugins}
    model_rows = []
    for mid in order:
        info = facts.models.get(mid, {})
        applied = [n for n, outs in comparison.outcomes.items() if any(o.model == mid for o in outs)]
        model_rows.append([mid, info.get("name", mid), info.get("plugin", ""),
                           versions.get(info.get("plugin", ""), ""), ", ".join(applied)])
    return Section("scope", "1 What this report covers", [
        Paragraph("This report records how closely each activity-coefficient model reproduces cited "
                  "measurements of the electrolytes below, so that a laboratory can choose the activity "
                  "correction for a method and the molality range over which it may be used."),
        Paragraph("How the range is judged. A model holds up to the highest molality L at which it, "
                  "fitted to every point up to L, stays within the tolerance at each of those points; a "
                  "published parameter set is judged as printed, without refitting. That says whether "
                  "the model can describe the data. Whether the data pin its parameters down is a "
                  "separate question, answered by cross-validation: each point is predicted by a fit that "
                  "did not see it, and where those held-out errors exceed the tolerance, or a parameter's "
                  "standard error exceeds its value, the report says so and gives the held-out error as "
                  "the band to expect. Stretches where neighbouring data lie too far apart to judge "
                  "a model are named. The recommendation is the model with the fewest fitted parameters "
                  "that holds over the range and is not materially less accurate than the most accurate "
                  "one (held-out RMS above 1.5 times the best and AICc more than 10 above it), preferring "
                  "models used within the range their authors claim; the most accurate is named too."),
        Fields([
            ("Electrolytes", ", ".join(names)),
            ("Temperature", f"{s.temperature_k:g} K ({s.temperature_k - 273.15:.2f} °C)"),
            ("Molality range", "; ".join(ranges)),
            ("Tolerance", tolerance_text(s)),
            ("Held-out error", f"{s.folds_text} over molality"),
            ("Properties used", ", ".join(PROPERTY_NAMES.get(p, p) for p in s.on)),
            ("Datasets", ", ".join(s.datasets) if s.datasets else "every stored dataset of each electrolyte"),
            ("Models", ", ".join(order)),
        ]),
        Table("models", "Models compared", ["Model id", "Name", "Plugin", "Plugin version", "Applied to"],
              model_rows, [False] * 5),
    ])


def _findings(comparison) -> Section:
    rec_rows = []
    for name, rec in comparison.recommendations.items():
        rec_rows.append([name, f"{rec.target_molality:g}", rec.model or "none", rec.statement])
    verdicts, errors, marks = verdict_rows(comparison)
    return Section("findings", "2 Findings in brief", [
        Table("recommendations", "Recommendation per electrolyte: the simplest model within tolerance "
              "over the whole judged range", ["Electrolyte", "Judged up to (mol/kg)", "Recommended model",
                                             "Statement"], rec_rows, [False, True, False, False]),
        Table("verdicts", f"Verdict per model (tolerance {tolerance_text(comparison.settings)}); "
              "k: fitted parameters; the recommended model of each electrolyte is marked",
              VERDICT_COLUMNS, verdicts, [False, False, True, True, True, False], marks),
        Table("errors", "Misfit per model with refitted parameters; Δ: data minus model; held out: "
              "predicted by fits that did not see the point", ERROR_COLUMNS, errors,
              [False, False] + [True] * 7, marks),
    ])


def _electrolyte(comparison, facts: ReportFacts, name: str, index: int) -> Section:
    outs = comparison.outcomes[name]
    sec = Section(f"electrolyte-{index}", f"{index} {name}")
    ds = comparison.datasets[name]
    rows, marks = [], []
    for d in ds:
        memo = bool(d.get("from_memory"))
        typed = d.get("typed") or DASH
        rows.append([d["key"], PROPERTY_NAMES.get(d.get("property", ""), d.get("property", "")),
                     str(d.get("n_points", "")), d.get("citation") or d.get("source", ""),
                     ("FROM MEMORY: " if memo else "") + typed + (f" ({d['table_ref']})" if d.get("table_ref") else ""),
                     d.get("content_hash", "")])
        marks.append("memory" if memo else "")
    data_blocks: list = []
    if any(marks):
        data_blocks.append(Notice("memory", "Data typed from memory",
                                  "Rows marked FROM MEMORY were typed from memory of the source, not read "
                                  "off the original. Verify them against the original before any "
                                  "regulated or safety-related use."))
    data_blocks.append(Table(f"datasets-{index}", f"Data used for {name}",
                             ["Dataset", "Property", "Points", "Source", "Transcription",
                              "Content hash (SHA-256)"], rows, [False, False, True, False, False, False],
                             marks, [True, False, False, False, False, True]))
    sec.children.append(Section(f"data-{index}", f"{index}.1 Data used", data_blocks))
    figs = {f.key.rsplit(".", 1)[-1]: f for f in facts.figures.get(name, [])}
    for sub, (kind, heading) in enumerate([("coefficients", "Coefficients and model curves"),
                                           ("residuals", "Residuals and the tolerance band"),
                                           ("validity", "How far each model holds")], start=2):
        f = figs.get(kind)
        blocks = [Figure(f.key, f.caption, f.alt, f.png)] if f else [Paragraph("Figure not available.")]
        sec.children.append(Section(f"{kind}-{index}", f"{index}.{sub} {heading}", blocks))
    sec.children.append(Section(f"parameters-{index}", f"{index}.5 Fitted parameters",
                                _parameter_blocks(outs, name, index)))
    sec.children.append(Section(f"heldout-{index}", f"{index}.6 Held-out error and information criteria",
                                [_heldout_table(outs, name, index)]))
    sec.children.append(Section(f"flags-{index}", f"{index}.7 Flagged fits",
                                _flag_blocks(outs, comparison.skipped.get(name, []),
                                             comparison.per_ion.get(name, []),
                                             comparison.disagreements.get(name, []))))
    return sec


def _parameter_blocks(outs, name: str, index: int) -> list:
    rows = []
    for o in outs:
        for p in (o.fit or {}).get("parameters", []):
            rows.append([o.model, p["name"], num(p["value"], 6), num(p["stderr"], 3), p.get("unit") or "",
                         "held fixed" if p.get("fixed") else "fitted"])
    blocks: list = [Table(f"parameters-{index}", f"Parameters of each model refitted to the {name} data "
                          "(standard errors from the covariance, scaled by the Birge ratio when the "
                          "scatter exceeds the stated uncertainties)",
                          ["Model", "Parameter", "Value", "Standard error", "Unit", "Status"], rows,
                          [False, False, True, True, False, False])]
    pub = [[o.model, o.published_set, "yes: verify before regulated use" if o.published_from_memory else "no"]
           for o in outs if o.published_set]
    if pub:
        blocks.append(Table(f"published-{index}", f"Published parameter sets tested on {name}",
                            ["Model", "Parameter set", "Typed from memory"], pub, [False, False, False],
                            ["memory" if r[2] != "no" else "" for r in pub]))
    for o in outs:
        corr = (o.fit or {}).get("correlation") or {}
        names = corr.get("names") or []
        if len(names) < 2:
            continue
        matrix = corr.get("matrix") or []
        crow = [[n] + [num(v, 3) for v in row] for n, row in zip(names, matrix)]
        blocks.append(Table(f"correlation-{index}-{o.model}", f"Correlation of the fitted parameters of "
                            f"{o.model}", [""] + list(names), crow, [False] + [True] * len(names)))
    return blocks


def _heldout_table(outs, name: str, index: int) -> Table:
    rows = []
    for o in outs:
        r = o.record()
        scheme = (o.heldout or {}).get("scheme", DASH)
        rows.append([o.model, str(r["n_params"]), str(r["n_points"] if r["n_points"] is not None else DASH),
                     num(r["chi2_reduced"]), num(r["rms_ln_gamma"]), num(r["heldout_rms_ln_gamma"]),
                     num(r["rms_osmotic"]), num(r["heldout_rms_osmotic"]), num(r["aicc"]), num(r["bic"]),
                     str(scheme)])
    return Table(f"heldout-{index}", f"Fit and held-out errors for {name}; AICc and BIC compare models "
                 "on the same data (lower is better)",
                 ["Model", "k", "Points", "χ²/ν", "rms Δln γ± (fit)", "rms Δln γ± (held out)", "rms Δφ (fit)",
                  "rms Δφ (held out)", "AICc", "BIC", "Scheme"], rows,
                 [False, True, True, True, True, True, True, True, True, True, False])


def _flag_blocks(outs, skipped: list[str], per_ion: list[str], disagreements: list) -> list:
    items = []
    for o in outs:
        flags = [describe(f) for f in o.flags] + ([f"error: {o.error}"] if o.error else [])
        if flags:
            items.append(f"{o.model}: " + "; ".join(flags))
    blocks: list = []
    if items:
        blocks.append(Paragraph("A fit flag (did not converge, singular or ill-conditioned, a parameter on "
                                "a bound, a model error) keeps a model out of the recommendation; notes "
                                "on the data end, the published set, how well the data determine the "
                                "parameters, sparse stretches of data and use beyond the range a model's "
                                "authors claim are given for information."))
        blocks.append(Bullets(items))
    else:
        blocks.append(Paragraph("No fit was flagged."))
    if skipped:
        blocks.append(Paragraph("Not applicable to this electrolyte (charge type not supported): "
                                + ", ".join(skipped) + "."))
    for note in disagreements:
        blocks.append(Paragraph("The data's own sources disagree: " + note.text + "."))
    if per_ion:
        blocks.append(Paragraph("Left out: parameters of their own per ion, which only several salts "
                                "sharing an ion determine (fit them jointly): " + ", ".join(per_ion) + "."))
    return blocks


def _cautions(comparison, index: int, s) -> Section:
    memo = any(d.get("from_memory") for ds in comparison.datasets.values() for d in ds)
    items = [
        Notice("caution", "Regulated or safety-related use",
               "For dosing, safety limits, regulated measurements or any use where an error could harm "
               "people, property or the environment, verify these results under your local codes and "
               "licensed practice before relying on them. This report records a numerical comparison; "
               "it is not a certification of a method."),
        Notice("caution", "Single-ion activities",
               "Single-ion activity coefficients cannot be measured. Any value for one ion (from an "
               "ion-size model, or behind a pH or ion-selective electrode reading) rests on a "
               "non-thermodynamic convention, such as a liquid-junction assumption or a rule for "
               "splitting γ± between the ions. This report judges mean ionic coefficients only."),
        Notice("caution", "Extrapolation beyond the data",
               "A validity range holds only inside the molality range of the data compared here and for "
               "this tolerance. Beyond the data no claim is made; the figures show how quickly some "
               "models leave the data."),
        Notice("caution", "Temperature",
               f"All results are for {s.temperature_k:g} K ({s.temperature_k - 273.15:.2f} °C). Fitted "
               "parameters and validity ranges do not carry over to other temperatures or pressures."),
        Notice("caution", "Binary solutions only",
               "Each electrolyte was judged alone in water. Mixtures need interaction terms this "
               "comparison did not test."),
    ]
    if memo:
        items.append(Notice("memory", "Data typed from memory",
                            "Some datasets behind this report were typed from memory of their source "
                            "(marked FROM MEMORY in the data tables). Check them against the originals "
                            "before the report is used for a regulated method."))
    return Section("cautions", f"{index} Limits and cautions", items)


def _reproduce(facts: ReportFacts, index: int) -> Section:
    rows = [[p["name"], p.get("version", ""), p.get("kind", ""), p.get("path", "")] for p in facts.plugins]
    return Section("reproduce", f"{index} Reproducing this report", [
        Fields([
            ("Software", f"saltbench {facts.software_version}; Python {facts.python}"),
            ("Platform", facts.platform),
            ("Store", facts.store_path),
            ("Store content hash (SHA-256)", facts.store_hash),
            ("Command", facts.command),
            ("Manifest", f"{facts.manifest_name} (re-run with: saltbench report --from {facts.manifest_name})"),
        ]),
        Table("plugins", "Plugins loaded", ["Plugin", "Version", "Kind", "Module or file"], rows,
              [False] * 4, [], [False, False, False, True]),
    ])
