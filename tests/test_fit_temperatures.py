"""Fitting across temperatures (issue 21, item 4): parameters as temperature forms, thermal data,
folds that leave out a temperature, which coefficients the data determine, and a saved set used
at another temperature.

Every data set here is synthetic, generated from stated coefficients plus Gaussian noise of
stated size (tests/temperature_data.py; the invented Saltmarsh scenario there), so the truth a
fit must recover is known. Outside checks: the binomial law of interval coverage (scipy.stats),
the Gibbs-Helmholtz relation L = -T^2 d(G/T)/dT (common practice, no source), and an independent
evaluation of the model at each temperature (saltbench.models.evaluate with the Debye-Hückel
constants of water at that temperature).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from fitting_models import ExtendedDH
from scipy import constants, stats
from temperature_data import TEMPERATURES, dataset_files, ext_dh_at_temperatures

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.fitting import FitData, fit
from saltbench.fitting.problem import Block, FitProblem, GlobalParameter
from saltbench.fitting.selection import TemperatureChoice, parse_temperatures
from saltbench.fitting.temperature_fit import cross_validate_temperatures, fit_temperatures
from saltbench.models.discovery import build_registry
from saltbench.models.evaluate import evaluate, make_context
from saltbench.models.temperature import REFERENCE_EXPANSION, values_at
from saltbench.models.thermal import thermal_properties

NACL = parse_formula("NaCl")
B_TRUTH = np.array([0.05, 4.0e-4, 0.0, 0.0])  # stated b(T) coefficients c0..c3 (invented)
A_TRUTH = 4.0  # Å (invented)
NO_CURVATURE = {"b.c2": 0.0, "b.c3": 0.0}


# -- fit data and selection --------------------------------------------------------------------
def test_fit_data_keep_each_points_temperature() -> None:
    plain = FitData.from_property("osmotic", [0.1, 0.2], [0.93, 0.92], 0.001)
    assert plain.temperature.tolist() == [298.15, 298.15]
    warm = FitData.from_property("osmotic", [0.1, 0.3], [0.94, 0.93], 0.001, temperature_k=[318.15, 318.18])
    both = FitData.concat([plain, warm])
    assert both.temperature.tolist() == [298.15, 298.15, 318.15, 318.18]
    assert both.subset(np.array([3, 0])).temperature.tolist() == [318.18, 298.15]
    assert both.select("osmotic").temperature.tolist() == both.temperature.tolist()
    assert both.up_to(0.15).temperature.tolist() == [298.15, 318.15]
    assert both.at_temperatures() == pytest.approx([298.15, 318.165])  # 318.15 and 318.18 are one
    frame = {"molality": [0.1, 0.1], "value": [0.9, 0.8], "uncertainty": [0.01, 0.01],
             "property": ["gamma_pm", "gamma_pm"], "dataset": ["a", "b"], "temperature_k": [288.15, 308.15]}
    assert FitData.from_frame(frame).temperature.tolist() == [288.15, 308.15]
    with pytest.raises(UserError, match="temperatures must be positive"):
        FitData.from_property("osmotic", [0.1], [0.9], 0.001, temperature_k=-1.0)


def _rows(temps):
    points = [{"temperature_k": t, "dataset": f"d{int(t)}", "source": "s", "origin": "user",
               "property": "osmotic", "molality": m, "value": 0.9, "uncertainty": 0.001}
              for t in temps for m in (0.5, 0.1)]
    meta = [{"key": f"d{int(t)}", "source": "s", "property": "osmotic", "content_hash": "h",
             "from_memory": 0, "origin": "user", "citation": "", "typed": "", "table_ref": ""} for t in temps]
    return points, meta


def test_selection_by_range_by_set_and_at_one_temperature() -> None:
    from saltbench.fitting.selection import select

    points, meta = _rows([288.15, 298.15, 298.17, 318.15])
    one = select(points, meta, NACL)  # today's call: 298.15 K within 0.05 K
    assert sorted(set(one.data.temperature.tolist())) == [298.15, 298.17]
    assert one.data.molality.tolist() == [0.1, 0.1, 0.5, 0.5]  # by molality, as before
    span = select(points, meta, NACL, temperatures=parse_temperatures("15C:25C"))
    assert sorted(set(span.data.temperature.tolist())) == [288.15, 298.15, 298.17]
    assert span.data.temperature.tolist() == sorted(span.data.temperature.tolist())
    some = select(points, meta, NACL, temperatures=TemperatureChoice(points_k=(288.15, 318.15)))
    assert sorted(set(some.data.temperature.tolist())) == [288.15, 318.15]
    with pytest.raises(UserError, match="no data for NaCl at 350-360 K"):
        select(points, meta, NACL, temperatures=parse_temperatures("350:360"))
    with pytest.raises(UserError, match="not a range"):
        parse_temperatures("320:300")
    with pytest.raises(UserError, match="expected a temperature with its unit"):
        parse_temperatures("warm:hot")
    # one parser for fit and compare: a unit after the last value is every bare value's
    assert parse_temperatures("15,25,40 C").points_k == pytest.approx((288.15, 298.15, 313.15))
    with pytest.raises(UserError, match="200-650 K"):
        parse_temperatures("0:900 C")


# -- coverage of the coefficients' standard errors ---------------------------------------------
SEEDS = range(200)
# A +-1 sigma normal interval holds the truth with probability 0.682689 (common practice, no
# source); over 200 independent data sets the count is binomial, and its two-sided 99.9 %
# interval (scipy.stats.binom) is what the count must fall in (as tests/test_fit_coverage.py).
P_1SIGMA = stats.norm.cdf(1) - stats.norm.cdf(-1)
LO, HI = stats.binom.interval(0.999, len(SEEDS), P_1SIGMA)


@pytest.fixture(scope="module")
def coverage_fits():
    model = ExtendedDH()
    out = []
    for seed in SEEDS:
        data = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=seed)
        out.append(fit_temperatures(model, [(NACL, data)], vary=["b"], fixed={"a": A_TRUTH},
                                    covariance_scaling="none"))
    return out


@pytest.mark.parametrize("j", range(4))
def test_coefficients_are_recovered_about_as_often_as_their_errors_claim(coverage_fits, j) -> None:
    name = f"b.c{j}"
    assert all(r.converged and r.temperature.undetermined == [] for r in coverage_fits)
    hits = sum(abs(r.value(name) - B_TRUTH[j]) <= r.stderr(name) for r in coverage_fits)
    assert LO <= hits <= HI, f"{name}: {hits}/200 covered, expected {LO:.0f}..{HI:.0f}"


def test_a_nonlinear_parameter_and_two_coefficients_recover_the_truth() -> None:
    # a free (nonlinear) and b(T) = c0 + c1 (T - Tr): within 3 standard errors on one data set
    r = fit_temperatures(ExtendedDH(), [(NACL, ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=11))],
                         vary=["b"], fixed=NO_CURVATURE)
    assert r.ok
    for name, truth in (("a", A_TRUTH), ("b.c0", B_TRUTH[0]), ("b.c1", B_TRUTH[1])):
        assert abs(r.value(name) - truth) <= 3 * r.stderr(name)


# -- the constant form and one temperature ------------------------------------------------------
def test_the_constant_form_is_the_fit_of_one_value_to_every_temperature() -> None:
    model = ExtendedDH()
    data = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=5)
    const = fit_temperatures(model, [(NACL, data)], form="constant")
    assert [p["name"] for p in const.parameters] == ["a.c0", "b.c0"]  # every free one takes the form
    # the same fit written by hand with the one-temperature machinery: one block per temperature
    # (contexts at that temperature), all blocks sharing the two parameters
    blocks = [Block(NACL, make_context(NACL, t), data.subset(np.abs(data.temperature - t) < 1e-9),
                    {"a": 0, "b": 1}) for t in TEMPERATURES]
    params = [GlobalParameter("a", "a", 0.5, 20.0, False, True, 4.0),
              GlobalParameter("b", "b", -2.0, 2.0, True, True, 0.0)]
    from saltbench.fitting.engine import run

    by_hand = run(FitProblem(model, blocks, params))
    assert const.value("a.c0") == pytest.approx(by_hand.value("a"), rel=1e-9)
    assert const.value("b.c0") == pytest.approx(by_hand.value("b"), rel=1e-9)
    assert const.chi2 == pytest.approx(by_hand.chi2, rel=1e-9)
    # and the expansion with its temperature terms held at zero is that fit again
    held = fit_temperatures(model, [(NACL, data)], vary=["b"], fixed={"b.c1": 0, "b.c2": 0, "b.c3": 0})
    assert held.value("b.c0") == pytest.approx(const.value("b.c0"), rel=1e-8)
    assert held.value("a") == pytest.approx(const.value("a.c0"), rel=1e-8)
    # the linear form is the expansion with its 1/T and ln T terms held at zero
    linear = fit_temperatures(model, [(NACL, data)], vary=["b"], form="linear", fixed={"a": A_TRUTH})
    curved_off = fit_temperatures(model, [(NACL, data)], vary=["b"],
                                  fixed={"a": A_TRUTH, "b.c2": 0, "b.c3": 0})
    for name in ("b.c0", "b.c1"):
        assert linear.value(name) == pytest.approx(curved_off.value(name), rel=1e-8)
        assert linear.stderr(name) == pytest.approx(curved_off.stderr(name), rel=1e-6)


def test_data_at_one_temperature_are_fitted_exactly_as_today() -> None:
    model = ExtendedDH()
    data = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=2, temperatures=(298.15,))
    today = fit(model, NACL, data)
    across = fit_temperatures(model, [(NACL, data)])
    assert across.values == today.values and across.stderrs == today.stderrs
    assert across.chi2 == today.chi2
    assert "one temperature" in across.temperature.note
    warm = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=2, temperatures=(318.15,))
    assert fit_temperatures(model, [(NACL, warm)]).values == fit(model, NACL, warm, temperature_k=318.15).values


# -- folds by temperature ------------------------------------------------------------------------
@pytest.mark.parametrize("fixed", [{**NO_CURVATURE, "a": A_TRUTH}, NO_CURVATURE])
def test_each_fold_leaves_out_one_temperature_and_predicts_it_from_the_others(fixed) -> None:
    model = ExtendedDH()
    data = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=8)
    cv = cross_validate_temperatures(model, [(NACL, data)], vary=["b"], fixed=fixed, scheme="by-temperature")
    assert cv.folds == 5 and cv.flags == []
    assert [row["temperature_k"] for row in cv.by_temperature()] == pytest.approx(TEMPERATURES)
    for f, t in enumerate(TEMPERATURES):
        held = np.abs(cv.temperature - t) < 1e-9
        assert np.all(cv.fold[held] == f) and np.all(cv.fold[~held] != f)
        # independently: fit the other four temperatures, evaluate the model at t
        rest = fit_temperatures(model, [(NACL, data.subset(np.abs(data.temperature - t) > 1e-9))],
                                vary=["b"], fixed=fixed)
        b = float(REFERENCE_EXPANSION.value([rest.value(f"b.c{j}") for j in range(4)], t)[0])
        ev = evaluate(model, NACL, cv.molality[held], {"a": rest.value("a"), "b": b},
                      ctx=make_context(NACL, t))
        expected = np.where(cv.kind[held] == "osmotic", ev.osmotic, ev.ln_gamma_pm)
        assert cv.prediction[held] == pytest.approx(expected, abs=2e-7)
    with pytest.raises(UserError, match="two temperatures"):
        cross_validate_temperatures(model, [(NACL, data.subset(data.temperature < 280))],
                                    vary=["b"], fixed=fixed, scheme="by-temperature")


# -- which coefficients the data determine ----------------------------------------------------
def test_a_third_coefficient_from_two_temperatures_is_undetermined() -> None:
    model = ExtendedDH()
    two = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=4, temperatures=(288.15, 308.15))
    r = fit_temperatures(model, [(NACL, two)], vary=["b"], fixed={"b.c2": 0.0})
    s = r.temperature
    # b at two temperatures fixes two combinations of c0, c1 and c3: one direction is free
    assert s.undetermined == ["b.c1", "b.c3"]
    by_name = {x.name: x for x in s.reports}
    assert by_name["a"].determined and by_name["b.c0"].determined
    assert by_name["b.c0"].conditional and by_name["b.c0"].stderr > 0
    assert abs(by_name["b.c0"].value - B_TRUTH[0]) < 4 * by_name["b.c0"].stderr
    # five temperatures determine all three
    five = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=4)
    assert fit_temperatures(model, [(NACL, five)], vary=["b"], fixed={"b.c2": 0.0}).temperature.undetermined == []


def test_coefficients_the_data_cannot_tell_from_zero_are_said_so() -> None:
    r = fit_temperatures(ExtendedDH(), [(NACL, ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=3))],
                         vary=["b"], fixed={"a": A_TRUTH})
    by_name = {x.name: x for x in r.temperature.reports}
    assert by_name["b.c0"].resolved
    # the four terms over 5-55 °C are nearly collinear: c2 and c3 (truly zero) are not resolved
    assert not by_name["b.c2"].resolved and not by_name["b.c3"].resolved


def test_mistakes_in_the_request_are_one_line_errors() -> None:
    model = ExtendedDH()
    data = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=1)
    with pytest.raises(UserError, match="no coefficient 'b.c7'|no parameter 'b.c7'"):
        fit_temperatures(model, [(NACL, data)], fixed={"b.c7": 0})
    with pytest.raises(UserError, match="a does not vary with temperature"):
        fit_temperatures(model, [(NACL, data)], vary=["b"], fixed={"a.c1": 0})
    with pytest.raises(UserError, match="no parameter 'q' to vary"):
        fit_temperatures(model, [(NACL, data)], vary=["q"])
    with pytest.raises(UserError, match="unknown temperature form"):
        fit_temperatures(model, [(NACL, data)], form="cubic")


# -- thermal data ------------------------------------------------------------------------------
PITZER = build_registry().model("pitzer")
P_TRUTH = {"beta0": (0.08, 5e-4), "beta1": (0.25, 1e-3), "C_phi": (0.001, -2e-5)}  # invented
CP2_TRUTH = 40.0  # J/(K mol), invented
HELD = {f"{p}.c{j}": 0.0 for p in P_TRUTH for j in (2, 3)}


def _pitzer_at(t: float) -> dict[str, float]:
    return values_at("reference-expansion", {k: v[0] for k, v in P_TRUTH.items()},
                     {k: {"c1": v[1]} for k, v in P_TRUTH.items()}, t)


def _thermal_data(seed: int) -> FitData:
    rng = np.random.default_rng(seed)
    m = np.round(np.linspace(0.1, 3.0, 12), 3)
    parts = []
    for t in (288.15, 298.15, 318.15):
        ev = evaluate(PITZER, NACL, m, _pitzer_at(t), ctx=make_context(NACL, t))
        parts.append(FitData.from_property("osmotic", m, ev.osmotic + rng.normal(0, 0.001, m.size), 0.001,
                                           dataset=f"phi-{t}", temperature_k=t))
    for t in (298.15, 318.15):
        th = thermal_properties(PITZER, NACL, m, _pitzer_at, temperature_k=t)
        parts.append(FitData.from_property("L_phi", m, th.relative_enthalpy + rng.normal(0, 5.0, m.size), 5.0,
                                           dataset=f"L-{t}", temperature_k=t))
        parts.append(FitData.from_property("Cp_phi", m, CP2_TRUTH + th.relative_heat_capacity
                                           + rng.normal(0, 0.5, m.size), 0.5, dataset=f"Cp-{t}", temperature_k=t))
    return FitData.concat(parts)


def test_heats_and_heat_capacities_join_the_fit_and_recover_the_truth() -> None:
    data = _thermal_data(3)
    r = fit_temperatures(PITZER, [(NACL, data)], fixed=HELD)
    assert r.ok and r.temperature.undetermined == []
    for name, (c0, c1) in P_TRUTH.items():
        assert abs(r.value(f"{name}.c0") - c0) <= 4 * r.stderr(f"{name}.c0")
        assert abs(r.value(f"{name}.c1") - c1) <= 4 * r.stderr(f"{name}.c1")
    for ds in ("Cp-298.15", "Cp-318.15"):
        assert abs(r.value(f"Cp2[{ds}]") - CP2_TRUTH) <= 4 * r.stderr(f"Cp2[{ds}]")
    res = r.to_dict()["residuals"]
    assert res["L_phi"]["n"] == 24 and res["Cp_phi"]["n"] == 24
    kinds = {(row["temperature_k"], row["kind"]) for row in r.temperature.per_temperature}
    assert (318.15, "L_phi") in kinds and (288.15, "osmotic") in kinds and (288.15, "L_phi") not in kinds
    held_cp2 = fit_temperatures(PITZER, [(NACL, data)], fixed={**HELD, "Cp2[Cp-298.15]": CP2_TRUTH})
    assert held_cp2.parameters[[p["name"] for p in held_cp2.parameters].index("Cp2[Cp-298.15]")]["fixed"]
    # the enthalpies alone pin the temperature coefficients: without them c1 of C_phi is looser
    no_heat = fit_temperatures(PITZER, [(NACL, data.select(["osmotic"]))], fixed=HELD)
    assert r.stderr("C_phi.c1") < no_heat.stderr("C_phi.c1")


def test_thermal_data_alone_or_at_one_temperature_are_refused() -> None:
    data = _thermal_data(4)
    with pytest.raises(UserError, match="need activity or osmotic data"):
        fit_temperatures(PITZER, [(NACL, data.select(["L_phi"]))], fixed=HELD)
    with pytest.raises(UserError, match="fitted across temperatures only"):
        fit(PITZER, NACL, data.subset(np.abs(data.temperature - 298.15) < 1e-9))


def test_fits_at_one_temperature_report_their_residuals_as_before() -> None:
    r = fit(ExtendedDH(), NACL, ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=2, temperatures=(298.15,)))
    assert set(r.to_dict()["residuals"]) == {"ln_gamma", "osmotic", "chi2", "chi2_reduced", "n_points",
                                             "n_params", "dof"}
    assert "temperature_fit" not in r.to_dict()


# -- the command line, a saved set, and predict at another temperature ------------------------
QX_TRUTH = {"beta0": (0.08, 5e-4), "beta1": (0.25, 1e-3), "C_phi": (0.001, 0.0)}  # invented


def _qx_at(t: float) -> dict[str, float]:
    return values_at("reference-expansion", {k: v[0] for k, v in QX_TRUTH.items()},
                     {k: {"c1": v[1]} for k, v in QX_TRUTH.items()}, t)


@pytest.fixture
def qx_store(tmp_path, run_main):
    rng = np.random.default_rng(7)
    m = np.round(np.linspace(0.1, 3.0, 15), 3)
    table = {}
    for t in TEMPERATURES:
        ev = evaluate(PITZER, NACL, m, _qx_at(t), ctx=make_context(NACL, t))  # a 1-1 salt like QxCl
        table[t] = (m, ev.osmotic + rng.normal(0, 0.001, m.size))
    paths = dataset_files(tmp_path / "cells", table, uncertainty=0.001)
    store = tmp_path / "qx.sqlite"
    code, _, err = run_main("data", "add", *map(str, paths), store=store)
    assert code == 0, err
    return store


FIX_CURVATURE = [a for p in QX_TRUTH for j in (2, 3) for a in ("--fix", f"{p}.c{j}=0")]


def test_fit_across_temperatures_on_the_command_line_and_predict_elsewhere(qx_store, run_main) -> None:
    code, out, err = run_main("fit", "QxCl", "--model", "pitzer", "--temperatures", "5C:55C", *FIX_CURVATURE,
                              "--cross-validate", "by-temperature", "--name", "qx-cells", "--format", "json",
                              store=qx_store)
    assert code == 0, err
    doc = json.loads(out)
    tf = doc["temperature_fit"]
    assert tf["form"] == "reference-expansion" and tf["temperatures_k"] == pytest.approx(TEMPERATURES)
    assert tf["undetermined"] == []
    assert {r["name"] for r in tf["free"]} == {f"{p}.c{j}" for p in QX_TRUTH for j in (0, 1)}
    assert [row["temperature_k"] for row in tf["per_temperature"]] == pytest.approx(TEMPERATURES)
    assert len(doc["cross_validation"]["held_out_temperatures"]) == 5
    values = {p["name"]: p["value"] for p in doc["parameters"]}
    stderr = {p["name"]: p["stderr"] for p in doc["parameters"]}
    for name, (c0, c1) in QX_TRUTH.items():
        assert abs(values[f"{name}.c0"] - c0) <= 4 * stderr[f"{name}.c0"]
        assert abs(values[f"{name}.c1"] - c1) <= 4 * stderr[f"{name}.c1"]
    # the saved set carries the form and its coefficients ...
    from saltbench.api import Session, parameter_set

    stored = parameter_set(Session(qx_store), "qx-cells")
    assert stored["temperature_form"] == "reference-expansion"
    assert stored["temperature_range_k"] == pytest.approx([278.15, 328.15])
    further = {(c["name"], c["coefficient"]): c["value"] for c in stored["coefficients"]}
    assert further[("beta0", "c1")] == pytest.approx(values["beta0.c1"], rel=1e-12)
    first = {v["name"]: v["value"] for v in stored["values"]}
    assert first["beta0"] == pytest.approx(values["beta0.c0"], rel=1e-12)
    # ... so predict evaluates it at 45 °C, a temperature the data do not hold
    code, out, err = run_main("predict", "QxCl", "--model", "pitzer", "--params", "qx-cells",
                              "--temperature", "318.15", "--m", "1,2", "--format", "json", store=qx_store)
    assert code == 0, err
    rows = json.loads(out)
    fitted = values_at("reference-expansion", {p: values[f"{p}.c0"] for p in QX_TRUTH},
                       {p: {f"c{j}": values[f"{p}.c{j}"] for j in (1, 2, 3)} for p in QX_TRUTH}, 318.15)
    ev = evaluate(PITZER, NACL, [1.0, 2.0], {**fitted, "alpha": 2.0}, ctx=make_context(NACL, 318.15))
    assert [r["osmotic"] for r in rows] == pytest.approx(ev.osmotic.tolist(), rel=1e-9)
    truth = evaluate(PITZER, NACL, [1.0, 2.0], _qx_at(318.15), ctx=make_context(NACL, 318.15))
    # noise 0.001 on 75 points: the fitted curve is within a few thousandths of the truth
    assert [r["osmotic"] for r in rows] == pytest.approx(truth.osmotic.tolist(), abs=0.003)
    assert not any(r["extrapolated"] for r in rows)  # 45 °C lies inside the fitted range
    # params lists the fitted set among the fitted ones only, with its range
    code, out, err = run_main("params", "--kind", "fitted", "--format", "json", store=qx_store)
    assert code == 0, err
    assert "qx-cells" in {r["set_id"] for r in json.loads(out)}
    code, out, err = run_main("params", "--kind", "published", "--format", "json", store=qx_store)
    assert code == 0 and "qx-cells" not in {r["set_id"] for r in json.loads(out)}


def test_the_table_output_names_the_coefficients_and_the_temperatures(qx_store, run_main) -> None:
    code, out, err = run_main("fit", "QxCl", "--model", "pitzer", "--temperatures", "278.15,298.15,328.15",
                              "--vary", "beta0", "--fix", "beta0.c2=0", "--fix", "beta0.c3=0", "--no-save",
                              store=qx_store)
    assert code == 0, err
    assert "beta0.c1" in out and "beta1.c1" not in out and "beta1 " in out
    assert "residuals at each temperature" in out and "328.15" in out and "313.15" not in out


@pytest.mark.parametrize("args, message", [
    (["--temperature-form", "constant"], "need --temperatures"),
    (["--temperatures", "5C:55C", "--dh-constant", "0.39"], "water at each"),
    (["--temperatures", "5C:55C", "--fix", "beta0.c9=0"], "beta0.c9"),
    (["--temperatures", "5C:55C", "--cross-validate", "sideways"], "unknown scheme"),
    (["--temperatures", "90C:95C"], "no data for QxCl at 363.15-368.15 K"),
])
def test_command_line_mistakes(qx_store, run_main, args, message) -> None:
    code, out, err = run_main("fit", "QxCl", "--model", "pitzer", *args, "--no-save", store=qx_store)
    assert code == 2 and message in err and err.count("\n") == 1, err


# -- Gibbs-Helmholtz with a fitted set ------------------------------------------------------------
def test_l_phi_of_a_fitted_set_obeys_gibbs_helmholtz() -> None:
    # L_phi = -R T^2 d/dT [G_ex,phi/(R T)] with G_ex/(w_w R T) = m nu (1 - phi + ln gamma±) (Pitzer
    # 1991, ch. 3, from memory; common practice): the derivative by a plain central difference of
    # step 0.01 K, not the five-point stencil of saltbench.models.thermal
    data = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=6)
    r = fit_temperatures(ExtendedDH(), [(NACL, data)], vary=["b"])
    coef = r.temperature.coefficients["b"]
    assert set(coef) == {"c0", "c1", "c2", "c3"} and coef["c2"] != 0.0

    def at(t: float) -> dict[str, float]:
        return values_at("reference-expansion", {"a": r.value("a"), "b": coef["c0"]},
                         {"b": {k: v for k, v in coef.items() if k != "c0"}}, t)

    from saltbench.water.debye_huckel import debye_huckel_constants
    from saltbench.water.thermal_slopes import stencil_pressure

    m = np.array([0.1, 1.0, 2.0])
    t, h = 310.0, 0.01
    p = stencil_pressure(t, 0.5, None)

    def g(tt: float) -> np.ndarray:
        ev = evaluate(ExtendedDH(), NACL, m, at(tt),
                      ctx=make_context(NACL, dh=debye_huckel_constants(tt, p)))
        return 2 * (1.0 - ev.osmotic + ev.ln_gamma_pm)

    direct = -constants.R * t * t * (g(t + h) - g(t - h)) / (2 * h)
    lphi = thermal_properties(ExtendedDH(), NACL, m, at, temperature_k=t, pressure_pa=p).relative_enthalpy
    assert lphi == pytest.approx(direct, rel=1e-5)


def test_a_joint_fit_across_temperatures_is_its_salts_fitted_apart_when_they_share_nothing() -> None:
    # the test model's a and b belong to each salt: the joint fit is two independent fits
    model, kcl = ExtendedDH(), parse_formula("KCl")
    dn = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, NACL, seed=1)
    dk = ext_dh_at_temperatures(A_TRUTH, B_TRUTH, kcl, seed=2)
    joint = fit_temperatures(model, [(NACL, dn), (kcl, dk)], vary=["b"], fixed=NO_CURVATURE)
    assert joint.electrolyte == "NaCl + KCl"
    assert set(joint.temperature.coefficients) == {"b[NaCl]", "b[KCl]"}
    for salt, d in (("NaCl", dn), ("KCl", dk)):
        alone = fit_temperatures(model, [(salt, d)], vary=["b"], fixed=NO_CURVATURE)
        for name in ("b.c0", "b.c1"):
            joint_name = name.replace("b.", f"b[{salt}].")
            assert joint.value(joint_name) == pytest.approx(alone.value(name), rel=1e-6, abs=1e-9)
        assert joint.value(f"a[{salt}]") == pytest.approx(alone.value("a"), rel=1e-6)


def test_thermal_points_are_predicted_as_the_models_thermal_properties() -> None:
    # the fit's L_phi and C_p,phi - C°p,2 at the true coefficients are those of
    # saltbench.models.thermal.thermal_properties, to rounding
    from saltbench.fitting.temperature_problem import build_temperature_problem

    data = _thermal_data(5)
    problem = build_temperature_problem(PITZER, [(NACL, data)], fixed=HELD)
    truth = {f"{p}.c{j}": v[j] for p, v in P_TRUTH.items() for j in (0, 1)}
    truth.update({"Cp2[Cp-298.15]": 0.0, "Cp2[Cp-318.15]": 0.0})
    pred = problem.predict(problem.theta_from(truth))
    for t in (298.15, 318.15):
        th = thermal_properties(PITZER, NACL, problem.molality, _pitzer_at, temperature_k=t)
        for kind, expected in (("L_phi", th.relative_enthalpy), ("Cp_phi", th.relative_heat_capacity)):
            sel = (problem.kind == kind) & (np.abs(problem.point_temperature - t) < 1e-9)
            assert sel.sum() == 12
            assert pred[sel] == pytest.approx(expected[sel], rel=1e-9, abs=1e-9)
