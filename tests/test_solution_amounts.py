"""Amount bases of a described solution and their exact molalities, against hand-worked cases
and round trips.

The relations are those of Robinson and Stokes, Electrolyte Solutions, 2nd ed. (1959), ch. 2
(from memory of that chapter), written for many solutes: per litre m_i = c_i / (rho - sum c_j M_j),
per kg of solution m_i = w_i / (M_i (1 - sum w_j)). Each expected number is worked by hand in the
comment beside it, not by our code. Molar masses are IUPAC standard atomic weights (from memory of
the IUPAC 2021 abridged table, as saltbench.chemistry.ions holds them).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from saltbench.chemistry import amounts as amt
from saltbench.chemistry.description import SolutionRecord
from saltbench.chemistry.species import parse_species
from saltbench.curation.units import molality_from_molarity
from saltbench.errors import UserError


def _record(items: dict[str, float], unit: str, density: float | None = None) -> SolutionRecord:
    return SolutionRecord.resolve("hand case", [parse_species(s) for s in items], list(items.values()),
                                  unit, density_kg_per_l=density)


def _m(record: SolutionRecord, ion: str) -> float:
    return float(record.molality[[i.name for i in record.ions].index(ion)])


# -- hand-worked cases ---------------------------------------------------------------------------------
def test_salt_per_litre_solves_for_the_water_mass():
    # NaCl, M = 22.990 + 35.45 = 58.44 g/mol; 58.44 g/L is 1 mol/L; density 1.0369 kg/L:
    # water = 1.0369 - 1 x 0.05844 = 0.97846 kg per L, m = 1 / 0.97846 = 1.0220142 mol/kg
    r = _record({"NaCl": 58.44}, "g/L", 1.0369)
    assert _m(r, "Na+") == pytest.approx(1.0220142, abs=2e-7)
    assert _m(r, "Cl-") == pytest.approx(1.0220142, abs=2e-7)
    # the same solution as its ions, 22.990 g/L Na+ and 35.45 g/L Cl-, is the same solution
    ions = _record({"Na+": 22.990, "Cl-": 35.45}, "g/L", 1.0369)
    assert ions.molality == pytest.approx(r.molality, rel=1e-12)
    # and it is Robinson and Stokes' one-salt relation m = c / (rho - c M2) that saltbench already uses
    assert _m(r, "Na+") == pytest.approx(float(molality_from_molarity(1.0, 1.0369, 0.05844)), rel=1e-12)


def test_millimoles_per_litre_of_a_hard_water():
    # Ca+2 2 mmol/L and HCO3- 4 mmol/L at 1.000 kg/L: solutes 0.002 x 0.040078 + 0.004 x 0.061016
    # = 0.000080156 + 0.000244064 = 0.00032422 kg/L; water 0.99967578 kg/L;
    # m(Ca) = 0.002 / 0.99967578 = 0.00200064866, m(HCO3) = 0.00400129732
    r = _record({"Ca+2": 2.0, "HCO3-": 4.0}, "mmol/L", 1.000)
    assert _m(r, "Ca+2") == pytest.approx(0.00200064866, rel=1e-8)
    assert _m(r, "HCO3-") == pytest.approx(0.00400129732, rel=1e-8)


def test_mass_per_kg_of_solution():
    # 35 g NaCl per kg of solution: m = 0.035 / (0.05844 x (1 - 0.035)) = 35 / 56.3946 = 0.6206268
    r = _record({"NaCl": 35.0}, "g/kg")
    assert _m(r, "Na+") == pytest.approx(0.6206268, abs=2e-7)
    # mg/kg is the same basis a thousand times finer
    assert _record({"NaCl": 35000.0}, "mg/kg").molality == pytest.approx(r.molality, rel=1e-12)


def test_milligrams_per_litre_of_ions():
    # Na+ 230 mg/L, Cl- 355 mg/L at 0.9990 kg/L: solutes 0.000585 kg/L, water 0.998415 kg/L;
    # m(Na) = 0.230/22.990/0.998415 = 0.01000431... : 0.230/22.990 = 0.0100043497 mol/L,
    # / 0.998415 = 0.0100202318 mol/kg
    r = _record({"Na+": 230.0, "Cl-": 355.0}, "mg/L", 0.9990)
    assert _m(r, "Na+") == pytest.approx(0.0100202318, rel=1e-8)


def test_molality_passes_through_and_salts_add_to_their_ions():
    # 0.5 mol/kg NaCl + 0.02 mol/kg Na2SO4: Na+ 0.5 + 2 x 0.02 = 0.54, Cl- 0.5, SO4-2 0.02;
    # I = 1/2 (0.54 + 0.5 + 4 x 0.02) = 0.56 (IUPAC Green Book, 3rd ed., 2007, 2.13)
    r = _record({"NaCl": 0.5, "Na2SO4": 0.02}, "mol/kg")
    assert _m(r, "Na+") == pytest.approx(0.54, rel=1e-14)
    assert _m(r, "SO4-2") == pytest.approx(0.02, rel=1e-14)
    assert r.ionic_strength == pytest.approx(0.56, rel=1e-14)
    assert [s.name for s in r.salts] == ["NaCl", "Na2SO4"]
    comp = r.composition([1.0, 2.0])
    assert comp.molality[1] == pytest.approx(2 * comp.molality[0], rel=1e-15)
    assert comp.ionic_strength == pytest.approx([0.56, 1.12], rel=1e-14)
    # scaled to chosen ionic strengths: I is linear in the factor (I = 1/2 sum m z^2)
    at = r.composition(r.factors_for_ionic_strength([0.1, 1.0, 3.0]))
    assert at.ionic_strength == pytest.approx([0.1, 1.0, 3.0], rel=1e-14)
    assert at.molality[2] / at.molality[0] == pytest.approx(np.full(3, 30.0), rel=1e-14)


# -- round trips ---------------------------------------------------------------------------------------
_amount = st.floats(min_value=0.0, max_value=2.0, allow_nan=False)


@given(st.lists(_amount, min_size=3, max_size=3), st.sampled_from(sorted(amt.BASES)),
       st.floats(min_value=0.95, max_value=1.4))
def test_round_trip_through_every_basis(values, unit, density):
    # molality -> amounts on a basis -> molality is the identity (exact inverse, to rounding)
    mm = np.array([0.05844, 0.120361, 0.061016])  # NaCl, MgSO4, HCO3- in kg/mol
    m = np.array(values)
    b = amt.basis(unit)
    back = amt.molality(amt.amounts_from_molality(m, b, mm, density), b, mm, density)[0]
    assert back == pytest.approx(m, rel=1e-12, abs=1e-15)


def test_record_amounts_come_back_from_its_molalities():
    r = _record({"Na+": 10500.0, "Cl-": 16800.0, "Mg+2": 1300.0}, "mg/L", 1.0245)
    mm = np.array([s.molar_mass for s in r.species])
    again = amt.amounts_from_molality(r.species_molality, amt.basis("mg/L"), mm, 1.0245)[0]
    assert again == pytest.approx([10500.0, 16800.0, 1300.0], rel=1e-12)


# -- refusals ------------------------------------------------------------------------------------------
def test_per_litre_needs_a_density_and_water_must_remain():
    with pytest.raises(UserError, match="need the solution's density"):
        _record({"NaCl": 1.0}, "g/L")
    with pytest.raises(UserError, match="no water is left"):
        _record({"NaCl": 1200.0}, "g/L", 1.2)
    with pytest.raises(UserError, match="no water is left"):
        _record({"NaCl": 1000.0}, "g/kg")
    with pytest.raises(UserError, match="unknown unit 'ppm'"):
        amt.basis("ppm")
