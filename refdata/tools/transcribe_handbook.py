"""Transcribe the two handbook tables of mean activity coefficients into saltbench dataset files.

Run by a developer, never by the product or its tests (a user's clone has no shared/ folder):

    python refdata/tools/transcribe_handbook.py ../shared/data refdata/datasets

It reads the two electronic copies of the CRC Handbook tables (their layout: comment lines
starting with '#', then a CSV with a ``formula`` column and one ``g_<molality>`` column per
molality) and writes one dataset file per salt and table, in saltbench's own format, citing the
handbook table. Nothing is typed by hand: every value is the printed cell, written as printed.

What it decides, each rule stated here and recorded in the file it writes:
- A formula is renamed only where saltbench writes the ion differently (acetate as CH3COO).
- A cell printed with fewer digits than the table prints for that magnitude is read as the
  electronic export dropping trailing zeros (the copy's own notes say it does): its value is the
  printed number, its precision the digit the table prints, and the dataset's note names it.
- Salts and cells listed in ``left_out.csv`` beside this script are not written; the list says
  why (the parser or the data checks reject them). A salt is never dropped silently.
- A cell of the 2-20 mol/kg table is not written where a bundled transcription of the same
  printed table (source ``crc-handbook``, 92nd ed.) already holds that molality; the two must
  agree exactly, or the script stops and names both.
"""

from __future__ import annotations

import csv
import math
import sys
from dataclasses import dataclass
from decimal import Decimal
from pathlib import Path

HERE = Path(__file__).resolve().parent

#: Printed formula -> saltbench formula, where saltbench writes an ion differently.
RENAMED = {"C2H3O2": "CH3COO"}

#: Standard uncertainty we assign to a compiled gamma±, relative, by charge product |z+ z-|:
#: our estimate of the spread between evaluations (common practice, no source; the handbook
#: prints no uncertainty). Never less than one printed digit.
RELATIVE_UNCERTAINTY = {1: 0.005, 2: 0.01, 3: 0.015, 4: 0.015, 6: 0.02}


@dataclass(frozen=True)
class TableSpec:
    """One handbook table: where its copy lies and how its datasets are cited."""

    copy: str            # file name in the shared folder
    source: str          # citation key in refdata/sources.txt
    title: str           # the handbook table's title
    table: str           # the dataset's 'table' field
    tag: str             # short name used in left_out.csv
    evaluation: str      # whose evaluation the values are, for the note

    def expected_decimals(self, value: float) -> int:
        """Decimals the printed table gives a value of this size (see the copy's notes)."""
        if self.tag == "0.1-1.0":
            # three significant figures (some cells print four)
            return max(0, 3 - 1 - math.floor(math.log10(value)))
        # three decimals below 10 (four below 0.1), one below 100, none above
        return 4 if value < 0.1 else 3 if value < 10 else 1 if value < 100 else 0


TABLES = (
    TableSpec(
        copy="handbook_gamma_pm_25C_0.1-1.0m.csv", source="crc-acids-bases-salts",
        title="Activity Coefficients of Acids, Bases, and Salts",
        table="Activity Coefficients of Acids, Bases, and Salts, 25 °C, 0.1 to 1.0 mol/kg",
        tag="0.1-1.0",
        evaluation="the values are the Robinson-Stokes evaluation (Electrolyte Solutions, 2nd ed., "
                   "1959, appendix), as the handbook's agreement with Kaye and Laby's table shows"),
    TableSpec(
        copy="handbook_gamma_pm_25C_2-20m.csv", source="crc-handbook-online",
        title="Mean Activity Coefficients of Electrolytes as a Function of Concentration",
        table="Mean Activity Coefficients of Electrolytes as a Function of Concentration, 25 °C, "
              "2 to 20 mol/kg",
        tag="2-20",
        evaluation="the handbook compiles Hamer and Wu (1972) for 1-1 salts and Staples (1977, "
                   "1981) and Goldberg et al. (1978-1981) for the others"),
)


@dataclass(frozen=True)
class Cell:
    molality: str   # as in the column name, e.g. '0.1'
    text: str       # as printed
    precision: Decimal
    dropped_zeros: bool


@dataclass(frozen=True)
class Row:
    printed_formula: str
    formula: str
    cells: tuple[Cell, ...]


def read_copy(path: Path, spec: TableSpec) -> list[Row]:
    """The rows of one electronic copy: formula and printed cells (blank cells are skipped)."""
    with path.open(encoding="utf-8") as fh:
        lines = [line for line in fh if not line.startswith("#")]
    rows = []
    for record in csv.DictReader(lines):
        printed = record["formula"].strip()
        cells = []
        for column, text in record.items():
            if not column.startswith("g_") or not (text or "").strip():
                continue
            text = text.strip()
            printed_digits = max(0, -Decimal(text).as_tuple().exponent)
            wanted = spec.expected_decimals(float(text))
            decimals = max(printed_digits, wanted)
            cells.append(Cell(column[2:], text, Decimal(1).scaleb(-decimals), printed_digits < wanted))
        rows.append(Row(printed, rename(printed), tuple(cells)))
    return rows


