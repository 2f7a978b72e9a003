"""Bundled reference datasets: complete headers, honest provenance, and agreement between sources.

Where two published compilations tabulate the same electrolyte and property, their values at the
molalities both print must agree within what each claims: half a unit of its last printed digit
(rounding) plus the combined standard uncertainty, expanded with a coverage factor of 2 (common
practice, no source). A failure means one file was mistyped, or the sources truly disagree and
the stated uncertainties are too small; both need a curator's attention.
"""

from __future__ import annotations

import itertools
import re
from collections import defaultdict
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

REFDATA = Path(__file__).resolve().parents[1] / "refdata"
DATASETS = sorted((REFDATA / "datasets").glob("*.csv"))
MAGIC = "# saltbench dataset 1"
REQUIRED = ("electrolyte", "property", "scale", "temperature", "source", "table", "precision", "typed")
TYPED_TRANSCRIBED = re.compile(r"^transcribed from \S.*$")
TYPED_MEMORY = re.compile(
    r"^from memory of \S.*; verify against the original before use in a regulated method$")
COVERAGE = 2.0  # expanded uncertainty, k = 2 (common practice, no source)

# Pairs of sources that must overlap (guards against the comparison silently finding nothing
# to compare):
#   crc-acids-bases-salts: CRC Handbook, "Activity Coefficients of Acids, Bases, and Salts",
#                          0.1 to 1.0 mol/kg (the Robinson-Stokes evaluation), transcribed;
#   crc-handbook:          CRC Handbook, 92nd ed. (2011), "Mean Activity Coefficients of
#                          Electrolytes as a Function of Concentration" (Hamer and Wu 1972 for
#                          1-1 salts; Staples and Goldberg for the others): transcribed for CaCl2,
#                          from memory of it for NaCl, KCl and HCl (see each file's typed: line).
EXPECTED_OVERLAPS = {
    ("NaCl", "gamma_pm"): {"crc-acids-bases-salts", "crc-handbook"},
    ("KCl", "gamma_pm"): {"crc-acids-bases-salts", "crc-handbook"},
    ("HCl", "gamma_pm"): {"crc-acids-bases-salts", "crc-handbook"},
    ("CaCl2", "gamma_pm"): {"crc-acids-bases-salts", "crc-handbook"},
}


@dataclass
class _Table:
    path: Path
    meta: dict[str, str]
    first_line: str
    molality: np.ndarray
    value: np.ndarray
    u: np.ndarray


def _read(path: Path) -> _Table:
    """Header fields as written and the table in the printed basis.

    Read here rather than through the curation package so that this check stays independent of
    the parser it would otherwise be vouching for.
    """
    meta: dict[str, str] = {}
    rows: list[list[str]] = []
    columns: list[str] | None = None
    first = ""
    for raw in path.read_text(encoding="utf-8").splitlines():
        line = raw.strip()
        if not line:
            continue
        if not first:
            first = line
        if line.startswith("#"):
            m = re.match(r"^#\s*([a-z_]+)\s*:\s*(.*)$", line)
            if m and columns is None:
                meta.setdefault(m.group(1), m.group(2).strip())
            continue
        if columns is None:
            columns = [c.strip() for c in line.split(",")]
        else:
            rows.append([c.strip() for c in line.split(",")])
    assert columns is not None, f"{path.name}: no table"
    col = {c: i for i, c in enumerate(columns)}
    m = np.array([float(r[col["molality"]]) for r in rows])
    v = np.array([float(r[col["value"]]) for r in rows])
    if "uncertainty" in col:
        u = np.array([float(r[col["uncertainty"]]) if r[col["uncertainty"]] else
                      float(meta.get("uncertainty", "nan")) for r in rows])
    else:
        u = np.full(len(rows), float(meta["uncertainty"]))
    return _Table(path, meta, first, m, v, u)


def _bibliography_keys() -> set[str]:
    text = (REFDATA / "sources.txt").read_text(encoding="utf-8")
    return set(re.findall(r"^\[([a-z0-9-]+)\]\s*$", text, flags=re.M))


def _groups() -> dict[tuple[str, str, str], list[_Table]]:
    groups: dict[tuple[str, str, str], list[_Table]] = defaultdict(list)
    for p in DATASETS:
        t = _read(p)
        key = (t.meta["electrolyte"], t.meta["property"], t.meta["temperature"])
        groups[key].append(t)
    return groups


def _pairs() -> list[tuple[_Table, _Table]]:
    out = []
    for tables in _groups().values():
        out.extend(itertools.combinations(tables, 2))
    return out


def test_datasets_are_bundled() -> None:
    assert DATASETS, "no bundled datasets found under refdata/datasets"


