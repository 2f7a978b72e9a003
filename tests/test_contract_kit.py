"""The contract kit: every built-in passes it, and it catches deliberately broken models."""

import numpy as np
import pytest

from saltbench.models import ActivityModel, Parameter, Validity
from saltbench.models.contract_kit import assert_model_contract, check_model
from saltbench.models.discovery import build_registry


def _builtins():
    reg = build_registry(use_environment=False)
    assert not reg.problems, reg.problems
    return sorted(reg.models.values(), key=lambda i: i.model.id)


BUILTINS = _builtins()


def test_all_families_registered():
    ids = {i.model.id for i in BUILTINS}
    assert {"debye-huckel-limiting", "extended-debye-huckel", "extended-debye-huckel-ions",
            "guntelberg", "huckel", "davies", "truesdell-jones", "b-dot", "bromley",
            "bromley-ions", "meissner", "sit", "stokes-robinson"} <= ids


@pytest.mark.parametrize("info", BUILTINS, ids=lambda i: i.model.id)
def test_every_builtin_passes(info):
    assert_model_contract(info.model)


class Good(ActivityModel):
    """The limiting law with a linear term c m: phi - 1 = -A|z+z-|sqrt(I)/3 + c m / 2
    (Debye and Hückel 1923; the linear term by Gibbs-Duhem, common practice, no source)."""

    id = "kit-good"
    name = "kit test model"
    citation = "P. Debye and E. Hückel, Phys. Z. 24, 185 (1923)"
    parameters = (Parameter("c", "c", "kg/mol", 0.1, lower=-1.0, upper=1.0, linear=True),)
    validity = Validity(max_ionic_strength=1.0)

    def ln_gamma_pm(self, m, params, ctx):
        s = np.sqrt(ctx.electrolyte.ionic_strength(m))
        return -ctx.dh.a_gamma * ctx.electrolyte.zz * s + params["c"] * np.asarray(m)

    def osmotic(self, m, params, ctx):
        s = np.sqrt(ctx.electrolyte.ionic_strength(m))
        return 1 - ctx.dh.a_gamma * ctx.electrolyte.zz * s / 3 + params["c"] * np.asarray(m) / 2

    def jacobian(self, m, params, ctx):
        m = np.asarray(m, dtype=float)
        return {"c": m}, {"c": m / 2}


def test_good_model_passes():
    assert check_model(Good()) == []


def _broken(**overrides):
    return type("Broken", (Good,), overrides)()


def _has(problems, text):
    return any(text in p for p in problems)


def test_catches_wrong_shape():
    bad = _broken(ln_gamma_pm=lambda self, m, p, c: np.zeros(3))
    assert _has(check_model(bad, ["NaCl"]), "has shape (3,)")


def test_catches_nan():
    def ln_g(self, m, p, c):
        out = Good.ln_gamma_pm(self, m, p, c)
        return np.where(np.asarray(m) > 0.5, np.nan, out)
    assert _has(check_model(_broken(ln_gamma_pm=ln_g), ["NaCl"]), "not finite")


def test_catches_inconsistent_osmotic():
    # phi - 1 = c m instead of c m / 2: breaks Gibbs-Duhem.
    def phi(self, m, p, c):
        return Good.osmotic(self, m, p, c) + p["c"] * np.asarray(m) / 2
    assert _has(check_model(_broken(osmotic=phi), ["NaCl"]), "breaks Gibbs-Duhem")


def test_catches_wrong_limiting_law():
    def ln_g(self, m, p, c):
        return 0.5 * Good.ln_gamma_pm(self, m, p, c)
    probs = check_model(_broken(ln_gamma_pm=ln_g, osmotic=lambda self, m, p, c: None), ["NaCl"])
    assert _has(probs, "limiting law")


def test_catches_non_pointwise_results():
    def ln_g(self, m, p, c):  # depends on the whole array: a vectorisation bug
        out = Good.ln_gamma_pm(self, m, p, c)
        return out + 1e-3 * np.mean(np.asarray(m))
    assert _has(check_model(_broken(ln_gamma_pm=ln_g, osmotic=lambda s, m, p, c: None),
                            ["NaCl"]), "not pointwise")


def test_catches_bad_single_ion_mean():
    def ions(self, m, p, c):
        ln = Good.ln_gamma_pm(self, m, p, c)
        return {"cation": ln, "anion": 2 * ln}
    assert _has(check_model(_broken(ln_gamma_ions=ions), ["NaCl"]), "do not average")


def test_catches_wrong_jacobian():
    def jac(self, m, p, c):
        m = np.asarray(m, dtype=float)
        return {"c": m}, {"c": m}  # d phi / d c should be m / 2
    assert _has(check_model(_broken(jacobian=jac), ["NaCl"]), "jacobian d phi/d c")


def _together(self, m, p, c):
    d_ln, d_phi = self.jacobian(m, p, c)
    return self.ln_gamma_pm(m, p, c), self.osmotic(m, p, c), d_ln, d_phi


def test_values_and_jacobian_that_agrees_passes():
    assert check_model(_broken(values_and_jacobian=_together)) == []


def test_catches_values_and_jacobian_that_disagrees():
    def off_phi(self, m, p, c):
        ln_g, phi, d_ln, d_phi = _together(self, m, p, c)
        return ln_g, phi + 1e-9, d_ln, d_phi  # a slip far below the Gibbs-Duhem tolerance

    def off_derivative(self, m, p, c):
        ln_g, phi, d_ln, d_phi = _together(self, m, p, c)
        return ln_g, phi, {"c": d_ln["c"] * (1 + 1e-9)}, d_phi

    assert _has(check_model(_broken(values_and_jacobian=off_phi), ["NaCl"]),
                "values_and_jacobian gives another phi")
    assert _has(check_model(_broken(values_and_jacobian=off_derivative), ["NaCl"]),
                "values_and_jacobian gives another d ln gamma±/d c")


def test_catches_jacobian_that_changes_with_wrt():
    def jac(self, m, p, c):
        m = np.asarray(m, dtype=float)
        scale = 1.0 if c.wrt is None else 1.0 + 1e-9  # asked for less, answers differently
        return {"c": m * scale}, {"c": m / 2}

    assert _has(check_model(_broken(jacobian=jac), ["NaCl"]),
                "jacobian with ctx.wrt = {'c'} gives another d ln gamma±/d c")


def test_catches_exceptions_and_declaration():
    def boom(self, m, p, c):
        raise RuntimeError("boom")
    assert _has(check_model(_broken(osmotic=boom), ["NaCl"]), "osmotic raised RuntimeError")
    assert _has(check_model(_broken(id="Bad Id"), ["NaCl"]), "lower-case")
    assert _has(check_model(Good(), ["NaCl"], params={"c": 5.0}), "outside")


def test_assert_lists_all_problems():
    bad = _broken(ln_gamma_pm=lambda self, m, p, c: np.zeros(3))
    with pytest.raises(AssertionError, match="NaCl: ln_gamma_pm has shape"):
        assert_model_contract(bad, ["NaCl", "CaCl2"])
