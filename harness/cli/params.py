"""``saltbench params``: published and fitted parameter sets in the store."""

from __future__ import annotations

import click

from saltbench.cli.output import emit, fold, format_option


@click.command()
@click.argument("set_id", required=False)
@click.option("--model", "model_id", default=None, help="Only sets of this model.")
@click.option("--kind", "kind", type=click.Choice(["published", "fitted"]), default=None,
              help="Only published sets (bundled or added) or only sets saved by 'fit'.")
@click.option("--export", "export_dir", default=None, metavar="FOLDER",
              help="Write SET_ID as files 'saltbench data add' reads back (parameters and citation).")
@format_option
@click.pass_obj
def params(app, set_id: str | None, model_id: str | None, kind: str | None, export_dir: str | None,
           fmt: str) -> None:
    """List parameter sets, or show one (SET_ID) with its values, source and settings."""
    from saltbench.api import parameter_set, parameter_sets
    from saltbench.errors import UserError

    s = app.session()
    if set_id is None:
        frame = parameter_sets(s)
        if model_id:
            s.registry.model(model_id)  # an unknown or misspelt id is an error, not an empty list
            frame = frame[frame.model == model_id]
        if kind:
            frame = frame[frame.kind == kind]
        records = frame.to_dict("records")
        for r in records:
            r["from_memory"] = bool(r["from_memory"])
        if fmt == "json":
            emit(records, fmt)
            return
        for r in records:
            r["temperatures"] = _temperatures(r)
        emit(records, fmt, ["set_id", "kind", "model", "source", "a_phi", "temperatures", "from_memory", "n_targets"],
             {"n_targets": "rows", "from_memory": "from memory"})
        return
    if export_dir is not None:
        from saltbench.api import export_parameter_set

        for path in export_parameter_set(s, set_id, export_dir):
            click.echo(f"wrote {path}")
        return
    doc = parameter_set(s, set_id)
    if doc is None:
        raise UserError(f"no parameter set {set_id!r} in the store (see 'saltbench params')")
    doc.pop("source_entry")
    values = doc["values"]
    if fmt == "json":
        emit([], fmt, json_obj=doc)
        return
    if fmt == "csv":
        emit(values, fmt)
        return
    click.echo(f"{doc['set_id']}  [{doc['kind']}] model {doc['model']}")
    if doc.get("citation"):
        click.echo(fold(f"{doc['citation']}; {doc['table_ref']}", "    ", "  source: "))
    click.echo(fold(doc["typed"], "    ", "  typed: "))
    click.echo(f"  temperature: {doc['temperature_k']:g} K ({doc['temperature_k'] - 273.15:.2f} °C)")
    if doc.get("temperature_form"):
        low, high = doc["temperature_range_k"]
        click.echo(f"  temperature form: {doc['temperature_form']} over {low:g}-{high:g} K "
                   f"({low - 273.15:.2f}-{high - 273.15:.2f} °C); 'value' is the first coefficient")
    if doc["a_phi"]:
        click.echo(f"  A_phi used by the authors: {doc['a_phi']}")
    if doc["note"]:
        click.echo(fold(doc["note"], "    ", "  note: "))
    # Six digits: every published value shows as typed (0.04995, not rounded to four digits).
    emit(values, "table", ["target", "name", "value", "stderr", "m_max"], digits={"value": 6})
    if doc.get("coefficients"):
        click.echo("  further coefficients of the temperature form:")
        emit(doc["coefficients"], "table", ["target", "name", "coefficient", "value"], digits={"value": 6})


def _temperatures(r: dict) -> str:
    """Where a set holds: its form's range, or its one temperature."""
    import math

    def c(k) -> str:
        return f"{float(k) - 273.15:g}"

    t_min, t_max = r.get("t_min_k"), r.get("t_max_k")
    if t_min is not None and t_max is not None and not (math.isnan(t_min) or math.isnan(t_max)):
        return f"{c(t_min)}-{c(t_max)} °C ({r.get('temperature_form')})"
    t = r.get("temperature_k")
    return "-" if t is None or math.isnan(t) else f"{c(t)} °C only"
