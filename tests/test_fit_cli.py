"""`saltbench fit`: parameters with standard errors, saved and reused; checked against Pitzer-Mayorga."""

from __future__ import annotations

import json

import numpy as np

# Pitzer and Mayorga, J. Phys. Chem. 77, 2300 (1973), Table 2, NaCl (from memory of that table;
# the same values are in refdata/parameters/pitzer-mayorga-1973.csv, also marked from memory):
PM_NACL = {"beta0": 0.0765, "beta1": 0.2664, "C_phi": 0.00127}


def test_fit_json_shape_and_saved_set_is_reused(seeded_store, run_main):
    code, out, err = run_main("fit", "NaCl", "--model", "pitzer", "--up-to", "6", "--format", "json",
                              store=seeded_store)
    assert code == 0, err
    doc = json.loads(out)
    assert {"electrolyte", "model", "parameters", "correlation", "residuals", "converged", "flags"} <= set(doc)
    names = {p["name"] for p in doc["parameters"]}
    assert {"beta0", "beta1", "C_phi"} <= names
    free = [p for p in doc["parameters"] if not p["fixed"]]
    assert [p["name"] for p in free] == ["beta0", "beta1", "C_phi"]  # beta2 only for 2-2 salts
    assert all(p["stderr"] > 0 for p in free)
    assert doc["converged"] is True
    set_id = doc["parameter_set"]
    code, out, err = run_main("predict", "NaCl", "--model", "pitzer", "--params", set_id, "--m", "0.5,2",
                              "--format", "json", store=seeded_store)
    assert code == 0, err
    rows = json.loads(out)
    assert {"molality", "gamma_pm", "ln_gamma_pm", "osmotic", "water_activity"} <= set(rows[0])
    # covariance propagated into uncertainties: small but not zero
    assert all(0 < r["u_gamma_pm"] < 0.01 and 0 < r["u_osmotic"] < 0.01 for r in rows)


def test_pitzer_fit_to_nacl_recovers_pitzer_mayorga(seeded_store_file):
    """Fitted with Pitzer-Mayorga's own A_phi = 0.392 to the bundled NaCl tables up to 6 mol/kg.

    Tolerances: Pitzer and Mayorga report a fit standard deviation of about 0.001 in phi for
    NaCl (from memory of their Table 2); the bundled tables carry 0.002-0.003. The standard
    errors of our fit are about 0.0008 (beta0), 0.005 (beta1) and 0.00015 (C_phi); we allow three
    of them, which covers the two fits' different data and weights.
    """
    from saltbench.api import Session, select_data
    from saltbench.fitting import fit
    from saltbench.models.discovery import build_registry
    from saltbench.models.evaluate import evaluate, make_context
    from saltbench.water import debye_huckel_constants, with_a_phi

    s = Session(seeded_store_file)
    e = s.electrolyte("NaCl")
    sel = select_data(s, e, up_to=6.0)
    model = build_registry().model("pitzer")
    dh = with_a_phi(debye_huckel_constants(298.15), 0.392, "Pitzer-Mayorga")
    result = fit(model, e, sel.data, dh=dh)
    assert result.ok
    v = result.values
    assert abs(v["beta0"] - PM_NACL["beta0"]) < 0.0025
    assert abs(v["beta1"] - PM_NACL["beta1"]) < 0.015
    assert abs(v["C_phi"] - PM_NACL["C_phi"]) < 0.00045
    # and gamma± reproduced within 0.003 against the published set itself (both with A_phi 0.392)
    m = np.array([0.1, 0.5, 1.0, 2.0, 4.0, 6.0])
    ctx = make_context(e, dh=dh)
    ours = evaluate(model, e, m, result.model_values("NaCl"), ctx=ctx).gamma_pm
    theirs = evaluate(model, e, m, PM_NACL, ctx=ctx).gamma_pm
    assert np.max(np.abs(ours - theirs)) < 0.003


def test_fix_and_free_and_bad_requests(seeded_store, run_main):
    code, out, err = run_main("fit", "NaCl", "--model", "huckel", "--fix", "a=4.0", "--no-save", "--format", "json",
                              store=seeded_store)
    assert code == 0, err
    params = {p["name"]: p for p in json.loads(out)["parameters"]}
    assert params["a"]["value"] == 4.0 and params["a"]["fixed"]
    code, _, err = run_main("fit", "NaCl", "--model", "huckel", "--fix", "nonsense=1", store=seeded_store)
    assert code == 2 and err.startswith("Error:")
    code, _, err = run_main("fit", "NaCl", "--model", "huckel", "--fix", "a=abc", store=seeded_store)
    assert code == 2 and "not a number" in err
    code, _, err = run_main("fit", "NaCl", "--model", "huckel", "--up-to", "0.0001", store=seeded_store)
    assert code == 2 and err.startswith("Error: no ")


def test_fit_a_user_declared_salt_and_a_joint_per_ion_fit(seeded_store, run_main):
    from pathlib import Path

    examples = Path(__file__).resolve().parents[1] / "refdata" / "examples"
    code, out, err = run_main("data", "add", str(examples), store=seeded_store)
    assert code == 0, err
    code, out, err = run_main("fit", "QmCl", "--model", "huckel", "--format", "json", store=seeded_store)
    assert code == 0, err
    params = {p["name"]: p for p in json.loads(out)["parameters"]}
    # the invented data were generated with a per-ion form (Qm 7.0 Å, Cl 3.0 Å) plus 0.06 I;
    # the one-size Hückel form sees a mean size between the two and a positive linear term
    assert 3.0 < params["a"]["value"] < 7.0 and params["b"]["value"] > 0
    code, out, err = run_main("fit", "QmCl", "QmBr", "--model", "extended-debye-huckel-ions",
                              "--fix", "a_anion[Cl]=3.0", "--no-save", "--format", "json", store=seeded_store)
    assert code == 0, err
    params = {p["name"]: p for p in json.loads(out)["parameters"]}
    assert "a_cation[Qm]" in params and "a_anion[Br]" in params
    assert params["a_cation[Qm]"]["stderr"] > 0
