"""Published parameter-set files (format in DEVELOPERS.md): one model, one source, many rows."""

from __future__ import annotations

import hashlib
import json
import re
from dataclasses import dataclass, field
from pathlib import Path

from saltbench.chemistry.ions import KNOWN_IONS, Ion
from saltbench.curation.blocks import TYPED_FROM_SOURCE, parse_block, parse_float
from saltbench.errors import InputFileError

MAGIC = "saltbench parameters"
TYPED_FORMS = {**TYPED_FROM_SOURCE, "fitted ": "fitted <by whom, to which data>"}
KNOWN_FIELDS = {"set", "model", "source", "table", "temperature", "a_phi", "typed", "note",
                "temperature_form", "temperature_range"}
#: A coefficient column of a temperature form: ``<parameter>.<coefficient>`` (``beta0.c1``); the
#: plain column ``beta0`` holds the form's first coefficient, the value at the set's temperature.
COEFFICIENT_COLUMN = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)\.([A-Za-z][A-Za-z0-9_]*)$")
_RANGE = re.compile(r"^\s*(-?\d+(?:\.\d*)?)\s*(?:-|to)\s*(-?\d+(?:\.\d*)?)\s*(°\s*C|C|K)\s*$", re.I)
SET_ID = re.compile(r"^[a-z0-9]+(?:-[a-z0-9]+)*$")
#: First columns of a parameter table: per electrolyte, per ion, or per group of ions (a pair of
#: ions of like sign, or a triplet of two such ions and one of the other sign).
TARGET_KINDS = ("electrolyte", "ion", "ions")
_IONS_BY_NAME: dict[str, Ion] = {ion.name: ion for ion in KNOWN_IONS.values()}


def ion_group(text: str) -> tuple[str, ...]:
    """The owner named by an ``ions`` cell, in the order of a parameter key: cations before
    anions, each sign in alphabetical order (``'Na+/K+'`` -> ``('K+', 'Na+')``,
    ``'Cl-/Na+/K+'`` -> ``('K+', 'Na+', 'Cl-')``).

    Two ions must have like sign (a like-charged pair, e.g. theta); three must be two distinct
    ions of one sign and one of the other (a triplet, e.g. psi). Ions are named as in
    :attr:`saltbench.chemistry.ions.Ion.name` (``Na+``, ``Mg+2``, ``SO4-2``) and must be known.
    Raises ``ValueError`` with a plain message.
    """
    names = [part.strip() for part in text.split("/")]
    if len(names) not in (2, 3):
        raise ValueError(f"{text!r}: name two ions of like sign (e.g. K+/Na+) or a triplet "
                         "(e.g. K+/Na+/Cl-), joined by '/'")
    ions = []
    for name in names:
        ion = _IONS_BY_NAME.get(name)
        if ion is None:
            raise ValueError(f"unknown ion {name!r} (ions are named with their charge, e.g. Na+, "
                             "Mg+2, Cl-, SO4-2)")
        ions.append(ion)
    if len({i.name for i in ions}) != len(ions):
        raise ValueError(f"{text!r} names an ion twice")
    cations = sorted(i.name for i in ions if i.charge > 0)
    anions = sorted(i.name for i in ions if i.charge < 0)
    if len(ions) == 2 and cations and anions:
        raise ValueError(f"{text!r}: the two ions of a pair must have like sign (a cation-anion "
                         "pair belongs in an 'electrolyte' table)")
    if len(ions) == 3 and not (len(cations) == 2 or len(anions) == 2):
        raise ValueError(f"{text!r}: a triplet is two ions of like sign and one of the other sign")
    return tuple(cations + anions)


@dataclass
class ParameterRow:
    target: str  # electrolyte formula, ion formula, or ions joined by '/' (see ion_group)
    values: dict[str, float]
    m_max: float | None
    line: int
    #: the further coefficients of a temperature form, by parameter (``{"beta0": {"c1": ...}}``);
    #: ``values`` holds each parameter's first coefficient (its value at the set's temperature)
    coefficients: dict[str, dict[str, float]] = field(default_factory=dict)


def parse_temperature_range(text: str) -> tuple[float, float]:
    """'0-50 C', '0 to 50 C' or '273.15-323.15 K' -> (low, high) in kelvin. Raises ValueError."""
    m = _RANGE.match(text)
    if not m:
        raise ValueError(f"expected a range of temperatures with its unit, e.g. '0-50 C' or "
                         f"'273.15-323.15 K', found {text!r}")
    low, high = float(m.group(1)), float(m.group(2))
    if m.group(3).upper() != "K":
        low, high = low + 273.15, high + 273.15
    if not low < high:
        raise ValueError(f"{text!r} is not a range: its low end must be below its high end")
    return low, high


