"""What a user sees when they use the command line the way people do: mistakes give one
``Error: ...`` line and exit status 2 (never a traceback), numbers print without losing the digits
that matter, outputs carry the regulated-use caution, and ``| head`` ends quietly.

Check values name their source beside them; behaviour of a command line (exit statuses, error
wording, a closed pipe) is common practice, no source.
"""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
from pathlib import Path

import pytest
from conftest import REFDATA

CAUTION = ("Caution: for dosing, safety limits or regulated measurements, verify these numbers "
           "under local codes and licensed practice.")


def test_a_folder_with_nothing_to_add_is_an_error(run_main, seeded_store, tmp_path: Path) -> None:
    empty = tmp_path / "empty"
    empty.mkdir()
    code, out, err = run_main("data", "add", str(empty), store=seeded_store)
    assert code == 2 and out == ""
    assert err.strip() == (f"Error: {empty}: folder holds no bibliography (*.sources.txt, sources.txt) "
                           "or CSV file to add")


def test_b_ion_for_an_ion_not_in_the_solution_is_an_error(run_main, seeded_store) -> None:
    # 'Na' for 'Na+' used to be ignored silently, and the run then asked for b_i of Na+.
    code, _, err = run_main("ion-activity", "--salt", "NaCl=0.1", "--convention", "truesdell-jones",
                            "--b-ion", "Na=0.075", store=seeded_store)
    assert code == 2
    assert err.strip() == "Error: --b-ion Na: no ion 'Na' in this solution; its ions are Na+, Cl-"


def test_convention_is_accepted_in_any_case(run_main, seeded_store) -> None:
    outs = []
    for name in ("macinnes", "MacInnes"):
        code, out, err = run_main("ion-activity", "--salt", "KCl=0.1", "--convention", name,
                                  "--format", "json", store=seeded_store)
        assert code == 0, err
        outs.append(json.loads(out))
    assert outs[0] == outs[1] and outs[0]["convention"] == "MacInnes"


def test_misspelt_model_id_suggests_the_right_one(run_main, seeded_store) -> None:
    code, _, err = run_main("predict", "NaCl", "--model", "Pitzer", store=seeded_store)
    assert code == 2
    assert err.startswith("Error: unknown model 'Pitzer' (did you mean 'pitzer'?); known models: ")
    code, _, err = run_main("params", "--model", "pitzr", store=seeded_store)
    assert code == 2
    assert err.startswith("Error: unknown model 'pitzr' (did you mean 'pitzer'?); known models: ")
    code, _, err = run_main("predict", "NaCl", "--model", "zzz", store=seeded_store)
    assert code == 2 and err.startswith("Error: unknown model 'zzz'; known models: ")


def test_convert_refuses_zero_fit_points(run_main, seeded_store) -> None:
    code, _, err = run_main("convert", "NaCl", "--from", "gamma", "--dataset", "NaCl.gamma_pm.crc-handbook",
                            "--fit-points", "0", store=seeded_store)
    assert code == 2
    assert err.strip().endswith("Error: Invalid value for '--fit-points': 0 is not in the range x>=1.")


def test_predict_warns_when_a_set_is_used_away_from_its_temperature(run_main, seeded_store) -> None:
    # named: at 50 °C the set with NaCl's temperature form (silvester-pitzer-1977) is chosen first
    code, _, err = run_main("predict", "NaCl", "--model", "pitzer", "--m", "5", "--temperature", "323.15",
                            "--params", "pitzer-mayorga-1973", store=seeded_store)
    assert code == 0
    assert ("Warning: parameter set pitzer-mayorga-1973 holds values for 298.15 K; at 323.15 K only the "
            "Debye-Hückel constant is recomputed, the parameters are used unchanged, so the results are "
            "an extrapolation in temperature.") in err
    code, _, err = run_main("predict", "NaCl", "--model", "pitzer", "--m", "5", store=seeded_store)
    assert code == 0 and "extrapolation in temperature" not in err


