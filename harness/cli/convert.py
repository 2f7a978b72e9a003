"""``saltbench convert``: osmotic <-> activity coefficients of stored data by Gibbs-Duhem."""

from __future__ import annotations

import click

from saltbench.cli.output import echo_caution, emit, format_option, table


@click.command()
@click.argument("electrolyte")
@click.option("--from", "from_", type=click.Choice(["osmotic", "gamma"]), required=True,
              help="Convert stored osmotic coefficients to gamma±, or gamma± to phi.")
@click.option("--dataset", default=None, metavar="KEY",
              help="Which stored dataset, when the electrolyte has several of that property.")
@click.option("--fit-points", type=click.IntRange(min=1), default=5, show_default=True,
              help="Lowest points the dilute-range Hückel form is fitted to.")
@format_option
@click.pass_obj
def convert(app, electrolyte: str, from_: str, dataset: str | None, fit_points: int, fmt: str) -> None:
    """Gibbs-Duhem conversion of a stored dataset of ELECTROLYTE to the other property.

    Below the lowest measured molality the integral runs over a fitted Hückel form, not data;
    the output says so and gives that form.
    """
    from saltbench.api import convert_stored

    c = convert_stored(app.session(), electrolyte, from_, dataset, fit_points)
    r = c.result
    ext = r.extrapolation
    records = [{"molality": float(m), "gamma_pm": float(g), "u_gamma_pm": float(ug),
                "osmotic": float(p), "u_osmotic": float(up), "extrapolated": bool(x)}
               for m, g, ug, p, up, x in zip(r.molality, r.gamma_pm, r.u_gamma_pm, r.osmotic,
                                             r.u_osmotic, r.extrapolated)]
    statement = (f"below {ext.below_molality:g} mol/kg (the lowest measured molality) the "
                 f"Gibbs-Duhem integral uses the fitted form {ext.equation}, with a = "
                 f"{ext.ion_size:.3f} Å and c = {ext.c:.5f} kg/mol fitted to the "
                 f"{ext.fitted_to.size} lowest points; it is an extrapolation, not data")
    doc = {"electrolyte": c.electrolyte.name, "dataset": c.dataset, "direction": c.direction,
           "extrapolation": {"below_molality": ext.below_molality, "equation": ext.equation,
                             "ion_size_angstrom": ext.ion_size, "c_kg_per_mol": ext.c,
                             "fitted_to": [float(x) for x in ext.fitted_to],
                             "statement": statement},
           "notes": list(r.notes), "points": records}
    if fmt == "json":
        emit([], fmt, json_obj=doc)
    elif fmt == "csv":
        emit(records, fmt)
    if fmt != "table":
        echo_caution(fmt)
        return
    click.echo(f"{c.electrolyte.name}: {c.direction} from dataset {c.dataset}")
    click.echo(table(records, headers={"molality": "m/(mol/kg)", "gamma_pm": "gamma±",
                                       "u_gamma_pm": "u(gamma±)", "osmotic": "phi",
                                       "u_osmotic": "u(phi)"}))
    click.echo(f"Extrapolation: {statement}.")
    for n in r.notes:
        click.echo(f"note: {n}")
    echo_caution(fmt)
