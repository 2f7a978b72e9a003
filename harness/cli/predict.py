"""``saltbench predict``: one model's gamma±, phi and a_w at given molalities."""

from __future__ import annotations

import click
import numpy as np

from saltbench.cli.output import echo_caution, emit, format_option
from saltbench.errors import UserError

#: No aqueous solution reaches this molality (the most soluble salts stop near 30 mol/kg).
MAX_MOLALITY = 100.0


def parse_molalities(text: str) -> np.ndarray:
    items = [x.strip() for x in text.split(",")]
    if any(not x for x in items):
        raise UserError(f"--m: an empty item in {text!r}; give comma-separated molalities in mol/kg")
    try:
        values = np.array([float(x) for x in items])
    except ValueError:
        raise UserError(f"--m: expected comma-separated molalities in mol/kg, found {text!r}") from None
    if values.size == 0 or np.any(~np.isfinite(values)) or np.any(values <= 0):
        raise UserError("--m: molalities must be positive numbers (mol/kg)")
    if np.any(values > MAX_MOLALITY):
        raise UserError(f"--m: {values.max():g} mol/kg is beyond any aqueous solution (at most {MAX_MOLALITY:g})")
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

    Each row is marked where it is an extrapolation: below or above the molalities the parameter
    set was fitted to (or the range its authors state), beyond the range the model's authors
    claim, or at a temperature other than the set's. With no parameter set for the salt it
    refuses, and says how to get one.
    """
    from saltbench.api import predict as run

    s = app.session()
    m = parse_molalities(molalities)
    p = run(s, electrolyte, model_id, m, params_choice, temperature_k,
            "current" if current_constant else "published")
    e, model, params, ev, unc = p.electrolyte, p.model, p.params, p.evaluation, p.uncertainty
    records: list[dict] = []
    for i in range(m.size):
        r = {"molality": float(m[i]), "gamma_pm": float(ev.gamma_pm[i]),
             "ln_gamma_pm": float(ev.ln_gamma_pm[i]), "osmotic": float(ev.osmotic[i]),
             "water_activity": float(ev.water_activity[i]), "extrapolated": bool(p.extrapolation[i]),
             "extrapolation": list(p.extrapolation[i])}
        if unc is not None:
            r["u_gamma_pm"] = float(unc["u_gamma_pm"][i])
            r["u_osmotic"] = float(unc["u_osmotic"][i])
        records.append(r)
    reasons = list(dict.fromkeys(why for row in p.extrapolation for why in row))
    if reasons:
        click.echo(f"Warning: {sum(bool(r) for r in p.extrapolation)} of {m.size} values are extrapolations "
                   f"({'; '.join(reasons)}).", err=True)
    if params.kind == "defaults" and model.free_parameters(e):
        click.echo(f"Note: using the default parameters of {model.id}, as asked (no fitted or published set).",
                   err=True)
    if params.from_memory:
        click.echo(f"Note: parameter set {params.set_id} was typed from memory; verify against the "
                   "original before use in a regulated method.", err=True)
    if p.basis.off_temperature:
        # Only the Debye-Hückel constant follows the temperature; the set's own parameters do not.
        click.echo(f"Warning: parameter set {params.set_id} holds values for {p.basis.set_temperature_k:g} K; at "
                   f"{temperature_k:g} K only the Debye-Hückel constant is recomputed, the "
                   "parameters are used unchanged, so the results are an extrapolation in temperature.",
                   err=True)
    if fmt == "json":
        emit(records, fmt)
        echo_caution(fmt)
        return
    if fmt == "table":
        click.echo(f"{e.name} with {model.name} [{model.id}], parameters: {params.set_id}, "
                   f"T = {temperature_k:g} K, {p.basis.constant}")
    cols = ["molality", "gamma_pm", "ln_gamma_pm", "osmotic", "water_activity"]
    if unc is not None:
        cols += ["u_gamma_pm", "u_osmotic"]
    rows = [{**r, "extrapolated": "yes" if r["extrapolated"] else "no"} for r in records]
    emit(rows if fmt == "table" else [{**r, "extrapolation": "; ".join(r["extrapolation"])} for r in records],
         fmt, cols + ["extrapolated"] + (["extrapolation"] if fmt == "csv" else []),
         {"molality": "m/(mol/kg)", "gamma_pm": "gamma±", "ln_gamma_pm": "ln gamma±",
          "osmotic": "phi", "water_activity": "a_w"},
         digits={"water_activity": 6})
    echo_caution(fmt)
