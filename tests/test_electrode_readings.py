"""Electrode and pH-buffer readings files: their one-line FILE:LINE: field errors, storage in one
transaction (nothing half-written), the standards' activities against the ion-activity command,
the Bates-Guggenheim limit, the CLI's JSON interface and the invented Larkspur Fen example
recovering the parameters its generator states."""

from __future__ import annotations

import json
import math
import sqlite3
import sys
from pathlib import Path

import pytest
from conftest import REFDATA, write

from saltbench.curation.electrode_readings import BATES_GUGGENHEIM_MAX_I, read_electrode_readings
from saltbench.errors import InputFileError
from saltbench.measurements.conventions import BATES_GUGGENHEIM_MAX_I as CONVENTION_LIMIT

EXAMPLE = REFDATA / "examples" / "electrode-larkspur-fen"
BIB = """[own-notebook-4]
authors: A. Operator
title: Bench notebook 4 (test entry)
publisher: test bench
year: 2024
"""

HEAD = """# saltbench readings 1
# kind: electrode
# id: test-cal
# ion: NO3-
# interferents: Cl-
# background: Na2SO4=0.04
# temperature: 25 C
# reference_electrode: Ag/AgCl double junction
# u_emf: 0.3 mV
# source: own-notebook-4
# typed: measured by A. Operator, bench 2
role,label,solution,emf_mv
"""
GOOD_ROWS = """standard,,NaNO3=1e-4,420.1
standard,,NaNO3=1e-3,363.0
standard,,NaNO3=1e-2,306.2
sample,s1,NaCl=0.001,400.0
"""


def _file(tmp_path: Path, rows: str = GOOD_ROWS, head: str = HEAD, name: str = "cal.csv") -> Path:
    return write(tmp_path / name, head + rows)


@pytest.mark.parametrize(("rows", "head_change", "line", "field", "problem"), [
    (GOOD_ROWS.replace("standard,,NaNO3=1e-3", "stnadard,,NaNO3=1e-3"), None, 14, "role", "unknown role"),
    (GOOD_ROWS.replace("NaNO3=1e-3", "NaCl=1e-3"), None, 14, "solution", "must hold the primary ion"),
    (GOOD_ROWS.replace("NaNO3=1e-3", "NO3-=1e-3"), None, 14, "solution", "is an ion"),
    (GOOD_ROWS.replace("NaNO3=1e-3", "NaNO3=-1e-3"), None, 14, "solution", "negative amount"),
    (GOOD_ROWS.replace("NaNO3=1e-3", "KNO3=1e-3"), None, 14, "solution", "in one salt"),
    (GOOD_ROWS.replace("363.0", "363 mV"), None, 14, "emf_mv", "not a number"),
    (GOOD_ROWS.replace("363.0", "36300"), None, 14, "emf_mv", "not an electrode potential"),
    (GOOD_ROWS.replace("sample,s1,NaCl=0.001", "sample,s1,NaNO3=0.001"), None, 16, "solution",
     "must not hold the primary ion"),
    (GOOD_ROWS + "separate,,KBr=0.01,400\n", None, 17, "solution", "must hold one of the interferents"),
    (GOOD_ROWS, ("# ion: NO3-", "# ion: NaNO3"), 4, "ion", "is a salt"),
    (GOOD_ROWS, ("# background: Na2SO4=0.04", "# background: NaNO3=0.04"), 6, "background",
     "holds the primary ion"),
    (GOOD_ROWS, ("# reference_electrode: Ag/AgCl double junction\n", ""), 10, "reference_electrode",
     "missing header field"),
    (GOOD_ROWS, ("# u_emf: 0.3 mV\n", ""), 10, "u_emf", "missing"),
])
def test_bad_files_get_one_line_with_file_line_field(tmp_path, rows, head_change, line, field, problem):
    head = HEAD if head_change is None else HEAD.replace(*head_change)
    path = _file(tmp_path, rows, head)
    with pytest.raises(InputFileError) as err:
        read_electrode_readings(path)
    msg = str(err.value)
    assert "\n" not in msg
    assert msg.startswith(f"{path}:{line}: field '{field}': "), msg
    assert problem in msg


