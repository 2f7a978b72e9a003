"""Solution files, the inline form of the command line, and named reference compositions
(formats in DEVELOPERS.md, "Describing a solution").

Each reader returns a :class:`saltbench.chemistry.description.SolutionRecord`; every bad input is
an InputFileError naming FILE:LINE: field (for the inline form, ``inline solution:N`` names its
N-th comma-separated item).

A density may be stated, or estimated by one method: the density of pure water at the
solution's temperature (IAPWS-95, Wagner and Pruss, J. Phys. Chem. Ref. Data 31, 387 (2002),
through :mod:`saltbench.water`). It is good for dilute waters: a salt solution is denser than
water by about 0.7 g/L per g/L of dissolved salt (from memory of the CRC Handbook table of NaCl
solution densities, e.g. 1 % NaCl at 20 °C: 1.0053 against 0.9982 kg/L), so the estimate
understates the water mass per litre, and overstates molalities, by about 0.07 % per g/L of
dissolved solids. Its stated range is up to 1 g/L of dissolved solids; above it the record
carries a caution to give a measured density.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from saltbench.chemistry import amounts as amt
from saltbench.chemistry.description import DENSITY_ESTIMATED, DENSITY_NOT_NEEDED, DENSITY_STATED, SolutionRecord
from saltbench.chemistry.ions import Ion
from saltbench.chemistry.seawater import reference_seawater
from saltbench.chemistry.solution import STANDARD_TEMPERATURE_K
from saltbench.chemistry.species import Species, parse_species
from saltbench.curation.blocks import TYPED_FROM_SOURCE, Block, parse_block
from saltbench.curation.datasets import _declared_ions
from saltbench.curation.units import parse_temperature
from saltbench.errors import InputFileError, UserError
from saltbench.water.properties import T_MAX, T_MIN, water_state

MAGIC = "saltbench solution"
KNOWN_FIELDS = {"name", "basis", "density", "temperature", "source", "typed", "note", "cation", "anion"}
TYPED_FORMS = {**TYPED_FROM_SOURCE, "measured ": "measured <by whom, where>",
               "invented ": "invented <for what>"}
INLINE = "inline solution"

DENSITY_METHOD = ("pure-water density at the solution's temperature (IAPWS-95, Wagner and Pruss 2002), "
                  "valid up to 1 g/L of dissolved solids")
#: g/L of dissolved solids up to which the pure-water estimate is stated to hold (module docstring).
ESTIMATE_LIMIT_G_PER_L = 1.0
#: kg/L; a stated density outside this range is refused as a slip (water at 300 °C is 0.71 kg/L,
#: the densest brines about 1.5-1.9 kg/L; common practice, no source).
DENSITY_RANGE = (0.5, 3.0)

_DENSITY_UNITS = {"kg/l": 1.0, "g/ml": 1.0, "g/cm3": 1.0, "kg/m3": 1e-3, "g/l": 1e-3}
_NUMBER_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S.*?)?\s*$")


@dataclass(frozen=True)
class DensitySpec:
    """What a description said about density: a value in kg/L, or ``estimate``."""

    value: float | None
    estimate: bool


def parse_density(text: str) -> DensitySpec:
    """'1.0245 kg/L' (also g/mL, g/cm3, kg/m3, g/L) or 'estimate'. Raises ValueError."""
    if text.strip().lower() == "estimate":
        return DensitySpec(None, True)
    m = _NUMBER_UNIT.match(text)
    unit = (m.group(2) or "").replace(" ", "").replace("³", "3").lower() if m else ""
    if not m or unit not in _DENSITY_UNITS:
        raise ValueError(f"expected a density with its unit (e.g. '1.0245 kg/L', '1024.5 kg/m3') or "
                         f"'estimate', found {text!r}")
    value = float(m.group(1)) * _DENSITY_UNITS[unit]
    lo, hi = DENSITY_RANGE
    if not (lo <= value <= hi):
        raise ValueError(f"{value:g} kg/L is not a plausible solution density ({lo:g}-{hi:g} kg/L)")
    return DensitySpec(value, False)


def estimated_density(temperature_k: float) -> float:
    """The stated estimate of a dilute solution's density, kg/L: pure water at ``temperature_k``."""
    return water_state(temperature_k).density / 1000.0


def _parse_amount(text: str) -> tuple[float, str | None]:
    m = _NUMBER_UNIT.match(text)
    if not m:
        raise ValueError(f"not a number: {text!r}")
    value = float(m.group(1))
    if not np.isfinite(value):
        raise ValueError(f"not a finite number: {text!r}")
    if value < 0:
        raise ValueError(f"negative amount {value:g}")
    return value, m.group(2)