def rename(formula: str) -> str:
    for printed, ours in RENAMED.items():
        formula = formula.replace(printed, ours)
    return formula


def read_left_out(path: Path) -> tuple[dict, dict]:
    """Salts and single cells left out, each with its reason: ({(tag, formula): reason},
    {(tag, formula, molality): reason})."""
    salts, cells = {}, {}
    with path.open(encoding="utf-8") as fh:
        for record in csv.DictReader(line for line in fh if not line.startswith("#")):
            key = (record["table"], record["formula"])
            if record["molality"]:
                cells[key + (record["molality"],)] = record["reason"]
            else:
                salts[key] = record["reason"]
    return salts, cells


def bundled_points(datasets: Path, electrolyte: str, source: str) -> dict[str, str]:
    """Molality -> printed value of a bundled dataset of ``source`` (empty when none)."""
    path = datasets / f"{electrolyte}.gamma_pm.{source}.csv"
    if not path.exists():
        return {}
    rows = [line for line in path.read_text(encoding="utf-8").splitlines() if not line.startswith("#")]
    return {str(Decimal(r["molality"]).normalize()): r["value"] for r in csv.DictReader(rows)}


def uncertainty(value: float, precision: Decimal, zz: int) -> str:
    u = max(RELATIVE_UNCERTAINTY[zz] * value, float(precision))
    return f"{float(f'{u:.2g}'):g}"


def render(spec: TableSpec, row: Row, cells: list[Cell], zz: int, skipped: list[str]) -> str:
    precisions = sorted({c.precision for c in cells})
    header_precision = max(precisions)
    mixed = len(precisions) > 1
    notes = ["read from an electronic copy of the online table, converted by "
             f"refdata/tools/transcribe_handbook.py; {spec.evaluation}"]
    if row.printed_formula != row.formula:
        notes.append(f"printed as {row.printed_formula}")
    dropped = [c for c in cells if c.dropped_zeros]
    if dropped:
        listed = ", ".join(f"'{c.text}' at {c.molality} mol/kg" for c in dropped)
        notes.append(f"the electronic export wrote {listed} without the trailing zeros the table "
                     "prints for values of that size; read as the same number with the table's usual "
                     "last digit (precision column)")
    if skipped:
        notes.append("not written: " + "; ".join(skipped))
    notes.append(f"uncertainty is our estimate ({RELATIVE_UNCERTAINTY[zz]:.1%} of the value, at least one "
                 "printed digit; common practice, no source): the handbook prints none")
    notes.append("not for dosing, safety limits or regulated measurements without checking the printed "
                 "original and local codes")
    lines = [
        "# saltbench dataset 1",
        f"# electrolyte: {row.formula}",
        "# property: gamma_pm",
        "# basis: linear",
        "# scale: molality",
        "# temperature: 25 C",
        f"# source: {spec.source}",
        f"# table: {spec.table}, row {row.printed_formula}",
        f"# precision: {header_precision}",
        f"# typed: transcribed from the CRC Handbook of Chemistry and Physics (online edition), "
        f"\"{spec.title}\"; read from an electronic copy of the table",
        f"# note: {'; '.join(notes)}",
        "molality,value,uncertainty" + (",precision" if mixed else ""),
    ]
    for c in cells:
        u = uncertainty(float(c.text), c.precision, zz)
        lines.append(f"{c.molality},{c.text},{u}" + (f",{c.precision}" if mixed else ""))
    return "\n".join(lines) + "\n"


def charge_product(formula: str) -> int:
    from saltbench.chemistry.electrolyte import parse_formula

    return parse_formula(formula, {}).zz


