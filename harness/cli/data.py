"""``saltbench data``: list, show, export, add and check curated data."""

from __future__ import annotations

import click

from saltbench.cli.output import emit, emit_ingest, fold, format_option

#: points within this of each other are at one temperature (as in the data check; kept here so
#: the command line does not import the curation package to print its help)
SAME_TEMPERATURE_K = 0.05

POINT_COLUMNS = ["electrolyte", "property", "molality", "value", "uncertainty", "temperature_k",
                 "source", "dataset", "origin"]
# Stored values print as typed (1.1158, not 1.116): a reader checks them against the printed table.
POINT_DIGITS = {"molality": 10, "value": 10, "uncertainty": 10, "temperature_k": 10}


@click.group()
def data() -> None:
    """Curated reference data and your own measured data."""


@data.command("list")
@click.option("--type", "charge_type", default=None, metavar="Z+-Z-",
              help="Only electrolytes of this charge type, e.g. 2-2 or 3-1.")
@click.option("--mixtures", is_flag=True, help="List the mixture datasets only (one line each).")
@format_option
@click.pass_obj
def list_(app, charge_type: str | None, mixtures: bool, fmt: str) -> None:
    """One line per electrolyte: charge type, datasets, points, sources, range.

    Mixture datasets follow in a table of their own (JSON and CSV: with --mixtures).
    """
    s = app.session()
    if mixtures:
        list_mixtures(s, fmt)
        return
    frame = s.electrolytes()
    if charge_type is not None:
        known = sorted(set(frame.charge_type))
        if charge_type.strip() not in known:
            from saltbench.errors import UserError

            raise UserError(f"--type: no electrolyte of charge type {charge_type!r} in the store "
                            f"(there are: {', '.join(known)})")
        frame = frame[frame.charge_type == charge_type.strip()]
    sources = s.datasets()
    records = []
    for r in frame.to_dict("records"):
        ds = sources[sources.electrolyte == r["electrolyte"]]
        cites = ds.drop_duplicates("source")[["source", "citation", "doi"]].to_dict("records")
        sets = [{"key": d["key"], "property": d["property"], "source": d["source"],
                 "typed_as": typed_as(d["typed"]), "n_points": int(d["n_points"]),
                 "min_molality": d["min_molality"], "max_molality": d["max_molality"],
                 "t_min_k": d["t_min_k"], "t_max_k": d["t_max_k"]}
                for d in ds.to_dict("records")]
        temps = s.temperatures(r["electrolyte"])
        remembered = sum(d["n_points"] for d in sets if d["typed_as"] == "remembered")
        records.append({
            "electrolyte": r["electrolyte"], "charge_type": r["charge_type"],
            "properties": sorted(set((r["properties"] or "").split(","))),
            "n_datasets": int(r["n_datasets"]), "n_points": int(r["n_points"]),
            "max_molality": r["max_molality"], "sources": [c["source"] for c in cites],
            "citations": cites, "from_memory": bool(r["any_from_memory"]),
            "n_points_from_memory": remembered, "datasets": sets, "origin": r["origin"],
            "temperatures_k": temps,
        })
    if fmt == "json":
        emit(records, fmt)
        return
    # 100 columns: the first source and how many more ('data show' and JSON name them all)
    flat = [{**r, "properties": ",".join(r["properties"]),
             "sources": r["sources"][0] + (f" +{len(r['sources']) - 1}" if len(r["sources"]) > 1 else ""),
             "from_memory": f"{r['n_points_from_memory']} (verify)" if r["n_points_from_memory"] else "no"}
            for r in records]
    columns = ["electrolyte", "charge_type", "properties", "n_datasets", "n_points",
               "max_molality", "from_memory", "sources"]
    # the temperatures column appears once any listed data lie away from 25 °C (it would read
    # '25' on every line otherwise)
    if any(abs(t - 298.15) > SAME_TEMPERATURE_K for r in records for t in r["temperatures_k"]):
        columns.insert(5, "temperatures")
        for f, r in zip(flat, records):
            f["temperatures"] = temperatures_label(r["temperatures_k"])
    emit(flat, fmt, columns,
         {"charge_type": "type", "n_datasets": "sets", "n_points": "points",
          "max_molality": "max m", "from_memory": "from memory", "temperatures": "T/°C"})
    click.echo(f"{len(records)} electrolytes; max m in mol/kg; 'saltbench data show NAME' gives each dataset "
               "with its citation.")
    if charge_type is None and fmt == "table":
        list_mixtures(s, fmt, only_if_any=True)


