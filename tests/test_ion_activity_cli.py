"""``saltbench ion-activity``: single-ion values under each convention, always with the caveat."""

from __future__ import annotations

import json
import math

import pytest

CONVENTIONS = ["macinnes", "bates-guggenheim", "debye-huckel", "extended-debye-huckel", "davies",
               "truesdell-jones", "sit"]


def _json(run_main, store, *args):
    code, out, err = run_main("ion-activity", *args, "--format", "json", store=store)
    assert code == 0, err
    return json.loads(out)


def _ion(doc, name):
    return next(i for i in doc["ions"] if i["ion"] == name)


@pytest.mark.parametrize("convention", CONVENTIONS)
def test_every_output_states_the_caveat(run_main, seeded_store, convention) -> None:
    args = ["--salt", "KCl=0.05", "--convention", convention]
    if convention == "truesdell-jones":
        args += ["--missing", "zero"]
    doc = _json(run_main, seeded_store, *args)
    assert "non-thermodynamic convention" in doc["caveat"] and "measurable" in doc["caveat"]
    assert any("local codes" in c for c in doc["cautions"])
    code, out, _ = run_main("ion-activity", *args, store=seeded_store)
    assert code == 0
    assert "Caveat: Single-ion activity coefficients depend on a non-thermodynamic convention" in out
    assert "Caution:" in out
    for ion in doc["ions"]:
        if ion["molality"] is not None:
            assert ion["activity"] == pytest.approx(ion["molality"] * ion["gamma"], rel=1e-12)


def test_bates_guggenheim_chloride_at_the_phosphate_primary_standard(run_main, seeded_store) -> None:
    # 0.025 mol/kg KH2PO4 + 0.025 mol/kg Na2HPO4, I = 0.1 mol/kg: with A(25 °C) between 0.5092 and
    # 0.5115 (values in use), lg gamma(Cl-) = -A sqrt(I)/(1 + 1.5 sqrt(I)) gives 0.7775 +/- 0.0006
    # (from memory of Buck et al., Pure Appl. Chem. 74, 2169 (2002), eq. 14 and the primary
    # standard table; Bates and Guggenheim, Pure Appl. Chem. 1, 163 (1960)).
    doc = _json(run_main, seeded_store, "--salt", "KH2PO4=0.025", "--salt", "Na2HPO4=0.025",
                "--convention", "bates-guggenheim")
    assert doc["ionic_strength"] == pytest.approx(0.1, rel=1e-12)
    assert _ion(doc, "Cl-")["gamma"] == pytest.approx(0.7775, abs=0.0006)
    assert any("pH" in c and "local codes" in c for c in doc["cautions"])


def test_bates_guggenheim_refuses_ionic_strength_above_0_1(run_main, seeded_store) -> None:
    # The convention is stated for I <= 0.1 mol/kg (from memory of Buck et al. 2002).
    code, out, err = run_main("ion-activity", "--salt", "NaCl=0.15", "--convention",
                              "bates-guggenheim", store=seeded_store)
    assert (code, out) == (2, "")
    assert err.strip() == ("Error: the Bates-Guggenheim convention is defined only up to I = 0.1 "
                           "mol/kg; this solution has I = 0.15 mol/kg")


def test_macinnes_uses_gamma_kcl_and_derives_sodium(run_main, seeded_store) -> None:
    # gamma±(KCl, 0.1) = 0.768 and gamma±(NaCl, 0.1) = 0.779 at 25 °C: from memory of the CRC
    # Handbook mean activity coefficient table. MacInnes (J. Am. Chem. Soc. 41, 1086 (1919)):
    # gamma(K+) = gamma(Cl-) = gamma±(KCl); gamma(Na+) = gamma±(NaCl)^2 / gamma(Cl-).
    doc = _json(run_main, seeded_store, "--salt", "KCl=0.05", "--salt", "NaCl=0.05",
                "--convention", "macinnes")
    assert doc["ionic_strength"] == pytest.approx(0.1)
    k, cl, na = (_ion(doc, n)["gamma"] for n in ("K+", "Cl-", "Na+"))
    assert k == cl == pytest.approx(0.768, abs=0.004)
    assert na == pytest.approx(0.779**2 / 0.768, abs=0.006)
    assert any("pitzer-mayorga-1973" in s for s in doc["parameters_from"])
    code, _, err = run_main("ion-activity", "--salt", "Na2SO4=0.01", "--convention", "macinnes",
                            store=seeded_store)
    assert code == 2 and "salts of K+ or Cl-" in err


