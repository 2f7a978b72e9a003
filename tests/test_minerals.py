"""Solubility products and saturation indices: the bundled table, its reader's errors, the
arithmetic against hand-worked cases, and two published facts about calcium sulfate.

SI = log10(IAP / Ksp), IAP = prod a_i^nu_i a_w^n (IUPAC Compendium of Chemical Terminology,
"solubility product"; from memory). Hand-worked numbers beside each check.
"""

from __future__ import annotations

import csv
import importlib.util
import math
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

from saltbench.chemistry.minerals import NO_SPECIATION, SCALING_CAUTION, log10_iap, minerals_in, saturation_index
from saltbench.curation.minerals import bundled_minerals, read_mineral_file
from saltbench.errors import InputFileError, UserError
from saltbench.water.debye_huckel import debye_huckel_constants
from saltbench.water.properties import MOLAR_MASS_WATER

REFDATA = Path(__file__).resolve().parent.parent / "refdata"
TOOL = REFDATA / "tools" / "transcribe_ksp.py"


@pytest.fixture(scope="module")
def table():
    return bundled_minerals()


# -- the bundled table ---------------------------------------------------------------------------------
def test_bundled_table_cites_the_handbook(table):
    handbook = table.tables[0]
    assert handbook.source == "crc-ksp-87"
    assert "CRC Handbook of Chemistry and Physics" in handbook.citation and "87th ed." in handbook.citation
    assert handbook.typed.startswith("transcribed from the CRC Handbook")
    assert handbook.temperature_k == pytest.approx(298.15)
    assert len(handbook.minerals) == 15
    # names as printed; mineral names only where the copy gives them
    assert table.find("gypsum").name == "calcium sulfate dihydrate"
    assert table.find("anhydrite").formula == "CaSO4"
    assert handbook.find("CaCO3").mineral == ""  # not called calcite: the table does not say which polymorph
    assert table.find("barium sulfate").label == "barium sulfate"
    with pytest.raises(UserError, match="no solubility product for 'mirabilite'"):
        table.find("mirabilite")


def test_minerals_the_handbook_lacks_are_typed_from_memory_and_named_apart(table):
    others = table.tables[1:]
    assert {t.source for t in others} == {"harvie-moller-weare-1984", "plummer-busenberg-1982"}
    assert all(t.typed.startswith("from memory of") for t in others)
    # log10 K from memory of Harvie, Moller and Weare (1984), mu°/RT: halite 1.570, sylvite 0.900;
    # Plummer and Busenberg (1982): calcite -8.480, aragonite -8.336
    for name, log_k in [("halite", 1.570), ("sylvite", 0.900), ("calcite", -8.480), ("aragonite", -8.336)]:
        assert table.find(name).log10_ksp == pytest.approx(log_k, abs=1e-4)
    # aragonite is the less stable polymorph at 25 °C: the more soluble one (common practice, no source)
    assert table.find("aragonite").log10_ksp > table.find("calcite").log10_ksp
    # CaCO3 is three rows now: a formula alone does not choose among them
    with pytest.raises(UserError, match="CaCO3 is more than one mineral here: calcium carbonate .crc-ksp-87.; "
                                        "calcite .*; aragonite"):
        table.find("CaCO3")
    assert table.find("NaCl").mineral == "halite"  # unique formulas still find their row


def test_a_name_in_two_tables_is_refused(tmp_path):
    from saltbench.curation.minerals import MineralCatalogue

    a, b = tmp_path / "a.csv", tmp_path / "b.csv"
    a.write_text(HEAD + "sodium chloride,halite,NaCl,Na+,1,Cl-,1,0,37.15,1.5700\n", encoding="utf-8")
    b.write_text(HEAD + "sodium chloride,,NaCl,Na+,1,Cl-,1,0,37.15,1.5700\n", encoding="utf-8")
    with pytest.raises(InputFileError, match=r"b\.csv:7: field 'name': sodium chloride is also in .*a\.csv:7"):
        MineralCatalogue((read_mineral_file(a), read_mineral_file(b)))


