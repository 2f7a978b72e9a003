"""Parameter files with an ``ions`` first column (mixing parameters of like-charged pairs and
triplets), their ingest, the migration that lets the store hold them, and
``composition_values``: the stored values of every key a composition needs.

The files here are set in the invented Fennwick brine bench scenario of tests/corpus (invented
values, not for use). The malformed ``ions`` files are in tests/corpus/bad (p17-p23).
"""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.chemistry.solution import Composition
from saltbench.curation.parameters import ion_group, read_parameter_file
from saltbench.errors import InputFileError, UserError
from saltbench.models.contract import ParameterKey
from saltbench.plugins.pitzer import Pitzer
from saltbench.store.connection import open_store
from saltbench.store.ingest import ingest
from saltbench.store.parameter_sets import composition_values, list_sets, published
from saltbench.store.schema import MIGRATIONS

CORPUS = Path(__file__).resolve().parent / "corpus"
BIB = CORPUS / "good" / "fennwick.sources.txt"
HEAD = """# saltbench parameters 1
# set: {set_id}
# model: {model}
# source: fennwick-2026
# table: fit sheet 3 (invented)
# temperature: 25 C
# typed: fitted by the invented Fennwick brine bench (invented values)
"""


def _file(tmp_path: Path, set_id: str, body: str, model: str = "pitzer") -> Path:
    path = tmp_path / f"{set_id}.params.csv"
    path.write_text(HEAD.format(set_id=set_id, model=model) + body, encoding="utf-8")
    return path


MIXING = "ions,theta,psi\nNa+/K+,-0.011,\nCl-/K+/Na+,,-0.002\nSO4-2/Cl-,0.021,\n"
BINARY = "electrolyte,beta0,beta1,C_phi,m_max\nNaCl,0.07,0.25,0.001,6\nKCl,0.05,0.2,-0.001,4\n"


def test_an_ions_cell_names_its_owner_in_key_order():
    assert ion_group("Na+/K+") == ("K+", "Na+")
    assert ion_group("Cl-/Na+/K+") == ("K+", "Na+", "Cl-")
    assert ion_group("Na+/SO4-2/Cl-") == ("Na+", "Cl-", "SO4-2")
    assert ion_group(" Mg+2 / Ca+2 ") == ("Ca+2", "Mg+2")
    # the same order as the model's keys, read back through ParameterKey's str form
    assert str(ParameterKey("psi", ion_group("Cl-/Na+/K+"))) == "psi[K+/Na+/Cl-]"


@pytest.mark.parametrize("cell,fragment", [
    ("Na+", "name two ions"), ("Na+/Cl-", "like sign"), ("K+/Na+/Mg+2", "a triplet is"),
    ("Cl-/Br-/SO4-2", "a triplet is"), ("Na+/Na+", "twice"), ("Na+/Xy+", "unknown ion"),
    ("Na/K", "unknown ion"),
])
def test_bad_ions_cells(cell: str, fragment: str):
    with pytest.raises(ValueError, match=fragment):
        ion_group(cell)


def test_a_mixing_file_is_read_with_canonical_owners(tmp_path: Path):
    pf = read_parameter_file(_file(tmp_path, "fennwick-mixing", MIXING))
    assert pf.target_kind == "ions"
    assert [r.target for r in pf.rows] == ["K+/Na+", "K+/Na+/Cl-", "Cl-/SO4-2"]
    assert pf.rows[0].values == {"theta": -0.011} and pf.rows[1].values == {"psi": -0.002}


def test_bad_mixing_row_names_file_line_and_field(tmp_path: Path):
    path = _file(tmp_path, "fennwick-mixing", "ions,theta\nK+/Na+,0.01\nNa+/Cl-,0.02\n")
    with pytest.raises(InputFileError) as err:
        read_parameter_file(path)
    assert str(err.value).startswith(f"{path}:10: field 'ions': ")


