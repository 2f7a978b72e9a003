"""Mixture datasets in the store (migration 0005) and through the command line: added in one
transaction with everything else, unchanged content a no-op, a changed file updated in place,
the same points not stored twice, removal, listing, showing and the data check.

Files are set at the invented Harbour Works laboratory (a test scenario; values made up).
"""

from __future__ import annotations

import json
import sqlite3
from pathlib import Path

import pytest
from conftest import REFDATA, write
from test_mixture_format import BIB, HCL_NACL, NACL_MGCL2_IONS

from saltbench.errors import StoreError, UserError
from saltbench.store import ingest, open_store
from saltbench.store.mixtures import mixture_dataset_rows, mixture_points, remove_mixture
from saltbench.store.queries import content_hash
from saltbench.store.schema import MIGRATIONS


def _files(tmp_path: Path, **texts: str) -> list[Path]:
    return [write(tmp_path / "harbour.sources.txt", BIB)] + [write(tmp_path / f"{k}.csv", t) for k, t in texts.items()]


def test_migration_0005_adds_the_mixture_tables_to_a_store_that_has_data(tmp_path: Path) -> None:
    assert [name for name, _ in MIGRATIONS][4] == "0005_mixture_datasets"
    path = tmp_path / "old.sqlite"
    conn = sqlite3.connect(path)
    for number, (name, sql) in enumerate(MIGRATIONS[:4], start=1):
        if number == 1:
            conn.execute("CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL)")
            conn.execute("CREATE TABLE migrations (number INTEGER PRIMARY KEY, name TEXT NOT NULL, "
                         "applied_at TEXT NOT NULL)")
        conn.executescript(sql)
        conn.execute("INSERT INTO migrations VALUES (?, ?, 'then')", (number, name))
    conn.execute("PRAGMA user_version = 4")
    conn.execute("INSERT INTO parameter_sets (id, set_id, kind, origin, provider, model, temperature_k, "
                 "content_hash) VALUES (1, 'old-set', 'fitted', 'user', 'user', 'pitzer', 298.15, 'h')")
    conn.commit()
    conn.close()
    store = open_store(path)
    try:
        assert store.schema_version() == len(MIGRATIONS) >= 5
        assert store.conn.execute("SELECT set_id FROM parameter_sets").fetchall() == [("old-set",)]
        ingest(store, _files(tmp_path, mix=HCL_NACL))
        assert [r.key for r in mixture_dataset_rows(store)] == ["mix"]
    finally:
        store.close()


def test_the_schema_refuses_what_no_file_can_say(memory_store, tmp_path: Path) -> None:
    """Constraints in the schema, not only in Python: a negative ion molality, a gamma property
    without its salt."""
    ingest(memory_store, _files(tmp_path, mix=HCL_NACL))
    with pytest.raises(sqlite3.IntegrityError):
        memory_store.conn.execute("UPDATE mixture_point_ions SET molality = -1 WHERE seq = 0")
    with pytest.raises(sqlite3.IntegrityError):
        memory_store.conn.execute("UPDATE mixture_datasets SET salt = NULL")
    with pytest.raises(sqlite3.IntegrityError):
        memory_store.conn.execute("UPDATE mixture_point_ions SET ion = 'Qq' WHERE seq = 0")


def test_adding_again_changes_nothing_and_a_changed_file_is_updated_in_place(memory_store, tmp_path) -> None:
    files = _files(tmp_path, mix=HCL_NACL)
    assert ingest(memory_store, files).added == ["source harbour-lab-2026", "mixture dataset mix"]
    h = content_hash(memory_store)
    assert ingest(memory_store, files).unchanged == ["source harbour-lab-2026", "mixture dataset mix"]
    assert content_hash(memory_store) == h
    write(files[1], HCL_NACL.replace("0.05,0.95,0.7600,", "0.05,0.95,0.7610,"))
    assert ingest(memory_store, files).updated == ["mixture dataset mix"]
    assert content_hash(memory_store) != h
    [mp] = mixture_points(memory_store, "mix")
    assert mp.n == 3 and memory_store.conn.execute("SELECT COUNT(*) FROM mixture_point_ions").fetchone()[0] == 9


def test_the_same_points_under_another_name_are_refused(memory_store, tmp_path: Path) -> None:
    ingest(memory_store, _files(tmp_path, mix=HCL_NACL))
    h = content_hash(memory_store)
    # the same compositions and values, the salts written in the other order
    twin = HCL_NACL.replace("HCl + NaCl", "NaCl + HCl").replace("run sheet 12", "run sheet 12, copy")
    with pytest.raises(UserError, match="the same points as mixture dataset mix"):
        ingest(memory_store, [write(tmp_path / "copy.csv", twin)])
    assert content_hash(memory_store) == h


