"""The store: migrations, schema constraints, bundled-data sync, and where the store lives."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest
from conftest import bundle_copy, copy_store, write

from saltbench.api import Session
from saltbench.errors import StoreError
from saltbench.store import open_store, resolve_store_path
from saltbench.store.bundled import sync_bundled
from saltbench.store.queries import content_hash
from saltbench.store.schema import MIGRATIONS, SCHEMA_VERSION

# -- migrations -----------------------------------------------------------------------------


def test_fresh_store_is_at_schema_version(store_path: Path) -> None:
    store = open_store(store_path)
    assert store.schema_version() == SCHEMA_VERSION == len(MIGRATIONS)
    applied = [r[0] for r in store.conn.execute("SELECT name FROM migrations ORDER BY number")]
    assert applied == [name for name, _ in MIGRATIONS]
    store.close()
    # Reopening applies nothing again.
    again = open_store(store_path)
    assert again.conn.execute("SELECT COUNT(*) FROM migrations").fetchone()[0] == len(MIGRATIONS)
    again.close()


def test_newer_store_is_refused_and_left_byte_for_byte(store_path: Path, run_main) -> None:
    conn = sqlite3.connect(store_path)
    conn.execute("CREATE TABLE written_by_the_future (x)")
    conn.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 1}")
    conn.commit()
    conn.close()
    before = store_path.read_bytes()
    with pytest.raises(StoreError) as info:
        open_store(store_path)
    msg = str(info.value)
    assert f"schema version {SCHEMA_VERSION + 1}" in msg
    assert f"newer than this saltbench understands ({SCHEMA_VERSION})" in msg
    assert "The store was not changed." in msg
    assert store_path.read_bytes() == before

    code, out, err = run_main("data", "list")
    assert (code, out) == (2, "")
    assert err.startswith("Error: store ") and "newer than this saltbench" in err
    assert "Traceback" not in err
    assert store_path.read_bytes() == before


def test_a_file_that_is_not_sqlite_is_refused(store_path: Path) -> None:
    write(store_path, "station, flow\n1, 2\n")
    with pytest.raises(StoreError, match="not a saltbench store"):
        open_store(store_path)
    assert store_path.read_text() == "station, flow\n1, 2\n"


def test_foreign_keys_are_enforced(memory_store) -> None:
    assert memory_store.conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
    with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"):
        memory_store.conn.execute(
            "INSERT INTO electrolytes (name, cation, anion, nu_cation, nu_anion, charge_type, "
            "molar_mass, origin) VALUES ('XY', 'NoSuchIon', 'Cl', 1, 1, '1-1', 0.1, 'user')")


# A minimal valid chain of rows, so each constraint test breaks exactly one thing.
def _seed_rows(conn: sqlite3.Connection) -> int:
    conn.execute("INSERT INTO sources (key, authors, title, year, citation, origin, file, content_hash) "
                 "VALUES ('k', 'A', 'T', 2000, 'A. T. 2000.', 'user', 'f', 'h')")
    conn.execute("INSERT INTO ions VALUES ('Na', 'Na', 1, 0.02299, 'builtin')")
    conn.execute("INSERT INTO ions VALUES ('Cl', 'Cl', -1, 0.03545, 'builtin')")
    conn.execute("INSERT INTO electrolytes VALUES ('NaCl', 'Na', 'Cl', 1, 1, '1-1', 0.05844, 'builtin')")
    return _insert_dataset(conn, "gamma_pm")


def _insert_dataset(conn: sqlite3.Connection, prop: str, key: str = "d") -> int:
    cur = conn.execute(
        "INSERT INTO datasets (key, origin, provider, electrolyte, property, basis, scale, "
        "temperature_k, pressure_pa, source, table_ref, precision, uncertainty, typed, "
        "from_memory, file, content_hash, n_points) VALUES (?, 'user', 'user', 'NaCl', ?, "
        "'linear', 'molality', 298.15, 101325, 'k', 't', 0.001, 0.003, 'measured', 0, 'f', 'h', 1)",
        (key, prop))
    return int(cur.lastrowid)


def test_schema_rejects_a_negative_molality(memory_store) -> None:
    ds = _seed_rows(memory_store.conn)
    with pytest.raises(sqlite3.IntegrityError, match="CHECK"):
        memory_store.conn.execute("INSERT INTO points (dataset_id, seq, molality, value, value_printed, "
                                  "u_value) VALUES (?, 0, -0.1, 0.7, 0.7, 0.003)", (ds,))
    memory_store.conn.execute("INSERT INTO points (dataset_id, seq, molality, value, value_printed, "
                              "u_value) VALUES (?, 0, 0.1, 0.7, 0.7, 0.003)", (ds,))


def test_schema_rejects_an_unknown_property(memory_store) -> None:
    _seed_rows(memory_store.conn)
    with pytest.raises(sqlite3.IntegrityError, match="CHECK"):
        _insert_dataset(memory_store.conn, "heat_capacity", key="e")


def test_deleting_a_dataset_removes_its_points(memory_store) -> None:
    ds = _seed_rows(memory_store.conn)
    memory_store.conn.execute("INSERT INTO points (dataset_id, seq, molality, value, value_printed, "
                              "u_value) VALUES (?, 0, 0.1, 0.7, 0.7, 0.003)", (ds,))
    memory_store.conn.execute("DELETE FROM datasets WHERE id = ?", (ds,))
    assert memory_store.conn.execute("SELECT COUNT(*) FROM points").fetchone()[0] == 0


# -- bundled data ---------------------------------------------------------------------------


def test_reloading_unchanged_bundled_data_is_a_no_op(seeded_store: Path) -> None:
    store = open_store(seeded_store)
    h = content_hash(store)
    assert sync_bundled(store) is None
    assert content_hash(store) == h
    forced = sync_bundled(store, force=True)
    assert forced is not None and not forced.changed and forced.unchanged
    assert content_hash(store) == h
    store.close()


NACL_KEY = "NaCl.gamma_pm.crc-acids-bases-salts"


def _nacl_rs_gamma(root: Path) -> Path:
    return root / "datasets" / f"{NACL_KEY}.csv"


def _change_value_at(path: Path, molality: str, new_value: str) -> int:
    """Replace the value on the row of ``molality``; returns that row's 1-based line number."""
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    for i, line in enumerate(lines):
        cells = line.rstrip("\n").split(",")
        if cells[0] == molality:
            lines[i] = ",".join([molality, new_value, *cells[2:]]) + "\n"
            path.write_text("".join(lines), encoding="utf-8")
            return i + 1
    raise AssertionError(f"no row for m = {molality} in {path}")


