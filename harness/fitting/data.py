"""In-memory fit data: the observations one fit sees, on the basis it fits them.

Each point's ``kind`` names the fitted property it belongs to (:mod:`saltbench.fitting.properties`:
``ln_gamma``, ln(gamma±) of the salt; ``osmotic``, phi); curated values are converted to that
basis by the property's registered conversion. Molality is in mol/kg throughout. Each point has
its own temperature (K, default 298.15): a fit at one temperature ignores it; a fit across
temperatures (:mod:`saltbench.fitting.temperature_fit`) groups points by it.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np

from saltbench.errors import UserError
from saltbench.fitting.properties import LN_GAMMA_PROPERTY, OSMOTIC_PROPERTY, for_curated, names

LN_GAMMA = LN_GAMMA_PROPERTY.name
REFERENCE_TEMPERATURE_K = 298.15
OSMOTIC = OSMOTIC_PROPERTY.name


def _as_1d(name: str, values: object, n: int | None = None) -> np.ndarray:
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    if arr.ndim != 1:
        raise UserError(f"fit data: {name} must be one-dimensional")
    if n is not None and arr.size == 1 and n != 1:
        arr = np.full(n, float(arr[0]))
    if n is not None and arr.size != n:
        raise UserError(f"fit data: {name} has {arr.size} values, expected {n}")
    return arr


@dataclass(frozen=True)
class FitData:
    """Observations of one electrolyte: molality, value, standard uncertainty, kind, dataset id,
    temperature.

    ``value`` is ln(gamma±) where ``kind`` is ``"ln_gamma"`` and phi where it is ``"osmotic"``;
    ``uncertainty`` is the standard uncertainty on that same basis; ``temperature`` is each
    point's temperature in K (one number for all, by default 298.15). Arrays are aligned.
    """

    molality: np.ndarray
    value: np.ndarray
    uncertainty: np.ndarray
    kind: np.ndarray
    dataset: np.ndarray
    electrolyte: str | None = None
    temperature: np.ndarray | float = REFERENCE_TEMPERATURE_K

    def __post_init__(self) -> None:
        m = _as_1d("molality", self.molality)
        n = m.size
        v = _as_1d("value", self.value, n)
        u = _as_1d("uncertainty", self.uncertainty, n)
        kind = np.asarray(self.kind, dtype=object)
        if kind.ndim == 0:
            kind = np.full(n, kind.item(), dtype=object)
        ds = np.asarray(self.dataset, dtype=object)
        if ds.ndim == 0:
            ds = np.full(n, ds.item(), dtype=object)
        if kind.shape != (n,) or ds.shape != (n,):
            raise UserError("fit data: kind and dataset must have one entry per point")
        bad_kind = sorted({str(k) for k in kind} - set(names()))
        if bad_kind:
            raise UserError(f"fit data: unknown kind {bad_kind[0]!r} "
                            f"(expected {' or '.join(names())})")
        if np.any(~np.isfinite(m)) or np.any(m <= 0):
            raise UserError("fit data: molalities must be positive finite numbers (mol/kg)")
        if np.any(~np.isfinite(v)):
            raise UserError("fit data: values must be finite")
        if np.any(~np.isfinite(u)) or np.any(u <= 0):
            raise UserError("fit data: every point needs a positive standard uncertainty")
        t = _as_1d("temperature", self.temperature, n)
        if np.any(~np.isfinite(t)) or np.any(t <= 0):
            raise UserError("fit data: temperatures must be positive finite numbers (K)")
        for name, arr in (("molality", m), ("value", v), ("uncertainty", u),
                          ("kind", kind), ("dataset", ds), ("temperature", t)):
            object.__setattr__(self, name, arr)

    # -- construction -----------------------------------------------------------------------
    @classmethod
    def from_property(cls, prop: str, molality: Sequence[float] | np.ndarray,
                      value: Sequence[float] | np.ndarray,
                      uncertainty: Sequence[float] | np.ndarray | float, *,
                      dataset: str = "", electrolyte: str | None = None,
                      nu: int | None = None,
                      temperature_k: Sequence[float] | np.ndarray | float = REFERENCE_TEMPERATURE_K
                      ) -> FitData:
        """One dataset of a curated property, converted to its fitting basis.

        ``prop`` is ``gamma_pm`` (linear values), ``ln_gamma_pm``, ``log10_gamma_pm``,
        ``osmotic`` or ``water_activity`` (then ``nu``, the ions per formula unit, is needed).
        ``temperature_k`` is the points' temperature (one for all, or one per point).
        """
        fitted, convert = for_curated(prop)
        m = _as_1d("molality", molality)
        v = _as_1d("value", value, m.size)
        u = _as_1d("uncertainty", uncertainty, m.size)
        val, unc = convert(m, v, u, nu, dataset)
        n = m.size
        return cls(m, val, unc, np.full(n, fitted.name, dtype=object),
                   np.full(n, dataset, dtype=object), electrolyte,
                   _as_1d("temperature", temperature_k, n))

    @classmethod
    def concat(cls, parts: Iterable[FitData]) -> FitData:
        """Several datasets of the same electrolyte as one."""
        parts = list(parts)
        if not parts:
            raise UserError("fit data: nothing to combine")
        names = {p.electrolyte for p in parts if p.electrolyte}
        if len(names) > 1:
            raise UserError(f"fit data: datasets of different electrolytes: {', '.join(sorted(names))}")
        return cls(np.concatenate([p.molality for p in parts]),
                   np.concatenate([p.value for p in parts]),
                   np.concatenate([p.uncertainty for p in parts]),
                   np.concatenate([p.kind for p in parts]),
                   np.concatenate([p.dataset for p in parts]),
                   names.pop() if names else None,
                   np.concatenate([p.temperature for p in parts]))

    @classmethod
    def from_frame(cls, frame: Any, *, electrolyte: str | None = None,
                   nu: int | None = None) -> FitData:
        """From a table with columns ``molality, value, uncertainty, property, dataset`` and
        optionally ``temperature_k`` (default 298.15 K for every point).

        ``property`` holds the curated property names (``gamma_pm``, ``osmotic``...); values are
        on that property's printed basis. Any object with ``__getitem__`` by column works
        (a pandas DataFrame, a dict of lists).
        """
        cols = {c: np.asarray(frame[c]) for c in ("molality", "value", "uncertainty", "property")}
        datasets = np.asarray(frame["dataset"], dtype=object) if _has(frame, "dataset") else \
            np.full(cols["molality"].size, "", dtype=object)
        temps = np.asarray(frame["temperature_k"], dtype=float) if _has(frame, "temperature_k") \
            else np.full(cols["molality"].size, REFERENCE_TEMPERATURE_K)
        parts = []
        for prop in dict.fromkeys(str(p) for p in cols["property"]):
            for ds in dict.fromkeys(datasets):
                sel = (cols["property"].astype(str) == prop) & (datasets == ds)
                if sel.any():
                    parts.append(cls.from_property(prop, cols["molality"][sel],
                                                   cols["value"][sel], cols["uncertainty"][sel],
                                                   dataset=str(ds), electrolyte=electrolyte,
                                                   nu=nu, temperature_k=temps[sel]))
        return cls.concat(parts)

    # -- views ------------------------------------------------------------------------------
    @property
    def n(self) -> int:
        return int(self.molality.size)

    def __len__(self) -> int:
        return self.n

    # Comparing an object array of strings is slow next to the arithmetic of a fit, which asks
    # for these often; the masks are kept, read-only so that a caller cannot corrupt them.
    @cached_property
    def is_osmotic(self) -> np.ndarray:
        return _frozen(self.kind == OSMOTIC)


    def subset(self, selector: np.ndarray) -> FitData:
        """The points picked by a boolean mask or an index array, in that order."""
        sel = np.asarray(selector)
        parts = (self.molality[sel], self.value[sel], self.uncertainty[sel], self.kind[sel],
                 self.dataset[sel], self.temperature[sel])  # type: ignore[index]
        if parts[0].ndim != 1:
            return FitData(*parts[:5], self.electrolyte, parts[5])
        # These points passed the checks when this FitData was made; cross-validation takes
        # thousands of subsets, so they are not checked again.
        out = object.__new__(FitData)
        for name, arr in zip(("molality", "value", "uncertainty", "kind", "dataset", "temperature"),
                             parts):
            object.__setattr__(out, name, arr)
        object.__setattr__(out, "electrolyte", self.electrolyte)
        return out

    def up_to(self, max_molality: float) -> FitData:
        """Only the points with m <= ``max_molality`` (mol/kg)."""
        return self.subset(self.molality <= max_molality)

    def at_temperatures(self) -> list[float]:
        """The distinct temperatures of the points (K), lowest first, points within 0.05 K of
        the previous one counted as the same (as a selection at one temperature takes them)."""
        return [float(np.mean(g)) for g in temperature_groups(np.asarray(self.temperature))[1]]

    def select(self, kinds: str | Iterable[str]) -> FitData:
        """Only the points of the given kind(s): ``"ln_gamma"``, ``"osmotic"``."""
        wanted = {kinds} if isinstance(kinds, str) else set(kinds)
        unknown = wanted - set(names())
        if unknown:
            raise UserError(f"fit data: unknown kind {min(unknown)!r}")
        return self.subset(np.isin(self.kind.astype(str), sorted(wanted)))


SAME_TEMPERATURE_K = 0.05  # points closer than this in temperature count as one temperature


def temperature_groups(temperature: np.ndarray) -> tuple[np.ndarray, list[np.ndarray]]:
    """Each point's temperature group (0.. by rising temperature) and each group's distinct
    temperatures: sorted distinct values start a new group where they rise by more than
    ``SAME_TEMPERATURE_K`` from the previous one."""
    t = np.asarray(temperature, dtype=float)
    distinct = np.unique(t)
    starts = np.concatenate(([True], np.diff(distinct) > SAME_TEMPERATURE_K))
    group_of_distinct = np.cumsum(starts) - 1
    labels = group_of_distinct[np.searchsorted(distinct, t)]
    groups = [distinct[group_of_distinct == g] for g in range(int(group_of_distinct[-1]) + 1)] \
        if distinct.size else []
    return labels, groups


def _frozen(arr: np.ndarray) -> np.ndarray:
    arr.flags.writeable = False
    return arr


def _has(frame: object, column: str) -> bool:
    try:
        frame[column]  # type: ignore[index]
    except (KeyError, IndexError, TypeError):
        return False
    return True
