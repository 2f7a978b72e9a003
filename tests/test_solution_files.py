"""Solution files and the inline form: what they read, and one error line (FILE:LINE: field) for
each bad input. Hand-worked values beside each check (molar masses: IUPAC 2021 abridged standard
atomic weights, from memory, as saltbench.chemistry.ions holds them)."""

from __future__ import annotations

from pathlib import Path

import pytest

from saltbench.curation.solutions import (
    DENSITY_METHOD,
    format_solution_file,
    parse_density,
    parse_inline,
    read_solution,
    read_solution_file,
)
from saltbench.errors import InputFileError
from saltbench.water.properties import water_state

HEAD = """# saltbench solution 1
# name: cooling-tower blowdown, Tern Marsh plant (invented)
# basis: mg/L
# density: 1.0012 kg/L
# temperature: 25 C
# source: invented example
# typed: invented for the tests of the solution format
"""
TABLE = "species,amount\nNa+,230\nCa+2,80\nCl-,355\nSO4-2,192\n"


def _write(tmp_path: Path, text: str, name: str = "s.csv") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def _error(path_or_text, tmp_path: Path | None = None) -> InputFileError:
    with pytest.raises(InputFileError) as exc:
        if tmp_path is None:
            parse_inline(path_or_text)
        else:
            read_solution_file(_write(tmp_path, path_or_text))
    return exc.value


def test_a_solution_file_reads_to_molalities(tmp_path):
    r = read_solution_file(_write(tmp_path, HEAD + TABLE))
    assert r.name == "cooling-tower blowdown, Tern Marsh plant (invented)"
    assert r.unit == "mg/L" and r.density_kg_per_l == 1.0012 and r.density_origin == "stated"
    assert r.temperature_k == pytest.approx(298.15)
    assert [i.name for i in r.ions] == ["Na+", "Ca+2", "Cl-", "SO4-2"]
    # solutes 0.230 + 0.080 + 0.355 + 0.192 = 0.857 g/L; water 1.0012 - 0.000857 = 1.000343 kg/L;
    # m(Na) = 0.230/22.990/1.000343 = 0.0100009 mol/kg
    assert r.molality[0] == pytest.approx(0.230 / 22.990 / 1.000343, rel=1e-9)
    assert r.typed.startswith("invented")


def test_write_and_read_back_gives_the_same_numbers(tmp_path):
    r = read_solution_file(_write(tmp_path, HEAD + TABLE)).closed_with("Na+")
    again = read_solution_file(_write(tmp_path, format_solution_file(r), "again.csv"))
    assert again.molality.tolist() == r.molality.tolist()
    assert again.amounts.tolist() == r.amounts.tolist()
    assert "charge balance closed with Na+" in again.note


def test_estimated_density_is_pure_water_at_the_temperature(tmp_path):
    text = HEAD.replace("# density: 1.0012 kg/L", "# density: estimate").replace("25 C", "40 C")
    r = read_solution_file(_write(tmp_path, text + TABLE))
    # IAPWS-95 (Wagner and Pruss 2002) liquid water at 40 °C, 0.1 MPa: 992.2 kg/m3 (from memory of
    # the IAPWS-95 tables: 992.22)
    assert r.density_kg_per_l == pytest.approx(0.99222, abs=2e-5)
    assert r.density_kg_per_l == water_state(313.15).density / 1000
    assert r.density_origin == "estimated" and r.density_method == DENSITY_METHOD
    assert r.cautions == ()  # 0.857 g/L of dissolved solids is within the stated 1 g/L


def test_estimated_density_warns_above_its_range():
    r = parse_inline("NaCl=20 g/L,density=estimate")
    assert len(r.cautions) == 1 and "20 g/L" in r.cautions[0] and "give a measured density" in r.cautions[0]