def _build(name: str, species: list[Species], values: list[float], unit: amt.Basis,
           temperature_k: float, density: DensitySpec | None, *, source: str, typed: str, note: str,
           where: tuple[str, int | None, str]) -> SolutionRecord:
    """The record, with the density stated, estimated or not needed. ``where`` names the place
    to blame (path, line, field) when the amounts cannot be resolved."""
    value: float | None = None
    origin, method, cautions = DENSITY_NOT_NEEDED, "", []
    if density is not None and density.value is not None:
        value, origin = density.value, DENSITY_STATED
    elif density is not None and density.estimate and unit.needs_density:
        value, origin, method = estimated_density(temperature_k), DENSITY_ESTIMATED, DENSITY_METHOD
        mm = np.array([s.molar_mass for s in species])
        dissolved = float((amt.moles_or_mass(np.array(values), unit, mm) @ mm)[0]) * 1000.0  # g/L
        if dissolved > ESTIMATE_LIMIT_G_PER_L:
            cautions.append(f"the density was estimated as that of pure water, stated for up to "
                            f"{ESTIMATE_LIMIT_G_PER_L:g} g/L of dissolved solids; this solution has "
                            f"{dissolved:.3g} g/L, so molalities may be about {0.07 * dissolved:.2g} % "
                            "too high: give a measured density")
    try:
        return SolutionRecord.resolve(name, species, values, unit.unit, temperature_k=temperature_k,
                                      density_kg_per_l=value, density_origin=origin,
                                      density_method=method, source=source, typed=typed, note=note,
                                      cautions=cautions)
    except UserError as exc:
        message = str(exc).removeprefix(f"solution {name}: ")
        raise InputFileError(where[0], where[1], where[2], message) from None


# -- files ----------------------------------------------------------------------------------------
def read_solution_file(path: str | Path, text: str | None = None) -> SolutionRecord:
    """Read one solution file (format in DEVELOPERS.md). Raises InputFileError naming FILE:LINE: field."""
    b = parse_block(path, MAGIC, multi=frozenset({"cation", "anion"}), text=text)
    p = b.path
    b.check_fields(KNOWN_FIELDS)
    declared = _declared_ions(b)
    if b.columns != ["species", "amount"]:
        raise InputFileError(p, b.columns_line, None, f"expected the columns 'species,amount', found "
                             f"{','.join(b.columns)!r}")
    unit = _basis(b)
    temperature_k = b.temperature_k()
    density = _density(b, unit)
    typed = b.typed(TYPED_FORMS).value
    source = b.require("source").value
    name = b.get("name") or Path(p).stem
    species: list[Species] = []
    values: list[float] = []
    seen: dict[str, int] = {}
    for n, row in b.rows:
        sp = _species(row["species"], declared, p, n)
        if sp.name in seen:
            raise InputFileError(p, n, "species", f"{sp.name} is named twice (also on line {seen[sp.name]})")
        seen[sp.name] = n
        try:
            value, row_unit = _parse_amount(row["amount"])
        except ValueError as exc:
            raise InputFileError(p, n, "amount", str(exc)) from None
        if row_unit:
            raise InputFileError(p, n, "amount", f"write the number only; the unit is the header's "
                                 f"basis ({unit.unit})")
        species.append(sp)
        values.append(value)
    if not species:
        raise InputFileError(p, b.columns_line, None, "the table has no rows")
    return _build(name, species, values, unit, temperature_k, density, source=source, typed=typed,
                  note=b.get("note", "") or "", where=(p, b.columns_line, "amount"))


def _basis(b: Block) -> amt.Basis:
    bf = b.require("basis")
    try:
        return amt.basis(bf.value)
    except UserError:
        raise InputFileError(b.path, bf.line, "basis", f"unknown unit {bf.value!r} (known: "
                             f"{', '.join(amt.BASES)})") from None


def _density(b: Block, unit: amt.Basis) -> DensitySpec | None:
    df = b.header.get("density")
    if df is None or not df.value:
        if unit.needs_density:
            raise InputFileError(b.path, df.line if df else b.columns_line - 1, "density",
                                 f"amounts in {unit.unit} need the solution's density at its "
                                 "temperature: give e.g. 'density: 1.0245 kg/L', or 'density: estimate' "
                                 f"({DENSITY_METHOD})")
        return None
    try:
        return parse_density(df.value)
    except ValueError as exc:
        raise InputFileError(b.path, df.line, "density", str(exc)) from None


