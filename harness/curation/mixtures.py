"""Mixture dataset files: one property at N compositions of one family of salts (format in
DEVELOPERS.md, "Mixture datasets").

The abscissa of a point is a composition: one column per salt or ion amount in mol/kg of water
(``m(HCl)``, ``m(NaCl)``, ``m(Na+)``), resolved into the molality of every ion of the system's
salts. Reading validates everything that can be judged from the file alone; the citation key is
checked at ingest, where the known sources are at hand.

Ionic strength I = 1/2 sum_i m_i z_i^2 (IUPAC Green Book, 3rd ed., 2007, section 2.13).
"""

from __future__ import annotations

import builtins
import csv
import hashlib
import json
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.chemistry.ions import Ion
from saltbench.chemistry.solution import Composition
from saltbench.chemistry.species import parse_species
from saltbench.curation.blocks import (
    TYPED_FROM_SOURCE,
    Block,
    header_uncertainty,
    parse_block,
    parse_float,
    row_uncertainty,
)
from saltbench.curation.mixture_points import LN_GAMMA_PM, OSMOTIC, WATER_ACTIVITY, MixturePoints
from saltbench.errors import InputFileError

MAGIC = "saltbench mixture"
KNOWN_FIELDS = frozenset({"system", "property", "temperature", "source", "table", "typed", "note",
                          "uncertainty", "id"})
TYPED_FORMS = {**TYPED_FROM_SOURCE, "measured ": "measured <by whom, where>",
               "invented ": "invented <for what>"}
#: printed properties: a mean activity coefficient of one salt (linear or ln), or of the solution
SALT_PROPERTIES = ("gamma_pm", "ln_gamma_pm")
SOLUTION_PROPERTIES = ("osmotic", "water_activity")
PROPERTY_FORMS = "gamma_pm(SALT), ln_gamma_pm(SALT), osmotic or water_activity"
#: |ln gamma±| above this is no activity coefficient of an aqueous salt (gamma± outside
#: 1e-20..1e20) but a slip (a log10 value, a missing decimal point); common practice, no source.
MAX_ABS_LN_GAMMA = 46.0
#: where amounts are given as ions, the rows must be electroneutral within this fraction of the
#: total charge (room for amounts printed to three or four digits); our own tolerance.
NEUTRALITY_TOLERANCE = 1e-3

_PROPERTY = re.compile(r"^(?P<kind>[a-z_]+)\s*(?:\(\s*(?P<salt>[^()]*?)\s*\))?$")
_AMOUNT = re.compile(r"^m\((?P<species>.+)\)$")


