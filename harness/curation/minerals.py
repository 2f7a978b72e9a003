"""Solubility-product files (format in DEVELOPERS.md, "Solubility products"): one table, one
source, one temperature, a row per mineral.

The bundled tables are every ``refdata/minerals/*.csv``: the handbook's
``ksp-crc-87.csv``, written by ``refdata/tools/transcribe_ksp.py``, first, then the few minerals
it lacks, typed from memory of the papers named in each file (``ksp-*-remembered.csv``); their
citations are in ``minerals.sources.txt`` beside them. :class:`MineralCatalogue` looks a mineral
up across them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.chemistry.ions import KNOWN_IONS, Ion
from saltbench.chemistry.minerals import Mineral
from saltbench.curation.bibliography import read_bibliography
from saltbench.curation.blocks import TYPED_FROM_SOURCE, parse_block, parse_float
from saltbench.errors import InputFileError, UserError

MAGIC = "saltbench minerals"
KNOWN_FIELDS = {"source", "table", "temperature", "typed", "note"}
COLUMNS = ["name", "mineral", "formula", "cation", "nu_cation", "anion", "nu_anion", "water", "ksp",
           "log10_ksp"]
#: log10_ksp must equal log10(ksp) to its four printed decimals (half a unit of the last one).
LOG_TOLERANCE = 0.5e-4 + 1e-12
BUNDLED = "ksp-crc-87.csv"  # the transcribed handbook table; read before the others
#: Mineral names a user types for compounds of one common solid form at 25 °C (common practice,
#: no source). Not aliased: CaCO3 (calcite or aragonite: the table does not say) and MgCO3 (its
#: printed Ksp is far above magnesite's, so it is not that mineral).
ALIASES = {"barite": "BaSO4", "baryte": "BaSO4", "celestite": "SrSO4", "celestine": "SrSO4",
           "fluorite": "CaF2", "witherite": "BaCO3", "strontianite": "SrCO3", "brucite": "Mg(OH)2",
           "portlandite": "Ca(OH)2", "sellaite": "MgF2", "anglesite": "PbSO4", "chlorargyrite": "AgCl"}


@dataclass(frozen=True)
class MineralTable:
    """A read solubility-product file: its minerals and provenance."""

    path: str
    source: str
    citation: str
    table: str
    temperature_k: float
    typed: str
    note: str
    minerals: tuple[Mineral, ...]
    lines: tuple[int, ...] = ()  # each mineral's line in the file

    def find(self, name: str) -> Mineral:
        """A mineral of this table, looked up as :meth:`MineralCatalogue.find` does."""
        return MineralCatalogue((self,)).find(name)


def _ion(path: str, line: int, field: str, text: str, nu_text: str, positive: bool) -> tuple[Ion, int]:
    from saltbench.chemistry.species import parse_species

    try:
        species = parse_species(text)
    except ValueError as exc:
        raise InputFileError(path, line, field, str(exc)) from None
    if species.is_salt or (species.charge > 0) != positive:
        raise InputFileError(path, line, field, f"{text} is not {'a cation' if positive else 'an anion'}")
    try:
        nu = int(nu_text)
    except ValueError:
        raise InputFileError(path, line, f"nu_{field}", f"not a whole number: {nu_text!r}") from None
    if nu < 1:
        raise InputFileError(path, line, f"nu_{field}", "must be at least 1")
    return species.parts[0][0], nu


def read_mineral_file(path: str | Path, sources: dict[str, str] | None = None,
                      text: str | None = None) -> MineralTable:
    """Read one solubility-product file. ``sources`` maps citation keys to citations; when
    given, the file's ``source`` must be one of them. Raises InputFileError naming FILE:LINE: field."""
    b = parse_block(path, MAGIC, text=text)
    p = b.path
    b.check_fields(KNOWN_FIELDS)
    if b.columns != COLUMNS:
        raise InputFileError(p, b.columns_line, None, f"expected the columns {','.join(COLUMNS)!r}")
    source = b.require("source")
    citation = source.value
    if sources is not None:
        if source.value not in sources:
            raise InputFileError(p, source.line, "source", f"unknown citation key {source.value!r}")
        citation = sources[source.value]
    temperature_k = b.temperature_k()
    typed = b.typed(TYPED_FROM_SOURCE).value
    minerals: list[Mineral] = []
    lines: list[int] = []
    seen: dict[str, int] = {}
    for n, row in b.rows:
        name = row["name"]
        if not name:
            raise InputFileError(p, n, "name", "empty")
        for key in {name.lower(), row["mineral"].lower()} - {""}:
            if key in seen:
                raise InputFileError(p, n, "name", f"{key} appears twice (also on line {seen[key]})")
            seen[key] = n
        cation = _ion(p, n, "cation", row["cation"], row["nu_cation"], True)
        anion = _ion(p, n, "anion", row["anion"], row["nu_anion"], False)
        if cation[0].charge * cation[1] + anion[0].charge * anion[1] != 0:
            raise InputFileError(p, n, "nu_anion", "the ions are not electroneutral in these numbers")
        try:
            water = int(row["water"])
        except ValueError:
            raise InputFileError(p, n, "water", f"not a whole number: {row['water']!r}") from None
        if water < 0:
            raise InputFileError(p, n, "water", "must not be negative")
        _check_formula(p, n, row["formula"], cation, anion, water)
        ksp = parse_float(p, n, "ksp", row["ksp"])
        if not (0 < ksp < 1e3):
            raise InputFileError(p, n, "ksp", f"{ksp:g} is not a solubility product (0 < Ksp)")
        log10 = parse_float(p, n, "log10_ksp", row["log10_ksp"])
        if abs(log10 - math.log10(ksp)) > LOG_TOLERANCE:
            raise InputFileError(p, n, "log10_ksp", f"{log10:g} is not log10 of the Ksp {row['ksp']} "
                                 f"({math.log10(ksp):.4f})")
        minerals.append(Mineral(name, row["mineral"], row["formula"], (cation, anion), water,
                                math.log10(ksp), temperature_k, citation))
        lines.append(n)
    if not minerals:
        raise InputFileError(p, b.columns_line, None, "the table has no rows")
    return MineralTable(p, source.value, citation, b.require("table").value, temperature_k, typed,
                        b.get("note", "") or "", tuple(minerals), tuple(lines))


