"""``saltbench report``: the comparison written up for a method-validation file."""

from __future__ import annotations

import shlex
import sys
from pathlib import Path

import click

from saltbench.cli.compare import build_settings, settings_options
from saltbench.cli.electrode import CANDIDATES as ELECTRODE_CANDIDATES
from saltbench.cli.electrode import CONVENTIONS as ELECTRODE_CONVENTIONS

SETTING_PARAMS = ("models", "up_to", "tol", "folds", "on", "data_sel", "temperature_k", "title", "temperatures",
                  "published_beyond_range", "fit_across")
ELECTRODE_PARAMS = ("convention", "model_id", "candidates")


def _report_prefix(app) -> list[str]:
    """``saltbench`` with the global options this run was given, then ``report``."""
    args = ["saltbench"]
    if app.store_path:
        args += ["--store", str(app.store_path)]
    for p in app.plugin_files:
        args += ["--plugin", str(p)]
    for d in app.disabled:
        args += ["--disable-plugin", d]
    return args + ["report"]


def _command_line(app, electrolytes, settings, title, out_dir, from_manifest, mixture=None, sets=()) -> str:
    """The command as a user would type it to get this report again (options spelled out)."""
    args = _report_prefix(app)
    if from_manifest:
        args += ["--from", str(from_manifest)]
    else:
        args += list(electrolytes)
        if mixture is not None:
            args += ["--mixture", mixture]
            if sets:
                args += ["--sets", ",".join(sets)]
        if settings.models:
            args += ["--models", ",".join(settings.models)]
        if settings.up_to is not None:
            args += ["--up-to", f"{settings.up_to:g}"]
        args += ["--tol", f"{settings.tol_ln_gamma:g},{settings.tol_phi:g}", "--folds", str(settings.folds),
                 "--on", ",".join(settings.on), "--temperature", f"{settings.temperature_k:g}"]
        if settings.datasets:
            args += ["--data", ",".join(settings.datasets)]
        if settings.temperatures_k is not None:
            args += ["--temperatures", f"{settings.temperatures_k[0]:g}:{settings.temperatures_k[1]:g}"]
            if settings.published_beyond_range:
                args += ["--published-beyond-range"]
            if settings.across_form:
                args += ["--fit-across", settings.across_form]
        if title:
            args += ["--title", title]
    if out_dir:
        args += ["--out", str(out_dir)]
    return shlex.join(args)


def _electrode_command_line(app, sets, convention, model_id, chosen, candidates, title, out_dir) -> str:
    args = _report_prefix(app)
    for key in sets:
        args += ["--electrode", str(key)]
    args += ["--convention", convention]
    if model_id:
        args += ["--model", model_id]
    if chosen:
        args += ["--sets", ",".join(chosen)]
    args += ["--candidates", ",".join(candidates)]
    if title:
        args += ["--title", title]
    if out_dir:
        args += ["--out", str(out_dir)]
    return shlex.join(args)


@click.command()
@click.argument("electrolytes", nargs=-1)
@settings_options
@click.option("--out", "out_dir", type=click.Path(file_okay=False, path_type=Path), default=None,
              help="Folder to write into (default: reports/<slug of the title or electrolytes> here).")
@click.option("--title", default=None, help="Report title (default: names the electrolytes).")
@click.option("--from", "from_manifest", type=click.Path(dir_okay=False, path_type=Path), default=None,
              metavar="MANIFEST", help="Re-run the report a manifest.json describes and say whether the "
              "results still agree (default folder: the manifest's folder name + '-rerun').")
@click.option("--jobs", type=click.IntRange(min=1), default=None,
              help="Worker processes (default: the CPUs this process may use).")
@click.option("--mixture", "mixture", metavar="SYSTEM",
              help="Report on a system's mixture data instead (e.g. 'HCl + NaCl', or a mixture dataset "
                   "key), as 'compare --mixture' judges it: ranges and --up-to in ionic strength.")
@click.option("--sets", "sets", default="", metavar="IDS",
              help="With --mixture: parameter sets to take binary values from first; with --electrode "
                   "--convention model: sets to take the model's values from first.")
@click.option("--electrode", "electrode_sets", multiple=True, metavar="SET",
              help="Write an electrode-validation report instead: a stored electrode or pH-buffer set, or a "
                   "readings file (repeatable): calibration plot, response fit, linear range, detection "
                   "limit, selectivity and samples with their uncertainty.")
@click.option("--convention", type=click.Choice(ELECTRODE_CONVENTIONS, case_sensitive=False), default="davies",
              show_default=True, help="With --electrode: how the standards' single-ion activities are "
                                      "assigned (as in 'saltbench ion-activity').")
@click.option("--model", "model_id", metavar="ID",
              help="With --electrode --convention model: the model whose single-ion form is used.")
@click.option("--candidates", default=",".join(ELECTRODE_CANDIDATES), show_default=True, metavar="NAMES",
              help="With --electrode: conventions whose spread enters each sample's budget.")