@pytest.mark.parametrize(("text", "line", "field", "words"), [
    (HEAD + "species,amount\nNa+,230\nQz+,3\n", 10, "species", "unknown ion 'Qz'"),
    (HEAD + "species,amount\nNa+,230\nFooBar,3\n", 10, "species", "unknown species 'FooBar'"),
    (HEAD + "species,amount\nNa+,-230\n", 9, "amount", "negative amount -230"),
    (HEAD + "species,amount\nNa+,lots\n", 9, "amount", "not a number"),
    (HEAD + "species,amount\nNa+,230 mg/L\n", 9, "amount", "write the number only"),
    (HEAD + "species,amount\nNa,230\nCl,355\nNa+,3\n", 11, "species", "Na+ is named twice (also on line 9)"),
    (HEAD.replace("# density: 1.0012 kg/L\n", ""), 6, "density", "amounts in mg/L need the solution's density"),
    (HEAD.replace("1.0012 kg/L", "heavy"), 4, "density", "expected a density with its unit"),
    (HEAD.replace("1.0012 kg/L", "12 kg/L"), 4, "density", "12 kg/L is not a plausible solution density"),
    (HEAD.replace("# basis: mg/L", "# basis: ppm"), 3, "basis", "unknown unit 'ppm'"),
    (HEAD.replace("# basis: mg/L\n", ""), 6, "basis", "missing header field"),
    (HEAD.replace("25 C", "25 K"), 5, "temperature", "looks like a Celsius temperature"),
    (HEAD.replace("# typed: invented", "# typed: guessed"), 7, "typed", "must begin"),
    (HEAD + "# colour: blue\n", 8, "colour", "unknown header field"),
    (HEAD.replace("mg/L", "g/kg").replace("# density: 1.0012 kg/L\n", "") + "species,amount\nNaCl,700\nKCl,400\n",
     7, "amount", "no water is left"),
])
def test_each_bad_file_gets_one_line_naming_file_line_and_field(tmp_path, text, line, field, words):
    exc = _error(text if "species,amount" in text else text + TABLE, tmp_path)
    assert (exc.line, exc.field) == (line, field)
    assert words in exc.problem
    assert str(exc).startswith(f"{tmp_path / 's.csv'}:{line}: field '{field}': ")
    assert "\n" not in str(exc)


def test_wrong_columns_and_empty_table(tmp_path):
    exc = _error(HEAD + "ion,value\nNa+,1\n", tmp_path)
    assert exc.line == 8 and "expected the columns 'species,amount'" in exc.problem
    exc = _error(HEAD + "species,amount\n", tmp_path)
    assert "no rows" in exc.problem


def test_an_ion_saltbench_does_not_know_may_be_declared(tmp_path):
    text = HEAD.replace("mg/L", "mol/kg") + "# anion: B(OH)4, charge -1, molar mass 78.84 g/mol\n"
    r = read_solution_file(_write(tmp_path, text + "species,amount\nNa+,0.01\nB(OH)4-,0.01\n"))
    assert [i.name for i in r.ions] == ["Na+", "B(OH)4-"]


# -- the inline form -------------------------------------------------------------------------------
def test_inline_salts_in_molality():
    r = parse_inline("NaCl=0.5,MgSO4=0.02")
    assert r.unit == "mol/kg"
    assert dict(zip((i.name for i in r.ions), r.molality.tolist())) == {
        "Na+": 0.5, "Cl-": 0.5, "Mg+2": 0.02, "SO4-2": 0.02}


def test_inline_ions_as_the_data_files_name_them():
    # the example: ions without charge marks, molalities
    r = parse_inline("Na=0.486,Mg=0.0547,Ca=0.0107,K=0.0106,Cl=0.5687,SO4=0.0293")
    assert [i.name for i in r.ions] == ["Na+", "Mg+2", "Ca+2", "K+", "Cl-", "SO4-2"]
    for written in ("Ca+2", "Ca2+", "Ca++"):
        assert parse_inline(f"{written}=0.01,Cl-=0.02").ions[0].name == "Ca+2"


