"""fit and compare on mixture data (issue 19, item 4), on the invented Kestrel Bay series.

The series were generated from stated rules (refdata/examples/mixtures/README.md): gamma±(HCl) in
HCl + NaCl by Harned's rule, log10 gamma±(HCl) = log10 gamma±(HCl alone) - 0.031 y_NaCl I, with
noise of 0.0015 in gamma±. A fit must recover the stated rule (Harned's rule: Harned and Owen, The
Physical Chemistry of Electrolytic Solutions, 3rd ed., 1958, ch. 14; from memory).
"""

import json
import math
import shutil
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "refdata" / "examples" / "mixtures"


@pytest.fixture
def mixture_store(seeded_store, run_main, tmp_path):
    folder = tmp_path / "mixtures"
    shutil.copytree(EXAMPLES, folder)
    code, out, err = run_main("data", "add", str(folder), store=seeded_store)
    assert code == 0, err
    return seeded_store


def test_compare_recommends_a_model_with_mixing_terms(mixture_store, run_main):
    code, out, err = run_main("compare", "--mixture", "HCl + NaCl", "--format", "json", store=mixture_store)
    assert code == 0, err
    recs = {r["model"]: r for r in json.loads(out)}
    pitzer = recs["pitzer"]
    assert pitzer["recommended"] and pitzer["n_params"] == 2
    # within the stated noise (0.0015 in gamma± of about 0.8: 0.002 in ln gamma±), held out too
    assert pitzer["heldout_rms_ln_gamma"] < 0.004
    assert pitzer["valid_up_to_refit"] == pytest.approx(3.0)
    # a model without mixing terms is judged as it stands: nothing fitted
    assert recs["sit"]["n_params"] == 0


def test_the_fitted_mixing_terms_give_back_the_stated_harned_coefficient(mixture_store, run_main):
    code, out, err = run_main("fit", "--mixture", "HCl + NaCl", "--model", "pitzer", "--format", "json",
                              store=mixture_store)
    assert code == 0, err
    fit = json.loads(out)
    free = {p["name"]: p for p in fit["parameters"] if not p["fixed"]}
    assert set(free) == {"theta[H+/Na+]", "psi[H+/Na+/Cl-]"}
    set_id = fit["parameter_set"]
    assert set_id
    # Harned's coefficient at I = 1 from the fitted model: the slope of log10 gamma±(HCl) in y_NaCl
    logs = []
    for y in (0.0, 1.0):
        spec = f"HCl={1 - y:.6f},NaCl={y:.6f}" if 0 < y < 1 else ("HCl=1" if y == 0 else "HCl=1e-9,NaCl=1")
        code, out, err = run_main("predict", "--solution", spec, "--model", "pitzer", "--sets", set_id,
                                  "--format", "json", store=mixture_store)
        assert code == 0, err
        logs.append(json.loads(out)[0]["ln_gamma_pm"]["HCl"] / math.log(10))
    alpha = -(logs[1] - logs[0]) / 1.0
    assert alpha == pytest.approx(0.031, abs=0.003)


def test_mixture_mistakes_are_one_line_errors(mixture_store, run_main):
    for args, needle in ((["compare", "--mixture", "KCl + NaCl"], "KCl"),
                         (["fit", "--mixture", "HCl + NaCl", "--model", "stokes-robinson"], "one salt"),
                         (["fit", "NaCl", "--mixture", "HCl + NaCl", "--model", "pitzer"], "not both")):
        code, out, err = run_main(*args, store=mixture_store)
        assert code == 2, (args, err)
        assert needle in err and len(err.strip().splitlines()) == 1, err


def test_data_and_on_choose_among_a_systems_datasets(mixture_store, run_main, tmp_path):
    # a second, biased series of the same system (every gamma± 3 % high: a systematic error of
    # the kind --data exists to leave out; common practice, no source)
    original = EXAMPLES / "hcl-nacl.gamma-hcl.kestrel-notebook-12.csv"
    lines = original.read_text(encoding="utf-8").splitlines()
    body = lines.index("m(HCl),m(NaCl),value")
    biased = lines[:body + 1] + [",".join([*row.split(",")[:2], f"{float(row.split(',')[2]) * 1.03:.4f}"])
                                 for row in lines[body + 1:] if row]
    path = tmp_path / "hcl-nacl.gamma-hcl.biased.csv"
    path.write_text("\n".join(biased) + "\n", encoding="utf-8")
    code, out, err = run_main("data", "add", str(path), store=mixture_store)
    assert code == 0, err

    def theta(*extra):
        code, out, err = run_main("fit", "--mixture", "HCl + NaCl", "--model", "pitzer", "--no-save",
                                  "--format", "json", *extra, store=mixture_store)
        assert code == 0, err
        return {p["name"]: p["value"] for p in json.loads(out)["parameters"]}["theta[H+/Na+]"]

    chosen = theta("--data", "hcl-nacl.gamma-hcl.kestrel-notebook-12")
    assert chosen != pytest.approx(theta(), abs=1e-3)  # the pooled fit feels the biased series
    code, out, err = run_main("compare", "--mixture", "HCl + NaCl", "--models", "pitzer", "--format", "json",
                              "--data", "hcl-nacl.gamma-hcl.kestrel-notebook-12", store=mixture_store)
    assert code == 0, err
    pitzer = json.loads(out)[0]
    assert pitzer["n_points"] == 30 and pitzer["heldout_rms_ln_gamma"] < 0.004
    for args, needle in ((["--on", "osmotic"], "no mixture data of HCl + NaCl left after --on osmotic"),
                         (["--data", "nope"], "no mixture dataset, source or origin 'nope'")):
        for command in (["compare", "--mixture", "HCl + NaCl"],
                        ["fit", "--mixture", "HCl + NaCl", "--model", "pitzer", "--no-save"]):
            code, out, err = run_main(*command, *args, store=mixture_store)
            assert code == 2 and needle in err and len(err.strip().splitlines()) == 1, err
