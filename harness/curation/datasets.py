"""Dataset files: one property of one electrolyte from one source (format in DEVELOPERS.md).

Reading validates everything that can be judged from the file alone; references to the
bibliography are checked at ingest, where the known sources are at hand.
"""

from __future__ import annotations

import builtins
import hashlib
import json
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.ions import KNOWN_IONS, Ion, formula_mass
from saltbench.curation import units
from saltbench.curation.blocks import (
    TYPED_FROM_SOURCE,
    Block,
    header_uncertainty,
    parse_block,
    parse_float,
    row_uncertainty,
)
from saltbench.errors import InputFileError
from saltbench.water.properties import water_state

MAGIC = "saltbench dataset"
PROPERTIES = ("gamma_pm", "osmotic", "water_activity", "L_phi", "Cp_phi")
#: Thermal properties (issue 21): the apparent molar relative enthalpy L_phi (from heats of
#: dilution) and the apparent molar heat capacity Cp_phi, each printed in the unit the header
#: names and stored in SI. The calorie is the thermochemical one, 4.184 J exactly (IUPAC Green
#: Book, 3rd ed., 2007, sec. 7.2).
THERMAL_UNITS = {
    "L_phi": {"J/mol": 1.0, "kJ/mol": 1000.0, "cal/mol": 4.184, "kcal/mol": 4184.0},
    "Cp_phi": {"J/(K mol)": 1.0, "J/K/mol": 1.0, "cal/(K mol)": 4.184, "cal/K/mol": 4.184},
}
BASES = ("linear", "ln", "log10")
SCALES = ("molality", "molarity", "mole_fraction")
TYPED_FORMS = {**TYPED_FROM_SOURCE, "measured ": "measured <by whom, where>"}
KNOWN_FIELDS = {"electrolyte", "property", "basis", "scale", "temperature", "pressure", "source",
                "table", "precision", "uncertainty", "typed", "note", "id", "cation", "anion",
                "unit"}


@dataclass
class Dataset:
    """A validated dataset, converted to molality and the linear basis."""

    key: str
    path: str
    electrolyte: Electrolyte
    property: str
    basis: str
    scale: str
    temperature_k: float
    pressure_pa: float
    source: str
    source_line: int
    table: str
    precision: float
    uncertainty: float | None
    typed: str
    note: str
    molality: np.ndarray
    value: np.ndarray  # linear basis (gamma±, phi or a_w)
    value_printed: np.ndarray
    u_value: np.ndarray  # standard uncertainty of ``value`` (linear basis)
    lines: list[int]
    #: one unit of each point's last printed digit (printed basis): the header's ``precision``
    #: unless a ``precision`` column gives it per point (tables that print 3 significant figures)
    point_precision: np.ndarray = field(default_factory=lambda: np.zeros(0))
    #: each point's own temperature in K, where the file has a ``temperature`` column; None
    #: where every point is at the header's ``temperature_k`` (see ``point_temperatures``)
    point_temperature: np.ndarray | None = None
    #: the unit a thermal property was printed in ('' for the dimensionless properties)
    unit: str = ""
    declared_ions: dict[str, Ion] = field(default_factory=dict)
    meta: dict[str, str] = field(default_factory=dict)

    @builtins.property  # the field ``property`` above shadows the builtin in this class body
    def from_memory(self) -> bool:
        return self.typed.lower().startswith("from memory of")

    @builtins.property
    def ln_gamma(self) -> np.ndarray:
        return np.log(self.value)

    def point_temperatures(self) -> np.ndarray:
        """Each point's temperature in K: its own, or the header's where the file gives none."""
        if self.point_temperature is None:
            return np.full(len(self.molality), self.temperature_k)
        return self.point_temperature

    def temperature_range(self) -> tuple[float, float]:
        t = self.point_temperatures()
        return float(t.min()), float(t.max())

    def content_hash(self) -> str:
        """SHA-256 of the canonical content: header meaning and points, not layout."""
        doc = {
            "electrolyte": self.electrolyte.name, "property": self.property, "basis": self.basis,
            "scale": self.scale, "temperature_k": round(self.temperature_k, 6),
            "pressure_pa": round(self.pressure_pa, 3), "source": self.source, "table": self.table,
            "precision": self.precision, "uncertainty": self.uncertainty, "typed": self.typed,
            "note": self.note,
            "ions": {k: [i.charge, round(i.molar_mass, 9)] for k, i in sorted(self.declared_ions.items())},
            "points": [[float(m), float(v), float(u)] for m, v, u in
                       zip(self.molality, self.value_printed, self.u_value)],
        }
        if np.any(self.point_precision != self.precision):
            doc["point_precision"] = [float(p) for p in self.point_precision]
        # only where the file has them: a file without a temperature column or a unit hashes as before
        if self.point_temperature is not None:
            doc["point_temperature_k"] = [round(float(t), 6) for t in self.point_temperature]
        if self.unit:
            doc["unit"] = self.unit
        return hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest()