@dataclass
class ParameterFile:
    path: str
    set_id: str
    model: str
    model_line: int
    source: str
    source_line: int
    table: str
    temperature_k: float
    a_phi: float | None
    typed: str
    note: str
    target_kind: str  # "electrolyte", "ion" or "ions" (TARGET_KINDS)
    rows: list[ParameterRow] = field(default_factory=list)
    set_line: int | None = None  # where the set id was given, for errors found at ingest
    #: a temperature form's name (``reference-expansion``) and the range its authors fitted (K);
    #: None for a set of values at one temperature. The form's name is checked where forms are
    #: known (``saltbench.models.temperature``), before anything is written.
    temperature_form: str | None = None
    temperature_range_k: tuple[float, float] | None = None
    form_line: int | None = None
    columns_line: int | None = None
    #: coefficient columns as given: (parameter, coefficient) in the header's order
    coefficient_columns: list[tuple[str, str]] = field(default_factory=list)

    @property
    def from_memory(self) -> bool:
        return self.typed.lower().startswith("from memory of")

    def content_hash(self) -> str:
        doc = {"set": self.set_id, "model": self.model, "source": self.source, "table": self.table,
               "temperature_k": self.temperature_k, "a_phi": self.a_phi, "typed": self.typed,
               "note": self.note, "kind": self.target_kind,
               "rows": [[r.target, sorted(r.values.items()), r.m_max] for r in self.rows]}
        if self.temperature_form is not None:  # a set without a form keeps its hash of before
            doc["temperature_form"] = self.temperature_form
            doc["temperature_range_k"] = list(self.temperature_range_k or ())
            doc["coefficients"] = [[r.target, sorted((p, sorted(c.items())) for p, c in r.coefficients.items())]
                                   for r in self.rows]
        return hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest()


def read_parameter_file(path: str | Path) -> ParameterFile:
    b = parse_block(path, MAGIC)
    p = b.path
    b.check_fields(KNOWN_FIELDS)
    set_f = b.require("set")
    if not SET_ID.match(set_f.value):
        raise InputFileError(p, set_f.line, "set", "set ids are lower-case words joined by hyphens")
    model = b.require("model")
    source = b.require("source")
    # Same range as datasets; without it "-300 C" reached the schema's CHECK (temperature_k > 0)
    # and surfaced as an SQLite traceback.
    temperature_k = b.temperature_k()
    a_phi = None
    if b.get("a_phi"):
        a_phi = parse_float(p, b.header["a_phi"].line, "a_phi", b.get("a_phi") or "")
        if not (0.2 < a_phi < 1.5):
            raise b.error("a_phi", f"{a_phi:g} is not a plausible Debye-Hückel A_phi in (kg/mol)^1/2")
    typed = b.typed(TYPED_FORMS)
    first = b.columns[0]
    if first not in TARGET_KINDS:
        raise InputFileError(p, b.columns_line, first,
                             "the first column must be 'electrolyte', 'ion' or 'ions'")
    # parameter names are case-sensitive in models (C_phi, B): keep the header's case.
    raw_header = next(line for i, line in enumerate(b.text.splitlines(), 1) if i == b.columns_line)
    case_names = [c.strip() for c in raw_header.split(",")]
    form_name, t_range, coefficient_columns = _temperature_form(b, case_names[1:])
    names = [c for c in case_names[1:] if c.lower() != "m_max" and c not in coefficient_columns]
    for c in names:
        if not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", c):
            raise InputFileError(p, b.columns_line, c, "parameter column names are identifiers, "
                                 "or <parameter>.<coefficient> for a temperature form")
    pf = ParameterFile(p, set_f.value, model.value, model.line, source.value, source.line,
                       b.require("table").value, temperature_k, a_phi, typed.value,
                       b.get("note", "") or "", first, set_line=set_f.line,
                       temperature_form=form_name, temperature_range_k=t_range,
                       form_line=b.header["temperature_form"].line if form_name else None,
                       columns_line=b.columns_line,
                       coefficient_columns=list(coefficient_columns.values()))
    seen: dict[str, int] = {}
    for n, row in b.rows:
        target = row[first]
        if not target:
            raise InputFileError(p, n, first, "empty")
        if first == "ions":
            try:
                target = "/".join(ion_group(target))
            except ValueError as exc:
                raise InputFileError(p, n, first, str(exc)) from None
        if target in seen:
            raise InputFileError(p, n, first, f"{target} appears twice (also on line {seen[target]})")
        seen[target] = n
        values: dict[str, float] = {}
        coefficients: dict[str, dict[str, float]] = {}
        for c, cased in zip(b.columns[1:], case_names[1:]):
            if c == "m_max" or not row[c]:
                continue
            if cased in coefficient_columns:
                name, coefficient = coefficient_columns[cased]
                coefficients.setdefault(name, {})[coefficient] = parse_float(p, n, cased, row[c])
            else:
                values[cased] = parse_float(p, n, cased, row[c])
        for name in coefficients:
            if name not in values:
                raise InputFileError(p, n, name, f"empty, but the row gives {name}'s temperature "
                                     f"coefficients ({', '.join(f'{name}.{k}' for k in coefficients[name])})")
        m_max = None
        if "m_max" in b.columns and row["m_max"]:
            m_max = parse_float(p, n, "m_max", row["m_max"])
            if m_max <= 0:
                raise InputFileError(p, n, "m_max", "must be positive")
        pf.rows.append(ParameterRow(target, values, m_max, n, coefficients))
    if not pf.rows:
        raise InputFileError(p, b.columns_line, None, "the table has no rows")
    return pf


