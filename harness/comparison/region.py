"""Validity over temperature and molality (issue 21, item 5): each model's region within
tolerance, assembled from the one-temperature comparisons at each data temperature.

A region is one column of cells, one cell per data temperature: the highest molality within
tolerance there (as the one-temperature comparison judges it), or why there is none. Three kinds
of column sit side by side:

- ``published``: the published set judged as printed, with its values at each temperature
  through its temperature form; only at temperatures its authors fitted it over (its form's
  range, or its one temperature) unless the user asks otherwise; elsewhere the cell is
  "not judged", never a silent extrapolation;
- ``refitted``: the model refitted at each temperature on its own (today's comparison per
  temperature);
- ``across``: the model fitted once to the data of every temperature (coefficients of a
  temperature form), judged at each temperature by the same rule as a published set. The fit is
  not made here: any :class:`AcrossTemperatureFit` supplies its predictions (the seam for the
  fitting across temperatures, issue 21 item 4).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from enum import StrEnum
from typing import TYPE_CHECKING, Any, Protocol

import numpy as np

from saltbench.fitting.data import FitData

if TYPE_CHECKING:
    from saltbench.chemistry.electrolyte import Electrolyte
    from saltbench.comparison.ranking import Recommendation
    from saltbench.comparison.runner import Comparison
    from saltbench.comparison.settings import CompareSettings

#: data temperatures closer than this are one temperature (as fitting.selection.select takes them)
SAME_DATA_TEMPERATURE_K = 0.05


class CellState(StrEnum):
    WITHIN = "within"  # within tolerance up to ``reach``
    NONE_VALID = "none-valid"  # outside tolerance even at the lowest molality
    TOO_FEW_POINTS = "too-few-points"  # too few points at this temperature to judge a refit
    FAILED = "failed"  # the model raised, ran out of time, or its fit is flagged: ``detail``
    NOT_JUDGED = "not-judged"  # a published set outside the temperatures its authors fitted
    NO_SET = "no-set"  # no published set of this model for this salt


class ColumnKind(StrEnum):
    PUBLISHED = "published"
    REFITTED = "refitted"  # refitted at each temperature on its own
    ACROSS = "across"  # fitted once across every temperature (a temperature form's coefficients)


def celsius(t_k: float) -> str:
    return f"{round(t_k - 273.15, 2):g} °C"


@dataclass(frozen=True)
class RegionCell:
    """One model at one data temperature."""

    temperature_k: float
    state: CellState
    reach: float | None = None  # mol/kg, with WITHIN
    data_top: float | None = None  # mol/kg, the highest data molality at this temperature
    data_end: bool = False  # the data end before the model leaves the tolerance
    set_id: str | None = None  # the published set (PUBLISHED)
    set_range_k: tuple[float, float] | None = None  # where its authors fitted it (NOT_JUDGED)
    detail: str | None = None  # the error or flags behind FAILED
    #: a published set judged outside the temperatures its authors fitted it to (on request)
    beyond: bool = False

    @property
    def judged(self) -> bool:
        return self.state not in (CellState.NOT_JUDGED, CellState.NO_SET)

    @property
    def text(self) -> str:
        """The table's cell: the molality (``*`` where the data end first), or the state."""
        if self.state is CellState.WITHIN:
            return f"{self.reach:g}" + ("*" if self.data_end else "") + ("^" if self.beyond else "")
        return {CellState.NONE_VALID: "none valid", CellState.TOO_FEW_POINTS: "too few points",
                CellState.FAILED: "failed", CellState.NOT_JUDGED: "not judged",
                CellState.NO_SET: "no set"}[self.state]


