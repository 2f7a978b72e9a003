"""``data check`` catches the slips a person makes typing a table (checked on bundled columns).

The columns come from the CRC Handbook table "Activity Coefficients of Acids, Bases, and Salts"
(25 °C, 0.1 to 1.0 mol/kg; the Robinson-Stokes evaluation), bundled as printed. A slip of one
unit in the first or second significant digit, or two printed digits swapped, is made on every
point of a sample of columns; the check must name the corrupted file and line. The whole-bundle
figures come from tests/benchmarks/bench_slips.py and stand in the README.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from saltbench.api import Session
from saltbench.curation.checks import check_electrolyte
from saltbench.curation.slips import printed, slips

# one column per charge type the table prints, and two often used in labs
SAMPLE = ("NaCl", "KCl", "NaOH", "K2SO4", "CaCl2", "MgSO4", "AlCl3")


def test_slips_are_made_as_a_typist_makes_them() -> None:
    assert sorted(slips("0.657")) == sorted([("first", 0.757), ("first", 0.557), ("second", 0.667),
                                             ("second", 0.647), ("swap", 0.675)])
    assert ("second", 0.0433) in list(slips("0.0423")) and ("second", 0.0413) in list(slips("0.0423"))
    assert ("swap-small", 0.956) in list(slips("0.965"))   # 0.9 %: two evaluations differ by that
    assert not [k for k, _ in slips("0.500") if k.startswith("swap")]  # nothing to swap
    assert printed(0.15, 0.001) == "0.150" and printed(43.1, 0.1) == "43.1"


@pytest.fixture(scope="module")
def session(seeded_store_file: Path, tmp_path_factory: pytest.TempPathFactory) -> Session:
    import shutil

    path = tmp_path_factory.mktemp("slips") / "store.sqlite"
    shutil.copy(seeded_store_file, path)
    return Session(path)


def _caught(session: Session, salt: str) -> dict[str, list[bool]]:
    e = session.electrolyte(salt)
    pts = session.points(salt).reset_index(drop=True)
    assert not check_electrolyte(e, pts).findings  # the column as printed passes
    out: dict[str, list[bool]] = {}
    for i, row in pts[pts.source == "crc-acids-bases-salts"].iterrows():
        for kind, new in slips(printed(float(row.value_printed), float(row.precision))):
            bad = pts.copy()
            bad.loc[i, ["value", "value_printed"]] = new
            found = check_electrolyte(e, bad).findings
            out.setdefault(kind, []).append(any(f.file == row.file and f.line == row.line for f in found))
    return out


def test_slips_in_dense_printed_columns_are_named_with_file_and_line(session: Session) -> None:
    total: dict[str, list[bool]] = {}
    for salt in SAMPLE:
        for kind, hits in _caught(session, salt).items():
            total.setdefault(kind, []).extend(hits)
    assert len(total["first"]) >= 120
    assert all(total["first"])                                    # every first-digit slip
    assert sum(total["second"]) >= 0.9 * len(total["second"])     # nine in ten second-digit slips
    assert sum(total["swap"]) >= 0.9 * len(total["swap"])         # ... and swaps of 1 % or more