@click.pass_context
def report(ctx, electrolytes, models, up_to, tol, folds, on, data_sel, temperature_k, temperatures,
           published_beyond_range, fit_across, time_limit, out_dir, title, from_manifest, jobs, mixture, sets,
           electrode_sets, convention, model_id, candidates):
    """Compare models and write it up for a method-validation file, ready to sign.

    The report a lab files when it validates the activity correction of a method: HTML
    (self-contained, prints on A4 or Letter), PDF, Markdown, CSV tables, figures and a JSON
    manifest for reproducing it.

    The report states its limits. For dosing, safety limits or regulated measurements, verify
    every result under local codes and licensed practice.
    """
    from saltbench.api import make_electrode_report, make_mixture_report, make_report, rerun_report
    from saltbench.comparison.runner import default_jobs
    from saltbench.errors import UserError

    app = ctx.obj
    s = app.session()
    jobs = jobs or default_jobs()
    electrode_given = [p for p in ELECTRODE_PARAMS
                       if ctx.get_parameter_source(p) is not click.core.ParameterSource.DEFAULT]
    if electrode_given and not electrode_sets:
        raise UserError(f"--{electrode_given[0].replace('_id', '')} goes with --electrode")
    if from_manifest is not None:
        given = [p for p in SETTING_PARAMS
                 if ctx.get_parameter_source(p) is not click.core.ParameterSource.DEFAULT]
        if electrolytes or given or mixture is not None or electrode_sets:
            raise UserError("--from re-runs the manifest's own electrolytes and options; give no "
                            "ELECTROLYTE and no comparison option with it (only --out and --jobs)")
        if not from_manifest.is_file():
            raise UserError(f"--from {from_manifest}: no such file")
        command = _command_line(app, (), None, None, out_dir, from_manifest)
        result = rerun_report(s, from_manifest, folder=out_dir, jobs=jobs, command=command, argv=sys.argv)
    elif electrode_sets:
        if temperatures is not None or fit_across:
            given = "--temperatures" if temperatures is not None else "--fit-across"
            raise UserError(f"{given} goes with electrolytes, not with --electrode")
        if electrolytes or mixture is not None:
            raise UserError("--electrode writes a report of its own: give no electrolyte and no --mixture with it")
        chosen = [x.strip() for x in sets.split(",") if x.strip()]
        cands = [x.strip() for x in candidates.split(",") if x.strip()]
        command = _electrode_command_line(app, electrode_sets, convention, model_id, chosen, cands, title, out_dir)
        result = make_electrode_report(s, list(electrode_sets), convention.lower(), model_id=model_id,
                                       parameter_sets=chosen, candidates=cands, title=title, folder=out_dir,
                                       command=command, argv=sys.argv)
    elif mixture is not None:
        if electrolytes:
            raise UserError("give electrolytes or --mixture, not both")
        if temperatures is not None or fit_across:
            given = "--temperatures" if temperatures is not None else "--fit-across"
            raise UserError(f"{given} goes with electrolytes, not with --mixture")
        settings = build_settings(models, up_to, tol, folds, on, data_sel, temperature_k, time_limit)
        chosen = [x.strip() for x in sets.split(",") if x.strip()]
        command = _command_line(app, (), settings, title, out_dir, None, mixture, chosen)
        result = make_mixture_report(s, mixture, settings, sets=chosen, title=title, folder=out_dir,
                                     command=command, argv=sys.argv)
    else:
        if sets:
            raise UserError("--sets goes with --mixture or --electrode")
        if not electrolytes:
            raise UserError("name at least one electrolyte (or re-run one with --from MANIFEST)")
        settings = build_settings(models, up_to, tol, folds, on, data_sel, temperature_k, time_limit, temperatures,
                                  published_beyond_range, fit_across)
        command = _command_line(app, electrolytes, settings, title, out_dir, None)
        result = make_report(s, electrolytes, settings, title=title, folder=out_dir, command=command,
                             argv=sys.argv, jobs=jobs)
    for p in result.problems:
        click.echo(f"Warning: {p}", err=True)
    click.echo(f"Report written to {result.folder}:")
    for path in result.files:
        click.echo(f"  {path.relative_to(result.folder).as_posix()}")
    if "electrode" in result.manifest["command"]:
        for item in result.comparison.items:
            fit = item.calibration.fit if item.calibration else item.ph.calibration
            label = item.calibration.convention_label if item.calibration else "bates-guggenheim"
            click.echo(f"{item.key}: slope {fit.slope_percent:.1f} % of Nernstian ({label} convention)")
    elif "mixture" in result.manifest:
        mix = result.manifest["mixture"]
        click.echo(f"{mix['system']}: {mix['recommendation']['statement']}")
    elif "temperature_region" in result.manifest:
        for r in result.manifest["temperature_region"]["recommendations"]:
            click.echo(f"{r['electrolyte']}: {r['statement']}")
    else:
        for name, rec in result.comparison.recommendations.items():
            click.echo(f"{name}: {rec.statement}")
    click.echo("Caution: for dosing, safety limits or regulated measurements, verify the report's results "
               "under local codes and licensed practice.")
    if result.agreement is not None:
        for line in result.agreement.lines():
            click.echo(line)
        if not result.agreement.agree:
            ctx.exit(1)
