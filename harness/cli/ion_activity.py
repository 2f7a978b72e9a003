"""``saltbench ion-activity``: single-ion activity coefficients of a solution, under a convention."""

from __future__ import annotations

import click

from saltbench.cli.output import emit

FORMATS = ("table", "json")


def _b_ion(specs: tuple[str, ...]) -> dict[str, float]:
    from saltbench.errors import UserError

    out = {}
    for spec in specs:
        ion, sep, value = spec.partition("=")
        try:
            out[ion.strip()] = float(value)
        except ValueError:
            raise UserError(f"--b-ion: expected ION=VALUE in kg/mol, e.g. Na+=0.075, found {spec!r}") from None
        if not sep:
            raise UserError(f"--b-ion: expected ION=VALUE in kg/mol, found {spec!r}")
    return out


@click.command("ion-activity")
@click.option("--salt", "salts", multiple=True, required=True, metavar="SALT=MOLALITY",
              help="A salt and its molality in mol/kg (repeatable), e.g. --salt NaCl=0.1.")
@click.option("--convention", required=True,
              type=click.Choice(["macinnes", "bates-guggenheim", "debye-huckel",
                                 "extended-debye-huckel", "davies", "truesdell-jones", "sit", "model"],
                                case_sensitive=False),
              help="How the single-ion values are assigned; 'model': the single-ion form of the "
                   "mixture model given by --model, its parameters from the store.")
@click.option("--model", "model_id", metavar="ID",
              help="With --convention model: the model (e.g. pitzer, sit, bromley).")
@click.option("--sets", "sets", default="", metavar="IDS",
              help="With --convention model: parameter sets to take values from first.")
@click.option("--temperature", "temperature_k", type=float, default=298.15, show_default=True,
              help="Temperature in K.")
@click.option("--b-ion", "b_ion", multiple=True, metavar="ION=VALUE",
              help="Truesdell-Jones b_i in kg/mol (repeatable), e.g. --b-ion Na+=0.075 --b-ion Cl-=0.015, the "
                   "values Truesdell and Jones (1974) give for Na+ and Cl- (from memory of the paper; verify).")
@click.option("--missing", type=click.Choice(["error", "zero", "default"]), default="error", show_default=True,
              help="A missing SIT eps or Truesdell-Jones b_i: refuse, or take it as zero; with "
                   "--convention model, 'default' takes the model's defaults for pairs no set covers.")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="table", show_default=True,
              help="Output format.")
@click.pass_obj
def ion_activity(app, salts: tuple[str, ...], convention: str, model_id: str | None, sets: str,
                 temperature_k: float, b_ion: tuple[str, ...], missing: str, fmt: str) -> None:
    """Each ion's activity coefficient and activity in a solution of one or more salts.

    A single-ion activity rests on a non-thermodynamic convention; the mean quantity of a salt
    is the measurable one. The Bates-Guggenheim convention is refused above I = 0.1 mol/kg.
    """
    import numpy as np

    from saltbench.api import ion_activity as compute
    from saltbench.api import parse_salts
    from saltbench.errors import UserError
    from saltbench.measurements.conventions import CONVENTION_MAX_I, SINGLE_ION_CAVEAT, ion_molalities
    from saltbench.measurements.nernst import CALIBRATION_CAUTION

    convention = convention.lower()
    s = app.session()
    comp = parse_salts(s, salts)
    given = _b_ion(b_ion)
    present = list(ion_molalities(comp)[0])
    # A b_i for an ion not in the solution (often 'Na' for 'Na+') would be silently ignored.
    for ion in given:
        if ion not in present:
            raise UserError(f"--b-ion {ion}: no ion {ion!r} in this solution; its ions are "
                            f"{', '.join(present)}")
    out = compute(s, comp, convention, temperature_k, b_ion=given, missing=missing, model_id=model_id,
                  sets=[x for x in sets.split(",") if x])
    r = out.result

    def scalar(x) -> float:
        return float(np.asarray(x, dtype=float).reshape(-1)[0])

    ions = []
    # MacInnes works through K+ and Cl- of a reference KCl, which need not be in the solution: show
    # the solution's own ions. (Bates-Guggenheim's Cl- is the very value it assigns: it stays.)
    for name in (n for n in r.log10_gamma if n in present or convention != "macinnes"):
        m = r.molalities.get(name)
        g = scalar(r.gamma(name))
        ions.append({"ion": name, "charge": r.ions[name].charge if name in r.ions else None,
                     "molality": None if m is None else scalar(m),
                     "log10_gamma": scalar(r.log10_gamma[name]), "gamma": g,
                     "activity": None if m is None else scalar(m) * g})
    cautions = list(r.cautions) + [CALIBRATION_CAUTION]
    notes = list(out.notes)
    # Stored eps and b_i are 25 °C values; only the Debye-Hückel term follows the temperature.
    stored_off_temperature = (abs(temperature_k - 298.15) >= 0.01
                              and any("parameter set" in src for src in out.sources))
    if stored_off_temperature:
        notes.append(f"the stored parameters are 25 °C values used unchanged at {temperature_k:g} K; "
                     "only the Debye-Hückel term follows the temperature")
    i_now = scalar(r.ionic_strength)
    i_max = CONVENTION_MAX_I.get(convention)
    extrapolation = ([f"I = {i_now:.4g} mol/kg is beyond the {i_max:g} mol/kg to which the {convention} form "
                      "is commonly held to work"] if i_max is not None and i_now > i_max * (1 + 1e-9) else [])
    if stored_off_temperature:
        extrapolation.append(f"stored 25 °C parameters used at {temperature_k:g} K")
    extrapolation += [why for why in out.extrapolation if why not in extrapolation]
    doc = {"convention": r.convention, "temperature_k": r.temperature_k,
           "ionic_strength": i_now, "extrapolated": bool(extrapolation), "extrapolation": extrapolation,
           "solution": [{"salt": e.name, "molality": m} for e, m in comp],
           "ions": ions, "parameters_from": out.sources, "notes": notes,
           "caveat": SINGLE_ION_CAVEAT, "cautions": cautions}
    if fmt == "json":
        emit([], "json", json_obj=doc)
        return
    sol = " + ".join(f"{e.name} {m:g} mol/kg" for e, m in comp)
    click.echo(f"{sol}; I = {doc['ionic_strength']:.6g} mol/kg; T = {r.temperature_k:g} K; "
               f"convention: {r.convention}")
    click.echo(emit_table(ions))
    for why in extrapolation:
        click.echo(f"extrapolated: {why}")
    for src in out.sources:
        click.echo(f"parameters: {src}")
    for note in notes:
        click.echo(f"note: {note}")
    click.echo(f"Caveat: {SINGLE_ION_CAVEAT}")
    for c in cautions:
        click.echo(f"Caution: {c}")


def emit_table(ions: list[dict]) -> str:
    from saltbench.cli.output import table

    return table(ions, ["ion", "molality", "log10_gamma", "gamma", "activity"],
                 {"molality": "m/(mol/kg)", "log10_gamma": "log10 gamma_i", "gamma": "gamma_i",
                  "activity": "a_i"})
