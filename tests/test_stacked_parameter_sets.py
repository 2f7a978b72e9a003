"""One call for several parameter sets: ``ActivityModel.stacks_parameter_sets``.

Every equality here is a self-consistency check (no outside source): a model's stacked call
against the same model's calls for one set at a time. The formulas themselves are held to their
publications by each model's own tests (tests/test_model_*.py). The Stokes-Robinson domain edge
r m = h M_w m >= 1 is that of its hydration term ln(1 - r m) (Stokes and Robinson, J. Am. Chem.
Soc. 70, 1870 (1948)); the toy models are invented.
"""

from __future__ import annotations

import warnings
from dataclasses import replace

import numpy as np
import pytest
from doc_examples import developers_example

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import ModelDomainError
from saltbench.models import ActivityModel, Parameter, Validity
from saltbench.models.contract import stacked_sets
from saltbench.models.contract_kit import check_model
from saltbench.models.discovery import build_registry
from saltbench.models.evaluate import make_context
from saltbench.plugins.stokes_robinson import StokesRobinson
from saltbench.water import MOLAR_MASS_WATER

M = np.geomspace(1e-4, 4.0, 25)  # mol/kg
FUNCTIONS = ("ln_gamma_pm", "osmotic", "ln_gamma_ions", "jacobian", "values_and_jacobian")


def _stacking_builtins():
    reg = build_registry(use_environment=False)
    assert not reg.problems, reg.problems
    return sorted((i.model for i in reg.models.values()
                   if getattr(i.model, "stacks_parameter_sets", False)), key=lambda m: m.id)


STACKING = _stacking_builtins()


def _sets(model, e):
    """Three sets: the defaults, each free parameter a quarter of the way to its upper bound,
    and a quarter of the way to its lower bound (0.1 either way where a bound is infinite)."""
    base = model.defaults(e)
    up, down = dict(base), dict(base)
    for p in model.free_parameters(e):
        v = base[p.name]
        up[p.name] = v + (0.25 * (p.upper - v) if np.isfinite(p.upper) else 0.1)
        down[p.name] = v - (0.25 * (v - p.lower) if np.isfinite(p.lower) else 0.1)
    return [base, up, down]


def _stack(sets):
    return {name: np.array([[s[name]] for s in sets]) for name in sets[0]}


def _flat(out):
    """A function's output as a list of arrays in a fixed order (dict keys sorted)."""
    if out is None:
        return []
    if isinstance(out, dict):
        return [a for k in sorted(out) for a in _flat(out[k])]
    if isinstance(out, tuple):
        return [a for part in out for a in _flat(part)]
    return [np.asarray(out, dtype=float)]


def _assert_rows_equal(model, m, sets, ctx, rows=None):
    """Each function's stacked call, broadcast to (S, N), equals its call per set in ``rows``."""
    stacked = _stack(sets)
    rows = range(len(sets)) if rows is None else rows
    for name in FUNCTIONS:
        for c in (ctx, replace(ctx, wrt=frozenset(p.name for p in model.free_parameters(
                ctx.electrolyte)))):
            got = _flat(getattr(model, name)(m, stacked, c))
            for k in rows:
                want = _flat(getattr(model, name)(m, sets[k], c))
                assert len(got) == len(want), name
                for g, w in zip(got, want):
                    row = np.broadcast_to(g, (len(sets), m.size))[k]
                    np.testing.assert_allclose(row, w, rtol=1e-12, atol=0.0, err_msg=name)


def test_the_built_in_models_that_declare_it():
    assert {m.id for m in STACKING} == {
        "extended-debye-huckel", "extended-debye-huckel-ions", "huckel", "truesdell-jones",
        "b-dot", "meissner", "stokes-robinson"}


def test_the_default_is_off():
    assert ActivityModel.stacks_parameter_sets is False


@pytest.mark.parametrize("model", STACKING, ids=lambda m: m.id)
def test_declaring_built_ins_pass_the_contract_kit(model):
    assert check_model(model) == []


@pytest.mark.parametrize("formula", ["NaCl", "CaCl2"])
@pytest.mark.parametrize("model", STACKING, ids=lambda m: m.id)
def test_stacked_equals_looped_on_a_real_salt(model, formula):
    e = parse_formula(formula)
    assert model.supports(e)  # every declaring built-in takes 1-1 and 2-1 salts
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        _assert_rows_equal(model, M, _sets(model, e), make_context(e))


def test_stacked_sets_tells_floats_from_arrays():
    assert stacked_sets({"a": 4.0, "h": 3.5}) == 0
    assert stacked_sets({"a": 4.0, "h": np.array([[3.5], [4.0]])}) == 2


def test_stokes_robinson_marks_a_set_outside_its_domain_nan_in_its_row_only():
    model, e = StokesRobinson(), parse_formula("NaCl")
    ctx = make_context(e)
    h_bad = 20.0  # r m = 20 M_w 4 = 1.44 at 4 mol/kg, past the edge r m = 1
    assert h_bad * MOLAR_MASS_WATER * M[-1] >= 1.0
    sets = [{"h": 3.5, "a": 4.0}, {"h": h_bad, "a": 4.0}, {"h": 5.0, "a": 3.0}]
    with pytest.raises(ModelDomainError, match=r"^Stokes-Robinson with h = 20 is undefined above "
                       r"m = 2\.78 mol/kg \(the hydration would bind more water than there is\)$"):
        model.ln_gamma_pm(M, sets[1], ctx)
    stacked = _stack(sets)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a RuntimeWarning fails the test
        for name in FUNCTIONS:
            for arr in _flat(getattr(model, name)(M, stacked, ctx)):
                rows = np.broadcast_to(arr, (3, M.size))
                assert np.isnan(rows[1]).all(), name
                assert np.isfinite(rows[[0, 2]]).all(), name
        _assert_rows_equal(model, M, sets, ctx, rows=(0, 2))


