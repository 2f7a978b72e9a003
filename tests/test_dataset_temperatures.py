"""Datasets at several temperatures and thermal datasets (issue 21, items 1 and 3): the file
format's ``temperature`` column and ``unit`` field, the store's per-point temperatures (migration
0009), duplicate detection, and the listings.

Scenario of our own: the invented Harrowgate thermostat bench, which measured osmotic
coefficients of KCl at 15, 25 and 40 °C and heats of dilution of KCl. Every value below is
invented for these tests; none is a measurement.
"""

from __future__ import annotations

import hashlib
import json
import sqlite3
from pathlib import Path

import numpy as np
import pytest
from conftest import write

from saltbench.curation.datasets import read_dataset
from saltbench.curation.temperatures import temperature_groups
from saltbench.store import connection, ingest, open_store
from saltbench.store.queries import dataset_rows, point_rows
from saltbench.store.schema import MIGRATIONS

REFDATA = Path(__file__).resolve().parents[1] / "refdata"
BIB = """\
[harrowgate-2026]
authors: Harrowgate Thermostat Bench
title: Invented osmotic and calorimetric series on KCl (test scenario, invented values)
publisher: saltbench test scenario (invented)
year: 2026
"""
HEAD = """\
# saltbench dataset 1
# electrolyte: KCl
# property: osmotic
# temperature: 25 C
# source: harrowgate-2026
# table: series T (invented)
# precision: 0.001
# uncertainty: 0.003
# typed: measured at the invented Harrowgate thermostat bench (invented values)
"""
# invented values, three temperatures written three ways (°C, K, empty = the header's 25 °C)
MULTI = HEAD + """\
molality,temperature,value
0.5,40 C,0.905
0.1,15 C,0.924
0.5,288.15 K,0.897
0.1,,0.927
0.5,,0.900
0.1,313.15 K,0.930
"""
THERMAL = """\
# saltbench dataset 1
# electrolyte: KCl
# property: L_phi
# unit: kJ/mol
# temperature: 25 C
# source: harrowgate-2026
# table: heats of dilution, run 4 (invented)
# precision: 0.001
# uncertainty: 0.005
# typed: measured at the invented Harrowgate thermostat bench (invented values)
molality,value
0.01,0.045
0.1,0.120
"""


def test_a_table_at_several_temperatures_is_one_dataset(tmp_path: Path) -> None:
    d = read_dataset(write(tmp_path / "kcl-t.csv", MULTI))
    # ordered by temperature, then molality; each point keeps its own temperature and line
    np.testing.assert_allclose(d.point_temperatures(), [288.15] * 2 + [298.15] * 2 + [313.15] * 2)
    np.testing.assert_allclose(d.molality, [0.1, 0.5] * 3)
    np.testing.assert_allclose(d.value, [0.924, 0.897, 0.927, 0.900, 0.930, 0.905])
    assert d.lines == [12, 13, 14, 15, 16, 11]
    assert d.temperature_k == 298.15 and d.temperature_range() == (288.15, 313.15)


def test_a_temperature_column_is_part_of_the_meaning(tmp_path: Path) -> None:
    plain = HEAD + "molality,value\n0.1,0.927\n0.5,0.900\n"
    same = HEAD + "molality,temperature,value\n0.1,25 C,0.927\n0.5,,0.900\n"
    moved = HEAD + "molality,temperature,value\n0.1,15 C,0.927\n0.5,,0.900\n"
    h = [read_dataset(write(tmp_path / f"{i}.csv", t)).content_hash() for i, t in enumerate((plain, same, moved))]
    assert h[0] != h[2] and h[1] != h[2]
    # the layout is not the meaning: rows in another order hash the same
    moved_swapped = HEAD + "molality,temperature,value\n0.5,,0.900\n0.1,15 C,0.927\n"
    assert read_dataset(write(tmp_path / "3.csv", moved_swapped)).content_hash() == h[2]


def _hash_as_before(d) -> str:
    """The content hash as it was defined before the temperature column (written out here, so a
    change to the bundled files' hashes fails this test; the golden outputs depend on them)."""
    doc = {
        "electrolyte": d.electrolyte.name, "property": d.property, "basis": d.basis,
        "scale": d.scale, "temperature_k": round(d.temperature_k, 6),
        "pressure_pa": round(d.pressure_pa, 3), "source": d.source, "table": d.table,
        "precision": d.precision, "uncertainty": d.uncertainty, "typed": d.typed, "note": d.note,
        "ions": {k: [i.charge, round(i.molar_mass, 9)] for k, i in sorted(d.declared_ions.items())},
        "points": [[float(m), float(v), float(u)] for m, v, u in zip(d.molality, d.value_printed, d.u_value)],
    }
    if np.any(d.point_precision != d.precision):
        doc["point_precision"] = [float(p) for p in d.point_precision]
    return hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest()