def _check_formula(path: str, line: int, formula: str, cation: tuple[Ion, int], anion: tuple[Ion, int],
                   water: int) -> None:
    """The formula column must say what the ion columns say (X or X(H2O)n)."""
    salt_text = formula
    suffix = f"(H2O){water}"
    if water:
        if not formula.endswith(suffix):
            raise InputFileError(path, line, "formula", f"{formula} does not end in {suffix} "
                                 f"(water column says {water})")
        salt_text = formula[: -len(suffix)]
    try:
        salt = parse_formula(salt_text, {i.formula: i for i, _ in (cation, anion) if i.formula not in KNOWN_IONS})
    except ValueError as exc:
        raise InputFileError(path, line, "formula", str(exc)) from None
    if (salt.cation, salt.nu_cation, salt.anion, salt.nu_anion) != (*cation, *anion):
        raise InputFileError(path, line, "formula", f"{formula} is not {cation[1]} {cation[0].name} + "
                             f"{anion[1]} {anion[0].name}")


@dataclass(frozen=True)
class MineralCatalogue:
    """Several solubility-product tables read together; a mineral's name is unique across them."""

    tables: tuple[MineralTable, ...]

    def __post_init__(self) -> None:
        seen: dict[str, str] = {}
        for table in self.tables:
            for m, line in zip(table.minerals, table.lines or [None] * len(table.minerals)):
                for key in {m.name.lower(), m.mineral.lower()} - {""}:
                    if key in seen:
                        raise InputFileError(table.path, line, "name", f"{key} is also in {seen[key]}")
                    seen[key] = f"{table.path}:{line}"

    @property
    def minerals(self) -> tuple[Mineral, ...]:
        return tuple(m for t in self.tables for m in t.minerals)

    def find(self, name: str) -> Mineral:
        """A mineral by its mineral name or table name (unique across the tables), a mineral
        name of :data:`ALIASES`, or its formula where only one table row has that formula."""
        key = name.strip().lower()
        key = ALIASES.get(key, key).lower()
        for m in self.minerals:
            if key in (m.mineral.lower(), m.name.lower()):
                return m
        by_formula = [(m, t.source) for t in self.tables for m in t.minerals if m.formula.lower() == key]
        if len(by_formula) == 1:
            return by_formula[0][0]
        if by_formula:
            names = "; ".join(f"{m.label} ({source})" for m, source in by_formula)
            raise UserError(f"{name} is more than one mineral here: {names}; name the one you mean")
        known = ", ".join(m.label for m in self.minerals)
        sources = ", ".join(t.source for t in self.tables)
        raise UserError(f"no solubility product for {name!r} in {sources} (known: {known})")


def bundled_minerals() -> MineralCatalogue:
    """The bundled solubility products: the CRC Handbook's table (87th ed.) and the minerals it
    lacks, typed from memory of their papers; citations resolved."""
    root = Path(str(resources.files("saltbench.refdata"))) / "minerals"
    sources = {s.key: s.citation() for s in read_bibliography(root / "minerals.sources.txt")}
    others = sorted(p for p in root.glob("*.csv") if p.name != BUNDLED)
    return MineralCatalogue(tuple(read_mineral_file(p, sources) for p in [root / BUNDLED, *others]))
