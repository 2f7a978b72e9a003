"""A solution as a user describes it: species and amounts on their own basis, resolved to the
molalities of its ions.

A :class:`SolutionRecord` keeps both sides: what was said (species, amounts, unit, temperature,
density and how it was obtained, provenance) and what it means (ions and molalities, mol/kg of
water, in the order a :class:`~saltbench.chemistry.solution.Composition` takes them). The
conversions are :mod:`saltbench.chemistry.amounts`; the charge balance is
:mod:`saltbench.chemistry.charge_balance` (Standard Methods 1030 E). Reading files and the
inline form, and estimating a density, belong to :mod:`saltbench.curation.solutions`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field, replace

import numpy as np

from saltbench.chemistry import amounts as amt
from saltbench.chemistry.charge_balance import ACCEPTANCE_SOURCE, ChargeBalance, charge_balance
from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.ions import Ion
from saltbench.chemistry.solution import STANDARD_TEMPERATURE_K, Composition
from saltbench.chemistry.species import Species
from saltbench.errors import UserError

#: How a density reached a record.
DENSITY_STATED = "stated"
DENSITY_ESTIMATED = "estimated"
DENSITY_NOT_NEEDED = "not needed"


@dataclass(frozen=True)
class BalanceAdjustment:
    """How a record's charge balance was closed: ``ion`` was added (``amount`` in the record's
    unit, ``molality`` in mol/kg of water) where the balance stood at ``percent_before``."""

    ion: str
    amount: float
    unit: str
    molality: float
    percent_before: float


@dataclass(frozen=True, eq=False)
class SolutionRecord:
    """One solution as described and as resolved.

    ``species`` (S) with ``amounts`` (S,) in ``unit``; ``ions`` (K) with ``molality`` (K,) in
    mol/kg of water; ``temperature_k``; ``density_kg_per_l`` (None where neither stated nor
    needed) with ``density_origin`` (stated / estimated / not needed) and ``density_method``
    (the estimate's method, or ''). Provenance: ``name``, ``source`` (where the description came
    from), ``typed`` (how its values were obtained: measured, transcribed, from memory,
    invented), ``note``. ``adjustment`` says whether the charge balance was closed, and
    ``cautions`` are statements for whoever reads a result made from it.
    """

    name: str
    species: tuple[Species, ...]
    amounts: np.ndarray
    unit: str
    temperature_k: float
    ions: tuple[Ion, ...]
    molality: np.ndarray
    density_kg_per_l: float | None = None
    density_origin: str = DENSITY_NOT_NEEDED
    density_method: str = ""
    source: str = ""
    typed: str = ""
    note: str = ""
    adjustment: BalanceAdjustment | None = None
    cautions: tuple[str, ...] = field(default=())

    # -- construction -----------------------------------------------------------------------
    @classmethod
    def resolve(cls, name: str, species: Sequence[Species], amounts: Sequence[float] | np.ndarray,
                unit: str, *, temperature_k: float = STANDARD_TEMPERATURE_K,
                density_kg_per_l: float | None = None, density_origin: str | None = None,
                density_method: str = "", source: str = "", typed: str = "", note: str = "",
                cautions: Sequence[str] = (), adjustment: BalanceAdjustment | None = None) -> SolutionRecord:
        """Resolve species and amounts to ion molalities (exact conversions, see
        :mod:`saltbench.chemistry.amounts`). Raises UserError for an impossible description."""
        species = tuple(species)
        if not species:
            raise UserError(f"solution {name}: names no species")
        names = [s.name for s in species]
        twice = sorted({n for n in names if names.count(n) > 1})
        if twice:
            raise UserError(f"solution {name}: species {twice[0]} is named twice")
        a = np.asarray(amounts, dtype=float)
        if a.shape != (len(species),):
            raise UserError(f"solution {name}: {a.size} amounts for {len(species)} species")
        if np.any(~np.isfinite(a)) or np.any(a < 0):
            raise UserError(f"solution {name}: amounts must be non-negative numbers")
        b = amt.basis(unit)
        if b.needs_density and density_kg_per_l is None:
            raise UserError(f"solution {name}: amounts in {b.unit} need the solution's density")
        origin = density_origin or (DENSITY_STATED if density_kg_per_l is not None else DENSITY_NOT_NEEDED)
        molar_mass = np.array([s.molar_mass for s in species])
        m_species = amt.molality(a, b, molar_mass, density_kg_per_l)[0]
        ions: dict[str, Ion] = {}
        m_ions: dict[str, float] = {}
        for s, m in zip(species, m_species):
            for ion, nu in s.parts:
                ions.setdefault(ion.name, ion)
                m_ions[ion.name] = m_ions.get(ion.name, 0.0) + nu * float(m)
        record = cls(name, species, a, b.unit, float(temperature_k), tuple(ions.values()),
                     np.array([m_ions[k] for k in ions]), density_kg_per_l, origin, density_method,
                     source, typed, note, adjustment, tuple(cautions))
        return replace(record, cautions=tuple(cautions) + record._balance_cautions())

    def _balance_cautions(self) -> tuple[str, ...]:
        cb = self.charge_balance
        if bool(cb.acceptable[0]):
            return ()
        value, is_percent = cb.limit
        allowed = f"{value[0]:g} %" if is_percent[0] else f"{value[0]:g} meq/kg"
        return (f"charge imbalance {cb.percent[0]:+.2f} % of the total charge "
                f"({1000 * cb.difference_eq[0]:+.4g} meq/kg of water) is beyond the acceptance of "
                f"±{allowed} ({ACCEPTANCE_SOURCE}): check the analysis before relying on results",)

    # -- reading ----------------------------------------------------------------------------
    @property
    def charges(self) -> np.ndarray:
        return np.array([ion.charge for ion in self.ions], dtype=float)

    @property
    def salts(self) -> tuple[Electrolyte, ...]:
        return tuple(s.salt for s in self.species if s.salt is not None)

    @property
    def species_molality(self) -> np.ndarray:
        """Molality of each species (S,), mol/kg of water."""
        mm = np.array([s.molar_mass for s in self.species])
        return amt.molality(self.amounts, amt.basis(self.unit), mm, self.density_kg_per_l)[0]

    @property
    def charge_balance(self) -> ChargeBalance:
        return charge_balance(self.molality[None, :], self.charges)

    @property
    def ionic_strength(self) -> float:
        return float(0.5 * self.molality @ self.charges**2)

    def composition(self, factors: Sequence[float] | np.ndarray | None = None,
                    pressure_pa: float | None = None) -> Composition:
        """The solution as a Composition of its ions: one row, or one row per concentration
        factor in ``factors`` (molalities times the factor, see :meth:`concentrated`)."""
        f = np.ones(1) if factors is None else np.atleast_1d(np.asarray(factors, dtype=float))
        if f.ndim != 1 or f.size == 0 or np.any(~np.isfinite(f)) or np.any(f <= 0):
            raise UserError("concentration factors must be positive numbers")
        m = f[:, None] * self.molality[None, :]
        return Composition(self.ions, m, np.full(f.size, self.temperature_k),
                           None if pressure_pa is None else np.full(f.size, float(pressure_pa)),
                           tuple(dict.fromkeys(self.salts)))

    def factors_for_ionic_strength(self, ionic_strength: Sequence[float] | np.ndarray) -> np.ndarray:
        """Concentration factors (see :meth:`concentrated`) that bring the solution to each ionic
        strength asked (mol/kg); I is linear in the factor, so they are exact. For
        ``record.composition(factors)``."""
        target = np.atleast_1d(np.asarray(ionic_strength, dtype=float))
        if target.ndim != 1 or np.any(~np.isfinite(target)) or np.any(target <= 0):
            raise UserError("ionic strengths to scale to must be positive numbers (mol/kg)")
        if self.ionic_strength <= 0:
            raise UserError(f"solution {self.name} has no ions to scale")
        return target / self.ionic_strength

    # -- new records ------------------------------------------------------------------------
    def concentrated(self, factor: float) -> SolutionRecord:
        """The solution with water taken away and every solute kept: each molality times
        ``factor`` (for a concentrate of pure-water recovery R, factor = 1 / (1 - R); common
        practice, no source). The result is described in mol/kg; its density is unknown."""
        if not (np.isfinite(factor) and factor > 0):
            raise UserError(f"concentration factor must be a positive number, not {factor!r}")
        note = f"{self.name} concentrated {factor:g}x on a water basis (water removed, solutes kept)"
        return SolutionRecord.resolve(
            f"{self.name} x{factor:g}", self.species, self.species_molality * factor, "mol/kg",
            temperature_k=self.temperature_k, source=self.source, typed=self.typed,
            note="; ".join(x for x in (self.note, note) if x),
            cautions=[c for c in self.cautions if not c.startswith("charge imbalance")],
            adjustment=self.adjustment)

    def closed_with(self, ion: str | Species) -> SolutionRecord:
        """A new record whose charge balance is closed by adding ``ion`` (an ion species, e.g.
        ``Cl-`` or ``Na+``), on the record's own basis, so every other amount stays as given.
        Raises UserError when that ion cannot close it (it would need a negative amount)."""
        from saltbench.chemistry.species import parse_species

        try:
            sp = ion if isinstance(ion, Species) else parse_species(ion)
        except ValueError as exc:
            raise UserError(f"closing the charge balance: {exc}") from None
        if sp.is_salt:
            raise UserError(f"closing the charge balance needs an ion, not the salt {sp.name}")
        b = amt.basis(self.unit)
        mm = np.array([s.molar_mass for s in self.species])
        n = amt.moles_or_mass(self.amounts, b, mm)[0]
        net = float(np.dot([s.charge for s in self.species], n))
        added_moles = -net / sp.charge
        if added_moles <= 0:
            side = "cation" if net > 0 else "anion"
            raise UserError(f"closing the charge balance with {sp.name} would need a negative amount: "
                            f"the solution has more {side} charge; name an ion of the other sign")
        added = added_moles / b.factor * (1.0 if b.per_mole else sp.molar_mass)
        names = [s.name for s in self.species]
        new_amounts = list(self.amounts)
        species = list(self.species)
        if sp.name in names:
            new_amounts[names.index(sp.name)] += added
        else:
            species.append(sp)
            new_amounts.append(added)
        before = float(self.charge_balance.percent[0])
        kept = [c for c in self.cautions if not c.startswith("charge imbalance")]
        record = SolutionRecord.resolve(
            self.name, species, new_amounts, self.unit, temperature_k=self.temperature_k,
            density_kg_per_l=self.density_kg_per_l, density_origin=self.density_origin,
            density_method=self.density_method, source=self.source, typed=self.typed, note=self.note,
            cautions=kept)
        molality = float(record.molality[list(i.name for i in record.ions).index(sp.name)]
                         - dict(zip((i.name for i in self.ions), self.molality)).get(sp.name, 0.0))
        adjustment = BalanceAdjustment(sp.name, added, self.unit, molality, before)
        return replace(record, adjustment=adjustment)
