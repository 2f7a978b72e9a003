"""``saltbench readings``: add raw readings, list them, reduce them, show a set."""

from __future__ import annotations

import click

from saltbench.cli.output import emit, emit_ingest, format_option, table


@click.group()
def readings() -> None:
    """Raw measurements (cell EMFs, electrode calibrations, isopiestic, water activity and
    vapour-pressure readings) and their reduction to gamma± or phi datasets."""


@readings.command("add")
@click.argument("paths", nargs=-1, required=True, type=click.Path())
@format_option
@click.pass_obj
def add(app, paths: tuple[str, ...], fmt: str) -> None:
    """Add raw-readings files (and the bibliographies they cite, or folders of both) in one
    transaction.

    Either every file loads, or none does and the store is unchanged. Re-adding a corrected
    file updates its set; reduce it again to replace its reduced dataset.
    """
    from saltbench.api import add_readings

    report = add_readings(app.session(), paths)
    emit_ingest(report, fmt)


@readings.command("list")
@format_option
@click.pass_obj
def list_(app, fmt: str) -> None:
    """One line per measurement set: kind, readings, method, reduction status."""
    from saltbench.api import measurement_sets

    frame = measurement_sets(app.session())
    cols = ["key", "kind", "electrolyte", "temperature_k", "n_readings", "method",
            "method_version", "status", "dataset", "source"]
    records = [] if frame.empty else frame[cols + ["t_min_k", "t_max_k"]].to_dict("records")
    if fmt == "table":  # a series at several temperatures shows its range
        for r in records:
            if r["t_max_k"] - r["t_min_k"] >= 0.05:
                r["temperature_k"] = f"{r['t_min_k']:.2f}-{r['t_max_k']:.2f}"
    shown = cols if fmt != "json" else cols + ["t_min_k", "t_max_k"]
    emit(records, fmt, shown, {"temperature_k": "T/K", "n_readings": "readings",
                               "method_version": "version", "dataset": "reduced dataset"},
         digits={"temperature_k": 10})


@readings.command("reduce")
@click.argument("keys", nargs=-1)
@click.option("--all", "all_", is_flag=True, help="Reduce every stored measurement set.")
@click.option("--method", default=None, metavar="NAME",
              help="Reduction method instead of the one the set names (e.g. nernst-given-e0).")
@format_option
@click.pass_obj
def reduce(app, keys: tuple[str, ...], all_: bool, method: str | None, fmt: str) -> None:
    """Reduce measurement sets to gamma± or phi datasets with uncertainties.

    Each reduced dataset is stored as your own data, linked to its readings and to the
    reduction method and version; reducing again replaces it.
    """
    from saltbench.api import measurement_keys, reduce_stored
    from saltbench.errors import UserError

    s = app.session()
    if all_ and keys:
        raise UserError("give set ids or --all, not both")
    todo = measurement_keys(s) if all_ else list(keys)
    if all_ and not todo:
        raise UserError("--all: the store holds no measurement sets; add raw readings with "
                        "'saltbench readings add FILE' first")
    if not todo:
        raise UserError("name a measurement set to reduce (see 'saltbench readings list'), or --all")
    out = []
    for key in todo:
        red, dataset = reduce_stored(s, key, method)
        rec: dict = {"set": key, "method": red.method.name, "method_version": red.method.version,
               "property": red.property, "dataset": dataset, "n_points": int(red.value.size),
               "note": red.note, "details": red.details, "cautions": list(red.cautions)}
        if red.background_molality is not None:  # a mixture cell: ln gamma± of the measured salt
            rec["background"] = red.details.get("background")
            rec["points"] = [{"molality": float(m), "background_molality": float(b),
                              "value": float(v), "uncertainty": float(u)}
                             for m, b, v, u in zip(red.molality, red.background_molality,
                                                   red.value, red.u_value)]
        elif red.property is not None and red.temperature_k is not None:
            rec["points"] = [{"temperature_k": float(t), "molality": float(m), "value": float(v),
                              "uncertainty": float(u)}
                             for t, m, v, u in zip(red.temperature_k, red.molality, red.value, red.u_value)]
        elif red.property is not None:
            rec["points"] = [{"molality": float(m), "value": float(v), "uncertainty": float(u)}
                             for m, v, u in zip(red.molality, red.value, red.u_value)]
        out.append(rec)
    if fmt == "json":
        emit([], fmt, json_obj=out)
        return
    for rec in out:
        target = f"-> dataset {rec['dataset']}" if rec["dataset"] else "(no dataset: calibration)"
        click.echo(f"{rec['set']}: {rec['method']} v{rec['method_version']} {target}")
        click.echo(f"  {rec['note']}")
        by_t = rec["details"].get("e_standard_by_temperature")
        if by_t and fmt == "table":  # E°(T), the Nernst slope RT/F and the extrapolation at each
            click.echo("  " + table([{"T/K": f"{r['temperature_k']:.2f}", "E°/V": f"{r['e_standard_v']:.6f}",
                                      "u(E°)/V": f"{r['u_e_standard_v']:.2g}",
                                      "RT/F/mV": f"{r['nernst_slope_v'] * 1e3:.4f}",
                                      "a/Å": f"{r['ion_size_angstrom']:.2f}",
                                      "readings": str(r["n_readings"]),
                                      "extrapolated": str(r["n_extrapolation"])} for r in by_t])
                       .replace("\n", "\n  "))
        if "points" in rec and fmt == "table":
            click.echo("  " + table(rec["points"], headers={"molality": "m/(mol/kg)",
                                                           "background_molality":
                                                           f"m({rec.get('background')})/(mol/kg)",
                                                           "value": rec["property"],
                                                           "temperature_k": "T/K"},
                                     digits={"temperature_k": 5})
                       .replace("\n", "\n  "))
        elif "points" in rec:
            emit(rec["points"], fmt)
        if rec["details"].get("slope_percent") is not None:
            d = rec["details"]
            click.echo(f"  slope {d['slope_v_per_decade'] * 1000:.3f} mV/decade "
                       f"({d['slope_percent']:.2f} ± {d['u_slope_percent']:.2f} % of Nernst "
                       f"{d['nernst_slope_v_per_decade'] * 1000:.3f} mV/decade)")
        for c in rec["cautions"]:
            click.echo(f"  Caution: {c}")