def test_bundled_values_are_the_printed_ones(table):
    # CRC Handbook 87th ed., Solubility Product Constants (as the electronic copy prints them): gypsum
    # 3.14e-5, anhydrite 4.93e-5, barium sulfate 1.08e-10
    assert 10 ** table.find("gypsum").log10_ksp == pytest.approx(3.14e-5, rel=1e-12)
    assert 10 ** table.find("anhydrite").log10_ksp == pytest.approx(4.93e-5, rel=1e-12)
    assert 10 ** table.find("BaSO4").log10_ksp == pytest.approx(1.08e-10, rel=1e-12)
    assert table.find("gypsum").water == 2 and table.find("anhydrite").water == 0


def test_bundled_file_is_the_scripts_output_unedited(tmp_path):
    # rebuild the copy's rows from the bundled file and render them again with the script: identical
    spec = importlib.util.spec_from_file_location("transcribe_ksp", TOOL)
    tool = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(tool)
    bundled = (REFDATA / "minerals" / "ksp-crc-87.csv").read_text(encoding="utf-8")
    rows = list(csv.DictReader(line for line in bundled.splitlines() if not line.startswith("#")))
    copy_rows = [{"compound": r["name"], "formula": r["formula"], "ksp_25C": r["ksp"]} for r in rows]
    assert tool.render(copy_rows) == bundled


# -- the arithmetic, by hand ---------------------------------------------------------------------------
def test_saturation_index_of_gypsum_by_hand(table):
    # Ca+2 = SO4-2 = 0.01 mol/kg, gamma = 0.5 each, a_w = 0.999:
    # log IAP = 2 log10(0.005) + 2 log10(0.999) = -4.602060 - 0.000869 = -4.602929
    # log Ksp = log10(3.14e-5) = -4.503070; SI = -0.099859
    gypsum = table.find("gypsum")
    res = saturation_index([gypsum], ["Ca+2", "SO4-2"], np.array([[0.01, 0.01]]),
                           np.log(np.array([[0.5, 0.5]])), np.array([0.999]), 298.15, model="hand")
    assert res.log10_iap[0, 0] == pytest.approx(-4.602929, abs=2e-6)
    assert res.si[0, 0] == pytest.approx(-0.099859, abs=2e-6)
    assert res.model == "hand" and res.cautions[0] == SCALING_CAUTION
    assert NO_SPECIATION in res.cautions  # a 2-2 sulfate counted free


def test_saturation_index_with_two_anions_per_formula(table):
    # fluorite-type CaF2: Ca 1e-3, F 2e-3 mol/kg, ideal: IAP = 1e-3 x (2e-3)^2 = 4e-9, log = -8.397940;
    # log Ksp = log10(3.45e-11) = -10.462181; SI = 2.064241. Several solutions at once.
    caf2 = table.find("CaF2")
    m = np.array([[1e-3, 2e-3], [1e-4, 2e-4]])
    res = saturation_index([caf2], ["Ca+2", "F-"], m, np.zeros_like(m), np.ones(2), [298.15, 298.15], model="ideal")
    assert res.si[:, 0] == pytest.approx([2.064241, 2.064241 - 3.0], abs=2e-6)
    assert res.cautions == (SCALING_CAUTION,)


def test_absent_ions_and_other_temperatures(table):
    gypsum = table.find("gypsum")
    with pytest.raises(UserError, match="gypsum: ion SO4-2 is not in the solution"):
        log10_iap([gypsum], ["Ca+2", "Cl-"], np.ones((1, 2)), np.zeros((1, 2)), np.ones(1))
    # a zero molality is an IAP of zero: SI = -inf, not nan
    iap = log10_iap([gypsum], ["Ca+2", "SO4-2", "Cl-"], np.array([[0.0, 0.01, 0.02]]), np.zeros((1, 3)), np.ones(1))
    assert np.isneginf(iap[0, 0])
    with pytest.raises(UserError, match="known at 25 °C only; the solution is at 60 °C"):
        saturation_index([gypsum], ["Ca+2", "SO4-2"], np.ones((1, 2)), np.zeros((1, 2)), np.ones(1), 333.15, model="x")
    assert [m.label for m in minerals_in(table.minerals, ["Ca+2", "SO4-2", "Na+"])] == ["anhydrite", "gypsum"]


