"""The solution contract: compositions, keyed parameters, named quantities, batches, temperature
forms, the adapter for one-salt plugins and the contract kit's mixture checks."""

from __future__ import annotations

import importlib.util
import math
from pathlib import Path

import numpy as np
import pytest

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.chemistry.solution import Composition
from saltbench.models.contract import (
    ActivityModel,
    Conditions,
    ParameterKey,
    Request,
    SolutionModel,
)
from saltbench.models.contract_kit import assert_model_contract, check_model
from saltbench.models.evaluate import evaluate, make_context
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, ln_gamma, ln_gamma_pm
from saltbench.models.salt_view import salt_view
from saltbench.models.temperature import CONSTANT, REFERENCE_EXPANSION
from saltbench.plugins._ionic import IonicStrengthModel, size_g
from saltbench.plugins.davies import Davies
from saltbench.plugins.sit import SIT
from saltbench.water.debye_huckel import debye_huckel_constants
from saltbench.water.properties import MOLAR_MASS_WATER

FIXTURE = Path(__file__).parent / "fixtures" / "old_contract_plugin.py"
NACL, MGSO4, NA2SO4 = parse_formula("NaCl"), parse_formula("MgSO4"), parse_formula("Na2SO4")


def _old_plugin():
    spec = importlib.util.spec_from_file_location("old_contract_plugin", FIXTURE)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _request(model, comp, values, quantities, wrt=(), t=298.15):
    dh = debye_huckel_constants(t)
    params = {k: np.atleast_2d(np.asarray(v, dtype=float)).reshape(-1, 1)
              for k, v in values.items()}
    return Request(comp, tuple(quantities), params, Conditions.single(dh, comp.n), tuple(wrt))


# -- compositions --------------------------------------------------------------------------------
def test_ionic_strength_of_a_mixture_follows_its_definition():
    # I = 1/2 sum m_i z_i^2 (IUPAC Green Book, 3rd ed., 2007, 2.13): 0.1 NaCl + 0.2 MgSO4 + 0.05
    # Na2SO4 gives 1/2 (0.2*1 + 0.1*1 + 0.2*4 + 0.25*4) = 1.05 mol/kg
    comp = Composition.of_salts([(NACL, 0.1), (MGSO4, 0.2), (NA2SO4, 0.05)])
    assert comp.names == ("Na+", "Cl-", "Mg+2", "SO4-2")
    assert comp.of("Na+")[0] == pytest.approx(0.2)
    assert comp.of("SO4-2")[0] == pytest.approx(0.25)
    assert comp.ionic_strength[0] == pytest.approx(1.05, rel=1e-14)
    assert comp.single_salt is None
    assert Composition.of_salt(NACL, [0.1, 1.0]).single_salt == NACL


def test_a_composition_refuses_negative_molalities():
    from saltbench.errors import UserError
    with pytest.raises(UserError, match="non-negative"):
        Composition.of_salts([(NACL, -0.1)])


# -- keys ----------------------------------------------------------------------------------------
def test_parameters_are_keyed_by_what_they_belong_to():
    comp = Composition.of_salts([(NACL, 0.1), (MGSO4, 0.1)])
    keys = set(SIT().keys_for(comp))
    assert keys == {ParameterKey("eps", (c, a)) for c in ("Na+", "Mg+2") for a in ("Cl-", "SO4-2")}
    assert set(Davies().keys_for(comp)) == {ParameterKey("b")}
    assert SIT().parameter("eps").key_for(NACL) == ParameterKey("eps", ("Na+", "Cl-"))
    # a one-salt plugin's per-ion parameters are keyed by the ion, per-salt ones by the salt
    tj = [m for m in __import__("saltbench.plugins.truesdell_jones", fromlist=["x"])
          .register_models(context=None) if m.id == "truesdell-jones"][0]
    assert tj.salt_keys(NACL)["a_anion"] == ParameterKey("a", ("Cl-",))
    assert _old_plugin().LabHydrationModel().salt_keys(NACL)["b"] == ParameterKey("b", ("NaCl",))
    # Pitzer's binary parameters belong to the cation-anion pair, its b to the model
    # (Pitzer, J. Phys. Chem. 77, 268 (1973): b = 1.2 (kg/mol)^1/2 for every salt)
    pitzer = [m for m in __import__("saltbench.plugins.pitzer", fromlist=["x"])
              .register_models(context=None) if m.id == "pitzer"][0]
    keys = pitzer.salt_keys(MGSO4)
    assert keys["beta2"] == ParameterKey("beta2", ("Mg+2", "SO4-2"))
    assert keys["b"] == ParameterKey("b")