@pytest.mark.parametrize("path", DATASETS, ids=lambda p: p.name)
def test_header_complete(path: Path) -> None:
    t = _read(path)
    assert t.first_line == MAGIC, f"{path.name}: first line must be {MAGIC!r}"
    missing = [f for f in REQUIRED if not t.meta.get(f)]
    if t.meta.get("property") == "gamma_pm" and not t.meta.get("basis"):
        missing.append("basis")
    assert not missing, f"{path.name}: header lacks {', '.join(missing)}"
    electrolyte, prop, source = path.name[:-len(".csv")].split(".", 2)
    assert (electrolyte, prop, source) == (t.meta["electrolyte"], t.meta["property"],
                                           t.meta["source"]), \
        f"{path.name}: file name must be <electrolyte>.<property>.<source-key>.csv of its header"
    assert float(t.meta["precision"]) > 0
    # a stated uncertainty: one for the dataset in the header, or one per point in a column
    assert float(t.meta.get("uncertainty", "0")) > 0 or np.all(t.u > 0), f"{path.name}: no uncertainty"


@pytest.mark.parametrize("path", DATASETS, ids=lambda p: p.name)
def test_typed_line_is_an_allowed_form(path: Path) -> None:
    typed = _read(path).meta["typed"]
    assert TYPED_TRANSCRIBED.match(typed) or TYPED_MEMORY.match(typed), (
        f"{path.name}: typed must be 'transcribed from <source, table>' or 'from memory of "
        f"<source>; verify against the original before use in a regulated method', found {typed!r}")


@pytest.mark.parametrize("path", DATASETS, ids=lambda p: p.name)
def test_source_is_in_bibliography(path: Path) -> None:
    assert _read(path).meta["source"] in _bibliography_keys()


@pytest.mark.parametrize("path", DATASETS, ids=lambda p: p.name)
def test_molality_strictly_increasing(path: Path) -> None:
    m = _read(path).molality
    # a column of the 2-20 mol/kg handbook table may print one value only (Na2CO3 at 2 mol/kg)
    assert len(m) >= 1 and np.all(np.diff(m) > 0), f"{path.name}: molality must strictly increase"


def test_expected_overlaps_present() -> None:
    groups = _groups()
    for (electrolyte, prop), sources in EXPECTED_OVERLAPS.items():
        found = {t.meta["source"] for t in groups.get((electrolyte, prop, "25 C"), [])}
        assert sources <= found, f"{electrolyte} {prop}: expected sources {sorted(sources)}, found {sorted(found)}"
        a, b = [t for t in groups[(electrolyte, prop, "25 C")] if t.meta["source"] in sources][:2]
        common = np.intersect1d(a.molality, b.molality)
        assert len(common) >= 3, f"{electrolyte} {prop}: fewer than 3 common molalities"


@pytest.mark.parametrize("pair", _pairs(),
                         ids=lambda p: f"{p[0].path.name}~{p[1].path.name}")
def test_sources_agree_at_common_molalities(pair: tuple[_Table, _Table]) -> None:
    a, b = pair
    if a.meta.get("basis", "linear") != b.meta.get("basis", "linear"):
        pytest.fail(f"{a.path.name} and {b.path.name} print in different bases; compare after "
                    "conversion (not yet needed by any bundled pair)")
    common, ia, ib = np.intersect1d(a.molality, b.molality, return_indices=True)
    if len(common) == 0:
        return  # disjoint ranges: nothing to compare, which is legitimate
    rounding = 0.5 * (float(a.meta["precision"]) + float(b.meta["precision"]))
    allowed = rounding + COVERAGE * np.hypot(a.u[ia], b.u[ib])
    diff = np.abs(a.value[ia] - b.value[ib])
    bad = diff > allowed
    assert not bad.any(), "; ".join(
        f"m={m:g}: {a.meta['source']} {va} vs {b.meta['source']} {vb} (|diff| {d:.4g} > {t:.4g})"
        for m, va, vb, d, t in zip(common[bad], a.value[ia][bad], b.value[ib][bad], diff[bad],
                                   allowed[bad]))


@pytest.mark.parametrize("path", DATASETS, ids=lambda p: p.name)
def test_curation_reader_sees_the_same_table(path: Path) -> None:
    from saltbench.curation.datasets import read_dataset

    ours, theirs = _read(path), read_dataset(path)
    assert theirs.meta == ours.meta
    np.testing.assert_array_equal(theirs.molality, ours.molality)
    if ours.meta.get("basis", "linear") == "linear":
        np.testing.assert_array_equal(theirs.value, ours.value)
