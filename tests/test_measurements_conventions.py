"""Single-ion activity coefficients under stated conventions."""

import math

import numpy as np
import pytest

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.measurements import (
    SINGLE_ION_CAVEAT,
    bates_guggenheim,
    extended_debye_huckel,
    ionic_strength,
    macinnes,
    model_single_ion,
    truesdell_jones,
)
from saltbench.models.contract import ParameterKey
from saltbench.plugins.davies import Davies
from saltbench.plugins.debye_huckel import DebyeHuckelLimiting
from saltbench.plugins.sit import SIT

P = parse_formula


# The limiting law, Davies and SIT reach single ions through their models' own single-ion forms.
def debye_huckel_limiting(comp):
    return model_single_ion(comp, DebyeHuckelLimiting(), "Debye-Hückel limiting law")


def davies(comp):
    return model_single_ion(comp, Davies(), "Davies")


def sit(comp, eps):
    return model_single_ion(comp, SIT(), "SIT", {ParameterKey("eps", k): v for k, v in eps.items()})
PHOSPHATE = [(P("KH2PO4"), 0.025), (P("Na2HPO4"), 0.025)]


def test_ionic_strength_of_the_phosphate_primary_standard():
    # 0.025 mol/kg KH2PO4 + 0.025 mol/kg Na2HPO4 has I = 0.1 mol/kg (from memory of Buck et al.,
    # Pure Appl. Chem. 74, 2169 (2002), table of primary standards).
    assert float(ionic_strength(PHOSPHATE)) == pytest.approx(0.1, rel=1e-12)


def test_bates_guggenheim_chloride_at_the_phosphate_standard():
    # lg gamma(Cl-) = -A sqrt(I) / (1 + 1.5 sqrt(I)), I < 0.1 mol/kg: IUPAC Gold Book entry
    # "Debye-Hückel equation" (doi:10.1351/goldbook.D01534) and Buck et al. (2002). With
    # A(25 °C) between 0.5092 and 0.5115 kg^1/2 mol^-1/2 (values in use, from memory of Buck et
    # al. 2002 and Bates, Determination of pH, 1973) gamma(Cl-) at I = 0.1 is 0.7775 +/- 0.0006.
    r = bates_guggenheim(PHOSPHATE)
    assert float(r.gamma("Cl-")) == pytest.approx(0.7775, abs=0.0006)
    assert r.caveat == SINGLE_ION_CAVEAT
    assert any("local codes" in c for c in r.cautions)


def test_bates_guggenheim_is_refused_above_0_1():
    with pytest.raises(UserError) as err:
        bates_guggenheim([(P("NaCl"), 0.15)])
    assert str(err.value) == ("the Bates-Guggenheim convention is defined only up to I = 0.1 "
                              "mol/kg; this solution has I = 0.15 mol/kg")


# Kielland, J. Am. Chem. Soc. 59, 1675 (1937): single-ion activity coefficients at 25 °C from the
# extended Debye-Hückel equation, transcribed from the reproduction of Kielland's table at
# hydrogeologistswithoutborders.org (Appendix IV). (ion, charge, size in Å): {I: gamma}
KIELLAND = [
    ("H+", 9.0, {0.001: 0.967, 0.01: 0.914, 0.1: 0.83}),
    # Kielland's size table puts Na+ in the 4.0-4.5 Å group; its row matches the upper end.
    ("Na+", 4.5, {0.001: 0.964, 0.01: 0.902, 0.1: 0.775}),
    ("K+", 3.0, {0.001: 0.964, 0.01: 0.899, 0.1: 0.755}),
    ("Mg+2", 8.0, {0.001: 0.872, 0.01: 0.69, 0.1: 0.45}),
    ("SO4-2", 4.5, {0.001: 0.867, 0.01: 0.665, 0.1: 0.37}),
    ("Al+3", 9.0, {0.001: 0.738, 0.01: 0.445, 0.1: 0.18}),
]
SALT_OF = {"H+": "HCl", "Na+": "NaCl", "K+": "KCl", "Mg+2": "MgCl2", "SO4-2": "Na2SO4",
           "Al+3": "AlCl3"}


@pytest.mark.parametrize("ion,size,table", KIELLAND, ids=[k[0] for k in KIELLAND])
def test_extended_debye_huckel_reproduces_kielland(ion, size, table):
    salt = P(SALT_OF[ion])
    for i, expected in table.items():
        m = float(salt.molality_at_ionic_strength(i))
        sizes = {salt.cation.name: size, salt.anion.name: size}
        r = extended_debye_huckel([(salt, m)], sizes)
        # Kielland prints 2-3 digits and used older A and B: half a unit in the last place,
        # plus 0.003.
        digits = len(f"{expected}".split(".")[1])
        assert float(r.gamma(ion)) == pytest.approx(expected, abs=0.5 * 10**-digits + 0.003)