def test_inline_with_a_unit_and_a_density():
    # Na+ 10.5 g/kg and Cl- 16.2 g/kg of solution: water 1 - 0.0267 = 0.9733 kg per kg;
    # m(Na) = 10.5 / 22.990 / 0.9733 = 0.469249 mol/kg
    r = parse_inline("Na+=10.5 g/kg,Cl-=16.2 g/kg")
    assert r.molality[0] == pytest.approx(10.5 / 22.990 / 0.9733, rel=1e-12)
    assert r.molality[0] == pytest.approx(0.469249, abs=1e-6)
    # the unit written once holds for every item
    assert parse_inline("Na+=10.5 g/kg,Cl-=16.2").molality.tolist() == r.molality.tolist()
    per_litre = parse_inline("Na=230 mg/L,Cl=355 mg/L,density=1.0005 kg/L,temperature=20 C")
    assert per_litre.density_kg_per_l == 1.0005 and per_litre.temperature_k == pytest.approx(293.15)


@pytest.mark.parametrize(("text", "item", "field", "words"), [
    ("NaCl=-1", 1, "amount", "negative amount"),
    ("NaCl=0.1,KCl=x", 2, "amount", "not a number: 'x'"),
    ("NaCl=0.1,Foo=1", 2, "species", "unknown species 'Foo'"),
    ("Na=1,Cl=1,Na+=2", 3, "species", "Na+ is named twice (also item 1)"),
    ("Na=1 furlong/L,Cl=1", 1, "unit", "unknown unit 'furlong/L'"),
    ("Na=1 g/kg,Cl=1 mg/L", 2, "unit", "mg/L differs from g/kg (item 1)"),
    ("Na=1 mg/L,Cl=1 mg/L", None, "density", "amounts in mg/L need the solution's density"),
    ("Na=1 mg/L,density=9 kg/L", 2, "density", "not a plausible solution density"),
    ("NaCl", 1, None, "expected SPECIES=AMOUNT"),
    ("temperature=25 K,NaCl=1", 1, "temperature", "looks like a Celsius temperature"),
    ("seawater S=abc", 2, "reference", "expected 'S=<practical salinity>'"),
    ("", None, None, "empty"),
])
def test_each_bad_inline_item_is_named(text, item, field, words):
    exc = _error(text)
    assert (exc.line, exc.field) == (item, field)
    assert words in exc.problem
    assert str(exc).startswith("inline solution")


def test_read_solution_tells_a_file_from_the_inline_form(tmp_path):
    path = _write(tmp_path, HEAD + TABLE)
    assert read_solution(str(path)).unit == "mg/L"
    assert read_solution("NaCl=0.1").unit == "mol/kg"
    assert read_solution("seawater").name == "reference seawater S_P=35"
    with pytest.raises(InputFileError, match="no such file"):
        read_solution(str(tmp_path / "missing.csv"))


@pytest.mark.parametrize(("text", "kg_per_l"), [
    ("1.0245 kg/L", 1.0245), ("1.0245 g/mL", 1.0245), ("1.0245 g/cm3", 1.0245), ("1024.5 kg/m3", 1.0245),
])
def test_density_units(text, kg_per_l):
    # 1 g/mL = 1 g/cm3 = 1 kg/L = 1000 kg/m3 (SI prefixes; common practice, no source)
    assert parse_density(text).value == pytest.approx(kg_per_l, rel=1e-12)


def test_the_invented_example_reads_and_says_it_is_invented():
    # the README walk-through's analysis (refdata/examples/solutions, invented): it must stay readable,
    # be marked invented, and balance within Standard Methods 1030 E's 5 % (from memory of 1030 E)
    path = Path(__file__).resolve().parents[1] / "refdata" / "examples" / "solutions" / "kestrel-bay-concentrate.csv"
    r = read_solution_file(path)
    assert r.typed.startswith("invented") and "(invented)" in r.name
    assert r.charge_balance.acceptable[0] and r.cautions == ()
