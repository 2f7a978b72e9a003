"""The layout of the Pitzer mixture evaluation (plugins/_pitzer_mixture.py): what is cached per
ion list, per-row parameter values and the blocks of rows.

The layout (keys, positions, charge types) is made once per ion list and kept; values are read
at every call. The checks: a value changed between calls changes the result as the published
equations say (Pitzer, Activity Coefficients in Electrolyte Solutions, 2nd ed., 1991, ch. 3; the
form of Harvie, Møller and Weare, Geochim. Cosmochim. Acta 48, 723 (1984): theta_MN enters
ln gamma_M as 2 m_N theta_MN, phi as 2 m_M m_N theta_MN / sum m); a layout kept for one ion
list is not used for another; and the contract's rule that a row's values do not depend on the
other rows of the call (DEVELOPERS.md, "The contract": shape and vectorisation) holds across
the blocks the rows are evaluated in and with values that differ by row. Parameter values are
invented, of the published sizes.
"""

from __future__ import annotations

import numpy as np
import pytest

import saltbench.plugins._pitzer_mixture as mixture
from saltbench.chemistry.ions import KNOWN_IONS
from saltbench.chemistry.solution import Composition
from saltbench.models.contract import Conditions, ParameterKey, Request
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, ln_gamma
from saltbench.plugins.pitzer import Pitzer
from saltbench.water import debye_huckel_constants, with_a_phi

MODEL = Pitzer()
DH = with_a_phi(debye_huckel_constants(298.15), 0.392, "Pitzer and Mayorga (1973)")


def _comp(formulas, m) -> Composition:
    m = np.atleast_2d(np.asarray(m, dtype=float))
    return Composition(tuple(KNOWN_IONS[f] for f in formulas), m, np.full(m.shape[0], 298.15))


def _values(comp: Composition, seed: int = 3) -> dict[ParameterKey, np.ndarray]:
    rng = np.random.default_rng(seed)
    out = {}
    for key, p in MODEL.keys_for(comp).items():
        if p.fixed:
            v = 0.0 if key.name.startswith("alpha") else p.default
        elif key.name == "psi":
            v = rng.normal(0.0, 0.02)
        else:
            v = rng.normal(0.0, 0.1)
        out[key] = np.array([[v]])
    return out


def _all(comp: Composition) -> tuple:
    return tuple(ln_gamma(n) for n in comp.names) + (OSMOTIC, WATER_ACTIVITY)


def _run(comp, values):
    return MODEL.compute(Request(comp, _all(comp), values, Conditions.single(DH, comp.n))).values


def test_a_theta_changed_between_calls_changes_the_result_as_the_equations_say():
    # NaCl + KCl: equal charges, so no Etheta; theta(K, Na) enters ln gamma(Na+) as
    # 2 m_K theta and phi as 2 m_Na m_K theta / sum m (Pitzer 1991, ch. 3)
    comp = _comp(("Na", "K", "Cl"), [[1.0, 0.5, 1.5], [0.2, 0.3, 0.5]])
    values = _values(comp)
    key = next(k for k in values if k.name == "theta")  # the only like pair: K+ and Na+
    before = _run(comp, values)
    values[key] = values[key] + 0.05  # the same composition, so the cached layout is used
    after = _run(comp, values)
    m_na, m_k = comp.molality[:, 0], comp.molality[:, 1]
    np.testing.assert_allclose(after[ln_gamma("Na+")] - before[ln_gamma("Na+")],
                               [2.0 * 0.05 * m_k], rtol=1e-10)
    np.testing.assert_allclose(after[ln_gamma("K+")] - before[ln_gamma("K+")],
                               [2.0 * 0.05 * m_na], rtol=1e-10)
    np.testing.assert_allclose(after[OSMOTIC] - before[OSMOTIC],
                               [2.0 * 0.05 * m_na * m_k / comp.molality.sum(axis=1)],
                               rtol=1e-10)


