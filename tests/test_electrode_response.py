"""The electrode response fit, its detection limit, selectivity methods, a sample's activity and the
pH calibration, checked against the Nernst slope from CODATA constants, the Nikolsky-Eisenman
equation and the IUPAC formulas written out here, independently of saltbench, and against
synthetic calibrations made from stated parameters plus noise. No worked example from an IUPAC
recommendation or a text on ion-selective electrodes was read for this work: the method checks
are against the IUPAC expressions themselves, written out here."""

from __future__ import annotations

import math

import numpy as np
import pytest

from saltbench.measurements.electrode_response import (
    RANGE_RESIDUAL_MULTIPLE,
    ResponseData,
    fit_response,
    linear_range,
)
from saltbench.measurements.electrode_sample import sample_activity
from saltbench.measurements.electrode_selectivity import (
    fixed_interference,
    separate_solution_from_fit,
    separate_solution_log10,
)
from saltbench.measurements.nernst import nernst_slope
from saltbench.measurements.ph_calibration import calibrate_ph, sample_ph

# CODATA 2018 exact values (SI 2019 redefinition): R = N_A k, F = N_A e.
N_A = 6.02214076e23
K_B = 1.380649e-23
E_CHARGE = 1.602176634e-19
R = N_A * K_B
F = N_A * E_CHARGE
T25 = 298.15


def ne_emf(e0, s, a_i, k=0.0, a_j=0.0, a0=0.0, z_i=-1, z_j=-1):
    """Nikolsky-Eisenman, E = E0 + S log10(a_i + K a_j^(z_i/z_j) + a0) (Umezawa et al., Pure Appl.
    Chem. 72, 1851 (2000)), written out here."""
    return e0 + s * np.log10(a_i + k * np.power(a_j, z_i / z_j) + a0)


@pytest.mark.parametrize(("t_c", "charge"), [(5.0, 1), (25.0, 1), (40.0, 1), (25.0, -1), (25.0, 2)])
def test_nernst_slope_from_codata(t_c, charge):
    # R T ln10 / (z F) with the CODATA 2018 exact constants; 59.16 mV per decade at 25 °C for z = 1
    # (e.g. Bates, Determination of pH, 2nd ed., 1973, table of k = RT ln10/F).
    t = 273.15 + t_c
    expected = R * t * math.log(10.0) / (charge * F)
    assert nernst_slope(t, charge) == pytest.approx(expected, rel=1e-9)
    if t_c == 25.0 and charge == 1:
        assert round(1000 * nernst_slope(t, 1), 2) == 59.16


def _synthetic(seed: int, noise: float = 0.3e-3):
    # Stated parameters of a fluoride-like anion electrode (our choice for the test): E0 = 0.15 V,
    # S = 98 % of Nernstian, a0 = 3e-6, K(Cl-) = 5e-3; standards 1e-7 to 1e-1 without chloride and
    # 1e-6 to 1e-2 with a_Cl = 0.02.
    s = 0.98 * nernst_slope(T25, -1)
    a = np.r_[np.logspace(-7, -1, 13), np.logspace(-6, -2, 9)]
    acl = np.r_[np.zeros(13), np.full(9, 0.02)]
    rng = np.random.default_rng(seed)
    e = ne_emf(0.15, s, a, 5e-3, acl, 3e-6) + rng.normal(0.0, noise, a.size)
    return ResponseData(a, e, np.full(a.size, noise), -1, T25, {"Cl-": acl}, {"Cl-": -1}), s


def test_recovery_within_standard_errors_about_as_often_as_claimed():
    # Coverage: over fixed seeds, each stated parameter lies within one standard error of its
    # estimate about 68 % of the time (normal errors, GUM). 120 fits; a binomial 3-sigma band.
    truth = {"e0": 0.15, "slope": None, "log10_a0": math.log10(3e-6), "log10_K(Cl-)": math.log10(5e-3)}
    hits = {k: 0 for k in truth}
    n = 120
    for seed in range(n):
        data, s = _synthetic(seed)
        truth["slope"] = s
        fit = fit_response(data)
        assert fit.names == ("e0", "slope", "log10_a0", "log10_K(Cl-)")
        for k, v in truth.items():
            hits[k] += abs(fit.value(k) - v) <= fit.u(k)
    for k, h in hits.items():
        assert 0.55 <= h / n <= 0.82, (k, h / n)


def test_noise_free_recovery_is_exact():
    data, s = _synthetic(0, noise=0.0)
    data = ResponseData(data.activity, ne_emf(0.15, s, data.activity, 5e-3, data.interferents["Cl-"], 3e-6),
                        np.full(data.activity.size, 1e-4), -1, T25, data.interferents,
                        data.interferent_charges)
    fit = fit_response(data)
    assert fit.e0 == pytest.approx(0.15, abs=1e-8)
    assert fit.slope == pytest.approx(s, rel=1e-7)
    assert fit.selectivity("Cl-") == pytest.approx(5e-3, rel=1e-5)
    assert fit.a0 == pytest.approx(3e-6, rel=1e-5)