# -- the mixture models against their published forms --------------------------------------------
def test_davies_in_a_mixture_is_the_published_single_ion_form():
    # Davies (Ion Association, 1962): log10 gamma_i = -A z_i^2 (sqrt(I)/(1+sqrt(I)) - 0.3 I),
    # with A = 0.5091 (kg/mol)^1/2 at 25 °C (from memory of Robinson and Stokes, Electrolyte
    # Solutions, 2nd ed., 1959, appendix 7.1); the IAPWS-based A used here is about 0.2 % higher
    # (A_phi 0.3915 against their 0.3910; from memory of Archer and Wang, J. Phys. Chem. Ref.
    # Data 19, 371 (1990)), hence 2.5e-3 relative
    comp = Composition.of_salts([(NACL, [0.05, 0.2]), (MGSO4, [0.01, 0.05])])
    out = Davies().compute(_request(Davies(), comp, {ParameterKey("b"): 0.3},
                                    [ln_gamma("Mg+2"), ln_gamma("Cl-"), ln_gamma_pm("MgSO4")]))
    i = comp.ionic_strength
    shape = np.sqrt(i) / (1 + np.sqrt(i)) - 0.3 * i
    log_mg = out.values[ln_gamma("Mg+2")][0] / math.log(10)
    assert log_mg == pytest.approx(-0.5091 * 4 * shape, rel=2.5e-3)
    assert out.values[ln_gamma("Cl-")][0] / math.log(10) == pytest.approx(-0.5091 * shape, rel=2.5e-3)
    # the mean of a 2-2 salt is the mean of its ions (IUPAC Green Book, 2.13)
    assert out.values[ln_gamma_pm("MgSO4")][0] == pytest.approx(out.values[ln_gamma("Mg+2")][0])


def test_sit_in_a_mixture_adds_each_counter_ion_term():
    # SIT (Ciavatta 1980; Grenthe et al. 1992, appendix B): log10 gamma(Na+) = -D +
    # eps(Na,Cl) m(Cl) + eps(Na,SO4) m(SO4), D = A sqrt(I)/(1 + 1.5 sqrt(I))
    comp = Composition.of_salts([(NACL, 0.5), (NA2SO4, 0.2)])
    eps = {ParameterKey("eps", ("Na+", "Cl-")): 0.03, ParameterKey("eps", ("Na+", "SO4-2")): -0.12}
    out = SIT().compute(_request(SIT(), comp, eps, [ln_gamma("Na+")]))
    dh = debye_huckel_constants(298.15)
    s = math.sqrt(comp.ionic_strength[0])
    d = dh.a_gamma_log10 * s / (1 + 1.5 * s)
    expected = -d + 0.03 * 0.5 + (-0.12) * 0.2
    assert out.values[ln_gamma("Na+")][0, 0] / math.log(10) == pytest.approx(expected, rel=1e-12)


def test_the_mean_of_any_salt_formed_from_the_ions_present():
    # ln gamma±(NaNO3) in NaCl + KNO3 = (ln gamma(Na+) + ln gamma(NO3-)) / 2 (IUPAC Green Book, 2.13)
    kno3 = parse_formula("KNO3")
    comp = Composition.of_salts([(NACL, 0.1), (kno3, 0.2)])
    qs = [ln_gamma("Na+"), ln_gamma("NO3-"), ln_gamma_pm("NaNO3")]
    out = Davies().compute(_request(Davies(), comp, {ParameterKey("b"): 0.3}, qs))
    assert out.values[qs[2]][0, 0] == pytest.approx(
        0.5 * (out.values[qs[0]][0, 0] + out.values[qs[1]][0, 0]), rel=1e-14)
    from saltbench.errors import UserError
    with pytest.raises(UserError, match="ion Ca"):
        comp.salt("CaCl2")


