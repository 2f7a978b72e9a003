"""Mixture data as a fit sees them: one composition per point, a quantity, a value, an uncertainty.

A point of mixture data is a solution of several salts (a row of a
:class:`~saltbench.chemistry.solution.Composition`) and one measured quantity of it
(:mod:`saltbench.models.quantities`): ``ln_gamma_pm(SALT)``, the natural log of the mean activity
coefficient of a neutral salt of its ions (e.g. HCl in HCl + NaCl, as a cell without liquid
junction gives it), ``OSMOTIC``, the osmotic coefficient (isopiestic equilibria), or
``WATER_ACTIVITY``. Points of several quantities may be mixed in one set.

As in the one-salt path (:mod:`saltbench.fitting.properties`), water activities are fitted as
osmotic coefficients: phi = -ln(a_w) / (M_w sum_i m_i), with the first-order uncertainty
u(phi) = u(a_w) / (a_w M_w sum_i m_i) (GUM, JCGM 100:2008, eq. 10; IUPAC Green Book, 3rd ed.,
2007, 2.13 for the relation). The points are converted when the data are made; ``quantity``
then says ``osmotic`` for them and ``measured`` keeps what was given.

The scan coordinate of mixture data is the ionic strength of each point (mol/kg): folds of a
cross-validation are ranked by it and validity ranges are searched along it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from saltbench.chemistry.solution import Composition
from saltbench.errors import UserError
from saltbench.fitting.properties import REGISTRY
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, Quantity
from saltbench.water.properties import MOLAR_MASS_WATER

#: The quantity kinds a point of mixture data may be of.
FITTABLE = ("ln_gamma_pm", "osmotic", "water_activity")


def _property_of(kind: str) -> str:
    """The fitted property (``ln_gamma``, ``osmotic``) compared with a quantity kind."""
    for prop in REGISTRY.values():
        if prop.quantity_kind == kind:
            return prop.name
    raise UserError(f"mixture data: no fitted property compares with {kind!r}")


def _vector(name: str, values: object, n: int) -> np.ndarray:
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    if arr.ndim != 1:
        raise UserError(f"mixture data: {name} must be one-dimensional")
    if arr.size == 1 and n != 1:
        arr = np.full(n, float(arr[0]))
    if arr.size != n:
        raise UserError(f"mixture data: {name} has {arr.size} values, expected {n} "
                        "(one per composition)")
    return arr


@dataclass(frozen=True, eq=False)
class MixtureData:
    """Observations on N solutions: ``composition`` (N rows), one ``quantity`` per point (or one
    for all), ``value`` (N,) and standard ``uncertainty`` (N,) on the quantity's basis (natural
    logs for ``ln_gamma_pm``), and an optional ``dataset`` label per point.

    Raises UserError for a mistake: lengths that differ, a quantity that is not one of
    :data:`FITTABLE`, a salt whose ions are not in the solution, a value that is not finite, an
    uncertainty that is not positive, a water activity outside (0, 1], a row of pure water.
    """

    composition: Composition
    quantity: Quantity | Sequence[Quantity]
    value: np.ndarray
    uncertainty: np.ndarray | float
    dataset: np.ndarray | str = ""
    #: the quantity each point was given as (``quantity`` says ``osmotic`` for water activities)
    measured: tuple[Quantity, ...] = field(init=False)

    def __post_init__(self) -> None:
        comp = self.composition
        if not isinstance(comp, Composition):
            raise UserError("mixture data: composition must be a Composition")
        n = comp.n
        if n == 0:
            raise UserError("mixture data: no points")
        given = self.quantity
        quantities = [given] * n if isinstance(given, Quantity) else list(given)
        if len(quantities) != n or not all(isinstance(q, Quantity) for q in quantities):
            raise UserError(f"mixture data: quantity must be one Quantity or one per composition "
                            f"({n})")
        value = _vector("value", self.value, n)
        unc = _vector("uncertainty", self.uncertainty, n)
        ds = np.asarray(self.dataset, dtype=object)
        ds = np.full(n, ds.item(), dtype=object) if ds.ndim == 0 else ds
        if ds.shape != (n,):
            raise UserError("mixture data: dataset must be one label or one per composition")
        if not np.all(np.isfinite(value)):
            raise UserError("mixture data: values must be finite")
        if not np.all(np.isfinite(unc)) or np.any(unc <= 0):
            raise UserError("mixture data: every point needs a positive standard uncertainty")
        total = comp.molality.sum(axis=1)
        if np.any(total <= 0):
            raise UserError("mixture data: a composition holds no ions (pure water)")
        seen: dict[Quantity, None] = {}
        for q in quantities:
            if q in seen:
                continue
            seen[q] = None
            if q.kind not in FITTABLE:
                raise UserError(f"mixture data: cannot fit {q} (expected ln_gamma_pm(SALT), "
                                "osmotic or water_activity)")
            if q.kind == "ln_gamma_pm":
                # its ions must be in the solution (UserError otherwise); one of them may be at
                # zero molality: the trace value, as Harned's rule extrapolates to
                comp.salt(q.of)
        measured = tuple(quantities)
        is_aw = np.array([q == WATER_ACTIVITY for q in quantities])
        if is_aw.any():
            a_w, u_aw, scale = value[is_aw], unc[is_aw], MOLAR_MASS_WATER * total[is_aw]
            if np.any(a_w <= 0) or np.any(a_w > 1):
                raise UserError("mixture data: a water activity must lie in (0, 1]")
            value, unc = value.copy(), unc.copy()
            value[is_aw], unc[is_aw] = -np.log(a_w) / scale, u_aw / (a_w * scale)
            quantities = [OSMOTIC if aw else q for q, aw in zip(quantities, is_aw)]
        object.__setattr__(self, "quantity", tuple(quantities))
        object.__setattr__(self, "value", value)
        object.__setattr__(self, "uncertainty", unc)
        object.__setattr__(self, "dataset", ds)
        object.__setattr__(self, "measured", measured)

    @property
    def quantities(self) -> tuple[Quantity, ...]:
        """Each point's quantity on the fitted basis (``ln_gamma_pm(SALT)`` or ``osmotic``)."""
        return self.quantity  # type: ignore[return-value]  # a tuple after __post_init__

    @property
    def n(self) -> int:
        return self.composition.n

    def __len__(self) -> int:
        return self.n

    @cached_property
    def ionic_strength(self) -> np.ndarray:
        """Each point's ionic strength (mol/kg): the scan coordinate of mixture data."""
        return self.composition.ionic_strength

    @cached_property
    def kind(self) -> np.ndarray:
        """Each point's fitted property name (``ln_gamma`` or ``osmotic``), as in FitData."""
        names = {q.kind: _property_of(q.kind) for q in dict.fromkeys(self.quantities)}
        return np.array([names[q.kind] for q in self.quantities], dtype=object)

    def subset(self, selector: np.ndarray) -> MixtureData:
        """The points picked by a boolean mask or an index array, in that order."""
        sel = np.asarray(selector)
        idx = np.flatnonzero(sel) if sel.dtype == bool else sel.astype(np.intp)
        out = object.__new__(MixtureData)
        for name, value in (("composition", self.composition.rows(idx)),
                            ("quantity", tuple(self.quantities[i] for i in idx.tolist())),
                            ("value", self.value[idx]), ("uncertainty",
                                                         np.asarray(self.uncertainty)[idx]),
                            ("dataset", np.asarray(self.dataset)[idx]),
                            ("measured", tuple(self.measured[i] for i in idx.tolist()))):
            object.__setattr__(out, name, value)
        return out