def _display(rows: list[dict]) -> list[dict]:
    """Readings as printed for people: volts as mV and pascals as-is, with enough digits."""
    out = []
    for r in rows:
        d = {}
        for k, v in r.items():
            if v is None or k == "line":
                d[k] = "-" if v is None else str(v)
            elif k.endswith("emf_v"):
                d[k.replace("emf_v", "emf_mv")] = f"{v * 1e3:.4f}"
            else:
                d[k] = f"{v:.6g}"
        out.append(d)
    return out


def _extrapolation_table(ext) -> list[dict]:
    return [{"molality": float(m), "e_prime_v": float(e), "line_v": float(ln), "residual_v": float(r)}
            for m, e, ln, r in zip(ext.molality, ext.e_prime, ext.line, ext.residuals)]


def _plot(ext, key: str, path: str) -> None:
    from saltbench.errors import UserError

    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        raise UserError("--plot needs matplotlib, which is not installed") from None
    from pathlib import Path

    import numpy as np

    folder = Path(path).resolve().parent
    if not folder.is_dir():
        raise UserError(f"--plot {path}: no folder {folder} to write it in")
    fig, ax = plt.subplots(figsize=(6, 4))
    ax.plot(ext.molality, ext.e_prime * 1000, "o", label="E' from readings")
    m = np.linspace(0.0, float(ext.molality.max()), 50)
    ax.plot(m, (ext.e_standard + ext.slope * m) * 1000, "-",
            label=f"line, E° = {ext.e_standard * 1000:.3f} ± {ext.u_e_standard * 1000:.3f} mV")
    ax.set_xlabel("m / (mol/kg)")
    ax.set_ylabel("E' / mV")
    ax.set_title(f"Standard EMF extrapolation: {key}")
    ax.legend()
    fig.tight_layout()
    fig.savefig(path, dpi=120)
    plt.close(fig)


@readings.command("show")
@click.argument("key")
@click.option("--plot", "plot_path", metavar="FILE.png", type=click.Path(dir_okay=False),
              help="Also draw the E° extrapolation plot (EMF sets; needs matplotlib).")