def _temperature_form(b, columns: list[str]
                      ) -> tuple[str | None, tuple[float, float] | None, dict[str, tuple[str, str]]]:
    """The header's temperature form and range, and the coefficient columns (column -> (parameter,
    coefficient)), each checked against the others; the form's name itself is checked where the
    forms are known."""
    p = b.path
    form_name = b.get("temperature_form") or None
    range_text = b.get("temperature_range") or None
    t_range = None
    if range_text is not None:
        try:
            t_range = parse_temperature_range(range_text)
        except ValueError as exc:
            raise b.error("temperature_range", str(exc)) from None
        from saltbench.water.properties import T_MAX, T_MIN

        if t_range[0] < T_MIN or t_range[1] > T_MAX:
            raise b.error("temperature_range", f"{t_range[0]:g}-{t_range[1]:g} K reaches outside "
                          f"{T_MIN:g}-{T_MAX:g} K, where water's properties are known")
        if form_name is None:
            raise b.error("temperature_range", "a range of temperatures belongs to a temperature "
                          "form: add '# temperature_form: NAME' (e.g. reference-expansion)")
    if form_name is not None and t_range is None:
        raise b.error("temperature_form", "say where the authors fitted the form: add "
                      "'# temperature_range: LOW-HIGH C'")
    coefficient_columns: dict[str, tuple[str, str]] = {}
    plain = set(columns)
    for c in columns:
        m = COEFFICIENT_COLUMN.match(c)
        if m is None:
            continue
        if form_name is None:
            raise InputFileError(p, b.columns_line, c, "a coefficient column needs a temperature "
                                 "form: add '# temperature_form: NAME' and '# temperature_range: LOW-HIGH C'")
        if m.group(1) not in plain:
            raise InputFileError(p, b.columns_line, c, f"no column {m.group(1)} for the coefficient "
                                 f"to belong to ({m.group(1)} holds its value at the set's temperature)")
        coefficient_columns[c] = (m.group(1), m.group(2))
    return form_name, t_range, coefficient_columns


def format_parameter_file(*, set_id: str, model: str, source: str, table: str, temperature_k: float,
                          a_phi: float | None, typed: str, note: str, target_kind: str,
                          rows: list[tuple[str, dict[str, float], float | None]],
                          temperature_form: str | None = None,
                          temperature_range_k: tuple[float, float] | None = None,
                          coefficients: dict[str, dict[str, dict[str, float]]] | None = None) -> str:
    """A parameter set in the file format :func:`read_parameter_file` reads, values written in full
    (``repr``), so that reading it back gives the very same numbers. ``coefficients`` (target ->
    parameter -> coefficient -> value) are a temperature form's further coefficients."""
    one_line = lambda text: " ".join(str(text).split())
    coefficients = coefficients or {}
    names = list(dict.fromkeys(name for _, values, _ in rows for name in values))
    extra = list(dict.fromkeys((name, k) for by_name in coefficients.values()
                               for name, cs in by_name.items() for k in cs))
    names = [c for name in names for c in [name, *(f"{name}.{k}" for n, k in extra if n == name)]]
    cell = {t: {**values, **{f"{n}.{k}": v for n, cs in coefficients.get(t, {}).items() for k, v in cs.items()}}
            for t, values, _ in rows}
    head = ["# saltbench parameters 1", f"# set: {set_id}", f"# model: {model}", f"# source: {source}",
            f"# table: {one_line(table) or '-'}", f"# temperature: {temperature_k!r} K"]
    if temperature_form is not None and temperature_range_k is not None:
        head.append(f"# temperature_form: {temperature_form}")
        head.append(f"# temperature_range: {temperature_range_k[0]!r}-{temperature_range_k[1]!r} K")
    if a_phi is not None:
        head.append(f"# a_phi: {a_phi!r}")
    head.append(f"# typed: {one_line(typed)}")
    if note:
        head.append(f"# note: {one_line(note)}")
    with_m_max = any(m is not None for _, _, m in rows)
    head.append(",".join([target_kind, *names] + (["m_max"] if with_m_max else [])))
    for target, _, m_max in rows:
        cells = [target] + [repr(cell[target][n]) if n in cell[target] else "" for n in names]
        if with_m_max:
            cells.append("" if m_max is None else repr(m_max))
        head.append(",".join(cells))
    return "\n".join(head) + "\n"