def test_water_activity_follows_from_the_osmotic_coefficient():
    # ln a_w = -M_w phi sum_i m_i (IUPAC Green Book, 2.13), M_w = 18.015 g/mol
    comp = Composition.of_salts([(NACL, 1.0), (MGSO4, 0.3)])
    out = SIT().compute(_request(SIT(), comp, {k: 0.05 for k in SIT().keys_for(comp)},
                                 [OSMOTIC, WATER_ACTIVITY]))
    total = comp.molality.sum()
    assert math.log(out.values[WATER_ACTIVITY][0, 0]) == pytest.approx(
        -MOLAR_MASS_WATER * out.values[OSMOTIC][0, 0] * total, rel=1e-12)


def test_the_mixture_models_meet_the_kit_with_their_mixture_checks():
    for model in (Davies(), SIT()):
        assert_model_contract(model)


def test_one_salt_forms_are_unchanged_by_the_port():
    # the port keeps binary behaviour: SIT for NaCl as published for one salt,
    # log10 gamma± = -D + eps (2 nu+ nu- / nu) m (Grenthe et al. 1992, appendix B)
    m = np.array([0.1, 1.0, 3.0])
    ev = evaluate(SIT(), NACL, m, {"eps": 0.03})
    dh = debye_huckel_constants(298.15)
    s = np.sqrt(m)
    expected = -dh.a_gamma_log10 * s / (1 + 1.5 * s) + 0.03 * m
    np.testing.assert_allclose(ev.ln_gamma_pm / math.log(10), expected, rtol=1e-12)


def test_each_solution_is_computed_at_its_own_temperature():
    # Davies at 0 and 50 °C in one request: each row equals a request at that temperature alone
    # (A_gamma rises with temperature: the IAPWS-based A_phi is 0.3770 at 0 °C and 0.4102 at
    # 50 °C within 0.3 %, from memory of Archer and Wang, J. Phys. Chem. Ref. Data 19, 371 (1990))
    comp = Composition.of_salt(NACL, [0.1, 0.1], temperature_k=[273.15, 323.15])
    conditions = Conditions.of(comp)
    assert len(conditions.dh) == 2
    assert conditions.a_phi == pytest.approx([0.3770, 0.4102], rel=3e-3)
    q = ln_gamma_pm("NaCl")
    key = ParameterKey("b")
    both = Davies().compute(Request(comp, (q,), {key: np.array([[0.3]])}, conditions)).values[q][0]
    for row, t in enumerate((273.15, 323.15)):
        alone = Composition.of_salt(NACL, 0.1, temperature_k=t)
        one = Davies().compute(Request(alone, (q,), {key: np.array([[0.3]])},
                                       Conditions.of(alone))).values[q][0, 0]
        assert both[row] == pytest.approx(one, rel=1e-14)
    assert both[0] > both[1]  # larger A at 50 °C: lower ln gamma± in the dilute range


# -- batches and temperature forms --------------------------------------------------------------
def test_several_parameter_sets_are_evaluated_in_one_request():
    comp = Composition.of_salts([(NACL, [0.1, 0.5, 2.0]), (MGSO4, 0.1)])
    keys = list(SIT().keys_for(comp))
    sets = np.array([[0.0, 0.1, -0.05], [0.03, 0.02, 0.01], [0.05, -0.1, 0.2], [0.0, 0.0, 0.0]]).T
    batch = SIT().compute(_request(SIT(), comp, {k: sets[:, j % 3] for j, k in enumerate(keys)},
                                   [OSMOTIC]))
    assert batch.values[OSMOTIC].shape == (3, 3)
    for s in range(3):
        one = SIT().compute(_request(SIT(), comp, {k: sets[s, j % 3] for j, k in enumerate(keys)},
                                     [OSMOTIC]))
        np.testing.assert_allclose(batch.values[OSMOTIC][s], one.values[OSMOTIC][0], rtol=1e-14)


def test_reference_expansion_is_the_constant_at_the_reference_temperature():
    c = {"c0": 0.1, "c1": 2e-3, "c2": -40.0, "c3": 0.5}
    assert REFERENCE_EXPANSION.value(c, 298.15)[0] == pytest.approx(0.1, abs=1e-15)
    t = np.array([283.15, 348.15])
    # linear in the coefficients: the basis times the coefficient vector
    basis = REFERENCE_EXPANSION.basis(t)
    np.testing.assert_allclose(REFERENCE_EXPANSION.value(c, t),
                               basis @ np.array(list(c.values())), rtol=1e-14)
    np.testing.assert_allclose(basis[:, 1], t - 298.15)
    np.testing.assert_allclose(CONSTANT.value([0.3], t), [0.3, 0.3])