def test_extended_debye_huckel_with_kielland_sizes(run_main, seeded_store) -> None:
    # Kielland, J. Am. Chem. Soc. 59, 1675 (1937), table at 25 °C, a = 3 Å row (K+, Cl-):
    # gamma = 0.755 at I = 0.1, transcribed from the reproduction in Freeze and Cherry (1979),
    # appendix IV.
    doc = _json(run_main, seeded_store, "--salt", "KCl=0.1", "--convention", "extended-debye-huckel")
    for n in ("K+", "Cl-"):
        assert _ion(doc, n)["gamma"] == pytest.approx(0.755, abs=0.003)
    assert any("kielland-1937" in s for s in doc["parameters_from"])


def test_davies_and_limiting_law_at_0_01(run_main, seeded_store) -> None:
    # A(25 °C) = 0.5100 kg^1/2 mol^-1/2 (decadic), from memory of Archer and Wang, J. Phys. Chem.
    # Ref. Data 19, 371 (1990); Davies (Ion Association, 1962): b = 0.3.
    a = 0.5100
    s = math.sqrt(0.01)
    doc = _json(run_main, seeded_store, "--salt", "NaCl=0.01", "--convention", "davies")
    assert _ion(doc, "Na+")["log10_gamma"] == pytest.approx(-a * (s / (1 + s) - 0.3 * 0.01), abs=2e-4)
    doc = _json(run_main, seeded_store, "--salt", "CaCl2=0.01", "--convention", "debye-huckel")
    i = 0.03
    assert doc["ionic_strength"] == pytest.approx(i)
    assert _ion(doc, "Ca+2")["log10_gamma"] == pytest.approx(-a * 4 * math.sqrt(i), abs=5e-4)


def test_sit_uses_stored_epsilon(run_main, seeded_store) -> None:
    # eps(Na+, Cl-) = 0.03 kg/mol: from memory of Grenthe et al. (1992), appendix B; D with
    # A = 0.5100 (from memory of Archer and Wang 1990) and 1.5 in the denominator (SIT convention).
    doc = _json(run_main, seeded_store, "--salt", "NaCl=0.5", "--convention", "sit")
    s = math.sqrt(0.5)
    d = 0.5100 * s / (1 + 1.5 * s)
    assert _ion(doc, "Na+")["log10_gamma"] == pytest.approx(-d + 0.03 * 0.5, abs=5e-4)
    assert any("sit-grenthe-1992" in s and "verify" in s for s in doc["parameters_from"])


def test_sit_refuses_pairs_without_epsilon_unless_told(run_main, seeded_store) -> None:
    # the stored set (from memory of Grenthe et al. (1992), appendix B) has eps for Na+/Cl-,
    # K+/Cl- and Na+/NO3- but not K+/NO3-: refused in one line, or taken as zero and said so
    code, _, err = run_main("ion-activity", "--salt", "NaCl=0.5", "--salt", "KNO3=0.1",
                            "--convention", "sit", store=seeded_store)
    assert code == 2 and "SIT needs epsilon for the ion pairs K+/NO3- (kg/mol)" in err
    doc = _json(run_main, seeded_store, "--salt", "NaCl=0.5", "--salt", "KNO3=0.1",
                "--convention", "sit", "--missing", "zero")
    assert "eps taken as 0 for K+/NO3-" in doc["notes"]


def test_truesdell_jones_needs_its_b_values(run_main, seeded_store) -> None:
    code, _, err = run_main("ion-activity", "--salt", "NaCl=0.1", "--convention", "truesdell-jones",
                            store=seeded_store)
    assert code == 2 and "Truesdell-Jones needs b_i (kg/mol) for Na+, Cl-" in err
    # Truesdell and Jones (1974): lg gamma_i = extended DH term + b_i I; so b_i = 0.1 kg/mol adds
    # exactly 0.1 * I to lg gamma_i relative to b_i = 0 (the form itself; common practice, no source).
    base = _json(run_main, seeded_store, "--salt", "NaCl=0.1", "--convention", "truesdell-jones",
                 "--missing", "zero")
    more = _json(run_main, seeded_store, "--salt", "NaCl=0.1", "--convention", "truesdell-jones",
                 "--b-ion", "Na+=0.1", "--b-ion", "Cl-=0.0")
    assert _ion(more, "Na+")["log10_gamma"] - _ion(base, "Na+")["log10_gamma"] == pytest.approx(0.01)
    assert any("taken as 0" in n for n in base["notes"])


def test_bad_salt_arguments_are_user_errors(run_main, seeded_store) -> None:
    for arg, msg in [("NaCl", "expected SALT=MOLALITY"), ("NaCl=-1", "must be positive"),
                     ("Xx9=0.1", "cannot read electrolyte formula")]:
        code, out, err = run_main("ion-activity", "--salt", arg, "--convention", "davies",
                                  store=seeded_store)
        assert (code, out) == (2, "") and msg in err, err