def test_a_bad_file_among_good_ones_leaves_the_store_unchanged(memory_store, tmp_path: Path) -> None:
    h = content_hash(memory_store)
    bad = NACL_MGCL2_IONS.replace("0.4,0.2,0.8,0.919", "0.4,0.2,0.8,-0.919")
    with pytest.raises(UserError, match=r"bad\.csv:12: field 'value'"):
        ingest(memory_store, _files(tmp_path, good=HCL_NACL, bad=bad))
    assert content_hash(memory_store) == h


def test_an_unknown_citation_key_is_refused_at_ingest(memory_store, tmp_path: Path) -> None:
    with pytest.raises(UserError, match=r"nobib\.csv:5: field 'source': unknown citation key 'harbour-lab-2026'"):
        ingest(memory_store, [write(tmp_path / "nobib.csv", HCL_NACL)])


def test_a_key_is_one_dataset_whichever_kind(memory_store, tmp_path: Path) -> None:
    one_salt = (REFDATA / "datasets" / "NaCl.gamma_pm.crc-acids-bases-salts.csv").name.removesuffix(".csv")
    ingest(memory_store, [REFDATA / "sources.txt", REFDATA / "datasets" / f"{one_salt}.csv"])
    clash = HCL_NACL.replace("# uncertainty: 0.002", f"# uncertainty: 0.002\n# id: {one_salt}")
    with pytest.raises(UserError, match="already used by a one-salt dataset"):
        ingest(memory_store, _files(tmp_path, clash=clash))


def test_a_one_salt_dataset_cannot_take_a_mixture_key(memory_store, tmp_path: Path) -> None:
    ingest(memory_store, _files(tmp_path, mix=HCL_NACL))
    one_salt = (REFDATA / "datasets" / "NaCl.gamma_pm.crc-acids-bases-salts.csv").read_text(encoding="utf-8")
    with pytest.raises(UserError, match="'mix' is already used by a mixture dataset"):
        ingest(memory_store, [REFDATA / "sources.txt", write(tmp_path / "mix.csv", one_salt)])
    # in one command, two files of either kind with one key are refused before anything is written
    h = content_hash(memory_store)
    with pytest.raises(UserError, match="dataset id 'mix' is also used by"):
        ingest(memory_store, [REFDATA / "sources.txt", write(tmp_path / "a" / "mix.csv", one_salt),
                              *_files(tmp_path, mix=HCL_NACL)])
    assert content_hash(memory_store) == h


def test_removal_takes_the_points_and_respects_fits(memory_store, tmp_path: Path) -> None:
    ingest(memory_store, _files(tmp_path, mix=HCL_NACL))
    [mp] = mixture_points(memory_store, "mix")
    # a fitted set that records the dataset's content hash among its data depends on it
    memory_store.conn.execute(
        "INSERT INTO parameter_sets (set_id, kind, origin, provider, model, temperature_k, content_hash, "
        "data_hashes) VALUES ('mix-fit', 'fitted', 'user', 'user', 'pitzer', 298.15, 'x', ?)",
        (json.dumps([mp.content_hash]),))
    with pytest.raises(UserError, match="used by parameter set mix-fit"):
        remove_mixture(memory_store, "mix")
    assert remove_mixture(memory_store, "mix", force=True) == ["mixture dataset mix", "parameter set mix-fit"]
    for table in ("mixture_datasets", "mixture_points", "mixture_point_ions"):
        assert memory_store.conn.execute(f"SELECT COUNT(*) FROM {table}").fetchone()[0] == 0
    assert remove_mixture(memory_store, "mix") is None


def test_bundled_mixtures_sync_with_the_bundle(memory_store, tmp_path: Path) -> None:
    files = _files(tmp_path, mix=HCL_NACL)
    ingest(memory_store, files, origin="bundled", provider="bundled", sync=True)
    assert [r.origin for r in mixture_dataset_rows(memory_store)] == ["bundled"]
    with pytest.raises(UserError, match="bundled with saltbench"):
        remove_mixture(memory_store, "mix")
    report = ingest(memory_store, files[:1], origin="bundled", provider="bundled", sync=True)
    assert "mixture dataset mix" in report.removed and mixture_dataset_rows(memory_store) == []


def test_an_unknown_system_names_the_known_ones(memory_store, tmp_path: Path) -> None:
    ingest(memory_store, _files(tmp_path, mix=HCL_NACL))
    with pytest.raises(UserError, match=r"no mixture dataset or system 'KCl \+ NaCl'.*known systems: HCl \+ NaCl"):
        mixture_points(memory_store, "KCl + NaCl")


def test_a_read_only_store_refuses_a_mixture_in_one_line(tmp_path: Path) -> None:
    store = open_store(tmp_path / "s.sqlite")
    store.read_only = True
    try:
        with pytest.raises(StoreError, match="read-only"):
            ingest(store, _files(tmp_path, mix=HCL_NACL))
    finally:
        store.close()


