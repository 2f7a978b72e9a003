"""Electrode readings: ion-selective electrode calibrations with their samples (``kind:
electrode``) and pH calibrations with standard buffers (``kind: ph_buffers``).

Both are raw-readings files (``# saltbench readings 1``), laid out in DEVELOPERS.md, "Electrode
calibrations". Each standard's composition is a solution in the inline form (salts only, items
separated by ``;`` inside the cell, or the cell quoted), with the header's ``background`` (an
ionic-strength adjuster) added to every row. Readings are converted to SI (V, K, mol/kg); every
error names the file, the line and the field.
"""

from __future__ import annotations

import hashlib
import json
import re
from dataclasses import dataclass
from pathlib import Path

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.chemistry.ions import Ion
from saltbench.chemistry.species import parse_species
from saltbench.curation.blocks import TYPED_FROM_SOURCE, Block, parse_block, parse_float
from saltbench.curation.readings import MAGIC, VOLTS, parse_quantity
from saltbench.curation.solutions import parse_inline
from saltbench.curation.units import parse_temperature
from saltbench.errors import InputFileError

ELECTRODE_KINDS = ("electrode", "ph_buffers")
ROLES = {"electrode": ("standard", "separate", "sample"), "ph_buffers": ("buffer", "sample")}
COMMON = {"kind", "id", "temperature", "u_temperature", "reference_electrode", "source", "typed",
          "note", "u_emf", "electrode"}
FIELDS = {"electrode": COMMON | {"ion", "background", "interferents"}, "ph_buffers": COMMON}
EMF_COLUMNS = {"emf_v": 1.0, "emf_mv": 1e-3}
TYPED_FORMS = {"measured ": "measured <by whom, where>", "invented ": "invented <for what>",
               **TYPED_FROM_SOURCE}
KELVIN = {"K": 1.0}
#: mol/kg: the Bates-Guggenheim convention's limit (Bates and Guggenheim 1960; Buck et al. 2002),
#: the same figure as saltbench.measurements.conventions.BATES_GUGGENHEIM_MAX_I (a test holds them
#: equal; curation sits below measurements and cannot import it)
BATES_GUGGENHEIM_MAX_I = 0.1
_KIND_LINE = re.compile(r"^#\s*kind\s*:\s*(\S+)\s*$", re.IGNORECASE)

Salts = tuple[tuple[Electrolyte, float], ...]


def electrode_kind(text: str) -> str | None:
    """The electrode kind a readings file declares in its header, or None for other kinds."""
    for line in text.splitlines()[1:]:
        if not line.startswith("#"):
            break
        m = _KIND_LINE.match(line.strip())
        if m:
            return m.group(1) if m.group(1) in ELECTRODE_KINDS else None
    return None


@dataclass(frozen=True)
class ElectrodeRow:
    """One reading: a standard, a separate solution of interferents, a buffer or a sample."""

    line: int
    role: str
    label: str
    salts: Salts  # the row's own salts (mol/kg), background not included
    emf: float  # V
    u_emf: float  # V
    temperature_k: float
    ph: float | None = None  # a buffer's certificate value
    u_ph: float | None = None
    # a buffer's, from its certificate, or a sample's as measured (adjuster included), mol/kg
    ionic_strength: float | None = None


