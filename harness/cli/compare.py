"""``saltbench compare``: which model to trust for which salt, up to which molality."""

from __future__ import annotations

import math

import click

from saltbench.cli.output import echo_caution, emit, format_option
from saltbench.cli.output import fold as wrap

TABLE_COLUMNS = ["model", "n_params", "rms_ln_gamma", "max_ln_gamma", "rms_osmotic",
                 "heldout_rms_ln_gamma", "aicc", "valid_up_to_published", "valid_up_to_refit", "verdict"]
HEADERS = {"n_params": "k", "rms_ln_gamma": "rms dlng", "max_ln_gamma": "max dlng",
           "rms_osmotic": "rms dphi", "heldout_rms_ln_gamma": "held-out", "aicc": "AICc",
           "valid_up_to_published": "to (pub)", "valid_up_to_refit": "to (refit)", "short_verdict": "verdict"}
#: More folds than this is leave-one-out by another name on any bundled table; say 'loo'.
MAX_FOLDS = 50
CAUTION = ("Validity ranges hold only for these data, this temperature and this tolerance. For dosing, "
           "safety limits or regulated measurements, verify under local codes and licensed practice.")
TABLE_COLUMNS_SHORT = [c if c != "verdict" else "short_verdict" for c in TABLE_COLUMNS]
TABLE_LEGEND = ("held-out: RMS of ln gamma± (of phi where marked) on points left out of the fit; to (pub), "
                "to (refit): highest "
                "molality within tolerance with published and with refitted parameters; whole range*: "
                "the data end before the model leaves the tolerance; †: the data go beyond the range the "
                "model's authors claim; flagged: not ranked, for the reason given below the table.")


def short_verdict(o) -> str:
    """The table's verdict for a ModelOutcome, short enough for a 100-column terminal; the full
    wording stays in JSON, CSV and reports. The molality it rests on is in the 'to (refit)' column."""
    from saltbench.comparison.outcome import VerdictKind

    kind = o.verdict.kind if o.verdict else None
    if kind is VerdictKind.FAILED:
        return "failed (below)"
    if kind is VerdictKind.NOT_RANKED:
        return "flagged (below)"
    v = o.valid_up_to("refit")
    mark = "†" if o.beyond_claim is not None else ""
    if v is None:
        return "fails at lowest m" + mark
    if kind is VerdictKind.WHOLE_RANGE:
        return ("whole range*" if o.verdict.data_end else "whole range") + mark
    return f"only to {v:g}{mark}"


CSV_COLUMNS = ["electrolyte", "model", "n_params", "n_points", "rms_ln_gamma", "max_ln_gamma",
               "rms_osmotic", "max_osmotic", "chi2_reduced", "heldout_rms_ln_gamma",
               "heldout_rms_osmotic", "aicc", "bic", "valid_up_to_published", "valid_up_to_refit",
               "limited_by_refit", "published_set", "converged", "flags", "recommended", "verdict"]


def heldout_cell(record: dict):
    """Held-out RMS of ln gamma±; of phi, marked so, where only osmotic data were compared."""
    if record.get("heldout_rms_ln_gamma") is not None or record.get("heldout_rms_osmotic") is None:
        return record.get("heldout_rms_ln_gamma")
    return f"{record['heldout_rms_osmotic']:.4g} (phi)"


def echo_summary(comp) -> None:
    """One line per electrolyte: its recommendation; then how many got one."""
    from saltbench.comparison.ranking import RecommendationKind as K

    recs = comp.recommendations
    width = max(len(n) for n in recs)
    for name, rec in recs.items():
        if rec.kind is K.RECOMMENDED:
            extra = f" (most accurate: {rec.most_accurate})" if rec.most_accurate != rec.model else ""
            line = f"{rec.model} to {rec.target_molality:g} mol/kg{extra}"
        elif rec.kind is K.TOO_FEW_POINTS:
            line = "too few points to judge"
        else:
            line = (f"none holds to {rec.target_molality:g}; furthest {rec.furthest_model} to "
                    f"{rec.furthest_molality:g}" if rec.furthest_model else "none holds at any molality")
        click.echo(f"{name.ljust(width)}  {line}")
    counts = {k: sum(r.kind is k for r in recs.values()) for k in K}
    click.echo(wrap(f"{counts[K.RECOMMENDED]} of {len(recs)} electrolytes get a recommendation; no model holds "
                    f"over the whole range for {counts[K.NONE_HOLDS]}; too few points to judge for "
                    f"{counts[K.TOO_FEW_POINTS]}."))