def test_too_few_standards(tmp_path):
    path = _file(tmp_path, "standard,,NaNO3=1e-4,420.1\nstandard,,NaNO3=1e-3,363.0\n")
    with pytest.raises(InputFileError, match="2 standard rows; a calibration needs at least 3"):
        read_electrode_readings(path)


def test_semicolon_and_quoted_inline_forms_agree(tmp_path):
    a = read_electrode_readings(_file(tmp_path, GOOD_ROWS.replace("NaCl=0.001", "NaCl=0.001;KCl=0.002")))
    b = read_electrode_readings(_file(tmp_path, GOOD_ROWS.replace("NaCl=0.001", '"NaCl=0.001,KCl=0.002"'),
                                      name="b.csv"))
    assert a.rows[-1].salts == b.rows[-1].salts


def test_bates_guggenheim_limit_on_buffers(tmp_path):
    # Bates-Guggenheim convention: defined for I <= 0.1 mol/kg (Bates and Guggenheim, Pure Appl.
    # Chem. 1, 163 (1960); Buck et al., Pure Appl. Chem. 74, 2169 (2002)).
    assert BATES_GUGGENHEIM_MAX_I == CONVENTION_LIMIT == 0.1
    path = write(tmp_path / "ph.csv", """# saltbench readings 1
# kind: ph_buffers
# temperature: 25 C
# reference_electrode: Ag/AgCl in 3 mol/L KCl
# u_emf: 0.1 mV
# source: own-notebook-4
# typed: transcribed from the buffer certificates of lot 7
role,label,ph,u_ph,ionic_strength,emf_mv
buffer,A,4.2,0.01,0.1,160
buffer,B,9.1,0.01,0.15,-126
""")
    with pytest.raises(InputFileError) as err:
        read_electrode_readings(path)
    assert str(err.value).startswith(f"{path}:10: field 'ionic_strength': 0.15 mol/kg is above the 0.1")


def test_bates_guggenheim_convention_refused_above_its_limit(tmp_path, seeded_store):
    from saltbench.api import Session, electrode_calibrate
    from saltbench.errors import UserError

    head = (HEAD.replace("# ion: NO3-", "# ion: Cl-").replace("# interferents: Cl-\n", "")
            .replace("Na2SO4=0.04", "NaNO3=0.2"))
    path = _file(tmp_path, "standard,,NaCl=1e-4,220\nstandard,,NaCl=1e-3,160\nstandard,,NaCl=1e-2,101\n", head)
    with pytest.raises(UserError, match="Bates-Guggenheim convention is defined only up to I = 0.1"):
        electrode_calibrate(Session(seeded_store), str(path), "bates-guggenheim")


def test_add_is_one_transaction(tmp_path, run_main, seeded_store):
    bib = write(tmp_path / "own.sources.txt", BIB)
    good = _file(tmp_path)
    bad = _file(tmp_path, GOOD_ROWS.replace("363.0", "x"), HEAD.replace("test-cal", "other"), "bad.csv")
    code, out, err = run_main("readings", "add", str(bib), str(good), str(bad), store=seeded_store)
    assert code == 2 and err.strip().count("\n") == 0 and f"{bad}:14: field 'emf_mv'" in err
    with sqlite3.connect(seeded_store) as conn:
        assert conn.execute("SELECT count(*) FROM electrode_sets").fetchone() == (0,)
        assert conn.execute("SELECT count(*) FROM electrode_rows").fetchone() == (0,)
        assert conn.execute("SELECT count(*) FROM sources WHERE key = 'own-notebook-4'").fetchone() == (0,)
    # an unknown citation key is refused at the store, still before anything is written
    code, out, err = run_main("electrode", "add", str(good), store=seeded_store)
    assert code == 2 and "field 'source': unknown citation key 'own-notebook-4'" in err
    code, out, err = run_main("electrode", "add", str(bib), str(good), store=seeded_store)
    assert code == 0 and "added     electrode set test-cal" in out
    code, out, err = run_main("electrode", "add", str(bib), str(good), store=seeded_store)
    assert "unchanged electrode set test-cal" in out


