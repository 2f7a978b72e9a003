"""Amounts of dissolved species on the bases analysts report, and their exact molalities.

Three families of basis (units are the ones a solution description may name):

- per kg of water: ``mol/kg`` (molality), ``mmol/kg``;
- per litre of solution: ``mol/L``, ``mmol/L``, ``mg/L``, ``g/L`` (need the solution's density);
- per kg of solution: ``g/kg``, ``mg/kg`` (mass of the species per kg of solution).

The conversions solve for the mass of water exactly (the relation of Robinson and Stokes,
Electrolyte Solutions, 2nd ed., 1959, ch. 2, m = c / (rho - c M), written for many solutes; from
memory of that chapter):

    per litre:          m_i = c_i / (rho - sum_j c_j M_j)       c in mol/L, rho in kg/L, M in kg/mol
    per kg of solution: m_i = w_i / (M_i (1 - sum_j w_j))       w in kg of species per kg of solution

and their inverses, c_i = m_i rho / (1 + sum_j m_j M_j) and w_i = m_i M_i / (1 + sum_j m_j M_j),
since one kg of water carries sum_j m_j M_j kg of solutes. Arrays are (N, K): N solutions of K
species; molar masses (K,) in kg/mol; densities (N,) in kg/L.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from saltbench.errors import UserError


@dataclass(frozen=True)
class Basis:
    """A unit of amount: ``family`` is ``water`` (per kg of water), ``litre`` (per litre of
    solution) or ``solution`` (per kg of solution); ``per_mole`` says whether it counts moles
    (else mass); ``factor`` turns the number into mol or kg of species."""

    unit: str
    family: str
    per_mole: bool
    factor: float

    @property
    def needs_density(self) -> bool:
        return self.family == "litre"


BASES: dict[str, Basis] = {b.unit: b for b in (
    Basis("mol/kg", "water", True, 1.0),
    Basis("mmol/kg", "water", True, 1e-3),
    Basis("mol/L", "litre", True, 1.0),
    Basis("mmol/L", "litre", True, 1e-3),
    Basis("mg/L", "litre", False, 1e-6),
    Basis("g/L", "litre", False, 1e-3),
    Basis("g/kg", "solution", False, 1e-3),
    Basis("mg/kg", "solution", False, 1e-6),
)}

MOLALITY = BASES["mol/kg"]


def basis(unit: str) -> Basis:
    """The basis of a unit as written (``mg/l`` and ``mg/L`` are the same unit)."""
    for b in BASES.values():
        if b.unit.lower() == unit.strip().lower():
            return b
    raise UserError(f"unknown unit {unit!r} (known: {', '.join(BASES)})")


def _as_rows(values: np.ndarray) -> np.ndarray:
    arr = np.asarray(values, dtype=float)
    return arr[None, :] if arr.ndim == 1 else arr


def moles_or_mass(amounts: np.ndarray, unit: Basis, molar_mass: np.ndarray) -> np.ndarray:
    """Amounts in mol (per kg water, per L or per kg solution) for every species (N, K)."""
    a = _as_rows(amounts) * unit.factor
    return a if unit.per_mole else a / np.asarray(molar_mass, dtype=float)


def molality(amounts: np.ndarray, unit: Basis, molar_mass: np.ndarray,
             density_kg_per_l: np.ndarray | float | None = None) -> np.ndarray:
    """Molality (N, K), mol/kg of water, of species given as ``amounts`` (N, K) in ``unit``.

    Raises UserError where the solutes would weigh as much as the solution (no water left)."""
    mm = np.asarray(molar_mass, dtype=float)
    n = moles_or_mass(amounts, unit, mm)
    if unit.family == "water":
        return n
    solute_mass = n @ mm  # kg per L, or kg per kg of solution
    if unit.family == "litre":
        if density_kg_per_l is None:
            raise UserError(f"amounts in {unit.unit} need the solution's density")
        water = np.asarray(density_kg_per_l, dtype=float) - solute_mass
    else:
        water = 1.0 - solute_mass
    if np.any(water <= 0):
        raise UserError(f"the dissolved species weigh as much as the solution or more "
                        f"({float(np.max(solute_mass)):.4g} kg per {'L' if unit.family == 'litre' else 'kg'}): "
                        "no water is left")
    return n / water[:, None]


def amounts_from_molality(m: np.ndarray, unit: Basis, molar_mass: np.ndarray,
                          density_kg_per_l: np.ndarray | float | None = None) -> np.ndarray:
    """The inverse of :func:`molality`: amounts (N, K) in ``unit`` of species at molality ``m``."""
    mm = np.asarray(molar_mass, dtype=float)
    m = _as_rows(m)
    if unit.family == "water":
        n = m
    else:
        solution_per_kg_water = 1.0 + m @ mm  # kg of solution holding one kg of water
        if unit.family == "litre":
            if density_kg_per_l is None:
                raise UserError(f"amounts in {unit.unit} need the solution's density")
            per = np.asarray(density_kg_per_l, dtype=float) / solution_per_kg_water
        else:
            per = 1.0 / solution_per_kg_water
        n = m * np.atleast_1d(per)[:, None]
    return (n if unit.per_mole else n * mm) / unit.factor


def dissolved_mass_per_litre(m: np.ndarray, molar_mass: np.ndarray,
                             density_kg_per_l: np.ndarray | float) -> np.ndarray:
    """Total dissolved mass, g/L of solution (N,), of species at molality ``m``."""
    c = amounts_from_molality(m, BASES["g/L"], molar_mass, density_kg_per_l)
    return c.sum(axis=1)
