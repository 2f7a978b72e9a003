"""``saltbench predict --solution``: the interface of issue 19 and what stands behind its numbers."""

import json
import math

import pytest

# The major-ion composition of seawater at S = 35 in mol/kg of water, as the issue writes it
# (rounded from the reference composition: Millero et al., Deep-Sea Res. I 55, 50 (2008)).
SEAWATER_6 = "Na=0.486,Mg=0.0547,Ca=0.0107,K=0.0106,Cl=0.5687,SO4=0.0293"


def _json(run, *args, store):
    code, out, err = run("predict", *args, "--format", "json", store=store)
    assert code == 0, err
    return json.loads(out), err


def test_the_interface_fields_for_a_seawater_type_solution(seeded_store, run_main):
    recs, err = _json(run_main, "--solution", SEAWATER_6, "--model", "pitzer", store=seeded_store)
    assert len(recs) == 1
    r = recs[0]
    for field in ("ionic_strength", "osmotic", "water_activity", "ln_gamma_ions", "ln_gamma_pm",
                  "extrapolated", "extrapolation"):
        assert field in r
    # I = 1/2 sum m z^2 (IUPAC Green Book, 2.13), by hand
    i = 0.5 * (0.486 + 4 * 0.0547 + 4 * 0.0107 + 0.0106 + 0.5687 + 4 * 0.0293)
    assert r["ionic_strength"] == pytest.approx(i, rel=1e-12)
    assert set(r["ln_gamma_ions"]) == {"Na+", "Mg+2", "Ca+2", "K+", "Cl-", "SO4-2"}
    # every neutral salt the ions form: 4 cations x 2 anions
    assert set(r["ln_gamma_pm"]) == {"NaCl", "Na2SO4", "MgCl2", "MgSO4", "CaCl2", "CaSO4", "KCl", "K2SO4"}
    # ln a_w = -M_w phi sum m (IUPAC Green Book, 2.13), M_w = 18.01528 g/mol from the 1995-2007
    # standard atomic weights (from memory of the IUPAC tables; later abridged values differ by
    # 1e-5 relative)
    total = 0.486 + 0.0547 + 0.0107 + 0.0106 + 0.5687 + 0.0293
    assert math.log(r["water_activity"]) == pytest.approx(-0.01801528 * r["osmotic"] * total, rel=5e-5)
    assert "typed from memory" in err or "from memory" in err


def test_seawater_osmotic_coefficient_near_the_published_value(seeded_store, run_main):
    # The osmotic coefficient of standard seawater at S = 35 and 25 °C is about 0.90 (from memory
    # of Millero and Leung, Am. J. Sci. 276, 1035 (1976), and the oceanographic literature after
    # it). Pitzer with the bundled binary sets and Harvie-Moller-Weare mixing terms (both typed
    # from memory) within 0.01: the spread between remembered compilations.
    recs, _ = _json(run_main, "--solution", SEAWATER_6, "--model", "pitzer", store=seeded_store)
    assert recs[0]["osmotic"] == pytest.approx(0.90, abs=0.01)


def test_scaling_to_ionic_strengths_and_minerals(seeded_store, run_main):
    recs, err = _json(run_main, "--solution", SEAWATER_6, "--model", "pitzer",
                      "--scale-to-ionic-strength", "0.5,1,2", "--minerals", store=seeded_store)
    assert [r["ionic_strength"] for r in recs] == pytest.approx([0.5, 1.0, 2.0], rel=1e-12)
    si = [r["saturation_index"]["gypsum"] for r in recs]
    # Seawater is undersaturated in gypsum (SI about -0.6 at S = 35; common practice, no source),
    # and concentrating it raises the index.
    assert si[0] < 0 and si[0] < si[1] < si[2]
    assert "screening estimates" in err  # the scaling caution goes with every saturation index


def test_one_salt_as_a_solution_matches_the_salt_path(seeded_store, run_main):
    # The same model and set by both routes, on IAPWS constants (--current-constant): the
    # solution path always uses the water's own constants.
    recs, _ = _json(run_main, "--solution", "NaCl=1.0", "--model", "pitzer",
                    "--sets", "pitzer-mayorga-1973", store=seeded_store)
    code, out, err = run_main("predict", "NaCl", "--model", "pitzer", "--m", "1.0", "--params",
                              "pitzer-mayorga-1973", "--current-constant", "--format", "json",
                              store=seeded_store)
    assert code == 0, err
    salt = json.loads(out)[0]
    assert recs[0]["ln_gamma_pm"]["NaCl"] == pytest.approx(salt["ln_gamma_pm"], rel=1e-10)
    assert recs[0]["osmotic"] == pytest.approx(salt["osmotic"], rel=1e-10)


def test_every_model_and_the_spread_table(seeded_store, run_main):
    code, out, err = run_main("predict", "--solution", "NaCl=0.5,KCl=0.5", "--model", "all",
                              store=seeded_store)
    assert code == 0, err
    head = next(line for line in out.splitlines() if line.startswith("quantity"))
    for mid in ("pitzer", "sit", "davies", "bromley", "meissner"):
        assert mid in head
    assert "gamma±(NaCl)" in out and "gamma±(KCl)" in out
    assert "Caution" in out


@pytest.mark.parametrize("args, needle", [
    (["--solution", "Na=0.1,HCO3=0.1", "--model", "pitzer"], "beta0[Na+/HCO3-]"),
    (["--solution", "Na=0.1,Cl=", "--model", "pitzer"], "inline solution:2"),
    (["--solution", "NaCl=0.1", "--model", "pitzer", "--sets", "no-such-set"], "no-such-set"),
    (["NaCl", "--model", "pitzer", "--minerals"], "--solution only"),
    (["--model", "pitzer"], "--solution"),
])
def test_user_mistakes_are_one_line_errors(seeded_store, run_main, args, needle):
    code, out, err = run_main("predict", *args, store=seeded_store)
    assert code == 2
    assert needle in err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1


def test_missing_default_runs_and_says_so(seeded_store, run_main):
    recs, err = _json(run_main, "--solution", "Na=0.1,HCO3=0.1", "--model", "pitzer",
                      "--missing", "default", store=seeded_store)
    assert "beta0[Na+/HCO3-]" in recs[0]["defaulted"]
    assert "guesses" in err


def test_closing_the_charge_balance(seeded_store, run_main):
    code, out, err = run_main("predict", "--solution", "Na=0.5,Cl=0.45", "--model", "pitzer",
                              "--close-with", "Cl-", store=seeded_store)
    assert code == 0, err
    assert "closed with" in out and "+5.26 %" in out  # (0.5 - 0.45) / 0.95, Standard Methods 1030 E form
    recs, _ = _json(run_main, "--solution", "Na=0.5,Cl=0.45", "--model", "pitzer", "--close-with", "Cl-",
                    store=seeded_store)
    assert recs[0]["molality"]["Cl-"] == pytest.approx(0.5, rel=1e-12)
