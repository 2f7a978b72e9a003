"""No silent number outside a model's ground: predict, ion-activity, isopiestic reductions and
compare mark (or refuse) what lies beyond the data a set was fitted to, the range a model's
authors claim, or the set's temperature. One decision picks the Debye-Hückel constant a set is
evaluated with (saltbench.water.basis), and fit can use the publication's.

Values checked: gamma±(CsCl, 5 mol/kg) = 0.474 (CRC Handbook, 92nd ed., "Mean Activity
Coefficients of Electrolytes as a Function of Concentration"); A_phi = 0.392 of Pitzer and
Mayorga (1973; from memory of the paper, as bundled).
"""

from __future__ import annotations

import json

from conftest import write


def _json(run_main, store, *args):
    code, out, err = run_main(*args, "--format", "json", store=store)
    assert code == 0, err
    return json.loads(out), err


def test_predict_with_no_set_refuses_and_says_how_to_get_one(run_main, seeded_store) -> None:
    code, out, err = run_main("predict", "CsCl", "--model", "pitzer", store=seeded_store)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert "saltbench fit CsCl --model pitzer" in err and "--params" in err
    # knowingly: the defaults are evaluated, and said to be
    rows, err = _json(run_main, seeded_store, "predict", "CsCl", "--model", "pitzer", "--params", "defaults")
    assert rows and "default parameters" in err


def test_a_fitted_set_marks_molalities_outside_its_data(run_main, seeded_store) -> None:
    # MgSO4 data (handbook 0.1-1.0 mol/kg, Robinson-Stokes phi 0.1-0.6): below 0.1 is outside
    fitted, _ = _json(run_main, seeded_store, "fit", "MgSO4", "--model", "pitzer", "--name", "mgso4-test")
    assert fitted["parameter_set"] == "mgso4-test"
    rows, err = _json(run_main, seeded_store, "predict", "MgSO4", "--model", "pitzer", "--params", "mgso4-test",
                      "--m", "0.001,0.05,0.5,2")
    marks = [r["extrapolated"] for r in rows]
    assert marks == [True, True, False, True]
    assert "below the lowest molality the set was fitted to (0.1 mol/kg)" in rows[0]["extrapolation"]
    assert "above the highest molality the set was fitted to (1 mol/kg)" in rows[3]["extrapolation"]
    assert "extrapolations" in err


def test_another_temperature_is_marked_and_uses_todays_constant(run_main, seeded_store) -> None:
    # LiCl: no bundled set gives its temperature dependence, so its 25 °C values are used unchanged
    at25, _ = _json(run_main, seeded_store, "predict", "LiCl", "--model", "pitzer", "--m", "1")
    at75, err = _json(run_main, seeded_store, "predict", "LiCl", "--model", "pitzer", "--m", "1",
                      "--temperature", "348.15")
    assert at25[0]["extrapolated"] is False
    assert at75[0]["extrapolated"] is True and "holds values for 298.15 K" in at75[0]["extrapolation"][0]
    assert at75[0]["gamma_pm"] != at25[0]["gamma_pm"]
    # NaCl: the first temperature derivatives of silvester-pitzer-1977 carry it, beyond their range
    nacl, _ = _json(run_main, seeded_store, "predict", "NaCl", "--model", "pitzer", "--m", "1",
                    "--temperature", "348.15")
    assert nacl[0]["extrapolation"] == ["at 348.15 K, outside 273.15-323.15 K, the range of the set's "
                                        "temperature form"]


def test_a_convention_beyond_its_ionic_strength_is_marked(run_main, seeded_store) -> None:
    # Davies is commonly held to work to about I = 0.5 mol/kg (common practice, no source)
    doc, _ = _json(run_main, seeded_store, "ion-activity", "--salt", "NaCl=3", "--convention", "davies")
    assert doc["extrapolated"] is True and "beyond the 0.5 mol/kg" in doc["extrapolation"][0]
    doc, _ = _json(run_main, seeded_store, "ion-activity", "--salt", "NaCl=0.01", "--convention", "davies")
    assert doc["extrapolated"] is False and doc["extrapolation"] == []