def test_water_activity_is_not_rounded_to_one(run_main, seeded_store) -> None:
    code, out, err = run_main("predict", "NaCl", "--model", "davies", "--m", "0.001", store=seeded_store)
    assert code == 0, err
    lines = out.splitlines()
    assert lines[1].split()[-2:] == ["a_w", "extrapolated"]
    a_w = lines[3].split()[-2]
    # ln a_w = -nu m M_w phi (from memory of the IUPAC Green Book, 3rd ed., 2007, chemical
    # thermodynamics); M_w = 0.018015 kg/mol (IUPAC standard atomic weights); phi ~ 0.988 for NaCl
    # at 0.001 mol/kg (from memory of Robinson and Stokes 1959, appendix). The tolerance allows
    # phi to be off by 0.05.
    expected = math.exp(-2 * 0.001 * 0.018015 * 0.988)
    assert a_w != "1"
    assert float(a_w) == pytest.approx(expected, abs=2e-6)


def test_data_show_prints_stored_values_as_typed(run_main, seeded_store) -> None:
    # The value as printed in the bundled file (from memory of Robinson and Stokes 1959,
    # Appendix 8.10; the file says so) must appear digit for digit, not rounded to 4 digits.
    path = REFDATA / "datasets" / "NaCl.osmotic.robinson-stokes-1959.csv"
    rows = [line.split(",") for line in path.read_text(encoding="utf-8").splitlines()
            if line and not line.startswith("#") and not line.startswith("molality")]
    long = [(m, v) for m, v, *_ in rows if len(v.replace(".", "").lstrip("0")) >= 5]
    assert long, "the file should hold a value with five significant digits"
    code, out, err = run_main("data", "show", "NaCl", store=seeded_store)
    assert code == 0, err
    printed = {tuple(line.split()[:2]) for line in out.splitlines() if line.startswith("  ")}
    for m, v in long:
        assert (f"{float(m):g}", v) in printed


def test_readings_list_prints_the_temperature_in_full(run_main, seeded_store) -> None:
    folder = REFDATA / "examples" / "readings-fenwick-quay"
    code, _, err = run_main("readings", "add", str(folder), store=seeded_store)
    assert code == 0, err
    code, out, err = run_main("readings", "list", store=seeded_store)
    assert code == 0, err
    # 25 °C = 298.15 K (definition of the Celsius scale, SI Brochure 9th ed., 2019, 2.3.1).
    assert all(" 298.15 " in line for line in out.splitlines()[2:])


@pytest.mark.parametrize("args", [
    ("predict", "NaCl", "--model", "davies"),
    ("fit", "NaCl", "--model", "huckel", "--no-save"),
    ("convert", "NaCl", "--from", "osmotic"),
])
@pytest.mark.parametrize("fmt", ["table", "json", "csv"])
def test_numbers_carry_the_caution(run_main, seeded_store, args, fmt) -> None:
    code, out, err = run_main(*args, "--format", fmt, store=seeded_store)
    assert code == 0, err
    if fmt == "table":
        assert out.rstrip().endswith(CAUTION)
    else:
        assert CAUTION in err and CAUTION not in out
        if fmt == "json":
            json.loads(out)


def test_compare_table_fits_100_columns_and_keeps_full_verdicts_in_json(run_main, seeded_store) -> None:
    args = ("compare", "NaCl", "--models", "davies,huckel,pitzer", "--jobs", "1")
    code, out, err = run_main(*args, store=seeded_store)
    assert code == 0, err
    assert max(len(line) for line in out.splitlines() if not line.startswith("==")) <= 100
    assert "only to 0.1" in out and "Validity ranges hold only" in out
    code, out, err = run_main(*args, "--format", "json", store=seeded_store)
    assert code == 0, err
    verdicts = {r["model"]: r["verdict"] for r in json.loads(out)}
    assert verdicts["davies"].startswith("within tolerance only up to ")
    assert "Validity ranges hold only" in err


def test_compare_gives_the_reason_of_a_flagged_row_below_the_table(run_main, seeded_store) -> None:
    # CsNO3 (handbook, 0.1-1.0 mol/kg): Stokes-Robinson's hydration number runs onto its bound
    code, out, err = run_main("compare", "CsNO3", "--models", "stokes-robinson", "--jobs", "1",
                              store=seeded_store)
    assert code == 0, err
    flagged = [line for line in out.splitlines() if line.startswith("stokes-robinson")]
    assert flagged and flagged[0].endswith("flagged (below)")
    assert any(line.startswith("   stokes-robinson: not ranked: parameter h at bound") for line in out.splitlines())