def settings_options(f):
    for opt in reversed([
        click.option("--models", "models", default="", help="Comma-separated model ids (default: all)."),
        click.option("--up-to", "up_to", type=float, default=None, help="Highest molality in mol/kg "
                     "(default: the whole data range)."),
        click.option("--tol", "tol", default="0.01", show_default=True,
                     help="Tolerance: one number for both |d ln gamma±| and |d phi|, or LNG,PHI."),
        click.option("--folds", default="5", show_default=True,
                     help="Cross-validation folds over molality: a number (k-fold) or 'loo'."),
        click.option("--on", "on", default="", help="Properties to use: gamma, osmotic, water_activity."),
        click.option("--data", "data_sel", default="", help="Comma-separated dataset or source keys."),
        click.option("--temperature", "temperature_k", type=float, default=298.15, show_default=True,
                     help="Temperature in K."),
        click.option("--temperatures", "temperatures", default=None, metavar="LO:HI",
                     help="Judge at every data temperature from LO to HI (K, or with a unit: '0:50 C', "
                     "'273.15:323.15 K') and give each model's region within tolerance in temperature and "
                     "molality; --temperature then picks the temperature a report details."),
        click.option("--published-beyond-range", "published_beyond_range", is_flag=True,
                     help="With --temperatures: judge published sets also at temperatures outside those "
                     "their authors fitted them to (otherwise 'not judged' there)."),
        click.option("--fit-across", "fit_across", default=None, metavar="FORM",
                     help="With --temperatures: also fit each model once to every temperature's data, its "
                     "free parameters as functions of temperature in FORM ('linear', 'reference-expansion' "
                     "or 'constant'), and judge that fit at each temperature (a third column of the region)."),
        click.option("--time-limit", "time_limit", type=click.FloatRange(min=0, min_open=True), default=120.0,
                     show_default=True, help="Seconds one model may spend on one electrolyte before it is "
                     "stopped and flagged (a plugin that hangs does not hold up the rest)."),
    ]):
        f = opt(f)
    return f


def parse_temperature_span(text: str) -> tuple[float, float]:
    """'LO:HI' (K, or with a unit: '0:50 C', '5 C:40 C') -> (low, high) in K; the one parser of
    ``--temperatures`` (``fitting.selection.parse_temperatures``), which here must be a range."""
    from saltbench.errors import UserError
    from saltbench.fitting.selection import parse_temperatures

    if ":" not in text:
        raise UserError(f"--temperatures: expected LO:HI, e.g. '273.15:323.15' (K) or '0:50 C', found {text!r}")
    choice = parse_temperatures(text)
    if choice.points_k:
        raise UserError(f"--temperatures: compare takes a range LO:HI (e.g. '0:50 C'), found {text!r}")
    assert choice.low_k is not None and choice.high_k is not None
    return choice.low_k, choice.high_k


def build_settings(models: str, up_to, tol: str, folds, on: str, data_sel: str, temperature_k: float,
                   time_limit: float = 120.0, temperatures: str | None = None,
                   published_beyond_range: bool = False, fit_across: str | None = None):
    from saltbench.comparison.settings import CompareSettings
    from saltbench.errors import UserError
    from saltbench.fitting.selection import parse_on

    try:
        parts = [float(x) for x in tol.split(",")]
    except ValueError:
        raise UserError(f"--tol: expected a number or two (LNG,PHI), found {tol!r}") from None
    if len(parts) not in (1, 2) or any(not math.isfinite(p) or p <= 0 for p in parts):
        raise UserError("--tol: give one or two positive, finite numbers")
    if str(folds).strip().lower() == "loo":
        folds = "loo"
    else:
        try:
            folds = int(folds)
        except ValueError:
            raise UserError(f"--folds: expected a whole number or 'loo', found {folds!r}") from None
        if not 2 <= folds <= MAX_FOLDS:
            raise UserError(f"--folds must be from 2 to {MAX_FOLDS} (or 'loo' for leave-one-out)")
    tl, tp = (parts[0], parts[0]) if len(parts) == 1 else parts
    span = parse_temperature_span(temperatures) if temperatures is not None else None
    if published_beyond_range and span is None:
        raise UserError("--published-beyond-range goes with --temperatures")
    if fit_across and span is None:
        raise UserError("--fit-across goes with --temperatures")
    return CompareSettings(
        models=tuple(m.strip() for m in models.split(",") if m.strip()), up_to=up_to,
        tol_ln_gamma=tl, tol_phi=tp, folds=folds, temperature_k=temperature_k,
        on=tuple(parse_on(on or None)), datasets=tuple(d.strip() for d in data_sel.split(",") if d.strip()),
        time_limit_s=float(time_limit), temperatures_k=span, published_beyond_range=published_beyond_range,
        across_form=fit_across)