def test_detection_limit_is_the_iupac_intersection_fixed_interference():
    # Noise-free Nikolsky-Eisenman curve in a fixed interferent background a_j: the extrapolated
    # linear response E0 + S log10 a_i meets the low-activity asymptote E0 + S log10(K a_j^(zi/zj))
    # at a_i = K a_j^(zi/zj) (IUPAC: Buck and Lindner, Pure Appl. Chem. 66, 2527 (1994); Umezawa
    # et al. 2000). Here a divalent interferent on a monovalent anion electrode: exponent 1/2.
    s = nernst_slope(T25, -1)
    k, a_j = 2e-2, 0.01
    a = np.logspace(-7, -1, 19)
    e = ne_emf(0.2, s, a, k, a_j, 0.0, z_i=-1, z_j=-2)
    data = ResponseData(a, e, np.full(a.size, 1e-4), -1, T25, {"SO4-2": np.full(a.size, a_j)},
                        {"SO4-2": -2})
    fit = fit_response(data)
    analytic = k * a_j ** 0.5
    assert fit.detection_limit == pytest.approx(analytic, rel=1e-6)
    # the same intersection found numerically from the curve itself, independently of the fit:
    # the asymptote's potential far below the limit, then where the linear response reaches it
    e_low = ne_emf(0.2, s, 1e-14, k, a_j, 0.0, z_i=-1, z_j=-2)
    assert 10.0 ** ((e_low - 0.2) / s) == pytest.approx(fit.detection_limit, rel=1e-6)
    # and the fixed-interference method gives K back: K = a_LOD / a_j^(zi/zj) (Umezawa et al. 2000)
    fim = fixed_interference(fit.detection_limit, fit.u_detection_limit or 0.0, a_j, -1, -2, "SO4-2")
    assert fim.coefficient == pytest.approx(k, rel=1e-6)
    assert "K(SO4-2) not fitted" in " ".join(fit.notes)


def test_plot_curve_follows_the_equation():
    # The plotted curve is eq. (1) at the lowest standard's interferent levels, written out here.
    data, s = _synthetic(3, noise=0.0)
    data = ResponseData(data.activity, ne_emf(0.15, s, data.activity, 5e-3, data.interferents["Cl-"], 3e-6),
                        np.full(data.activity.size, 1e-4), -1, T25, data.interferents,
                        data.interferent_charges)
    fit = fit_response(data)
    a, e = fit.curve(50)
    assert a[0] == pytest.approx(1e-8) and a[-1] == pytest.approx(0.1)
    assert e == pytest.approx(ne_emf(0.15, s, a, 5e-3, 0.0, 3e-6), abs=1e-7)


def test_no_detection_limit_without_an_asymptote():
    s = nernst_slope(T25, 1)
    a = np.logspace(-4, -1, 7)
    fit = fit_response(ResponseData(a, ne_emf(0.3, s, a), np.full(7, 2e-4), 1, T25))
    assert fit.detection_limit is None and not fit.a0_resolved
    assert fit.names == ("e0", "slope")


def test_separate_solution_method_against_the_iupac_expression():
    # IUPAC (Umezawa et al. 2000), SSM: K = exp((E_j - E_i) z_i F / (R T)) a_i / a_j^(zi/zj),
    # written here with CODATA constants, for a divalent interferent on a monovalent cation.
    e_i, a_i, e_j, a_j, z_i, z_j = 0.112, 1e-3, 0.061, 1e-2, 1, 2
    expected = math.exp((e_j - e_i) * z_i * F / (R * T25)) * a_i / a_j ** (z_i / z_j)
    assert 10 ** separate_solution_log10(e_i, a_i, e_j, a_j, z_i, z_j, T25) == pytest.approx(expected, rel=1e-9)


def test_separate_solution_from_the_fitted_line_recovers_k():
    s = 0.97 * nernst_slope(T25, -1)
    a = np.logspace(-5, -1, 9)
    fit = fit_response(ResponseData(a, ne_emf(0.1, s, a), np.full(9, 1e-4), -1, T25,
                                    {"Cl-": np.zeros(9)}, {"Cl-": -1}))
    # a solution of the interferent alone: E_j = E0 + S log10(K a_j) on the Nikolsky-Eisenman curve
    k, a_j = 3e-3, 0.05
    sel = separate_solution_from_fit(fit, float(ne_emf(0.1, s, 0.0, k, a_j)), 1e-4, a_j, -1, "Cl-")
    assert sel.coefficient == pytest.approx(k, rel=1e-6)
    assert "separate-solution" in sel.method