def test_compare_leaves_out_per_ion_models_for_one_salt_with_a_reason(run_main, seeded_store) -> None:
    code, out, err = run_main("compare", "NaCl", "--models", "truesdell-jones,pitzer", "--jobs", "1",
                              store=seeded_store)
    assert code == 0, err
    assert not any(line.startswith("truesdell-jones ") for line in out.splitlines())
    assert "left out, parameters per ion need several salts sharing an ion: truesdell-jones" in out
    code, _, err = run_main("compare", "NaCl", "--models", "truesdell-jones", "--jobs", "1", store=seeded_store)
    assert code == 2 and err.count("\n") == 1 and "need several salts sharing an ion" in err


def test_report_from_a_manifest_that_disagrees_exits_1(run_main, seeded_store, tmp_path: Path) -> None:
    # `report --from` says 'differ' with exit status 1; main() used to drop that status.
    first = tmp_path / "first"
    code, _, err = run_main("report", "NaCl", "--models", "davies", "--out", str(first), "--jobs", "1",
                            store=seeded_store)
    assert code == 0, err
    manifest = json.loads((first / "manifest.json").read_text(encoding="utf-8"))
    manifest["results"]["records"][0]["rms_ln_gamma"] *= 1.01
    edited = tmp_path / "manifest.json"
    edited.write_text(json.dumps(manifest), encoding="utf-8")
    code, out, _ = run_main("report", "--from", str(edited), "--out", str(tmp_path / "rerun"), "--jobs", "1",
                            store=seeded_store)
    assert code == 1
    assert "Results differ from the manifest in 1 place(s):" in out


def test_piping_into_head_ends_quietly(seeded_store) -> None:
    # Far more output than a pipe buffer holds, so the write fails once the reader has gone.
    many = ",".join(f"{0.001 * i:g}" for i in range(1, 6000))
    env = {**os.environ, "SALTBENCH_STORE": str(seeded_store)}
    proc = subprocess.Popen([sys.executable, "-m", "saltbench", "predict", "NaCl", "--model", "davies",
                             "--m", many], stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env)
    first = proc.stdout.readline()
    proc.stdout.close()
    err = proc.stderr.read().decode()
    proc.stderr.close()
    assert proc.wait() == 0
    assert first.startswith(b"NaCl with Davies")
    assert "Traceback" not in err and "BrokenPipe" not in err


def test_compare_away_from_the_data_temperature_says_where_the_data_are(run_main, seeded_store) -> None:
    # The bundled data are at 25 °C = 298.15 K (the bundled files' headers say '25 C').
    for args in (("compare", "NaCl", "--models", "davies"), ("fit", "NaCl", "--model", "davies")):
        code, _, err = run_main(*args, "--temperature", "323.15", store=seeded_store)
        assert code == 2
        assert err.strip() == ("Error: no data for NaCl at 323.15 K; its data are at 298.15 K (add your own "
                               "measurements at 323.15 K with 'saltbench data add', or use 'saltbench "
                               "predict --temperature', which warns that it extrapolates)")


def test_ion_activity_notes_25_c_parameters_used_at_another_temperature(run_main, seeded_store) -> None:
    note = ("the stored parameters are 25 °C values used unchanged at 323.15 K; only the Debye-Hückel "
            "term follows the temperature")
    code, out, err = run_main("ion-activity", "--salt", "NaCl=0.1", "--convention", "sit", "--temperature",
                              "323.15", "--format", "json", store=seeded_store)
    assert code == 0, err
    assert note in json.loads(out)["notes"]
    code, out, err = run_main("ion-activity", "--salt", "NaCl=0.1", "--convention", "sit", "--format", "json",
                              store=seeded_store)
    assert code == 0, err
    assert not any("25 °C values" in n for n in json.loads(out)["notes"])


@pytest.mark.parametrize("args", [("models",), ("data", "show", "NaCl"), ("params", "pitzer-mayorga-1973")])
def test_listings_fit_100_columns(run_main, seeded_store, args) -> None:
    code, out, err = run_main(*args, store=seeded_store)
    assert code == 0, err
    assert max(len(line) for line in out.splitlines()) <= 100


def test_models_lists_every_citation(run_main, seeded_store) -> None:
    code, out, _ = run_main("models", "--format", "json", store=seeded_store)
    models = json.loads(out)
    code, text, _ = run_main("models", store=seeded_store)
    assert code == 0
    flat = " ".join(text.split())
    for m in models:
        assert f"{m['id']}: {m['name']}" in text
        assert " ".join(m["citation"].split()) in flat


