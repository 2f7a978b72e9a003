"""Charge balance of a described solution, as Standard Methods 1030 E reports and judges it
(from memory of Standard Methods for the Examination of Water and Wastewater, 1030 E):
percent difference = 100 (sum cations - sum anions) / (sum cations + sum anions) in equivalents;
acceptable: +/-0.2 meq/L for anion sums up to 3 meq/L, +/-2 % up to 10, +/-5 % up to 800.
Each expected number is worked by hand beside it.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from saltbench.chemistry.charge_balance import charge_balance
from saltbench.chemistry.description import SolutionRecord
from saltbench.chemistry.species import parse_species
from saltbench.errors import UserError


def _record(items: dict[str, float], unit: str = "mmol/kg", density: float | None = None) -> SolutionRecord:
    return SolutionRecord.resolve("hand case", [parse_species(s) for s in items], list(items.values()),
                                  unit, density_kg_per_l=density)


def test_percent_difference_of_a_hand_worked_analysis():
    # cations: Ca 2 x 2 + Mg 1 x 2 + Na 3 = 9 meq; anions: Cl 3 + SO4 1 x 2 + HCO3 3.5 = 8.5 meq;
    # 100 (9 - 8.5) / (9 + 8.5) = 2.857 %; the anion sum 8.5 meq lies in the 3-10 tier (2 %): refused
    r = _record({"Ca+2": 2.0, "Mg+2": 1.0, "Na+": 3.0, "Cl-": 3.0, "SO4-2": 1.0, "HCO3-": 3.5})
    cb = r.charge_balance
    assert cb.cations_eq[0] == pytest.approx(0.009, rel=1e-12)
    assert cb.anions_eq[0] == pytest.approx(0.0085, rel=1e-12)
    assert cb.percent[0] == pytest.approx(100 * 0.5 / 17.5, rel=1e-12)
    assert not cb.acceptable[0]
    assert len(r.cautions) == 1 and "charge imbalance +2.86 %" in r.cautions[0]
    assert "1030 E" in r.cautions[0]


def test_the_acceptance_tiers():
    # anion sum 2 meq, difference 0.1 meq: 2.4 % but within the 0.2 meq of the lowest tier: accepted
    low = charge_balance(np.array([[2.1e-3, 2.0e-3]]), np.array([1, -1]))
    assert low.percent[0] == pytest.approx(100 * 0.1 / 4.1, rel=1e-12)
    assert low.acceptable[0]
    # anion sum 2 meq, difference 0.3 meq: beyond 0.2 meq
    assert not charge_balance(np.array([[2.3e-3, 2.0e-3]]), np.array([1, -1])).acceptable[0]
    # anion sum 100 meq, 4 % (cations 108.33 meq): within 5 %; 6 % is not
    ok = charge_balance(np.array([[0.1083333, 0.1]]), np.array([1, -1]))
    assert ok.percent[0] == pytest.approx(4.0, abs=1e-4) and ok.acceptable[0]
    assert not charge_balance(np.array([[0.1128, 0.1]]), np.array([1, -1])).acceptable[0]


def test_a_neutral_salt_is_balanced_on_every_basis():
    for unit, density in (("mol/kg", None), ("mg/L", 1.01), ("g/kg", None)):
        r = _record({"NaCl": 3.0, "MgSO4": 1.0, "CaCl2": 0.5}, unit, density)
        assert abs(r.charge_balance.percent[0]) < 1e-12
        assert r.cautions == ()


def test_closing_the_balance_with_a_named_ion_only_when_asked():
    # Na+ 230 mg/L (10.00435 mmol/L) and Cl- 340 mg/L (9.59097 mmol/L) at 1.000 kg/L: cation excess
    # 0.41338 mmol/L; closing with Cl- adds 0.41338 mmol/L x 35.45 = 14.654 mg/L of chloride
    r = _record({"Na+": 230.0, "Cl-": 340.0}, "mg/L", 1.000)
    assert r.adjustment is None and r.charge_balance.percent[0] > 2.0
    closed = r.closed_with("Cl-")
    assert r.adjustment is None  # the record itself is unchanged
    expected_added = (230.0 / 22.990 - 340.0 / 35.45) * 35.45
    assert closed.adjustment.ion == "Cl-"
    assert closed.adjustment.amount == pytest.approx(expected_added, rel=1e-12)
    assert expected_added == pytest.approx(14.654, abs=1e-3)
    assert closed.adjustment.unit == "mg/L"
    assert closed.adjustment.percent_before == pytest.approx(r.charge_balance.percent[0])
    assert abs(closed.charge_balance.percent[0]) < 1e-12
    assert closed.amounts[0] == 230.0  # sodium stays as analysed
    assert closed.molality[1] - r.molality[1] == pytest.approx(closed.adjustment.molality, rel=1e-12)
    assert closed.cautions == ()
    # a new ion is added as a species of its own
    with_no3 = r.closed_with("NO3-")
    assert [s.name for s in with_no3.species] == ["Na+", "Cl-", "NO3-"]
    assert abs(with_no3.charge_balance.percent[0]) < 1e-12


def test_closing_with_an_ion_of_the_wrong_sign_is_refused():
    r = _record({"Na+": 230.0, "Cl-": 340.0}, "mg/L", 1.000)
    with pytest.raises(UserError, match="Na\\+ would need a negative amount: the solution has more cation"):
        r.closed_with("Na+")
    with pytest.raises(UserError, match="needs an ion, not the salt NaCl"):
        r.closed_with("NaCl")
    with pytest.raises(UserError, match="unknown"):
        r.closed_with("Qq+")


_ions = ("Na+", "K+", "Ca+2", "Mg+2", "Cl-", "SO4-2", "HCO3-")


@given(st.lists(st.floats(min_value=0.01, max_value=50.0), min_size=7, max_size=7),
       st.sampled_from(["mmol/kg", "mg/L", "g/kg", "mmol/L"]))
def test_closing_zeroes_the_balance_on_any_basis(values, unit):
    # whatever the analysis and its basis, the named ion of the deficient sign closes the balance to
    # rounding and leaves every other amount as analysed (electroneutrality; common practice, no source)
    r = _record(dict(zip(_ions, values)), unit, 1.02 if unit.endswith("/L") else None)
    ion = "Cl-" if r.charge_balance.difference_eq[0] > 0 else "Na+"
    closed = r.closed_with(ion)
    assert abs(closed.charge_balance.percent[0]) < 1e-9
    kept = [k for k, name in enumerate(_ions) if name != ion]
    assert closed.amounts[kept].tolist() == r.amounts[kept].tolist()
    assert closed.adjustment.amount > 0
