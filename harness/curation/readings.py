"""Raw-readings files: instrument readings of one electrolyte, with units and uncertainties.

A ``# field: value`` header block, then CSV (the layout is described in DEVELOPERS.md, "Raw
readings"). Readings are converted to SI on reading (V, Pa, mol/kg); each error names the file,
the line and the field. References to the store (citation key, reference parameter set) are
checked when the file is added.
"""

from __future__ import annotations

import hashlib
import json
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.chemistry.ions import Ion
from saltbench.curation.blocks import TYPED_FROM_SOURCE, Block, parse_block, parse_float
from saltbench.curation.datasets import _declared_ions
from saltbench.curation.reduction_methods import KINDS, default_method, method_for
from saltbench.errors import InputFileError, UserError

MAGIC = "saltbench readings"
COMMON_FIELDS = {"kind", "electrolyte", "temperature", "source", "typed", "method", "note", "id",
                 "cation", "anion", "u_molality"}
KIND_FIELDS = {
    "emf": {"cell", "electrons", "salt_per_reaction", "e_standard", "u_e_standard",
            "extrapolation_up_to", "ion_size", "u_emf", "background"},
    "electrode_calibration": {"ion", "u_emf"},
    "isopiestic": {"reference", "reference_model", "reference_params", "u_reference_molality",
                   "u_reference_osmotic"},
    "water_activity": {"instrument", "u_water_activity"},
    "vapour_pressure": {"saturation_pressure", "u_saturation_pressure", "u_pressure"},
}
# The reading column of each kind, by accepted column name -> (unit printed, factor to SI).
READING_COLUMNS = {
    "emf": {"emf_v": ("V", 1.0), "emf_mv": ("mV", 1e-3)},
    "electrode_calibration": {"emf_v": ("V", 1.0), "emf_mv": ("mV", 1e-3)},
    "isopiestic": {"reference_molality": ("mol/kg", 1.0)},
    "water_activity": {"water_activity": ("", 1.0)},
    "vapour_pressure": {"pressure_pa": ("Pa", 1.0), "pressure_kpa": ("kPa", 1e3)},
}
STORE_COLUMN = {"emf": "emf_v", "electrode_calibration": "emf_v",
                "isopiestic": "reference_molality", "water_activity": "water_activity",
                "vapour_pressure": "pressure_pa"}
# Header uncertainty of the reading: field name and its accepted units (None: dimensionless).
READING_U_FIELD = {"emf": "u_emf", "electrode_calibration": "u_emf",
                   "isopiestic": "u_reference_molality", "water_activity": "u_water_activity",
                   "vapour_pressure": "u_pressure"}
VOLTS = {"V": 1.0, "mV": 1e-3}
PASCALS = {"Pa": 1.0, "kPa": 1e3}
_QUANTITY = re.compile(r"^\s*([-+]?\d+(?:\.\d*)?(?:[eE][-+]?\d+)?)\s*(\S*)\s*$")

# readings are mostly measured: that form is named first
TYPED_FORMS = {"measured ": "measured <by whom, where>", **TYPED_FROM_SOURCE}