@dataclass(frozen=True)
class ModelRegion:
    """One column of the region table: a model, judged one way, at each data temperature."""

    model: str
    model_name: str
    kind: ColumnKind
    cells: tuple[RegionCell, ...]

    @property
    def within(self) -> list[RegionCell]:
        return [c for c in self.cells if c.state is CellState.WITHIN]

    @property
    def set_ids(self) -> list[str]:
        return list(dict.fromkeys(c.set_id for c in self.cells if c.set_id))

    @property
    def lowest_reach(self) -> float | None:
        """The molality the model holds to at every temperature where it holds at all."""
        return min((c.reach for c in self.within if c.reach is not None), default=None)

    def reach_text(self) -> str:
        """'6 mol/kg' where the reach is one at every temperature within tolerance, else the
        lowest and each temperature's: 'at least 1 mol/kg (1 at 0 °C, 2 at 25 °C)'."""
        within = self.within
        reaches = [c.reach for c in within if c.reach is not None]
        lo, hi = min(reaches), max(reaches)
        if lo == hi:
            return f"{lo:g} mol/kg"
        each = ", ".join(f"{c.reach:g} at {celsius(c.temperature_k)}" for c in within)
        return f"at least {lo:g} mol/kg ({each})"

    def record(self, cell: RegionCell, electrolyte: str) -> dict[str, Any]:
        """The flat JSON/CSV record of one cell (molality in mol/kg, temperature in K)."""
        return {"electrolyte": electrolyte, "temperature_k": cell.temperature_k,
                "temperature_c": round(cell.temperature_k - 273.15, 2), "model": self.model,
                "column": str(self.kind), "set": cell.set_id, "state": str(cell.state),
                "valid_up_to": cell.reach, "data_top": cell.data_top, "data_end": cell.data_end,
                "set_range_k": list(cell.set_range_k) if cell.set_range_k else None,
                "beyond_authors_temperatures": cell.beyond, "detail": cell.detail}


def temperatures_text(temps: Sequence[float], all_temps: Sequence[float]) -> str:
    """'over 0-50 °C' when ``temps`` are every data temperature from the first to the last of
    them, '0 °C only' for one, else the list."""
    temps = sorted(temps)
    if len(temps) == 1:
        return f"at {celsius(temps[0])} only"
    inner = [t for t in all_temps if temps[0] - 1e-9 <= t <= temps[-1] + 1e-9]
    if len(inner) == len(temps):
        return (f"over {round(temps[0] - 273.15, 2):g}-{round(temps[-1] - 273.15, 2):g} °C "
                f"({len(temps)} data temperatures)")
    return "at " + ", ".join(celsius(t) for t in temps)


