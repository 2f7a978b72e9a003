"""Validity ranges: where a model stops agreeing with data within tolerance.

Invented data: the extended Debye-Hückel test model (a = 4 Å, b = 0.05 kg/mol), exact up to
m0 = 1 mol/kg, then with an added deviation d ln(gamma±) = c (m - m0) and the phi deviation that
Gibbs-Duhem gives for it, c (m^2 - m0^2) / (2 m) (Robinson and Stokes 1959, ch. 2; from memory).
"""

from __future__ import annotations

import numpy as np
import pytest
from fitting_models import ExtendedDH, RaisingModel, synthetic

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.fitting import FitData, validity_range
from saltbench.fitting.flags import FlagKind

NACL = parse_formula("NaCl")
CACL2 = parse_formula("CaCl2")
GRID = np.round(np.arange(0.1, 3.01, 0.1), 2)  # invented molality grid, mol/kg
PARAMS = {"a": 4.0, "b": 0.05}


def deviating(e, m0=1.0, c=0.2):
    d = synthetic((4.0, 0.05), e, GRID)
    m = d.molality
    beyond = m > m0
    dev = np.where(d.is_osmotic, c * (m**2 - m0**2) / (2 * m), c * (m - m0))
    return FitData(m, d.value + np.where(beyond, dev, 0.0), d.uncertainty, d.kind, d.dataset)


@pytest.mark.parametrize("params", [PARAMS, None], ids=["fixed", "refit"])
def test_model_exact_up_to_a_molality_is_valid_up_to_there(params):
    v = validity_range(ExtendedDH(), NACL, deviating(NACL), params=params)
    assert v.mode == ("fixed" if params else "refit")
    assert v.limited_by == "tolerance"
    assert v.max_molality == pytest.approx(1.0)
    assert v.first_failing_molality == pytest.approx(1.1)
    # I = m for a 1-1 salt (I = 1/2 sum m_i z_i^2; IUPAC Green Book, 3rd ed., 2007; from memory)
    assert v.max_ionic_strength == pytest.approx(1.0)
    assert v.tolerance == {"ln_gamma": 0.01, "osmotic": 0.01}
    assert not any(f.kind is FlagKind.DATA_END for f in v.flags)


def test_ionic_strength_of_the_range_follows_the_charge_type():
    # I = 3 m for a 2-1 salt such as CaCl2 (same definition; from memory of the Green Book).
    v = validity_range(ExtendedDH(), CACL2, deviating(CACL2), params=PARAMS)
    assert v.max_molality == pytest.approx(1.0)
    assert v.max_ionic_strength == pytest.approx(3.0)


@pytest.mark.parametrize("params", [PARAMS, None], ids=["fixed", "refit"])
def test_data_end_before_the_model_fails(params):
    data = synthetic((4.0, 0.05), NACL, GRID, seed=31, u_ln=0.001, u_phi=0.001)
    v = validity_range(ExtendedDH(), NACL, data, params=params)
    assert v.limited_by == "data"
    assert v.max_molality == pytest.approx(3.0) == v.highest_data_molality
    assert v.first_failing_molality is None
    [end] = [f for f in v.flags if f.kind is FlagKind.DATA_END]
    assert end["top"] == pytest.approx(3.0)
    assert "data end before model fails (highest data molality 3 mol/kg)" in v.to_dict()["flags"]


def test_a_set_wrong_from_the_start_is_nowhere_valid():
    # b = 0.5 instead of 0.05 puts ln(gamma) off by 0.045 already at 0.1 mol/kg.
    v = validity_range(ExtendedDH(), NACL, deviating(NACL), params={"a": 4.0, "b": 0.5})
    assert v.limited_by == "none-valid"
    assert v.max_molality is None and v.max_ionic_strength is None
    assert v.first_failing_molality == pytest.approx(0.1)


def test_tolerance_decides():
    data = deviating(NACL, c=0.03)  # 0.003 off at 1.1 mol/kg, 0.06 at 3 mol/kg
    loose = validity_range(ExtendedDH(), NACL, data, params=PARAMS, tolerance_ln_gamma=0.1,
                           tolerance_phi=0.1)
    tight = validity_range(ExtendedDH(), NACL, data, params=PARAMS, tolerance_ln_gamma=0.001,
                           tolerance_phi=0.001)
    assert loose.limited_by == "data"
    assert tight.limited_by == "tolerance" and tight.max_molality == pytest.approx(1.0)


def test_osmotic_tolerance_applies_to_osmotic_points():
    data = deviating(NACL).select("osmotic")
    v = validity_range(ExtendedDH(), NACL, data, params=PARAMS, tolerance_ln_gamma=1e-9,
                       tolerance_phi=1.0)
    assert v.limited_by == "data"


def test_model_error_gives_no_range_and_a_flag():
    v = validity_range(RaisingModel(), NACL, deviating(NACL), params=PARAMS)
    assert v.limited_by == "none-valid"
    assert v.flags and v.flags[0].kind is FlagKind.MODEL_ERROR
    assert v.to_dict()["max_molality"] is None
