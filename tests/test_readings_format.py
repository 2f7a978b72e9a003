"""Raw-readings files: every error names file, line and field; exit 2; the store is unchanged."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest
from conftest import write

from saltbench.store import open_store
from saltbench.store.queries import content_hash

BIB = """[own-notebook-3]
authors: A. Operator
title: Bench notebook 3 (test entry)
publisher: test bench
year: 2024
"""

# A minimal valid set: the water activities are placeholders for the format tests only
# (no check value is read from them).
WATER = """# saltbench readings 1
# kind: water_activity
# electrolyte: NaCl
# temperature: 25 C
# source: own-notebook-3
# typed: measured by the test operator at bench 3
# u_water_activity: 0.0003
molality,water_activity
0.5,0.9833
1.0,0.9669
"""

EMF = """# saltbench readings 1
# kind: emf
# electrolyte: HCl
# temperature: 25 C
# source: own-notebook-3
# typed: measured by the test operator at bench 3
# cell: Pt | H2 | HCl(m) | AgCl | Ag
# u_emf: 0.02 mV
molality,emf_mv
0.001,579.1
0.002,544.2
0.005,498.4
0.010,464.1
0.020,430.1
"""


def _hash(path: Path) -> str:
    store = open_store(path)
    try:
        return content_hash(store)
    finally:
        store.close()


@pytest.fixture
def files(tmp_path: Path) -> dict[str, Path]:
    return {"bib": write(tmp_path / "notebook.sources.txt", BIB),
            "water": write(tmp_path / "water.csv", WATER),
            "emf": write(tmp_path / "emf.csv", EMF)}


def _fails(run_main, store: Path, *paths: Path) -> str:
    before = _hash(store)
    code, out, err = run_main("readings", "add", *map(str, paths), store=store)
    assert code == 2, (out, err)
    assert out == ""
    assert "Traceback" not in err
    assert _hash(store) == before
    return err.strip()


def test_valid_files_load_and_are_listed(run_main, run_cli, seeded_store: Path, files) -> None:
    code, out, err = run_main("readings", "add", str(files["bib"]), str(files["water"]),
                              str(files["emf"]), store=seeded_store)
    assert (code, err) == (0, "")
    assert "added     measurement set water" in out and "added     measurement set emf" in out
    # Adding the same files again changes nothing.
    before = _hash(seeded_store)
    code, out, _ = run_main("readings", "add", str(files["bib"]), str(files["water"]), store=seeded_store)
    assert code == 0 and "unchanged measurement set water" in out
    assert _hash(seeded_store) == before


def test_missing_header_field_names_the_end_of_the_header(run_main, seeded_store, files, tmp_path) -> None:
    bad = write(tmp_path / "nocell.csv", EMF.replace("# cell: Pt | H2 | HCl(m) | AgCl | Ag\n", ""))
    err = _fails(run_main, seeded_store, files["bib"], bad)
    # the header ends on line 7 once the cell line is gone (column names on line 8)
    assert err == f"Error: {bad}:7: field 'cell': missing header field"


def test_a_reading_out_of_range_names_its_line(run_main, seeded_store, files, tmp_path) -> None:
    bad = write(tmp_path / "aw.csv", WATER.replace("1.0,0.9669", "1.0,1.2"))
    err = _fails(run_main, seeded_store, files["bib"], bad)
    assert err == f"Error: {bad}:10: field 'water_activity': a water activity lies in (0, 1], found 1.2"


def test_a_reading_column_without_unit_is_refused(run_main, seeded_store, files, tmp_path) -> None:
    bad = write(tmp_path / "emf-unit.csv", EMF.replace("molality,emf_mv", "molality,emf"))
    err = _fails(run_main, seeded_store, files["bib"], bad)
    assert err.startswith(f"Error: {bad}:9: ")
    assert "exactly one reading column of emf_v or emf_mv" in err


def test_an_emf_in_volts_written_as_millivolts_is_caught(run_main, seeded_store, files, tmp_path) -> None:
    # 579.1 V is no cell EMF: the column says volts but the numbers are millivolts.
    bad = write(tmp_path / "emf-v.csv", EMF.replace("molality,emf_mv", "molality,emf_v"))
    err = _fails(run_main, seeded_store, files["bib"], bad)
    assert err.startswith(f"Error: {bad}:10: field 'emf_v': 579.1 V is not a cell EMF")


def test_an_uncertainty_is_required(run_main, seeded_store, files, tmp_path) -> None:
    bad = write(tmp_path / "nou.csv", WATER.replace("# u_water_activity: 0.0003\n", ""))
    err = _fails(run_main, seeded_store, files["bib"], bad)
    assert err.startswith(f"Error: {bad}:6: field 'u_water_activity': missing: give the operator's")


def test_a_header_quantity_needs_its_unit(run_main, seeded_store, files, tmp_path) -> None:
    bad = write(tmp_path / "u.csv", EMF.replace("# u_emf: 0.02 mV", "# u_emf: 0.02"))
    err = _fails(run_main, seeded_store, files["bib"], bad)
    assert err == f"Error: {bad}:8: field 'u_emf': give the unit (V, mV), found '0.02'"


def test_unknown_citation_key(run_main, seeded_store, files) -> None:
    err = _fails(run_main, seeded_store, files["water"])
    assert err.startswith(f"Error: {files['water']}:5: field 'source': unknown citation key "
                          "'own-notebook-3'")


def test_unknown_kind_and_unknown_field(run_main, seeded_store, files, tmp_path) -> None:
    bad = write(tmp_path / "kind.csv", WATER.replace("kind: water_activity", "kind: conductance"))
    err = _fails(run_main, seeded_store, files["bib"], bad)
    assert err.startswith(f"Error: {bad}:2: field 'kind': unknown kind 'conductance'")
    bad2 = write(tmp_path / "field.csv", WATER.replace("# u_water_activity", "# cell: x\n# u_water_activity"))
    err = _fails(run_main, seeded_store, files["bib"], bad2)
    assert err.startswith(f"Error: {bad2}:7: field 'cell': unknown header field for water_activity")


def test_method_of_another_kind_is_refused(run_main, seeded_store, files, tmp_path) -> None:
    bad = write(tmp_path / "m.csv", WATER.replace("# u_water", "# method: isopiestic-ratio\n# u_water"))
    err = _fails(run_main, seeded_store, files["bib"], bad)
    assert err.startswith(f"Error: {bad}:7: field 'method': unknown reduction method "
                          "'isopiestic-ratio' for water_activity readings")


def test_one_bad_file_leaves_the_whole_batch_out(run_main, seeded_store, files, tmp_path) -> None:
    bad = write(tmp_path / "bad.csv", WATER.replace("0.5,0.9833", "0.5,abc"))
    err = _fails(run_main, seeded_store, files["bib"], files["emf"], bad)
    assert err == f"Error: {bad}:9: field 'water_activity': not a number: 'abc'"
    code, out, _ = run_main("readings", "list", "--format", "json", store=seeded_store)
    assert (code, out.strip()) == (0, "[]")


def test_data_add_points_to_readings_add(run_main, seeded_store, files) -> None:
    code, _, err = run_main("data", "add", str(files["water"]), store=seeded_store)
    assert code == 2
    assert "raw readings are loaded with 'saltbench readings add'" in err


def test_schema_refuses_impossible_readings(seeded_store: Path, run_main, files) -> None:
    code, _, _ = run_main("readings", "add", str(files["bib"]), str(files["water"]), store=seeded_store)
    assert code == 0
    conn = sqlite3.connect(seeded_store)
    conn.execute("PRAGMA foreign_keys = ON")
    set_id = conn.execute("SELECT id FROM measurement_sets WHERE key = 'water'").fetchone()[0]
    # a_w > 1 over a salt solution is impossible (definition of water activity; common practice,
    # no source); a reading needs a positive uncertainty; a set needs a known kind.
    for sql, args in [
        ("INSERT INTO readings (set_id, seq, molality, water_activity, u_reading) VALUES (?, 9, 2.0, 1.5, 0.001)", (set_id,)),
        ("INSERT INTO readings (set_id, seq, molality, water_activity, u_reading) VALUES (?, 9, 2.0, 0.9, 0)", (set_id,)),
        (("INSERT INTO readings (set_id, seq, molality, water_activity, pressure_pa, u_reading) "
          "VALUES (?, 9, 2.0, 0.9, 3000, 0.001)"), (set_id,)),
        ("UPDATE measurement_sets SET kind = 'conductance' WHERE id = ?", (set_id,)),
        ("UPDATE measurement_sets SET temperature_k = 200 WHERE id = ?", (set_id,)),
    ]:
        with pytest.raises(sqlite3.IntegrityError):
            conn.execute(sql, args)
    conn.close()
