"""Ions that saltbench knows by formula: charge and molar mass.

Molar masses are sums of the IUPAC standard atomic weights (abridged, 2021 table), from memory of
the IUPAC Commission on Isotopic Abundances and Atomic Weights table; the electron mass is
neglected as is usual for ionic molar masses (common practice, no source).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

# g/mol; from memory of the IUPAC 2021 abridged standard atomic weights.
ATOMIC_WEIGHTS: dict[str, float] = {
    "H": 1.008, "Li": 6.94, "Be": 9.0122, "B": 10.81, "C": 12.011, "N": 14.007, "O": 15.999,
    "F": 18.998, "Na": 22.990, "Mg": 24.305, "Al": 26.982, "Si": 28.085, "P": 30.974,
    "S": 32.06, "Cl": 35.45, "K": 39.098, "Ca": 40.078, "Mn": 54.938, "Fe": 55.845,
    "Co": 58.933, "Cr": 51.996, "Ni": 58.693, "Cu": 63.546, "Zn": 65.38, "Br": 79.904, "Rb": 85.468,
    "Sr": 87.62, "W": 183.84, "Ag": 107.87, "Cd": 112.41, "I": 126.90, "Cs": 132.91, "Ba": 137.33,
    "La": 138.91, "Ce": 140.12, "Pb": 207.2, "Th": 232.04, "U": 238.03, "Tl": 204.38,
}

_ELEMENT = re.compile(r"([A-Z][a-z]?)(\d*)")


def formula_mass(formula: str) -> float:
    """Molar mass in g/mol of a plain formula without charge, e.g. ``"SO4"`` or ``"NH4"``."""
    pos, total = 0, 0.0
    for match in _ELEMENT.finditer(formula):
        if match.start() != pos:
            raise ValueError(f"cannot read element symbols in {formula!r}")
        symbol, count = match.group(1), match.group(2)
        if symbol not in ATOMIC_WEIGHTS:
            raise ValueError(f"unknown element {symbol!r} in {formula!r}")
        total += ATOMIC_WEIGHTS[symbol] * (int(count) if count else 1)
        pos = match.end()
    if pos != len(formula) or not formula:
        raise ValueError(f"cannot read element symbols in {formula!r}")
    return total


@dataclass(frozen=True)
class Ion:
    """An ion: its formula (without charge), charge number and molar mass in kg/mol."""

    formula: str
    charge: int
    molar_mass: float  # kg/mol

    @property
    def name(self) -> str:
        """Name with an unambiguous charge suffix: ``Na+``, ``Cl-``, ``Ca+2``, ``SO4-2``."""
        sign = "+" if self.charge > 0 else "-"
        mag = abs(self.charge)
        return f"{self.formula}{sign}{'' if mag == 1 else mag}"


# formula -> charge number. The table is what the bundled data and published parameter sets use,
# plus common ions a user is likely to type. Charges are facts of the trade (common practice, no source).
_KNOWN_CHARGES: dict[str, int] = {
    "H": 1, "Li": 1, "Na": 1, "K": 1, "Rb": 1, "Cs": 1, "NH4": 1, "Ag": 1, "Tl": 1,
    "Mg": 2, "Ca": 2, "Sr": 2, "Ba": 2, "Mn": 2, "Fe": 2, "Co": 2, "Ni": 2, "Cu": 2, "Zn": 2,
    "Cd": 2, "Pb": 2, "UO2": 2, "Be": 2,
    "Al": 3, "Cr": 3, "La": 3, "Ce": 3, "Th": 4,
    "F": -1, "Cl": -1, "Br": -1, "I": -1, "OH": -1, "NO3": -1, "NO2": -1, "ClO4": -1,
    "ClO3": -1, "BrO3": -1, "IO3": -1, "HCO3": -1, "HSO4": -1, "H2PO4": -1, "SCN": -1,
    "CH3COO": -1, "HCOO": -1, "MnO4": -1,
    "SO4": -2, "CO3": -2, "HPO4": -2, "CrO4": -2, "S2O3": -2, "SO3": -2, "C2O4": -2, "WO4": -2,
    "PO4": -3, "Fe(CN)6": -3,
}


def _mass_of(formula: str) -> float:
    # Group formulas like Fe(CN)6 are expanded before summing.
    m = re.fullmatch(r"(.*)\(([^()]+)\)(\d+)", formula)
    if m:
        return formula_mass(m.group(1)) + formula_mass(m.group(2)) * int(m.group(3)) if m.group(1) \
            else formula_mass(m.group(2)) * int(m.group(3))
    if formula == "CH3COO":
        return formula_mass("C2H3O2")
    if formula == "HCOO":
        return formula_mass("CHO2")
    return formula_mass(formula)


KNOWN_IONS: dict[str, Ion] = {
    f: Ion(f, z, _mass_of(f) / 1000.0) for f, z in _KNOWN_CHARGES.items()
}
