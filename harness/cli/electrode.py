"""``saltbench electrode``: ion-selective and pH electrode calibrations, their samples."""

from __future__ import annotations

import click

from saltbench.cli.output import emit, emit_ingest, format_option, table

CONVENTIONS = ("davies", "extended-debye-huckel", "truesdell-jones", "sit", "debye-huckel",
               "macinnes", "bates-guggenheim", "model")
#: the conventions whose spread enters a sample's budget unless others are named
CANDIDATES = ("davies", "extended-debye-huckel", "sit")


def _convention_options(f):
    f = click.option("--missing", type=click.Choice(["error", "zero", "default"]), default="error",
                     show_default=True, help="A parameter no stored set gives: refuse, take it as "
                     "zero (SIT), or the model's default (--convention model).")(f)
    f = click.option("--sets", default="", metavar="IDS",
                     help="With --convention model: parameter sets to take values from first.")(f)
    f = click.option("--model", "model_id", metavar="ID",
                     help="With --convention model: the model whose single-ion form is used.")(f)
    f = click.option("--convention", type=click.Choice(CONVENTIONS, case_sensitive=False),
                     default="davies", show_default=True,
                     help="How the standards' single-ion activities are assigned (as in "
                          "'saltbench ion-activity').")(f)
    return f


@click.group()
def electrode() -> None:
    """Ion-selective and pH electrode calibrations: the standards' single-ion activities under a
    named convention, the Nikolsky-Eisenman response fit, detection limit, linear range,
    selectivity, and samples with their uncertainty.

    Files are raw readings of kind 'electrode' or 'ph_buffers' (DEVELOPERS.md, "Electrode
    calibrations"); add them with 'electrode add' or 'readings add', or name a file directly.
    """


@electrode.command("add")
@click.argument("paths", nargs=-1, required=True, type=click.Path())
@format_option
@click.pass_obj
def add(app, paths: tuple[str, ...], fmt: str) -> None:
    """Add electrode readings files and the bibliographies they cite, in one transaction (the
    same as 'readings add')."""
    from saltbench.api import add_readings

    emit_ingest(add_readings(app.session(), paths), fmt)


@electrode.command("list")
@format_option
@click.pass_obj
def list_(app, fmt: str) -> None:
    """One line per stored electrode or pH-buffer set."""
    from saltbench.api import electrode_sets

    cols = ["key", "kind", "ion", "temperature_k", "n_calibration", "n_samples", "source"]
    emit(electrode_sets(app.session()), fmt, cols,
         {"temperature_k": "T/K", "n_calibration": "standards/buffers", "n_samples": "samples"},
         digits={"temperature_k": 10})


def _calibrate(app, set_: str, convention: str, model_id: str | None, sets: str, missing: str):
    from saltbench.api import electrode_calibrate

    return electrode_calibrate(app.session(), set_, convention.lower(), model_id=model_id,
                               sets=[x for x in sets.split(",") if x], missing=missing)


def _tail(doc: dict) -> None:
    for why in doc.get("extrapolation", []):
        click.echo(f"extrapolated: {why}")
    for src in doc.get("parameters_from", []):
        click.echo(f"parameters: {src}")
    for note in doc.get("notes", []):
        click.echo(f"note: {note}")
    if doc.get("caveat"):
        click.echo(f"Caveat: {doc['caveat']}")
    for c in doc.get("cautions", []):
        click.echo(f"Caution: {c}")


@electrode.command("calibrate")
@click.argument("set_", metavar="SET|FILE")
@_convention_options
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table",
              show_default=True, help="Output format.")
@click.pass_obj
def calibrate(app, set_: str, convention: str, model_id: str | None, sets: str, missing: str,
              fmt: str) -> None:
    """Fit an ion-selective electrode's response to its standards.

    Each standard's primary-ion activity comes from its whole composition (the adjuster
    included) under the convention; the fit is E = E0 + S log10(a_i + sum K_ij a_j^(z_i/z_j) + a_0)
    by weighted least squares. Single-ion activities rest on a non-thermodynamic convention.
    """
    from saltbench.cli.electrode_output import calibration_doc

    cal = _calibrate(app, set_, convention, model_id, sets, missing)
    doc = calibration_doc(cal)
    if fmt == "json":
        emit([], "json", json_obj=doc)
        return
    lr = doc["linear_range"]
    click.echo(f"{doc['set']}: {doc['ion']} electrode at {doc['temperature_k']:g} K; reference "
               f"{doc['reference_electrode']}; background {doc['background'] or 'none'}")
    click.echo(f"convention: {doc['convention']} (every activity below is on it)")
    click.echo(table(doc["standards"], ["line", "label", "ionic_strength", "molality", "gamma",
                                        "activity", "px", "emf_mv", "residual_mv"],
                     {"ionic_strength": "I/(mol/kg)", "molality": "m_i/(mol/kg)", "gamma": "gamma_i",
                      "activity": "a_i", "px": "pX", "emf_mv": "E/mV", "residual_mv": "resid/mV"},
                     digits={"emf_mv": 6}))
    click.echo(f"fit: {doc['fit']}")
    click.echo(f"  slope S = {doc['slope_mv_per_decade']:.3f} ± {doc['u_slope_mv_per_decade']:.3f} "
               f"mV/decade = {doc['slope_percent_nernstian']:.2f} ± {doc['u_slope_percent_nernstian']:.2f} "
               f"% of Nernstian ({doc['nernst_slope_mv_per_decade']:.3f} mV/decade, CODATA)")
    click.echo(f"  E0 = {doc['e0_mv']:.2f} ± {doc['u_e0_mv']:.2f} mV")
    if doc["detection_limit_activity"] is not None:
        click.echo(f"  detection limit a_i = {doc['detection_limit_activity']:.3g} ± "
                   f"{doc['u_detection_limit_activity'] or 0:.2g} (pX {doc['detection_limit_px']:.2f}); "
                   f"{doc['detection_limit_definition']}")
    if lr:
        click.echo(f"  linear range a_i {lr['low']:.3g} to {lr['high']:.3g} ({lr['n_standards']} "
                   f"standards; rule: {lr['rule']})")
    else:
        click.echo("  no linear range by the stated rule")
    if doc["selectivity_methods"]:
        click.echo(table(doc["selectivity_methods"], ["interferent", "method", "coefficient",
                                                      "u_coefficient", "log10_coefficient", "note"],
                         {"coefficient": "K_ij", "u_coefficient": "u(K_ij)", "log10_coefficient": "log10 K_ij"}))
    _tail(doc)


