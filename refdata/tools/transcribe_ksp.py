"""Transcribe the handbook table of solubility products into saltbench's mineral file.

Run by a developer, never by the product or its tests (a user's clone has no shared/ folder):

    python refdata/tools/transcribe_ksp.py ../shared/data refdata/minerals

It reads the electronic copy of the CRC Handbook of Chemistry and Physics, 87th ed. (2006),
"Solubility Product Constants" (pp. 8-118 and 8-119; the copy's layout: comment lines starting
with '#', then a CSV ``compound,formula,ksp_25C``) and writes ``ksp-crc-87.csv`` in saltbench's
own format (DEVELOPERS.md, "Solubility products"). Nothing is typed by hand: every Ksp is the
printed cell, written as printed, with log10 Ksp beside it to four decimals.

What it decides, each rule stated here and recorded in the file it writes:
- ``name`` is the handbook's name, as printed (lower case in the copy).
- ``mineral`` is given only where the copy names the mineral: its note calls the dihydrate
  gypsum and anhydrous calcium sulfate anhydrite. Every other entry keeps the handbook's name
  only; in particular 'calcium carbonate' is not called calcite, since the table does not say
  which polymorph it means.
- A formula with water of hydration, printed ``X(H2O)n``, is the salt X with n waters; the salt
  is read by saltbench's formula parser, which gives the ions and their numbers. A formula the
  parser cannot read stops the script (none does today).
"""

from __future__ import annotations

import csv
import math
import re
import sys
from pathlib import Path

COPY = "handbook_ksp_25C.csv"
OUT = "ksp-crc-87.csv"
SOURCE = "crc-ksp-87"
TABLE = "Solubility Product Constants, 87th ed., pp. 8-118 and 8-119, 25 °C"

#: Handbook name -> mineral, where the copy's own note names it (checked against the note).
NAMED_IN_COPY = {"calcium sulfate dihydrate": "gypsum", "calcium sulfate": "anhydrite"}

_HYDRATE = re.compile(r"^(?P<salt>.+?)\(H2O\)(?P<n>\d+)$")


def read_copy(path: Path) -> tuple[list[str], list[dict[str, str]]]:
    """The copy's comment lines and its rows."""
    lines = path.read_text(encoding="utf-8").splitlines()
    comments = [line for line in lines if line.startswith("#")]
    rows = list(csv.DictReader(line for line in lines if not line.startswith("#")))
    return comments, rows


def check_names(comments: list[str]) -> None:
    note = " ".join(line for line in comments if "note" in line.lower()).lower()
    for name, mineral in NAMED_IN_COPY.items():
        if mineral not in note or name not in note:
            raise SystemExit(f"the copy's note no longer names {name} as {mineral}; revise NAMED_IN_COPY")


def stoichiometry(formula: str) -> tuple[str, int, str, int, int]:
    """(cation, nu_cation, anion, nu_anion, waters) of a printed formula."""
    from saltbench.chemistry.electrolyte import parse_formula

    m = _HYDRATE.match(formula)
    salt_text, water = (m.group("salt"), int(m.group("n"))) if m else (formula, 0)
    try:
        salt = parse_formula(salt_text)
    except ValueError as exc:
        raise SystemExit(f"{formula}: {exc}") from None
    return salt.cation.name, salt.nu_cation, salt.anion.name, salt.nu_anion, water


def render(rows: list[dict[str, str]]) -> str:
    notes = [
        "read from an electronic copy of the printed table (a CSV in the public repository "
        "newfound-materials/aqueous-solubility-data, commit c745a0ec8d9b0c265601018d971bedb267453b84, path "
        "raw_data/solubility_products.csv), converted by refdata/tools/transcribe_ksp.py",
        "the table prints three significant figures; log10_ksp is computed from the printed Ksp and written "
        "to four decimals",
        "mineral names only where the copy names them (gypsum for calcium sulfate dihydrate, anhydrite for "
        "calcium sulfate); every other entry keeps the handbook's name: 'calcium carbonate' is not called "
        "calcite, since the table does not say which polymorph it means",
        "read as thermodynamic solubility products with ion activities on the molality scale at 25 °C "
        "(the usual convention; common practice, no source); published log10 Ksp of one mineral differ "
        "between compilations by up to about 0.1 (common practice, no source)",
        "not for scaling limits, dosing or regulated use without checking the printed original and local codes",
    ]
    lines = [
        "# saltbench minerals 1",
        f"# source: {SOURCE}",
        f"# table: {TABLE}",
        "# temperature: 25 C",
        "# typed: transcribed from the CRC Handbook of Chemistry and Physics, 87th ed. (2006), \"Solubility "
        "Product Constants\"; read from an electronic copy of the table",
        f"# note: {'; '.join(notes)}",
        "name,mineral,formula,cation,nu_cation,anion,nu_anion,water,ksp,log10_ksp",
    ]
    for row in rows:
        name, formula, ksp = row["compound"].strip(), row["formula"].strip(), row["ksp_25C"].strip()
        cation, nu_c, anion, nu_a, water = stoichiometry(formula)
        log10 = f"{math.log10(float(ksp)):.4f}"
        lines.append(f"{name},{NAMED_IN_COPY.get(name, '')},{formula},{cation},{nu_c},{anion},{nu_a},{water},"
                     f"{ksp},{log10}")
    return "\n".join(lines) + "\n"


def transcribe(shared: Path, out: Path) -> str:
    comments, rows = read_copy(shared / COPY)
    check_names(comments)
    out.mkdir(parents=True, exist_ok=True)
    path = out / OUT
    path.write_text(render(rows), encoding="utf-8")
    return f"wrote {path} ({len(rows)} solubility products)"


if __name__ == "__main__":
    if len(sys.argv) != 3:
        raise SystemExit("usage: transcribe_ksp.py SHARED_DATA_DIR MINERALS_DIR")
    print(transcribe(Path(sys.argv[1]), Path(sys.argv[2])))