@dataclass(frozen=True)
class ElectrodeSet:
    """An electrode calibration (or pH calibration) as read, in SI units."""

    key: str
    path: str
    kind: str
    temperature_k: float
    u_temperature_k: float
    reference_electrode: str
    electrode: str
    source: str
    typed: str
    note: str
    rows: tuple[ElectrodeRow, ...]
    ion: Ion | None = None  # the primary ion (kind electrode)
    interferents: tuple[Ion, ...] = ()
    background: Salts = ()
    background_text: str = ""
    source_line: int | None = None

    @property
    def from_memory(self) -> bool:
        return self.typed.lower().startswith("from memory of")

    @property
    def invented(self) -> bool:
        return self.typed.lower().startswith("invented")

    def of_role(self, role: str) -> tuple[ElectrodeRow, ...]:
        return tuple(r for r in self.rows if r.role == role)

    def composition(self, row: ElectrodeRow) -> list[tuple[Electrolyte, float]]:
        """The row's salts plus the background, one entry per salt (amounts added up)."""
        total: dict[str, float] = {}
        salts: dict[str, Electrolyte] = {}
        for e, m in (*row.salts, *self.background):
            total[e.name] = total.get(e.name, 0.0) + m
            salts[e.name] = e
        return [(salts[n], m) for n, m in total.items() if m > 0]

    @property
    def primary_salt(self) -> Electrolyte | None:
        """The salt that carries the primary ion in the standards (one for all of them)."""
        if self.ion is None:
            return None
        for r in self.of_role("standard"):
            for e, _ in r.salts:
                if self.ion.name in (e.cation.name, e.anion.name):
                    return e
        return None

    def content_hash(self) -> str:
        doc = {
            "kind": self.kind, "temperature_k": round(self.temperature_k, 6),
            "u_temperature_k": self.u_temperature_k, "reference_electrode": self.reference_electrode,
            "electrode": self.electrode, "source": self.source, "typed": self.typed, "note": self.note,
            "ion": self.ion.name if self.ion else None,
            "interferents": [i.name for i in self.interferents],
            "background": [[e.name, m] for e, m in self.background],
            "rows": [[r.role, r.label, [[e.name, m] for e, m in r.salts], r.emf, r.u_emf,
                      round(r.temperature_k, 6), r.ph, r.u_ph, r.ionic_strength] for r in self.rows],
        }
        return hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest()


def _ion(path: str, line: int | None, name: str, text: str) -> Ion:
    try:
        sp = parse_species(text)
    except ValueError as exc:
        raise InputFileError(path, line, name, str(exc)) from None
    if sp.is_salt:
        raise InputFileError(path, line, name, f"{text!r} is a salt; name an ion (e.g. NO3-, F-, K+)")
    return sp.parts[0][0]


def parse_salts(path: str, line: int | None, name: str, text: str, temperature_k: float) -> Salts:
    """``NaNO3=0.001;Na2SO4=0.04`` (the inline form, ``;`` or ``,`` between items) -> salts with
    their molalities in mol/kg. Ions are refused: a standard is made up from salts."""
    try:
        record = parse_inline(text.replace(";", ","), temperature_k=temperature_k)
    except InputFileError as exc:
        item = f" (item {exc.line})" if exc.line else ""
        raise InputFileError(path, line, name, f"{exc.problem}{item}") from None
    out = []
    for sp, m in zip(record.species, record.species_molality):
        if sp.salt is None:
            raise InputFileError(path, line, name, f"{sp.name} is an ion: write the salt the "
                                 "solution was made up from (e.g. NaNO3=0.001)")
        out.append((sp.salt, float(m)))
    return tuple(out)


def _has_ion(salts: Salts, ion: Ion) -> bool:
    return any(ion.name in (e.cation.name, e.anion.name) for e, m in salts if m > 0)


def _temperature(path: str, line: int, text: str) -> float:
    from saltbench.water.properties import T_MAX, T_MIN

    try:
        value = parse_temperature(text)
    except ValueError as exc:
        raise InputFileError(path, line, "temperature", str(exc)) from None
    if not (T_MIN <= value <= T_MAX):
        raise InputFileError(path, line, "temperature", f"{value:g} K is outside {T_MIN:g}-{T_MAX:g} K")
    return value


