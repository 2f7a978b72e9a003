"""Parameter sets with a temperature form (issue 21, item 2): the file format, the store, the
lookups of predict and of solutions, the rule that picks a set at a temperature, and the errors.

The form checked against is the expansion about 25 °C in T - Tr, 1/T - 1/Tr and ln(T/Tr) used
for Pitzer parameters (Pitzer, Activity Coefficients in Electrolyte Solutions, 2nd ed., 1991,
ch. 3; from memory of that chapter): every value below is recomputed here from that formula,
not taken from our own output. The sets in these tests are invented for the tests.
"""

from __future__ import annotations

import json
import math
import sqlite3
from pathlib import Path

import numpy as np
import pytest
from conftest import write

TR = 298.15
# invented coefficients, of the size of published first and second temperature derivatives
COEF = {"beta0": (0.0765, 7.0e-4, -20.0, 0.3), "beta1": (0.2664, 7.0e-4, 0.0, 0.0),
        "C_phi": (0.00127, -1.0e-4, 0.0, 0.0)}

SOURCES = """[fennwick-lab-2026]
authors: A. Operator
title: Invented temperature coefficients for the tests of saltbench
publisher: saltbench tests
year: 2026
note: invented for the tests
"""


def _set(set_id: str = "fennwick-thermal", *, form: str = "reference-expansion", t_range: str = "0-60 C",
         header: str = "electrolyte,beta0,beta0.c1,beta0.c2,beta0.c3,beta1,beta1.c1,C_phi,C_phi.c1,m_max",
         row: str | None = None, temperature: str = "25 C", extra: str = "") -> str:
    b0, b1, cp = COEF["beta0"], COEF["beta1"], COEF["C_phi"]
    row = row or f"NaCl,{b0[0]},{b0[1]},{b0[2]},{b0[3]},{b1[0]},{b1[1]},{cp[0]},{cp[1]},6.0"
    lines = ["# saltbench parameters 1", f"# set: {set_id}", "# model: pitzer", "# source: fennwick-lab-2026",
             "# table: invented", f"# temperature: {temperature}"]
    if form:
        lines.append(f"# temperature_form: {form}")
    if t_range:
        lines.append(f"# temperature_range: {t_range}")
    lines += ["# typed: fitted by A. Operator to invented data (invented for the tests)", *([extra] if extra else []),
              header, row]
    return "\n".join(lines) + "\n"


def _expansion(c: tuple[float, ...], t: float) -> float:
    return c[0] + c[1] * (t - TR) + c[2] * (1 / t - 1 / TR) + c[3] * math.log(t / TR)


@pytest.fixture
def thermal_store(run_main, seeded_store, tmp_path) -> Path:
    write(tmp_path / "in" / "lab.sources.txt", SOURCES)
    write(tmp_path / "in" / "fennwick-thermal.csv", _set())
    code, _, err = run_main("data", "add", str(tmp_path / "in"), store=seeded_store)
    assert code == 0, err
    return seeded_store


def _predict(run_main, store, *args: str) -> tuple[list[dict], str]:
    code, out, err = run_main("predict", *args, "--format", "json", store=store)
    assert code == 0, err
    return json.loads(out), err


def _pitzer_at(t: float, m: np.ndarray, values: dict[str, float]) -> np.ndarray:
    from saltbench.api import plugin_registry
    from saltbench.chemistry.electrolyte import parse_formula
    from saltbench.models.evaluate import evaluate, make_context

    e = parse_formula("NaCl")
    model = plugin_registry().model("pitzer")
    return evaluate(model, e, m, values, ctx=make_context(e, t)).ln_gamma_pm


@pytest.mark.parametrize("t", [283.15, 298.15, 330.0])
def test_predict_takes_each_parameter_at_the_temperature_asked(run_main, thermal_store, t) -> None:
    rows, _ = _predict(run_main, thermal_store, "NaCl", "--model", "pitzer", "--params", "fennwick-thermal",
                       "--temperature", str(t), "--m", "0.1,1,3")
    by_hand = {name: _expansion(c, t) for name, c in COEF.items()}
    expected = _pitzer_at(t, np.array([0.1, 1.0, 3.0]), by_hand)
    assert np.allclose([r["ln_gamma_pm"] for r in rows], expected, rtol=1e-12, atol=1e-14)
    # inside 0-60 C the set stands on its own ground, the model's 25 °C claim notwithstanding
    assert not any(r["extrapolated"] for r in rows)