@click.command()
@click.argument("electrolytes", nargs=-1)
@click.option("--all", "all_", is_flag=True, help="Every electrolyte in the store.")
@settings_options
@click.option("--jobs", type=click.IntRange(min=1), default=None,
              help="Worker processes (default: the CPUs this process may use).")
@click.option("--summary", is_flag=True, help="Only the recommendation for each electrolyte, and how many got one.")
@click.option("--mixture", "mixture", metavar="SYSTEM",
              help="Judge the models on a system's mixture data instead (e.g. 'HCl + NaCl', or a mixture "
                   "dataset key): binary parameters from the stored sets, mixing terms refitted, ranges "
                   "and --up-to in ionic strength.")
@click.option("--sets", "sets", default="", metavar="IDS",
              help="With --mixture: parameter sets to take binary values from first.")
@format_option
@click.pass_obj
def compare(app, electrolytes, all_, models, up_to, tol, folds, on, data_sel, temperature_k, temperatures,
            published_beyond_range, fit_across, time_limit, jobs, summary, mixture, sets, fmt):
    """Fit every model to each electrolyte's data and say which to trust, up to where.

    For each model: fitted parameters, residuals, held-out error (k-fold cross-validation over
    molality), AICc, and the molality up to which it stays within tolerance with published and
    with refitted parameters. The recommendation is the simplest model that meets the tolerance
    over the requested range and is not materially less accurate than the most accurate one.
    """
    from saltbench.api import compare as run
    from saltbench.comparison.outcome import VerdictKind
    from saltbench.comparison.runner import default_jobs
    from saltbench.errors import UserError
    from saltbench.fitting.flags import DETERMINATION_KINDS, PUBLISHED_KINDS, FlagKind

    s = app.session()
    if mixture is not None:
        if electrolytes or all_:
            raise UserError("give electrolytes or --mixture, not both")
        if temperatures is not None or fit_across:
            given = "--temperatures" if temperatures is not None else "--fit-across"
            raise UserError(f"{given} goes with electrolytes, not with --mixture")
        settings = build_settings(models, up_to, tol, folds, on, data_sel, temperature_k, time_limit)
        _compare_mixture(s, mixture, settings, [x for x in sets.split(",") if x], fmt)
        return
    names = list(electrolytes)
    if all_:
        names = s.electrolyte_names()
    if not names:
        raise UserError("name at least one electrolyte, or use --all")
    settings = build_settings(models, up_to, tol, folds, on, data_sel, temperature_k, time_limit, temperatures,
                              published_beyond_range, fit_across)
    if settings.temperatures_k is not None:
        from saltbench.cli.compare_region import echo_region

        echo_region(s, names, settings, fmt, jobs or default_jobs(), summary, every=all_)
        return
    comp = run(s, names, settings, jobs=jobs or default_jobs(), progress=True)
    for p in comp.plugin_problems:
        click.echo(f"Warning: {p}", err=True)
    if _emit_records(comp.records(), fmt):
        return
    if summary:
        echo_summary(comp)
        click.echo(wrap(CAUTION))
        return
    click.echo(wrap(f"Tolerance: |d ln gamma±| <= {settings.tol_ln_gamma:g}, |d phi| <= {settings.tol_phi:g}; "
                    f"held-out error by {settings.folds_text} over molality; T = "
                    f"{settings.temperature_k:g} K. Molalities in mol/kg."))
    for name, outs in comp.outcomes.items():
        rec = comp.recommendations[name]
        ds = comp.datasets[name]
        memo = (" (includes data typed from memory: verify before regulated use)"
                if any(d["from_memory"] for d in ds) else "")
        click.echo("")
        click.echo(f"== {name}: {sum(d['n_points'] for d in ds)} points from {len(ds)} dataset(s), "
                   f"up to {rec.target_molality:g} mol/kg{memo}")
        rows = [{**r, "short_verdict": short_verdict(o), "heldout_rms_ln_gamma": heldout_cell(r)}
                for o, r in ((o, o.record()) for o in outs)]
        emit(rows, "table", TABLE_COLUMNS_SHORT, HEADERS)
        for o in outs:
            if o.verdict and o.verdict.kind in (VerdictKind.FAILED, VerdictKind.NOT_RANKED):
                click.echo(wrap(f"   {o.model}: {o.verdict.text}", indent="     "))
            for flag in o.flags:
                # A fit kept from another start than the usual one is worth a line whatever
                # its rank: the model's sum of squares has several minima on these data.
                if flag.kind in PUBLISHED_KINDS or flag.kind is FlagKind.SEVERAL_MINIMA or (
                        flag.kind in DETERMINATION_KINDS
                        and (o.recommended or o.model == rec.most_accurate)):
                    click.echo(wrap(f"   {o.model}: {flag.text}", indent="     "))
        echo_not_applicable(comp, name)
        for note in comp.disagreements.get(name, []):
            click.echo(wrap(f"   sources: {note.text}", indent="     "))
        echo_per_ion(comp, name)
        click.echo(wrap(f"-> {rec.statement}", indent="   "))
    click.echo("")
    click.echo(wrap(TABLE_LEGEND))
    click.echo(wrap(CAUTION))


