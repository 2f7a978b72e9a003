"""``saltbench compare --temperatures``: each model's region within tolerance in temperature and
molality, as tables (rows temperatures, columns models) and the recommendation's region."""

from __future__ import annotations

import click

from saltbench.cli.compare import echo_not_applicable, echo_per_ion
from saltbench.cli.output import echo_caution, emit
from saltbench.cli.output import fold as wrap

REGION_CSV_COLUMNS = ["electrolyte", "temperature_k", "temperature_c", "model", "column", "set", "state",
                      "valid_up_to", "data_top", "data_end", "beyond_authors_temperatures", "detail"]
CAPTIONS = {"published": "published set, judged as printed at each temperature",
            "refitted": "refitted at each temperature on its own",
            "across": "fitted once to all the data across every temperature, judged as a set"}
REGION_LEGEND = ("Cells: the highest molality (mol/kg) within tolerance at that temperature; *: the data end "
                 "before the model leaves the tolerance; ^: a published set judged beyond the temperatures its "
                 "authors fitted it to (an extrapolation, judged on request); not judged: a published set "
                 "outside the temperatures its authors fitted it to (--published-beyond-range judges it "
                 "there); no set: no published "
                 "set for the salt; none valid: outside tolerance even at the lowest molality.")
CAUTION = ("Validity regions hold only for these data, these temperatures and this tolerance. For dosing, "
           "safety limits or regulated measurements, verify under local codes and licensed practice.")


def echo_region(session, names: list[str], settings, fmt: str, jobs: int, summary: bool,
                every: bool = False) -> None:
    """The region tables (``every``: names are the whole store's, and those without data in the
    range are listed rather than an error)."""
    from saltbench.api import compare_over_temperature

    over = compare_over_temperature(session, names, settings, jobs=jobs, progress=True, skip_without_data=every)
    for p in over.reference.plugin_problems:  # the same registry served every temperature
        click.echo(f"Warning: {p}", err=True)
    if fmt == "json":
        per_t = [{**r, "temperature_k": t} for t, comp in over.comparisons.items() for r in comp.records()]
        emit([], fmt, json_obj={"region": over.records(), "recommendations": over.statements(),
                                "per_temperature": per_t, "without_data": over.without_data})
        echo_caution(fmt, CAUTION)
        return
    if fmt == "csv":
        emit(over.records(), fmt, REGION_CSV_COLUMNS)
        echo_caution(fmt, CAUTION)
        return
    low, high = settings.temperatures_k
    click.echo(wrap(f"Tolerance: |d ln gamma±| <= {settings.tol_ln_gamma:g}, |d phi| <= {settings.tol_phi:g}; "
                    f"judged at each data temperature from {low:g} to {high:g} K "
                    f"({low - 273.15:.2f} to {high - 273.15:.2f} °C). Molalities in mol/kg."))
    for name, region in over.regions.items():
        click.echo("")
        click.echo(f"== {name}: data at {len(region.temperatures_k)} temperature(s)")
        if not summary:
            for kind in region.kinds():
                columns, rows = region.table(kind)
                click.echo(f"   {CAPTIONS[str(kind)]}:")
                emit([dict(zip(columns, r)) for r in rows], "table", columns)
        echo_not_applicable(over.reference, name)
        echo_per_ion(over.reference, name)
        click.echo(wrap(f"-> {region.statement}", indent="   "))
    if over.without_data:
        click.echo("")
        click.echo(wrap(f"No data in the range for: {', '.join(over.without_data)}."))
    click.echo("")
    click.echo(wrap(REGION_LEGEND))
    click.echo(wrap(CAUTION))
