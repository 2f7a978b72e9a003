"""Every bad input is refused with one line naming file, line and field; the store is unchanged.

The files here are throwaway inputs in a scenario of our own (an invented "Tidewater" test
laboratory); their values are invented and only need to be well or badly formed.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from conftest import write

from saltbench.store import open_store
from saltbench.store.queries import content_hash

BIB = """\
# invented bibliography of a test scenario
[tidewater-2026]
authors: Tidewater Test Laboratory
title: Invented activity measurements for a test scenario
publisher: saltbench test scenario (invented)
year: 2026
"""

# Line numbers below count from 1 in this text: header 1-10, columns 11, rows 12-14.
DATA = """\
# saltbench dataset 1
# electrolyte: NaCl
# property: gamma_pm
# scale: molality
# temperature: 25 C
# source: tidewater-2026
# table: run sheet 1 (invented)
# precision: 0.001
# uncertainty: 0.004
# typed: measured by the invented Tidewater Test Laboratory (invented values)
molality,value
0.1,0.779
0.5,0.680
1.0,0.658
"""


def _edit(text: str, old: str, new: str) -> str:
    assert text.count(old) == 1, old
    return text.replace(old, new)


# name -> (dataset text, line, field, words the message must contain)
DATASET_CASES = {
    "unknown electrolyte": (_edit(DATA, "electrolyte: NaCl", "electrolyte: NaXy"), 2, "electrolyte",
                            "cannot read electrolyte formula 'NaXy'"),
    "unparsable electrolyte": (_edit(DATA, "electrolyte: NaCl", "electrolyte: Na Cl("), 2,
                               "electrolyte", "cannot read electrolyte formula 'Na Cl('"),
    "not electroneutral": (_edit(DATA, "electrolyte: NaCl", "electrolyte: NaCl2"), 2, "electrolyte",
                           "not electroneutral"),
    "non-numeric molality": (_edit(DATA, "0.5,0.680", "0.5x,0.680"), 13, "molality",
                             "not a number: '0.5x'"),
    "zero molality": (_edit(DATA, "0.5,0.680", "0,0.680"), 13, "molality", "must be positive, found 0"),
    "negative molality": (_edit(DATA, "0.5,0.680", "-0.5,0.680"), 13, "molality",
                          "must be positive, found -0.5"),
    "duplicate molality": (_edit(DATA, "0.5,0.680", "0.1,0.680"), 13, "molality",
                           "duplicate molality 0.1 (also on line 12)"),
    "gamma zero": (_edit(DATA, "0.5,0.680", "0.5,0"), 13, "value", "gamma_pm must be positive, found 0"),
    "gamma negative": (_edit(DATA, "0.5,0.680", "0.5,-0.68"), 13, "value",
                       "gamma_pm must be positive, found -0.68"),
    "phi not positive": (_edit(_edit(DATA, "property: gamma_pm", "property: osmotic"),
                               "0.5,0.680", "0.5,-0.921"), 13, "value",
                         "osmotic must be positive, found -0.921"),
    "water activity above 1": (_edit(_edit(DATA, "property: gamma_pm", "property: water_activity"),
                                     "0.5,0.680", "0.5,1.02"), 13, "value",
                               "water activity must lie in (0, 1], found 1.02"),
    "water activity zero": (_edit(_edit(DATA, "property: gamma_pm", "property: water_activity"),
                                  "0.5,0.680", "0.5,0"), 13, "value",
                            "water activity must lie in (0, 1], found 0"),
    "temperature 25 K": (_edit(DATA, "temperature: 25 C", "temperature: 25 K"), 5, "temperature",
                         "25 K looks like a Celsius temperature given as K (did you mean '25 C'?)"),
    "temperature without unit": (_edit(DATA, "temperature: 25 C", "temperature: 25"), 5,
                                 "temperature", "expected a temperature with its unit"),
    "unknown citation key": (_edit(DATA, "source: tidewater-2026", "source: nobody-1900"), 6, "source",
                             "unknown citation key 'nobody-1900'"),
    "unknown property": (_edit(DATA, "property: gamma_pm", "property: heat_capacity"), 3, "property",
                         "unknown property 'heat_capacity' (known: gamma_pm, osmotic, water_activity, L_phi, Cp_phi)"),
    "unknown scale": (_edit(DATA, "scale: molality", "scale: normality"), 4, "scale",
                      "unknown concentration scale 'normality'"),
    "molarity without density": (_edit(_edit(DATA, "scale: molality", "scale: molarity"),
                                       "molality,value", "molarity,value"), 4, "scale",
                                 "molarity data need a 'density' column"),
}


@pytest.fixture
def case(seeded_store: Path, tmp_path: Path):
    """Files in tmp_path and a way to check that a failing add left the store as it was."""
    bib = write(tmp_path / "in" / "tidewater.sources.txt", BIB)

    def hash_now() -> str:
        store = open_store(seeded_store)
        try:
            return content_hash(store)
        finally:
            store.close()

    return bib, seeded_store, hash_now


def _assert_one_line_error(code: int, out: str, err: str, prefix: str, words: str) -> None:
    assert code == 2, (code, out, err)
    assert out == ""
    assert err.endswith("\n") and err.count("\n") == 1, err
    assert err.startswith(prefix), err
    assert words in err, err
    assert "Traceback" not in err


@pytest.mark.parametrize("name", list(DATASET_CASES))
def test_bad_dataset_is_refused_naming_file_line_field(name: str, case, tmp_path: Path, run_main) -> None:
    text, line, field, words = DATASET_CASES[name]
    bib, store, hash_now = case
    bad = write(tmp_path / "in" / "tidewater-nacl.csv", text)
    before = hash_now()
    code, out, err = run_main("data", "add", str(bib), str(bad), store=store)
    _assert_one_line_error(code, out, err, f"Error: {bad}:{line}: field '{field}': ", words)
    assert hash_now() == before


def test_the_good_template_does_load(case, tmp_path: Path, run_main) -> None:
    """The cases above fail for their one edit, not because the template itself is bad."""
    bib, store, hash_now = case
    good = write(tmp_path / "in" / "tidewater-nacl.csv", DATA)
    before = hash_now()
    code, out, err = run_main("data", "add", str(bib), str(good), store=store)
    assert (code, err) == (0, "")
    assert "added     dataset tidewater-nacl" in out
    assert hash_now() != before


def test_exact_message_for_a_celsius_temperature_given_as_kelvin(case, tmp_path: Path, run_main) -> None:
    bib, store, _ = case
    bad = write(tmp_path / "in" / "t.csv", _edit(DATA, "temperature: 25 C", "temperature: 25 K"))
    code, _, err = run_main("data", "add", str(bib), str(bad), store=store)
    assert code == 2
    assert err == (f"Error: {bad}:5: field 'temperature': 25 K looks like a Celsius temperature "
                   "given as K (did you mean '25 C'?)\n")


def test_exact_message_for_a_non_numeric_molality(case, tmp_path: Path, run_main) -> None:
    bib, store, _ = case
    bad = write(tmp_path / "in" / "t.csv", _edit(DATA, "0.5,0.680", "0.5x,0.680"))
    code, _, err = run_main("data", "add", str(bib), str(bad), store=store)
    assert code == 2
    assert err == f"Error: {bad}:13: field 'molality': not a number: '0.5x'\n"


def test_exact_message_for_an_unknown_citation_key(case, tmp_path: Path, run_main) -> None:
    bib, store, _ = case
    bad = write(tmp_path / "in" / "t.csv", _edit(DATA, "source: tidewater-2026", "source: nobody-1900"))
    code, _, err = run_main("data", "add", str(bib), str(bad), store=store)
    assert code == 2
    assert err == (f"Error: {bad}:6: field 'source': unknown citation key 'nobody-1900': add its "
                   "entry to a bibliography file in the same command\n")


def test_missing_citation_key_names_file_and_field(case, tmp_path: Path, run_main) -> None:
    bib, store, hash_now = case
    bad = write(tmp_path / "in" / "t.csv", _edit(DATA, "# source: tidewater-2026\n", ""))
    before = hash_now()
    code, out, err = run_main("data", "add", str(bib), str(bad), store=store)
    # A field that is absent has no line of its own; the message names the file and the field.
    _assert_one_line_error(code, out, err, f"Error: {bad}", "field 'source': missing header field")
    assert hash_now() == before


# name -> (bibliography text, line, field, words)
BIB_CASES = {
    "missing title": (_edit(BIB, "title: Invented activity measurements for a test scenario\n", ""),
                      2, "title", "entry [tidewater-2026] has no title"),
    "bad year": (_edit(BIB, "year: 2026", "year: 20x6"), 6, "year", "not a four-digit year: '20x6'"),
    "implausible year": (_edit(BIB, "year: 2026", "year: 1066"), 6, "year", "not a four-digit year"),
    "bad DOI": (BIB + "doi: 11.1000/xyz\n", 7, "doi", "not a DOI (expected 10.NNNN/...): '11.1000/xyz'"),
    "duplicate key": (BIB + "\n" + BIB.split("\n", 1)[1], 8, "key",
                      "citation key 'tidewater-2026' is defined twice in this file"),
    "unknown field": (BIB + "colour: blue\n", 7, "colour", "unknown bibliography field"),
}


@pytest.mark.parametrize("name", list(BIB_CASES))
def test_bad_bibliography_is_refused(name: str, case, tmp_path: Path, run_main) -> None:
    text, line, field, words = BIB_CASES[name]
    _, store, hash_now = case
    bad = write(tmp_path / "in" / "bad.sources.txt", text)
    good_data = write(tmp_path / "in" / "tidewater-nacl.csv", DATA)
    before = hash_now()
    code, out, err = run_main("data", "add", str(bad), str(good_data), store=store)
    _assert_one_line_error(code, out, err, f"Error: {bad}:{line}: field '{field}': ", words)
    assert hash_now() == before


def test_citation_key_clashing_with_a_bundled_one_is_refused(case, tmp_path: Path, run_main) -> None:
    _, store, hash_now = case
    # robinson-stokes-1959 is a key of the bundled bibliography (refdata/sources.txt).
    clash = write(tmp_path / "in" / "clash.sources.txt",
                  _edit(BIB, "[tidewater-2026]", "[robinson-stokes-1959]"))
    before = hash_now()
    code, out, err = run_main("data", "add", str(clash), store=store)
    _assert_one_line_error(code, out, err, f"Error: {clash}:2: field 'key': ",
                           "citation key 'robinson-stokes-1959' already exists in the store")
    assert hash_now() == before


def test_multi_file_add_stores_nothing_when_a_later_file_is_bad(case, tmp_path: Path, run_main) -> None:
    bib, store, hash_now = case
    first = write(tmp_path / "in" / "tidewater-nacl.csv", DATA)
    second = write(tmp_path / "in" / "tidewater-kcl.csv",
                   _edit(_edit(DATA, "electrolyte: NaCl", "electrolyte: KCl"), "0.5,0.680", "0.5,0"))
    before = hash_now()
    code, out, err = run_main("data", "add", str(bib), str(first), str(second), store=store)
    _assert_one_line_error(code, out, err, f"Error: {second}:13: field 'value': ", "must be positive")
    assert hash_now() == before
    s = open_store(store)
    try:
        n_user = s.conn.execute("SELECT COUNT(*) FROM datasets WHERE origin = 'user'").fetchone()[0]
        n_src = s.conn.execute("SELECT COUNT(*) FROM sources WHERE origin = 'user'").fetchone()[0]
    finally:
        s.close()
    assert (n_user, n_src) == (0, 0)


def test_store_level_error_after_parsing_also_rolls_back(case, tmp_path: Path, run_main) -> None:
    """The bibliography and first dataset would be written before the second dataset's unknown
    citation key is found; the whole transaction must still roll back."""
    bib, store, hash_now = case
    first = write(tmp_path / "in" / "tidewater-nacl.csv", DATA)
    second = write(tmp_path / "in" / "tidewater-kcl.csv",
                   _edit(_edit(DATA, "electrolyte: NaCl", "electrolyte: KCl"),
                         "source: tidewater-2026", "source: nobody-1900"))
    before = hash_now()
    code, out, err = run_main("data", "add", str(bib), str(first), str(second), store=store)
    _assert_one_line_error(code, out, err, f"Error: {second}:6: field 'source': ",
                           "unknown citation key 'nobody-1900'")
    assert hash_now() == before


def test_missing_file_is_a_one_line_error(case, tmp_path: Path, run_main) -> None:
    _, store, hash_now = case
    before = hash_now()
    missing = tmp_path / "in" / "nowhere.csv"
    code, out, err = run_main("data", "add", str(missing), store=store)
    _assert_one_line_error(code, out, err, f"Error: {missing}: ", "no such file")
    assert hash_now() == before
