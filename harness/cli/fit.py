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
@click.option("--on", "on", default="", help="Properties to fit: gamma, osmotic, water_activity (default: all).")
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
@format_option
@click.pass_obj
def fit(app, electrolytes, model_id, up_to, fix, free, data_sel, on, temperature_k, set_name, save, dh_constant,
        mixture, sets, fmt):
    """Fit MODEL's free parameters to the data of ELECTROLYTES (activity and osmotic jointly).

    Several electrolytes give one joint fit in which per-ion parameters are shared by ion. With
    --mixture, MODEL's mixing terms are fitted to mixture data with the binary parameters held.
    """
    from saltbench.api import fit as run
    from saltbench.errors import UserError

    if mixture is not None:
        if electrolytes:
            raise UserError("give electrolytes or --mixture, not both")
        for value, name in ((fix, "--fix"), (up_to, "--up-to")):
            if value:
                raise UserError(f"{name} does not apply with --mixture")
        _fit_mixture(app, mixture, model_id, list(free), [x for x in sets.split(",") if x], set_name, save, fmt,
                     on=on, datasets=[d.strip() for d in data_sel.split(",") if d.strip()])
        return
    if not electrolytes:
        raise UserError("name at least one electrolyte, or --mixture SYSTEM")

    datasets = [d.strip() for d in data_sel.split(",") if d.strip()] or None
    f = run(app.session(), electrolytes, model_id, up_to=up_to, fix=fix, free=free, datasets=datasets,
            on=on or None, temperature_k=temperature_k, set_name=set_name, save=save, dh_constant=dh_constant)
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
