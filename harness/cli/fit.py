"""``saltbench fit``: weighted least-squares parameters with standard errors, saved to the store."""

from __future__ import annotations

import click

from saltbench.cli.output import echo_caution, emit, fold, format_option


@click.command()
@click.argument("electrolytes", nargs=-1)
@click.option("--model", "model_id", required=True, help="Model id (see 'saltbench models').")
@click.option("--up-to", "up_to", type=float, default=None, help="Highest molality to fit, mol/kg.")
@click.option("--fix", "fix", multiple=True, metavar="NAME=VALUE", help="Hold a parameter at a value (repeatable).")
@click.option("--free", "free", multiple=True, metavar="NAME", help="Fit a parameter the model holds fixed by default.")
@click.option("--data", "data_sel", default="", help="Comma-separated dataset or source keys (default: all).")
@click.option("--on", "on", default="", help="Properties to fit: gamma, osmotic, water_activity (default: all); "
                                             "with --temperatures also L_phi, Cp_phi.")
@click.option("--temperature", "temperature_k", type=float, default=298.15, show_default=True, help="Temperature in K.")
@click.option("--name", "set_name", default=None, help="Id for the saved parameter set (default: derived).")
@click.option("--save/--no-save", default=True, show_default=True, help="Save the result as a parameter set.")
@click.option("--dh-constant", "dh_constant", default="current", show_default=True,
              help="Debye-Hückel A_phi to fit with: 'current' (water at the temperature), 'published' (the "
                   "one the model's published set for this salt was fitted with) or a value, e.g. 0.392.")
@click.option("--mixture", "mixture", metavar="SYSTEM",
              help="Fit to a system's mixture data instead (e.g. 'HCl + NaCl'): the mixing terms (theta, "
                   "psi) by default, or the keys named with --free (e.g. 'theta[H+/Na+]'); the other "
                   "parameters held at the stored sets.")
@click.option("--sets", "sets", default="", metavar="IDS",
              help="With --mixture: parameter sets to take the held values from first.")
@click.option("--temperatures", "temperatures", default=None, metavar="LO:HI|T1,T2,...",
              help="Fit across temperatures: the data from LO to HI, or at the temperatures listed (K; or with "
                   "a unit, e.g. 15C:45C or '15:45 C'), in place of --temperature.")
@click.option("--temperature-form", "temperature_form", default=None, metavar="FORM",
              help="With --temperatures: the form each varying parameter takes, 'reference-expansion' "
                   "(default), 'linear' or 'constant'; its coefficients are named NAME.c0, NAME.c1, ... "
                   "(--fix NAME.c3=0 holds one).")
@click.option("--vary", "vary", multiple=True, metavar="NAME",
              help="With --temperatures: a parameter that takes the form (repeatable; default every free one); "
                   "the others keep one value at all temperatures.")
@click.option("--cross-validate", "cross_validation", default=None, metavar="SCHEME",
              help="With --temperatures: held-out errors, 'by-temperature' (each temperature left out in turn), "
                   "'interleaved' or 'contiguous' (5 folds over molality).")