MIXTURE_COLUMNS = ["key", "system", "property", "temperature_k", "n_points", "min_ionic_strength",
                   "max_ionic_strength", "typed_as", "source", "origin"]


def mixture_typed_as(row) -> str:
    """How a mixture dataset's values reached it, in one word (invented ones say so)."""
    return "invented" if row.invented else typed_as(row.typed)


def list_mixtures(session, fmt: str, only_if_any: bool = False) -> None:
    """The mixture datasets, one line each (after the electrolytes, or alone with --mixtures)."""
    from saltbench.api import mixture_datasets

    rows = mixture_datasets(session)
    if only_if_any and not rows:
        return
    records = [{**r.as_dict(), "property": r.property + (f"({r.salt})" if r.salt else ""),
                "typed_as": mixture_typed_as(r)} for r in rows]
    if fmt != "table":
        emit(records, fmt, MIXTURE_COLUMNS)
        return
    click.echo("")
    emit(records, fmt, MIXTURE_COLUMNS,
         {"temperature_k": "T/K", "n_points": "points", "min_ionic_strength": "min I",
          "max_ionic_strength": "max I", "typed_as": "typed"})
    click.echo(f"{len(records)} mixture datasets; I in mol/kg; 'saltbench data show KEY' (or SYSTEM) gives "
               "the compositions and values.")


def temperatures_label(temperatures_k: list[float]) -> str:
    """'25' for one temperature, '15, 25, 40' for up to four, '15-90 (6)' for more (in °C)."""
    c = [f"{t - 273.15:.4g}" for t in temperatures_k]
    if len(c) <= 4:
        return ", ".join(c)
    return f"{c[0]}-{c[-1]} ({len(c)})"


def typed_as(typed: str) -> str:
    """How a dataset's values reached it, in one word: transcribed, remembered or measured."""
    text = typed.lower()
    return ("remembered" if text.startswith("from memory of") else
            "transcribed" if text.startswith("transcribed from") else "measured")