def _emit_records(records: list[dict], fmt: str) -> bool:
    """JSON or CSV records with the caution; False (nothing written) for the table."""
    if fmt == "table":
        return False
    emit(records if fmt == "json" else [{**r, "flags": "; ".join(r["flags"])} for r in records], fmt,
         None if fmt == "json" else CSV_COLUMNS)
    echo_caution(fmt, CAUTION)
    return True


def _compare_mixture(session, system: str, settings, sets: list[str], fmt: str) -> None:
    from saltbench.api import compare_mixture
    from saltbench.comparison.outcome import VerdictKind

    comp = compare_mixture(session, system, settings, sets=sets)
    if _emit_records(comp.records(), fmt):
        return
    rec = comp.recommendation
    click.echo(wrap(f"Tolerance: |d ln gamma±| <= {settings.tol_ln_gamma:g}, |d phi| <= {settings.tol_phi:g}; "
                    f"held-out error by {settings.folds_text} over ionic strength; T = "
                    f"{settings.temperature_k:g} K. Ranges are ionic strengths in mol/kg."))
    click.echo("")
    click.echo(f"== {comp.system} (mixtures): {comp.n_points} points, up to I = {comp.max_ionic_strength:g} mol/kg")
    rows = [{**r, "short_verdict": short_verdict(o).replace("lowest m", "lowest I"),
             "heldout_rms_ln_gamma": heldout_cell(r)} for o, r in ((o, o.record()) for o in comp.outcomes)]
    emit(rows, "table", TABLE_COLUMNS_SHORT, HEADERS)
    for o in comp.outcomes:
        if o.verdict and o.verdict.kind in (VerdictKind.FAILED, VerdictKind.NOT_RANKED):
            click.echo(wrap(f"   {o.model}: {o.verdict.text}", indent="     "))
        fitted = [p for p in (o.fit or {}).get("parameters", []) if not p.get("fixed")]
        if fitted:
            text = ", ".join(f"{p['name']} = {p['value']:.4g} ± {p['stderr']:.2g}" if p.get("stderr") is not None
                             else f"{p['name']} = {p['value']:.4g}" for p in fitted)
            click.echo(wrap(f"   {o.model}: fitted {text}; held values from {o.published_set}",
                            indent="     "))
    memory = sorted({o.model for o in comp.outcomes if o.published_from_memory})
    if memory:
        click.echo(wrap(f"   binary sets typed from memory behind: {', '.join(memory)} (verify before "
                        "regulated use)", indent="     "))
    click.echo(wrap(f"-> {rec.statement.replace('mol/kg', 'mol/kg of ionic strength', 1)}", indent="   "))
    click.echo("")
    click.echo(wrap(TABLE_LEGEND.replace("highest molality", "highest ionic strength")))
    click.echo(wrap(CAUTION))


def echo_not_applicable(comp, name: str) -> None:
    """The models of a comparison that do not take ``name``'s charge type."""
    if comp.skipped.get(name):
        click.echo(f"   not applicable to {name}: {', '.join(comp.skipped[name])}")


def echo_per_ion(comp, name: str) -> None:
    """The models left out because their parameters per ion need several salts."""
    if comp.per_ion.get(name):
        click.echo(wrap(f"   left out, parameters per ion need several salts sharing an ion: "
                        f"{', '.join(comp.per_ion[name])}", indent="     "))