@dataclass
class MeasurementSet:
    """Readings of one set in SI units, as read from a file or back from the store."""

    key: str
    path: str
    kind: str
    electrolyte: Electrolyte
    temperature_k: float
    source: str | None
    typed: str
    method: str
    method_version: str
    note: str
    settings: dict[str, Any]  # header values by name (numbers, text, None), converted where used
    molality: np.ndarray  # mol/kg; NaN where a calibration row has none
    u_molality: np.ndarray
    activity: np.ndarray  # calibration standards' activities; NaN otherwise
    reading: np.ndarray  # SI: V, mol/kg (reference molality), 1 (a_w) or Pa
    u_reading: np.ndarray
    printed_unit: str
    lines: list[int]
    declared_ions: dict[str, Ion] = field(default_factory=dict)
    source_line: int | None = None
    # an emf set in a mixture: the background salt's molality per reading (settings["background"]
    # names the salt); None for readings of one electrolyte
    background_molality: np.ndarray | None = None
    # an emf set at several temperatures: each reading's own temperature in K (a ``temperature``
    # column); None where every reading is at ``temperature_k``
    point_temperature: np.ndarray | None = None

    def point_temperatures(self) -> np.ndarray:
        """Each reading's temperature in K: its own, or the header's."""
        if self.point_temperature is None:
            return np.full(self.reading.size, self.temperature_k)
        return self.point_temperature

    @property
    def method_kind(self) -> str:
        """The kind the set's reduction methods belong to ('emf_mixture' for a mixture cell)."""
        return "emf_mixture" if self.background_molality is not None else self.kind

    @property
    def from_memory(self) -> bool:
        return self.typed.lower().startswith("from memory of")

    @property
    def store_column(self) -> str:
        return STORE_COLUMN[self.kind]

    def content_hash(self) -> str:
        """SHA-256 of the meaning of the file (header values and readings in SI), not its layout."""
        def col(a: np.ndarray) -> list[float | None]:
            return [None if not np.isfinite(x) else float(x) for x in a]

        doc = {
            "kind": self.kind, "electrolyte": self.electrolyte.name,
            "temperature_k": round(self.temperature_k, 6), "source": self.source,
            "typed": self.typed, "method": self.method, "method_version": self.method_version,
            "note": self.note, "settings": self.settings,
            "ions": {k: [i.charge, round(i.molar_mass, 9)] for k, i in sorted(self.declared_ions.items())},
            "molality": col(self.molality), "u_molality": col(self.u_molality),
            "activity": col(self.activity), "reading": col(self.reading),
            "u_reading": col(self.u_reading),
        }
        if self.background_molality is not None:  # only then: one-salt hashes stay as they were
            doc["background_molality"] = col(self.background_molality)
        if self.point_temperature is not None:  # likewise
            doc["point_temperature_k"] = [round(float(t), 6) for t in self.point_temperature]
        return hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest()


def parse_quantity(path: str, line: int | None, name: str, text: str,
                   unit_factors: dict[str, float] | None) -> float:
    """'0.02 mV' -> 2e-5 (SI). ``unit_factors=None`` means a plain number (a unit is refused)."""
    m = _QUANTITY.match(text)
    if not m:
        raise InputFileError(path, line, name, f"not a number with a unit: {text!r}")
    value, unit = float(m.group(1)), m.group(2)
    if unit_factors is None:
        if unit:
            raise InputFileError(path, line, name, f"a plain number is expected, found unit {unit!r}")
        return value
    if unit not in unit_factors:
        raise InputFileError(path, line, name, f"give the unit ({', '.join(unit_factors)}), "
                             f"found {text!r}")
    return value * unit_factors[unit]


def _header_quantity(b: Block, name: str, unit_factors: dict[str, float] | None,
                     positive: bool = True) -> float | None:
    f = b.header.get(name)
    if f is None or not f.value:
        return None
    v = parse_quantity(b.path, f.line, name, f.value, unit_factors)
    if positive and v <= 0:
        raise InputFileError(b.path, f.line, name, "must be positive")
    return v


def _relative_or_absolute(b: Block, name: str) -> tuple[float, float]:
    """'0.05 %' -> (0.0005, 0); '0.0001 mol/kg' -> (0, 0.0001); absent -> (0, 0)."""
    f = b.header.get(name)
    if f is None or not f.value:
        return 0.0, 0.0
    m = _QUANTITY.match(f.value)
    if not m or m.group(2) not in ("%", "mol/kg"):
        raise InputFileError(b.path, f.line, name, "expected a relative uncertainty ('0.05 %') or "
                             f"an absolute one ('0.0001 mol/kg'), found {f.value!r}")
    v = float(m.group(1))
    if v < 0:
        raise InputFileError(b.path, f.line, name, "must not be negative")
    return (v / 100.0, 0.0) if m.group(2) == "%" else (0.0, v)


