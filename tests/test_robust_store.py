"""The store under faults: a SIGKILL in the middle of an ingest, two writers at once, stores of
older and newer schema versions (issue 7, items 6-8).

The batches are generated datasets of our own invented scenario (the Fennwick brine bench, see
tests/corpus/README.md); their values are invented and only need to be well formed. What is
checked comes from SQLite itself: ``PRAGMA integrity_check`` answers ``ok`` for a sound
database (SQLite documentation, "PRAGMA integrity_check"), and a transaction is atomic even
when its process dies (SQLite documentation, "Atomic Commit In SQLite").
"""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import pytest
from conftest import copy_store, write

from saltbench.store import open_store, queries
from saltbench.store.ingest import ingest
from saltbench.store.queries import content_hash
from saltbench.store.schema import MIGRATIONS, SCHEMA_VERSION

CORPUS = Path(__file__).resolve().parent / "corpus"


def _bib(key: str) -> str:
    return f"""\
# invented bibliography of the Fennwick brine bench, a test scenario of saltbench's own
[{key}]
authors: Fennwick Brine Bench
title: Invented osmotic runs for a store test ({key})
publisher: saltbench test scenario (invented)
year: 2026
"""


def _dataset(key: str, source: str, k: int, points: int) -> str:
    # runs differ in the 6th decimal (and the west bench from the east by a shift of its own):
    # the store keeps no second copy of the same points
    shift = 0.001 if "west" in key else 0.0
    rows = "\n".join(f"{0.01 * (i + 1):.2f},{0.90 + shift + 1e-4 * i + 1e-6 * k:.6f}" for i in range(points))
    return f"""\
# saltbench dataset 1
# id: {key}
# electrolyte: KCl
# property: osmotic
# temperature: 25 C
# source: {source}
# table: run {k} (invented)
# precision: 0.000001
# uncertainty: 0.003
# typed: measured at the invented Fennwick brine bench (invented values)
molality,value
{rows}
"""


def _batch(folder: Path, prefix: str, source: str, files: int, points: int) -> list[Path]:
    paths = [write(folder / f"{source}.sources.txt", _bib(source))]
    for k in range(files):
        key = f"{prefix}-{k:03d}"
        paths.append(write(folder / f"{key}.csv", _dataset(key, source, k, points)))
    return paths


def _child(store: Path, paths: list[Path]) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-m", "saltbench", "--store", str(store), "data", "add",
                             *map(str, paths)],
                            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env=dict(os.environ))


def _counts(store_path: Path, prefix: str) -> tuple[int, int]:
    s = open_store(store_path)
    try:
        n_sets = s.conn.execute("SELECT COUNT(*) FROM datasets WHERE key LIKE ?", (prefix + "-%",)).fetchone()[0]
        n_points = s.conn.execute("SELECT COUNT(*) FROM points p JOIN datasets d ON d.id = p.dataset_id "
                                  "WHERE d.key LIKE ?", (prefix + "-%",)).fetchone()[0]
        return n_sets, n_points
    finally:
        s.close()


def _integrity(store_path: Path) -> list[str]:
    s = open_store(store_path)
    try:
        return [r[0] for r in s.conn.execute("PRAGMA integrity_check")]
    finally:
        s.close()


