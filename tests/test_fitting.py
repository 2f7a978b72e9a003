"""Weighted least squares: recovery, linear solves, flags, criteria, joint fits.

Synthetic data here are invented: generated in the tests from stated parameters of throwaway
test models (tests/fitting_models.py) plus stated Gaussian noise.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from fitting_models import (
    CationSizeAnionLinear,
    ExtendedDH,
    NaNBelowSize,
    NaNModel,
    NearTwin,
    PowerSeries,
    RaisingModel,
    Twin,
    ext_dh_ln_gamma,
    ext_dh_osmotic,
    synthetic,
)
from scipy import stats

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import FitError, UserError
from saltbench.fitting import FitData, criteria, fit, fit_joint, parse_assignments, propagate
from saltbench.fitting.flags import FlagKind, flag
from saltbench.models.evaluate import make_context, osmotic_by_gibbs_duhem
from saltbench.plugins.davies import Davies
from saltbench.water import debye_huckel_constants

NACL = parse_formula("NaCl")
GRID = np.round(np.arange(0.1, 3.01, 0.1), 2)  # invented molality grid, mol/kg
TRUTH = {"a": 4.0, "b": 0.05}  # invented parameters of the synthetic data
# Two-sided 99.9 % interval of a standard normal: |z| <= 3.29 (common practice, no source).
Z999 = stats.norm.ppf(0.9995)


def test_test_model_osmotic_obeys_gibbs_duhem():
    # The closed-form phi of the test model must equal the Gibbs-Duhem integral of its ln(gamma)
    # (Robinson and Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 2; from memory), or the
    # joint fits below would be inconsistent.
    model = ExtendedDH()
    ctx = make_context(NACL)
    phi_gd = osmotic_by_gibbs_duhem(model, GRID, TRUTH, ctx)
    np.testing.assert_allclose(model.osmotic(GRID, TRUTH, ctx), phi_gd, rtol=0, atol=1e-10)


def test_test_model_jacobian_matches_differences():
    # Analytic derivatives of the test model against central differences (common practice,
    # no source): errors of order h^2 ~ 1e-10 relative.
    model = ExtendedDH()
    ctx = make_context(NACL)
    d_ln, d_phi = model.jacobian(GRID, TRUTH, ctx)
    for name in ("a", "b"):
        h = 1e-5
        up, down = dict(TRUTH), dict(TRUTH)
        up[name] += h
        down[name] -= h
        np.testing.assert_allclose(d_ln[name], (model.ln_gamma_pm(GRID, up, ctx)
                                                - model.ln_gamma_pm(GRID, down, ctx)) / (2 * h),
                                   rtol=1e-6, atol=1e-12)
        np.testing.assert_allclose(d_phi[name], (model.osmotic(GRID, up, ctx)
                                                 - model.osmotic(GRID, down, ctx)) / (2 * h),
                                   rtol=1e-6, atol=1e-12)


@pytest.mark.parametrize("analytic_osmotic,analytic_jacobian",
                         [(True, True), (True, False), (False, False)])
def test_recovers_parameters_from_noisy_data(analytic_osmotic, analytic_jacobian):
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=20240601)
    result = fit(ExtendedDH(analytic_osmotic, analytic_jacobian), NACL, data)
    assert result.converged and result.flags == []
    for name, true in TRUTH.items():
        assert abs(result.value(name) - true) <= Z999 * result.stderr(name)
    # The estimate is a property of the data, not of how derivatives are obtained: all three
    # paths must agree far inside the standard error.
    reference = fit(ExtendedDH(True, True), NACL, data)
    for name in TRUTH:
        assert abs(result.value(name) - reference.value(name)) <= 1e-4 * reference.stderr(name)


def test_exact_data_are_fitted_exactly_from_a_distant_start():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID)
    result = fit(ExtendedDH(False, False), NACL, data, start={"a": 12.0})
    assert result.converged
    assert result.value("a") == pytest.approx(4.0, abs=1e-7)
    assert result.value("b") == pytest.approx(0.05, abs=1e-9)
    assert result.chi2 < 1e-10


def test_reduced_chi_square_is_near_one_for_correct_weights():
    # chi2 of a correctly weighted fit follows the chi-square law with n - k degrees of freedom
    # (e.g. Bevington and Robinson, Data Reduction and Error Analysis, 3rd ed., 2003, ch. 11;
    # from memory); 99.9 % two-sided bounds.
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=7, u_ln=0.003, u_phi=0.001)
    result = fit(ExtendedDH(), NACL, data)
    assert result.dof == result.n_points - 2 == 58
    lo, hi = stats.chi2.ppf([0.0005, 0.9995], result.dof)
    assert lo <= result.chi2 <= hi
    assert result.chi2_reduced == pytest.approx(result.chi2 / result.dof)
    # Wrong weights (stated uncertainties ten times too small) push chi2_red far above one.
    tight = FitData(data.molality, data.value, data.uncertainty / 10, data.kind, data.dataset)
    assert fit(ExtendedDH(), NACL, tight).chi2_reduced > hi / result.dof


def _power_design(e, m, is_osm, a_gamma):
    """Weighted design of PowerSeries written out independently of the harness.

    ln g = -A|z+z-| sqrt(I)/(1+sqrt(I)) + b1 m + b2 m^2; by Gibbs-Duhem a term c m^n of ln g
    gives c n m^n / (n + 1) in phi - 1 (Robinson and Stokes 1959, ch. 2; from memory), and the
    first term gives the closed form of the test model with B a = 1.
    """
    i = e.ionic_strength(m)
    alpha = a_gamma * e.zz
    offset = np.where(is_osm, ext_dh_osmotic(i, alpha, 1.0, 0.0), ext_dh_ln_gamma(i, alpha, 1.0, 0.0))
    design = np.column_stack([np.where(is_osm, m / 2, m), np.where(is_osm, 2 * m**2 / 3, m**2)])
    return offset, design


def test_linear_only_fit_equals_numpy_lstsq(monkeypatch):
    import scipy.optimize

    def no_optimiser(*args, **kwargs):
        raise AssertionError("an iterative optimiser ran for an all-linear problem")

    monkeypatch.setattr(scipy.optimize, "least_squares", no_optimiser)
    data = synthetic((3.5, 0.08), NACL, GRID, seed=11, u_ln=0.002, u_phi=0.004)
    result = fit(PowerSeries(), NACL, data, covariance_scaling="none")
    assert result.converged and result.flags == []
    a_gamma = debye_huckel_constants(298.15).a_gamma
    offset, design = _power_design(NACL, data.molality, data.is_osmotic, a_gamma)
    w = 1.0 / data.uncertainty
    a = design * w[:, None]
    # numpy.linalg.lstsq is the reference (a general-purpose library), on the same weighted design.
    coef, *_ = np.linalg.lstsq(a, (data.value - offset) * w, rcond=None)
    np.testing.assert_allclose([result.value("b1"), result.value("b2")], coef, rtol=1e-9)
    np.testing.assert_allclose(result.covariance, np.linalg.inv(a.T @ a), rtol=1e-7)
    chi2 = float(np.sum(((data.value - offset - design @ coef) * w) ** 2))
    assert result.chi2 == pytest.approx(chi2, rel=1e-9)


def test_covariance_scaling_policies():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=3)
    inflated = FitData(data.molality, data.value, data.uncertainty / 3, data.kind, data.dataset)
    none = fit(ExtendedDH(), NACL, inflated, covariance_scaling="none")
    birge = fit(ExtendedDH(), NACL, inflated)
    assert birge.chi2_reduced > 1
    # Birge ratio R_B^2 = chi2_red multiplies the covariance (Birge, Phys. Rev. 40, 207 (1932)).
    np.testing.assert_allclose(birge.covariance, none.covariance * none.chi2_reduced, rtol=1e-9)
    deflated = FitData(data.molality, data.value, data.uncertainty * 3, data.kind, data.dataset)
    low = fit(ExtendedDH(), NACL, deflated)
    assert low.chi2_reduced < 1 and low.covariance_scale == 1.0
    always = fit(ExtendedDH(), NACL, deflated, covariance_scaling="always")
    np.testing.assert_allclose(always.covariance, low.covariance * low.chi2_reduced, rtol=1e-9)


def test_davies_frees_its_held_linear_term():
    # Davies (1962): log10 g = -A zz (sqrt(I)/(1+sqrt(I)) - 0.3 I); data written out here from
    # that formula with the harness's A (natural-log slope 3 A_phi), invented as b = 0.25.
    dh = debye_huckel_constants(298.15)
    i = NACL.ionic_strength(GRID)
    ln_g = -dh.a_gamma * (np.sqrt(i) / (1 + np.sqrt(i)) - 0.25 * i)
    data = FitData.from_property("ln_gamma_pm", GRID, ln_g, 0.001)
    held = fit(Davies(), NACL, data)
    assert held.n_params == 0 and held.value("b") == 0.3  # Davies's published 0.3 (Davies 1962)
    freed = fit(Davies(), NACL, data, free=["b"])
    assert freed.n_params == 1 and freed.value("b") == pytest.approx(0.25, abs=1e-12)


def test_fix_overrides_hold_a_parameter():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=5)
    result = fit(ExtendedDH(), NACL, data, fixed=parse_assignments(["a=4.5"]))
    assert result.n_params == 1 and result.free_names == ["b"]
    held = next(p for p in result.parameters if p["name"] == "a")
    assert held == {"name": "a", "value": 4.5, "stderr": None, "fixed": True, "unit": "Å"}


def test_user_mistakes_raise_clear_errors():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID)
    with pytest.raises(UserError, match=r"model test-ext-dh has no parameter 'c' to fix"):
        fit(ExtendedDH(), NACL, data, fixed={"c": 1.0})
    with pytest.raises(UserError, match=r"fixed value 50 lies outside its bounds"):
        fit(ExtendedDH(), NACL, data, fixed={"a": 50.0})
    with pytest.raises(FitError, match="no data points"):
        fit(ExtendedDH(), NACL, data.subset(np.zeros(data.n, dtype=bool)))
    with pytest.raises(UserError, match="expected NAME=VALUE"):
        parse_assignments(["a:4"])
    with pytest.raises(UserError, match="positive standard uncertainty"):
        FitData.from_property("osmotic", [0.1], [0.93], 0.0)


def test_fit_data_conversions():
    # u(ln x) = u(x)/x (GUM, JCGM 100:2008, eq. 10); a_w = exp(-nu m M_w phi) defines the
    # osmotic coefficient (common practice, no source). NaCl at 1 mol/kg: phi = 0.936 and
    # a_w = 0.9669 (from memory of Robinson and Stokes 1959, Appendix 8.3 and 8.10).
    d = FitData.from_property("gamma_pm", [1.0], [0.657], 0.002)
    assert d.value[0] == pytest.approx(math.log(0.657)) and d.uncertainty[0] == pytest.approx(
        0.002 / 0.657)
    w = FitData.from_property("water_activity", [1.0], [0.9669], 0.0001, nu=2)
    assert w.kind[0] == "osmotic" and w.value[0] == pytest.approx(0.936, abs=0.002)
    both = FitData.concat([d, w])
    assert both.select("osmotic").n == 1 and both.up_to(0.5).n == 0


def test_model_failures_become_flags():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID)
    for model in (NaNModel(), RaisingModel()):
        result = fit(model, NACL, data)
        assert not result.converged
        assert result.flags and result.flags[0].kind is FlagKind.MODEL_ERROR
        assert result.to_dict()["flags"][0].startswith("model error: ")
        json.dumps(result.to_dict(), allow_nan=False)
    assert "deliberate failure" in fit(RaisingModel(), NACL, data).flags[0]["detail"]


def test_failure_at_trial_parameters_is_survived_and_reported():
    # The model returns NaN below a = 3 Å; data made with a = 4 Å from a start at 3.2 Å.
    data = synthetic((4.0, 0.05), NACL, GRID)
    result = fit(NaNBelowSize(), NACL, data, start={"a": 3.2})
    assert result.converged
    assert result.value("a") == pytest.approx(4.0, abs=1e-6)


def test_parameter_stuck_on_bound_is_flagged():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=9)
    result = fit(ExtendedDH(), NACL, data, bounds={"a": (5.0, 10.0)})
    assert "parameter a at bound (lower = 5)" in result.to_dict()["flags"]
    assert result.value("a") == pytest.approx(5.0, abs=1e-6)
    linear = fit(ExtendedDH(), NACL, data, bounds={"b": (0.1, 1.0)})
    assert flag(FlagKind.AT_BOUND, name="b", side="lower", bound=0.1) in linear.flags
    assert linear.value("b") == 0.1


def test_too_few_points_singular_and_ill_conditioned_are_flagged():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=1)
    two = fit(ExtendedDH(), NACL, data.subset(np.array([0, 1])))
    assert "too few points (2 points for 2 free parameters)" in [f.text for f in two.flags]
    assert two.aicc is None  # AICc needs n > k + 1 (Hurvich and Tsai 1989)
    twin = fit(Twin(), NACL, data)
    assert any(f.kind in (FlagKind.SINGULAR, FlagKind.SINGULAR_COMBINATION) for f in twin.flags)
    assert all(p["stderr"] is None for p in twin.to_dict()["parameters"])
    near = fit(NearTwin(), NACL, data)
    assert any(f.kind is FlagKind.ILL_CONDITIONED and f["condition_number"] > 1e6 for f in near.flags)
    assert not any(f.kind in (FlagKind.SINGULAR, FlagKind.SINGULAR_COMBINATION) for f in near.flags)


def test_non_convergence_is_flagged():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=2)
    result = fit(ExtendedDH(), NACL, data, start={"a": 12.0}, max_evaluations=2)
    assert not result.converged
    assert result.flags[0].kind is FlagKind.DID_NOT_CONVERGE
    assert str(result.flags[0]).startswith("did not converge: ")


def test_information_criteria_on_a_hand_computed_case():
    # ln g = b m fitted to (m, ln g) = (1, 1.1), (2, 1.9), (3, 3.2), (4, 3.8), u = 1 (invented).
    # By hand: b = sum(m y)/sum(m^2) = 29.7/30 = 0.99; residuals 0.11, -0.08, 0.23, -0.16;
    # chi2 = 0.097; k = 1, n = 4.
    # AIC = chi2 + 2k (Akaike 1974) = 2.097; AICc = AIC + 2k(k+1)/(n-k-1) = 4.097 (Hurvich and
    # Tsai, Biometrika 76, 297 (1989), in the form of Burnham and Anderson 2002, eq. 2.14; from
    # memory); BIC = chi2 + k ln n = 0.097 + ln 4 = 1.483294 (Schwarz, Ann. Stat. 6, 461 (1978)).
    m = np.array([1.0, 2.0, 3.0, 4.0])
    data = FitData.from_property("ln_gamma_pm", m, [1.1, 1.9, 3.2, 3.8], 1.0)
    result = fit(Twin(), NACL, data, fixed={"q": 0.0})
    assert result.value("p") == pytest.approx(0.99, abs=1e-12)
    assert result.chi2 == pytest.approx(0.097, abs=1e-12)
    assert result.aic == pytest.approx(2.097, abs=1e-12)
    assert result.aicc == pytest.approx(4.097, abs=1e-12)
    assert result.bic == pytest.approx(0.097 + math.log(4.0), abs=1e-12)
    assert criteria.bic(0.097, 1, 4) == pytest.approx(1.483294, abs=1e-6)


def test_result_dict_is_json_ready():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=4)
    d = fit(ExtendedDH(), NACL, data).to_dict()
    for key in ("electrolyte", "model", "parameters", "correlation", "residuals", "converged",
                "flags", "aicc", "bic"):
        assert key in d
    assert d["electrolyte"] == "NaCl" and d["model"] == "test-ext-dh"
    assert d["residuals"]["n_points"] == 60 and d["residuals"]["dof"] == 58
    assert d["residuals"]["ln_gamma"]["n"] == 30 and d["residuals"]["osmotic"]["n"] == 30
    corr = np.array(d["correlation"]["matrix"])
    assert np.allclose(np.diag(corr), 1.0) and np.allclose(corr, corr.T)
    json.dumps(d, allow_nan=False)


def test_propagation_of_a_linear_fit_matches_the_design_rows():
    # For a linear model u^2(y) = x C x^T with x the design row (GUM, JCGM 100:2008, eq. 13).
    data = synthetic((3.5, 0.08), NACL, GRID, seed=12)
    result = fit(PowerSeries(), NACL, data)
    at = np.array([0.05, 0.5, 2.5])
    prop = propagate(PowerSeries(), NACL, at, result)
    a_gamma = debye_huckel_constants(298.15).a_gamma
    for is_osm, u in ((False, prop.u_ln_gamma), (True, prop.u_osmotic)):
        _, x = _power_design(NACL, at, np.full(at.size, is_osm), a_gamma)
        expected = np.sqrt(np.einsum("ij,jk,ik->i", x, result.covariance, x))
        np.testing.assert_allclose(u, expected, rtol=1e-7)
    np.testing.assert_allclose(prop.u_gamma, prop.gamma * prop.u_ln_gamma)


def test_propagation_agrees_between_analytic_and_difference_jacobians():
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=13)
    result = fit(ExtendedDH(), NACL, data)
    at = np.array([0.01, 0.3, 3.0])
    analytic = propagate(ExtendedDH(True, True), NACL, at, result)
    numeric = propagate(ExtendedDH(False, False), NACL, at, result)
    np.testing.assert_allclose(analytic.u_ln_gamma, numeric.u_ln_gamma, rtol=1e-6)
    np.testing.assert_allclose(analytic.u_osmotic, numeric.u_osmotic, rtol=1e-5)


def test_propagation_from_stored_values_and_covariance_pair():
    # The (names, matrix) form a published set is stored in must give what the FitResult gives.
    data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=14)
    result = fit(ExtendedDH(), NACL, data)
    at = [0.2, 2.0]
    stored = (list(reversed(result.free_names)), result.covariance[::-1, ::-1].tolist())
    ctx = make_context(NACL)
    from_pair = propagate(ExtendedDH(), NACL, at, result.model_values(), stored, ctx=ctx)
    direct = propagate(ExtendedDH(), NACL, at, result)
    np.testing.assert_allclose(from_pair["u_gamma_pm"], direct.u_gamma, rtol=1e-12)
    np.testing.assert_allclose(from_pair["u_osmotic"], direct.u_osmotic, rtol=1e-12)
    with pytest.raises(KeyError):
        from_pair["u_nothing"]


def _salt_data(e, a, b, seed):
    # Invented: the per-ion test model's ln(gamma) with noise u = 0.002.
    dh = debye_huckel_constants(298.15)
    i = e.ionic_strength(GRID)
    rng = np.random.default_rng(seed)
    y = ext_dh_ln_gamma(i, dh.a_gamma * e.zz, dh.b_gamma_per_angstrom * a, b)
    return FitData.from_property("ln_gamma_pm", GRID, y + rng.normal(0, 0.002, GRID.size), 0.002,
                                 electrolyte=e.name)


def test_joint_fit_recovers_a_shared_ion_parameter():
    nacl, nabr = NACL, parse_formula("NaBr")
    truth = {"a_cation[Na]": 4.2, "b_anion[Cl]": 0.05, "b_anion[Br]": 0.09}  # invented
    items = [(nacl, _salt_data(nacl, 4.2, 0.05, 101)), (nabr, _salt_data(nabr, 4.2, 0.09, 202))]
    joint = fit_joint(CationSizeAnionLinear(), items)
    assert joint.converged and joint.flags == []
    assert sorted(joint.free_names) == sorted(truth)
    for name, true in truth.items():
        assert abs(joint.value(name) - true) <= Z999 * joint.stderr(name)
    # Pooling two salts on one cation size must narrow it below either salt alone.
    for e, d in items:
        alone = fit(CationSizeAnionLinear(), e, d)
        assert joint.stderr("a_cation[Na]") < alone.stderr("a_cation")
    assert joint.model_values("NaBr") == {"a_cation": joint.value("a_cation[Na]"),
                                          "b_anion": joint.value("b_anion[Br]")}
    prop = propagate(CationSizeAnionLinear(), nabr, [0.5], joint)
    assert prop.u_ln_gamma[0] > 0


def test_joint_fit_of_one_salt_equals_the_single_fit():
    items = [(NACL, _salt_data(NACL, 4.2, 0.05, 303))]
    joint = fit_joint(CationSizeAnionLinear(), items)
    single = fit(CationSizeAnionLinear(), *items[0])
    assert joint.value("a_cation[Na]") == pytest.approx(single.value("a_cation"), rel=1e-9)
    assert joint.stderr("b_anion[Cl]") == pytest.approx(single.stderr("b_anion"), rel=1e-6)