@dataclass
class MixtureDataset:
    """A validated mixture dataset (see the module docstring)."""

    key: str
    path: str
    system: str  # as normalised: salts joined by ' + ', in the file's order
    salts: tuple[Electrolyte, ...]
    property: str  # as printed: gamma_pm, ln_gamma_pm, osmotic, water_activity
    salt: str | None  # the salt of gamma_pm / ln_gamma_pm
    temperature_k: float
    source: str
    source_line: int
    table: str
    uncertainty: float | None
    typed: str
    note: str
    columns: tuple[str, ...]  # the amount columns' species as written: 'HCl', 'Na+'
    amounts: np.ndarray  # (N, C) as the file gave them, mol/kg
    ions: tuple[Ion, ...]
    molality: np.ndarray  # (N, K) of ``ions``, mol/kg
    value_printed: np.ndarray  # (N,)
    u_printed: np.ndarray  # (N,) standard uncertainty, printed basis
    value: np.ndarray  # (N,) in the basis of ``quantity``
    u_value: np.ndarray  # (N,)
    lines: list[int]

    @builtins.property  # the field ``property`` above shadows the builtin in this class body
    def quantity(self) -> tuple[str, str]:
        if self.property in SALT_PROPERTIES:
            return (LN_GAMMA_PM, self.salt or "")
        return (OSMOTIC, "") if self.property == "osmotic" else (WATER_ACTIVITY, "")

    @builtins.property
    def from_memory(self) -> bool:
        return self.typed.lower().startswith("from memory of")

    @builtins.property
    def invented(self) -> bool:
        return self.typed.lower().startswith("invented")

    def composition(self) -> Composition:
        return Composition(self.ions, self.molality, np.full(len(self.lines), self.temperature_k),
                           None, self.salts)

    def content_hash(self) -> str:
        """SHA-256 of the canonical content: header meaning and points, not layout."""
        doc = {
            "system": [s.name for s in self.salts], "property": self.property, "salt": self.salt,
            "temperature_k": round(self.temperature_k, 6), "source": self.source, "table": self.table,
            "uncertainty": self.uncertainty, "typed": self.typed, "note": self.note,
            "columns": list(self.columns),
            "points": [[*map(float, a), float(v), float(u)]
                       for a, v, u in zip(self.amounts, self.value_printed, self.u_printed)],
        }
        return hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest()

    def points(self, origin: str = "file") -> MixturePoints:
        comp = self.composition()
        return MixturePoints(
            key=self.key, system=self.system, composition=comp, quantity=self.quantity,
            values=self.value.copy(), uncertainties=self.u_value.copy(),
            ionic_strength=comp.ionic_strength.copy(), temperature_k=self.temperature_k,
            source=self.source, content_hash=self.content_hash(), origin=origin, typed=self.typed,
            lines=tuple(self.lines), file=self.path)


def parse_system(text: str) -> tuple[Electrolyte, ...]:
    """'HCl + NaCl' -> the salts, in order. Raises ValueError with a plain message."""
    parts = [p.strip() for p in text.split("+")]
    if any(not p for p in parts):
        raise ValueError(f"expected salts joined by '+' (e.g. 'HCl + NaCl'), found {text!r}")
    salts: list[Electrolyte] = []
    for p in parts:
        try:
            salt = parse_formula(p)
        except ValueError as exc:
            raise ValueError(f"{exc}") from None
        if any(s.name == salt.name for s in salts):
            raise ValueError(f"salt {salt.name} is named twice")
        salts.append(salt)
    if len(salts) < 2:
        raise ValueError("a mixture needs at least two salts (one salt alone is an ordinary "
                         "'# saltbench dataset 1' file)")
    return tuple(salts)


def system_ions(salts: tuple[Electrolyte, ...]) -> tuple[Ion, ...]:
    """The ions of the salts, in order of the salts, cation before anion, each once."""
    ions: dict[str, Ion] = {}
    for s in salts:
        ions.setdefault(s.cation.name, s.cation)
        ions.setdefault(s.anion.name, s.anion)
    return tuple(ions.values())


def system_name(salts: tuple[Electrolyte, ...]) -> str:
    return " + ".join(s.name for s in salts)


def same_system(a: str, b: str) -> bool:
    """Two system names name the same salts, in any order ('NaCl + HCl' is 'HCl + NaCl')."""
    def salts(text: str) -> frozenset[str] | None:
        try:
            return frozenset(s.name for s in parse_system(text))
        except ValueError:
            return None
    sa = salts(a)
    return sa is not None and sa == salts(b)


def _property(b: Block, salts: tuple[Electrolyte, ...]) -> tuple[str, str | None]:
    pf = b.require("property")
    m = _PROPERTY.match(pf.value.strip())
    kind = m.group("kind") if m else ""
    if not m or kind not in SALT_PROPERTIES + SOLUTION_PROPERTIES:
        raise InputFileError(b.path, pf.line, "property", f"unknown property {pf.value!r} "
                             f"(known: {PROPERTY_FORMS})")
    salt_text = m.group("salt")
    if kind in SOLUTION_PROPERTIES:
        if salt_text is not None:
            raise InputFileError(b.path, pf.line, "property", f"{kind} is a property of the solution; "
                                 "name no salt")
        return kind, None
    if not salt_text:
        raise InputFileError(b.path, pf.line, "property", f"{kind} needs its salt, e.g. {kind}(HCl)")
    try:
        salt = parse_formula(salt_text)
    except ValueError as exc:
        raise InputFileError(b.path, pf.line, "property", str(exc)) from None
    names = {i.name for i in system_ions(salts)}
    missing = [i.name for i in (salt.cation, salt.anion) if i.name not in names]
    if missing:
        raise InputFileError(b.path, pf.line, "property", f"salt {salt.name} is not in the system "
                             f"{system_name(salts)!r} (no {missing[0]})")
    return kind, salt.name