# -- item 6: SIGKILL in the middle of an ingest ----------------------------------------------
def test_sigkill_mid_ingest_leaves_all_or_none_of_the_batch(seeded_store: Path, tmp_path: Path) -> None:
    files, points = 300, 200
    paths = _batch(tmp_path / "batch", "fennwick-kill", "fennwick-kill-2026", files, points)
    before = _hash(seeded_store)
    wal = seeded_store.with_name(seeded_store.name + "-wal")
    assert not wal.exists()  # the copy was closed cleanly: nothing pending before the child

    child = _child(seeded_store, paths)
    # The child writes nothing until its ingest transaction (the bundle is current and there is
    # no migration to apply), so a -wal file growing past a few pages means it is inside it;
    # the whole batch is about 5 MB of pages, so this is early in the transaction.
    deadline = time.monotonic() + 120.0
    while not (wal.exists() and wal.stat().st_size > 256 * 1024):
        assert child.poll() is None, f"the child ended before it was killed: {child.stderr.read()!r}"
        assert time.monotonic() < deadline, "the child never started writing"
        time.sleep(0.005)
    child.send_signal(signal.SIGKILL)
    child.wait(timeout=30)
    child.stderr.close()
    assert child.returncode == -signal.SIGKILL

    assert _integrity(seeded_store) == ["ok"]
    n_sets, n_points = _counts(seeded_store, "fennwick-kill")
    assert (n_sets, n_points) in {(0, 0), (files, files * points)}, (n_sets, n_points)
    if n_sets == 0:
        assert _hash(seeded_store) == before
    # and the store still takes writes
    assert _ingest_one(seeded_store, tmp_path / "after") == (1, 5)


def _hash(store_path: Path) -> str:
    s = open_store(store_path)
    try:
        return content_hash(s)
    finally:
        s.close()


def _ingest_one(store_path: Path, folder: Path) -> tuple[int, int]:
    s = open_store(store_path)
    try:
        ingest(s, _batch(folder, "fennwick-after", "fennwick-after-2026", 1, 5))
    finally:
        s.close()
    return _counts(store_path, "fennwick-after")


# -- item 7: two writers at the same time -----------------------------------------------------
def test_two_processes_adding_at_once_both_succeed_and_keep_every_row(seeded_store: Path,
                                                                      tmp_path: Path) -> None:
    files, points = 60, 200
    a = _batch(tmp_path / "a", "fennwick-east", "fennwick-east-2026", files, points)
    b = _batch(tmp_path / "b", "fennwick-west", "fennwick-west-2026", files, points)
    children = [_child(seeded_store, a), _child(seeded_store, b)]
    errors = []
    for c in children:
        _, err = c.communicate(timeout=180)
        errors.append(err.decode())
    assert [c.returncode for c in children] == [0, 0], errors
    assert errors == ["", ""]
    assert _counts(seeded_store, "fennwick-east") == (files, files * points)
    assert _counts(seeded_store, "fennwick-west") == (files, files * points)
    s = open_store(seeded_store)
    try:
        keys = {r[0] for r in s.conn.execute("SELECT key FROM sources WHERE key LIKE 'fennwick-%'")}
        assert keys == {"fennwick-east-2026", "fennwick-west-2026"}
        # every point's value is the one its file gave (spot-check the last file of each batch)
        for prefix, shift in (("fennwick-east", 0.0), ("fennwick-west", 0.001)):
            got = [r[0] for r in s.conn.execute(
                "SELECT p.value FROM points p JOIN datasets d ON d.id = p.dataset_id WHERE d.key = ? "
                "ORDER BY p.molality", (f"{prefix}-{files - 1:03d}",))]
            assert got == pytest.approx([0.90 + shift + 1e-4 * i + 1e-6 * (files - 1) for i in range(points)],
                                        abs=5e-7)
        assert [r[0] for r in s.conn.execute("PRAGMA integrity_check")] == ["ok"]
    finally:
        s.close()


