"""How ``predict --solution`` writes what the models say about a described solution.

JSON and CSV: one record per model and composition (the issue's interface: ``ionic_strength``,
``osmotic``, ``water_activity``, ``ln_gamma_ions``, ``ln_gamma_pm``, the extrapolation marks and,
with ``--minerals``, ``saturation_index``). The table: the solution described once, then for each
composition one table of quantities (rows) by models (columns), so the spread between models
is read across a line.
"""

from __future__ import annotations

import math
from typing import Any

import click

from saltbench.cli.output import echo_caution, emit, fold, to_json

SINGLE_ION_NOTE = ("Single-ion activity coefficients rest on each model's own convention (stated per "
                   "model in the JSON output); only the mean values of neutral salts are measurable.")


def _num(x: Any) -> float | None:
    v = float(x)
    return v if math.isfinite(v) else None


def records(prediction) -> list[dict[str, Any]]:
    """One record per model that gave values and per composition, typed values only."""
    a = prediction.assessment
    comp = a.composition
    out: list[dict[str, Any]] = []
    for m in a.models:
        p = m.properties
        if p is None:
            continue
        for r in range(comp.n):
            rec: dict[str, Any] = {
                "model": m.model_id, "solution": prediction.record.name,
                "factor": float(prediction.factors[r]),
                "temperature_k": float(comp.temperature_k[r]),
                "ionic_strength": float(comp.ionic_strength[r]),
                "molality": {n: float(v) for n, v in zip(comp.names, comp.molality[r])},
                "osmotic": None if p.osmotic is None else _num(p.osmotic[r]),
                "water_activity": None if p.water_activity is None else _num(p.water_activity[r]),
                "ln_gamma_ions": {n: _num(v[r]) for n, v in p.ln_gamma.items()},
                "ln_gamma_pm": {n: _num(v[r]) for n, v in p.ln_gamma_pm.items()},
                "single_ion_convention": p.single_ion_convention,
                "extrapolated": bool(m.marks[r]) if m.marks else False,
                "extrapolation": list(m.marks[r]) if m.marks else [],
                "parameter_sets": list(m.sets),
                "defaulted": list(m.defaulted),
                "mixing_taken_as_zero": list(m.zero_mixing),
                "not_given": list(p.not_given),
            }
            if m.saturation is not None:
                rec["saturation_index"] = {k: _num(v[r]) for k, v in m.saturation.by_label().items()}
            out.append(rec)
    return out


def _described_salts(prediction) -> list[str]:
    """The salts shown in the table: those the description names, else the salts of its two
    largest cations and two largest anions by charge (the JSON output has every pair's)."""
    from saltbench.chemistry.electrolyte import neutral_salt

    named = [s.name for s in prediction.record.salts]
    if named:
        return named
    rec = prediction.record
    eq = sorted(zip(rec.molality * abs(rec.charges), rec.ions), key=lambda t: -t[0])
    cations = [ion for _, ion in eq if ion.charge > 0][:2]
    anions = [ion for _, ion in eq if ion.charge < 0][:2]
    return [neutral_salt(c, a).name for c in cations for a in anions]


def _table_rows(prediction, r: int, ok: list) -> list[dict[str, Any]]:
    comp = prediction.assessment.composition
    rows: list[dict[str, Any]] = []

    def line(label: str, pick) -> None:
        cells = {m.model_id: pick(m.properties) for m in ok}
        if any(v is not None for v in cells.values()):
            rows.append({"quantity": label, **cells})

    for ion in comp.names:
        line(f"gamma({ion})", lambda p, ion=ion: None if ion not in p.ln_gamma
             else math.exp(p.ln_gamma[ion][r]))
    for salt in _described_salts(prediction):
        line(f"gamma±({salt})", lambda p, salt=salt: None if salt not in p.ln_gamma_pm
             else math.exp(p.ln_gamma_pm[salt][r]))
    line("phi", lambda p: None if p.osmotic is None else float(p.osmotic[r]))
    line("a_w", lambda p: None if p.water_activity is None else float(p.water_activity[r]))
    minerals = list(dict.fromkeys(label for m in ok if m.saturation is not None
                                  for label in m.saturation.by_label()))
    by_model = {m.model_id: m for m in ok}
    for label in minerals:
        cells = {}
        for mid, m in by_model.items():
            sat = m.saturation.by_label() if m.saturation is not None else {}
            cells[mid] = float(sat[label][r]) if label in sat else None
        rows.append({"quantity": f"SI {label}", **cells})
    return rows


