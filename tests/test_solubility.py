"""Solubility of a mineral in water and in a background solution (SI = 0), per model."""

import json
import math
from dataclasses import replace

import numpy as np
import pytest

from saltbench.api import Session, solubility, solution_lookup
from saltbench.chemistry.solution import Composition
from saltbench.comparison.solubility import saturation_molality


@pytest.fixture(scope="module")
def session():
    return Session(":memory:")


def _by_model(run):
    return {x.model_id: x for x in run.results}


def test_gypsum_in_water_with_pitzer_against_the_handbook(session):
    # The handbook's solubility of gypsum in water at 25 °C is about 0.0151 mol/kg (CRC Handbook,
    # "Aqueous solubility of inorganic compounds", 0.205 mass % as CaSO4; from memory). Pitzer with
    # the Harvie-Moller-Weare CaSO4 parameters (beta2 for the ion pair; typed from memory) and the
    # handbook's own Ksp (log10 -4.503) gives about 16 % more: the handbook's Ksp is higher than
    # the log K that Harvie, Moller and Weare (1984) fitted with these parameters (-4.58, from
    # memory), and log K of gypsum differs by about 0.1 between compilations. With their log K
    # the same model comes within 5 % of the handbook's solubility.
    run = solubility(session, "gypsum", ["pitzer"])
    result = _by_model(run)["pitzer"]
    assert "harvie-moller-weare-1984-binary" in result.resolved.sets  # CaSO4 from that set
    assert 1.05 < result.molality_at_saturation / 0.0151 < 1.25
    own_k = replace(run.mineral, log10_ksp=-4.581)
    background = Composition((own_k.ions[0][0],), np.zeros((1, 1)), np.array([298.15]))
    again = saturation_molality(session.registry.model("pitzer"), background, own_k,
                                solution_lookup(session, [], {}))
    assert again.molality_at_saturation == pytest.approx(0.0151, rel=0.05)


def test_salting_in_and_the_common_ion_effect(session):
    # Gypsum dissolves more in 1 mol/kg NaCl than in water (salting in: about three times at
    # 1 mol/kg; from memory of Marshall and Slusher, J. Phys. Chem. 70, 4015 (1966)) and less in
    # a CaCl2 solution (the common-ion effect; common practice, no source).
    water = _by_model(solubility(session, "gypsum", ["pitzer"]))["pitzer"].molality_at_saturation
    brine = _by_model(solubility(session, "gypsum", ["pitzer"], spec="NaCl=1.0"))["pitzer"]
    calcium = _by_model(solubility(session, "gypsum", ["pitzer"], spec="CaCl2=0.05"))["pitzer"]
    assert 2.2 < brine.molality_at_saturation / water < 3.8
    assert calcium.molality_at_saturation < water
    assert calcium.si_background == float("-inf")  # no sulfate in the background


def test_a_saturated_background_dissolves_nothing(session):
    run = solubility(session, "gypsum", ["davies"], spec="CaCl2=0.1,Na2SO4=0.1")
    x = _by_model(run)["davies"]
    assert x.molality_at_saturation == 0.0 and x.si_background > 0


def test_mineral_names_and_the_cli(seeded_store, run_main):
    code, out, err = run_main("solubility", "barite", "--model", "davies", "--format", "json",
                              store=seeded_store)
    assert code == 0, err
    rec = json.loads(out)[0]
    assert rec["formula"] == "BaSO4" and rec["molality_at_saturation"] > 0
    # gamma m = sqrt(Ksp) (IUPAC Gold Book, "solubility product"), Ksp of barium sulfate 1.08e-10
    # (the bundled CRC table), gamma by the Davies equation written out (Davies, Ion Association,
    # 1962, p. 41) with A = 0.5091 at 25 °C (from memory of Robinson and Stokes, 1959, app. 7.1)
    m = rec["molality_at_saturation"]
    i = 4 * m
    gamma = 10 ** (-0.5091 * 4 * (math.sqrt(i) / (1 + math.sqrt(i)) - 0.3 * i))
    assert m * gamma == pytest.approx(1.08e-10 ** 0.5, rel=2e-4)
    assert "screening estimates" in err
    code, out, err = run_main("solubility", "unobtainium", store=seeded_store)
    assert code == 2 and "no solubility product" in err and len(err.strip().splitlines()) == 1


@pytest.mark.parametrize(("mineral", "handbook", "tolerance"), [
    # Solubility at 25 °C (from memory of the CRC Handbook, "Aqueous Solubility of Inorganic
    # Compounds"): NaCl 26.45 mass % (6.15 mol/kg), KCl 26.2 mass % (4.77 mol/kg). The log K are
    # from memory of Harvie, Moller and Weare (1984), whose own NaCl and KCl parameters differ
    # slightly from Pitzer and Mayorga's used here: within 2 %.
    ("halite", 6.15, 0.02),
    ("sylvite", 4.77, 0.02),
])
def test_halite_and_sylvite_in_water_with_pitzer(session, mineral, handbook, tolerance):
    result = _by_model(solubility(session, mineral, ["pitzer"]))["pitzer"]
    assert result.molality_at_saturation == pytest.approx(handbook, rel=tolerance)


def test_halite_is_salted_out_by_a_chloride_background(session):
    # the common-ion effect (common practice, no source): MgCl2 lowers NaCl's solubility
    water = _by_model(solubility(session, "halite", ["pitzer"]))["pitzer"].molality_at_saturation
    brine = _by_model(solubility(session, "halite", ["pitzer"], spec="MgCl2=1.0"))["pitzer"]
    assert brine.molality_at_saturation < water - 1.0
