"""A store that cannot be written (a lab's locked, validated store, a read-only file system) is
read as it is; writing commands say in one line that it is read-only and change nothing."""

from __future__ import annotations

import json
import os
import sqlite3

import pytest
from conftest import copy_store, write


@pytest.fixture
def locked(seeded_store_file, tmp_path, monkeypatch):
    (tmp_path / "locked").mkdir()
    path = copy_store(seeded_store_file, tmp_path / "locked" / "store.sqlite")
    conn = sqlite3.connect(path)
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.close()
    for extra in ("-wal", "-shm"):
        (path.parent / (path.name + extra)).unlink(missing_ok=True)
    before = path.read_bytes()
    real = os.access
    # as a user without write permission sees it (root would see every file as writable)
    monkeypatch.setattr(os, "access", lambda p, mode, **kw: False if str(p).startswith(str(path.parent))
                        and mode & os.W_OK else real(p, mode, **kw))
    yield path
    assert path.read_bytes() == before
    assert sorted(p.name for p in path.parent.iterdir()) == ["store.sqlite"]


def test_reading_commands_work_on_a_read_only_store(run_main, locked) -> None:
    code, out, err = run_main("data", "list", "--format", "json", store=locked)
    assert code == 0, err
    assert len(json.loads(out)) >= 80
    code, out, err = run_main("compare", "NaCl", "--models", "davies", "--jobs", "1", store=locked)
    assert code == 0, err


def test_writing_commands_say_the_store_is_read_only(run_main, locked, tmp_path) -> None:
    bib = write(tmp_path / "b.sources.txt", "[x-1]\nauthors: A\ntitle: T (invented)\npublisher: P\nyear: 2026\n")
    code, out, err = run_main("data", "add", str(bib), store=locked)
    assert code == 2 and err.count("\n") == 1 and "is read-only" in err
    code, out, err = run_main("fit", "NaCl", "--model", "pitzer", store=locked)
    assert code == 2 and "is read-only" in err
