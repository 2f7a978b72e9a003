"""``saltbench params``: published and fitted parameter sets in the store."""

from __future__ import annotations

import json

import click

from saltbench.cli.output import emit, fold, format_option


@click.command()
@click.argument("set_id", required=False)
@click.option("--model", "model_id", default=None, help="Only sets of this model.")
@format_option
@click.pass_obj
def params(app, set_id: str | None, model_id: str | None, fmt: str) -> None:
    """List parameter sets, or show one (SET_ID) with its values, source and settings."""
    from saltbench.errors import UserError
    from saltbench.store.parameter_sets import list_sets

    s = app.session()
    if set_id is None:
        frame = list_sets(s.store)
        if model_id:
            s.registry.model(model_id)  # an unknown or misspelt id is an error, not an empty list
            frame = frame[frame.model == model_id]
        records = frame.to_dict("records")
        for r in records:
            r["from_memory"] = bool(r["from_memory"])
        if fmt == "json":
            emit(records, fmt)
            return
        emit(records, fmt, ["set_id", "kind", "model", "source", "a_phi", "from_memory", "n_targets"],
             {"n_targets": "rows", "from_memory": "from memory"})
        return
    row = s.store.conn.execute(
        "SELECT id, set_id, kind, model, source, table_ref, temperature_k, a_phi, typed, note, settings, "
        "data_hashes, software_version FROM parameter_sets WHERE set_id = ?", (set_id,)).fetchone()
    if row is None:
        raise UserError(f"no parameter set {set_id!r} in the store (see 'saltbench params')")
    keys = ["pk", "set_id", "kind", "model", "source", "table_ref", "temperature_k", "a_phi", "typed", "note",
            "settings", "data_hashes", "software_version"]
    doc = dict(zip(keys, row))
    doc["settings"] = json.loads(doc["settings"] or "{}")
    doc["data_hashes"] = json.loads(doc["data_hashes"] or "[]")
    values = [dict(zip(["target", "target_kind", "name", "value", "stderr", "m_max"], v)) for v in s.store.conn.execute(
        "SELECT target, target_kind, name, value, stderr, m_max FROM parameter_values WHERE set_pk = ? "
        "ORDER BY target, name", (doc.pop("pk"),))]
    doc["values"] = values
    if doc["source"]:
        cite = s.store.conn.execute("SELECT citation FROM sources WHERE key = ?", (doc["source"],)).fetchone()
        doc["citation"] = cite[0] if cite else ""
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
    if doc["a_phi"]:
        click.echo(f"  A_phi used by the authors: {doc['a_phi']}")
    if doc["note"]:
        click.echo(fold(doc["note"], "    ", "  note: "))
    # Six digits: every published value shows as typed (0.04995, not rounded to four digits).
    emit(values, "table", ["target", "name", "value", "stderr", "m_max"], digits={"value": 6})