def test_every_bundled_file_reads_and_hashes_as_before() -> None:
    files = sorted((REFDATA / "datasets").glob("*.csv"))
    assert len(files) > 100
    for f in files:
        d = read_dataset(f)
        assert d.point_temperature is None and d.unit == "", f.name
        assert d.content_hash() == _hash_as_before(d), f.name


def test_thermal_values_are_stored_in_si(tmp_path: Path) -> None:
    d = read_dataset(write(tmp_path / "lphi.csv", THERMAL))
    # 1 kJ = 1000 J (SI prefix); the printed values stay as printed
    np.testing.assert_allclose(d.value, [45.0, 120.0])
    np.testing.assert_allclose(d.u_value, [5.0, 5.0])
    np.testing.assert_allclose(d.value_printed, [0.045, 0.120])
    cal = read_dataset(write(tmp_path / "cal.csv", THERMAL.replace("kJ/mol", "cal/mol")))
    # thermochemical calorie, 4.184 J exactly (IUPAC Green Book, 3rd ed., 2007, sec. 7.2)
    np.testing.assert_allclose(cal.value, [0.045 * 4.184, 0.120 * 4.184])
    # an enthalpy may be negative (L_phi of many salts turns negative at high molality)
    neg = read_dataset(write(tmp_path / "neg.csv", THERMAL.replace("0.1,0.120", "0.1,-0.120")))
    assert neg.value[1] == pytest.approx(-120.0)


def test_store_keeps_each_points_temperature(memory_store, tmp_path: Path) -> None:
    ingest(memory_store, [write(tmp_path / "h.sources.txt", BIB), write(tmp_path / "kcl-t.csv", MULTI),
                                 write(tmp_path / "kcl-lphi.csv", THERMAL)])
    rows = [r for r in point_rows(memory_store, "KCl") if r["dataset"] == "kcl-t"]
    got = sorted((round(r["temperature_k"], 2), r["molality"], r["value"]) for r in rows)
    assert got == [(288.15, 0.1, 0.924), (288.15, 0.5, 0.897), (298.15, 0.1, 0.927), (298.15, 0.5, 0.9),
                   (313.15, 0.1, 0.93), (313.15, 0.5, 0.905)]
    # every other key of a point row is as before
    assert set(rows[0]) == {"electrolyte", "property", "molality", "value", "uncertainty", "temperature_k",
                            "source", "dataset", "dataset_id", "origin", "value_printed", "basis", "line",
                            "file", "precision"}
    ds = {r["key"]: r for r in dataset_rows(memory_store, "KCl")}
    assert (ds["kcl-t"]["temperature_k"], ds["kcl-t"]["t_min_k"], ds["kcl-t"]["t_max_k"]) == (298.15, 288.15, 313.15)
    assert ds["kcl-lphi"]["property"] == "L_phi" and ds["kcl-lphi"]["unit"] == "kJ/mol"
    lphi = [r for r in point_rows(memory_store, "KCl") if r["dataset"] == "kcl-lphi"]
    assert [r["value"] for r in lphi] == pytest.approx([45.0, 120.0])


def test_duplicates_are_found_at_each_temperature(memory_store, tmp_path: Path) -> None:
    bib = write(tmp_path / "h.sources.txt", BIB)
    ingest(memory_store, [bib, write(tmp_path / "kcl-t.csv", MULTI)])
    # the same points in another order under another key: refused, store unchanged
    shuffled = HEAD + "molality,temperature,value\n" + "\n".join(reversed(MULTI.splitlines()[-6:])) + "\n"
    from saltbench.errors import InputFileError

    with pytest.raises(InputFileError, match="the same points as dataset kcl-t"):
        ingest(memory_store, [bib, write(tmp_path / "kcl-copy.csv", shuffled)])
    # the same molalities and values at other temperatures are other points
    other = MULTI.replace("40 C", "45 C").replace("313.15 K", "318.15 K")
    ingest(memory_store, [bib, write(tmp_path / "kcl-other.csv", other)])
    keys = {r["key"] for r in dataset_rows(memory_store, "KCl")}
    assert keys == {"kcl-t", "kcl-other"}


def test_re_adding_without_the_column_clears_the_range(memory_store, tmp_path: Path) -> None:
    bib = write(tmp_path / "h.sources.txt", BIB)
    f = write(tmp_path / "kcl-t.csv", MULTI)
    ingest(memory_store, [bib, f])
    write(f, HEAD + "molality,value\n0.1,0.927\n0.5,0.900\n")
    ingest(memory_store, [bib, f])
    [d] = dataset_rows(memory_store, "KCl")
    assert (d["t_min_k"], d["t_max_k"]) == (298.15, 298.15)
    assert {r["temperature_k"] for r in point_rows(memory_store, "KCl")} == {298.15}