def test_a_layout_kept_for_one_ion_list_is_not_used_for_another():
    # The same ions in another order, and another ion of the same count and charge: each must
    # give what it gives evaluated with no layout kept
    first = _comp(("Na", "K", "Cl"), [1.0, 0.5, 1.5])
    moved = _comp(("K", "Na", "Cl"), [0.5, 1.0, 1.5])
    other = _comp(("Na", "Li", "Cl"), [1.0, 0.5, 1.5])
    values = _values(first)
    by_set = {(k.name, frozenset(k.owner)): v for k, v in values.items()}
    values_moved = {k: by_set[(k.name, frozenset(k.owner))] for k in MODEL.keys_for(moved)}
    values_other = _values(other, seed=4)
    mixture._LAYOUTS.clear()
    fresh = [_run(c, v) for c, v in ((moved, values_moved), (other, values_other))]
    _run(first, values)  # its layout is now kept, then each other list is evaluated
    kept = [_run(c, v) for c, v in ((moved, values_moved), (other, values_other))]
    for a, b in zip(fresh, kept):
        for q in a:
            np.testing.assert_array_equal(b[q], a[q])
    # and the order of the ions changes nothing (the same solution, the same parameters)
    a = _run(first, values)
    for ion in ("Na+", "K+", "Cl-"):
        np.testing.assert_allclose(fresh[0][ln_gamma(ion)], a[ln_gamma(ion)], rtol=1e-13)


@pytest.mark.parametrize("block", [1, 4, 7])
def test_rows_evaluated_in_blocks_are_those_evaluated_alone(monkeypatch, block):
    # A seawater-like brine of five ions (invented amounts) at 11 dilutions, evaluated in
    # blocks of a few rows, against each row alone and against one block of all rows
    formulas = ("Na", "Mg", "Ca", "Cl", "SO4")
    base = np.array([1.0, 0.1, 0.05, 1.1, 0.1])
    comp = _comp(formulas, base * np.linspace(0.01, 2.0, 11)[:, None])
    values = _values(comp)
    whole = _run(comp, values)
    monkeypatch.setattr(mixture, "_ROW_CHUNK", block)
    blocks = _run(comp, values)
    for q in whole:
        np.testing.assert_allclose(blocks[q], whole[q], rtol=1e-13, atol=1e-15)
    for row in (0, 5, 10):
        alone = _run(comp.rows(np.array([row])), values)
        for q in whole:
            np.testing.assert_allclose(alone[q][:, 0], whole[q][:, row], rtol=1e-13, atol=1e-15)


def test_values_per_row_are_those_of_each_row_alone(monkeypatch):
    # A temperature form gives each row its own value (S, N): beta0, theta, psi, alpha1 and b
    # per row here, two parameter sets at once, each row at its own temperature (its own
    # A_phi); each row must equal the row alone with its values
    formulas = ("Na", "Mg", "Cl", "SO4")
    m = np.array([1.0, 0.1, 1.1, 0.1]) * np.linspace(0.2, 2.0, 5)[:, None]
    comp = Composition(tuple(KNOWN_IONS[f] for f in formulas), m,
                       np.linspace(283.15, 323.15, 5))
    rng = np.random.default_rng(11)
    values = {}
    for key, v in _values(comp).items():
        v = np.repeat(v, 2, axis=0)  # (2, 1)
        if key.name in ("beta0", "theta", "psi"):
            v = v + rng.normal(0.0, 0.01, (2, comp.n))
        elif key.name == "alpha1":
            v = rng.uniform(1.0, 3.0, (2, comp.n))
        elif key.name == "b":
            v = rng.uniform(1.0, 1.4, (2, comp.n))
        values[key] = v

    def run(c, v):
        return MODEL.compute(Request(c, _all(c), v, Conditions.of(c))).values

    monkeypatch.setattr(mixture, "_ROW_CHUNK", 2)
    whole = run(comp, values)
    for row in range(comp.n):
        own = {k: v[:, row:row + 1] if v.shape[1] > 1 else v for k, v in values.items()}
        alone = run(comp.rows(np.array([row])), own)
        for q in whole:
            np.testing.assert_allclose(alone[q][:, 0], whole[q][:, row], rtol=1e-12, atol=1e-15)
