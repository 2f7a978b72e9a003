"""One model over whole solutions: each ion, each salt its ions form, the solvent."""

import math

import numpy as np
import pytest

from saltbench.api import Session
from saltbench.chemistry.electrolyte import neutral_salt, parse_formula
from saltbench.chemistry.solution import Composition
from saltbench.errors import ModelDomainError
from saltbench.models.evaluate import evaluate
from saltbench.models.solution_eval import evaluate_solution, pair_salts
from saltbench.water.debye_huckel import debye_huckel_constants


@pytest.fixture(scope="module")
def registry():
    return Session(":memory:").registry


def test_neutral_salt_writes_formulas_as_the_handbook_does():
    # Every bundled electrolyte's name is its formula as the CRC tables print it (CRC Handbook,
    # "Mean activity coefficients of electrolytes"); the salt made from its two ions must read
    # back the same, parentheses and all.
    names = list(Session(":memory:").electrolytes()["electrolyte"])
    assert len(names) > 80
    for name in names:
        e = parse_formula(name)
        assert neutral_salt(e.cation, e.anion) == e, name


def test_pair_salts_of_a_seawater_like_mixture():
    comp = Composition.of_salts([(parse_formula("NaCl"), 0.5), (parse_formula("MgSO4"), 0.03)])
    assert [s.name for s in pair_salts(comp)] == ["NaCl", "Na2SO4", "MgCl2", "MgSO4"]


def test_one_salt_agrees_with_the_one_salt_evaluation(registry):
    # The same model on a solution of NaCl alone, by both routes (the contract's two faces).
    m = np.array([0.1, 1.0, 3.0])
    comp = Composition.of_salt(parse_formula("NaCl"), m)
    for mid in ("davies", "sit", "pitzer", "bromley", "stokes-robinson"):
        model = registry.model(mid)
        one = evaluate(model, parse_formula("NaCl"), m)
        both = evaluate_solution(model, comp)
        np.testing.assert_allclose(both.ln_gamma_pm["NaCl"], one.ln_gamma_pm, rtol=1e-12, err_msg=mid)
        np.testing.assert_allclose(both.osmotic, one.osmotic, rtol=1e-10, err_msg=mid)
        np.testing.assert_allclose(both.water_activity, one.water_activity, rtol=1e-12, err_msg=mid)


def test_davies_in_a_mixture_against_the_published_equation(registry):
    # Davies (Ion Association, 1962, p. 41): log10 gamma_i = -A z_i^2 (sqrt I/(1 + sqrt I) - 0.3 I),
    # with A the Debye-Hückel constant of water at 25 °C (IAPWS through saltbench.water).
    comp = Composition.of_salts([(parse_formula("NaCl"), 0.05), (parse_formula("CaCl2"), 0.01)])
    r = evaluate_solution(registry.model("davies"), comp)
    i = 0.5 * (0.05 + 0.07 + 0.01 * 4)
    assert r.ionic_strength[0] == pytest.approx(i, rel=1e-14)
    a = debye_huckel_constants(298.15).a_gamma_log10
    f = math.sqrt(i) / (1 + math.sqrt(i)) - 0.3 * i
    for ion, z in (("Na+", 1), ("Ca+2", 2), ("Cl-", -1)):
        assert r.ln_gamma[ion][0] / math.log(10) == pytest.approx(-a * z * z * f, rel=1e-12)
    # ln gamma±(CaCl2) = (ln gamma(Ca) + 2 ln gamma(Cl)) / 3 (IUPAC Green Book, 2.13)
    assert r.ln_gamma_pm["CaCl2"][0] == pytest.approx(
        (r.ln_gamma["Ca+2"][0] + 2 * r.ln_gamma["Cl-"][0]) / 3, rel=1e-14)
    assert r.single_ion_convention  # the model states the convention its single ions rest on


def test_defaults_are_listed_and_given_values_used(registry):
    from saltbench.models.contract import ParameterKey

    comp = Composition.of_salts([(parse_formula("NaCl"), 1.0), (parse_formula("KCl"), 0.5)])
    sit = registry.model("sit")
    bare = evaluate_solution(sit, comp)
    assert set(bare.defaulted) == {ParameterKey("eps", ("Na+", "Cl-")), ParameterKey("eps", ("K+", "Cl-"))}
    given = evaluate_solution(sit, comp, {ParameterKey("eps", ("Na+", "Cl-")): 0.03})
    assert given.defaulted == (ParameterKey("eps", ("K+", "Cl-")),)
    # log10 gamma(Na+) gains eps m(Cl-) = 0.03 x 1.5 (Grenthe et al. 1992, appendix B)
    gain = (given.ln_gamma["Na+"][0] - bare.ln_gamma["Na+"][0]) / math.log(10)
    assert gain == pytest.approx(0.03 * 1.5, rel=1e-12)


def test_a_one_salt_model_refuses_a_mixture(registry):
    comp = Composition.of_salts([(parse_formula("NaCl"), 1.0), (parse_formula("KCl"), 0.5)])
    with pytest.raises(ModelDomainError):
        evaluate_solution(registry.model("stokes-robinson"), comp)