# -- published facts -----------------------------------------------------------------------------------
def _davies_ln_gamma(z: np.ndarray, ionic_strength: float) -> np.ndarray:
    # C. W. Davies, Ion Association (Butterworths, 1962): log10 gamma = -A z^2 (sqrt I/(1 + sqrt I) - 0.3 I),
    # A from IAPWS water properties at 25 °C (saltbench.water)
    a = debye_huckel_constants(298.15).a_gamma_log10
    s = math.sqrt(ionic_strength)
    return -a * z**2 * (s / (1 + s) - 0.3 * ionic_strength) * math.log(10)


def _gypsum_solubility(table, ln_gamma) -> float:
    gypsum = table.find("gypsum")

    def si(m: float) -> float:
        lg = ln_gamma(np.array([2.0, -2.0]), 4 * m)
        a_w = math.exp(-MOLAR_MASS_WATER * 2 * m)  # osmotic coefficient taken as 1 (a 0.05 % effect here)
        res = saturation_index([gypsum], ["Ca+2", "SO4-2"], np.array([[m, m]]), lg[None, :], np.array([a_w]),
                               298.15, model="test")
        return float(res.si[0, 0])

    return brentq(si, 1e-5, 0.1, xtol=1e-12)


def test_gypsum_solubility_in_water(table):
    # Gypsum dissolves in water at 25 °C to about 0.0151 mol/kg: 0.205 g CaSO4 per 100 g of solution
    # (from memory of the CRC Handbook table "Aqueous Solubility of Inorganic Compounds at Various
    # Temperatures"): 2.05 / 136.14 / 0.998 = 0.0151 mol/kg.
    published = 2.05 / 136.14 / (1 - 0.00205)
    ideal = _gypsum_solubility(table, lambda z, i: np.zeros_like(z))
    davies = _gypsum_solubility(table, _davies_ln_gamma)
    # ideal: m = sqrt(Ksp) / a_w = 0.0056 mol/kg, a third of the truth: activity matters here
    assert ideal == pytest.approx(math.sqrt(3.14e-5), rel=1e-3)
    assert ideal < 0.4 * published
    # Davies, with free ions only, gets within 25 % and below: CaSO4 forms a neutral ion pair
    # (log K about 2.3; from memory of the IUPAC stability constants compilations) that the free-ion
    # count leaves out, and published log Ksp of gypsum differ by about 0.1 between compilations
    # (about 12 % in solubility). A value above the published solubility would mean the arithmetic
    # or the Ksp is wrong, since leaving the pair out can only lower it.
    assert 0.75 * published < davies < published


def test_gypsum_is_the_stable_phase_in_water_at_25_c(table):
    # Gypsum and anhydrite coexist at 25 °C where a_w = 0.78 (from memory of L. A. Hardie, Am. Mineral.
    # 52, 171-200 (1967)); in purer water gypsum is the stable phase. With one Ca and SO4 activity,
    # SI(gypsum) - SI(anhydrite) = 2 log a_w - (log Ksp_g - log Ksp_a), zero at
    # a_w = 10^((log Ksp_g - log Ksp_a) / 2), which the handbook's two values must put near 0.78.
    g, a = table.find("gypsum"), table.find("anhydrite")
    a_w = np.array([1.0, 0.9, 0.7])
    res = saturation_index([g, a], ["Ca+2", "SO4-2"], np.full((3, 2), 0.01), np.zeros((3, 2)), a_w,
                           298.15, model="ideal")
    assert res.si[0, 0] > res.si[0, 1] and res.si[1, 0] > res.si[1, 1]  # gypsum first to saturate
    assert res.si[2, 0] < res.si[2, 1]  # in a strong brine, anhydrite
    transition = 10 ** ((g.log10_ksp - a.log10_ksp) / 2)
    assert transition == pytest.approx(0.78, abs=0.05)


# -- the reader's errors -------------------------------------------------------------------------------
HEAD = """# saltbench minerals 1
# source: crc-ksp-87
# table: test table
# temperature: 25 C
# typed: transcribed from a test table
name,mineral,formula,cation,nu_cation,anion,nu_anion,water,ksp,log10_ksp
"""


