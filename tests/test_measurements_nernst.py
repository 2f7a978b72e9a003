"""Nernst slope and electrode calibration."""

import math

import numpy as np
import pytest
from scipy import stats

from saltbench.errors import UserError
from saltbench.measurements import (
    activity_from_emf,
    calibrate_electrode,
    emf_from_activity,
    nernst_slope,
    thermal_voltage,
)


def test_nernst_slope_at_25c_is_59_16_mv_per_decade():
    # 59.16 mV/decade at 25 °C: R T ln10 / F with CODATA 2018 R and F (common practice, no source
    # beyond CODATA; the value is quoted in every electrochemistry handbook).
    assert nernst_slope(298.15) * 1e3 == pytest.approx(59.16, abs=0.005)


def test_thermal_voltage_from_codata_constants():
    # CODATA 2018 exact values R = 8.314462618 J/(mol K), F = 96485.33212 C/mol
    # (from memory of the CODATA 2018 adjustment; both are exact since the 2019 SI).
    assert thermal_voltage(298.15) == pytest.approx(8.314462618 * 298.15 / 96485.33212, rel=1e-9)


def test_slope_scales_with_charge_and_sign():
    # Divalent cation: half the slope; anion: negative slope (Nernst equation, common practice,
    # no source).
    assert nernst_slope(298.15, 2) == pytest.approx(nernst_slope(298.15) / 2)
    assert nernst_slope(298.15, -1) == pytest.approx(-nernst_slope(298.15))


def test_one_decade_per_nernst_slope():
    # A tenfold activity change moves a monovalent-ion electrode by one Nernst slope
    # (common practice, no source).
    e1 = emf_from_activity(0.001, 0.2, 298.15)
    e2 = emf_from_activity(0.01, 0.2, 298.15)
    assert float(e2 - e1) == pytest.approx(0.05916, abs=5e-6)
    assert float(activity_from_emf(e2, 0.2)) == pytest.approx(0.01, rel=1e-12)


def test_calibration_matches_scipy_linregress():
    # Reference: scipy.stats.linregress, a general-purpose least-squares implementation.
    rng = np.random.default_rng(7)
    a = np.array([1e-4, 3e-4, 1e-3, 3e-3, 1e-2, 3e-2, 1e-1])
    e = 0.31 + 0.0575 * np.log10(a) + rng.normal(0, 4e-4, a.size)
    cal = calibrate_electrode(a, e)
    ref = stats.linregress(np.log10(a), e)
    assert cal.slope == pytest.approx(ref.slope, rel=1e-10)
    assert cal.intercept == pytest.approx(ref.intercept, rel=1e-10)
    assert cal.u_slope == pytest.approx(ref.stderr, rel=1e-8)
    assert cal.u_intercept == pytest.approx(ref.intercept_stderr, rel=1e-8)
    assert cal.slope_percent == pytest.approx(100 * ref.slope / nernst_slope(298.15), rel=1e-10)
    assert "regulated" in cal.caution


def test_slope_percent_of_a_sub_nernstian_electrode():
    # 57.0 mV/decade against the 59.16 mV/decade Nernst slope at 25 °C is 96.35 %
    # (arithmetic on the CODATA Nernst slope; common practice, no source).
    a = np.array([1e-3, 1e-2, 1e-1])
    cal = calibrate_electrode(a, 0.1 + 0.057 * np.log10(a))
    assert cal.slope_percent == pytest.approx(100 * 0.057 / 0.0591597, abs=0.01)
    assert cal.u_slope == pytest.approx(0.0, abs=1e-12)
    assert float(cal.activity(0.1 + 0.057 * math.log10(0.005))) == pytest.approx(0.005, rel=1e-9)


def test_calibration_needs_three_standards():
    with pytest.raises(UserError, match="at least 3 standards"):
        calibrate_electrode([1e-3, 1e-2], [0.1, 0.16])
