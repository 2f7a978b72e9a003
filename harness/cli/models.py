"""``saltbench models`` and ``saltbench plugins``: what was discovered, and what went wrong."""

from __future__ import annotations

import click

from saltbench.cli.output import emit, fold, format_option


def _model_record(info) -> dict:
    m = info.model
    return {
        "id": m.id, "name": m.name, "plugin": info.plugin, "plugin_version": info.plugin_version,
        "citation": m.citation,
        "charge_types": sorted(f"{a}-{b}" for a, b in m.charge_types) if m.charge_types else ["any"],
        "parameters": [{"name": p.name, "symbol": p.symbol, "unit": p.unit, "default": p.default,
                        "lower": p.lower, "upper": p.upper, "scope": p.scope, "linear": p.linear,
                        "fixed": p.fixed} for p in m.parameters],
        "validity": {"max_ionic_strength": m.validity.max_ionic_strength,
                     "max_molality": m.validity.max_molality, "note": m.validity.note},
    }


def _problems(registry) -> None:
    for p in registry.problems:
        click.echo(f"Warning: {p}", err=True)


@click.command()
@format_option
@click.pass_obj
def models(app, fmt: str) -> None:
    """Every discovered activity model with its plugin, parameters and citation."""
    from saltbench.api import plugin_registry

    reg = plugin_registry(app.plugin_files, app.disabled)
    _problems(reg)
    records = [_model_record(info) for info in reg.models.values()]
    if fmt == "json":
        emit(records, fmt)
        return
    flat = [{"id": r["id"], "name": r["name"], "plugin": r["plugin"],
             "charge_types": ",".join(r["charge_types"]),
             "parameters": ", ".join(p["name"] + ("*" if p["fixed"] else "") for p in r["parameters"]) or "none",
             "citation": r["citation"]} for r in records]
    if fmt == "csv":
        emit(flat, fmt, ["id", "name", "plugin", "charge_types", "parameters", "citation"])
        return
    # One block per model: a citation does not fit a table column at 100 columns.
    for r in flat:
        click.echo(f"{r['id']}: {r['name']}")
        click.echo(f"  plugin: {r['plugin']}; charge types: {r['charge_types']}")
        for label in ("parameters", "citation"):
            click.echo(fold(r[label], indent="    ", first=f"  {label}: "))
    click.echo("(* held fixed by default; free it with 'saltbench fit --free NAME')")


@click.command()
@format_option
@click.pass_obj
def plugins(app, fmt: str) -> None:
    """Plugin inventory: load order, kind, path, version, models contributed, problems."""
    from saltbench.api import plugin_registry

    reg = plugin_registry(app.plugin_files, app.disabled)
    records: list[dict] = []
    for i, rec in enumerate(reg.plugins, start=1):
        records.append({"order": i, "name": rec.name, "kind": rec.kind, "path": rec.path,
                        "version": rec.version, "status": "loaded",
                        "models": [mid for mid, info in reg.models.items() if info.plugin == rec.name]})
    for p in reg.problems:
        records.append({"order": None, "name": p.plugin, "kind": "", "path": p.path, "version": "",
                        "status": f"problem: {p.error}", "models": []})
    if fmt == "json":
        emit(records, fmt)
        return
    emit([{**r, "models": ", ".join(r["models"]) or "-"} for r in records], fmt,
         ["order", "name", "kind", "version", "models", "status"])
