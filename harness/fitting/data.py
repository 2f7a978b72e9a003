"""In-memory fit data: the observations one fit sees, on the basis it fits them.

Each point's ``kind`` names the fitted property it belongs to (:mod:`saltbench.fitting.properties`:
``ln_gamma``, ln(gamma±) of the salt; ``osmotic``, phi); curated values are converted to that
basis by the property's registered conversion. Molality is in mol/kg throughout.
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
    """Observations of one electrolyte: molality, value, standard uncertainty, kind, dataset id.

    ``value`` is ln(gamma±) where ``kind`` is ``"ln_gamma"`` and phi where it is ``"osmotic"``;
    ``uncertainty`` is the standard uncertainty on that same basis. Arrays are aligned.
    """

    molality: np.ndarray
    value: np.ndarray
    uncertainty: np.ndarray
    kind: np.ndarray
    dataset: np.ndarray
    electrolyte: str | None = None

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
        for name, arr in (("molality", m), ("value", v), ("uncertainty", u),
                          ("kind", kind), ("dataset", ds)):
            object.__setattr__(self, name, arr)

    # -- construction -----------------------------------------------------------------------
    @classmethod
    def from_property(cls, prop: str, molality: Sequence[float] | np.ndarray,
                      value: Sequence[float] | np.ndarray,
                      uncertainty: Sequence[float] | np.ndarray | float, *,
                      dataset: str = "", electrolyte: str | None = None,
                      nu: int | None = None) -> FitData:
        """One dataset of a curated property, converted to its fitting basis.

        ``prop`` is ``gamma_pm`` (linear values), ``ln_gamma_pm``, ``log10_gamma_pm``,
        ``osmotic`` or ``water_activity`` (then ``nu``, the ions per formula unit, is needed).
        """
        fitted, convert = for_curated(prop)
        m = _as_1d("molality", molality)
        v = _as_1d("value", value, m.size)
        u = _as_1d("uncertainty", uncertainty, m.size)
        val, unc = convert(m, v, u, nu, dataset)
        n = m.size
        return cls(m, val, unc, np.full(n, fitted.name, dtype=object),
                   np.full(n, dataset, dtype=object), electrolyte)

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
                   names.pop() if names else None)

    @classmethod
    def from_frame(cls, frame: Any, *, electrolyte: str | None = None,
                   nu: int | None = None) -> FitData:
        """From a table with columns ``molality, value, uncertainty, property, dataset``.

        ``property`` holds the curated property names (``gamma_pm``, ``osmotic``...); values are
        on that property's printed basis. Any object with ``__getitem__`` by column works
        (a pandas DataFrame, a dict of lists).
        """
        cols = {c: np.asarray(frame[c]) for c in ("molality", "value", "uncertainty", "property")}
        datasets = np.asarray(frame["dataset"], dtype=object) if _has(frame, "dataset") else \
            np.full(cols["molality"].size, "", dtype=object)
        parts = []
        for prop in dict.fromkeys(str(p) for p in cols["property"]):
            for ds in dict.fromkeys(datasets):
                sel = (cols["property"].astype(str) == prop) & (datasets == ds)
                if sel.any():
                    parts.append(cls.from_property(prop, cols["molality"][sel],
                                                   cols["value"][sel], cols["uncertainty"][sel],
                                                   dataset=str(ds), electrolyte=electrolyte,
                                                   nu=nu))
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
                 self.dataset[sel])
        if parts[0].ndim != 1:
            return FitData(*parts, self.electrolyte)
        # These points passed the checks when this FitData was made; cross-validation takes
        # thousands of subsets, so they are not checked again.
        out = object.__new__(FitData)
        for name, arr in zip(("molality", "value", "uncertainty", "kind", "dataset"), parts):
            object.__setattr__(out, name, arr)
        object.__setattr__(out, "electrolyte", self.electrolyte)
        return out

    def up_to(self, max_molality: float) -> FitData:
        """Only the points with m <= ``max_molality`` (mol/kg)."""
        return self.subset(self.molality <= max_molality)

    def select(self, kinds: str | Iterable[str]) -> FitData:
        """Only the points of the given kind(s): ``"ln_gamma"``, ``"osmotic"``."""
        wanted = {kinds} if isinstance(kinds, str) else set(kinds)
        unknown = wanted - set(names())
        if unknown:
            raise UserError(f"fit data: unknown kind {min(unknown)!r}")
        return self.subset(np.isin(self.kind.astype(str), sorted(wanted)))


def _frozen(arr: np.ndarray) -> np.ndarray:
    arr.flags.writeable = False
    return arr


def _has(frame: object, column: str) -> bool:
    try:
        frame[column]  # type: ignore[index]
    except (KeyError, IndexError, TypeError):
        return False
    return True