def test_outside_the_range_of_its_form_a_set_is_an_extrapolation(run_main, thermal_store) -> None:
    rows, err = _predict(run_main, thermal_store, "NaCl", "--model", "pitzer", "--params", "fennwick-thermal",
                         "--temperature", "353.15", "--m", "1")
    assert rows[0]["extrapolated"]
    assert rows[0]["extrapolation"] == ["at 353.15 K, outside 273.15-333.15 K, the range of the set's "
                                        "temperature form"]
    assert "carried beyond that range" in err


def test_the_solution_path_takes_the_same_values_as_one_salt(run_main, thermal_store) -> None:
    one, _ = _predict(run_main, thermal_store, "NaCl", "--model", "pitzer", "--params", "fennwick-thermal",
                      "--temperature", "318.15", "--m", "1.5")
    code, out, err = run_main("predict", "--solution", "NaCl=1.5", "--model", "pitzer", "--sets",
                              "fennwick-thermal", "--temperature", "318.15", "--format", "json",
                              store=thermal_store)
    assert code == 0, err
    sol = json.loads(out)[0]
    assert sol["parameter_sets"] == ["fennwick-thermal"] and not sol["extrapolated"]
    assert math.isclose(sol["ln_gamma_pm"]["NaCl"], one[0]["ln_gamma_pm"], rel_tol=1e-10)
    assert math.isclose(sol["osmotic"], one[0]["osmotic"], rel_tol=1e-10)


def test_solutions_at_several_temperatures_each_take_their_own_values(thermal_store) -> None:
    from saltbench.api import Session, solution_lookup
    from saltbench.chemistry.solution import Composition
    from saltbench.comparison.solutions import resolve_values
    from saltbench.models.solution_eval import evaluate_solution

    s = Session(thermal_store)
    model = s.registry.model("pitzer")
    nacl = s.electrolyte("NaCl")
    comp = Composition.of_salt(nacl, np.array([1.0, 1.0, 1.0]), np.array([283.15, 298.15, 320.0]))
    res = resolve_values(model, comp, solution_lookup(s, ["fennwick-thermal"], {}, comp.temperature_k), "error")
    props = evaluate_solution(model, comp, res.values)
    for i, t in enumerate((283.15, 298.15, 320.0)):
        by_hand = {name: _expansion(c, t) for name, c in COEF.items()}
        assert math.isclose(props.ln_gamma_pm["NaCl"][i], _pitzer_at(t, np.array([1.0]), by_hand)[0],
                            rel_tol=1e-10)


def test_which_set_wins_depends_on_the_temperature(run_main, seeded_store) -> None:
    # at 25 °C the set of 25 °C values comes first (as before forms existed); at 40 °C the set
    # whose form covers 40 °C comes before 25 °C values used unchanged
    code, out, err = run_main("predict", "NaCl", "--model", "pitzer", "--m", "1", store=seeded_store)
    assert code == 0 and "parameters: pitzer-mayorga-1973," in out, err
    code, out, err = run_main("predict", "NaCl", "--model", "pitzer", "--m", "1", "--temperature", "313.15",
                              store=seeded_store)
    assert code == 0 and "parameters: silvester-pitzer-1977," in out, err
    # LiCl has no set with a form: its 25 °C values are used unchanged and marked
    rows, err = _predict(run_main, seeded_store, "LiCl", "--model", "pitzer", "--m", "1", "--temperature", "313.15")
    assert rows[0]["extrapolation"] == ["at 313.15 K, the set holds values for 298.15 K"]


def test_the_rule_orders_sets_by_how_they_stand_at_the_temperature() -> None:
    from saltbench.api import preferred_sets
    from saltbench.store.parameter_sets import ResolvedParameters as P

    at25 = P("a-25", "published", {})
    at50 = P("b-50", "published", {}, temperature_k=323.15)
    wide = P("c-form", "published", {}, temperature_form="reference-expansion",
             temperature_range_k=(273.15, 333.15))
    narrow = P("d-form", "published", {}, temperature_form="reference-expansion",
               temperature_range_k=(288.15, 308.15))
    sets = [at25, at50, wide, narrow]
    assert [p.set_id for p in preferred_sets(sets, 298.15)] == ["a-25", "c-form", "d-form", "b-50"]
    assert [p.set_id for p in preferred_sets(sets, 323.15)] == ["b-50", "c-form", "d-form", "a-25"]
    assert [p.set_id for p in preferred_sets(sets, 318.15)] == ["c-form", "d-form", "a-25", "b-50"]
    assert [p.set_id for p in preferred_sets(sets, 340.0)] == ["c-form", "d-form", "a-25", "b-50"]