def _emf_settings(b: Block) -> dict[str, object]:
    p = b.path
    cell = b.require("cell").value
    s: dict[str, object] = {"cell": cell}
    if b.get("electrons"):
        f = b.header["electrons"]
        if not re.fullmatch(r"\d+", f.value) or int(f.value) <= 0:
            raise InputFileError(p, f.line, "electrons", f"a positive whole number, found {f.value!r}")
        s["electrons"] = int(f.value)
    spr = _header_quantity(b, "salt_per_reaction", None)
    s["salt_per_reaction"] = 1.0 if spr is None else spr
    e0 = b.get("e_standard", "extrapolate") or "extrapolate"
    if e0.strip().lower() == "extrapolate":
        s["e_standard"] = None
        if b.get("u_e_standard"):
            raise b.error("u_e_standard", "applies only to a given e_standard, not to 'extrapolate'")
    else:
        s["e_standard"] = parse_quantity(p, b.header["e_standard"].line, "e_standard", e0, VOLTS)
        u = _header_quantity(b, "u_e_standard", VOLTS, positive=False)
        if u is not None and u < 0:
            raise b.error("u_e_standard", "must not be negative")
        s["u_e_standard"] = 0.0 if u is None else u
    up_to = _header_quantity(b, "extrapolation_up_to", {"mol/kg": 1.0})
    s["extrapolation_up_to"] = 0.1 if up_to is None else up_to
    a = _header_quantity(b, "ion_size", {"A": 1.0, "Å": 1.0})
    if a is not None and a > 20:
        raise b.error("ion_size", "an ion size above 20 Å is not physical")
    s["ion_size"] = a
    return s


def _background(b: Block, electrolyte: Electrolyte, declared: dict[str, Ion]) -> Electrolyte | None:
    """The background salt of a mixture cell, which must share exactly one ion with the measured
    salt; None for a cell of one electrolyte."""
    f = b.header.get("background")
    if f is None or not f.value:
        return None
    try:
        bg = parse_formula(f.value, declared)
    except ValueError as exc:
        raise InputFileError(b.path, f.line, "background", str(exc)) from None
    same_c, same_a = bg.cation.name == electrolyte.cation.name, bg.anion.name == electrolyte.anion.name
    if same_c and same_a:
        raise InputFileError(b.path, f.line, "background", f"{bg.name} is the measured salt itself")
    if not (same_c or same_a):
        raise InputFileError(b.path, f.line, "background", f"{bg.name} shares no ion with "
                             f"{electrolyte.name}; the cell's electrodes respond to "
                             f"{electrolyte.cation.name} and {electrolyte.anion.name}, so the "
                             f"background must be a salt of one of them")
    return bg


def _isopiestic_settings(b: Block, declared: dict[str, Ion]) -> dict[str, object]:
    ref = b.require("reference")
    try:
        reference = parse_formula(ref.value, declared)
    except ValueError as exc:
        raise InputFileError(b.path, ref.line, "reference", str(exc)) from None
    u_phi = _header_quantity(b, "u_reference_osmotic", None, positive=False)
    if u_phi is not None and u_phi < 0:
        raise b.error("u_reference_osmotic", "must not be negative")
    return {"reference": reference.name, "reference_model": b.require("reference_model").value,
            "reference_params": b.require("reference_params").value,
            "u_reference_osmotic": 0.0 if u_phi is None else u_phi}


