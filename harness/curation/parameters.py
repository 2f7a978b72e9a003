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
KNOWN_FIELDS = {"set", "model", "source", "table", "temperature", "a_phi", "typed", "note"}
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

    @property
    def from_memory(self) -> bool:
        return self.typed.lower().startswith("from memory of")

    def content_hash(self) -> str:
        doc = {"set": self.set_id, "model": self.model, "source": self.source, "table": self.table,
               "temperature_k": self.temperature_k, "a_phi": self.a_phi, "typed": self.typed,
               "note": self.note, "kind": self.target_kind,
               "rows": [[r.target, sorted(r.values.items()), r.m_max] for r in self.rows]}
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
    names = [c for c in b.columns[1:] if c != "m_max"]
    for c in names:
        if not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", c):
            raise InputFileError(p, b.columns_line, c, "parameter column names are identifiers")
    pf = ParameterFile(p, set_f.value, model.value, model.line, source.value, source.line,
                       b.require("table").value, temperature_k, a_phi, typed.value,
                       b.get("note", "") or "", first, set_line=set_f.line)
    seen: dict[str, int] = {}
    # parameter names are case-sensitive in models (C_phi, B): keep the header's case.
    raw_header = next(line for i, line in enumerate(b.text.splitlines(), 1) if i == b.columns_line)
    case_names = [c.strip() for c in raw_header.split(",")]
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
        values = {}
        for c, cased in zip(b.columns[1:], case_names[1:]):
            if c == "m_max" or not row[c]:
                continue
            values[cased] = parse_float(p, n, cased, row[c])
        m_max = None
        if "m_max" in b.columns and row["m_max"]:
            m_max = parse_float(p, n, "m_max", row["m_max"])
            if m_max <= 0:
                raise InputFileError(p, n, "m_max", "must be positive")
        pf.rows.append(ParameterRow(target, values, m_max, n))
    if not pf.rows:
        raise InputFileError(p, b.columns_line, None, "the table has no rows")
    return pf


def format_parameter_file(*, set_id: str, model: str, source: str, table: str, temperature_k: float,
                          a_phi: float | None, typed: str, note: str, target_kind: str,
                          rows: list[tuple[str, dict[str, float], float | None]]) -> str:
    """A parameter set in the file format :func:`read_parameter_file` reads, values written in full
    (``repr``), so that reading it back gives the very same numbers."""
    one_line = lambda text: " ".join(str(text).split())
    names = list(dict.fromkeys(name for _, values, _ in rows for name in values))
    head = ["# saltbench parameters 1", f"# set: {set_id}", f"# model: {model}", f"# source: {source}",
            f"# table: {one_line(table) or '-'}", f"# temperature: {temperature_k!r} K"]
    if a_phi is not None:
        head.append(f"# a_phi: {a_phi!r}")
    head.append(f"# typed: {one_line(typed)}")
    if note:
        head.append(f"# note: {one_line(note)}")
    with_m_max = any(m is not None for _, _, m in rows)
    head.append(",".join([target_kind, *names] + (["m_max"] if with_m_max else [])))
    for target, values, m_max in rows:
        cells = [target] + [repr(values[n]) if n in values else "" for n in names]
        if with_m_max:
            cells.append("" if m_max is None else repr(m_max))
        head.append(",".join(cells))
    return "\n".join(head) + "\n"