def _species(text: str, declared: dict[str, Ion], path: str, line: int | None) -> Species:
    if not text:
        raise InputFileError(path, line, "species", "empty")
    try:
        return parse_species(text, declared)
    except ValueError as exc:
        raise InputFileError(path, line, "species", str(exc)) from None


def format_solution_file(record: SolutionRecord) -> str:
    """A record in the file format :func:`read_solution_file` reads, amounts written in full
    (``repr``), so that reading it back gives the very same numbers. Ions saltbench does not
    know are declared in the header."""
    one_line = lambda text: " ".join(str(text).split())
    from saltbench.chemistry.ions import KNOWN_IONS

    head = ["# saltbench solution 1", f"# name: {one_line(record.name)}", f"# basis: {record.unit}",
            f"# temperature: {record.temperature_k!r} K"]
    if record.density_origin == DENSITY_STATED and record.density_kg_per_l is not None:
        head.append(f"# density: {record.density_kg_per_l!r} kg/L")
    elif record.density_origin == DENSITY_ESTIMATED:
        head.append("# density: estimate")
    for ion in record.ions:
        if KNOWN_IONS.get(ion.formula) != ion:
            role = "cation" if ion.charge > 0 else "anion"
            head.append(f"# {role}: {ion.formula}, charge {ion.charge:+d}, molar mass "
                        f"{ion.molar_mass * 1000.0!r} g/mol")
    head += [f"# source: {one_line(record.source) or '-'}", f"# typed: {one_line(record.typed)}"]
    notes = [record.note]
    if record.adjustment is not None:
        a = record.adjustment
        notes.append(f"charge balance closed with {a.ion} (+{a.amount:.6g} {a.unit}; it stood at "
                     f"{a.percent_before:+.3f} %)")
    note = "; ".join(one_line(n) for n in notes if n)
    if note:
        head.append(f"# note: {note}")
    rows = ["species,amount"] + [f"{s.name},{a!r}" for s, a in zip(record.species, record.amounts.tolist())]
    return "\n".join(head + rows) + "\n"


# -- the inline form ------------------------------------------------------------------------------
def parse_inline(text: str, *, temperature_k: float | None = None, density: str | None = None,
                 name: str | None = None) -> SolutionRecord:
    """Read the command line's short form (DEVELOPERS.md, "Describing a solution"):

        ITEM[,ITEM...]   ITEM = SPECIES=AMOUNT[ UNIT] | temperature=T | density=D

    e.g. ``NaCl=0.5,MgSO4=0.02`` (mol/kg), ``Na+=10.5 g/kg,Cl-=16.2 g/kg`` or
    ``Na=230 mg/L,Cl=350 mg/L,density=estimate``. One unit for all amounts (written on any item;
    mol/kg when none is). ``temperature_k`` and ``density`` (text as in a file) are used when the
    text does not give them. A named reference composition is written ``seawater``,
    ``seawater S=40``, ``seawater x2`` or ``seawater S=35 x2`` (see :func:`named_reference`)."""
    spec = text.strip()
    if not spec:
        raise InputFileError(INLINE, None, None, "empty: expected e.g. 'NaCl=0.5,MgSO4=0.02'")
    if spec.split()[0].lower() in NAMED_REFERENCES and "=" not in spec.split()[0]:
        return named_reference(spec, temperature_k=temperature_k)
    species: list[Species] = []
    values: list[float] = []
    seen: dict[str, int] = {}
    unit: tuple[amt.Basis, int] | None = None
    temperature: tuple[float, int] | None = None
    density_spec: DensitySpec | None = None
    for k, item in enumerate(spec.split(","), start=1):
        if "=" not in item:
            raise InputFileError(INLINE, k, None, f"expected SPECIES=AMOUNT, found {item.strip()!r}")
        key, value_text = (part.strip() for part in item.split("=", 1))
        if key.lower() == "temperature":
            if temperature is not None:
                raise InputFileError(INLINE, k, "temperature", f"given twice (also item {temperature[1]})")
            temperature = (_inline_temperature(value_text, k), k)
            continue
        if key.lower() == "density":
            if density_spec is not None:
                raise InputFileError(INLINE, k, "density", "given twice")
            try:
                density_spec = parse_density(value_text)
            except ValueError as exc:
                raise InputFileError(INLINE, k, "density", str(exc)) from None
            continue
        sp = _species(key, {}, INLINE, k)
        if sp.name in seen:
            raise InputFileError(INLINE, k, "species", f"{sp.name} is named twice (also item {seen[sp.name]})")
        seen[sp.name] = k
        try:
            value, unit_text = _parse_amount(value_text)
        except ValueError as exc:
            raise InputFileError(INLINE, k, "amount", str(exc)) from None
        if unit_text:
            try:
                this = amt.basis(unit_text)
            except UserError:
                raise InputFileError(INLINE, k, "unit", f"unknown unit {unit_text!r} (known: "
                                     f"{', '.join(amt.BASES)})") from None
            if unit is not None and unit[0] != this:
                raise InputFileError(INLINE, k, "unit", f"{this.unit} differs from {unit[0].unit} "
                                     f"(item {unit[1]}): give every amount in one unit")
            unit = unit or (this, k)
        species.append(sp)
        values.append(value)
    if not species:
        raise InputFileError(INLINE, None, "species", "names no species")
    basis = unit[0] if unit else amt.MOLALITY
    t = temperature[0] if temperature else (STANDARD_TEMPERATURE_K if temperature_k is None else temperature_k)
    if density_spec is None and density is not None:
        try:
            density_spec = parse_density(density)
        except ValueError as exc:
            raise InputFileError(INLINE, None, "density", str(exc)) from None
    if basis.needs_density and density_spec is None:
        raise InputFileError(INLINE, None, "density", f"amounts in {basis.unit} need the solution's "
                             "density: add 'density=1.0245 kg/L', or 'density=estimate' "
                             f"({DENSITY_METHOD})")
    return _build(name or spec, species, values, basis, t, density_spec, source="inline",
                  typed="measured by the user, as typed on the command line", note="",
                  where=(INLINE, None, "amount"))


