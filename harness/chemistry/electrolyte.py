"""Electrolytes: a cation and an anion in stoichiometric proportion, and what follows from it.

Only binary (single-salt) electrolytes are modelled here; mixtures are compositions of several
of them (see :mod:`saltbench.chemistry.solution`).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.ions import KNOWN_IONS, Ion


@dataclass(frozen=True)
class Electrolyte:
    """A binary electrolyte ``(cation)nu_c (anion)nu_a``, electroneutral by construction."""

    name: str
    cation: Ion
    anion: Ion
    nu_cation: int
    nu_anion: int

    def __post_init__(self) -> None:
        if self.cation.charge <= 0 or self.anion.charge >= 0:
            raise ValueError(f"{self.name}: needs a cation (z > 0) and an anion (z < 0)")
        if self.nu_cation < 1 or self.nu_anion < 1:
            raise ValueError(f"{self.name}: stoichiometric numbers must be positive integers")
        if self.nu_cation * self.cation.charge + self.nu_anion * self.anion.charge != 0:
            raise ValueError(
                f"{self.name}: not electroneutral ({self.nu_cation} x {self.cation.name} "
                f"+ {self.nu_anion} x {self.anion.name})"
            )

    @property
    def nu(self) -> int:
        """Number of ions per formula unit."""
        return self.nu_cation + self.nu_anion

    @property
    def z_cation(self) -> int:
        return self.cation.charge

    @property
    def z_anion(self) -> int:
        return self.anion.charge

    @property
    def charge_type(self) -> tuple[int, int]:
        """``(|z+|, |z-|)``, e.g. ``(2, 1)`` for CaCl2: the usual "2-1" label."""
        return (abs(self.cation.charge), abs(self.anion.charge))

    @property
    def charge_label(self) -> str:
        return f"{self.charge_type[0]}-{self.charge_type[1]}"

    @property
    def zz(self) -> int:
        """``|z+ z-|``."""
        return abs(self.cation.charge * self.anion.charge)

    @property
    def molar_mass(self) -> float:
        """kg/mol of the formula unit."""
        return self.nu_cation * self.cation.molar_mass + self.nu_anion * self.anion.molar_mass

    def ionic_strength(self, molality: np.ndarray | float) -> np.ndarray:
        """I = 1/2 sum m_i z_i^2 in mol/kg for the salt at ``molality`` mol/kg."""
        # One product: half an integer is exact, so this rounds as 0.5 * m * (...) did.
        half_sum = 0.5 * (self.nu_cation * self.cation.charge**2
                          + self.nu_anion * self.anion.charge**2)
        return np.asarray(molality, dtype=float) * half_sum

    def molality_at_ionic_strength(self, ionic_strength: np.ndarray | float) -> np.ndarray:
        return np.asarray(ionic_strength, dtype=float) / float(self.ionic_strength(1.0))


_COUNT = r"(\d*)"


def _ion_alternatives(ions: list[str]) -> str:
    # Longest first so that "NH4" wins over "N", "ClO4" over "Cl".
    return "|".join(re.escape(f) for f in sorted(ions, key=len, reverse=True))


def parse_formula(formula: str, extra_ions: dict[str, Ion] | None = None) -> Electrolyte:
    """Read a salt formula such as ``NaCl``, ``CaCl2``, ``Na2SO4``, ``(NH4)2SO4``, ``Mg(NO3)2``.

    ``extra_ions`` adds user-declared ions (by formula). Raises ``ValueError`` with a plain
    message when the formula cannot be read or is not electroneutral.
    """
    text = formula.strip()
    if not text:
        raise ValueError("empty electrolyte formula")
    ions = dict(KNOWN_IONS)
    if extra_ions:
        ions.update(extra_ions)
    cations = _ion_alternatives([f for f, i in ions.items() if i.charge > 0])
    anions = _ion_alternatives([f for f, i in ions.items() if i.charge < 0])
    pattern = (
        rf"^(?:\((?P<cg>{cations})\)(?P<cgn>\d+)|(?P<c>{cations}){_COUNT})"
        rf"(?:\((?P<ag>{anions})\)(?P<agn>\d+)|(?P<a>{anions}){_COUNT})$"
    )
    match = re.match(pattern, text)
    if not match:
        raise ValueError(
            f"cannot read electrolyte formula {formula!r}: expected a known cation followed by a "
            "known anion (e.g. NaCl, CaCl2, Na2SO4, Mg(NO3)2)"
        )
    groups = match.groups()
    cation_f = match.group("cg") or match.group("c")
    n_c = match.group("cgn") or (groups[3] if match.group("c") else "")
    anion_f = match.group("ag") or match.group("a")
    n_a = match.group("agn") or (groups[7] if match.group("a") else "")
    cation, anion = ions[cation_f], ions[anion_f]
    nu_c = int(n_c) if n_c else 1
    nu_a = int(n_a) if n_a else 1
    return Electrolyte(text, cation, anion, nu_c, nu_a)


def _part(formula: str, nu: int) -> str:
    if nu == 1:
        return formula
    several = sum(ch.isupper() for ch in formula) > 1 or any(ch.isdigit() for ch in formula)
    return f"({formula}){nu}" if several else f"{formula}{nu}"


def neutral_salt(cation: Ion, anion: Ion) -> Electrolyte:
    """The neutral salt of two ions in its smallest whole proportions (Ca+2 and Cl- give CaCl2,
    NH4+ and SO4-2 give (NH4)2SO4), written as formulas are written in the bundled data."""
    from math import gcd

    if cation.charge <= 0 or anion.charge >= 0:
        raise ValueError(f"{cation.name} and {anion.name} are not a cation and an anion")
    g = gcd(cation.charge, -anion.charge)
    nu_c, nu_a = -anion.charge // g, cation.charge // g
    name = _part(cation.formula, nu_c) + _part(anion.formula, nu_a)
    return Electrolyte(name, cation, anion, nu_c, nu_a)