def transcribe(shared: Path, out: Path, left_out: Path = HERE / "left_out.csv") -> list[str]:
    """Write every dataset; return one line per file written or salt left out."""
    salts_out, cells_out = read_left_out(left_out)
    log = []
    for spec in TABLES:
        for row in read_copy(shared / spec.copy, spec):
            reason = salts_out.get((spec.tag, row.printed_formula))
            if reason:
                log.append(f"left out {row.printed_formula} ({spec.tag}): {reason}")
                continue
            printed_edition = bundled_points(out, row.formula, "crc-handbook") if spec.tag == "2-20" else {}
            edition_file = out / f"{row.formula}.gamma_pm.crc-handbook.csv"
            if printed_edition and "# typed: from memory" in edition_file.read_text(encoding="utf-8"):
                printed_edition = {}  # a remembered column is replaced, not trusted (replace_memory)
            cells, skipped = [], []
            for c in row.cells:
                why = cells_out.get((spec.tag, row.printed_formula, c.molality))
                key = str(Decimal(c.molality).normalize())
                if why:
                    skipped.append(f"{c.molality} mol/kg, printed '{c.text}': {why}")
                elif key in printed_edition:
                    if Decimal(printed_edition[key]) != Decimal(c.text):
                        raise SystemExit(f"{row.formula} at {c.molality} mol/kg: the export prints {c.text}, the "
                                         f"bundled 92nd-edition transcription {printed_edition[key]}")
                    skipped.append(f"{c.molality} mol/kg ({c.text}) is already bundled from the printed 92nd edition "
                                   f"of the same table ({row.formula}.gamma_pm.crc-handbook.csv), identical")
                else:
                    cells.append(c)
            if not cells:
                log.append(f"nothing new for {row.formula} ({spec.tag}): " + "; ".join(skipped))
                continue
            path = out / f"{row.formula}.gamma_pm.{spec.source}.csv"
            path.write_text(render(spec, row, cells, charge_product(row.formula), skipped), encoding="utf-8")
            log.append(f"wrote {path.name} ({len(cells)} points)")
    return log


#: Remembered source -> the transcribed source that prints the same evaluation.
SAME_EVALUATION = {"robinson-stokes-1959": "crc-acids-bases-salts", "crc-handbook": "crc-handbook-online"}
#: A remembered dataset left with fewer points than this after the cut is removed (too few to
#: check against its neighbours); the ledger keeps its values.
MIN_REMEMBERED_POINTS = 3
LEDGER = HERE / "memory_replaced.csv"
LEDGER_HEAD = ("# Values once typed from memory and now replaced by a transcription of the same evaluation.\n"
               "# Written by refdata/tools/transcribe_handbook.py; read by tests/test_refdata_transcribed.py.\n"
               "remembered_file,electrolyte,molality,remembered,transcribed_file,transcribed\n")


def _split(path: Path) -> tuple[list[str], list[str]]:
    lines = path.read_text(encoding="utf-8").splitlines()
    n = next(i for i, line in enumerate(lines) if not line.startswith("#"))
    return lines[:n + 1], lines[n + 1:]


def replace_memory(out: Path, ledger_path: Path | None = None) -> list[str]:
    """Cut every remembered dataset to the molalities no transcription of its evaluation gives."""
    ledger_path = ledger_path or LEDGER
    log, ledger = [], []
    for path in sorted(out.glob("*.gamma_pm.*.csv")):
        head, rows = _split(path)
        if not any(line.startswith("# typed: from memory of") for line in head):
            continue
        electrolyte, _, source = path.name.removesuffix(".csv").split(".", 2)
        twin = out / f"{electrolyte}.gamma_pm.{SAME_EVALUATION.get(source, '-')}.csv"
        if not twin.exists():
            continue
        printed = {Decimal(r["molality"]): r["value"] for r in csv.DictReader(_split(twin)[0][-1:] + _split(twin)[1])}
        columns = head[-1].split(",")
        kept, gone = [], []
        for line in rows:
            cells = dict(zip(columns, line.split(",")))
            m = Decimal(cells["molality"])
            if m in printed:
                gone.append(f"{m.normalize()}")
                ledger.append(f"{path.name},{electrolyte},{cells['molality']},{cells['value']},{twin.name},{printed[m]}")
            else:
                kept.append(line)
        if not gone:
            continue
        if len(kept) < MIN_REMEMBERED_POINTS:
            path.unlink()
            log.append(f"removed {path.name}: {len(kept)} remembered points left after the cut")
            continue
        note = (f"remembered values at {', '.join(gone)} mol/kg replaced by the transcription in {twin.name} "
                "(same evaluation; the old values are kept in refdata/tools/memory_replaced.csv)")
        head = [f"{line}; {note}" if line.startswith("# note:") else line for line in head]
        if not any(line.startswith("# note:") for line in head):
            head.insert(-1, f"# note: {note}")
        path.write_text("\n".join(head + kept) + "\n", encoding="utf-8")
        log.append(f"cut {path.name} to {len(kept)} remembered points ({len(gone)} replaced)")
    if ledger:
        old = ledger_path.read_text(encoding="utf-8") if ledger_path.exists() else LEDGER_HEAD
        ledger_path.write_text(old + "\n".join(ledger) + "\n", encoding="utf-8")
    return log


if __name__ == "__main__":
    if len(sys.argv) != 3:
        raise SystemExit("usage: transcribe_handbook.py SHARED_DATA_DIR DATASETS_DIR")
    for line in transcribe(Path(sys.argv[1]), Path(sys.argv[2])) + replace_memory(Path(sys.argv[2])):
        print(line)
