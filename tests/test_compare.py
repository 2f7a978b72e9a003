"""The main job: compare models per electrolyte, with checks against facts of the trade."""

from __future__ import annotations

import json

import pytest

REQUIRED_KEYS = {"electrolyte", "model", "n_params", "rms_ln_gamma", "heldout_rms_ln_gamma", "aicc",
                 "valid_up_to_published", "valid_up_to_refit", "flags", "recommended"}


@pytest.fixture(scope="module")
def nacl_records(seeded_store_file, tmp_path_factory):
    """compare NaCl on the bundled data (Robinson-Stokes and handbook tables; see refdata/)."""
    from saltbench.api import Session, compare
    from saltbench.comparison.settings import CompareSettings

    s = Session(seeded_store_file)
    comp = compare(s, ["NaCl"], CompareSettings(models=("debye-huckel-limiting", "davies", "pitzer",
                                                        "extended-debye-huckel")), jobs=1)
    return {r["model"]: r for r in comp.records()}, comp


def test_json_records_carry_the_documented_keys(seeded_store, run_main):
    code, out, err = run_main("compare", "NaCl", "--models", "davies,pitzer", "--jobs", "1",
                              "--format", "json", store=seeded_store)
    assert code == 0, err
    records = json.loads(out)
    assert {r["model"] for r in records} == {"davies", "pitzer"}
    for r in records:
        assert REQUIRED_KEYS <= set(r)
    assert sum(r["recommended"] for r in records) <= 1


def test_limiting_law_fails_near_0_01_molal_for_a_1_1_salt(nacl_records):
    # Common practice, no source: the Debye-Hückel limiting law holds for 1-1 salts to about
    # 0.01 mol/kg at the 1 % level (|d ln gamma±| <= 0.01).
    records, _ = nacl_records
    v = records["debye-huckel-limiting"]["valid_up_to_refit"]
    assert v is not None and 0.002 <= v <= 0.02


def test_davies_holds_to_a_few_tenths(nacl_records):
    # Common practice, no source: Davies holds to a few tenths of a mol/kg (I ~ 0.1-0.5).
    records, _ = nacl_records
    v = records["davies"]["valid_up_to_refit"]
    assert v is not None and 0.05 <= v <= 0.6


def test_pitzer_holds_to_several_molal_and_is_recommended_over_worse_models(nacl_records):
    # Common practice, no source: Pitzer's binary parameters hold to several mol/kg for NaCl
    # (Pitzer and Mayorga 1973 fitted to 6 mol/kg).
    records, comp = nacl_records
    assert records["pitzer"]["valid_up_to_refit"] >= 4.0
    assert records["pitzer"]["valid_up_to_published"] >= 4.0
    rec = comp.recommendations["NaCl"]
    assert rec.model == "pitzer"  # the only one of these four that covers the data range
    assert records["pitzer"]["recommended"] is True


def test_recommendation_is_the_simplest_model_that_meets_the_range(nacl_records, seeded_store_file):
    from saltbench.api import Session, compare
    from saltbench.comparison.settings import CompareSettings

    s = Session(seeded_store_file)
    comp = compare(s, ["NaCl"], CompareSettings(models=("davies", "pitzer", "extended-debye-huckel"),
                                                up_to=0.05), jobs=1)
    records = {r["model"]: r for r in comp.records()}
    # at 0.05 mol/kg all three meet 1 %; Davies has no fitted parameter and so wins
    assert records["davies"]["valid_up_to_refit"] >= 0.05
    assert comp.recommendations["NaCl"].model == "davies"


def test_nothing_flagged_is_recommended_and_failures_do_not_stop_the_others(tmp_path, seeded_store, run_main):
    plugin = tmp_path / "broken.py"
    plugin.write_text(
        "import numpy as np\n"
        "from saltbench.models import ActivityModel, hookimpl\n"
        "class Broken(ActivityModel):\n"
        "    id = 'always-nan'\n    name = 'Always NaN'\n    citation = 'none (test model)'\n"
        "    def ln_gamma_pm(self, m, params, ctx):\n        return np.full(m.shape, np.nan)\n"
        "@hookimpl\n"
        "def register_models(context):\n    return [Broken()]\n")
    code, out, err = run_main("--plugin", str(plugin), "compare", "NaCl", "--models", "always-nan,davies",
                              "--jobs", "1", "--format", "json", store=seeded_store)
    assert code == 0, err
    records = {r["model"]: r for r in json.loads(out)}
    assert records["always-nan"]["recommended"] is False
    assert any("not finite" in f for f in records["always-nan"]["flags"])
    assert records["davies"]["valid_up_to_refit"] is not None


def test_none_meets_the_range_is_said_plainly(seeded_store, run_main):
    code, out, err = run_main("compare", "NaCl", "--models", "debye-huckel-limiting,davies", "--jobs", "1",
                              store=seeded_store)
    assert code == 0, err
    assert "No model stays within" in out


def test_unknown_model_is_a_user_error(seeded_store, run_main):
    code, out, err = run_main("compare", "NaCl", "--models", "no-such-model", store=seeded_store)
    assert code == 2
    assert err.startswith("Error: unknown model 'no-such-model'")


def test_leave_one_out_and_k_fold_both_work(seeded_store, run_main):
    code, out, err = run_main("compare", "KCl", "--models", "pitzer", "--folds", "loo", "--jobs", "1",
                              "--format", "json", store=seeded_store)
    assert code == 0, err
    loo = json.loads(out)[0]
    code, out, err = run_main("compare", "KCl", "--models", "pitzer", "--folds", "3", "--jobs", "1",
                              "--format", "json", store=seeded_store)
    k3 = json.loads(out)[0]
    # the same fit; held-out errors differ with the folds but stay near the fit's own residuals
    assert loo["rms_ln_gamma"] == k3["rms_ln_gamma"]
    assert loo["heldout_rms_ln_gamma"] != k3["heldout_rms_ln_gamma"]
    assert loo["rms_ln_gamma"] <= loo["heldout_rms_ln_gamma"] < 3 * loo["rms_ln_gamma"]
    code, _, err = run_main("compare", "KCl", "--folds", "one", store=seeded_store)
    assert code == 2 and "--folds" in err