@dataclass
class ElectrolyteRegion:
    """Every model's region for one electrolyte, and the refitted recommendation at each of its
    data temperatures (from that temperature's comparison)."""

    electrolyte: str
    temperatures_k: tuple[float, ...]
    columns: list[ModelRegion] = field(default_factory=list)
    #: temperature -> that temperature's recommendation (refitted models)
    recommended: dict[float, Recommendation] = field(default_factory=dict)
    model_names: dict[str, str] = field(default_factory=dict)

    def column(self, model: str, kind: ColumnKind) -> ModelRegion | None:
        return next((c for c in self.columns if c.model == model and c.kind is kind), None)

    def best(self, kind: ColumnKind) -> ModelRegion | None:
        """The column of this kind within tolerance at the most temperatures, then to the highest
        lowest reach, then by model id."""
        cands = [c for c in self.columns if c.kind is kind and c.within]
        if not cands:
            return None
        return min(cands, key=lambda c: (-len(c.within), -(c.lowest_reach or 0.0), c.model))

    @property
    def statement(self) -> str:
        """For which region the recommendation holds, in words."""
        parts = []
        pub = self.best(ColumnKind.PUBLISHED)
        if pub is not None:
            sets = ", ".join(pub.set_ids)
            where = temperatures_text([c.temperature_k for c in pub.within], self.temperatures_k)
            text = (f"{pub.model_name} [{pub.model}] with the published set {sets} within tolerance up to "
                    f"{pub.reach_text()} {where}")
            skipped = [c for c in pub.cells if c.state is CellState.NOT_JUDGED]
            if skipped and skipped[0].set_range_k:
                lo, hi = skipped[0].set_range_k
                text += (f" (not judged at {', '.join(celsius(c.temperature_k) for c in skipped)}: outside "
                         f"{round(lo - 273.15, 2):g}-{round(hi - 273.15, 2):g} °C, where its authors fitted it)")
            elif skipped:
                text += (f" (not judged at {', '.join(celsius(c.temperature_k) for c in skipped)}: its values "
                         "belong to one temperature)")
            beyond = [c for c in pub.cells if c.beyond]
            if beyond:
                text += (f" (at {', '.join(celsius(c.temperature_k) for c in beyond)} judged beyond the "
                         "temperatures its authors fitted it to, as asked: an extrapolation)")
            parts.append(text)
        else:
            cells = [c for col in self.columns if col.kind is ColumnKind.PUBLISHED for c in col.cells]
            if any(c.judged for c in cells):
                parts.append("no published set is within tolerance at any judged temperature")
            elif any(c.state is CellState.NOT_JUDGED for c in cells):
                parts.append("no published set could be judged: every one lies outside the temperatures its "
                             "authors fitted it to")
            else:
                parts.append(f"no published set for {self.electrolyte}")
        parts.append("refitted at each temperature: " + self._refitted_text())
        across = self.best(ColumnKind.ACROSS)
        if across is not None:
            parts.append(f"fitted across temperatures, {across.model_name} [{across.model}] within tolerance up to "
                         f"{across.reach_text()} "
                         f"{temperatures_text([c.temperature_k for c in across.within], self.temperatures_k)}")
        return "; ".join(parts) + "."

    def _refitted_text(self) -> str:
        from saltbench.comparison.ranking import RecommendationKind

        # consecutive temperatures with the same outcome read as one stretch
        runs: list[tuple[tuple[str | None, RecommendationKind], list[float]]] = []
        for t in self.temperatures_k:
            key = (self.recommended[t].model, self.recommended[t].kind)
            if runs and runs[-1][0] == key:
                runs[-1][1].append(t)
            else:
                runs.append((key, [t]))
        out = []
        for (model, kind), temps in runs:
            targets = [self.recommended[t].target_molality for t in temps]
            lo, hi = min(targets), max(targets)
            reach = f"{lo:g} mol/kg" if lo == hi else f"{lo:g} to {hi:g} mol/kg"
            where = temperatures_text(temps, self.temperatures_k)
            if kind is RecommendationKind.TOO_FEW_POINTS:
                out.append(f"too few points to judge {where}")
            elif model is None:
                far = [(t, self.recommended[t]) for t in temps if self.recommended[t].furthest_model]
                furthest = "".join(f"; furthest at {celsius(t)}: {r.furthest_model} to {r.furthest_molality:g} "
                                   "mol/kg" for t, r in far)
                out.append(f"no model holds to the end of the data ({reach}) {where}{furthest}")
            else:
                out.append(f"{self.model_names.get(model, model)} [{model}] up to {reach} {where}")
        return "; ".join(out)

    def records(self) -> list[dict[str, Any]]:
        return [col.record(cell, self.electrolyte) for col in self.columns for cell in col.cells]

    def kinds(self) -> list[ColumnKind]:
        return [k for k in ColumnKind if any(c.kind is k for c in self.columns)]

    def table(self, kind: ColumnKind) -> tuple[list[str], list[list[str]]]:
        """Rows temperatures, columns models: each cell's text (:attr:`RegionCell.text`)."""
        cols = [c for c in self.columns if c.kind is kind]
        rows = []
        for i, t in enumerate(self.temperatures_k):
            rows.append([f"{round(t - 273.15, 2):g}", f"{t:g}"] + [c.cells[i].text for c in cols])
        return ["T (°C)", "T (K)"] + [c.model for c in cols], rows


@dataclass(frozen=True)
class WithheldSet:
    """A published set not judged at a temperature outside the ones its authors fitted it to."""

    set_id: str
    temperature_k: float
    temperature_range_k: tuple[float, float] | None