@format_option
@click.pass_obj
def show(app, key: str, plot_path: str | None, fmt: str) -> None:
    """A measurement set: its header, readings, E° extrapolation points and stored reduction."""
    import numpy as np

    from saltbench.api import emf_extrapolation, measurement_set, reduction_of
    from saltbench.errors import UserError
    from saltbench.measurements.nernst import CALIBRATION_CAUTION

    s = app.session()
    ms = measurement_set(s, key)
    rows = []
    for i in range(ms.reading.size):
        r = {"line": ms.lines[i], "molality": None if np.isnan(ms.molality[i]) else float(ms.molality[i])}
        if ms.kind == "electrode_calibration":
            r["activity"] = float(ms.activity[i])
        if ms.background_molality is not None:
            r["background_molality"] = float(ms.background_molality[i])
        if ms.point_temperature is not None:
            r["temperature_k"] = float(ms.point_temperature[i])
        r[ms.store_column] = float(ms.reading[i])
        r["u_" + ms.store_column] = float(ms.u_reading[i])
        rows.append(r)
    ext = None
    # a mixture cell with E° given need not hold readings of its salt alone to extrapolate from
    from saltbench.measurements.reduce import temperature_parts

    several_t = len(temperature_parts(ms)) > 1
    if several_t and plot_path:
        raise UserError(f"--plot draws one E° extrapolation; {key} holds readings at several temperatures "
                        "('saltbench readings reduce' lists E° at each)")
    if ms.kind == "emf" and not several_t and not (ms.background_molality is not None
                                                   and ms.settings.get("e_standard") is not None):
        ext = emf_extrapolation(ms)
        if plot_path:
            _plot(ext, key, plot_path)
    elif plot_path:
        raise UserError(f"--plot draws the E° extrapolation of EMF sets; {key} holds {ms.kind} readings")
    reduction = reduction_of(s, key)
    head = {"key": ms.key, "kind": ms.kind, "electrolyte": ms.electrolyte.name,
            "temperature_k": ms.temperature_k, "source": ms.source, "typed": ms.typed,
            "method": ms.method, "method_version": ms.method_version, "settings": ms.settings,
            "note": ms.note, "file": ms.path}
    ext_doc: dict | None = None
    if ext is not None:
        ext_doc = {"e_standard_v": ext.e_standard, "u_e_standard_v": ext.u_e_standard,
                   "ion_size_angstrom": ext.ion_size, "ion_size_fitted": ext.ion_size_fitted,
                   "slope_v_kg_per_mol": ext.slope, "method": ext.method,
                   "uncertainty_basis": ext.uncertainty_basis, "points": _extrapolation_table(ext)}
    cautions = [CALIBRATION_CAUTION] if ms.kind in ("emf", "electrode_calibration") else []
    if fmt == "json":
        emit([], fmt, json_obj={"set": head, "readings": rows, "extrapolation": ext_doc,
                                "reduction": reduction, "cautions": cautions})
        return
    if fmt == "csv":
        emit(rows, fmt)
        return
    click.echo(f"{ms.key}: {ms.kind} readings of {ms.electrolyte.name} at {ms.temperature_k:.2f} K")
    click.echo(f"  source: {ms.source}; typed: {ms.typed}")
    click.echo(f"  method: {ms.method} v{ms.method_version}; file: {ms.path}")
    for k, v in ms.settings.items():
        click.echo(f"  {k}: {v}")
    click.echo("  " + table(_display(rows)).replace("\n", "\n  "))
    if ext is not None and ext_doc is not None:
        click.echo(f"\nE° extrapolation ({ext.method}; u from {ext.uncertainty_basis}):")
        click.echo(f"  E° = {ext.e_standard:.6f} V ± {ext.u_e_standard:.2g} V, ion size "
                   f"{ext.ion_size:.2f} Å ({'fitted' if ext.ion_size_fitted else 'fixed'})")
        click.echo("  plot data, E' against m:")
        plot_rows = [{"m/(mol/kg)": f"{p['molality']:g}", "E'/mV": f"{p['e_prime_v'] * 1e3:.4f}",
                      "line/mV": f"{p['line_v'] * 1e3:.4f}",
                      "residual/mV": f"{p['residual_v'] * 1e3:+.4f}"} for p in ext_doc["points"]]
        click.echo("  " + table(plot_rows).replace("\n", "\n  "))
        if plot_path:
            click.echo(f"  plot written to {plot_path}")
    if reduction:
        state = "current" if reduction["current"] else "stale: run 'saltbench readings reduce' again"
        click.echo(f"\nreduced with {reduction['method']} v{reduction['method_version']} -> "
                   f"{reduction['dataset'] or 'no dataset'} ({state})")
    else:
        click.echo("\nnot reduced yet")
    for c in cautions:
        click.echo(f"Caution: {c}")
