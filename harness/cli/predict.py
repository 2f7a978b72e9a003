"""``saltbench predict``: one model's gamma±, phi and a_w at given molalities."""

from __future__ import annotations

import click
import numpy as np

from saltbench.cli.output import echo_caution, emit, format_option
from saltbench.errors import UserError


def parse_molalities(text: str) -> np.ndarray:
    try:
        values = np.array([float(x) for x in text.split(",") if x.strip()])
    except ValueError:
        raise UserError(f"--m: expected comma-separated molalities in mol/kg, found {text!r}") from None
    if values.size == 0 or np.any(~np.isfinite(values)) or np.any(values <= 0):
        raise UserError("--m: molalities must be positive numbers (mol/kg)")
    return values


@click.command()
@click.argument("electrolyte")
@click.option("--model", "model_id", required=True, help="Model id (see 'saltbench models').")
@click.option("--m", "molalities", default="0.001,0.01,0.1,0.5,1", show_default=True,
              help="Comma-separated molalities in mol/kg.")
@click.option("--params", "params_choice", default="auto", show_default=True,
              help="'auto' (published if any, else defaults), 'published', 'defaults' or a parameter-set id.")
@click.option("--temperature", "temperature_k", type=float, default=298.15, show_default=True,
              help="Temperature in K.")
@click.option("--current-constant", is_flag=True,
              help="Evaluate a published set with today's A_phi instead of the one its authors used.")
@format_option
@click.pass_obj
def predict(app, electrolyte: str, model_id: str, molalities: str, params_choice: str,
            temperature_k: float, current_constant: bool, fmt: str) -> None:
    """Mean activity coefficient, osmotic coefficient and water activity from one model.

    Outside the model's stated range the rows are marked as extrapolated, with a warning.
    """
    from saltbench.api import eval_context, resolve_parameters
    from saltbench.models.evaluate import evaluate

    s = app.session()
    e = s.electrolyte(electrolyte)
    model = s.registry.model(model_id)
    m = parse_molalities(molalities)
    params = resolve_parameters(s, model, e, params_choice)
    ctx = eval_context(model, e, params, temperature_k, own_constant=not current_constant)
    ev = evaluate(model, e, m, params.values, ctx=ctx)
    limit = model.validity.max_molality_for(e)
    if params.m_max is not None:
        limit = params.m_max if limit is None else min(limit, params.m_max)
    extrapolated = m > limit * (1 + 1e-9) if limit is not None else np.zeros(m.size, bool)
    unc = None
    if params.covariance is not None:
        from saltbench.fitting import propagate

        names, matrix = params.covariance
        unc = propagate(model, e, m, params={**model.defaults(e), **params.values},
                        covariance=np.array(matrix), names=names, dh=ctx.dh)
    records = []
    for i in range(m.size):
        r = {"molality": float(m[i]), "gamma_pm": float(ev.gamma_pm[i]),
             "ln_gamma_pm": float(ev.ln_gamma_pm[i]), "osmotic": float(ev.osmotic[i]),
             "water_activity": float(ev.water_activity[i]), "extrapolated": bool(extrapolated[i])}
        if unc is not None:
            r["u_gamma_pm"] = float(unc["u_gamma_pm"][i])
            r["u_osmotic"] = float(unc["u_osmotic"][i])
        records.append(r)
    if np.any(extrapolated):
        click.echo(f"Warning: molalities above {limit:g} mol/kg are outside the stated range of "
                   f"{model.id} with parameters {params.set_id}; those values are extrapolations.", err=True)
    if params.kind == "defaults" and model.parameters:
        click.echo(f"Note: using the default parameters of {model.id} (no published set for {e.name}).", err=True)
    if params.from_memory:
        click.echo(f"Note: parameter set {params.set_id} was typed from memory; verify against the "
                   "original before use in a regulated method.", err=True)
    set_t = getattr(params, "temperature_k", None)
    if params.kind != "defaults" and set_t is not None and abs(temperature_k - set_t) >= 0.01:
        # Only the Debye-Hückel constant follows the temperature; the set's own parameters do not.
        click.echo(f"Warning: parameter set {params.set_id} holds values for {set_t:g} K; at "
                   f"{temperature_k:g} K only the Debye-Hückel constant is recomputed, the "
                   "parameters are used unchanged, so the results are an extrapolation in temperature.",
                   err=True)
    if fmt == "json":
        emit(records, fmt)
        echo_caution(fmt)
        return
    if fmt == "table":
        click.echo(f"{e.name} with {model.name} [{model.id}], parameters: {params.set_id}, "
                   f"T = {temperature_k:g} K, A_phi = {ctx.dh.a_phi:.4f}")
    cols = ["molality", "gamma_pm", "ln_gamma_pm", "osmotic", "water_activity"]
    if unc is not None:
        cols += ["u_gamma_pm", "u_osmotic"]
    emit(records, fmt, cols + ["extrapolated"],
         {"molality": "m/(mol/kg)", "gamma_pm": "gamma±", "ln_gamma_pm": "ln gamma±",
          "osmotic": "phi", "water_activity": "a_w"},
         digits={"water_activity": 6})
    echo_caution(fmt)