def test_stored_set_reads_back_as_written(tmp_path, seeded_store):
    from saltbench.api import Session, add_readings, electrode_set

    s = Session(seeded_store)
    add_readings(s, [write(tmp_path / "own.sources.txt", BIB), _file(tmp_path)])
    stored = electrode_set(s, "test-cal")
    direct = read_electrode_readings(_file(tmp_path))
    assert stored.content_hash() == direct.content_hash()


def test_standards_match_the_ion_activity_command(run_cli, seeded_store):
    # The same solution under the same convention gives the same single-ion activity coefficient
    # through 'ion-activity' and through an electrode calibration (issue 20's check).
    code, out, _ = run_cli("electrode", "calibrate", str(EXAMPLE / "larkspur-nitrate.csv"),
                           "--convention", "davies", "--format", "json", store=seeded_store)
    doc = json.loads(out)
    std = doc["standards"][4]  # NaNO3 1e-4 in Na2SO4 0.04
    salts = [f"{n}={m!r}" for n, m in std["solution"]]
    code, out, _ = run_cli("ion-activity", *[a for s in salts for a in ("--salt", s)], "--convention",
                           "davies", "--format", "json", store=seeded_store)
    ion = next(i for i in json.loads(out)["ions"] if i["ion"] == "NO3-")
    assert std["gamma"] == pytest.approx(ion["gamma"], rel=1e-12)
    assert doc["convention"] == "Davies" and "non-thermodynamic" in doc["caveat"]


def _example_parameters():
    sys.path.insert(0, str(REFDATA / "tools"))
    try:
        import make_electrode_example as gen
    finally:
        sys.path.pop(0)
    return gen


def test_example_recovers_its_stated_parameters(run_cli, seeded_store):
    # The invented Larkspur Fen nitrate calibration was generated (refdata/tools/
    # make_electrode_example.py) from stated E0, S, K(Cl-) and a0 with Davies activities plus
    # noise: the fit on the Davies convention finds them within 3 standard errors.
    gen = _example_parameters()
    assert gen.nitrate_text() == (EXAMPLE / "larkspur-nitrate.csv").read_text(encoding="utf-8")
    assert gen.ph_text() == (EXAMPLE / "larkspur-ph.csv").read_text(encoding="utf-8")
    code, out, _ = run_cli("electrode", "calibrate", str(EXAMPLE / "larkspur-nitrate.csv"),
                           "--format", "json", store=seeded_store)
    doc = json.loads(out)
    for key in ("slope_mv_per_decade", "slope_percent_nernstian", "e0_mv", "linear_range",
                "detection_limit_activity", "selectivity", "u_slope_mv_per_decade",
                "u_slope_percent_nernstian", "u_e0_mv", "u_detection_limit_activity", "u_selectivity"):
        assert key in doc
    assert abs(doc["e0_mv"] - 1000 * gen.E0) <= 3 * doc["u_e0_mv"]
    assert abs(doc["slope_percent_nernstian"] - gen.SLOPE_PERCENT) <= 3 * doc["u_slope_percent_nernstian"]
    assert abs(doc["selectivity"]["Cl-"] - gen.K_CL) <= 3 * doc["u_selectivity"]["Cl-"]
    assert abs(doc["detection_limit_activity"] - gen.A0) <= 3 * doc["u_detection_limit_activity"]
    methods = {m["method"].split(" (")[0] for m in doc["selectivity_methods"]}
    assert {"separate-solution method", "fixed-interference method"} <= methods
    code, out, _ = run_cli("electrode", "ph", str(EXAMPLE / "larkspur-ph.csv"), "--format", "json",
                           store=seeded_store)
    ph = json.loads(out)
    assert abs(ph["slope_percent_nernstian"] - gen.PH_SLOPE_PERCENT) <= 3 * ph["u_slope_percent_nernstian"]
    for got, (_, want) in zip(ph["samples"], gen.PH_SAMPLES):
        assert abs(got["ph"] - want) <= 3 * got["u_ph"]
    assert "Bates-Guggenheim" in ph["convention"]