@dataclass
class TemperatureComparison:
    """A comparison over a range of temperatures: the one-temperature comparison at each data
    temperature in the range, and each electrolyte's regions assembled from them."""

    settings: CompareSettings
    comparisons: dict[float, Comparison]  # by data temperature (K)
    regions: dict[str, ElectrolyteRegion]
    reference_k: float  # the data temperature the report details (nearest settings.temperature_k)
    without_data: list[str] = field(default_factory=list)  # electrolytes left out: no data in the range

    @property
    def reference(self) -> Comparison:
        return self.comparisons[self.reference_k]

    def records(self) -> list[dict[str, Any]]:
        return [r for reg in self.regions.values() for r in reg.records()]

    def statements(self) -> list[dict[str, str]]:
        return [{"electrolyte": n, "statement": r.statement} for n, r in self.regions.items()]


def data_temperatures(rows: Sequence[Mapping[str, Any]], low: float, high: float) -> list[float]:
    """The distinct temperatures (K) of the store's point rows within [low, high]: rows closer
    than :data:`SAME_DATA_TEMPERATURE_K` are one temperature (the first of them, rounded to 0.01 K)."""
    temps = sorted({round(float(r["temperature_k"]), 2) for r in rows})
    out: list[float] = []
    for t in temps:
        if out and t - out[-1] < SAME_DATA_TEMPERATURE_K:
            continue
        out.append(t)
    return [t for t in out if low - SAME_DATA_TEMPERATURE_K < t < high + SAME_DATA_TEMPERATURE_K]


def nearest(temps: Sequence[float], target: float) -> float:
    return min(temps, key=lambda t: (abs(t - target), t))


def _refit_cell(t: float, o, top: float) -> RegionCell:
    from saltbench.comparison.outcome import VerdictKind

    kind = o.verdict.kind if o.verdict else None
    if kind is VerdictKind.FAILED or kind is VerdictKind.NOT_RANKED:
        return RegionCell(t, CellState.FAILED, data_top=top, detail=o.verdict.text)
    if kind is VerdictKind.TOO_FEW_POINTS:
        return RegionCell(t, CellState.TOO_FEW_POINTS, data_top=top)
    v = o.valid_up_to("refit")
    if v is None:
        return RegionCell(t, CellState.NONE_VALID, data_top=top)
    return RegionCell(t, CellState.WITHIN, reach=v, data_top=top,
                      data_end=o.valid_refit is not None and o.valid_refit.limited_by == "data")


def _published_cell(t: float, o, top: float, withheld: WithheldSet | None) -> RegionCell:
    if withheld is not None:
        rng = withheld.temperature_range_k or (withheld.temperature_k, withheld.temperature_k)
        return RegionCell(t, CellState.NOT_JUDGED, data_top=top, set_id=withheld.set_id, set_range_k=rng)
    if o.published_set is None:
        return RegionCell(t, CellState.NO_SET, data_top=top)
    if o.error:
        return RegionCell(t, CellState.FAILED, data_top=top, set_id=o.published_set, detail=o.error)
    from saltbench.fitting.flags import FlagKind

    vr = o.valid_published
    v = o.valid_up_to("published")
    beyond = any(f.kind in (FlagKind.PUBLISHED_TEMPERATURE, FlagKind.PUBLISHED_TEMPERATURE_RANGE) for f in o.flags)
    if vr is None or v is None:
        return RegionCell(t, CellState.NONE_VALID, data_top=top, set_id=o.published_set, beyond=beyond)
    return RegionCell(t, CellState.WITHIN, reach=v, data_top=top, data_end=vr.limited_by == "data",
                      set_id=o.published_set, beyond=beyond)


def assemble(electrolyte: str, comparisons: Mapping[float, Comparison]) -> ElectrolyteRegion:
    """The published and refitted columns of ``electrolyte`` from the comparisons at each
    temperature that has its data (each with its ``withheld`` sets)."""
    temps = tuple(sorted(t for t, c in comparisons.items() if electrolyte in c.outcomes))
    region = ElectrolyteRegion(electrolyte, temps)
    order: list[str] = []
    cells: dict[tuple[str, ColumnKind], list[RegionCell]] = {}
    for t in temps:
        comp = comparisons[t]
        top = float(comp.data[electrolyte].molality.max())
        rec = comp.recommendations[electrolyte]
        region.recommended[t] = rec
        withheld = comp.withheld.get(electrolyte, {})
        for o in comp.outcomes[electrolyte]:
            if o.model not in order:
                order.append(o.model)
            region.model_names[o.model] = o.model_name
            cells.setdefault((o.model, ColumnKind.PUBLISHED), []).append(
                _published_cell(t, o, top, withheld.get(o.model)))
            cells.setdefault((o.model, ColumnKind.REFITTED), []).append(_refit_cell(t, o, top))
    for kind in (ColumnKind.PUBLISHED, ColumnKind.REFITTED):
        for mid in order:
            region.columns.append(ModelRegion(mid, region.model_names[mid], kind, tuple(cells[(mid, kind)])))
    return region