def _amount_columns(b: Block, salts: tuple[Electrolyte, ...]) -> tuple[list[str], list[str], np.ndarray]:
    """The amount columns: their keys in the block's rows, the species as written, and the
    (C, K) matrix turning amounts into ion molalities."""
    raw = next(csv.reader([b.text.splitlines()[b.columns_line - 1]]))
    written = {c.strip().lower(): c.strip() for c in raw}
    ions = system_ions(salts)
    index = {ion.name: k for k, ion in enumerate(ions)}
    keys: list[str] = []
    species: list[str] = []
    rows: list[np.ndarray] = []
    seen: dict[str, str] = {}
    for c in b.columns:
        if c in ("value", "uncertainty"):
            continue
        name = written.get(c, c)
        m = _AMOUNT.match(name)
        if not m:
            raise InputFileError(b.path, b.columns_line, name, "unknown column (expected amounts "
                                 "'m(SALT)' or 'm(ION)' in mol/kg, then 'value' and optionally "
                                 "'uncertainty')")
        try:
            sp = parse_species(m.group("species"))
        except ValueError as exc:
            raise InputFileError(b.path, b.columns_line, name, str(exc)) from None
        vector = np.zeros(len(ions))
        for ion, nu in sp.parts:
            if ion.name not in index:
                raise InputFileError(b.path, b.columns_line, name, f"{sp.name} is not in the system "
                                     f"{system_name(salts)!r} (no {ion.name})")
            vector[index[ion.name]] += nu
        if sp.is_salt and sp.name not in {s.name for s in salts}:
            raise InputFileError(b.path, b.columns_line, name, f"salt {sp.name} is not one of the system's "
                                 f"salts ({system_name(salts)}); give its ions or add it to the system")
        if sp.name in seen:
            raise InputFileError(b.path, b.columns_line, name, f"{sp.name} is given twice "
                                 f"(also as {seen[sp.name]})")
        seen[sp.name] = name
        keys.append(c)
        species.append(m.group("species").strip())
        rows.append(vector)
    if not keys:
        raise InputFileError(b.path, b.columns_line, None, "no amount columns: expected 'm(SALT)' or "
                             "'m(ION)' columns, then 'value'")
    if "value" not in b.columns:
        raise InputFileError(b.path, b.columns_line, "value", "missing column")
    matrix = np.array(rows)
    uncovered = [ion.name for k, ion in enumerate(ions) if not matrix[:, k].any()]
    if uncovered:
        raise InputFileError(b.path, b.columns_line, None, f"no column gives the amount of {uncovered[0]}, "
                             f"an ion of the system {system_name(salts)!r}")
    return keys, species, matrix


def _check_value(p: str, n: int, kind: str, v: float, text: str) -> None:
    if kind in ("gamma_pm", "osmotic") and v <= 0:
        raise InputFileError(p, n, "value", f"{kind} must be positive, found {text}")
    if kind == "gamma_pm" and abs(np.log(v)) > MAX_ABS_LN_GAMMA:
        raise InputFileError(p, n, "value", f"gamma_pm {text} is outside 1e-20 to 1e20: a slip")
    if kind == "ln_gamma_pm" and abs(v) > MAX_ABS_LN_GAMMA:
        raise InputFileError(p, n, "value", f"ln_gamma_pm {text} is outside -{MAX_ABS_LN_GAMMA:g} to "
                             f"{MAX_ABS_LN_GAMMA:g}: a slip")
    if kind == "water_activity" and not (0 < v <= 1):
        raise InputFileError(p, n, "value", f"water activity must lie in (0, 1], found {text}")