@format_option
@click.pass_obj
def fit(app, electrolytes, model_id, up_to, fix, free, data_sel, on, temperature_k, set_name, save, dh_constant,
        mixture, sets, temperatures, temperature_form, vary, cross_validation, fmt):
    """Fit MODEL's free parameters to the data of ELECTROLYTES (activity and osmotic jointly).

    Several electrolytes give one joint fit in which per-ion parameters are shared by ion. With
    --mixture, MODEL's mixing terms are fitted to mixture data with the binary parameters held.
    With --temperatures, the data at several temperatures are fitted together with parameters as
    functions of temperature (--temperature-form).
    """
    from saltbench.api import fit as run
    from saltbench.errors import UserError

    if mixture is not None:
        if electrolytes:
            raise UserError("give electrolytes or --mixture, not both")
        for value, name in ((fix, "--fix"), (up_to, "--up-to"), (temperatures, "--temperatures")):
            if value:
                raise UserError(f"{name} does not apply with --mixture")
        _fit_mixture(app, mixture, model_id, list(free), [x for x in sets.split(",") if x], set_name, save, fmt,
                     on=on, datasets=[d.strip() for d in data_sel.split(",") if d.strip()])
        return
    if not electrolytes:
        raise UserError("name at least one electrolyte, or --mixture SYSTEM")

    datasets = [d.strip() for d in data_sel.split(",") if d.strip()] or None
    if temperatures is not None:
        _fit_temperatures(app, electrolytes, model_id, temperatures, temperature_form, vary, cross_validation,
                          up_to=up_to, fix=fix, free=free, datasets=datasets, on=on or None, set_name=set_name,
                          save=save, dh_constant=dh_constant, fmt=fmt)
        return
    f = run(app.session(), electrolytes, model_id, up_to=up_to, fix=fix, free=free, datasets=datasets,
            on=on or None, temperature_k=temperature_k, set_name=set_name, save=save, dh_constant=dh_constant,
            temperature_form=temperature_form, vary=vary, cross_validation=cross_validation)
    model, names, dh = f.model, f.electrolytes, f.dh
    out = f.result.to_dict()
    out["electrolyte"] = names[0] if len(names) == 1 else names
    out["datasets"] = [{"key": d["key"], "content_hash": d["content_hash"], "n_points": d["n_points"]}
                       for _, sel in f.selections for d in sel.datasets]
    out["parameter_set"] = f.parameter_set
    out["a_phi"] = dh.a_phi
    out["a_phi_origin"] = dh.origin
    if fmt == "json":
        emit([], fmt, json_obj=out)
        echo_caution(fmt)
        return
    rows = [{"name": p["name"], "value": p["value"], "stderr": p["stderr"], "unit": p["unit"],
             "held": "held" if p["fixed"] else ""} for p in out["parameters"]]
    if fmt == "csv":
        emit(rows, fmt)
        echo_caution(fmt)
        return
    res = out["residuals"]
    click.echo(f"{model.name} [{model.id}] fitted to {', '.join(names)}: {res['n_points']} points, "
               f"{res['n_params']} free parameter(s), {'converged' if out['converged'] else 'DID NOT CONVERGE'}")
    click.echo(f"Debye-Hückel A_phi = {dh.a_phi:.4f} ({dh.origin})")
    _echo_fit(out, rows, f"AICc {_f(out['aicc'])}, BIC {_f(out['bic'])}")
    if out["parameter_set"]:
        click.echo(fold(f"saved as parameter set {out['parameter_set']} (use: saltbench predict {names[0]} "
                        f"--model {model.id} --params {out['parameter_set']})", "  "))
    echo_caution(fmt)


def _fit_temperatures(app, electrolytes, model_id: str, temperatures: str, form, vary, cross_validation, *,
                      fmt: str, **options) -> None:
    """A fit across temperatures: coefficients with standard errors and whether the data determine
    them, then the residuals at each temperature (and the held-out errors when asked)."""
    from saltbench.api import fit_across_temperatures

    f = fit_across_temperatures(app.session(), electrolytes, model_id, temperatures,
                                form=form or "reference-expansion", vary=vary, cross_validation=cross_validation,
                                **options)
    model, names, summary = f.model, f.electrolytes, f.result.temperature
    out = f.result.to_dict()
    out["electrolyte"] = names[0] if len(names) == 1 else names
    out["datasets"] = [{"key": d["key"], "content_hash": d["content_hash"], "n_points": d["n_points"]}
                       for _, sel in f.selections for d in sel.datasets]
    out["parameter_set"] = f.parameter_set
    if f.cross_validation is not None:
        out["cross_validation"] = f.cross_validation.to_dict()
    rows = [{"name": r.name, "value": r.value, "stderr": r.stderr,
             "determined": ("yes" if r.resolved else "yes, not resolved from zero") if r.determined else "NO",
             "conditional": "conditional" if r.conditional else ""} for r in summary.reports]
    if fmt == "json":
        emit([], fmt, json_obj=out)
        echo_caution(fmt)
        return
    if fmt == "csv":
        emit(rows, fmt)
        echo_caution(fmt)
        return
    res = out["residuals"]
    temps = ", ".join(f"{t:g}" for t in summary.temperatures)
    click.echo(fold(f"{model.name} [{model.id}] fitted to {', '.join(names)} at {temps} K: {res['n_points']} points, "
                    f"{res['n_params']} free parameter(s), {'converged' if out['converged'] else 'DID NOT CONVERGE'}; "
                    f"form {summary.form} (reference {summary.reference_k:g} K); Debye-Hückel constants of water "
                    "at each temperature", "  "))
    if summary.note:
        click.echo(fold(f"note: {summary.note}", "  "))
    click.echo("")
    emit(rows or [{"name": "-", "value": None}], "table")
    click.echo(fold(f"rule: {summary.rule}", "  "))
    if any(r.conditional for r in summary.reports):
        click.echo(fold("conditional: standard error with the undetermined coefficients held at their fitted values "
                        "(hold them with --fix NAME.cJ=0 to fit without them)", "  "))
    click.echo("")
    click.echo("residuals at each temperature (observed - predicted):")
    emit([{"T / K": f"{r['temperature_k']:.2f}", "property": r["kind"], "n": r["n"], "mean": r["mean"], "rms": r["rms"],
           "max |r|": r["max_abs"]} for r in summary.per_temperature], "table")
    click.echo(fold(f"reduced chi-square {_f(res['chi2_reduced'])}; AICc {_f(out['aicc'])}, BIC {_f(out['bic'])}",
                    "  "))
    if f.cross_validation is not None:
        cv = f.cross_validation
        click.echo("")
        click.echo(f"held out ({cv.scheme}, {cv.folds} folds): ln gamma± rms {_f(cv.rms_ln_gamma)}, "
                   f"phi rms {_f(cv.rms_phi)}")
        for row in cv.by_temperature():
            parts = [f"{k} rms {_f(v['rms'])} ({v['n']} pts)" for k, v in row.items() if isinstance(v, dict)]
            click.echo(f"  without {row['temperature_k']:g} K: {'; '.join(parts)}")
        for flag in cv.flags:
            click.echo(f"flag: {flag}")
    for flag in out["flags"]:
        click.echo(f"flag: {flag}")
    if out["parameter_set"]:
        click.echo(fold(f"saved as parameter set {out['parameter_set']} (use: saltbench predict {names[0]} "
                        f"--model {model.id} --params {out['parameter_set']} --temperature T)", "  "))
    echo_caution(fmt)


