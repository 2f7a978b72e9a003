"""Choosing the stored data a fit sees: datasets, properties, molality range, temperature."""

from __future__ import annotations

import re
from collections import Counter
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from saltbench.errors import UserError
from saltbench.fitting.data import FitData

PROPERTY_ALIASES = {"gamma": "gamma_pm", "gamma_pm": "gamma_pm", "activity": "gamma_pm",
                    "osmotic": "osmotic", "phi": "osmotic", "water_activity": "water_activity",
                    "aw": "water_activity"}
#: the thermal properties, which only a fit across temperatures takes
THERMAL_ALIASES = {"l_phi": "L_phi", "enthalpy": "L_phi", "cp_phi": "Cp_phi", "heat_capacity": "Cp_phi"}
#: what a fit across temperatures takes by default: every property it can fit
ALL_PROPERTIES = ["gamma_pm", "osmotic", "water_activity", "L_phi", "Cp_phi"]


if TYPE_CHECKING:
    import pandas as pd

Row = Mapping[str, Any]


@dataclass
class Selection:
    data: FitData
    datasets: list[dict]  # key, source, property, content_hash, n_points, from_memory, origin
    rows: list[Row]  # the points chosen, sorted by molality and dataset

    @property
    def frame(self) -> pd.DataFrame:
        """The points chosen, as a DataFrame (pandas is imported here, on demand)."""
        import pandas as pd

        return pd.DataFrame([dict(r) for r in self.rows])


@dataclass(frozen=True)
class TemperatureChoice:
    """Which temperatures a fit takes: every point in ``low_k``..``high_k`` (inclusive, 0.05 K
    of slack at each end), or every point within 0.05 K of one of ``points_k``."""

    low_k: float | None = None
    high_k: float | None = None
    points_k: tuple[float, ...] = ()

    def __post_init__(self) -> None:
        if self.points_k:
            if self.low_k is not None or self.high_k is not None:
                raise UserError("give a temperature range or a list of temperatures, not both")
            if any(not t > 0 for t in self.points_k):
                raise UserError("temperatures must be positive (K)")
        elif self.low_k is None or self.high_k is None or not 0 < self.low_k <= self.high_k:
            raise UserError("a temperature range needs 0 < LOW <= HIGH (K)")

    def holds(self, temperature_k: float) -> bool:
        if self.points_k:
            return any(abs(temperature_k - t) < 0.05 for t in self.points_k)
        assert self.low_k is not None and self.high_k is not None
        return self.low_k - 0.05 < temperature_k < self.high_k + 0.05

    def label(self) -> str:
        if self.points_k:
            return ", ".join(f"{t:g}" for t in self.points_k) + " K"
        return f"{self.low_k:g}-{self.high_k:g} K"


def parse_temperatures(text: str, option: str = "--temperatures") -> TemperatureChoice:
    """``--temperatures`` text: ``LO:HI`` (a range) or ``T1,T2,...`` (a set). Bare numbers are
    kelvin; a unit after a value (``15C``, ``15 °C``, ``288.15 K``) or after the last one only
    (``0:50 C``, ``15,25,40 C``: every bare value takes it) says otherwise. Temperatures must lie
    in liquid water's 200-650 K (a kelvin value below 200 is taken for a Celsius one given as K)."""
    from saltbench.curation.units import parse_temperature

    text = (text or "").strip()
    if not text:
        raise UserError(f"{option}: give LO:HI or T1,T2,... (K, or with a unit: '0:50 C', '15C,40C')")
    ranged = ":" in text
    words = [w.strip() for w in (text.split(":") if ranged else text.split(","))]
    if (ranged and len(words) != 2) or not all(words):
        raise UserError(f"{option}: expected LO:HI or T1,T2,..., e.g. '273.15:323.15' (K) or '0:50 C', "
                        f"found {text!r}")
    unit = re.search(r"(°?\s*[CcKk])$", words[-1])
    bare = re.compile(r"^-?\d+(\.\d+)?$")
    shared = unit.group(1) if unit else "K"

    def one(word: str) -> float:
        try:
            return parse_temperature(f"{word} {shared}" if bare.match(word) else word)
        except ValueError as exc:
            raise UserError(f"{option}: {exc}") from None

    values = [one(w) for w in reversed(words)][::-1]  # the last first: it carries the shared unit
    if any(not 200.0 <= t <= 650.0 for t in values):
        raise UserError(f"{option}: {text!r} lies outside liquid water's 200-650 K")
    if ranged:
        if not values[0] < values[1]:
            raise UserError(f"{option}: {text!r} is not a range (LO must be below HI)")
        return TemperatureChoice(values[0], values[1])
    return TemperatureChoice(points_k=tuple(values))