@electrode.command("samples")
@click.argument("set_", metavar="SET|FILE")
@_convention_options
@click.option("--candidates", default=",".join(CANDIDATES), show_default=True,
              metavar="NAMES", help="Conventions whose spread enters each concentration's budget "
              "(each recalibrated and re-solved).")
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table",
              show_default=True, help="Output format.")
@click.pass_obj
def samples(app, set_: str, convention: str, model_id: str | None, sets: str, missing: str,
            candidates: str, fmt: str) -> None:
    """Each sample's primary-ion activity and molality with its uncertainty budget and flags."""
    from saltbench.api import electrode_samples
    from saltbench.cli.electrode_output import calibration_doc, sample_doc

    cal = _calibrate(app, set_, convention, model_id, sets, missing)
    out = electrode_samples(app.session(), cal,
                            candidates=[c.strip().lower() for c in candidates.split(",") if c.strip()])
    docs = [sample_doc(s) for s in out]
    head = calibration_doc(cal)
    doc = {"set": head["set"], "ion": head["ion"], "convention": head["convention"],
           "samples": docs, "caveat": head["caveat"], "cautions": head["cautions"]}
    if fmt == "json":
        emit([], "json", json_obj=doc)
        return
    click.echo(f"{doc['set']}: {doc['ion']} samples; convention {doc['convention']}")
    click.echo(table(docs, ["line", "label", "emf_mv", "activity", "u_activity", "px", "molality",
                            "u_molality"],
                     {"emf_mv": "E/mV", "activity": "a_i", "u_activity": "u(a_i)", "px": "pX",
                      "molality": "m_i/(mol/kg)", "u_molality": "u(m_i)"}, digits={"emf_mv": 6}))
    for d in docs:
        parts = ", ".join(f"{k} {v:.2g}" for k, v in (d["molality_budget"] or d["activity_budget"]).items())
        click.echo(f"line {d['line']} budget: {parts}")
        for flag in d["flags"]:
            click.echo(f"line {d['line']} flag: {flag}")
        for k, why in (d["conventions_refused"] or {}).items():
            click.echo(f"line {d['line']} {k} gave no value: {why}")
        for note in d["notes"]:
            click.echo(f"line {d['line']} note: {note}")
    _tail(doc)


@electrode.command("ph")
@click.argument("set_", metavar="SET|FILE")
@click.option("--format", "fmt", type=click.Choice(["table", "json"]), default="table",
              show_default=True, help="Output format.")
@click.pass_obj
def ph(app, set_: str, fmt: str) -> None:
    """Two- or multi-point pH calibration with certified buffers, and its samples' pH."""
    from saltbench.api import ph_calibrate
    from saltbench.cli.electrode_output import ph_doc

    doc = ph_doc(ph_calibrate(app.session(), set_))
    if fmt == "json":
        emit([], "json", json_obj=doc)
        return
    click.echo(f"{doc['set']}: {doc['calibration']} pH calibration at {doc['temperature_k']:g} K")
    click.echo(table(doc["buffers"], ["line", "label", "ph", "u_ph", "emf_mv", "residual_mv"],
                     {"ph": "pH (certificate)", "emf_mv": "E/mV", "residual_mv": "resid/mV"},
                     digits={"emf_mv": 6}))
    click.echo(f"  slope {doc['slope_mv_per_ph']:.3f} ± {doc['u_slope_mv_per_ph']:.3f} mV/pH = "
               f"{doc['slope_percent_nernstian']:.2f} ± {doc['u_slope_percent_nernstian']:.2f} % of "
               f"Nernstian ({doc['nernst_slope_mv_per_ph']:.3f} mV/pH, CODATA); offset E0 = "
               f"{doc['e0_mv']:.2f} ± {doc['u_e0_mv']:.2f} mV")
    if doc["samples"]:
        click.echo(table(doc["samples"], ["line", "label", "emf_mv", "ph", "u_ph"],
                         {"emf_mv": "E/mV", "ph": "pH", "u_ph": "u(pH)"}, digits={"emf_mv": 6}))
        for s in doc["samples"]:
            for flag in s["flags"]:
                click.echo(f"line {s['line']} flag: {flag}")
    click.echo(f"Convention: {doc['convention']}")
    for c in doc["cautions"]:
        click.echo(f"Caution: {c}")