def test_the_set_and_its_coefficients_are_stored_and_exported_whole(run_main, thermal_store, tmp_path) -> None:
    code, out, err = run_main("params", "fennwick-thermal", "--format", "json", store=thermal_store)
    assert code == 0, err
    doc = json.loads(out)
    assert doc["temperature_form"] == "reference-expansion"
    assert doc["temperature_range_k"] == pytest.approx([273.15, 333.15])
    got = {(c["name"], c["coefficient"]): c["value"] for c in doc["coefficients"]}
    assert got == {("beta0", "c1"): 7.0e-4, ("beta0", "c2"): -20.0, ("beta0", "c3"): 0.3,
                   ("beta1", "c1"): 7.0e-4, ("C_phi", "c1"): -1.0e-4}
    out_dir = tmp_path / "exported"
    out_dir.mkdir()
    code, _, err = run_main("params", "fennwick-thermal", "--export", str(out_dir), store=thermal_store)
    assert code == 0, err
    fresh = tmp_path / "fresh.sqlite"
    code, _, err = run_main("data", "add", str(out_dir), store=fresh)
    assert code == 0, err
    code, out2, err = run_main("params", "fennwick-thermal", "--format", "json", store=fresh)
    again = json.loads(out2)
    assert again["coefficients"] == doc["coefficients"] and again["values"] == doc["values"]
    assert again["temperature_range_k"] == doc["temperature_range_k"]


def test_a_set_without_a_form_keeps_its_content_hash() -> None:
    # a bundled set of before stays unchanged in a store (its hash takes no form fields)
    from saltbench.curation.parameters import read_parameter_file
    from saltbench.store.bundled import bundled_files

    path = next(p for p in bundled_files() if p.name == "pitzer-mayorga-1973.csv")
    pf = read_parameter_file(path)
    assert pf.temperature_form is None and all(not r.coefficients for r in pf.rows)
    doc = {"set": pf.set_id, "model": pf.model, "source": pf.source, "table": pf.table,
           "temperature_k": pf.temperature_k, "a_phi": pf.a_phi, "typed": pf.typed, "note": pf.note,
           "kind": pf.target_kind, "rows": [[r.target, sorted(r.values.items()), r.m_max] for r in pf.rows]}
    import hashlib

    assert pf.content_hash() == hashlib.sha256(json.dumps(doc, sort_keys=True).encode()).hexdigest()


BAD = [
    ("form-unknown", {"form": "polynomial-9"}, 7, "temperature_form", "unknown temperature form 'polynomial-9'"),
    ("range-backwards", {"t_range": "60-0 C"}, 8, "temperature_range", "is not a range"),
    ("range-words", {"t_range": "lukewarm"}, 8, "temperature_range", "expected a range of temperatures"),
    ("range-too-hot", {"t_range": "0-400 C"}, 8, "temperature_range", "reaches outside"),
    ("range-missing", {"t_range": ""}, 7, "temperature_form", "say where the authors fitted"),
    ("form-missing", {"form": ""}, 7, "temperature_range", "belongs to a temperature form"),
    ("no-such-parameter", {"header": "electrolyte,beta0,beta0.c1,gamma7,gamma7.c1",
                           "row": "NaCl,0.07,1e-4,0.1,1e-4"}, 10, "gamma7.c1",
     "model pitzer has no parameter 'gamma7'"),
    ("no-such-coefficient", {"header": "electrolyte,beta0,beta0.c9", "row": "NaCl,0.07,1e-4"}, 10,
     "beta0.c9", "form reference-expansion has no coefficient 'c9'"),
    ("no-base-column", {"header": "electrolyte,beta1,beta0.c1", "row": "NaCl,0.2,1e-4"}, 10, "beta0.c1",
     "no column beta0 for the coefficient"),
    ("empty-base", {"header": "electrolyte,beta0,beta0.c1", "row": "NaCl,,1e-4"}, 11, "beta0",
     "empty, but the row gives beta0's temperature coefficients"),
    ("reference-elsewhere", {"temperature": "50 C"}, 7, "temperature_form", "expands about 298.15 K"),
]