def test_params_show_prints_published_values_as_typed(run_main, seeded_store) -> None:
    # MgCl2 beta0 = 0.35235 and beta1 = 1.6815 as typed in refdata/parameters/pitzer-mayorga-1973.csv
    # (from memory of Pitzer and Mayorga 1973, Table II; the file says so): five significant digits.
    path = REFDATA / "parameters" / "pitzer-mayorga-1973.csv"
    assert any(line.startswith("MgCl2,0.35235,1.6815,") for line in path.read_text(encoding="utf-8").splitlines())
    code, out, err = run_main("params", "pitzer-mayorga-1973", store=seeded_store)
    assert code == 0, err
    rows = {tuple(line.split()[:3]) for line in out.splitlines()}
    assert ("MgCl2", "beta0", "0.35235") in rows and ("MgCl2", "beta1", "1.6815") in rows


def test_electrolytes_given_with_commas_get_a_hint(run_main, seeded_store) -> None:
    code, _, err = run_main("compare", "NaCl,KCl", "--models", "davies", store=seeded_store)
    assert code == 2
    assert err.startswith("Error: no data for electrolyte 'NaCl,KCl' in the store (a comma is no part of a "
                          "formula; where a command takes several electrolytes, separate them with spaces); known: ")


def test_messages_point_where_the_user_is(run_main, seeded_store, tmp_path) -> None:
    from conftest import write

    # predict takes one electrolyte: the comma hint does not tell it to name several
    code, _, err = run_main("predict", "NaCl,KCl", "--model", "davies", store=seeded_store)
    assert code == 2 and "several electrolytes with spaces" not in err and "no part of a formula" in err
    # ion-activity has no data file to declare ions in
    code, _, err = run_main("ion-activity", "--salt", "NaQq=0.1", "--convention", "davies", store=seeded_store)
    assert code == 2 and "data file" not in err and "known ions" in err
    # SIT without epsilon says which option takes them as zero, not an API word alone
    code, _, err = run_main("ion-activity", "--salt", "CsNO3=0.1", "--convention", "sit", store=seeded_store)
    assert code == 2 and "--missing zero" in err
    # MacInnes lists the solution's ions only (its K+ and Cl- reference need not be present)
    code, out, err = run_main("ion-activity", "--salt", "NaCl=0.1", "--convention", "macinnes", store=seeded_store)
    assert code == 0 and not any(line.startswith("K+ ") for line in out.splitlines())
    # data add names every bad file, not only the first, and adds none
    bad1 = write(tmp_path / "bad1.csv", "# saltbench dataset 1\n# electrolyte: NaQq\n")
    bad2 = write(tmp_path / "bad2.csv", "# saltbench dataset 1\n# electrolyte: NaCl\n# property: nonsense\n")
    code, _, err = run_main("data", "add", str(bad1), str(bad2), store=seeded_store)
    assert code == 2 and "bad1.csv" in err and "bad2.csv" in err and "nothing was added" in err


@pytest.mark.parametrize("command", ["compare", "report"])
def test_jobs_must_be_at_least_one(run_main, seeded_store, command) -> None:
    code, _, err = run_main(command, "NaCl", "--models", "davies", "--jobs", "0", store=seeded_store)
    assert code == 2
    assert err.strip().endswith("Error: Invalid value for '--jobs': 0 is not in the range x>=1.")


def test_reduce_all_on_a_store_without_readings_says_so(run_main, seeded_store) -> None:
    code, _, err = run_main("readings", "reduce", "--all", store=seeded_store)
    assert code == 2
    assert err.strip() == ("Error: --all: the store holds no measurement sets; add raw readings with "
                           "'saltbench readings add FILE' first")


def test_report_command_output_carries_the_caution(run_main, seeded_store, tmp_path: Path) -> None:
    code, out, err = run_main("report", "NaCl", "--models", "davies", "--out", str(tmp_path / "r"), "--jobs", "1",
                              store=seeded_store)
    assert code == 0, err
    assert ("Caution: for dosing, safety limits or regulated measurements, verify the report's results "
            "under local codes and licensed practice.") in out.splitlines()


def test_help_examples_name_where_their_values_come_from(run_main) -> None:
    code, out, _ = run_main("ion-activity", "--help")
    assert code == 0
    text = " ".join(out.split())
    # b(Na+) = 0.075 and b(Cl-) = 0.015 kg/mol: from memory of Truesdell and Jones, J. Res. U.S.
    # Geol. Surv. 2, 233 (1974)
    assert "Na+=0.075" in text and "Cl-=0.015" in text and "Truesdell and Jones (1974)" in text
