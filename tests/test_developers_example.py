"""DEVELOPERS.md's worked example of a model for two salts runs as written and meets the contract.

The example is Guggenheim's form (E. A. Guggenheim, Phil. Mag. 19, 588 (1935)); for one 1-1 salt
it gives ln gamma± = -A sqrt(I)/(1 + sqrt(I)) + 2 beta m, the form checked here.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from doc_examples import developers_example

from saltbench.models.contract_kit import assert_model_contract, check_model


@pytest.fixture(scope="module")
def example() -> dict:
    return developers_example("two-salt model")


def test_the_example_computes_two_salts_for_two_parameter_sets(example):
    out = example["out"]
    from saltbench.models.quantities import OSMOTIC, ln_gamma_pm
    assert out.values[ln_gamma_pm("NaCl")].shape == (2, 2)
    assert out.values[OSMOTIC].shape == (2, 2)
    assert set(out.derivatives[ln_gamma_pm("KCl")]) == set(example["keys"])


def test_the_example_meets_the_contract_with_its_mixture_checks(example):
    model = example["PairGuggenheim"]()
    assert_model_contract(model, params={"beta": 0.05})
    assert not [p for p in check_model(model, params={"beta": 0.05}) if "+" in p]


def test_the_example_is_guggenheims_form_for_one_salt(example):
    from saltbench.chemistry.electrolyte import parse_formula
    from saltbench.models.evaluate import evaluate
    from saltbench.water.debye_huckel import debye_huckel_constants
    m = np.array([0.01, 0.05, 0.1])
    ev = evaluate(example["PairGuggenheim"](), parse_formula("KCl"), m, {"beta": 0.1})
    a = debye_huckel_constants(298.15).a_gamma
    np.testing.assert_allclose(ev.ln_gamma_pm, -a * np.sqrt(m) / (1 + np.sqrt(m)) + 0.2 * m,
                               rtol=1e-12)
    assert math.isfinite(float(ev.osmotic[0]))