def parse_on(text: str | None, *, thermal: bool = False) -> list[str]:
    """``--on`` text -> curated property names; ``thermal`` (a fit across temperatures) also
    takes ``L_phi`` and ``Cp_phi`` and takes every property by default."""
    if not text:
        return list(ALL_PROPERTIES) if thermal else ["gamma_pm", "osmotic", "water_activity"]
    aliases = {**PROPERTY_ALIASES, **THERMAL_ALIASES} if thermal else PROPERTY_ALIASES
    out = []
    for word in (w.strip().lower() for w in text.split(",") if w.strip()):
        if word not in aliases:
            raise UserError(f"--on: unknown property {word!r} (use gamma, osmotic or water_activity"
                            + (", L_phi or Cp_phi)" if thermal else ")"))
        out.append(aliases[word])
    return out


def select(points: Sequence[Row], meta: Sequence[Row], electrolyte, *,
           datasets: Sequence[str] | None = None, on: Sequence[str] | None = None,
           up_to: float | None = None, temperature_k: float = 298.15,
           temperatures: TemperatureChoice | None = None) -> Selection:
    """Points of ``electrolyte`` chosen by dataset key or source key (``datasets``), property
    (``on``), molality (``up_to``) and temperature: ``temperature_k`` (within 0.05 K), or
    ``temperatures``, a range or a set of temperatures (:class:`TemperatureChoice`), which
    takes the place of ``temperature_k``. ``points`` and ``meta`` are the store's point and
    dataset rows (:func:`saltbench.store.queries.point_rows`); each point row's own
    ``temperature_k`` decides."""
    if temperatures is None:
        rows = [r for r in points if abs(r["temperature_k"] - temperature_k) < 0.05]
        if not rows:
            raise UserError(f"no data for {electrolyte.name} at {temperature_k:g} K")
    else:
        rows = [r for r in points if temperatures.holds(float(r["temperature_k"]))]
        if not rows:
            raise UserError(f"no data for {electrolyte.name} at {temperatures.label()}")
    if datasets:
        wanted = set(datasets)
        known = {r[c] for r in rows for c in ("dataset", "source", "origin")}
        unknown = sorted(wanted - known)
        if unknown:
            raise UserError(f"--data: no dataset, source or origin {unknown[0]!r} for {electrolyte.name}; "
                            f"datasets: {', '.join(sorted({r['dataset'] for r in rows}))}")
        rows = [r for r in rows
                if r["dataset"] in wanted or r["source"] in wanted or r["origin"] in wanted]
    props = list(on or ["gamma_pm", "osmotic", "water_activity"])
    rows = [r for r in rows if r["property"] in props]
    if up_to is not None:
        if up_to <= 0:
            raise UserError("--up-to must be a positive molality in mol/kg")
        rows = [r for r in rows if r["molality"] <= up_to * (1 + 1e-12)]
    if not rows:
        raise UserError(f"no {'/'.join(props)} data for {electrolyte.name} with these options")
    # by molality, then dataset; equal keys keep the store's order (a stable sort, as before);
    # across temperatures, by temperature first
    if temperatures is None:
        rows.sort(key=lambda r: (r["molality"], r["dataset"]))
    else:
        rows.sort(key=lambda r: (r["temperature_k"], r["molality"], r["dataset"]))
    columns = {c: [r[c] for r in rows]
               for c in ("molality", "value", "uncertainty", "property", "dataset", "temperature_k")}
    data = FitData.from_frame(columns, electrolyte=electrolyte.name, nu=electrolyte.nu)
    counts = Counter(r["dataset"] for r in rows)
    infos = [{"key": r["key"], "source": r["source"], "property": r["property"],
              "content_hash": r["content_hash"], "n_points": counts[r["key"]],
              "from_memory": bool(r["from_memory"]), "origin": r["origin"], "citation": r["citation"],
              "typed": r["typed"], "table_ref": r["table_ref"]}
             for r in meta if r["key"] in counts]
    return Selection(data, infos, rows)
