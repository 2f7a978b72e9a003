"""Choosing the stored data a fit sees: datasets, properties, molality range, temperature."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import pandas as pd

from saltbench.errors import UserError
from saltbench.fitting.data import FitData

PROPERTY_ALIASES = {"gamma": "gamma_pm", "gamma_pm": "gamma_pm", "activity": "gamma_pm",
                    "osmotic": "osmotic", "phi": "osmotic", "water_activity": "water_activity",
                    "aw": "water_activity"}


@dataclass
class Selection:
    data: FitData
    datasets: list[dict]  # key, source, property, content_hash, n_points, from_memory, origin
    frame: pd.DataFrame


def parse_on(text: str | None) -> list[str]:
    if not text:
        return ["gamma_pm", "osmotic", "water_activity"]
    out = []
    for word in (w.strip().lower() for w in text.split(",") if w.strip()):
        if word not in PROPERTY_ALIASES:
            raise UserError(f"--on: unknown property {word!r} (use gamma, osmotic or water_activity)")
        out.append(PROPERTY_ALIASES[word])
    return out


def select(points: pd.DataFrame, meta: pd.DataFrame, electrolyte, *, datasets: Sequence[str] | None = None,
           on: Sequence[str] | None = None, up_to: float | None = None,
           temperature_k: float = 298.15) -> Selection:
    """Points of ``electrolyte`` chosen by dataset key or source key (``datasets``), property
    (``on``), molality (``up_to``) and temperature (within 0.05 K)."""
    frame = points.copy()
    frame = frame[(frame.temperature_k - temperature_k).abs() < 0.05]
    if frame.empty:
        raise UserError(f"no data for {electrolyte.name} at {temperature_k:g} K")
    if datasets:
        wanted = set(datasets)
        known = set(frame.dataset) | set(frame.source) | set(frame.origin)
        unknown = sorted(wanted - known)
        if unknown:
            raise UserError(f"--data: no dataset, source or origin {unknown[0]!r} for {electrolyte.name}; "
                            f"datasets: {', '.join(sorted(set(frame.dataset)))}")
        frame = frame[frame.dataset.isin(wanted) | frame.source.isin(wanted) | frame.origin.isin(wanted)]
    props = list(on or ["gamma_pm", "osmotic", "water_activity"])
    frame = frame[frame.property.isin(props)]
    if up_to is not None:
        if up_to <= 0:
            raise UserError("--up-to must be a positive molality in mol/kg")
        frame = frame[frame.molality <= up_to * (1 + 1e-12)]
    if frame.empty:
        raise UserError(f"no {'/'.join(props)} data for {electrolyte.name} with these options")
    frame = frame.sort_values(["molality", "dataset"]).reset_index(drop=True)
    data = FitData.from_frame(frame, electrolyte=electrolyte.name, nu=electrolyte.nu)
    used = meta[meta.key.isin(set(frame.dataset))]
    infos = [{"key": r["key"], "source": r["source"], "property": r["property"],
              "content_hash": r["content_hash"], "n_points": int((frame.dataset == r["key"]).sum()),
              "from_memory": bool(r["from_memory"]), "origin": r["origin"], "citation": r["citation"],
              "typed": r["typed"], "table_ref": r["table_ref"]}
             for r in used.to_dict("records")]
    return Selection(data, infos, frame)
