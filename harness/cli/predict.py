"""``saltbench predict``: one model's gamma±, phi and a_w at given molalities."""

from __future__ import annotations

import click
import numpy as np

from saltbench.cli.output import echo_caution, emit, format_option
from saltbench.errors import UserError

#: No aqueous solution reaches this molality (the most soluble salts stop near 30 mol/kg).
MAX_MOLALITY = 100.0


#: the thermal properties ``--thermal`` adds, with their column headings
THERMAL_COLUMNS = {"relative_enthalpy": "L_phi/(J/mol)", "relative_heat_capacity": "Cp_phi-Cp°/(J/K/mol)",
                   "d_ln_gamma_pm_dt": "dln gamma±/dT/(1/K)", "salt_relative_enthalpy": "L_2/(J/mol)",
                   "water_relative_enthalpy": "L_1/(J/mol)"}


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


def _numbers(text: str | None, what: str) -> list[float] | None:
    if text is None:
        return None
    try:
        values = [float(x) for x in text.split(",")]
    except ValueError:
        raise UserError(f"{what}: expected comma-separated numbers, found {text!r}") from None
    if not values or any(not np.isfinite(v) or v <= 0 for v in values):
        raise UserError(f"{what}: the numbers must be positive")
    return values


@click.command()
@click.argument("electrolyte", required=False)
@click.option("--model", "model_id", required=True,
              help="Model id (see 'saltbench models'); with --solution also several, comma-separated, "
                   "or 'all' (every model that takes the solution).")
@click.option("--solution", "solution", metavar="SPEC",
              help="A solution instead of one salt: a solution file, an inline list such as "
                   "'NaCl=0.5,MgCl2=0.05' or 'Na=0.486,Mg=0.0547,Cl=0.5687' (mol/kg unless a unit is "
                   "written), or 'seawater [S=35] [x2]' (DEVELOPERS.md, \"Describing a solution\").")
@click.option("--sets", "sets", default="", metavar="IDS",
              help="With --solution: parameter sets to take values from first, comma-separated "
                   "(default: the model's published sets, one source's first).")
@click.option("--missing", type=click.Choice(["error", "default"]), default="error", show_default=True,
              help="With --solution: a cation-anion pair no set covers makes the model refuse, or "
                   "takes the model's defaults (listed in the output).")
@click.option("--scale-to-ionic-strength", "ionic_strengths", metavar="I1,I2,..",
              help="With --solution: scale the composition (water taken away or added, every "
                   "solute kept) to these ionic strengths in mol/kg.")
@click.option("--factor", "factors", metavar="F1,F2,..",
              help="With --solution: concentration factors on a water basis (2 = half the water).")
@click.option("--close-with", "close_with", metavar="ION",
              help="With --solution: close the charge balance by adding this ion (e.g. Cl-).")
@click.option("--minerals", is_flag=True,
              help="With --solution: saturation indices of the minerals its ions can form "
                   "(CRC solubility products at 25 °C).")
@click.option("--density", "density", metavar="RHO",
              help="With --solution: the solution's density for per-litre amounts, e.g. '1.02 kg/L', "
                   "or 'estimate'.")
@click.option("--m", "molalities", default="0.001,0.01,0.1,0.5,1", show_default=True,
              help="Comma-separated molalities in mol/kg.")
@click.option("--params", "params_choice", default="auto", show_default=True,
              help="'auto' (published if any, else defaults), 'published', 'defaults' or a parameter-set id.")
@click.option("--temperature", "temperature_k", type=float, default=None,
              help="Temperature in K [default: 298.15; for a solution, the one it states].")
@click.option("--current-constant", is_flag=True,
              help="Evaluate a published set with today's A_phi instead of the one its authors used.")
@click.option("--thermal", is_flag=True,
              help="Add the apparent molar relative enthalpy L_phi, the heat capacity relative to "
                   "infinite dilution, d ln gamma±/dT and the partial molar relative enthalpies, from "
                   "the temperature derivatives of the model (water's A_phi at each temperature).")
