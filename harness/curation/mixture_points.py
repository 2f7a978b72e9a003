"""The points of one mixture dataset as arrays ready for fitting: :class:`MixturePoints`.

A plain container shared by the reader (:mod:`saltbench.curation.mixtures`), the store
(:mod:`saltbench.store.mixtures`) and whoever fits or compares on mixtures. It lives this low
so that each of them can import it.

``quantity`` is a ``(kind, of)`` pair equal to, and hashing like, the models' ``Quantity``
(:mod:`saltbench.models.quantities` is a layer above this one): ``("ln_gamma_pm", "HCl")``,
``("osmotic", "")`` or ``("water_activity", "")``. A caller above the models layer may turn it
into the named tuple with ``Quantity(*points.quantity)``; as a key of a dict of computed values
it works as it is.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.solution import Composition

#: quantity kinds a mixture dataset gives (names as in saltbench.models.quantities)
LN_GAMMA_PM = "ln_gamma_pm"
OSMOTIC = "osmotic"
WATER_ACTIVITY = "water_activity"


@dataclass(frozen=True, eq=False)
class MixturePoints:
    """One mixture dataset's points: N compositions and one value at each.

    - ``composition``: a :class:`Composition`, one row per point, the ions of the system's salts
      (in the order of the salts, cation before anion) in mol/kg, and the system's salts.
    - ``quantity``: ``(kind, of)``, see the module docstring. Mean activity coefficients are
      always ``ln_gamma_pm`` of the salt, whatever basis the file printed.
    - ``values``, ``uncertainties``: (N,), the value and its standard uncertainty in the basis of
      ``quantity`` (ln gamma± for activity coefficients; phi; a_w).
    - ``ionic_strength``: (N,), I = 1/2 sum m_i z_i^2 in mol/kg of each point.
    - ``key``, ``system``, ``temperature_k``, ``source`` (citation key), ``content_hash`` (the
      dataset's, for a fit's provenance), ``origin`` ('bundled', 'user' or 'file' when read
      straight from a file), ``typed`` (how the values reached the file), ``lines`` (file line
      of each point) and ``file``.
    """

    key: str
    system: str
    composition: Composition
    quantity: tuple[str, str]
    values: np.ndarray
    uncertainties: np.ndarray
    ionic_strength: np.ndarray
    temperature_k: float
    source: str
    content_hash: str
    origin: str
    typed: str
    lines: tuple[int, ...]
    file: str

    @property
    def n(self) -> int:
        return int(self.values.shape[0])

    @property
    def salt(self) -> str:
        """The salt whose mean activity coefficient the values are ('' for phi and a_w)."""
        return self.quantity[1]

    @property
    def invented(self) -> bool:
        return self.typed.lower().startswith("invented")

    @property
    def from_memory(self) -> bool:
        return self.typed.lower().startswith("from memory of")

    def same_points(self, other: MixturePoints) -> bool:
        """Equal compositions, quantity, values, uncertainties and temperature (exactly)."""
        a, b = self.composition, other.composition
        return (a.names == b.names and tuple(s.name for s in a.salts) == tuple(s.name for s in b.salts)
                and self.quantity == other.quantity and self.temperature_k == other.temperature_k
                and np.array_equal(a.molality, b.molality) and np.array_equal(self.values, other.values)
                and np.array_equal(self.uncertainties, other.uncertainties)
                and np.array_equal(a.temperature_k, b.temperature_k))


#: the comparison's property names (``--on``; saltbench.fitting.selection) for each quantity kind
PROPERTY_OF_KIND = {LN_GAMMA_PM: "gamma_pm", OSMOTIC: "osmotic", WATER_ACTIVITY: "water_activity"}


def select_mixture_points(parts: list[MixturePoints], system: str, *, on: tuple[str, ...] | list[str] = (),
                          datasets: tuple[str, ...] | list[str] = ()) -> list[MixturePoints]:
    """The datasets of ``parts`` whose property is in ``on`` (``gamma_pm``, ``osmotic``,
    ``water_activity``; empty: all) and whose key, source key or origin is in ``datasets``
    (empty: all), as ``--on`` and ``--data`` choose for one salt. A ``datasets`` name that
    matches none of them, or a choice that leaves nothing, is a UserError."""
    from saltbench.errors import UserError

    chosen = list(parts)
    if datasets:
        wanted = set(datasets)
        known = {v for p in parts for v in (p.key, p.source, p.origin)}
        unknown = sorted(wanted - known)
        if unknown:
            raise UserError(f"--data: no mixture dataset, source or origin {unknown[0]!r} for {system}")
        chosen = [p for p in chosen if wanted & {p.key, p.source, p.origin}]
    if on:
        chosen = [p for p in chosen if PROPERTY_OF_KIND[p.quantity[0]] in on]
    if not chosen:
        shown = [{"gamma_pm": "gamma"}.get(x, x) for x in on]
        given = ", ".join(x for x in (f"--on {','.join(shown)}" if on else "",
                                      f"--data {','.join(datasets)}" if datasets else "") if x)
        raise UserError(f"no mixture data of {system} left after {given}")
    return chosen