def test_the_bundled_files_keep_their_kinds():
    # electrolyte and ion files read as before (their targets are not groups of ions); that
    # they give the same numbers everywhere is held by tests/test_golden.py
    root = Path(__file__).resolve().parents[1] / "refdata" / "parameters"
    for path in root.glob("*.csv"):
        pf = read_parameter_file(path)
        assert pf.target_kind in ("electrolyte", "ion", "ions")
        if pf.target_kind != "ions":
            assert all("/" not in r.target for r in pf.rows)


@pytest.fixture
def store(tmp_path: Path):
    s = open_store(memory=True)
    ingest(s, [BIB, _file(tmp_path, "fennwick-binary", BINARY),
               _file(tmp_path, "fennwick-mixing", MIXING)])
    yield s
    s.close()


def _keys(*formulas: str) -> dict:
    comp = Composition.of_salts([(parse_formula(f), 0.1) for f in formulas])
    return Pitzer().keys_for(comp)


def test_values_for_a_composition_from_several_sets(store):
    keys = _keys("NaCl", "KCl", "Na2SO4")
    got = composition_values(store, "pitzer", ["fennwick-binary", "fennwick-mixing"], keys)
    assert got.values[ParameterKey("beta0", ("Na+", "Cl-"))] == 0.07
    assert got.values[ParameterKey("C_phi", ("K+", "Cl-"))] == -0.001
    # the composition's order (Na+ before K+) finds the row written K+/Na+
    assert got.values[ParameterKey("theta", ("Na+", "K+"))] == -0.011
    assert got.values[ParameterKey("psi", ("Na+", "K+", "Cl-"))] == -0.002
    assert got.values[ParameterKey("theta", ("Cl-", "SO4-2"))] == 0.021
    assert got.set_of[ParameterKey("theta", ("Na+", "K+"))] == "fennwick-mixing"
    assert got.set_of[ParameterKey("beta0", ("Na+", "Cl-"))] == "fennwick-binary"
    missing = {str(k) for k in got.missing}
    # no Na2SO4 row, no K2SO4 row (the pair K+/SO4-2 is in the solution), no model-wide b,
    # no beta2 in the binary file, no psi with SO4
    assert "beta0[Na+/SO4-2]" in missing and "beta0[K+/SO4-2]" in missing
    assert "b" in missing and "beta2[Na+/Cl-]" in missing
    assert "psi[Na+/Cl-/SO4-2]" in missing
    assert set(got.values) | set(got.missing) == set(keys)
    assert not set(got.values) & set(got.missing)


def test_the_first_set_that_holds_a_key_gives_it(store, tmp_path: Path):
    other = _file(tmp_path, "fennwick-binary-2", "electrolyte,beta0\nNaCl,0.09\n")
    ingest(store, [other])
    keys = _keys("NaCl")
    key = ParameterKey("beta0", ("Na+", "Cl-"))
    first = composition_values(store, "pitzer", ["fennwick-binary-2", "fennwick-binary"], keys)
    second = composition_values(store, "pitzer", ["fennwick-binary", "fennwick-binary-2"], keys)
    assert (first.values[key], first.set_of[key]) == (0.09, "fennwick-binary-2")
    assert (second.values[key], second.set_of[key]) == (0.07, "fennwick-binary")
    # beta1 only in fennwick-binary: found there whatever the order
    assert first.values[ParameterKey("beta1", ("Na+", "Cl-"))] == 0.25


def test_unknown_sets_and_sets_of_another_model_are_refused(store, tmp_path: Path):
    with pytest.raises(UserError, match="no parameter set 'nothing-here'"):
        composition_values(store, "pitzer", ["nothing-here"], _keys("NaCl"))
    ingest(store, [_file(tmp_path, "fennwick-sit", "electrolyte,eps\nNaCl,0.03\n", model="sit")])
    with pytest.raises(UserError, match="belongs to model sit, not pitzer"):
        composition_values(store, "pitzer", ["fennwick-sit"], _keys("NaCl"))


