"""Species a user names when describing a solution: an ion, or a neutral salt that dissolves
into its ions.

An ion is written by its formula, with or without its charge (``Na``, ``Na+``, ``Ca+2``,
``Ca2+``, ``Ca++``, ``SO4-2``, ``SO4--``); a written charge must be the one the ion has. A salt
is written as :func:`saltbench.chemistry.electrolyte.parse_formula` reads it (``NaCl``,
``MgSO4``, ``Na2SO4``). An ion's own formula is tried first, so ``HSO4`` is the ion, not a salt.
Charges and molar masses come from :mod:`saltbench.chemistry.ions`.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.chemistry.ions import KNOWN_IONS, Ion

# the charge written after an ion's formula: '+', '-', '+2', '-2', '2+', '2-', '++', '--'
_CHARGE_TEXT = re.compile(r"^(?:(?P<sign1>[+-])(?P<n1>\d*)|(?P<n2>\d+)(?P<sign2>[+-])|(?P<signs>\+\++|--+))$")


@dataclass(frozen=True)
class Species:
    """An ion or a neutral salt, as named in a solution description.

    ``parts`` is the stoichiometry: each ion with the number of it per formula unit (one ion for
    an ion species). ``molar_mass`` is that of the formula unit, kg/mol.
    """

    name: str
    parts: tuple[tuple[Ion, int], ...]
    salt: Electrolyte | None = None

    @property
    def is_salt(self) -> bool:
        return self.salt is not None

    @property
    def molar_mass(self) -> float:
        return sum(ion.molar_mass * nu for ion, nu in self.parts)

    @property
    def charge(self) -> int:
        """Net charge of the formula unit (0 for a salt)."""
        return sum(ion.charge * nu for ion, nu in self.parts)

    @classmethod
    def of_ion(cls, ion: Ion) -> Species:
        return cls(ion.name, ((ion, 1),))

    @classmethod
    def of_salt(cls, salt: Electrolyte) -> Species:
        return cls(salt.name, ((salt.cation, salt.nu_cation), (salt.anion, salt.nu_anion)), salt)


def _written_charge(match: re.Match[str]) -> int:
    if match.group("sign1"):
        n = int(match.group("n1") or 1)
        return n if match.group("sign1") == "+" else -n
    if match.group("sign2"):
        n = int(match.group("n2"))
        return n if match.group("sign2") == "+" else -n
    signs = match.group("signs")
    return len(signs) if signs[0] == "+" else -len(signs)


def parse_species(text: str, extra_ions: dict[str, Ion] | None = None) -> Species:
    """Read an ion (``Na+``, ``SO4-2``, ``Ca``) or a salt (``NaCl``). ``extra_ions`` adds ions
    declared by the user, by formula. Raises ``ValueError`` with a plain message."""
    name = text.strip()
    if not name:
        raise ValueError("empty species name")
    known = dict(KNOWN_IONS)
    if extra_ions:
        known.update(extra_ions)
    if name in known:
        return Species.of_ion(known[name])
    # longest formula first, so that 'SO42-' is SO4 with charge 2-, not 'SO' with 42-
    for formula in sorted(known, key=len, reverse=True):
        charge = _CHARGE_TEXT.match(name[len(formula):]) if name.startswith(formula) else None
        if charge:
            ion = known[formula]
            written = _written_charge(charge)
            if written != ion.charge:
                raise ValueError(f"{formula} is known with charge {ion.charge:+d}, not {written:+d}")
            return Species.of_ion(ion)
    charged = re.match(r"^([A-Za-z][A-Za-z0-9()]*?)(\d*[+-]+\d*)$", name)
    if charged:
        raise ValueError(f"unknown ion {charged.group(1)!r} (saltbench knows "
                         f"{', '.join(sorted(known))})")
    try:
        return Species.of_salt(parse_formula(name, extra_ions))
    except ValueError:
        raise ValueError(f"unknown species {name!r}: expected a known ion (e.g. Na+, Ca+2, SO4-2) "
                         "or a neutral salt of known ions (e.g. NaCl, MgSO4)") from None
