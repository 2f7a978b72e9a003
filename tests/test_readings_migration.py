"""Migration 0002 (measurement tables) applied forward to a version-1 store that holds data."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest
from conftest import write

from saltbench.store import connection, ingest, open_store
from saltbench.store.queries import content_hash
from saltbench.store.schema import MIGRATIONS, SCHEMA_VERSION

BIB = """[own-notebook-9]
authors: A. Operator
title: Bench notebook 9 (test entry)
publisher: test bench
year: 2024
"""
# gamma±(NaCl) at 25 °C: from memory of the CRC Handbook mean activity coefficient table
# (values only stored and read back here, not judged).
DATASET = """# saltbench dataset 1
# electrolyte: NaCl
# property: gamma_pm
# temperature: 25 C
# source: own-notebook-9
# table: test table
# precision: 0.001
# uncertainty: 0.002
# typed: from memory of the CRC Handbook; verify against the original before use in a regulated method
molality,value
0.1,0.779
1.0,0.657
"""
READINGS = """# saltbench readings 1
# kind: water_activity
# electrolyte: NaCl
# temperature: 25 C
# source: own-notebook-9
# typed: measured by the test operator at bench 9
# u_water_activity: 0.0003
molality,water_activity
1.0,0.9669
"""


def test_version_1_store_with_data_migrates_forward(store_path: Path, tmp_path: Path,
                                                     monkeypatch: pytest.MonkeyPatch, run_main) -> None:
    files = [write(tmp_path / "nb.sources.txt", BIB), write(tmp_path / "NaCl.gamma_pm.own.csv", DATASET)]
    with monkeypatch.context() as mp:
        # the code as it was before 0002: one migration
        mp.setattr(connection, "MIGRATIONS", MIGRATIONS[:1])
        mp.setattr(connection, "SCHEMA_VERSION", 1)
        old = open_store(store_path)
        assert old.schema_version() == 1
        ingest(old, files)
        points_before = old.conn.execute("SELECT dataset_id, seq, molality, value FROM points "
                                         "ORDER BY 1, 2").fetchall()
        hash_v1_tables = content_hash(old)
        assert not old.db["measurement_sets"].exists()
        old.close()

    store = open_store(store_path)
    # 0002 and every migration after it (0003 gives points their own printed digit)
    assert store.schema_version() == SCHEMA_VERSION >= 2
    names = [r[0] for r in store.conn.execute("SELECT name FROM migrations ORDER BY number")]
    assert names[:2] == ["0001_reference_data", "0002_measurements"] and len(names) == SCHEMA_VERSION
    assert {"measurement_sets", "readings", "reductions"} <= set(store.db.table_names())
    assert store.conn.execute("SELECT dataset_id, seq, molality, value FROM points ORDER BY 1, 2"
                              ).fetchall() == points_before
    assert content_hash(store) != hash_v1_tables  # the schema version is part of the hash
    store.close()

    # The migrated store takes readings, tied to the electrolyte and citation already in it.
    r = write(tmp_path / "aw.csv", READINGS)
    code, _, err = run_main("readings", "add", str(r), store=store_path)
    assert (code, err) == (0, ""), err
    conn = sqlite3.connect(store_path)
    conn.execute("PRAGMA foreign_keys = ON")
    assert conn.execute("SELECT electrolyte, source FROM measurement_sets").fetchall() == [
        ("NaCl", "own-notebook-9")]
    with pytest.raises(sqlite3.IntegrityError):
        conn.execute("UPDATE measurement_sets SET source = 'no-such-key'")
    conn.close()