def test_migration_0009_keeps_data_and_foreign_keys(store_path: Path, tmp_path: Path,
                                                     monkeypatch: pytest.MonkeyPatch) -> None:
    bib = write(tmp_path / "h.sources.txt", BIB)
    plain = write(tmp_path / "kcl.csv", HEAD + "molality,value\n0.1,0.927\n0.5,0.900\n")
    with monkeypatch.context() as mp:
        mp.setattr(connection, "MIGRATIONS", MIGRATIONS[:8])
        mp.setattr(connection, "SCHEMA_VERSION", 8)
        old = open_store(store_path)
        ingest(old, [bib, plain])
        before = old.conn.execute("SELECT dataset_id, seq, molality, value, line FROM points ORDER BY 1, 2").fetchall()
        old.close()
    store = open_store(store_path)
    assert store.schema_version() == len(MIGRATIONS)
    assert store.conn.execute("SELECT dataset_id, seq, molality, value, line FROM points ORDER BY 1, 2"
                              ).fetchall() == before
    assert {r["temperature_k"] for r in point_rows(store, "KCl")} == {298.15}
    assert store.conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
    assert store.conn.execute("PRAGMA foreign_key_check").fetchall() == []
    # the CHECK on the property list holds the new names and no others
    with pytest.raises(sqlite3.IntegrityError, match="CHECK"):
        store.conn.execute("UPDATE datasets SET property = 'enthalpy'")
    store.conn.execute("UPDATE datasets SET property = 'Cp_phi'")
    # a molality once per temperature, and once where the point takes the dataset's temperature
    with pytest.raises(sqlite3.IntegrityError, match="UNIQUE"):
        store.conn.execute("INSERT INTO points (dataset_id, seq, molality, value, value_printed, u_value) "
                           "SELECT dataset_id, 99, molality, value, value_printed, u_value FROM points LIMIT 1")
    with pytest.raises(sqlite3.IntegrityError, match="UNIQUE"):
        store.conn.execute("INSERT INTO points (dataset_id, seq, molality, value, value_printed, u_value, "
                           "temperature_k) SELECT dataset_id, 98 + seq, 0.2, value, value_printed, u_value, "
                           "288.15 FROM points")
    # the rebuilt tables still cascade: removing the dataset removes its points
    with store.transaction():
        store.conn.execute("DELETE FROM datasets")
    assert store.conn.execute("SELECT COUNT(*) FROM points").fetchone()[0] == 0
    store.close()


def test_listings_show_temperatures(run_main, store_path: Path, tmp_path: Path) -> None:
    bib = write(tmp_path / "h.sources.txt", BIB)
    code, _, err = run_main("data", "add", str(bib), str(write(tmp_path / "kcl-t.csv", MULTI)),
                            str(write(tmp_path / "kcl-lphi.csv", THERMAL)), store=store_path)
    assert code == 0, err
    code, out, _ = run_main("data", "list", "--format", "json", store=store_path)
    [rec] = [r for r in json.loads(out) if r["electrolyte"] == "KCl"]
    assert rec["temperatures_k"] == pytest.approx([288.15, 298.15, 313.15])
    code, out, _ = run_main("data", "list", store=store_path)
    assert "T/°C" in out and "15, 25, 40" in out
    # the bundled data stay at 25 °C
    assert all(r["temperatures_k"] == [298.15] for r in json.loads(
        run_main("data", "list", "--format", "json", store=store_path)[1]) if r["electrolyte"] != "KCl")
    code, out, _ = run_main("data", "show", "KCl", store=store_path)
    assert "3 temperatures, 288.15 to 313.15 K" in out
    assert out.count("at 288.15 K (15.00 °C):") == 1 and "at 313.15 K (40.00 °C):" in out
    assert "L_phi (linear basis, molality, values in J/mol)" in out
    code, out, _ = run_main("data", "show", "KCl", "--format", "json", store=store_path)
    temps = {(p["dataset"], round(p["temperature_k"], 2)) for p in json.loads(out)["points"]}
    assert ("kcl-t", 288.15) in temps and ("kcl-t", 313.15) in temps


def test_temperature_groups_take_points_within_0_05_k_as_one() -> None:
    groups = temperature_groups(np.array([298.15, 288.15, 298.17, 313.15, 288.19]))
    assert [(round(t, 3), list(i)) for t, i in groups] == [(288.17, [1, 4]), (298.16, [0, 2]), (313.15, [3])]


def test_the_documented_file_reads_as_written() -> None:
    doc = (REFDATA.parent / "DEVELOPERS.md").read_text(encoding="utf-8")
    block = doc.split("### The `temperature` column", 1)[1].split("```\n", 2)[1]
    d = read_dataset("DEVELOPERS.md", block)
    np.testing.assert_allclose(d.point_temperatures(), [288.15, 298.15, 313.15])
    assert d.temperature_k == 298.15 and d.molality.tolist() == [0.1, 0.1, 0.1]