@data.command("show")
@click.argument("electrolyte")
@click.option("--points/--no-points", default=True, show_default=True, help="Also list the points.")
@format_option
@click.pass_obj
def show(app, electrolyte: str, points: bool, fmt: str) -> None:
    """Datasets (with full citations) and points for ELECTROLYTE.

    A mixture dataset's key, or a system such as 'HCl + NaCl', shows mixture datasets.
    """
    s = app.session()
    from saltbench.api import is_mixture

    if is_mixture(s, electrolyte):
        show_mixtures(s, electrolyte, points, fmt)
        return
    ds = s.datasets(electrolyte)
    pts = s.points(electrolyte)
    if fmt == "json":
        emit([], fmt, json_obj={
            "electrolyte": s.electrolyte(electrolyte).name,
            "datasets": ds.to_dict("records"),
            "points": pts[POINT_COLUMNS].to_dict("records") if points else [],
        })
        return
    if fmt == "csv":
        emit(pts[POINT_COLUMNS].to_dict("records"), fmt, POINT_COLUMNS)
        return
    for d in ds.to_dict("records"):
        click.echo(f"{d['key']}  [{d['origin']}]")
        if d["from_memory"]:
            click.echo("  ** typed from memory: verify against the original before regulated use **")
        else:
            click.echo(f"  {typed_as(d['typed'])}")
        sub = pts[pts.dataset == d["key"]]
        temps = sorted({round(float(t), 2) for t in sub.temperature_k}) if len(sub) else [d["temperature_k"]]
        at = (f"{d['temperature_k']:.2f} K" if len(temps) == 1 else
              f"{len(temps)} temperatures, {temps[0]:.2f} to {temps[-1]:.2f} K")
        unit = {"L_phi": ", values in J/mol", "Cp_phi": ", values in J/(K mol)"}.get(d["property"], "")
        click.echo(f"  {d['property']} ({d['basis']} basis, {d['scale']}{unit}), {at}, "
                   f"{d['n_points']} points, m = {d['min_molality']:g} to {d['max_molality']:g} mol/kg")
        click.echo(fold(d["citation"], "    ", "  source: "))
        click.echo(fold(f"{d['table_ref']}; precision {d['precision']:g}; uncertainty "
                        f"{d['uncertainty'] if d['uncertainty'] is not None else 'per point'}", "    ", "  table: "))
        click.echo(fold(d["typed"], "    ", "  typed: "))
        click.echo(f"  content hash: {d['content_hash'][:16]}")
        if points and len(temps) == 1:
            click.echo("  " + emit_table(sub))
        elif points:  # one table per temperature
            for t in temps:
                click.echo(f"  at {t:.2f} K ({t - 273.15:.2f} °C):")
                click.echo("  " + emit_table(sub[(sub.temperature_k - t).abs() < SAME_TEMPERATURE_K]))
        click.echo("")


def show_mixtures(session, key_or_system: str, points: bool, fmt: str) -> None:
    """One mixture dataset (by key) or every one of a system: fields, citation, points."""
    from saltbench.api import mixture_datasets, mixture_points

    found = mixture_points(session, key_or_system)
    rows = {(r.key, r.origin): r for r in mixture_datasets(session)}
    listing = []
    for mp in found:
        r = rows[(mp.key, mp.origin)]
        names = mp.composition.names
        pts = [{**{f"m({ion})": float(m) for ion, m in zip(names, mp.composition.molality[i])},
                "ionic_strength": float(mp.ionic_strength[i]), "value": float(mp.values[i]),
                "uncertainty": float(mp.uncertainties[i]), "line": mp.lines[i]} for i in range(mp.n)]
        listing.append((r, mp, pts))
    if fmt == "json":
        emit([], fmt, json_obj=[{**r.as_dict(), "typed_as": mixture_typed_as(r),
                                 "quantity": str(mp.quantity), "ions": list(mp.composition.names),
                                 "points": pts if points else []} for r, mp, pts in listing])
        return
    if fmt == "csv":
        emit([{"dataset": r.key, "quantity": str(mp.quantity), **p} for r, mp, pts in listing for p in pts], fmt)
        return
    from saltbench.cli.output import table

    for r, mp, pts in listing:
        click.echo(f"{r.key}  [{r.origin}]  mixture {r.system}")
        if r.invented:
            click.echo("  ** invented example data: not a measurement **")
        elif r.from_memory:
            click.echo("  ** typed from memory: verify against the original before regulated use **")
        else:
            click.echo(f"  {typed_as(r.typed)}")
        click.echo(f"  {r.property}{f'({r.salt})' if r.salt else ''} as printed; values below are "
                   f"{mp.quantity}; {r.temperature_k:.2f} K, {r.n_points} points, I = "
                   f"{r.min_ionic_strength:g} to {r.max_ionic_strength:g} mol/kg")
        click.echo(fold(r.citation, "    ", "  source: "))
        click.echo(fold(f"{r.table_ref}; uncertainty {r.uncertainty if r.uncertainty is not None else 'per point'} "
                        f"(printed basis); amounts given as {', '.join(f'm({c})' for c in r.columns)}",
                        "    ", "  table: "))
        click.echo(fold(r.typed, "    ", "  typed: "))
        if r.note:
            click.echo(fold(r.note, "    ", "  note: "))
        click.echo(f"  content hash: {r.content_hash[:16]}")
        if points:
            digits = {k: 10 for k in pts[0] if k != "line"}
            click.echo("  " + table(pts, digits=digits).replace("\n", "\n  "))
        click.echo("")