_ION_DECL = re.compile(
    r"^(?P<formula>[A-Za-z][A-Za-z0-9()]*)\s*,\s*charge\s+(?P<charge>[+-]?\d+)"
    r"(?:\s*,\s*count\s+(?P<count>\d+))?"
    r"(?:\s*,\s*molar\s+mass\s+(?P<mass>\d+(?:\.\d+)?)\s*g/mol)?\s*$"
)


def _declared_ions(b: Block) -> dict[str, Ion]:
    ions: dict[str, Ion] = {}
    for role in ("cation", "anion"):
        for hf in b.repeated.get(role, []):
            m = _ION_DECL.match(hf.value)
            if not m:
                raise InputFileError(b.path, hf.line, role, "expected 'FORMULA, charge +Z, molar mass M "
                                     f"g/mol', found {hf.value!r}")
            formula, charge = m.group("formula"), int(m.group("charge"))
            if charge == 0 or (role == "cation") != (charge > 0):
                raise InputFileError(b.path, hf.line, role, f"{'a' if role == 'cation' else 'an'} {role} needs a "
                                     f"{'positive' if role == 'cation' else 'negative'} charge")
            if m.group("mass"):
                mass = float(m.group("mass")) / 1000.0
                if mass <= 0:
                    raise InputFileError(b.path, hf.line, role, "molar mass must be positive")
            elif formula in KNOWN_IONS:
                mass = KNOWN_IONS[formula].molar_mass
            else:
                try:
                    mass = formula_mass(formula) / 1000.0
                except ValueError:
                    raise InputFileError(b.path, hf.line, role, f"unknown ion {formula!r}: give its "
                                         "molar mass ('molar mass M g/mol')") from None
            known = KNOWN_IONS.get(formula)
            if known and known.charge != charge:
                raise InputFileError(b.path, hf.line, role, f"{formula} is known with charge "
                                     f"{known.charge:+d}, not {charge:+d}")
            ions[formula] = Ion(formula, charge, mass)
    return ions