def test_a_temperature_form_reaches_a_model_as_values_per_solution():
    # Davies b(T) from a reference expansion, resolved per row; the chain rule
    # d ln gamma / d c_j = (d ln gamma / d b) f_j(T) agrees with central differences in c_j
    from saltbench.models.temperature import chain, resolve

    comp = Composition.of_salt(NACL, [0.2, 0.2], temperature_k=[288.15, 318.15])
    conditions = Conditions.of(comp)
    key, q = ParameterKey("b"), ln_gamma_pm("NaCl")
    forms = {key: REFERENCE_EXPANSION}
    coeffs = np.array([[0.3, 1e-3, 5.0, 0.02]])
    values = resolve(forms, {key: coeffs}, comp.temperature_k)
    assert values[key].shape == (1, 2)
    assert values[key][0] == pytest.approx(REFERENCE_EXPANSION.value(coeffs[0], comp.temperature_k))
    out = Davies().compute(Request(comp, (q,), values, conditions, (key,)))
    by_coefficient = chain(forms, out.derivatives[q], comp.temperature_k)
    h = 1e-6
    for j, name in enumerate(REFERENCE_EXPANSION.coefficients):
        step = np.zeros_like(coeffs)
        step[0, j] = h
        up = Davies().compute(Request(comp, (q,), resolve(forms, {key: coeffs + step},
                                                          comp.temperature_k), conditions))
        dn = Davies().compute(Request(comp, (q,), resolve(forms, {key: coeffs - step},
                                                          comp.temperature_k), conditions))
        np.testing.assert_allclose(by_coefficient[(key, name)][0],
                                   (up.values[q][0] - dn.values[q][0]) / (2 * h),
                                   rtol=1e-6, atol=1e-12)


# -- plugins written to the one-salt contract -----------------------------------------------------
def test_a_plugin_from_the_old_template_meets_the_contract_through_the_adapter():
    model = _old_plugin().register_models(context=None)[0]
    assert isinstance(model, ActivityModel) and isinstance(model, SolutionModel)
    assert_model_contract(model)
    m = np.array([0.05, 0.5, 1.0])
    ctx = make_context(NACL)
    comp = Composition.of_salt(NACL, m)
    keys = model.salt_keys(NACL)
    out = model.compute(_request(model, comp, {keys["a"]: 4.0, keys["b"]: 0.05},
                                 [ln_gamma_pm("NaCl"), OSMOTIC]))
    np.testing.assert_allclose(out.values[ln_gamma_pm("NaCl")][0],
                               model.ln_gamma_pm(m, {"a": 4.0, "b": 0.05}, ctx), rtol=1e-15)
    np.testing.assert_allclose(out.values[OSMOTIC][0],
                               model.osmotic(m, {"a": 4.0, "b": 0.05}, ctx), rtol=1e-15)
    assert salt_view(model) is model


def test_a_plugin_from_the_old_template_runs_from_the_command_line(run_main):
    for args in (("compare", "NaCl", "--models", "lab-hydration-model"),
                 ("fit", "NaCl", "--model", "lab-hydration-model"),
                 ("predict", "NaCl", "--model", "lab-hydration-model", "--m", "0.5",
                  "--params", "defaults")):
        code, out, err = run_main("--plugin", str(FIXTURE), *args)
        assert code == 0, (args, err)
        assert "Traceback" not in err


def test_a_one_salt_model_refuses_a_mixture_in_one_line():
    from saltbench.errors import ModelDomainError
    model = _old_plugin().register_models(context=None)[0]
    comp = Composition.of_salts([(NACL, 0.1), (MGSO4, 0.1)])
    with pytest.raises(ModelDomainError, match="written for one salt"):
        model.compute(_request(model, comp, {}, [OSMOTIC]))


# -- the kit's mixture checks fail when they should -----------------------------------------------
class _SharedLinearTerm(IonicStrengthModel):
    """Every ion gets the same b I whatever its charge: not the derivative of one Gibbs energy."""

    id, name, citation = "shared-linear-term", "Shared linear term", "invented for a test"

    def g_terms(self, request, i, s):
        return size_g(request.conditions.a_gamma, s, s) + ({},)

    def compute(self, request):
        out = super().compute(request)
        i = request.composition.ionic_strength
        for q in out.values:
            if q.kind in ("ln_gamma", "ln_gamma_pm"):
                out.values[q] = out.values[q] + 0.1 * i
            elif q == OSMOTIC:
                out.values[q] = out.values[q] + 0.05 * i
        return out