def test_changed_bundled_data_is_updated_not_duplicated(store_path: Path, tmp_path: Path,
                                                        monkeypatch: pytest.MonkeyPatch) -> None:
    root = bundle_copy(tmp_path, monkeypatch)
    store = open_store(store_path)
    assert sync_bundled(store) is not None
    n_before = store.conn.execute("SELECT COUNT(*) FROM datasets").fetchone()[0]
    h_before = content_hash(store)
    assert sync_bundled(store) is None

    # 0.681 at 0.5 mol/kg: NaCl gamma±, CRC Handbook "Activity Coefficients of Acids, Bases, and
    # Salts" (the Robinson-Stokes evaluation); the edit only has to differ from it.
    _change_value_at(_nacl_rs_gamma(root), "0.5", "0.682")
    report = sync_bundled(store)
    assert report is not None
    assert report.updated == [f"dataset {NACL_KEY}"]
    assert not report.added and not report.removed
    assert store.conn.execute("SELECT COUNT(*) FROM datasets").fetchone()[0] == n_before
    rows = store.conn.execute(
        "SELECT p.value FROM points p JOIN datasets d ON d.id = p.dataset_id "
        "WHERE d.key = ? AND p.molality = 0.5", (NACL_KEY,)).fetchall()
    assert rows == [(0.682,)]
    assert content_hash(store) != h_before
    store.close()