def read_dataset(path: str | Path, text: str | None = None) -> Dataset:
    """Read and validate one dataset file. Raises InputFileError naming file, line and field."""
    b = parse_block(path, MAGIC, multi=frozenset({"cation", "anion"}), text=text)
    p = b.path
    b.check_fields(KNOWN_FIELDS)
    declared = _declared_ions(b)
    electrolyte = b.electrolyte(declared)

    prop = b.require("property")
    if prop.value not in PROPERTIES:
        raise InputFileError(p, prop.line, "property", f"unknown property {prop.value!r} "
                             f"(known: {', '.join(PROPERTIES)})")
    basis = b.get("basis", "linear") or "linear"
    if basis not in BASES:
        raise b.error("basis", f"unknown basis {basis!r} (known: {', '.join(BASES)})")
    if basis != "linear" and prop.value != "gamma_pm":
        raise b.error("basis", f"a basis other than linear applies only to gamma_pm, not {prop.value}")
    scale = b.get("scale", "molality") or "molality"
    if scale not in SCALES:
        raise b.error("scale", f"unknown concentration scale {scale!r} (known: {', '.join(SCALES)})")
    thermal = prop.value in THERMAL_UNITS
    unit, unit_factor = b.get("unit", "") or "", 1.0
    if thermal:
        if not unit:
            raise InputFileError(p, prop.line, "unit", f"missing: {prop.value} needs a 'unit' field "
                                 f"({', '.join(THERMAL_UNITS[prop.value])})")
        if unit not in THERMAL_UNITS[prop.value]:
            raise b.error("unit", f"unknown unit {unit!r} for {prop.value} "
                          f"(known: {', '.join(THERMAL_UNITS[prop.value])})")
        unit_factor = THERMAL_UNITS[prop.value][unit]
        if scale != "molality":
            raise b.error("scale", f"{prop.value} data are read on the molality scale only")
    elif unit:
        raise b.error("unit", f"{prop.value} is dimensionless; 'unit' applies to L_phi and Cp_phi only")

    temperature_k = b.temperature_k()
    pressure_pa = 101325.0
    if b.get("pressure"):
        try:
            pressure_pa = units.parse_pressure(b.get("pressure") or "")
        except ValueError as exc:
            raise b.error("pressure", str(exc)) from None
        # "0 Pa" parses, but the schema's CHECK (pressure_pa > 0) would then fail mid-ingest
        # with a traceback instead of a message naming the line.
        if pressure_pa <= 0:
            raise b.error("pressure", "must be positive")

    source = b.require("source")
    table = b.require("table").value
    precision = parse_float(p, b.require("precision").line, "precision", b.get("precision") or "")
    if precision <= 0:
        raise b.error("precision", "must be positive (one unit of the last printed digit)")
    uncertainty = header_uncertainty(b)
    typed = b.typed(TYPED_FORMS)

    x_col = {"molality": "molality", "molarity": "molarity", "mole_fraction": "mole_fraction"}[scale]
    if x_col not in b.columns or "value" not in b.columns:
        raise InputFileError(p, b.columns_line, None, f"expected columns '{x_col},value' "
                             f"(found {', '.join(b.columns)})")
    allowed = {x_col, "value", "uncertainty", "precision", "density", "temperature"}
    for c in b.columns:
        if c not in allowed:
            raise InputFileError(p, b.columns_line, c, f"unknown column (allowed: {', '.join(sorted(allowed))})")
    if uncertainty is None and "uncertainty" not in b.columns:
        raise InputFileError(p, b.columns_line - 1, "uncertainty", "missing: give a dataset uncertainty in the "
                             "header or an uncertainty column")
    if scale == "molarity" and "density" not in b.columns:
        raise b.error("scale", "molarity data need a 'density' column (solution density in kg/L) "
                      "to be converted to molality; none given")
    if scale != "molality" and prop.value == "osmotic":
        raise b.error("scale", f"osmotic coefficients on the {scale} scale are not converted; "
                      "give molal osmotic coefficients")
    if not b.rows:
        raise InputFileError(p, b.columns_line, None, "the table has no rows")

    xs, vs, us, lines, dens, precs, ts = [], [], [], [], [], [], []
    seen: dict[tuple[float, float], int] = {}
    for n, row in b.rows:
        x = parse_float(p, n, x_col, row[x_col])
        if x <= 0:
            raise InputFileError(p, n, x_col, f"must be positive, found {row[x_col]}")
        if scale == "mole_fraction" and x >= 1:
            raise InputFileError(p, n, x_col, "a mole fraction must be below 1")
        t = b.row_temperature_k(n, row, temperature_k)
        at = (x, round(t, 2))
        if at in seen:
            where = f" at {t:.2f} K" if "temperature" in b.columns else ""
            raise InputFileError(p, n, x_col, f"duplicate {x_col} {row[x_col]}{where} (also on line {seen[at]})")
        seen[at] = n
        ts.append(t)
        v = parse_float(p, n, "value", row["value"])
        if basis == "linear" and not thermal:
            if prop.value in ("gamma_pm", "osmotic") and v <= 0:
                raise InputFileError(p, n, "value", f"{prop.value} must be positive, found {row['value']}")
            if prop.value == "water_activity" and not (0 < v <= 1):
                raise InputFileError(p, n, "value", f"water activity must lie in (0, 1], found {row['value']}")
        u = row_uncertainty(p, n, b.columns, row, uncertainty)
        prec = precision
        if "precision" in b.columns and row["precision"]:
            prec = parse_float(p, n, "precision", row["precision"])
            if prec <= 0:
                raise InputFileError(p, n, "precision", "must be positive (one unit of the last printed digit)")
        if "density" in b.columns:
            d = parse_float(p, n, "density", row["density"])
            if not (0.5 < d < 3.0):
                raise InputFileError(p, n, "density", f"{d:g} kg/L is not a plausible solution density")
            dens.append(d)
        xs.append(x)
        vs.append(v)
        us.append(u)
        precs.append(prec)
        lines.append(n)

    x_arr = np.array(xs)
    printed = np.array(vs)
    u_printed = np.array(us)
    # to the linear basis
    with np.errstate(over="ignore"):  # an overflow is reported below, naming its line
        if basis == "ln":
            value = np.exp(printed)
            u_lin = value * u_printed
        elif basis == "log10":
            value = 10.0 ** printed
            u_lin = value * np.log(10.0) * u_printed
        else:
            value, u_lin = printed * unit_factor, u_printed * unit_factor
    # A large printed ln or log10 value overflows to inf in the linear basis; refuse it here
    # rather than store an infinite gamma± that every fit would choke on.
    bad = ~(np.isfinite(value) & np.isfinite(u_lin) & ((value > 0) | thermal))
    if np.any(bad):
        i = int(np.argmax(bad))
        raise InputFileError(p, lines[i], "value", f"{vs[i]:g} on the {basis} basis gives no "
                             "positive finite value in the linear basis")
    # to molality
    if scale == "molarity":
        m = units.molality_from_molarity(x_arr, np.array(dens), electrolyte.molar_mass)
        if np.any(m <= 0):
            bad = lines[int(np.argmax(m <= 0))]
            raise InputFileError(p, bad, "density", "density too low for this molarity")
        if prop.value == "gamma_pm":
            rho_w = np.array([water_state(t).density for t in ts]) / 1000.0
            factor = units.gamma_from_molar(1.0, x_arr, m, rho_w)
            value, u_lin = value * factor, u_lin * factor
    elif scale == "mole_fraction":
        m = units.molality_from_mole_fraction(x_arr)
        if prop.value == "gamma_pm":
            factor = units.gamma_from_rational(1.0, m, electrolyte.nu)
            value, u_lin = value * factor, u_lin * factor
    else:
        m = x_arr
    t_arr = np.array(ts)
    # by temperature, then molality: a file without a temperature column keeps its molality order
    order = np.lexsort((m, np.round(t_arr, 2)))
    same_t = np.diff(np.round(t_arr[order], 2)) == 0
    if np.any(np.diff(m[order])[same_t] <= 0):
        raise InputFileError(p, None, x_col, "two rows convert to the same molality")
    key = b.get("id") or Path(p).name.removesuffix(".csv")
    return Dataset(
        key=key, path=p, electrolyte=electrolyte, property=prop.value, basis=basis, scale=scale,
        temperature_k=temperature_k, pressure_pa=pressure_pa, source=source.value,
        source_line=source.line, table=table, precision=precision, uncertainty=uncertainty,
        typed=typed.value, note=b.get("note", "") or "", molality=m[order], value=value[order],
        value_printed=printed[order], u_value=u_lin[order], lines=[lines[i] for i in order],
        point_precision=np.array(precs)[order],
        point_temperature=t_arr[order] if "temperature" in b.columns else None, unit=unit,
        declared_ions=declared, meta={k: v.value for k, v in b.header.items()},
    )
