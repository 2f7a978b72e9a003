"""``saltbench fit``: weighted least-squares parameters with standard errors, saved to the store."""

from __future__ import annotations

import click

from saltbench.cli.output import echo_caution, emit, fold, format_option


@click.command()
@click.argument("electrolytes", nargs=-1, required=True)
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
@format_option
@click.pass_obj
def fit(app, electrolytes, model_id, up_to, fix, free, data_sel, on, temperature_k, set_name, save, dh_constant,
        fmt):
    """Fit MODEL's free parameters to the data of ELECTROLYTES (activity and osmotic jointly).

    Several electrolytes give one joint fit in which per-ion parameters are shared by ion.
    """
    from saltbench.api import select_data
    from saltbench.fitting import fit as run_fit
    from saltbench.fitting import fit_joint, parse_assignments
    from saltbench.fitting.selection import parse_on
    from saltbench.scaffold.names import slug
    from saltbench.store.fitted import fit_set_id, save_fit

    s = app.session()
    model = s.registry.model(model_id)
    fixed = parse_assignments(fix)
    props = parse_on(on or None)
    datasets = [d.strip() for d in data_sel.split(",") if d.strip()] or None
    sels = []
    for name in electrolytes:
        e = s.electrolyte(name)
        sels.append((e, select_data(s, e, datasets=datasets, on=props, up_to=up_to, temperature_k=temperature_k)))
    dh = fit_constant(s, model, [e for e, _ in sels], temperature_k, dh_constant)
    from saltbench.models.discovery import plugin_output_to_stderr

    with plugin_output_to_stderr():
        if len(sels) == 1:
            e, sel = sels[0]
            result = run_fit(model, e, sel.data, fixed=fixed, free=free or None, dh=dh)
        else:
            result = fit_joint(model, [(e, sel.data) for e, sel in sels], fixed=fixed, free=free or None, dh=dh)
    names = [e.name for e, _ in sels]
    hashes = [d["content_hash"] for _, sel in sels for d in sel.datasets]
    settings = {"up_to": up_to, "fix": fixed, "free": list(free), "data": datasets, "on": props,
                "temperature_k": temperature_k, "a_phi": dh.a_phi}
    out = result.to_dict()
    out["electrolyte"] = names[0] if len(names) == 1 else names
    out["datasets"] = [{"key": d["key"], "content_hash": d["content_hash"], "n_points": d["n_points"]}
                       for _, sel in sels for d in sel.datasets]
    out["parameter_set"] = None
    out["a_phi"] = dh.a_phi
    out["a_phi_origin"] = dh.origin
    if save:
        set_id = slug(set_name) if set_name else fit_set_id(model.id, names, settings, hashes)
        if not set_id:
            from saltbench.errors import UserError

            raise UserError("--name must contain letters or digits")
        out["parameter_set"] = save_fit(s.store, result, set_id=set_id, settings=settings, data_hashes=hashes,
                                        electrolytes=names, temperature_k=temperature_k,
                                        a_phi=None if dh_constant == "current" else dh.a_phi)
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
                    f"({ph.get('n', 0)} pts); reduced chi-square {_f(res['chi2_reduced'])}; AICc "
                    f"{_f(out['aicc'])}, BIC {_f(out['bic'])}", "  "))
    for flag in out["flags"]:
        click.echo(f"flag: {flag}")
    if out["parameter_set"]:
        click.echo(fold(f"saved as parameter set {out['parameter_set']} (use: saltbench predict {names[0]} "
                        f"--model {model.id} --params {out['parameter_set']})", "  "))
    echo_caution(fmt)


def _f(x) -> str:
    return "-" if x is None else f"{x:.4g}"


def fit_constant(session, model, electrolytes, temperature_k: float, choice: str):
    """The Debye-Hückel state a refit uses (``--dh-constant``), decided by saltbench.water.basis."""
    from saltbench.errors import UserError
    from saltbench.store import parameter_sets as ps
    from saltbench.water.basis import evaluation_basis, parse_constant

    try:
        constant = parse_constant(choice)
    except ValueError as exc:
        raise UserError(f"--dh-constant: {exc}") from None
    if constant != "published":
        return evaluation_basis(temperature_k, constant=constant).dh
    sets = [found[0] for e in electrolytes if (found := ps.published(session.store, model, e))]
    constants = {p.a_phi for p in sets if p.a_phi is not None}
    if len(constants) != 1:
        raise UserError(f"--dh-constant published: {model.id} has " + (
            "no published set with a stated A_phi for " if not constants else "published sets with different A_phi "
            "for ") + f"{', '.join(e.name for e in electrolytes)}; give a value, e.g. --dh-constant 0.392")
    pub = sets[0]
    return evaluation_basis(temperature_k, set_id=pub.set_id, set_a_phi=pub.a_phi,
                            set_temperature_k=pub.temperature_k).dh