def _echo_fit(out: dict, rows: list[dict], last: str) -> None:
    """The parameter table, their correlation, the residuals and the flags."""
    res = out["residuals"]
    emit(rows, "table")
    click.echo("")
    if out["correlation"]["names"]:
        corr = [{"": n, **{m: v for m, v in zip(out["correlation"]["names"], row)}}
                for n, row in zip(out["correlation"]["names"], out["correlation"]["matrix"])]
        click.echo("correlation:")
        emit(corr, "table")
        click.echo("")
    lg, ph = res["ln_gamma"], res["osmotic"]
    click.echo(fold(f"residuals: ln gamma± rms {_f(lg.get('rms'))} max {_f(lg.get('max_abs'))} "
                    f"({lg.get('n', 0)} pts); phi rms {_f(ph.get('rms'))} max {_f(ph.get('max_abs'))} "
                    f"({ph.get('n', 0)} pts); reduced chi-square {_f(res['chi2_reduced'])}; {last}", "  "))
    for flag in out["flags"]:
        click.echo(f"flag: {flag}")


def _f(x) -> str:
    return "-" if x is None else f"{x:.4g}"


def _fit_mixture(app, system: str, model_id: str, free: list[str], sets: list[str], set_name, save: bool,
                 fmt: str, *, on: str | None, datasets: list[str]) -> None:
    from saltbench.api import fit_mixture_data, save_mixture_fit
    from saltbench.fitting.selection import parse_on

    session = app.session()
    result, resolved, keys = fit_mixture_data(session, system, model_id, free=free or None, sets=sets,
                                              on=parse_on(on) if on else (), datasets=datasets)
    out = result.to_dict()
    out["datasets"] = keys
    out["held_from"] = list(resolved.sets)
    out["parameter_set"] = (save_mixture_fit(session, result, model_id, system, set_name=set_name, sets=sets,
                                                    keys=keys)
                            if save else None)
    if fmt == "json":
        emit([], fmt, json_obj=out)
        echo_caution(fmt)
        return
    rows = [{"name": p["name"], "value": p["value"], "stderr": p["stderr"], "unit": p["unit"]}
            for p in out["parameters"] if not p["fixed"]]
    if fmt == "csv":
        emit(rows, fmt)
        echo_caution(fmt)
        return
    res = out["residuals"]
    click.echo(fold(f"{model_id} fitted to the mixtures {result.electrolyte} ({', '.join(keys)}): "
                    f"{res['n_points']} points, {res['n_params']} free parameter(s), "
                    f"{'converged' if out['converged'] else 'DID NOT CONVERGE'}; held values from "
                    f"{', '.join(resolved.sets) or 'the model defaults'}", "  "))
    _echo_fit(out, rows, f"I up to {max(result.molality):.4g} mol/kg")
    if out["parameter_set"]:
        click.echo(fold(f"saved as parameter set {out['parameter_set']} (use: saltbench predict --solution SPEC "
                        f"--model {model_id} --sets {out['parameter_set']})", "  "))
    echo_caution(fmt)
