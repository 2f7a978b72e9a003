"""The report's section on validity over temperature and molality (``report --temperatures``):
the recommendation's region per electrolyte, a table per way of judging (rows temperatures,
columns models), the region figure, and the region's CSV table."""

from __future__ import annotations

from collections.abc import Mapping

from saltbench.comparison.region import CellState, ColumnKind, TemperatureComparison, celsius
from saltbench.report.document import Bullets, Figure, Paragraph, Section, Table
from saltbench.report.figures import FigureImage
from saltbench.report.tables import to_csv

REGION_COLUMNS = ["electrolyte", "temperature_k", "temperature_c", "model", "column", "set", "state",
                  "valid_up_to", "data_top", "data_end", "set_range_k", "beyond_authors_temperatures", "detail"]
CAPTIONS = {ColumnKind.PUBLISHED: "with the published set, judged as printed at each temperature",
            ColumnKind.REFITTED: "refitted at each temperature on its own",
            ColumnKind.ACROSS: "fitted once to all the data across every temperature, judged as a set"}
REGION_CSV = "region.csv"


def region_section(over: TemperatureComparison, figures: Mapping[str, FigureImage], key: str,
                   heading: str) -> Section:
    """The section ``heading``: how the region was judged, then per electrolyte its statement,
    tables and figure (``figures``: electrolyte -> FigureImage)."""
    s = over.settings
    low, high = s.temperatures_k or (s.temperature_k, s.temperature_k)
    beyond = ("Published sets were judged at every data temperature, also outside the temperatures their "
              "authors fitted them to (as asked); cells there are extrapolations along the set's temperature "
              "form, or its values of one temperature used unchanged." if s.published_beyond_range else
              "A published set is judged only at temperatures its authors fitted it to (the range of its "
              "temperature form, or its one temperature); elsewhere its cell says 'not judged' rather than "
              "carrying the set beyond its ground.")
    absent = [n for n in over.regions if n not in over.reference.outcomes]
    if absent:
        beyond += (f" {', '.join(absent)} {'has' if len(absent) == 1 else 'have'} no data at "
                   f"{celsius(over.reference_k)} and appear{'s' if len(absent) == 1 else ''} only here.")
    sec = Section(key, heading, [
        Paragraph(f"Each model was judged as in a one-temperature comparison at every data temperature from "
                  f"{low:g} to {high:g} K ({celsius(low)} to {celsius(high)}), with the same tolerance and "
                  f"options; its region within tolerance is the molality it holds to at each of them. The "
                  f"recommendation, verdicts and sections that follow detail the comparison at "
                  f"{over.reference_k:g} K ({celsius(over.reference_k)}) only. {beyond}"),
        Paragraph("Cells: the highest molality (mol/kg) within tolerance at that temperature; *: the data end "
                  "before the model leaves the tolerance; ^: a published set judged beyond the temperatures its "
                  "authors fitted it to (on request: an extrapolation); not judged: outside the temperatures "
                  "the set's authors fitted it to; no set: no published set for the salt; none valid: outside "
                  "tolerance even at the lowest molality; failed: the model failed or its fit was flagged at "
                  "that temperature."),
    ])
    for i, (name, region) in enumerate(over.regions.items(), start=1):
        blocks: list = [Bullets([region.statement])]
        for kind in region.kinds():
            columns, rows = region.table(kind)
            blocks.append(Table(f"region-{i}-{kind}", f"{name}: molality within tolerance {CAPTIONS[kind]}",
                                columns, rows, [True] * len(columns)))
        fig = figures.get(name)
        if fig is not None:
            blocks.append(Figure(fig.key, fig.caption, fig.alt, fig.png))
        failed = [f"{col.model} at {celsius(c.temperature_k)} ({col.kind}): {c.detail}"
                  for col in region.columns for c in col.cells if c.state is CellState.FAILED and c.detail]
        if failed:
            blocks.append(Bullets(failed))
        sec.children.append(Section(f"{key}-{i}", f"{heading.split(' ', 1)[0]}.{i} {name}", blocks))
    return sec


def region_tables(over: TemperatureComparison) -> dict[str, str]:
    """``{file name: CSV text}``: one row per electrolyte, temperature, model and way of judging."""
    rows = [{**r, "set_range_k": "-".join(f"{t:g}" for t in r["set_range_k"]) if r["set_range_k"] else None}
            for r in over.records()]
    return {REGION_CSV: to_csv(rows, REGION_COLUMNS)}