def test_a_mixing_set_gives_no_one_salt_values(store):
    # the one-salt lookups (predict, compare) see no set for NaCl in a file of ions only
    sets = [r.set_id for r in published(store, Pitzer(), parse_formula("NaCl"))]
    assert sets == ["fennwick-binary"]
    rows = {r["set_id"]: r for r in list_sets(store).to_dict("records")}
    assert rows["fennwick-mixing"]["n_targets"] == 3


def test_ingest_is_one_transaction_and_idempotent(store, tmp_path: Path):
    path = _file(tmp_path, "fennwick-mixing", MIXING)
    report = ingest(store, [path])
    assert report.unchanged == ["parameter set fennwick-mixing"]
    n = store.conn.execute("SELECT COUNT(*) FROM parameter_values WHERE target_kind = 'ions'"
                           ).fetchone()[0]
    assert n == 3


def test_the_migration_keeps_every_stored_value(tmp_path: Path):
    # a store at schema 3 (before groups of ions) with a value in it, migrated to today's
    path = tmp_path / "old.sqlite"
    conn = sqlite3.connect(path)
    for number, (name, sql) in enumerate(MIGRATIONS[:3], start=1):
        if number == 1:
            conn.execute("CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL)")
            conn.execute("CREATE TABLE migrations (number INTEGER PRIMARY KEY, name TEXT NOT NULL, "
                         "applied_at TEXT NOT NULL)")
        conn.executescript(sql)
        conn.execute("INSERT INTO migrations VALUES (?, ?, 'then')", (number, name))
    conn.execute("PRAGMA user_version = 3")
    conn.execute("INSERT INTO parameter_sets (id, set_id, kind, origin, provider, model, "
                 "temperature_k, content_hash) VALUES (1, 'old-set', 'fitted', 'user', 'user', "
                 "'pitzer', 298.15, 'h')")
    conn.execute("INSERT INTO parameter_values VALUES (1, 'NaCl', 'electrolyte', 'beta0', 0.08, "
                 "0.001, NULL)")
    with pytest.raises(sqlite3.IntegrityError):
        conn.execute("INSERT INTO parameter_values VALUES (1, 'K+/Na+', 'ions', 'theta', 0.1, "
                     "NULL, NULL)")
    conn.commit()
    conn.close()
    store = open_store(path)
    try:
        assert store.schema_version() == len(MIGRATIONS)
        assert store.conn.execute("SELECT target, target_kind, name, value, stderr FROM "
                                  "parameter_values").fetchall() == [
            ("NaCl", "electrolyte", "beta0", 0.08, 0.001)]
        store.conn.execute("INSERT INTO parameter_values VALUES (1, 'K+/Na+', 'ions', 'theta', "
                           "0.1, NULL, NULL)")
        with pytest.raises(sqlite3.IntegrityError):
            store.conn.execute("INSERT INTO parameter_values VALUES (1, 'x', 'salt', 'theta', "
                               "0.1, NULL, NULL)")
        # the foreign key to the set still holds: deleting the set deletes its values
        store.conn.execute("DELETE FROM parameter_sets WHERE id = 1")
        assert store.conn.execute("SELECT COUNT(*) FROM parameter_values").fetchone()[0] == 0
    finally:
        store.close()


def test_a_mixing_set_round_trips_through_export(run_main, seeded_store, tmp_path: Path):
    # the bundled Harvie-Møller-Weare mixing set, exported by 'params --export', reads back to
    # the same groups and values (the reader 'data add' uses)
    out = tmp_path / "exported"
    out.mkdir()
    set_id = "harvie-moller-weare-1984-mixing"
    code, _, err = run_main("params", set_id, "--export", str(out), store=seeded_store)
    assert code == 0, err
    bundled = read_parameter_file(Path(__file__).resolve().parents[1] / "refdata" / "parameters"
                                  / f"{set_id}.csv")
    back = read_parameter_file(out / f"{set_id}.params.csv")
    assert back.target_kind == "ions"
    assert sorted((r.target, sorted(r.values.items())) for r in back.rows) == sorted(
        (r.target, sorted(r.values.items())) for r in bundled.rows)