def read_mixture(path: str | Path, text: str | None = None) -> MixtureDataset:
    """Read and validate one mixture dataset file. Raises InputFileError naming file, line and
    field."""
    b = parse_block(path, MAGIC, text=text)
    p = b.path
    b.check_fields(KNOWN_FIELDS)
    sf = b.require("system")
    try:
        salts = parse_system(sf.value)
    except ValueError as exc:
        raise InputFileError(p, sf.line, "system", str(exc)) from None
    kind, salt = _property(b, salts)
    temperature_k = b.temperature_k()
    source = b.require("source")
    table = b.require("table").value
    uncertainty = header_uncertainty(b)
    typed = b.typed(TYPED_FORMS)
    keys, species, matrix = _amount_columns(b, salts)
    if uncertainty is None and "uncertainty" not in b.columns:
        raise InputFileError(p, b.columns_line - 1, "uncertainty", "missing: give a dataset uncertainty "
                             "in the header or an uncertainty column")
    if not b.rows:
        raise InputFileError(p, b.columns_line, "value", "the table has no rows: a mixture dataset needs points")

    ions = system_ions(salts)
    charges = np.array([i.charge for i in ions], dtype=float)
    ion_columns = [sp for sp, k in zip(species, keys) if not parse_species(sp).is_salt]
    written = {c.strip().lower(): c.strip() for c in next(csv.reader([b.text.splitlines()[b.columns_line - 1]]))}
    amounts, values, us, lines = [], [], [], []
    seen: dict[tuple[float, ...], int] = {}
    for n, row in b.rows:
        a = []
        for k in keys:
            x = parse_float(p, n, written[k], row[k])
            if x < 0:
                raise InputFileError(p, n, written[k], f"negative amount {row[k]}")
            a.append(x)
        m = np.array(a) @ matrix
        if not m.any():
            raise InputFileError(p, n, written[keys[0]], "every amount is zero: a point needs a solute")
        if ion_columns:
            eq = m * charges
            if abs(eq.sum()) > NEUTRALITY_TOLERANCE * np.abs(eq).sum():
                raise InputFileError(p, n, written[keys[0]], f"the ions do not balance: net charge "
                                     f"{eq.sum():+.4g} mol/kg of {np.abs(eq).sum() / 2:.4g} equivalents")
        sig = tuple(float(f"{x:.12g}") for x in m)
        if sig in seen:
            raise InputFileError(p, n, written[keys[0]], f"composition given twice (also on line {seen[sig]})")
        seen[sig] = n
        v = parse_float(p, n, "value", row["value"])
        _check_value(p, n, kind, v, row["value"])
        u = row_uncertainty(p, n, b.columns, row, uncertainty)
        amounts.append(a)
        values.append(v)
        us.append(u)
        lines.append(n)

    amount_arr = np.array(amounts)
    printed, u_printed = np.array(values), np.array(us)
    if kind == "gamma_pm":
        value, u_value = np.log(printed), u_printed / printed  # d ln(gamma) = d gamma / gamma
    else:
        value, u_value = printed.copy(), u_printed.copy()
    key = b.get("id") or Path(p).name.removesuffix(".csv")
    return MixtureDataset(
        key=key, path=p, system=system_name(salts), salts=salts, property=kind, salt=salt,
        temperature_k=temperature_k, source=source.value, source_line=source.line, table=table,
        uncertainty=uncertainty, typed=typed.value, note=b.get("note", "") or "",
        columns=tuple(species), amounts=amount_arr, ions=ions, molality=amount_arr @ matrix,
        value_printed=printed, u_printed=u_printed, value=value, u_value=u_value, lines=lines)
