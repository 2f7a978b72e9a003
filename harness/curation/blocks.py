"""The one reader behind every saltbench file: a ``# field: value`` header block, then CSV rows.

Keeping line numbers with every field and cell is what lets each error name FILE:LINE: field.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass, field
from pathlib import Path

from saltbench.errors import InputFileError


@dataclass(frozen=True)
class HeaderField:
    name: str
    value: str
    line: int


# How values may reach any curated file: copied off a table, or recalled (to be verified).
TYPED_FROM_SOURCE = {"transcribed from ": "transcribed from <source, table>",
                     "from memory of ": "from memory of <source>; verify against the original ..."}


@dataclass
class Block:
    """A parsed file: its magic line, header fields, column names and rows (with line numbers)."""

    path: str
    magic: str
    header: dict[str, HeaderField]
    repeated: dict[str, list[HeaderField]]
    columns: list[str]
    columns_line: int
    rows: list[tuple[int, dict[str, str]]] = field(default_factory=list)
    text: str = ""

    def get(self, name: str, default: str | None = None) -> str | None:
        f = self.header.get(name)
        return f.value if f else default

    def require(self, name: str) -> HeaderField:
        f = self.header.get(name)
        if f is None:
            # name the end of the header block, where the field belongs
            raise InputFileError(self.path, self.columns_line - 1, name, "missing header field")
        if not f.value:
            raise InputFileError(self.path, f.line, name, "empty header field")
        return f

    def error(self, name: str, problem: str) -> InputFileError:
        f = self.header.get(name)
        return InputFileError(self.path, f.line if f else None, name, problem)

    def check_fields(self, allowed: set[str] | frozenset[str], what: str = "") -> None:
        """Refuse a header field not in ``allowed``, naming its line."""
        for name, hf in self.header.items():
            if name not in allowed:
                raise InputFileError(self.path, hf.line, name, f"unknown header field{what} "
                                     f"(known: {', '.join(sorted(allowed))})")

    def typed(self, forms: dict[str, str]) -> HeaderField:
        """The required ``typed`` field: how the values reached the file. It must begin with one
        of ``forms`` (opening words -> how the message shows that form; each file kind adds its
        own to :data:`TYPED_FROM_SOURCE`), and values typed from memory must carry the caution
        to verify them."""
        tf = self.require("typed")
        text = tf.value.lower()
        if not text.startswith(tuple(forms)):
            shown = list(forms.values())
            listed = ", ".join(f"'{f}'" for f in shown[:-1]) + f" or '{shown[-1]}'"
            raise InputFileError(self.path, tf.line, "typed", f"must begin {listed}")
        if text.startswith("from memory of") and "verify" not in text:
            raise InputFileError(self.path, tf.line, "typed", "values from memory must say "
                                 "'verify against the original before use in a regulated method'")
        return tf

    def temperature_k(self) -> float:
        """The required ``temperature`` field in kelvin, within the range water properties allow."""
        from saltbench.curation.units import parse_temperature
        from saltbench.water.properties import T_MAX, T_MIN

        tf = self.require("temperature")
        try:
            value = parse_temperature(tf.value)
        except ValueError as exc:
            raise InputFileError(self.path, tf.line, "temperature", str(exc)) from None
        if not (T_MIN <= value <= T_MAX):
            raise InputFileError(self.path, tf.line, "temperature", f"{value:g} K is outside "
                                 f"{T_MIN:g}-{T_MAX:g} K")
        return value

    def row_temperature_k(self, line: int, row: dict[str, str], default: float) -> float:
        """A row's own ``temperature`` cell in kelvin, written as the header field is ('15 C',
        '288.15 K'); ``default`` (the header's) where the table has no such column or the cell
        is empty. Held to the same range as the header field."""
        from saltbench.curation.units import parse_temperature
        from saltbench.water.properties import T_MAX, T_MIN

        text = (row.get("temperature") or "").strip()
        if not text:
            return default
        try:
            value = parse_temperature(text)
        except ValueError as exc:
            raise InputFileError(self.path, line, "temperature", str(exc)) from None
        if not (T_MIN <= value <= T_MAX):
            raise InputFileError(self.path, line, "temperature", f"{value:g} K is outside "
                                 f"{T_MIN:g}-{T_MAX:g} K")
        return value

    def electrolyte(self, declared: dict):
        """The required ``electrolyte`` field as an Electrolyte (with ions declared in the file)."""
        from saltbench.chemistry.electrolyte import parse_formula

        ef = self.require("electrolyte")
        try:
            return parse_formula(ef.value, declared)
        except ValueError as exc:
            hint = ("; declare an ion saltbench does not know in this file's header "
                    "('# cation: FORMULA, charge +Z, molar mass M g/mol')")
            raise InputFileError(self.path, ef.line, "electrolyte", f"{exc}{hint}") from None


#: Limits that fit the domain: a published table or a lab's run sheet holds tens to hundreds of
#: points in a few kilobytes; far larger files are mistakes (or attacks) and are refused before
#: they are read, so that a file cannot make ingest, data check or compare run out of memory.
MAX_FILE_BYTES = 1_000_000
MAX_ROWS = 1_000


def read_text(path: str | Path) -> str:
    p = Path(path)
    try:
        size = p.stat().st_size if p.is_file() else 0
        if size > MAX_FILE_BYTES:
            raise InputFileError(p, None, None, f"is {size / 1e6:.1f} MB; saltbench reads data files up to "
                                 f"{MAX_FILE_BYTES / 1e6:g} MB (a table of thousands of points is a few hundred kB)")
        raw = p.read_bytes()
    except FileNotFoundError:
        raise InputFileError(p, None, None, "no such file") from None
    except IsADirectoryError:
        raise InputFileError(p, None, None, "is a directory, not a file") from None
    except OSError as exc:
        raise InputFileError(p, None, None, f"cannot be read ({exc.strerror})") from None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise InputFileError(p, line, None, "is not UTF-8 text") from None


def parse_block(path: str | Path, magic_prefix: str, multi: frozenset[str] = frozenset(),
                text: str | None = None) -> Block:
    """Parse a header-plus-CSV file. ``multi`` names header fields that may repeat."""
    text = read_text(path) if text is None else text
    p = str(path)
    lines = text.splitlines()
    if not lines or not lines[0].startswith("#"):
        raise InputFileError(p, 1, None, f"expected first line '# {magic_prefix} 1'")
    magic = lines[0].lstrip("#").strip()
    if not magic.startswith(magic_prefix):
        raise InputFileError(p, 1, None, f"expected first line '# {magic_prefix} 1', found {lines[0]!r}")
    version = magic[len(magic_prefix):].strip()
    if version != "1":
        raise InputFileError(p, 1, None, f"unsupported format version {version!r} (this saltbench reads 1)")
    header: dict[str, HeaderField] = {}
    repeated: dict[str, list[HeaderField]] = {}
    i = 1
    while i < len(lines) and (lines[i].startswith("#") or not lines[i].strip()):
        raw = lines[i].lstrip("#").strip()
        n = i + 1
        i += 1
        if not raw:
            continue
        if ":" not in raw:
            raise InputFileError(p, n, None, f"header line is not 'field: value': {raw!r}")
        name, value = raw.split(":", 1)
        name = name.strip().lower()
        value = value.strip()
        if not name.replace("_", "").replace("-", "").isalnum():
            raise InputFileError(p, n, name, "header field names are single words")
        hf = HeaderField(name, value, n)
        if name in multi:
            repeated.setdefault(name, []).append(hf)
            continue
        if name in header:
            raise InputFileError(p, n, name, f"given twice (first on line {header[name].line})")
        header[name] = hf
    if i >= len(lines):
        raise InputFileError(p, len(lines), None, "no table: expected a line of column names")
    columns_line = i + 1
    table = "\n".join(lines[i:])
    reader = csv.reader(io.StringIO(table))
    try:
        columns = [c.strip().lower() for c in next(reader)]
    except StopIteration:
        raise InputFileError(p, columns_line, None, "no table: expected a line of column names") from None
    if len(set(columns)) != len(columns):
        raise InputFileError(p, columns_line, None, "column names repeat")
    if any(not c for c in columns):
        raise InputFileError(p, columns_line, None, "empty column name")
    rows: list[tuple[int, dict[str, str]]] = []
    for offset, cells in enumerate(reader):
        n = columns_line + 1 + offset
        if not cells or all(not c.strip() for c in cells):
            continue
        if cells[0].lstrip().startswith("#"):
            continue
        if len(cells) != len(columns):
            raise InputFileError(p, n, None, f"expected {len(columns)} cells ({', '.join(columns)}), "
                                 f"found {len(cells)}")
        if len(rows) >= MAX_ROWS:
            raise InputFileError(p, n, None, f"more than {MAX_ROWS} rows; split the table into datasets of "
                                 "at most that many points")
        rows.append((n, {c: v.strip() for c, v in zip(columns, cells)}))
    return Block(p, magic, header, repeated, columns, columns_line, rows, text)


def parse_float(path: str, line: int | None, field_name: str, text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise InputFileError(path, line, field_name, f"not a number: {text!r}") from None
    if value != value or value in (float("inf"), float("-inf")):
        raise InputFileError(path, line, field_name, f"not a finite number: {text!r}")
    return value


def row_uncertainty(path: str, line: int, columns: list[str], row: dict[str, str],
                    default: float | None) -> float:
    """A row's standard uncertainty: its ``uncertainty`` cell when the table has one and it is
    filled, else the header's ``default``; positive, or a FILE:LINE: field error."""
    u = default
    if "uncertainty" in columns and row["uncertainty"]:
        u = parse_float(path, line, "uncertainty", row["uncertainty"])
        if u <= 0:
            raise InputFileError(path, line, "uncertainty", "must be positive")
    if u is None:
        raise InputFileError(path, line, "uncertainty", "empty, and no dataset uncertainty in the header")
    return u


def header_uncertainty(b: Block) -> float | None:
    """The header's ``uncertainty`` (one for every row without its own), positive, or None."""
    if not b.get("uncertainty"):
        return None
    u = parse_float(b.path, b.header["uncertainty"].line, "uncertainty", b.get("uncertainty") or "")
    if u <= 0:
        raise b.error("uncertainty", "must be positive")
    return u