# -- command line ---------------------------------------------------------------------------
def test_cli_add_list_show_check_remove(run_main, seeded_store: Path, tmp_path: Path) -> None:
    files = [str(p) for p in _files(tmp_path, mix=HCL_NACL, ions=NACL_MGCL2_IONS)]
    code, out, err = run_main("data", "add", *files, "--format", "json", store=seeded_store)
    assert (code, err) == (0, ""), err
    assert {"mixture dataset mix", "mixture dataset ions"} <= set(json.loads(out)["added"])

    # the electrolyte listing keeps its JSON shape; the mixtures have their own
    code, out, _ = run_main("data", "list", "--format", "json", store=seeded_store)
    assert code == 0 and all("electrolyte" in r for r in json.loads(out))
    code, out, _ = run_main("data", "list", "--mixtures", "--format", "json", store=seeded_store)
    listed = {r["key"]: r for r in json.loads(out)}
    assert set(listed) == {"mix", "ions"}
    assert listed["mix"]["property"] == "gamma_pm(HCl)" and listed["mix"]["quantity"] == ["ln_gamma_pm", "HCl"]
    assert listed["ions"]["typed_as"] == "invented" and listed["mix"]["typed_as"] == "measured"
    assert listed["ions"]["min_ionic_strength"] == pytest.approx(1.0)
    code, out, _ = run_main("data", "list", store=seeded_store)
    assert "2 mixture datasets" in out and "HCl + NaCl" in out

    code, out, _ = run_main("data", "show", "NaCl + HCl", "--format", "json", store=seeded_store)
    [shown] = json.loads(out)
    assert shown["key"] == "mix" and shown["ions"] == ["H+", "Cl-", "Na+"]
    assert [p["m(Na+)"] for p in shown["points"]] == [0.0, 0.5, 0.95]
    assert [p["ionic_strength"] for p in shown["points"]] == pytest.approx([1.0, 1.0, 1.0])
    code, out, _ = run_main("data", "show", "ions", store=seeded_store)
    assert code == 0 and "invented example data" in out and "m(Mg+2)" in out

    code, out, err = run_main("data", "check", "mix", store=seeded_store)
    assert code == 0, out + err
    assert "mix: gibbs-duhem: not applicable" in out and "gamma±(HCl)" in out

    code, out, _ = run_main("data", "remove", "mix", store=seeded_store)
    assert code == 0 and out == "removed mixture dataset mix\n"
    code, out, err = run_main("data", "show", "mix", store=seeded_store)
    assert code == 2 and "mix" in err


def test_data_check_flags_implausible_values_and_duplicates(run_main, seeded_store: Path, tmp_path: Path) -> None:
    # gamma± of 2000 is possible to write but no aqueous salt has it: a slip (bounds)
    slip = HCL_NACL.replace("0.05,0.95,0.7600,", "0.05,0.95,2000,")
    # a second source repeating one composition of 'mix': once with the same value, once far off
    second = HCL_NACL.replace("run sheet 12", "run sheet 14").replace(
        "1.0,0,0.809,\n0.5,0.5,0.781,0.004\n0.05,0.95,0.7600,", "1.0,0,0.809,\n0.5,0.5,0.900,0.004")
    files = [str(p) for p in _files(tmp_path, mix=slip, second=second)]
    assert run_main("data", "add", *files, store=seeded_store)[0] == 0
    code, out, err = run_main("data", "check", "HCl + NaCl", "--format", "json", store=seeded_store)
    assert code == 1, err
    report = json.loads(out)
    found = {(f["check"], f["dataset"], f["line"]) for f in report["findings"]}
    assert ("bounds", "mix", 12) in found
    assert ("duplicates", "second", 10) in found  # the same value again: counted twice
    assert ("duplicates", "second", 11) in found  # 0.900 against 0.781, u 0.004 each
    gd = [r for r in report["checks"] if r["check"] == "gibbs-duhem"]
    assert {r["status"] for r in gd} == {"not applicable"} and len(gd) == 2
    # the text output names file and line of each flagged point
    code, out, _ = run_main("data", "check", "mix", store=seeded_store)
    assert code == 1 and f"{tmp_path / 'mix.csv'}:12: bounds: HCl + NaCl gamma±(HCl) = 2000" in out


def test_data_check_without_names_covers_mixtures_too(run_main, seeded_store: Path, tmp_path: Path) -> None:
    code, before, _ = run_main("data", "check", "--format", "json", store=seeded_store)
    files = [str(p) for p in _files(tmp_path, mix=HCL_NACL)]
    assert run_main("data", "add", *files, store=seeded_store)[0] == 0
    code2, after, _ = run_main("data", "check", "--format", "json", store=seeded_store)
    assert code2 == code
    extra = json.loads(after)["checks"][len(json.loads(before)["checks"]):]
    assert [r["check"] for r in extra] == ["bounds", "ionic-strength", "gibbs-duhem"]
