"""Fitting, cross-validating and judging models on mixture data (saltbench.fitting.mixture).

Synthetic data come from published equations written out independently in
tests/mixture_equations.py (SIT: Grenthe et al. 1992, appendix B; Pitzer: Harvie, Møller and
Weare 1984), with the published parameter values of the bundled sets (each typed from memory, as
their files say), seeded noise of stated size, and uncertainties equal to that noise, so that a
fit's standard errors can be held to the truth.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from mixture_equations import LN10, PitzerPair, pitzer_hcl_nacl, sit_log10_gamma_pm_hcl

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.chemistry.solution import Composition
from saltbench.curation.parameters import read_parameter_file
from saltbench.errors import UserError
from saltbench.fitting import FitData, fit
from saltbench.fitting.crossval import fold_labels
from saltbench.fitting.mixture import cross_validate_mixture, fit_mixture, mixture_validity
from saltbench.fitting.mixture_data import MixtureData
from saltbench.fitting.mixture_problem import build_mixture_problem
from saltbench.models.contract import Computed, Conditions, ParameterKey, Request
from saltbench.models.evaluate import compute
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, ln_gamma, ln_gamma_pm
from saltbench.plugins.pitzer import Pitzer
from saltbench.plugins.sit import SIT
from saltbench.water import debye_huckel_constants, with_a_phi
from saltbench.water.properties import MOLAR_MASS_WATER

PARAMETERS = Path(__file__).resolve().parents[1] / "refdata" / "parameters"
HCL, NACL, KCL = parse_formula("HCl"), parse_formula("NaCl"), parse_formula("KCl")
# A = 0.509 kg^1/2 mol^-1/2 (decadic) at 25 °C, the SIT value (Grenthe et al. 1992, appendix B,
# from memory); A_phi = A ln 10 / 3 on the natural-log osmotic basis.
SIT_A = 0.509
SIT_DH = with_a_phi(debye_huckel_constants(298.15), SIT_A * LN10 / 3.0, "SIT, A = 0.509")
# A_phi = 0.392 at 25 °C, the value of Pitzer and Mayorga (1973) and Harvie, Møller and Weare
# (1984) (from memory)
PITZER_DH = with_a_phi(debye_huckel_constants(298.15), 0.392, "Harvie, Møller and Weare (1984)")
# Constant-ionic-strength series of HCl + NaCl, as cells without liquid junction measure them
IONIC = np.array([0.1, 0.2, 0.5, 1.0, 1.5, 2.0, 2.5, 3.0])
FRACTION_NACL = np.array([0.0, 0.2, 0.4, 0.6, 0.8, 0.95])


def grid(ionic=IONIC, fractions=FRACTION_NACL):
    i, y = np.meshgrid(ionic, fractions, indexing="ij")
    i, y = i.ravel(), y.ravel()
    return i * (1.0 - y), i * y  # m(HCl), m(NaCl)


def hcl_nacl(m_h, m_na):
    return Composition.of_salts([(HCL, m_h), (NACL, m_na)])


def sit_set():
    rows = {r.target: r.values["eps"] for r in read_parameter_file(
        PARAMETERS / "sit-grenthe-1992.csv").rows}
    return rows["HCl"], rows["NaCl"]


def pitzer_sets():
    """Binary parameters of HCl and NaCl (Pitzer and Mayorga 1973) and theta(H, Na),
    psi(H, Na, Cl) (Harvie, Møller and Weare 1984), as the bundled files give them."""
    binary = {r.target: r.values for r in read_parameter_file(
        PARAMETERS / "pitzer-mayorga-1973.csv").rows}
    mixing = {r.target: r.values for r in read_parameter_file(
        PARAMETERS / "harvie-moller-weare-1984-mixing.csv").rows}
    pairs = {name: PitzerPair(binary[name]["beta0"], binary[name]["beta1"], binary[name]["C_phi"])
             for name in ("HCl", "NaCl")}
    return pairs, mixing["H+/Na+"]["theta"], mixing["H+/Na+/Cl-"]["psi"]


def pitzer_held(pairs):
    held = {}
    for salt, ions in (("HCl", ("H+", "Cl-")), ("NaCl", ("Na+", "Cl-"))):
        p = pairs[salt]
        held.update({ParameterKey("beta0", ions): p.beta0, ParameterKey("beta1", ions): p.beta1,
                     ParameterKey("C_phi", ions): p.c_phi})
    return held


def sit_data(seed, u=0.002, noise=True):
    eps_hcl, eps_nacl = sit_set()
    m_h, m_na = grid()
    truth = LN10 * sit_log10_gamma_pm_hcl(m_h, m_na, eps_hcl, eps_nacl, SIT_A)
    rng = np.random.default_rng(seed)
    obs = truth + (rng.normal(0.0, u, truth.size) if noise else 0.0)
    return MixtureData(hcl_nacl(m_h, m_na), ln_gamma_pm("HCl"), obs, u)


def pitzer_data(seed, u=0.002, noise=True, psi=None):
    """ln gamma±(HCl) on the grid, phi and a_w of the same mixtures at 1 and 3 mol/kg."""
    pairs, theta, psi_hmw = pitzer_sets()
    psi = psi_hmw if psi is None else psi
    rng = np.random.default_rng(seed)
    m_h, m_na = grid()
    ln_g, _, _ = pitzer_hcl_nacl(m_h, m_na, pairs["HCl"], pairs["NaCl"], theta, psi)
    o_h, o_na = grid(np.array([1.0, 3.0]))
    _, _, phi = pitzer_hcl_nacl(o_h, o_na, pairs["HCl"], pairs["NaCl"], theta, psi)
    a_w = np.exp(-MOLAR_MASS_WATER * 2.0 * (o_h + o_na) * phi)  # IUPAC Green Book 2.13
    u_aw = 1e-4  # about a good isopiestic measurement's (common practice, no source)
    values = [ln_g, phi, a_w]
    sizes = [u, u, u_aw]
    if noise:
        values = [v + rng.normal(0.0, s, v.size) for v, s in zip(values, sizes)]
    comp = Composition.of_salts([(HCL, np.concatenate([m_h, o_h, o_h])),
                                 (NACL, np.concatenate([m_na, o_na, o_na]))])
    n, k = m_h.size, o_h.size
    quantity = [ln_gamma_pm("HCl")] * n + [OSMOTIC] * k + [WATER_ACTIVITY] * k
    unc = np.concatenate([np.full(n, u), np.full(k, u), np.full(k, u_aw)])
    return MixtureData(comp, quantity, np.concatenate(values), unc), pairs, theta, psi


# -- (a) SIT: eps(H+, Cl-) and eps(Na+, Cl-) from mean activity coefficients of HCl ----------
SIT_FREE = ["eps[H+/Cl-]", "eps[Na+/Cl-]"]


def test_sit_recovers_eps_within_its_standard_errors():
    eps_hcl, eps_nacl = sit_set()
    result = fit_mixture(SIT(), sit_data(seed=11), free=SIT_FREE, dh=SIT_DH,
                         covariance_scaling="none")
    assert result.ok and result.free_names == SIT_FREE
    assert "linear least squares" in result.message  # no iterative optimiser
    for name, truth in zip(SIT_FREE, (eps_hcl, eps_nacl)):
        assert abs(result.value(name) - truth) < 3.0 * result.stderr(name), name
    assert result.correlation.shape == (2, 2)
    assert result.correlation[0, 1] == pytest.approx(result.correlation[1, 0])
    assert -1.0 < result.correlation[0, 1] < 1.0
    assert result.electrolyte == "HCl + NaCl"
    np.testing.assert_allclose(result.molality, sit_data(seed=11).ionic_strength)


def test_sit_standard_errors_cover_the_truth_over_many_seeds():
    # With exact uncertainties, (fitted - true) / stderr is standard normal (first-order
    # covariance of linear least squares, e.g. Press et al., Numerical Recipes, 3rd ed., 15.4):
    # over 40 seeds its RMS lies within 0.7..1.35 (the chi-square distribution with 40 degrees
    # of freedom puts 99.6 % of sqrt(chi2 / 40) there; scipy.stats.chi2).
    truth = dict(zip(SIT_FREE, sit_set()))
    z = {name: [] for name in SIT_FREE}
    for seed in range(40):
        r = fit_mixture(SIT(), sit_data(seed), free=SIT_FREE, dh=SIT_DH, covariance_scaling="none")
        for name in SIT_FREE:
            z[name].append((r.value(name) - truth[name]) / r.stderr(name))
    for name, values in z.items():
        assert 0.7 < math.sqrt(np.mean(np.square(values))) < 1.35, name


def test_sit_without_noise_gives_the_published_values_exactly():
    eps_hcl, eps_nacl = sit_set()
    r = fit_mixture(SIT(), sit_data(0, noise=False), free=SIT_FREE, dh=SIT_DH)
    assert r.value("eps[H+/Cl-]") == pytest.approx(eps_hcl, abs=1e-12)
    assert r.value("eps[Na+/Cl-]") == pytest.approx(eps_nacl, abs=1e-12)


# -- (b) Pitzer: theta(H+/Na+) and psi(H+/Na+/Cl-) with the binary sets held ------------------
def test_pitzer_recovers_theta_and_psi_exactly_by_linear_least_squares():
    data, pairs, theta, psi = pitzer_data(0, noise=False)
    r = fit_mixture(Pitzer(), data, held=pitzer_held(pairs), dh=PITZER_DH)
    # the default free keys are the mixing terms; both enter linearly: solved without iterations
    assert r.free_names == ["theta[H+/Na+]", "psi[H+/Na+/Cl-]"]
    assert "linear least squares" in r.message
    assert r.value("theta[H+/Na+]") == pytest.approx(theta, abs=1e-10)
    assert r.value("psi[H+/Na+/Cl-]") == pytest.approx(psi, abs=1e-10)
    held = {p["name"]: p for p in r.parameters if p["fixed"]}
    assert held["beta0[H+/Cl-]"]["value"] == pairs["HCl"].beta0
    assert held["alpha1[Na+/Cl-]"]["value"] == 2.0  # Pitzer and Mayorga (1973) for 1-1 salts


def test_pitzer_recovers_theta_and_psi_from_noisy_points_of_three_quantities():
    data, pairs, theta, psi = pitzer_data(5)
    assert set(data.kind) == {"ln_gamma", "osmotic"}  # water activities are fitted as phi
    r = fit_mixture(Pitzer(), data, held=pitzer_held(pairs), dh=PITZER_DH,
                    covariance_scaling="none")
    assert r.ok
    for name, truth in (("theta[H+/Na+]", theta), ("psi[H+/Na+/Cl-]", psi)):
        assert abs(r.value(name) - truth) < 3.0 * r.stderr(name), name
        assert r.stderr(name) < 0.5 * abs(truth)  # the data determine both
    assert r.residual_stats["osmotic"]["n"] == 24 and r.residual_stats["ln_gamma"]["n"] == 48
    assert np.isfinite(r.correlation).all()


def test_pitzer_standard_errors_cover_the_truth_over_many_seeds():
    # as for SIT above: (fitted - true) / stderr over 40 seeds has an RMS within 0.7..1.35
    z = {"theta[H+/Na+]": [], "psi[H+/Na+/Cl-]": []}
    for seed in range(40):
        data, pairs, theta, psi = pitzer_data(100 + seed)
        r = fit_mixture(Pitzer(), data, held=pitzer_held(pairs), dh=PITZER_DH,
                        covariance_scaling="none")
        for name, truth in (("theta[H+/Na+]", theta), ("psi[H+/Na+/Cl-]", psi)):
            z[name].append((r.value(name) - truth) / r.stderr(name))
    for name, values in z.items():
        assert 0.7 < math.sqrt(np.mean(np.square(values))) < 1.35, name


def test_water_activity_points_become_osmotic_coefficients():
    # phi = -ln a_w / (M_w sum m_i), u(phi) = u(a_w) / (a_w M_w sum m_i) (IUPAC Green Book,
    # 3rd ed., 2007, 2.13; GUM eq. 10)
    comp = hcl_nacl([0.5, 1.0], [0.5, 2.0])
    data = MixtureData(comp, WATER_ACTIVITY, [0.96, 0.90], 1e-4)
    total = np.array([2.0, 6.0])
    np.testing.assert_allclose(data.value, -np.log([0.96, 0.90]) / (MOLAR_MASS_WATER * total))
    np.testing.assert_allclose(data.uncertainty,
                               1e-4 / (np.array([0.96, 0.90]) * MOLAR_MASS_WATER * total))
    assert data.quantities == (OSMOTIC, OSMOTIC) and data.measured == (WATER_ACTIVITY,) * 2


# -- (c) Harned's rule ------------------------------------------------------------------------
def test_a_fitted_pitzer_model_follows_harneds_rule_for_hcl_in_nacl():
    """Harned's rule (Harned and Owen, The Physical Chemistry of Electrolytic Solutions, 3rd ed.,
    1958, ch. 14, from memory): at constant ionic strength, log10 gamma±(HCl) in HCl + NaCl is
    linear in the fraction of NaCl, log10 gamma = log10 gamma° - alpha12 y I, within the
    precision of the cells up to 3 mol/kg, with alpha12 about 0.03 kg/mol at 25 °C. We hold the
    fitted model to 0.002 in log10 gamma± from the best straight line (about 0.25 mV of EMF at
    2 x 59.16 mV per decade, a few times a good cell's precision; common practice, no source),
    and alpha12 to 0.02..0.045 kg/mol."""
    data, pairs, _, _ = pitzer_data(3)
    r = fit_mixture(Pitzer(), data, held=pitzer_held(pairs), dh=PITZER_DH)
    model = Pitzer()
    y = np.linspace(0.0, 1.0, 11)
    for ionic in (0.5, 1.0, 2.0, 3.0):
        comp = hcl_nacl(ionic * (1.0 - y), ionic * y)
        keys = model.keys_for(comp)
        values = {k: np.array([[r.values.get(str(k), p.default)]]) for k, p in keys.items()}
        q = ln_gamma_pm("HCl")
        out = compute(model, Request(comp, (q,), values, Conditions.single(PITZER_DH, comp.n)))
        log_g = out.values[q][0] / LN10
        slope, intercept = np.polyfit(y, log_g, 1)
        assert np.abs(log_g - (slope * y + intercept)).max() < 0.002, ionic
        assert 0.02 < -slope / ionic < 0.045, ionic


def test_harneds_rule_check_fails_for_a_strongly_curved_mixture():
    # The same check must fail when psi makes the mixture term quadratic in y: with psi = -0.1
    # (25 times the published value) ln gamma(Cl) gains psi m_H m_Na, up to 0.23 at I = 3.
    data, pairs, _, _ = pitzer_data(3, psi=-0.1)
    r = fit_mixture(Pitzer(), data, held=pitzer_held(pairs), dh=PITZER_DH)
    assert r.value("psi[H+/Na+/Cl-]") == pytest.approx(-0.1, abs=0.01)
    y = np.linspace(0.0, 1.0, 11)
    ln_g, _, _ = pitzer_hcl_nacl(3.0 * (1 - y), 3.0 * y, pairs["HCl"], pairs["NaCl"],
                                 r.value("theta[H+/Na+]"), r.value("psi[H+/Na+/Cl-]"))
    log_g = ln_g / LN10
    slope, intercept = np.polyfit(y, log_g, 1)
    assert np.abs(log_g - (slope * y + intercept)).max() > 0.002


# -- (d) one salt as a mixture of itself --------------------------------------------------------
@pytest.mark.parametrize("model, free", [
    (Pitzer(), ("beta0", "beta1", "C_phi")),
    (Pitzer(), ("beta0", "beta1", "C_phi", "alpha1")),  # alpha1 nonlinear: the optimiser runs
    (SIT(), ("eps",)),
])
def test_one_salt_as_a_mixture_gives_the_one_salt_fit(model, free):
    pairs, _, _ = pitzer_sets()
    m = np.array([0.05, 0.1, 0.2, 0.5, 1.0, 1.5, 2.0, 3.0, 4.0, 5.0])
    zero = np.zeros_like(m)
    ln_g, _, phi = pitzer_hcl_nacl(zero, m, pairs["HCl"], pairs["NaCl"], 0.0, 0.0)
    rng = np.random.default_rng(2)
    ln_g, phi = ln_g + rng.normal(0, 0.003, m.size), phi + rng.normal(0, 0.003, m.size)
    one = FitData.concat([FitData.from_property("ln_gamma_pm", m, ln_g, 0.003, electrolyte="NaCl"),
                          FitData.from_property("osmotic", m, phi, 0.003, electrolyte="NaCl")])
    single = fit(model, NACL, one, dh=PITZER_DH, free=[n for n in free if n == "alpha1"])
    comp = Composition.of_salt(NACL, np.concatenate([m, m]))
    quantity = [ln_gamma_pm("NaCl")] * m.size + [OSMOTIC] * m.size
    data = MixtureData(comp, quantity, np.concatenate([ln_g, phi]), 0.003)
    keys = [str(ParameterKey(name, ("Na+", "Cl-"))) for name in free]
    mixed = fit_mixture(model, data, free=keys, dh=PITZER_DH)
    assert mixed.free_names == keys
    for name, key in zip(free, keys):
        assert mixed.value(key) == pytest.approx(single.value(name), rel=1e-9, abs=1e-12)
        assert mixed.stderr(key) == pytest.approx(single.stderr(name), rel=1e-9)
    np.testing.assert_allclose(mixed.correlation, single.correlation, rtol=1e-9, atol=1e-12)
    assert mixed.chi2 == pytest.approx(single.chi2, rel=1e-9)
    np.testing.assert_allclose(mixed.prediction, single.prediction, rtol=0, atol=1e-9)


class _NoDerivatives(SIT):
    """SIT with its analytic derivatives withheld: the problem must difference them."""

    id = "sit-no-derivatives"

    def compute(self, request):
        out = super().compute(request)
        return Computed(out.values, {})


def test_derivatives_a_model_withholds_are_differenced():
    data = sit_data(4)
    analytic = fit_mixture(SIT(), data, free=SIT_FREE, dh=SIT_DH)
    differenced = fit_mixture(_NoDerivatives(), data, free=SIT_FREE, dh=SIT_DH)
    for name in SIT_FREE:  # a unit step is exact for a linear parameter
        assert differenced.value(name) == pytest.approx(analytic.value(name), rel=1e-9)
        assert differenced.stderr(name) == pytest.approx(analytic.stderr(name), rel=1e-7)


# -- (e) cross-validation, validity ranges, bad inputs ------------------------------------------
def test_folds_are_ranked_by_ionic_strength():
    data = sit_data(1)
    cv = cross_validate_mixture(SIT(), data, free=SIT_FREE, dh=SIT_DH, folds=4,
                                scheme="contiguous")
    np.testing.assert_array_equal(cv.molality, data.ionic_strength)
    # contiguous folds are blocks of neighbouring ionic strengths
    for f in range(3):
        assert cv.molality[cv.fold == f].max() <= cv.molality[cv.fold == f + 1].min()
    assert np.isfinite(cv.prediction).all()


def test_leave_one_out_residuals_obey_the_press_identity():
    # For linear least squares the leave-one-out residual is e_i / (1 - h_ii), with e the
    # residuals and h the hat matrix of the weighted design (Allen, Technometrics 16, 125
    # (1974)). The design here is written from the SIT equation, independently of the model.
    data = sit_data(8)
    cv = cross_validate_mixture(SIT(), data, free=SIT_FREE, dh=SIT_DH, folds="loo")
    m_h, m_na = grid()
    i = m_h + m_na
    offset = -LN10 * SIT_A * np.sqrt(i) / (1.0 + 1.5 * np.sqrt(i))
    x = LN10 * np.column_stack([(i + m_h) / 2.0, m_na / 2.0]) / 0.002
    rhs = (data.value - offset) / 0.002
    coef = np.linalg.lstsq(x, rhs, rcond=None)[0]
    e = (rhs - x @ coef) * 0.002
    h = np.einsum("ij,jk,ik->i", x, np.linalg.inv(x.T @ x), x)
    np.testing.assert_allclose(cv.residual, e / (1.0 - h), rtol=1e-8, atol=1e-12)
    np.testing.assert_array_equal(cv.fold, fold_labels(data.ionic_strength, data.n))


def _misfit_data():
    """HCl + NaCl by Pitzer's equations with psi = -0.03, fitted by SIT: its misfit grows
    with ionic strength."""
    data, _, _, _ = pitzer_data(0, noise=False, psi=-0.03)
    keep = np.array([q == ln_gamma_pm("HCl") for q in data.quantities])
    return data.subset(keep)


def test_validity_range_in_ionic_strength_grows_with_the_tolerance():
    # Each trial limit's fit (or cross-validation) does not depend on the tolerance, so a wider
    # tolerance passes every limit a narrower one passed, and the search from the top can only
    # reach as far or further (the rule of saltbench.fitting.validity).
    data = _misfit_data()
    for judge in ("fit", "heldout"):
        reach = []
        for tol in (0.001, 0.003, 0.01, 0.03, 0.3):
            v = mixture_validity(SIT(), data, free=SIT_FREE, dh=SIT_DH, tolerance_ln_gamma=tol,
                                 judge=judge)
            reach.append(-1.0 if v.max_ionic_strength is None else v.max_ionic_strength)
            assert v.mode == "refit" and v.highest_data_ionic_strength == 3.0
        assert reach == sorted(reach) and reach[0] < 3.0, judge
        assert v.limited_by == "data" and v.max_ionic_strength == 3.0, judge


def test_subsets_of_subsets_read_their_own_rows():
    # Folds of a trial limit are subsets of a subset; with the points in no particular order
    # they must predict (from their root's shared design) what a problem built afresh on the
    # same points predicts, and that is the SIT equation's value.
    data = sit_data(6)
    data = data.subset(np.random.default_rng(0).permutation(data.n))
    problem = build_mixture_problem(SIT(), data, free=SIT_FREE, dh=SIT_DH)
    theta = problem.theta_from({"eps[H+/Cl-]": 0.1, "eps[Na+/Cl-]": 0.05})
    problem.linear_design(theta)  # the root's design, which its subsets read
    first = data.ionic_strength <= 2.0
    second = np.arange(int(first.sum())) % 2 == 0
    nested = problem.subset(first).subset(second)
    points = data.subset(first).subset(second)
    fresh = build_mixture_problem(SIT(), points, free=SIT_FREE, dh=SIT_DH)
    np.testing.assert_allclose(nested.predict(theta), fresh.predict(theta), rtol=1e-13)
    np.testing.assert_allclose(nested.linear_design(theta)[1], fresh.linear_design(theta)[1],
                               rtol=1e-13)
    comp = points.composition
    m_h, m_na = comp.of("H+"), comp.of("Na+")
    np.testing.assert_allclose(nested.predict(theta),
                               LN10 * sit_log10_gamma_pm_hcl(m_h, m_na, 0.1, 0.05, SIT_A),
                               rtol=1e-12)


def test_validity_does_not_depend_on_the_order_of_the_points():
    # Judged by the fit, a trial limit's points are those up to it, whatever their order.
    # (Held-out folds break ties of ionic strength by data order, so they may differ.)
    data = _misfit_data()
    shuffled = data.subset(np.random.default_rng(1).permutation(data.n))
    for tol in (0.003, 0.01):
        a = mixture_validity(SIT(), data, free=SIT_FREE, dh=SIT_DH, tolerance_ln_gamma=tol)
        b = mixture_validity(SIT(), shuffled, free=SIT_FREE, dh=SIT_DH, tolerance_ln_gamma=tol)
        assert a.limited_by == b.limited_by == "tolerance"
        assert a.max_ionic_strength == b.max_ionic_strength
        assert a.first_failing_ionic_strength == b.first_failing_ionic_strength


def test_validity_of_a_held_model_is_where_its_first_point_fails():
    # Judged as given, the range ends below the lowest ionic strength at which a point is out
    # of tolerance (the rule of saltbench.fitting.validity); the deviations here are computed
    # from the SIT equation itself.
    data = _misfit_data()
    eps_hcl, eps_nacl = sit_set()
    m_h, m_na = grid()
    sit = LN10 * sit_log10_gamma_pm_hcl(m_h, m_na, eps_hcl, eps_nacl, SIT_A)
    bad = np.abs(data.value - sit) > 0.01
    first_bad = data.ionic_strength[bad].min()
    expected = data.ionic_strength[data.ionic_strength < first_bad].max()
    v = mixture_validity(SIT(), data, held={"eps[H+/Cl-]": eps_hcl, "eps[Na+/Cl-]": eps_nacl},
                         dh=SIT_DH, refit=False, tolerance_ln_gamma=0.01)
    assert v.mode == "fixed" and v.limited_by == "tolerance"
    assert v.max_ionic_strength == expected and v.first_failing_ionic_strength == first_bad
    wider = mixture_validity(SIT(), data, held={"eps[H+/Cl-]": eps_hcl,
                                                "eps[Na+/Cl-]": eps_nacl},
                             dh=SIT_DH, refit=False, tolerance_ln_gamma=0.03)
    assert (wider.max_ionic_strength or 0.0) >= v.max_ionic_strength


def test_bad_requests_are_user_errors():
    data = sit_data(0)
    with pytest.raises(UserError, match="no free parameter"):
        fit_mixture(SIT(), data, dh=SIT_DH)  # SIT has no mixing terms to fit by default
    with pytest.raises(UserError, match="no parameter 'eps\\[K\\+/Cl-\\]'"):
        fit_mixture(SIT(), data, free=["eps[K+/Cl-]"], dh=SIT_DH)
    with pytest.raises(UserError, match="no parameter 'theta"):
        fit_mixture(SIT(), data, free=["theta[H+/Na+]"], dh=SIT_DH)
    with pytest.raises(UserError, match="both held and free"):
        fit_mixture(SIT(), data, free=SIT_FREE, held={"eps[H+/Cl-]": 0.1}, dh=SIT_DH)
    with pytest.raises(UserError, match="no value for beta0\\[H\\+/Cl-\\]"):
        fit_mixture(Pitzer(), data, dh=PITZER_DH)  # binary terms neither held nor fitted
    with pytest.raises(UserError, match="outside its bounds"):
        fit_mixture(SIT(), data, free=["eps[Na+/Cl-]"], held={"eps[H+/Cl-]": 5.0}, dh=SIT_DH)
    # NaCl alone and KCl alone: no point holds K+ and Na+ together, so theta cannot be fitted
    m = np.array([0.5, 1.0, 2.0])
    apart = Composition.of_salts([(NACL, np.r_[m, 0 * m]), (KCL, np.r_[0 * m, m])])
    pm = {r.target: r.values for r in read_parameter_file(PARAMETERS / "pitzer-mayorga-1973.csv").rows}
    held = {str(ParameterKey(n, (c, "Cl-"))): pm[s][n] for s, c in (("NaCl", "Na+"), ("KCl", "K+"))
            for n in ("beta0", "beta1", "C_phi")}
    apart_data = MixtureData(apart, OSMOTIC, np.ones(6), 0.01)
    with pytest.raises(UserError, match="cannot determine theta\\[(K\\+/Na\\+|Na\\+/K\\+)\\]"):
        fit_mixture(Pitzer(), apart_data, held=held, dh=PITZER_DH)


def test_keys_are_named_with_their_ions_in_any_order():
    data, pairs, theta, psi = pitzer_data(0, noise=False)
    given = fit_mixture(Pitzer(), data, held=pitzer_held(pairs), dh=PITZER_DH,
                        free=["theta[Na+/H+]", "psi[Na+/H+/Cl-]"])
    assert given.free_names == ["theta[H+/Na+]", "psi[H+/Na+/Cl-]"]  # the model's own names
    assert given.value("theta[H+/Na+]") == pytest.approx(theta, abs=1e-10)
    with pytest.raises(UserError, match="no parameter 'theta\\[Na\\+/Cl-\\]'"):
        fit_mixture(Pitzer(), data, held=pitzer_held(pairs), free=["theta[Na+/Cl-]"])


def test_bad_mixture_data_are_user_errors():
    comp = hcl_nacl([0.5, 1.0], [0.5, 1.0])
    with pytest.raises(UserError, match="2 values, expected 3|expected 2"):
        MixtureData(comp, OSMOTIC, [1.0, 1.0, 1.0], 0.01)
    with pytest.raises(UserError, match="ion K\\+ is not in the solution"):
        MixtureData(comp, ln_gamma_pm("KCl"), [0.0, 0.0], 0.01)
    with pytest.raises(UserError, match="positive standard uncertainty"):
        MixtureData(comp, OSMOTIC, [1.0, 1.0], 0.0)
    with pytest.raises(UserError, match="water activity must lie in"):
        MixtureData(comp, WATER_ACTIVITY, [0.9, 1.2], 1e-4)
    with pytest.raises(UserError, match="cannot fit ln_gamma\\(H\\+\\)"):
        MixtureData(comp, ln_gamma("H+"), [0.0, 0.0], 0.01)


class _MeansOnly(SIT):
    """SIT as a model that gives only mean activity coefficients of mixtures."""

    id = "sit-means-only"

    def computes_for(self, composition):
        return frozenset({"ln_gamma_pm"}) if composition.single_salt is None else self.computes

    def compute(self, request):
        out = super().compute(request)
        keep = {q: v for q, v in out.values.items() if q.kind == "ln_gamma_pm"}
        return Computed(keep, {q: d for q, d in out.derivatives.items() if q in keep})


def test_a_quantity_the_model_cannot_give_is_a_user_error():
    data, _, _, _ = pitzer_data(0)
    with pytest.raises(UserError, match="cannot be fitted to these data: .*osmotic"):
        fit_mixture(_MeansOnly(), data, free=SIT_FREE, dh=SIT_DH)
    means = data.subset(np.array([q.kind == "ln_gamma_pm" for q in data.quantities]))
    assert fit_mixture(_MeansOnly(), means, free=SIT_FREE, dh=SIT_DH).ok