def test_samples_with_budget_and_flags(run_cli, seeded_store):
    gen = _example_parameters()
    code, out, _ = run_cli("electrode", "samples", str(EXAMPLE / "larkspur-nitrate.csv"), "--format",
                           "json", store=seeded_store)
    doc = json.loads(out)
    assert code == 0 and len(doc["samples"]) == len(gen.SAMPLES)
    for got, (label, m, _cl) in zip(doc["samples"], gen.SAMPLES):
        assert got["label"] == label
        budget = got["molality_budget"]
        assert set(budget) == {"calibration", "reading", "temperature", "activity-coefficient model"}
        assert got["u_molality"] == pytest.approx(math.sqrt(sum(v**2 for v in budget.values())), rel=1e-12)
        assert abs(got["molality"] - m) <= 3 * got["u_molality"]
        assert set(got["molality_by_convention"]) >= {"Davies", "SIT"}
    # the fen pool sample holds more chloride interference than nitrate: flagged
    assert any("Cl- contributes" in f for f in doc["samples"][2]["flags"])
    assert any("Numerical reduction only" in c for c in doc["cautions"])


def test_sample_known_by_its_ionic_strength(tmp_path, seeded_store):
    # Davies' gamma_i depends on I and z_i alone (Davies, Ion Association, 1962): a sample given
    # by its ionic strength gets m_i = a_i / gamma_i(I), gamma_i as 'ion-activity' gives it for
    # NaNO3 at that ionic strength; SIT depends on the counter-ions and is refused.
    from saltbench.api import Session, electrode_calibrate, electrode_samples, ion_activity, parse_salts

    rows = ("standard,,NaNO3=1e-4,,420.1\nstandard,,NaNO3=1e-3,,363.0\nstandard,,NaNO3=1e-2,,306.2\n"
            "sample,s1,,0.125,400.0\n")
    path = _file(tmp_path, rows, HEAD.replace("role,label,solution,emf_mv",
                                              "role,label,solution,ionic_strength,emf_mv"))
    s = Session(seeded_store)
    cal = electrode_calibrate(s, str(path), "davies")
    (sample,) = electrode_samples(s, cal, candidates=("davies", "sit"))
    gamma = ion_activity(s, parse_salts(s, ["NaNO3=0.125"]), "davies").result.gamma("NO3-")
    assert sample.concentration.gamma == pytest.approx(float(gamma), rel=1e-12)
    assert sample.concentration.molality == pytest.approx(sample.activity.activity / float(gamma), rel=1e-12)
    assert "needs the sample's salts" in sample.concentration.refused["sit"]
    assert any("interference is not corrected" in n for n in sample.notes)


def test_ionic_strength_only_on_samples_without_salts(tmp_path):
    head = HEAD.replace("role,label,solution,emf_mv", "role,label,solution,ionic_strength,emf_mv")
    rows = "".join(r.rsplit(",", 1)[0] + ",0.1," + r.rsplit(",", 1)[1] + "\n" for r in GOOD_ROWS.splitlines())
    path = _file(tmp_path, rows, head)
    with pytest.raises(InputFileError) as err:
        read_electrode_readings(path)
    assert str(err.value).startswith(f"{path}:13: field 'ionic_strength': only a sample whose salts")


def test_a_convention_without_a_value_for_the_primary_ion_is_refused(tmp_path, seeded_store):
    # Bates-Guggenheim assigns gamma(Cl-) only (Bates and Guggenheim 1960): a nitrate electrode's
    # standards cannot be put on it, and the message says so instead of failing in the fit.
    from saltbench.api import Session, electrode_calibrate
    from saltbench.errors import UserError

    with pytest.raises(UserError, match="no single-ion value for NO3- under the Bates-Guggenheim"):
        electrode_calibrate(Session(seeded_store), str(_file(tmp_path, head=HEAD.replace(
            "# background: Na2SO4=0.04\n", ""))), "bates-guggenheim")


def test_cli_error_is_one_line_with_exit_status_2(tmp_path, run_main, seeded_store):
    path = _file(tmp_path, GOOD_ROWS.replace("NaNO3=1e-2", "NaNO3=1e-2 mol/kg;NaCl=2 mg/L"))
    code, out, err = run_main("electrode", "calibrate", str(path), store=seeded_store)
    assert code == 2 and out == ""
    assert err.strip().count("\n") == 0
    assert err.startswith(f"Error: {path}:15: field 'solution': ") and "give every amount in one unit" in err