def test_bundled_dataset_dropped_from_the_bundle_is_removed(store_path: Path, tmp_path: Path,
                                                            monkeypatch: pytest.MonkeyPatch) -> None:
    from saltbench.store import bundled

    root = bundle_copy(tmp_path, monkeypatch)
    store = open_store(store_path)
    sync_bundled(store)
    files = bundled.bundled_files()
    gone = _nacl_rs_gamma(root)
    monkeypatch.setattr(bundled, "bundled_files", lambda: [f for f in files if f != gone])
    report = sync_bundled(store)
    assert report is not None and report.removed == [f"dataset {NACL_KEY}"]
    left = store.conn.execute("SELECT COUNT(*) FROM datasets WHERE key = ?", (NACL_KEY,)).fetchone()[0]
    assert left == 0
    store.close()


USER_BIB = """\
[harbour-lab-2026]
authors: Harbour Works Laboratory
title: Invented isopiestic runs on sodium chloride (test scenario, invented values)
publisher: saltbench test scenario
year: 2026
"""

# Invented values in a scenario of our own; nothing is checked against them but themselves.
USER_DATA = """\
# saltbench dataset 1
# electrolyte: NaCl
# property: gamma_pm
# temperature: 25 C
# source: harbour-lab-2026
# table: run sheet 3 (invented)
# precision: 0.001
# uncertainty: 0.004
# typed: measured by the invented Harbour Works laboratory (test scenario, invented values)
molality,value
0.1,0.779
0.5,0.680
1.0,0.658
"""


def test_user_data_untouched_by_a_bundled_update(store_path: Path, tmp_path: Path,
                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    root = bundle_copy(tmp_path, monkeypatch)
    session = Session(store_path)
    bib = write(tmp_path / "user" / "bib.txt", USER_BIB)
    data = write(tmp_path / "user" / "harbour-nacl.csv", USER_DATA)
    session.add([bib, data])
    user_rows = lambda: session.store.conn.execute(
        "SELECT d.key, d.content_hash, p.molality, p.value FROM datasets d "
        "JOIN points p ON p.dataset_id = d.id WHERE d.origin = 'user' ORDER BY p.molality").fetchall()
    user_source = lambda: session.store.conn.execute(
        "SELECT * FROM sources WHERE origin = 'user'").fetchall()
    before, src_before = user_rows(), user_source()
    assert len(before) == 3

    _change_value_at(_nacl_rs_gamma(root), "0.5", "0.682")
    report = session.refresh_bundled()
    assert report is not None and report.updated == [f"dataset {NACL_KEY}"]
    assert user_rows() == before
    assert user_source() == src_before
    session.store.close()


# -- where the store lives ------------------------------------------------------------------


def test_store_resolution_order(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    explicit, env = tmp_path / "explicit.sqlite", tmp_path / "env.sqlite"
    # XDG_DATA_HOME points into tmp_path (conftest); the default sits below it.
    assert resolve_store_path() == tmp_path / "xdg-data" / "saltbench" / "store.sqlite"
    monkeypatch.setenv("SALTBENCH_STORE", str(env))
    assert resolve_store_path() == env
    assert resolve_store_path(explicit) == explicit


def test_cli_store_option_beats_the_environment(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                seeded_store_file: Path) -> None:
    from saltbench.cli import main

    explicit = copy_store(seeded_store_file, tmp_path / "explicit.sqlite")
    env = copy_store(seeded_store_file, tmp_path / "env.sqlite")
    bib = write(tmp_path / "bib.txt", USER_BIB)
    data = write(tmp_path / "harbour-nacl.csv", USER_DATA)
    monkeypatch.setenv("SALTBENCH_STORE", str(env))

    def user_count(p: Path) -> int:
        with sqlite3.connect(p) as c:
            return c.execute("SELECT COUNT(*) FROM datasets WHERE origin = 'user'").fetchone()[0]

    main(["--store", str(explicit), "data", "add", str(bib), str(data)])
    assert (user_count(explicit), user_count(env)) == (1, 0)
    main(["data", "add", str(bib), str(data)])
    assert (user_count(explicit), user_count(env)) == (1, 1)
    assert not (tmp_path / "xdg-data").exists()