def test_limiting_law_scales_with_charge_squared():
    # log gamma_i = -A z_i^2 sqrt(I) (Debye and Hückel, Phys. Z. 24, 185 (1923)).
    r = debye_huckel_limiting([(P("Na2SO4"), 0.0005)])
    assert float(r.log10_gamma["SO4-2"]) == pytest.approx(4 * float(r.log10_gamma["Na+"]))
    # A(25 °C) = 0.5100 kg^1/2 mol^-1/2 (decadic), from memory of Archer and Wang,
    # J. Phys. Chem. Ref. Data 19, 371 (1990); 0.3 % covers the permittivity formulations.
    assert float(r.log10_gamma["Na+"]) == pytest.approx(-0.5100 * math.sqrt(0.0015), rel=0.003)


def test_mean_of_single_ion_values_is_convention_free_in_the_limit():
    # For 1-1 salts the limiting-law mean equals the mean-ion limiting law; the caveat travels.
    r = debye_huckel_limiting([(P("NaCl"), 0.001)])
    mean = 0.5 * (r.log10_gamma["Na+"] + r.log10_gamma["Cl-"])
    assert float(mean) == pytest.approx(float(r.log10_gamma["Na+"]))
    assert "non-thermodynamic convention" in r.caveat


def test_davies_at_0_1():
    # Davies (1962): lg gamma = -A z^2 (sqrt(I)/(1+sqrt(I)) - 0.3 I); with A = 0.5100
    # (Archer and Wang 1990, from memory) at I = 0.1: -0.1072 for z = 1.
    r = davies([(P("NaCl"), 0.1)])
    assert float(r.log10_gamma["Na+"]) == pytest.approx(-0.1072, abs=0.0004)


def test_truesdell_jones_adds_the_linear_term():
    # Truesdell and Jones (1974): b_i I added to the extended Debye-Hückel value.
    comp = [(P("NaCl"), 0.5)]
    sizes = {"Na+": 4.0, "Cl-": 3.5}
    tj = truesdell_jones(comp, sizes, {"Na+": 0.075, "Cl-": 0.015})
    dh = extended_debye_huckel(comp, sizes)
    assert float(tj.log10_gamma["Na+"] - dh.log10_gamma["Na+"]) == pytest.approx(0.075 * 0.5)
    with pytest.raises(UserError, match="missing Truesdell-Jones b values"):
        truesdell_jones(comp, sizes, {"Na+": 0.075})


def test_sit_sums_over_counter_ions():
    # SIT: lg gamma_i = -z_i^2 D + sum_k eps(i,k) m_k, D = A sqrt(I)/(1 + 1.5 sqrt(I))
    # (Ciavatta, Ann. Chim. (Rome) 70, 551 (1980)); eps values here are test inputs only.
    comp = [(P("NaCl"), 1.0), (P("KCl"), 0.5)]
    eps = {("Na+", "Cl-"): 0.03, ("K+", "Cl-"): 0.00}
    r = sit(comp, eps)
    lim = debye_huckel_limiting(comp)
    a = -float(lim.log10_gamma["Na+"]) / math.sqrt(1.5)
    d = a * math.sqrt(1.5) / (1 + 1.5 * math.sqrt(1.5))
    assert float(r.log10_gamma["Na+"]) == pytest.approx(-d + 0.03 * 1.5)
    assert float(r.log10_gamma["Cl-"]) == pytest.approx(-d + 0.03 * 1.0 + 0.0 * 0.5)


def test_a_model_without_single_ion_values_is_refused():
    # (Pitzer gives single-ion values for mixtures since it took mixtures; Stokes-Robinson
    # gives only means)
    from saltbench.plugins.stokes_robinson import register_models
    model = [m for m in register_models(context=None) if m.id == "stokes-robinson"][0]
    with pytest.raises(UserError, match="no single-ion values"):
        model_single_ion([(P("NaCl"), 0.1), (P("KCl"), 0.1)], model, "Stokes-Robinson")


def test_macinnes_convention():
    # gamma(K+) = gamma(Cl-) = gamma±(KCl) at the same I (MacInnes, J. Am. Chem. Soc. 41, 1086
    # (1919)); gamma(Na+) = gamma±(NaCl)^2 / gamma(Cl-). gamma±(KCl, 0.1) = 0.770 and
    # gamma±(NaCl, 0.1) = 0.778: from memory of the CRC Handbook mean activity coefficient table.
    r = macinnes([(P("NaCl"), 0.1)], lambda i: np.full_like(i, 0.770),
                 mean_gammas={P("NaCl"): 0.778})
    assert float(r.gamma("K+")) == pytest.approx(0.770)
    assert float(r.gamma("Cl-")) == pytest.approx(0.770)
    assert float(r.gamma("Na+")) == pytest.approx(0.778**2 / 0.770)
    with pytest.raises(UserError, match="no single-ion value for SO4-2"):
        r.gamma("SO4-2")