# -- the seam for a model fitted across every temperature at once ------------------------------

class AcrossTemperatureFit(Protocol):
    """Fit ``model`` once to ``data`` (every point of every temperature; ``temperature_k`` holds
    each point's temperature in K, aligned with ``data``), with the coefficients of a temperature
    form as its parameters, and return the fitted model's value at each point on the basis of
    ``data.value`` (ln gamma± where ``data.kind`` is "ln_gamma", phi where it is "osmotic").
    Raise :class:`saltbench.errors.SaltbenchError` where the fit cannot be made."""

    def __call__(self, model: Any, electrolyte: Electrolyte, data: FitData,
                 temperature_k: np.ndarray) -> np.ndarray: ...


def pooled(data_by_temperature: Mapping[float, FitData]) -> tuple[FitData, np.ndarray]:
    """The data of every temperature as one FitData, and each point's temperature (K)."""
    items = sorted(data_by_temperature.items())
    cat = {name: np.concatenate([getattr(d, name) for _, d in items])
           for name in ("molality", "value", "uncertainty", "kind", "dataset")}
    temps = np.concatenate([np.full(d.molality.size, t) for t, d in items])
    return FitData(**cat, electrolyte=items[0][1].electrolyte), temps


def judge_cells(prediction: np.ndarray, data: FitData, temperature_k: np.ndarray, temps: Sequence[float],
                tolerances: Mapping[str, float]) -> tuple[RegionCell, ...]:
    """At each temperature, the highest data molality below the first point out of tolerance
    (the rule a published set is judged by, fitting.validity), from predictions at every point."""
    resid = data.value - np.asarray(prediction, dtype=float)
    tol = np.array([tolerances[str(k)] for k in data.kind], dtype=float)
    ok = np.isfinite(resid) & (np.abs(resid) <= tol)
    out = []
    for t in temps:
        at = np.abs(temperature_k - t) < SAME_DATA_TEMPERATURE_K
        m, good = data.molality[at], ok[at]
        top = float(m.max())
        first_fail = float(m[~good].min()) if not good.all() else None
        below = m[m < first_fail] if first_fail is not None else m
        if below.size == 0:
            out.append(RegionCell(t, CellState.NONE_VALID, data_top=top))
        else:
            out.append(RegionCell(t, CellState.WITHIN, reach=float(below.max()), data_top=top,
                                  data_end=first_fail is None))
    return tuple(out)


def judge_across(fit: AcrossTemperatureFit, model: Any, electrolyte: Electrolyte,
                 data_by_temperature: Mapping[float, FitData], settings: CompareSettings) -> ModelRegion:
    """The ``across`` column of ``model``: fitted once by ``fit`` to every temperature's data,
    judged at each temperature. An error of the fit makes every cell FAILED."""
    from saltbench.errors import SaltbenchError

    temps = sorted(data_by_temperature)
    data, t_point = pooled(data_by_temperature)
    try:
        pred = np.asarray(fit(model, electrolyte, data, t_point), dtype=float)
        if pred.shape != data.value.shape:
            raise SaltbenchError(f"the fit across temperatures gave {pred.size} values for {data.value.size} points")
        cells = judge_cells(pred, data, t_point, temps, settings.tolerances)
    except SaltbenchError as exc:
        cells = tuple(RegionCell(t, CellState.FAILED, data_top=float(data_by_temperature[t].molality.max()),
                                 detail=str(exc)) for t in temps)
    return ModelRegion(model.id, model.name, ColumnKind.ACROSS, cells)