def read_electrode_readings(path: str | Path, text: str | None = None) -> ElectrodeSet:
    """Read and validate an electrode or pH-buffer readings file (FILE:LINE: field errors)."""
    b = parse_block(path, MAGIC, text=text)
    p = b.path
    kind = b.require("kind").value
    if kind not in ELECTRODE_KINDS:
        raise b.error("kind", f"not an electrode kind ({', '.join(ELECTRODE_KINDS)})")
    b.check_fields(FIELDS[kind], f" for {kind} readings")
    t = b.temperature_k()
    u_t = 0.0
    if b.get("u_temperature"):
        u_t = parse_quantity(p, b.header["u_temperature"].line, "u_temperature",
                             b.get("u_temperature") or "", KELVIN)
        if u_t < 0:
            raise b.error("u_temperature", "must not be negative")
    reference = b.require("reference_electrode").value
    source = b.require("source")
    typed = b.typed(TYPED_FORMS)
    u_header = None
    if b.get("u_emf"):
        u_header = parse_quantity(p, b.header["u_emf"].line, "u_emf", b.get("u_emf") or "", VOLTS)
        if u_header <= 0:
            raise b.error("u_emf", "must be positive")

    ion: Ion | None = None
    interferents: tuple[Ion, ...] = ()
    background: Salts = ()
    if kind == "electrode":
        f = b.require("ion")
        ion = _ion(p, f.line, "ion", f.value)
        if b.get("interferents"):
            fi = b.header["interferents"]
            names = [x.strip() for x in fi.value.split(",") if x.strip()]
            interferents = tuple(_ion(p, fi.line, "interferents", x) for x in names)
            if any(i.name == ion.name for i in interferents):
                raise InputFileError(p, fi.line, "interferents", f"{ion.name} is the primary ion")
            if len({i.name for i in interferents}) != len(interferents):
                raise InputFileError(p, fi.line, "interferents", "an ion is named twice")
        if b.get("background"):
            fb = b.header["background"]
            background = parse_salts(p, fb.line, "background", fb.value, t)
            if _has_ion(background, ion):
                raise InputFileError(p, fb.line, "background", f"the background holds the primary "
                                     f"ion {ion.name}: the standards' levels would not be known")

    # -- the table ----------------------------------------------------------------------------
    emf_cols = [c for c in b.columns if c in EMF_COLUMNS]
    if len(emf_cols) != 1:
        raise InputFileError(p, b.columns_line, None, "expected exactly one potential column, emf_mv "
                             f"or emf_v (found {', '.join(b.columns)})")
    ecol = emf_cols[0]
    factor = EMF_COLUMNS[ecol]
    u_col = f"u_{ecol}"
    wanted = {"role", ecol}
    allowed = wanted | {u_col, "label", "temperature"} | (
        {"solution", "ionic_strength"} if kind == "electrode" else {"ph", "u_ph", "ionic_strength"})
    for c in b.columns:
        if c not in allowed:
            raise InputFileError(p, b.columns_line, c, f"unknown column for {kind} readings "
                                 f"(allowed: {', '.join(sorted(allowed))})")
    need = wanted | ({"solution"} if kind == "electrode" else {"ph"})
    for c in sorted(need - set(b.columns)):
        raise InputFileError(p, b.columns_line, c, f"missing column (columns: {', '.join(b.columns)})")
    if u_col not in b.columns and u_header is None:
        raise InputFileError(p, b.columns_line - 1, "u_emf", "missing: give the standard uncertainty "
                             f"of each reading in the header ('u_emf: 0.2 mV') or a column {u_col}")
    if not b.rows:
        raise InputFileError(p, b.columns_line, None, "the table has no rows")

    rows = []
    for n, row in b.rows:
        role = row["role"].lower()
        if role not in ROLES[kind]:
            raise InputFileError(p, n, "role", f"unknown role {row['role']!r} for {kind} readings "
                                 f"(known: {', '.join(ROLES[kind])})")
        emf = parse_float(p, n, ecol, row[ecol]) * factor
        if abs(emf) >= 5.0:
            raise InputFileError(p, n, ecol, f"{row[ecol]} is not an electrode potential (check the "
                                 "unit in the column name)")
        u = u_header
        if row.get(u_col):
            u = parse_float(p, n, u_col, row[u_col]) * factor
            if u <= 0:
                raise InputFileError(p, n, u_col, "must be positive")
        if u is None:
            raise InputFileError(p, n, u_col, "empty, and no 'u_emf' in the header")
        t_row = _temperature(p, n, row["temperature"]) if row.get("temperature") else t
        if t_row != t and role != "sample":
            raise InputFileError(p, n, "temperature", "only samples may be read at a temperature of "
                                 "their own; a calibration is at the header's temperature")
        label = row.get("label", "") or ""
        if kind == "electrode":
            assert ion is not None
            text_ = row.get("solution", "")
            salts: Salts = parse_salts(p, n, "solution", text_, t) if text_ else ()
            if role == "standard":
                if not _has_ion(salts, ion):
                    raise InputFileError(p, n, "solution", f"a standard must hold the primary ion "
                                         f"{ion.name}")
            elif _has_ion(salts, ion):
                raise InputFileError(p, n, "solution", f"a {role} row must not hold the primary ion "
                                     f"{ion.name} (a sample's is what is measured; give its other "
                                     "components only)")
            if role == "separate" and not any(_has_ion(salts, i) for i in interferents):
                raise InputFileError(p, n, "solution", "a separate solution must hold one of the "
                                     "interferents named in the header")
            i_s = None
            if row.get("ionic_strength"):
                if role != "sample" or salts:
                    raise InputFileError(p, n, "ionic_strength", "only a sample whose salts are not "
                                         "given may state its ionic strength instead")
                i_s = parse_float(p, n, "ionic_strength", row["ionic_strength"])
                if i_s <= 0:
                    raise InputFileError(p, n, "ionic_strength", "must be positive (mol/kg)")
            rows.append(ElectrodeRow(n, role, label, salts, emf, float(u), t_row, ionic_strength=i_s))
        else:
            ph = u_ph = i_s = None
            if role == "buffer":
                if not row.get("ph"):
                    raise InputFileError(p, n, "ph", "a buffer needs its pH value from its certificate")
                ph = parse_float(p, n, "ph", row["ph"])
                if not (0.0 < ph < 14.0):
                    raise InputFileError(p, n, "ph", f"{row['ph']} is not a buffer pH")
                u_ph = parse_float(p, n, "u_ph", row["u_ph"]) if row.get("u_ph") else 0.0
                if u_ph < 0:
                    raise InputFileError(p, n, "u_ph", "must not be negative")
                if row.get("ionic_strength"):
                    i_s = parse_float(p, n, "ionic_strength", row["ionic_strength"])
                    if i_s < 0:
                        raise InputFileError(p, n, "ionic_strength", "must not be negative")
                    if i_s > BATES_GUGGENHEIM_MAX_I:
                        raise InputFileError(p, n, "ionic_strength", f"{i_s:g} mol/kg is above the "
                                             f"{BATES_GUGGENHEIM_MAX_I:g} mol/kg to which the "
                                             "Bates-Guggenheim convention behind buffer pH values "
                                             "is defined")
            elif row.get("ph"):
                raise InputFileError(p, n, "ph", "a sample's pH is what is measured: leave it empty")
            rows.append(ElectrodeRow(n, role, label, (), emf, float(u), t_row, ph, u_ph, i_s))

    calib_role = "standard" if kind == "electrode" else "buffer"
    n_cal = sum(r.role == calib_role for r in rows)
    least = 3 if kind == "electrode" else 2
    if n_cal < least:
        raise InputFileError(p, b.columns_line, "role", f"{n_cal} {calib_role} rows; a calibration "
                             f"needs at least {least}")
    result = ElectrodeSet(
        key=b.get("id") or Path(p).name.removesuffix(".csv"), path=p, kind=kind, temperature_k=t,
        u_temperature_k=u_t, reference_electrode=reference, electrode=b.get("electrode", "") or "",
        source=source.value, typed=typed.value, note=b.get("note", "") or "", rows=tuple(rows),
        ion=ion, interferents=interferents, background=background,
        background_text=b.get("background", "") or "", source_line=source.line)
    if kind == "electrode":
        _check_primary_salt(result, b)
    return result


def _check_primary_salt(s: ElectrodeSet, b: Block) -> None:
    """Every standard carries the primary ion in one and the same salt (a sample's concentration
    is solved for that salt)."""
    assert s.ion is not None
    first = s.primary_salt
    for r in s.of_role("standard"):
        carriers = {e.name for e, m in r.salts if s.ion.name in (e.cation.name, e.anion.name)}
        if first is None or carriers != {first.name}:
            raise InputFileError(s.path, r.line, "solution", f"every standard must carry "
                                 f"{s.ion.name} in one salt, the same in all ({first.name if first else '?'}); "
                                 f"found {', '.join(sorted(carriers))}")


def salts_to_json(salts: Salts) -> str:
    return json.dumps([[e.name, m] for e, m in salts])


def salts_from_json(text: str) -> Salts:
    return tuple((parse_formula(n), float(m)) for n, m in json.loads(text))