def read_readings(path: str | Path, text: str | None = None) -> MeasurementSet:
    """Read and validate one raw-readings file. Raises InputFileError naming file, line, field."""
    b = parse_block(path, MAGIC, multi=frozenset({"cation", "anion"}), text=text)
    p = b.path
    kf = b.require("kind")
    if kf.value not in KINDS:
        raise InputFileError(p, kf.line, "kind", f"unknown kind {kf.value!r} (known: {', '.join(KINDS)})")
    kind = kf.value
    allowed = COMMON_FIELDS | KIND_FIELDS[kind]
    b.check_fields(allowed, f" for {kind} readings")
    declared = _declared_ions(b)
    electrolyte = b.electrolyte(declared)
    temperature_k = b.temperature_k()
    source = b.require("source")
    typed = b.typed(TYPED_FORMS)

    background = None
    if kind == "emf":
        settings = _emf_settings(b)
        background = _background(b, electrolyte, declared)
        if background is not None:
            settings["background"] = background.name
    elif kind == "isopiestic":
        settings = _isopiestic_settings(b, declared)
    elif kind == "electrode_calibration":
        ion = b.require("ion")
        names = {electrolyte.cation.name, electrolyte.anion.name}
        if ion.value not in names:
            raise InputFileError(p, ion.line, "ion", f"{ion.value!r} is not an ion of "
                                 f"{electrolyte.name} (its ions: {', '.join(sorted(names))})")
        charge = (electrolyte.cation if ion.value == electrolyte.cation.name else electrolyte.anion).charge
        settings = {"ion": ion.value, "charge": charge}
    elif kind == "vapour_pressure":
        settings = {"saturation_pressure_pa": _header_quantity(b, "saturation_pressure", PASCALS),
                    "u_saturation_pressure_pa": _header_quantity(b, "u_saturation_pressure",
                                                                 PASCALS, positive=False) or 0.0}
    else:
        settings = {"instrument": b.get("instrument", "") or ""}

    mf = b.header.get("method")
    method_kind = "emf_mixture" if background is not None else kind
    name = mf.value if mf and mf.value else default_method(
        method_kind, kind == "emf" and settings.get("e_standard") is not None)
    try:
        method = method_for(method_kind, name)
    except UserError as exc:
        raise InputFileError(p, mf.line if mf else None, "method", str(exc)) from None
    if method.name in ("nernst-given-e0", "nernst-mixture-given-e0") and settings.get("e_standard") is None:
        raise b.error("method", "nernst-given-e0 needs an e_standard value (in V or mV)")

    # -- the table -------------------------------------------------------------------------
    reading_cols = READING_COLUMNS[kind]
    found = [c for c in b.columns if c in reading_cols]
    if len(found) != 1:
        raise InputFileError(p, b.columns_line, None, f"expected exactly one reading column of "
                             f"{' or '.join(reading_cols)} (found {', '.join(b.columns)})")
    rcol = found[0]
    unit, factor = reading_cols[rcol]
    x_col = "activity" if kind == "electrode_calibration" else "molality"
    if x_col not in b.columns:
        raise InputFileError(p, b.columns_line, None, f"expected a '{x_col}' column "
                             f"(found {', '.join(b.columns)})")
    u_cols = {f"u_{c}": f for c, (_, f) in reading_cols.items()}
    allowed_cols = {x_col, rcol, "u_molality", *u_cols}
    if kind == "electrode_calibration":
        allowed_cols.add("molality")
    if background is not None:
        if "background_molality" not in b.columns:
            raise InputFileError(p, b.columns_line, None, "a cell with a background salt needs a "
                                 f"'background_molality' column (found {', '.join(b.columns)})")
        allowed_cols.add("background_molality")
    with_t = kind == "emf" and "temperature" in b.columns
    if with_t:
        if background is not None:
            raise InputFileError(p, b.columns_line, "temperature", "a cell with a background salt "
                                 "is reduced at one temperature; give one file per temperature")
        allowed_cols.add("temperature")
    for c in b.columns:
        if c not in allowed_cols:
            raise InputFileError(p, b.columns_line, c, f"unknown column for {kind} readings "
                                 f"(allowed: {', '.join(sorted(allowed_cols))})")
    u_col = next((c for c in b.columns if c in u_cols), None)
    u_field = READING_U_FIELD[kind]
    u_units = {"emf": VOLTS, "electrode_calibration": VOLTS, "vapour_pressure": PASCALS}.get(kind)
    if kind == "isopiestic":
        u_header = None
        rel_ref, abs_ref = _relative_or_absolute(b, u_field)
    else:
        u_header = _header_quantity(b, u_field, u_units)
        rel_ref = abs_ref = 0.0
    if u_col is None and u_header is None and rel_ref == abs_ref == 0.0:
        raise InputFileError(p, b.columns_line - 1, u_field, "missing: give the operator's "
                             f"standard uncertainty of each reading in the header ('{u_field}') "
                             "or a column")
    rel_m, abs_m = _relative_or_absolute(b, "u_molality")
    if not b.rows:
        raise InputFileError(p, b.columns_line, None, "the table has no rows")

    xs, ms, ums, rs, urs, lines, bgs, ts = [], [], [], [], [], [], [], []
    seen: dict[float | tuple[float, float], int] = {}
    for n, row in b.rows:
        x = parse_float(p, n, x_col, row[x_col])
        if x <= 0:
            raise InputFileError(p, n, x_col, f"must be positive, found {row[x_col]}")
        if with_t:
            t = b.row_temperature_k(n, row, temperature_k)
            ts.append(t)
            if (x, round(t, 2)) in seen:
                raise InputFileError(p, n, x_col, f"duplicate {x_col} {row[x_col]} at {t:.2f} K "
                                     f"(also on line {seen[x, round(t, 2)]})")
            seen[x, round(t, 2)] = n
        elif background is not None:
            bg = parse_float(p, n, "background_molality", row["background_molality"])
            if bg < 0:
                raise InputFileError(p, n, "background_molality", f"must not be negative, found "
                                     f"{row['background_molality']}")
            bgs.append(bg)
            if (x, bg) in seen:
                raise InputFileError(p, n, x_col, f"duplicate composition {row[x_col]}, "
                                     f"{row['background_molality']} (also on line {seen[x, bg]})")
            seen[x, bg] = n
        else:
            if x in seen:
                raise InputFileError(p, n, x_col, f"duplicate {x_col} {row[x_col]} (also on line {seen[x]})")
            seen[x] = n
        m = x if x_col == "molality" else (
            parse_float(p, n, "molality", row["molality"]) if row.get("molality") else float("nan"))
        if not np.isnan(m) and m <= 0:
            raise InputFileError(p, n, "molality", "must be positive")
        r = parse_float(p, n, rcol, row[rcol]) * factor
        if kind in ("isopiestic", "vapour_pressure", "water_activity") and r <= 0:
            raise InputFileError(p, n, rcol, f"must be positive, found {row[rcol]}")
        if kind == "water_activity" and r > 1:
            raise InputFileError(p, n, rcol, f"a water activity lies in (0, 1], found {row[rcol]}")
        if kind in ("emf", "electrode_calibration") and abs(r) >= 5.0:
            raise InputFileError(p, n, rcol, f"{row[rcol]} {unit} is not a cell EMF (check the unit "
                                 "in the column name)")
        if u_col and row[u_col]:
            ur = parse_float(p, n, u_col, row[u_col]) * u_cols[u_col]
            if ur <= 0:
                raise InputFileError(p, n, u_col, "must be positive")
        elif kind == "isopiestic":
            ur = rel_ref * r + abs_ref
        elif u_header is not None:
            ur = u_header
        else:
            raise InputFileError(p, n, u_col, f"empty, and no '{u_field}' in the header")
        if ur <= 0:
            raise InputFileError(p, n, u_field, "the reading's uncertainty must be positive")
        um = rel_m * m + abs_m if np.isfinite(m) else float("nan")
        if "u_molality" in b.columns and row["u_molality"]:
            um = parse_float(p, n, "u_molality", row["u_molality"])
            if um < 0:
                raise InputFileError(p, n, "u_molality", "must not be negative")
        xs.append(x)
        ms.append(m)
        ums.append(um)
        rs.append(r)
        urs.append(ur)
        lines.append(n)

    if background is not None and settings.get("e_standard") is None and not any(v == 0 for v in bgs):
        raise InputFileError(p, b.header["e_standard"].line if "e_standard" in b.header else None,
                             "e_standard", "'extrapolate' needs readings of "
                             f"{electrolyte.name} alone (background_molality 0); give E° instead")
    if background is not None:
        order = np.lexsort((np.array(bgs), np.array(xs)))
    elif with_t:  # by temperature, then molality
        order = np.lexsort((np.array(xs), np.round(np.array(ts), 2)))
    else:
        order = np.argsort(np.array(xs))
    take = lambda v: np.array(v, dtype=float)[order]
    key = b.get("id") or Path(p).name.removesuffix(".csv")
    activity = take(xs) if kind == "electrode_calibration" else np.full(len(xs), np.nan)
    return MeasurementSet(
        key=key, path=p, kind=kind, electrolyte=electrolyte, temperature_k=temperature_k,
        source=source.value, typed=typed.value, method=method.name, method_version=method.version,
        note=b.get("note", "") or "", settings=settings, molality=take(ms), u_molality=take(ums),
        activity=activity, reading=take(rs), u_reading=take(urs), printed_unit=unit,
        lines=[lines[i] for i in order], declared_ions=declared, source_line=source.line,
        background_molality=take(bgs) if background is not None else None,
        point_temperature=take(ts) if with_t else None,
    )