def test_linear_range_rule():
    # Standards on a straight line down to 1e-5, then flattened by a0 = 1e-5: the run stops where
    # a standard leaves the run's straight line by more than 3 u(E).
    s = nernst_slope(T25, 1)
    a = np.logspace(-7, -1, 13)
    e = ne_emf(0.3, s, a, a0=1e-6)
    lr = linear_range(ResponseData(a, e, np.full(13, 2e-4), 1, T25))
    assert lr is not None
    assert lr.high == pytest.approx(0.1)
    # the deviation of a standard from the pure-line response: S log10(1 + a0/a); 3 u(E) = 0.6 mV
    # is exceeded below a = 1e-4.5 (0.85 mV at 3.2e-5), kept at 1e-4 (0.25 mV) -- the fitted line
    # of the run shares the deviation out, so the cut lies at or one step above that standard
    assert lr.low in (pytest.approx(1e-4), pytest.approx(10 ** -4.5))
    assert RANGE_RESIDUAL_MULTIPLE == 3.0


def test_sample_activity_inverts_the_response_and_propagates_the_reading():
    s = nernst_slope(T25, -1)
    a = np.logspace(-6, -1, 11)
    acl = np.r_[np.zeros(6), np.full(5, 0.05)]
    data = ResponseData(a, ne_emf(0.2, s, a, 1e-3, acl, 1e-6), np.full(11, 1e-4), -1, T25,
                        {"Cl-": acl}, {"Cl-": -1})
    fit = fit_response(data)
    a_true, cl = 4e-4, 0.01
    e = float(ne_emf(0.2, s, a_true, 1e-3, cl, 1e-6))
    res = sample_activity(fit, e, 2e-4, interferents={"Cl-": cl})
    assert res.activity == pytest.approx(a_true, rel=1e-6)
    # first-order propagation of u(E) (GUM eq. 10) checked by a central difference
    h = 1e-6
    up = sample_activity(fit, e + h, 0.0, interferents={"Cl-": cl}).activity
    down = sample_activity(fit, e - h, 0.0, interferents={"Cl-": cl}).activity
    assert up is not None and down is not None
    assert res.budget["reading"] == pytest.approx(abs(up - down) / (2 * h) * 2e-4, rel=1e-5)
    # a potential above the background asymptote: no activity, flagged
    low = sample_activity(fit, float(ne_emf(0.2, s, 0.0, 1e-3, cl, 1e-6)) + 0.01, 2e-4,
                          interferents={"Cl-": cl})
    assert low.activity is None and "below the detection limit" in low.flags[0]
    # an interferent above the calibrated levels is flagged
    high = sample_activity(fit, e, 2e-4, interferents={"Cl-": 0.2})
    assert any("exceeds the highest level" in f for f in high.flags)


def test_two_point_ph_calibration_is_exact():
    # Two buffers fix E = E0 - S pH exactly: S = -(E2 - E1)/(pH2 - pH1) (arithmetic).
    cal = calibrate_ph(np.array([4.2, 9.1]), np.array([0.160, -0.126]), np.array([1e-4, 1e-4]),
                       temperature_k=T25)
    assert cal.kind == "two-point" and cal.dof == 0
    assert cal.slope == pytest.approx(0.286 / 4.9, rel=1e-12)
    assert cal.e0 == pytest.approx(0.160 + cal.slope * 4.2, rel=1e-12)
    assert cal.slope_percent == pytest.approx(100 * cal.slope / (R * T25 * math.log(10) / F), rel=1e-9)
    # with two points, the parameters' covariance is the propagation of the two readings' u(E)
    j = np.array([[1.0, -4.2], [1.0, -9.1]])  # dE/d(e0, slope)
    cov = np.linalg.inv(j) @ np.diag([1e-8, 1e-8]) @ np.linalg.inv(j).T
    assert cal.covariance == pytest.approx(cov, rel=1e-9)


def test_multi_point_ph_calibration_and_sample():
    s = 0.985 * R * T25 * math.log(10) / F
    ph = np.array([3.9, 6.1, 8.3, 10.2])
    e = 0.41 - s * ph
    cal = calibrate_ph(ph, e, np.full(4, 1e-4), np.full(4, 0.01), T25)
    assert cal.slope_percent == pytest.approx(98.5, rel=1e-9)
    res = sample_ph(cal, float(0.41 - s * 7.25), 1e-4)
    assert res.ph == pytest.approx(7.25, rel=1e-9) and not res.flags
    out = sample_ph(cal, float(0.41 - s * 11.5), 1e-4)
    assert any("outside the buffers' bracket" in f for f in out.flags)
