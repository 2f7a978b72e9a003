"""``saltbench solubility``: how much of a mineral dissolves in water or in a given solution."""

from __future__ import annotations

import math

import click

from saltbench.cli.output import echo_caution, emit, fold, format_option
from saltbench.errors import UserError


@click.command()
@click.argument("mineral")
@click.option("--solution", "solution", metavar="SPEC",
              help="The background solution (as for 'predict --solution'); default: pure water.")
@click.option("--model", "model_id", default="all", show_default=True,
              help="Model id, several comma-separated, or 'all' (every model giving single-ion values).")
@click.option("--sets", "sets", default="", metavar="IDS",
              help="Parameter sets to take values from first, comma-separated.")
@click.option("--missing", type=click.Choice(["error", "default"]), default="error", show_default=True,
              help="A cation-anion pair no set covers makes the model refuse, or takes its defaults.")
@click.option("--temperature", "temperature_k", type=float, default=None,
              help="Temperature in K [default: the solution's, or 298.15].")
@click.option("--density", "density", metavar="RHO", help="The solution's density for per-litre amounts.")
@format_option
@click.pass_obj
def solubility(app, mineral: str, solution: str | None, model_id: str, sets: str, missing: str,
               temperature_k: float | None, density: str | None, fmt: str) -> None:
    """The molality of MINERAL at saturation (SI = 0) in pure water or a background solution.

    MINERAL is a name, mineral name or formula of the bundled CRC solubility products at 25 °C
    (e.g. gypsum, BaSO4). No ion pairing or speciation is made; the result is a screening
    estimate, never a scaling limit on its own.
    """
    from saltbench.api import solubility as run

    ids = [x.strip() for x in model_id.split(",") if x.strip()]
    r = run(app.session(), mineral, ids, spec=solution, sets=[x for x in sets.split(",") if x],
            missing=missing, temperature_k=temperature_k, density=density)
    if not any(x.molality_at_saturation is not None for x in r.results):
        why = "; ".join(f"{x.model_id}: {x.reason}" for x in r.results) or "no model takes this solution"
        raise UserError(f"no model found the saturation of {r.mineral.label} ({why})")
    finite = lambda v: v if v is not None and math.isfinite(v) else None  # noqa: E731
    records = [{"model": x.model_id, "mineral": r.mineral.label, "formula": r.mineral.formula,
                "molality_at_saturation": x.molality_at_saturation,
                "grams_per_kg_water": x.grams_per_kg_water,
                "si_background": finite(x.si_background),
                "parameter_sets": list(x.resolved.sets) if x.resolved else [],
                "defaulted": list(x.resolved.defaulted) if x.resolved else [],
                "mixing_taken_as_zero": list(x.resolved.zero_mixing) if x.resolved else [],
                "note": x.reason} for x in r.results]
    background = r.background.name if r.background is not None else "pure water"
    if fmt == "table":
        click.echo(f"{r.mineral.label} ({r.mineral.formula}, log10 Ksp = {r.mineral.log10_ksp:g} at "
                   f"{r.mineral.temperature_k:g} K) in {background}")
    emit(records if fmt != "table" else [{**x, "note": x["note"] or ""} for x in records], fmt,
         ["model", "molality_at_saturation", "grams_per_kg_water", "si_background", "note"]
         if fmt == "table" else None,
         {"molality_at_saturation": "m_sat/(mol/kg)", "grams_per_kg_water": "g/kg water",
          "si_background": "SI in background"})
    err = fmt != "table"
    for x in r.results:
        if x.resolved is not None and x.resolved.defaulted:
            click.echo(fold(f"{x.model_id}: no set gives {', '.join(x.resolved.defaulted[:4])}"
                            f"{' ...' if len(x.resolved.defaulted) > 4 else ''}; its defaults were used "
                            "(--missing default)", "    ", "Warning: "), err=err)
    if r.from_memory:
        click.echo(fold(f"sets typed from memory: {', '.join(r.from_memory)}; verify before use in a "
                        "regulated method", "    ", "Note: "), err=err)
    for caution in r.cautions:
        click.echo(fold(caution, "    ", "Caution: "), err=err)
    echo_caution(fmt)