def _inline_temperature(text: str, item: int) -> float:
    try:
        value = parse_temperature(text)
    except ValueError as exc:
        raise InputFileError(INLINE, item, "temperature", str(exc)) from None
    if not (T_MIN <= value <= T_MAX):
        raise InputFileError(INLINE, item, "temperature", f"{value:g} K is outside {T_MIN:g}-{T_MAX:g} K")
    return value


# -- named reference compositions -----------------------------------------------------------------
#: Names of the reference compositions an open standard defines, and what defines them.
NAMED_REFERENCES = {"seawater": "reference composition of standard seawater (Millero et al. 2008)"}
_REFERENCE_WORD = re.compile(r"^(?:S=(?P<s>[0-9.eE+-]+)|x(?P<x>[0-9.eE+-]+))$")


def named_reference(text: str, *, temperature_k: float | None = None) -> SolutionRecord:
    """``seawater [S=<practical salinity>] [x<concentration factor>]``: the reference
    composition of standard seawater at that salinity (35 when not given), concentrated on a
    water basis by the factor (1 when not given)."""
    words = text.split()
    if not words or words[0].lower() not in NAMED_REFERENCES:
        raise InputFileError(INLINE, None, "name", f"unknown reference composition {text!r} "
                             f"(known: {', '.join(NAMED_REFERENCES)})")
    salinity, factor = 35.0, 1.0
    for k, word in enumerate(words[1:], start=2):
        m = _REFERENCE_WORD.match(word)
        try:
            if m and m.group("s"):
                salinity = float(m.group("s"))
            elif m and m.group("x"):
                factor = float(m.group("x"))
            else:
                raise ValueError
            if not (np.isfinite(salinity) and np.isfinite(factor)):
                raise ValueError
        except ValueError:
            raise InputFileError(INLINE, k, "reference", f"expected 'S=<practical salinity>' or "
                                 f"'x<concentration factor>', found {word!r}") from None
    try:
        return reference_seawater(salinity, concentration_factor=factor,
                                  temperature_k=STANDARD_TEMPERATURE_K if temperature_k is None else temperature_k)
    except UserError as exc:
        raise InputFileError(INLINE, None, "reference", str(exc)) from None


def read_solution(spec: str, *, temperature_k: float | None = None, density: str | None = None) -> SolutionRecord:
    """A solution file when ``spec`` names one (an existing file, or a name ending in .csv),
    otherwise the inline form or a named reference composition."""
    try:
        is_file = Path(spec).is_file()
    except OSError:  # an inline text too long to be a file name
        is_file = False
    if is_file or spec.lower().endswith(".csv"):
        return read_solution_file(spec)
    return parse_inline(spec, temperature_k=temperature_k, density=density)