BIB = """[own-notebook-9]
authors: A. Operator
title: Isopiestic runs at 50 °C (test scenario, invented values)
publisher: saltbench test scenario
year: 2026
"""


def test_isopiestic_reduction_off_the_reference_sets_ground_is_marked(run_main, seeded_store, tmp_path) -> None:
    # invented readings at 50 °C against the 25 °C Pitzer-Mayorga NaCl set, with a reference
    # molality (8.5 mol/kg) beyond the 6 mol/kg the set was fitted to
    bib = write(tmp_path / "nb.sources.txt", BIB)
    f = write(tmp_path / "kcl-iso-50.csv", """# saltbench readings 1
# kind: isopiestic
# electrolyte: KCl
# temperature: 50 C
# source: own-notebook-9
# typed: measured by the test operator at bench 9 (invented values)
# reference: NaCl
# reference_model: pitzer
# reference_params: pitzer-mayorga-1973
# u_reference_molality: 0.05 %
# u_molality: 0.05 %
molality,reference_molality
0.5,0.47
1.0,0.93
2.0,1.85
4.0,3.6
9.0,8.5
""")
    code, _, err = run_main("readings", "add", str(bib), str(f), store=seeded_store)
    assert code == 0, err
    [rec], _ = _json(run_main, seeded_store, "readings", "reduce", "kcl-iso-50")
    marks = [c for c in rec["cautions"] if c.startswith("extrapolated: ")]
    assert any("holds values for 298.15 K" in c and "323.15 K" in c for c in marks)
    assert any("up to 8.5 mol/kg go beyond the 6 mol/kg" in c for c in marks)


def test_compare_away_from_a_sets_temperature_says_so(run_main, seeded_store, tmp_path) -> None:
    data = write(tmp_path / "nacl50.csv", """# saltbench dataset 1
# electrolyte: NaCl
# property: gamma_pm
# temperature: 50 C
# source: own-notebook-9
# table: run sheet 2 (invented)
# precision: 0.001
# uncertainty: 0.003
# typed: measured by the test operator at bench 9 (invented values)
molality,value
0.1,0.772
0.2,0.727
0.5,0.673
1.0,0.652
2.0,0.672
""")
    bib = write(tmp_path / "nb.sources.txt", BIB)
    code, _, err = run_main("data", "add", str(bib), str(data), store=seeded_store)
    assert code == 0, err
    rows, _ = _json(run_main, seeded_store, "compare", "NaCl", "--models", "pitzer", "--temperature", "323.15",
                    "--jobs", "1")
    # at 50 °C the set whose temperature form covers 50 °C is judged, on its own ground
    assert rows[0]["published_set"] == "silvester-pitzer-1977"
    assert not any(f.startswith("published: silvester-pitzer-1977") for f in rows[0]["flags"])
    # LiCl has no set with a form: its 25 °C values are judged at 50 °C unchanged, and it says so
    licl = write(tmp_path / "licl50.csv", data.read_text(encoding="utf-8").replace("NaCl", "LiCl"))
    code, _, err = run_main("data", "add", str(bib), str(licl), store=seeded_store)
    assert code == 0, err
    rows, _ = _json(run_main, seeded_store, "compare", "LiCl", "--models", "pitzer", "--temperature", "323.15",
                    "--jobs", "1")
    flags = rows[0]["flags"]
    assert any(f.startswith("published: pitzer-mayorga-1973 holds values for 298.15 K") for f in flags)


def test_fit_can_use_the_publications_constant(run_main, seeded_store) -> None:
    published, _ = _json(run_main, seeded_store, "fit", "NaCl", "--model", "pitzer", "--dh-constant", "published",
                         "--no-save")
    current, _ = _json(run_main, seeded_store, "fit", "NaCl", "--model", "pitzer", "--no-save")
    assert published["a_phi"] == 0.392 and abs(current["a_phi"] - 0.3915) < 0.0005
    assert published["parameters"][0]["value"] != current["parameters"][0]["value"]
    code, _, err = run_main("fit", "NaCl", "--model", "pitzer", "--dh-constant", "lots", "--no-save",
                            store=seeded_store)
    assert code == 2 and err.startswith("Error: --dh-constant")