@pytest.mark.parametrize(("row", "field", "words"), [
    ("calcium fluoride,,CaF2,Ca+2,1,F-,1,0,3.45e-11,-10.4622", "nu_anion", "not electroneutral"),
    ("calcium fluoride,,CaF2,Ca+2,1,F-,2,0,3.45e-11,-10.4600", "log10_ksp", "is not log10 of the Ksp"),
    ("calcium fluoride,,CaCl2,Ca+2,1,F-,2,0,3.45e-11,-10.4622", "formula", "CaCl2 is not 1 Ca+2 + 2 F-"),
    ("gypsum-ish,,CaSO4,Ca+2,1,SO4-2,1,2,3.14e-05,-4.5031", "formula", "does not end in (H2O)2"),
    ("thing,,QqF,Qq+,1,F-,1,0,1e-5,-5.0000", "cation", "unknown ion 'Qq'"),
    ("thing,,CaF2,F-,1,F-,2,0,1e-5,-5.0000", "cation", "F- is not a cation"),
    ("thing,,CaF2,Ca+2,x,F-,2,0,1e-5,-5.0000", "nu_cation", "not a whole number"),
    ("thing,,CaF2,Ca+2,1,F-,2,-1,1e-5,-5.0000", "water", "must not be negative"),
    ("thing,,CaF2,Ca+2,1,F-,2,0,-1e-5,-5.0000", "ksp", "is not a solubility product"),
])
def test_each_bad_row_is_named(tmp_path, row, field, words):
    path = tmp_path / "k.csv"
    path.write_text(HEAD + row + "\n", encoding="utf-8")
    with pytest.raises(InputFileError) as exc:
        read_mineral_file(path)
    assert (exc.value.line, exc.value.field) == (7, field)
    assert words in exc.value.problem


def test_duplicates_and_unknown_sources(tmp_path):
    path = tmp_path / "k.csv"
    row = "calcium fluoride,fluorite,CaF2,Ca+2,1,F-,2,0,3.45e-11,-10.4622\n"
    path.write_text(HEAD + row + row.replace("calcium fluoride,", "other,"), encoding="utf-8")
    with pytest.raises(InputFileError, match=r"k.csv:8: field 'name': fluorite appears twice \(also on line 7\)"):
        read_mineral_file(path)
    path.write_text(HEAD + row, encoding="utf-8")
    with pytest.raises(InputFileError, match=r"k.csv:2: field 'source': unknown citation key 'crc-ksp-87'"):
        read_mineral_file(path, sources={"other": "Other"})
    assert read_mineral_file(path).minerals[0].label == "fluorite"


# -- a described solution through a mixture model -----------------------------------------------------
def test_a_described_solution_feeds_a_model_and_the_saturation_index(table):
    # The record's Composition goes to a model as any other (here the Davies plugin, which takes
    # mixtures); its ln gamma per ion, in the record's ion order, give the same SI as the Davies
    # formula written out above (C. W. Davies, Ion Association, 1962).
    from saltbench.chemistry.seawater import reference_seawater
    from saltbench.models.contract import Conditions, ParameterKey, Request
    from saltbench.models.evaluate import compute
    from saltbench.models.quantities import WATER_ACTIVITY, ln_gamma
    from saltbench.plugins.davies import Davies

    record = reference_seawater(35.0, temperature_k=298.15)
    comp = record.composition([0.5, 1.0])
    quantities = tuple(ln_gamma(name) for name in comp.names) + (WATER_ACTIVITY,)
    params = {ParameterKey("b"): np.array([[0.3]])}  # Davies (1962)
    request = Request(comp, quantities, params, Conditions.single(debye_huckel_constants(298.15), comp.n), ())
    out = compute(Davies(), request).values
    lg = np.column_stack([out[ln_gamma(name)][0] for name in comp.names])
    a_w = out[WATER_ACTIVITY][0]
    minerals = minerals_in(table.minerals, comp.names)
    res = saturation_index(minerals, comp.names, comp.molality, lg, a_w, comp.temperature_k, model="davies")
    for row in range(comp.n):
        by_hand = _davies_ln_gamma(comp.charges, float(comp.ionic_strength[row]))
        hand = saturation_index(minerals, comp.names, comp.molality[row:row + 1], by_hand[None, :],
                                a_w[row:row + 1], 298.15, model="hand")
        assert res.si[row] == pytest.approx(hand.si[0], abs=1e-9)
    assert "gypsum" in res.by_label() and res.model == "davies"