# -- item 8: older and newer schema versions --------------------------------------------------
def _v1_store(path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    """A store as a saltbench knowing only the first migration wrote it, with user data."""
    from saltbench.store import connection

    with monkeypatch.context() as mp:
        mp.setattr(connection, "MIGRATIONS", MIGRATIONS[:1])
        mp.setattr(connection, "SCHEMA_VERSION", 1)
        s = connection.open_store(path)
        try:
            assert s.schema_version() == 1
            ingest(s, [CORPUS / "good" / "fennwick.sources.txt", CORPUS / "good" / "fennwick-kcl.csv",
                       CORPUS / "good" / "fennwick-pitzer.params.csv"])
        finally:
            s.close()
    return path


def _v1_rows(path: Path) -> dict[str, list[tuple]]:
    """Every row of every table the first migration made, on its own columns only."""
    conn = sqlite3.connect(path)
    try:
        v1 = sqlite3.connect(":memory:")
        v1.executescript(MIGRATIONS[0][1])
        tables = [r[0] for r in v1.execute("SELECT name FROM sqlite_master WHERE type = 'table'")]
        out = {}
        for t in tables:
            cols = [r[1] for r in v1.execute(f"PRAGMA table_info({t})")]
            out[t] = sorted(conn.execute(f"SELECT {', '.join(cols)} FROM {t}").fetchall(), key=repr)
        v1.close()
        return out
    finally:
        conn.close()


def test_a_version_1_store_with_data_is_migrated_forward(store_path: Path,
                                                         monkeypatch: pytest.MonkeyPatch) -> None:
    _v1_store(store_path, monkeypatch)
    before = _v1_rows(store_path)
    assert len(before["points"]) == 3 and len(before["parameter_values"]) == 6

    s = open_store(store_path)
    try:
        assert s.schema_version() == SCHEMA_VERSION
        applied = [r[0] for r in s.conn.execute("SELECT name FROM migrations ORDER BY number")]
        assert applied == [name for name, _ in MIGRATIONS]
        assert [r[0] for r in s.conn.execute("PRAGMA integrity_check")] == ["ok"]
        assert [r for r in s.conn.execute("PRAGMA foreign_key_check")] == []
        pts = queries.points(s, "KCl")
        assert sorted(pts.molality) == [0.1, 0.5, 1.0]  # tests/corpus/good/fennwick-kcl.csv
    finally:
        s.close()
    assert _v1_rows(store_path) == before  # nothing of the old data lost or changed
    # opening again applies nothing more
    again = open_store(store_path)
    try:
        assert again.conn.execute("SELECT COUNT(*) FROM migrations").fetchone()[0] == len(MIGRATIONS)
    finally:
        again.close()


def test_a_newer_store_holding_data_is_refused_by_add_and_left_byte_for_byte(
        seeded_store_file: Path, tmp_path: Path, run_main) -> None:
    """test_store.py covers an empty newer store read by 'data list'; this one holds data and
    is asked to write, and must gain no -wal or -shm file either."""
    store = copy_store(seeded_store_file, tmp_path / "newer.sqlite")
    conn = sqlite3.connect(store)
    conn.execute("PRAGMA journal_mode = DELETE")
    conn.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 7}")
    conn.commit()
    conn.close()
    before = store.read_bytes()
    code, out, err = run_main("data", "add", str(CORPUS / "good" / "fennwick.sources.txt"),
                              str(CORPUS / "good" / "fennwick-kcl.csv"), store=store)
    assert (code, out) == (2, "")
    assert err == (f"Error: store {store} has schema version {SCHEMA_VERSION + 7}, newer than this "
                   f"saltbench understands ({SCHEMA_VERSION}); upgrade saltbench or use another "
                   "store. The store was not changed.\n")
    assert store.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith("newer")) == ["newer.sqlite"]


def test_a_writer_locked_out_past_the_busy_timeout_gets_a_message_not_a_traceback(
        seeded_store: Path, monkeypatch: pytest.MonkeyPatch, run_main) -> None:
    from saltbench.store import connection

    before = _hash(seeded_store)
    holder = sqlite3.connect(seeded_store, isolation_level=None)
    holder.execute("BEGIN IMMEDIATE")  # another process's write transaction, left open
    try:
        monkeypatch.setattr(connection, "BUSY_TIMEOUT_S", 0.05)
        code, out, err = run_main("data", "add", str(CORPUS / "good" / "fennwick.sources.txt"),
                                  str(CORPUS / "good" / "fennwick-kcl.csv"), store=seeded_store)
    finally:
        holder.execute("ROLLBACK")
        holder.close()
    assert (code, out) == (2, "")
    assert err.startswith(f"Error: store {seeded_store} is busy (database is locked)"), err
    assert err.endswith("Nothing was written; try again.\n") and err.count("\n") == 1, err
    assert _hash(seeded_store) == before
