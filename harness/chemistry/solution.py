"""Compositions: the molalities of any number of ions, for many solutions at once.

A :class:`Composition` is what a model computes for: N solutions (rows) of the same K ions
(columns), molalities in mol/kg, with a temperature (K) and optionally a pressure (Pa) per row.
It is built from salts (``of_salt``, ``of_salts``) or from ions directly, and keeps the salts it
was built from, so a caller can ask for the mean activity coefficient of each.

Ionic strength I = 1/2 sum_i m_i z_i^2 (IUPAC Green Book, 3rd ed., 2007, section 2.13).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.chemistry.ions import Ion
from saltbench.errors import UserError

STANDARD_TEMPERATURE_K = 298.15

Amount = float | np.ndarray | Sequence[float]


def _rows(values: Amount | None, n: int, what: str, default: float | None) -> np.ndarray | None:
    if values is None:
        return None if default is None else np.full(n, default)
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    if arr.size == 1 and n != 1:
        arr = np.full(n, float(arr[0]))
    if arr.shape != (n,):
        raise UserError(f"{what} has {arr.size} values, expected one or {n}")
    if np.any(~np.isfinite(arr)) or np.any(arr <= 0):
        raise UserError(f"{what} must be positive finite numbers")
    return arr


@dataclass(frozen=True, eq=False)
class Composition:
    """N solutions of the same ions: ``molality`` is (N, K) for ``ions`` (K), mol/kg.

    ``temperature_k`` is (N,); ``pressure_pa`` is (N,) or ``None`` for the water-property
    default (0.1 MPa, or saturation above 100 °C). ``salts`` are the neutral salts the rows were
    made of, where the caller said so (their mean quantities can be asked for).
    """

    ions: tuple[Ion, ...]
    molality: np.ndarray
    temperature_k: np.ndarray
    pressure_pa: np.ndarray | None = None
    salts: tuple[Electrolyte, ...] = ()

    def __post_init__(self) -> None:
        names = [ion.name for ion in self.ions]
        if not names:
            raise UserError("a composition needs at least one ion")
        if len(set(names)) != len(names):
            raise UserError("a composition names an ion twice")
        m = np.asarray(self.molality, dtype=float)
        if m.ndim == 1 and len(names) == 1:
            m = m[:, None]
        if m.ndim != 2 or m.shape[1] != len(names):
            raise UserError(f"molalities must be (solutions x {len(names)} ions), got {m.shape}")
        if np.any(~np.isfinite(m)) or np.any(m < 0):
            raise UserError("molalities must be non-negative finite numbers (mol/kg)")
        n = m.shape[0]
        object.__setattr__(self, "molality", m)
        object.__setattr__(self, "temperature_k",
                           _rows(self.temperature_k, n, "temperature (K)", STANDARD_TEMPERATURE_K))
        object.__setattr__(self, "pressure_pa", _rows(self.pressure_pa, n, "pressure (Pa)", None))
        for salt in self.salts:
            for ion in (salt.cation, salt.anion):
                if ion.name not in names:
                    raise UserError(f"{salt.name}: ion {ion.name} is not in the composition")

    # -- construction -----------------------------------------------------------------------
    @classmethod
    def of_salt(cls, salt: Electrolyte, molality: Amount,
                temperature_k: Amount = STANDARD_TEMPERATURE_K,
                pressure_pa: Amount | None = None) -> Composition:
        """Solutions of one salt at ``molality`` (mol/kg of the salt)."""
        return cls.of_salts([(salt, molality)], temperature_k, pressure_pa)

    @classmethod
    def of_salts(cls, parts: Sequence[tuple[Electrolyte, Amount]],
                 temperature_k: Amount = STANDARD_TEMPERATURE_K,
                 pressure_pa: Amount | None = None) -> Composition:
        """Solutions of several salts, each at its own molality (numbers or arrays of one length)."""
        if not parts:
            raise UserError("a solution needs at least one salt")
        amounts = [np.atleast_1d(np.asarray(m, dtype=float)) for _, m in parts]
        n = max(a.size for a in amounts)
        ions: dict[str, Ion] = {}
        columns: dict[str, np.ndarray] = {}
        for (salt, _), a in zip(parts, amounts):
            if a.size not in (1, n):
                raise UserError(f"molality of {salt.name} has {a.size} values, expected one or {n}")
            if np.any(~np.isfinite(a)) or np.any(a < 0):
                raise UserError(f"molality of {salt.name} must be a non-negative number")
            a = np.broadcast_to(a, (n,))
            for ion, nu in ((salt.cation, salt.nu_cation), (salt.anion, salt.nu_anion)):
                ions.setdefault(ion.name, ion)
                columns[ion.name] = columns.get(ion.name, 0.0) + nu * a
        names = list(ions)
        m = np.column_stack([columns[k] for k in names])
        salts = tuple(dict.fromkeys(salt for salt, _ in parts))
        t = np.atleast_1d(np.asarray(temperature_k, dtype=float))
        p = None if pressure_pa is None else np.atleast_1d(np.asarray(pressure_pa, dtype=float))
        return cls(tuple(ions[k] for k in names), m, t, p, salts)

    # -- reading ----------------------------------------------------------------------------
    @property
    def n(self) -> int:
        return int(self.molality.shape[0])

    @cached_property
    def names(self) -> tuple[str, ...]:
        return tuple(ion.name for ion in self.ions)

    @cached_property
    def charges(self) -> np.ndarray:
        return np.array([ion.charge for ion in self.ions], dtype=float)

    def index(self, ion: str) -> int:
        try:
            return self.names.index(ion)
        except ValueError:
            raise UserError(f"ion {ion} is not in the composition "
                            f"({', '.join(self.names)})") from None

    def of(self, ion: str) -> np.ndarray:
        """Molality of one ion in every solution (N,)."""
        return self.molality[:, self.index(ion)]

    @cached_property
    def ionic_strength(self) -> np.ndarray:
        """I = 1/2 sum m_i z_i^2 (N,), mol/kg."""
        return 0.5 * (self.molality @ self.charges**2)

    def salt(self, name: str) -> Electrolyte:
        """A neutral salt of ions present: one the composition was made of, or any other formed
        from its ions (NaNO3 in a solution of NaCl and KNO3)."""
        for s in self.salts:
            if s.name == name:
                return s
        salt = parse_formula(name)
        missing = [i.name for i in (salt.cation, salt.anion) if i.name not in self.names]
        if missing:
            raise UserError(f"salt {name}: ion {missing[0]} is not in the solution "
                            f"({', '.join(self.names)})")
        return salt

    @property
    def single_salt(self) -> Electrolyte | None:
        """The one salt every row is made of, in its own proportions, or None."""
        if len(self.salts) != 1 or len(self.ions) != 2:
            return None
        return self.salts[0]

    def salt_molality(self, salt: Electrolyte) -> np.ndarray:
        """Molality of ``salt`` (N,) where the rows are that salt alone (see single_salt)."""
        return self.of(salt.cation.name) / salt.nu_cation

    def rows(self, index: np.ndarray | slice) -> Composition:
        """The solutions picked by ``index``."""
        p = None if self.pressure_pa is None else self.pressure_pa[index]
        return Composition(self.ions, self.molality[index], self.temperature_k[index], p,
                           self.salts)

    def with_molality(self, molality: np.ndarray) -> Composition:
        """The same ions and salts at other molalities: the same temperature and pressure per
        row, or, for another number of rows, the one temperature and pressure of all rows."""
        molality = np.asarray(molality, dtype=float)
        t, p = self.temperature_k, self.pressure_pa
        if molality.shape[0] != self.n:
            if np.ptp(t) or (p is not None and np.ptp(p)):
                raise UserError("solutions at several temperatures or pressures cannot be "
                                "given another number of rows")
            t, p = t[:1], None if p is None else p[:1]
        return Composition(self.ions, molality, t, p, self.salts)