@format_option
@click.pass_obj
def predict(app, electrolyte: str | None, model_id: str, solution: str | None, sets: str, missing: str,
            ionic_strengths: str | None, factors: str | None, close_with: str | None, minerals: bool,
            density: str | None, molalities: str, params_choice: str, temperature_k: float | None,
            current_constant: bool, thermal: bool, fmt: str) -> None:
    """Mean activity coefficient, osmotic coefficient and water activity from one model.

    Each row is marked where it is an extrapolation: below or above the molalities the parameter
    set was fitted to (or the range its authors state), beyond the range the model's authors
    claim, or at a temperature other than the set's. With no parameter set for the salt it
    refuses, and says how to get one.

    With --solution instead of a salt: each ion's activity coefficient, the mean activity
    coefficient of every salt its ions form, phi and a_w from each model asked for, with the
    parameter sets used, values taken as defaults or zero, and extrapolation marks.
    """
    if solution is not None:
        if electrolyte is not None:
            raise UserError("give a salt or --solution, not both")
        _predict_solution(app, solution, model_id, sets, missing, ionic_strengths, factors, close_with,
                          minerals, temperature_k, density, fmt)
        return
    if electrolyte is None:
        raise UserError("give a salt (e.g. NaCl) or --solution SPEC")
    for flag_value, name in ((sets, "--sets"), (ionic_strengths, "--scale-to-ionic-strength"),
                             (factors, "--factor"), (close_with, "--close-with"), (density, "--density")):
        if flag_value:
            raise UserError(f"{name} applies with --solution only")
    if minerals:
        raise UserError("--minerals applies with --solution only")
    if thermal and current_constant:
        raise UserError("--thermal always takes the A_phi of water at each temperature; leave out "
                        "--current-constant")
    temperature_k = 298.15 if temperature_k is None else temperature_k
    from saltbench.api import predict as run

    s = app.session()
    m = parse_molalities(molalities)
    tp = None
    if thermal:
        from saltbench.api import predict_thermal

        tp = predict_thermal(s, electrolyte, model_id, m, params_choice, temperature_k)
        p = tp.prediction
    else:
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
        if tp is not None:
            th = tp.thermal
            r.update({name: float(getattr(th, name)[i]) for name in THERMAL_COLUMNS})
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
    if p.basis.off_temperature and p.basis.set_temperature_range_k is not None:
        low, high = p.basis.set_temperature_range_k
        click.echo(f"Warning: parameter set {params.set_id} gives its parameters as functions of "
                   f"temperature over {low:g}-{high:g} K; at {temperature_k:g} K they are "
                   "carried beyond that range, so the results are an extrapolation in temperature.",
                   err=True)
    elif p.basis.off_temperature:
        # Only the Debye-Hückel constant follows the temperature; the set's own parameters do not.
        click.echo(f"Warning: parameter set {params.set_id} holds values for {p.basis.set_temperature_k:g} K; at "
                   f"{temperature_k:g} K only the Debye-Hückel constant is recomputed, the "
                   "parameters are used unchanged, so the results are an extrapolation in temperature.",
                   err=True)
    if tp is not None and tp.caution:
        click.echo(f"Note: {tp.caution}.", err=True)
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
    if tp is not None:
        cols += list(THERMAL_COLUMNS)
    rows = [{**r, "extrapolated": "yes" if r["extrapolated"] else "no"} for r in records]
    emit(rows if fmt == "table" else [{**r, "extrapolation": "; ".join(r["extrapolation"])} for r in records],
         fmt, cols + ["extrapolated"] + (["extrapolation"] if fmt == "csv" else []),
         {"molality": "m/(mol/kg)", "gamma_pm": "gamma±", "ln_gamma_pm": "ln gamma±",
          "osmotic": "phi", "water_activity": "a_w", **THERMAL_COLUMNS},
         digits={"water_activity": 6})
    echo_caution(fmt)


def _predict_solution(app, solution: str, model_id: str, sets: str, missing: str,
                      ionic_strengths: str | None, factors: str | None, close_with: str | None,
                      minerals: bool, temperature_k: float | None, density: str | None, fmt: str) -> None:
    from saltbench.api import predict_solution
    from saltbench.cli.solution_output import emit_solution

    ids = [x.strip() for x in model_id.split(",") if x.strip()]
    p = predict_solution(app.session(), solution, ids, sets=[x for x in sets.split(",") if x],
                         missing=missing,
                         ionic_strengths=_numbers(ionic_strengths, "--scale-to-ionic-strength"),
                         factors=_numbers(factors, "--factor"), close_with=close_with,
                         minerals=minerals, temperature_k=temperature_k, density=density)
    if not any(m.ok for m in p.assessment.models):
        why = "; ".join(f"{m.model_id}: {m.reason}" for m in p.assessment.models)
        raise UserError(f"no model gave values for this solution ({why})")
    emit_solution(p, fmt)