def emit_table(frame) -> str:
    from saltbench.cli.output import table

    rows = frame[["molality", "value", "uncertainty"]].to_dict("records")
    return table(rows, headers={"molality": "m/(mol/kg)"}, digits=POINT_DIGITS).replace("\n", "\n  ")


@data.command("export")
@click.argument("electrolytes", nargs=-1)
@click.option("--format", "fmt", type=click.Choice(["csv", "json", "table"]), default="csv",
              show_default=True, help="Output format.")
@click.pass_obj
def export(app, electrolytes: tuple[str, ...], fmt: str) -> None:
    """Every stored point (or those of ELECTROLYTES), one record per point."""
    s = app.session()
    frames = [s.points(e) for e in electrolytes] if electrolytes else [s.points()]
    import pandas as pd

    frame = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()
    emit(frame[POINT_COLUMNS].to_dict("records"), fmt, POINT_COLUMNS, digits=POINT_DIGITS)


@data.command("add")
@click.argument("paths", nargs=-1, required=True, type=click.Path())
@format_option
@click.pass_obj
def add(app, paths: tuple[str, ...], fmt: str) -> None:
    """Add your own bibliography, dataset and parameter files (all in one transaction).

    A folder stands for the bibliographies and CSV files in it. Either every file loads, or none
    does and the store is unchanged.
    """
    report = app.session().add(paths)
    emit_ingest(report, fmt)


@data.command("remove")
@click.argument("key")
@click.option("--force", is_flag=True, help="Also remove the fitted sets and reductions that use it.")
@click.pass_obj
def remove(app, key: str, force: bool) -> None:
    """Remove one of your own datasets (KEY as 'data show' lists it), in one transaction.

    Refused while a fitted parameter set or a reduction depends on it, unless --force.
    """
    for what in app.session().remove(key, force=force):
        click.echo(f"removed {what}")


@data.command("check")
@click.argument("electrolytes", nargs=-1)
@format_option
@click.pass_obj
def check(app, electrolytes: tuple[str, ...], fmt: str) -> None:
    """Cross-check the data: neighbours, Gibbs-Duhem consistency, second sources.

    Exits with status 1 when any point is flagged, naming its file and line.
    """
    from saltbench.api import check_data_and_mixtures

    report = check_data_and_mixtures(app.session(), electrolytes)
    if fmt == "json":
        emit([], fmt, json_obj={"ok": report.ok, "findings": [f.as_dict() for f in report.findings],
                                "checks": report.summary})
    else:
        for f in report.findings:
            at = f" at {f.temperature_k:.2f} K" if f.temperature_k is not None else ""
            click.echo(f"{f.file}:{f.line}: {f.check}: {f.electrolyte}{at} {f.message}")
        not_applicable = [r for r in report.summary if r.get("status") == "not applicable"]
        for r in not_applicable:
            click.echo(f"{r['dataset']}: {r['check']}: {r['reason']}")
        n = len(report.summary) - len(not_applicable)
        click.echo(f"{n} checks, {len(report.findings)} flagged point(s)" if report.findings
                   else f"{n} checks passed")
        near = [r for r in report.summary if r["check"] == "neighbours"]
        judged, total = sum(r["n_judged"] for r in near), sum(r["n_points"] for r in near)
        if judged < total:
            click.echo(f"{total - judged} of {total} points sit too far from their neighbours to be judged by "
                       "them (sparse tables); the other checks still see them.")
    if not report.ok:
        raise SystemExit(1)
