"""ion-activity with the single-ion form of any mixture model (issue 19, item 6)."""

import json
import math

import pytest


def _doc(run_main, store, *args):
    code, out, err = run_main("ion-activity", *args, "--format", "json", store=store)
    assert code == 0, err
    return json.loads(out)


def test_the_ions_of_one_salt_give_back_its_mean(seeded_store, run_main):
    # ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu (IUPAC Green Book, 2.13): whatever the
    # model's convention, its ions of CaCl2 must give back the mean that predict gives.
    doc = _doc(run_main, seeded_store, "--salt", "CaCl2=0.5", "--convention", "model", "--model", "pitzer",
               "--sets", "pitzer-mayorga-1973")
    lg = {r["ion"]: r["log10_gamma"] for r in doc["ions"]}
    mean = (lg["Ca+2"] + 2 * lg["Cl-"]) / 3 * math.log(10)
    code, out, err = run_main("predict", "--solution", "CaCl2=0.5", "--model", "pitzer", "--sets",
                              "pitzer-mayorga-1973", "--format", "json", store=seeded_store)
    assert code == 0, err
    assert mean == pytest.approx(json.loads(out)[0]["ln_gamma_pm"]["CaCl2"], rel=1e-10)
    assert "non-thermodynamic" in doc["caveat"] or "convention" in doc["caveat"]


def test_a_mixture_model_beyond_its_range_is_marked(seeded_store, run_main):
    # Davies is held to work up to I of about 0.5 mol/kg (Davies, Ion Association, 1962)
    doc = _doc(run_main, seeded_store, "--salt", "NaCl=1.0", "--convention", "model", "--model", "davies")
    assert doc["extrapolated"] and any("0.5" in why for why in doc["extrapolation"])


def test_a_pair_no_set_covers_is_refused_in_one_line(seeded_store, run_main):
    code, out, err = run_main("ion-activity", "--salt", "NaF=0.1", "--convention", "model", "--model",
                              "pitzer", store=seeded_store)
    assert code == 2 and "beta0[Na+/F-]" in err and len(err.strip().splitlines()) == 1
    code, out, err = run_main("ion-activity", "--salt", "NaF=0.1", "--convention", "model", store=seeded_store)
    assert code == 2 and "--model" in err