def test_the_kit_finds_broken_cross_differentials_in_a_mixture():
    problems = check_model(_SharedLinearTerm())
    assert any("cross-differentials differ" in p and "NaCl + MgSO4" in p for p in problems)
    # ions of one charge type share it harmlessly: 1-1 mixtures pass that check
    assert not any("cross-differentials" in p and p.startswith("NaCl + KCl") for p in problems)


class _OffOsmotic(IonicStrengthModel):
    id, name, citation = "off-osmotic", "Off osmotic", "invented for a test"

    def g_terms(self, request, i, s):
        g, excess = size_g(request.conditions.a_gamma, s, s)
        return g, 1.01 * excess, {}


def test_the_kit_finds_an_osmotic_coefficient_that_breaks_gibbs_duhem_in_a_mixture():
    problems = check_model(_OffOsmotic())
    assert any("Gibbs-Duhem along dilution" in p for p in problems)


def test_single_ion_values_come_with_their_convention():
    # Single-ion activity coefficients rest on a non-thermodynamic convention (Guggenheim,
    # J. Phys. Chem. 33, 842 (1929)): a model that gives them must say which
    from saltbench.models.contract import check_declaration
    from saltbench.models.discovery import build_registry

    class Unstated(_OffOsmotic):
        id = "unstated"
        single_ion_convention = ""

    assert "states no single_ion_convention" in " ".join(check_declaration(Unstated()))
    registry = build_registry([], ())
    givers = [i.model for i in registry.models.values() if "ln_gamma" in i.model.computes]
    assert {m.id for m in givers} >= {"davies", "sit", "truesdell-jones", "extended-debye-huckel"}
    assert all(m.single_ion_convention for m in givers)


# -- the harness's checked compute ----------------------------------------------------------------
def test_checked_compute_derives_phi_and_water_activity_for_one_salt():
    # a one-salt model without an analytic phi (the old template's form minus its osmotic):
    # phi by the Gibbs-Duhem integral, a_w = exp(-M_w phi sum m_i) (IUPAC Green Book, 2.13);
    # for Davies both agree with its closed form to the quadrature's 1e-12
    from saltbench.models.evaluate import compute

    comp = Composition.of_salt(NACL, [0.05, 0.5], temperature_k=[298.15, 318.15])
    conditions = Conditions.of(comp)
    davies = Davies()

    class MeanOnly(ActivityModel):
        id, name, citation = "mean-only", "Davies mean only", "Davies (1962), as a test"
        parameters = davies.parameters

        def ln_gamma_pm(self, m, params, ctx):
            return salt_view(davies).ln_gamma_pm(m, params, ctx)

    params = {ParameterKey("b"): np.array([[0.3], [0.2]])}
    wanted = (OSMOTIC, WATER_ACTIVITY)
    derived = compute(MeanOnly(), Request(comp, wanted, params, conditions))
    closed = compute(davies, Request(comp, wanted, params, conditions))
    assert "osmotic" not in MeanOnly().computes
    np.testing.assert_allclose(derived.values[OSMOTIC], closed.values[OSMOTIC], rtol=0, atol=1e-11)
    total = comp.molality.sum(axis=1)
    np.testing.assert_allclose(derived.values[WATER_ACTIVITY],
                               np.exp(-MOLAR_MASS_WATER * total * derived.values[OSMOTIC]), rtol=1e-14)


def test_checked_compute_turns_bad_plugin_output_into_one_error():
    from saltbench.errors import ModelDomainError, ModelError
    from saltbench.models.evaluate import compute

    class Broken(_OffOsmotic):
        id = "broken"

        def compute(self, request):
            out = super().compute(request)
            out.values = {q: v[:, :1] for q, v in out.values.items()}
            return out

    comp = Composition.of_salts([(NACL, [0.1, 0.2]), (MGSO4, 0.1)])
    with pytest.raises(ModelError, match="broken.*shape"):
        compute(Broken(), _request(Broken(), comp, {}, [OSMOTIC]))
    with pytest.raises(ModelDomainError, match="does not take"):
        compute(_old_plugin().LabHydrationModel(), _request(Davies(), comp, {}, [OSMOTIC]))