@pytest.mark.parametrize("name,kw,line,field,problem", BAD, ids=[b[0] for b in BAD])
def test_a_bad_form_is_one_line_naming_file_line_and_field(run_main, store_path, tmp_path, name, kw, line,
                                                           field, problem) -> None:
    folder = tmp_path / "in"
    write(folder / "lab.sources.txt", SOURCES)
    write(folder / "good.csv", _set("fennwick-good"))
    bad = write(folder / "z-bad.csv", _set(f"fennwick-{name}", **kw))
    code, out, err = run_main("data", "add", str(folder), store=store_path)
    assert code == 2 and err.count("\n") == 1, err
    assert err.startswith(f"Error: {bad}:{line}: field '{field}': ") and problem in err, err
    # nothing half-written: not the good file, nor the bibliography
    conn = sqlite3.connect(store_path)
    try:
        assert conn.execute("SELECT COUNT(*) FROM parameter_sets WHERE origin = 'user'").fetchone()[0] == 0
        assert conn.execute("SELECT COUNT(*) FROM sources WHERE key = 'fennwick-lab-2026'").fetchone()[0] == 0
    finally:
        conn.close()


def test_a_coefficient_column_needs_a_form(run_main, store_path, tmp_path) -> None:
    folder = tmp_path / "in"
    write(folder / "lab.sources.txt", SOURCES)
    bad = write(folder / "bad.csv", _set(form="", t_range="", header="electrolyte,beta0,beta0.c1",
                                         row="NaCl,0.07,1e-4"))
    code, _, err = run_main("data", "add", str(folder), store=store_path)
    assert code == 2 and err == (f"Error: {bad}:8: field 'beta0.c1': a coefficient column needs a temperature "
                                 "form: add '# temperature_form: NAME' and '# temperature_range: LOW-HIGH C'\n")


def test_the_migration_adds_forms_to_a_store_of_before(tmp_path) -> None:
    from saltbench.store.connection import open_store
    from saltbench.store.schema import MIGRATIONS

    path = tmp_path / "old.sqlite"
    conn = sqlite3.connect(path)
    conn.execute("CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL)")
    conn.execute("CREATE TABLE migrations (number INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)")
    before = [m for m in MIGRATIONS if m[0] < "0008"]
    for number, (name, sql) in enumerate(before, start=1):
        conn.executescript(sql)
        conn.execute("INSERT INTO migrations VALUES (?, ?, 'then')", (number, name))
    conn.execute(f"PRAGMA user_version = {len(before)}")
    conn.execute("INSERT INTO parameter_sets (id, set_id, kind, origin, provider, model, temperature_k, "
                 "content_hash) VALUES (1, 'old-set', 'fitted', 'user', 'user', 'pitzer', 298.15, 'h')")
    conn.execute("INSERT INTO parameter_values VALUES (1, 'NaCl', 'electrolyte', 'beta0', 0.08, NULL, NULL)")
    conn.commit()
    conn.close()
    store = open_store(path)
    try:
        assert store.conn.execute("SELECT temperature_form, t_min_k FROM parameter_sets").fetchall() == [(None, None)]
        store.conn.execute("INSERT INTO parameter_coefficients VALUES (1, 'NaCl', 'beta0', 'c1', 1e-4)")
        with pytest.raises(sqlite3.IntegrityError):  # a coefficient of a value the set lacks
            store.conn.execute("INSERT INTO parameter_coefficients VALUES (1, 'KCl', 'beta0', 'c1', 1e-4)")
        store.conn.execute("DELETE FROM parameter_sets WHERE id = 1")
        assert store.conn.execute("SELECT COUNT(*) FROM parameter_coefficients").fetchone()[0] == 0
    finally:
        store.close()


def test_a_solution_beyond_the_range_of_a_form_is_marked(run_main, thermal_store) -> None:
    code, out, err = run_main("predict", "--solution", "NaCl=1", "--model", "pitzer", "--sets", "fennwick-thermal",
                              "--temperature", "353.15", "--format", "json", store=thermal_store)
    assert code == 0, err
    sol = json.loads(out)[0]
    assert sol["extrapolated"]
    assert sol["extrapolation"] == ["T = 353.15 K, outside 273.15-333.15 K, the range of fennwick-thermal's "
                                    "temperature form"]


def test_compare_judges_a_set_with_a_form_by_its_range() -> None:
    from saltbench.comparison.assess import PublishedInput

    p = PublishedInput("fennwick-thermal", {}, None, False, 298.15, (273.15, 333.15))
    assert not p.basis(320.0).off_temperature and p.basis(340.0).off_temperature
    # a published A_phi belongs to the set's own temperature only (water.basis)
    q = PublishedInput("fennwick-thermal", {}, 0.392, False, 298.15, (273.15, 333.15))
    assert q.basis(298.15).dh.a_phi == 0.392 and q.basis(320.0).dh.a_phi != 0.392