def test_stokes_robinson_near_its_edge_runs_the_adaptive_rule_per_element_on_2d():
    # r m = 13.5 M_w m passes 0.9 above m = 3.70 mol/kg, where the adaptive quadrature takes over
    model, e = StokesRobinson(), parse_formula("NaCl")
    sets = [{"h": 13.5, "a": 4.0}, {"h": 3.5, "a": 5.0}, {"h": 13.0, "a": 3.0}]
    assert 13.5 * MOLAR_MASS_WATER * M[-1] > 0.9
    _assert_rows_equal(model, M, sets, make_context(e))


def test_stokes_robinson_with_only_one_parameter_stacked():
    model, e = StokesRobinson(), parse_formula("CaCl2")
    ctx = make_context(e)
    for name, values in (("a", [3.0, 4.0, 6.0]), ("h", [2.0, 8.0, 12.0])):
        other = "h" if name == "a" else "a"
        sets = [{name: v, other: 4.0} for v in values]
        mixed = {name: np.array([[v] for v in values]), other: 4.0}
        for fn in FUNCTIONS:
            got = _flat(getattr(model, fn)(M, mixed, ctx))
            for k, one in enumerate(sets):
                for g, w in zip(got, _flat(getattr(model, fn)(M, one, ctx)), strict=True):
                    np.testing.assert_allclose(np.broadcast_to(g, (3, M.size))[k], w,
                                               rtol=1e-12, atol=0.0)


# -- toy models (invented) ---------------------------------------------------------------------

@pytest.fixture(scope="module")
def example() -> dict:
    return developers_example("stacked sets")


def test_the_developers_example_runs_and_passes_the_kit(example):
    rows = example["rows"]
    assert rows.shape == (3, 3)
    assert np.isnan(rows[2]).all() and np.isfinite(rows[:2]).all()
    assert check_model(example["StackedToy"]()) == []


class FloatsOnly(ActivityModel):
    """Without the attribute: refuses arrays, so any stacked call from the kit or the adapter
    would fail. The limiting law plus c m (invented term)."""

    id = "floats-only-toy"
    name = "floats-only toy"
    citation = "P. Debye and E. Hückel, Phys. Z. 24, 185-206 (1923); the c m term is invented"
    parameters = (Parameter("c", "c", "kg/mol", 0.1, lower=-1.0, upper=1.0, linear=True),)
    validity = Validity(max_ionic_strength=1.0)

    def ln_gamma_pm(self, m, params, ctx):
        if not isinstance(params["c"], float):
            raise TypeError("floats only")
        s = np.sqrt(ctx.electrolyte.ionic_strength(m))
        return -ctx.dh.a_gamma * ctx.electrolyte.zz * s + params["c"] * np.asarray(m)


def test_a_model_without_the_attribute_is_called_with_floats_only():
    assert FloatsOnly.stacks_parameter_sets is False
    assert check_model(FloatsOnly()) == []


def _wrong(example, **overrides):
    return type("Wrong", (example["StackedToy"],), overrides)()


def test_the_kit_catches_rows_that_are_not_per_set(example):
    toy = example["StackedToy"]

    def pooled(self, m, params, ctx):  # right for one set, the mean of the sets for several
        return toy.ln_gamma_pm(self, m, {"c": float(np.mean(params["c"]))}, ctx)

    problems = check_model(_wrong(example, ln_gamma_pm=pooled), ["NaCl"])
    assert any("ln_gamma_pm with 3 stacked parameter sets" in p and "row" in p
               for p in problems), problems


def test_the_kit_catches_a_stacked_call_that_raises_warns_or_stays_finite(example):
    toy = example["StackedToy"]

    def raising(self, m, params, ctx):  # raises for the whole stack, as for one set
        if np.any(np.asarray(params["c"]) * m >= 1.0):
            raise ModelDomainError("c m >= 1")
        return toy.ln_gamma_pm(self, m, params, ctx)

    def warning(self, m, params, ctx):  # NaN from log of a negative number, unguarded
        return toy.ln_gamma_pm(self, m, params, ctx) + 0.0 * np.log(1.0 - params["c"] * m)

    def finite(self, m, params, ctx):  # the bad row keeps finite numbers
        if stacked_sets(params):
            s = np.sqrt(ctx.electrolyte.ionic_strength(m))
            return -ctx.dh.a_gamma * ctx.electrolyte.zz * s + params["c"] * m
        return toy.ln_gamma_pm(self, m, params, ctx)

    for fn, text in ((raising, "raised ModelDomainError"), (warning, "warned"),
                     (finite, "outside the domain")):
        problems = check_model(_wrong(example, ln_gamma_pm=fn), ["NaCl"])
        assert any(text in p and "stacked" in p for p in problems), (text, problems)