def echo_table(prediction) -> None:
    rec = prediction.record
    a = prediction.assessment
    comp = a.composition
    cb = rec.charge_balance
    density = (f", density {rec.density_kg_per_l:g} kg/L ({rec.density_origin})"
               if rec.density_kg_per_l is not None else "")
    click.echo(fold(f"{rec.name}: {len(rec.species)} species in {rec.unit}{density}, "
                    f"T = {rec.temperature_k:g} K, charge imbalance {float(cb.percent[0]):+.2f} %", "  "))
    if rec.adjustment is not None:
        adj = rec.adjustment
        click.echo(f"  charge balance closed with {adj.amount:.6g} {adj.unit} {adj.ion} "
                   f"({adj.molality:.4g} mol/kg; it stood at {adj.percent_before:+.2f} %)")
    ok = [m for m in a.models if m.ok]
    for r in range(comp.n):
        click.echo("")
        click.echo(f"concentration factor {prediction.factors[r]:.4g}: I = {comp.ionic_strength[r]:.4g} mol/kg")
        emit(_table_rows(prediction, r, ok), "table", ["quantity"] + [m.model_id for m in ok],
             digits={m.model_id: 5 for m in ok})
        marked = [(m.model_id, m.marks[r]) for m in ok if m.marks and m.marks[r]]
        for mid, why in marked:
            click.echo(fold("; ".join(why), "    ", f"  {mid} extrapolates: "))
    notes(prediction, err=False)


def notes(prediction, *, err: bool) -> None:
    """What stands behind the numbers: sets used, values taken as zero or default, models left
    out, cautions. On stderr for JSON and CSV (the parsed output keeps its shape)."""
    a = prediction.assessment
    say = lambda text, first="": click.echo(fold(text, "    ", first), err=err)  # noqa: E731
    click.echo("", err=err)
    for m in a.models:
        if not m.ok:
            say(f"{m.model_id}: no values ({m.reason})", "  left out ")
            continue
        if m.sets:
            say(f"{m.model_id}: parameters from {', '.join(m.sets)}", "  ")
        if m.defaulted:
            say(f"{m.model_id}: no set gives {len(m.defaulted)} parameters ({', '.join(m.defaulted[:4])}"
                f"{' ...' if len(m.defaulted) > 4 else ''}); the model's defaults were used as asked "
                "(--missing default): these values are guesses for those pairs", "  Warning: ")
        if m.zero_mixing:
            say(f"{m.model_id}: {len(m.zero_mixing)} mixing terms no set gives taken as zero "
                f"({', '.join(m.zero_mixing[:4])}{' ...' if len(m.zero_mixing) > 4 else ''})", "  Note: ")
    if prediction.from_memory:
        say(f"sets typed from memory: {', '.join(prediction.from_memory)}; verify against the originals "
            "before use in a regulated method", "  Note: ")
    if any(m.ok and m.properties.ln_gamma for m in a.models):
        say(SINGLE_ION_NOTE, "  Note: ")
    for caution in prediction.record.cautions:
        say(caution, "  Caution: ")
    sat = next((m.saturation for m in a.models if m.saturation is not None), None)
    if sat is not None:
        for caution in sat.cautions:
            say(caution, "  Caution: ")


def emit_solution(prediction, fmt: str) -> None:
    if fmt == "table":
        echo_table(prediction)
        echo_caution(fmt)
        return
    recs = records(prediction)
    if fmt == "json":
        click.echo(to_json(recs))
    else:
        flat = [{k: v for k, v in r.items() if not isinstance(v, dict | list)}
                | {f"ln_gamma({k})": v for k, v in r["ln_gamma_ions"].items()}
                | {f"ln_gamma_pm({k})": v for k, v in r["ln_gamma_pm"].items()}
                | {f"SI({k})": v for k, v in r.get("saturation_index", {}).items()}
                | {"extrapolation": "; ".join(r["extrapolation"])} for r in recs]
        cols = list(dict.fromkeys(k for r in flat for k in r))
        emit(flat, "csv", cols)
    notes(prediction, err=True)
    echo_caution(fmt)
