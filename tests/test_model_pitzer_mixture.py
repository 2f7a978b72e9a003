"""Pitzer's equations for mixtures (plugins/_pitzer_mixture.py): thermodynamic identities by
finite differences, reduction to the binary equations for one salt, derivatives, and the
contract kit with nonzero mixing parameters.

The identities are facts of thermodynamics, not of our code: every ln gamma_i is the derivative
of one excess Gibbs energy with respect to m_i, so d ln gamma_i / d m_k = d ln gamma_k / d m_i,
and d[sum_i m_i (phi - 1)] = sum_i m_i d ln gamma_i at constant T and p (Gibbs-Duhem; e.g.
Robinson and Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 2; Pitzer and Kim, J. Am. Chem.
Soc. 96, 5701 (1974), who use both for mixtures). The parameter values in these tests are
invented for the identities (any values must satisfy them), chosen of the published sizes.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.chemistry.ions import KNOWN_IONS
from saltbench.chemistry.solution import Composition
from saltbench.models.contract import Conditions, ParameterKey, Request
from saltbench.models.contract_kit import assert_model_contract
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, ln_gamma, ln_gamma_pm
from saltbench.plugins._pitzer_mixture import compute_mixture
from saltbench.plugins.pitzer import Pitzer
from saltbench.water import debye_huckel_constants, with_a_phi
from saltbench.water.properties import MOLAR_MASS_WATER

MODEL = Pitzer()
DH = with_a_phi(debye_huckel_constants(298.15), 0.392, "Pitzer and Mayorga (1973)")
SEA_IONS = tuple(KNOWN_IONS[f] for f in ("Na", "Mg", "Ca", "Cl", "SO4"))
# mol/kg: a concentrated seawater-like brine and a dilute one (invented compositions)
SEA_M = np.array([[1.0, 0.1, 0.05, 1.1, 0.1], [0.2, 0.02, 0.01, 0.22, 0.02]])


def _values(comp: Composition, seed: int = 7) -> dict[ParameterKey, np.ndarray]:
    """Invented parameters of published sizes for every key (alphas and b at their defaults)."""
    rng = np.random.default_rng(seed)
    charge = {ion.name: abs(ion.charge) for ion in comp.ions}
    out = {}
    for key, p in MODEL.keys_for(comp).items():
        two_two = all(charge[o] == 2 for o in key.owner)
        if key.name in ("alpha1", "alpha2"):
            # the charge-type values, given (0 would stand for them, not be differentiable)
            v = 12.0 if key.name == "alpha2" else 1.4 if two_two else 2.0
        elif p.fixed:
            v = p.default
        elif key.name == "beta1":
            v = rng.uniform(0.2, 3.0)
        elif key.name == "beta2":
            # only 2-2 pairs have one (Pitzer and Mayorga 1974)
            v = rng.uniform(-50.0, -20.0) if two_two else 0.0
        elif key.name == "psi":
            v = rng.normal(0.0, 0.02)
        else:
            v = rng.normal(0.0, 0.1)
        out[key] = np.array([[v]])
    return out


def _all(comp: Composition) -> tuple:
    return tuple(ln_gamma(n) for n in comp.names) + (OSMOTIC, WATER_ACTIVITY)


def _run(comp, values, quantities, wrt=()):
    return MODEL.compute(Request(comp, quantities, values, Conditions.single(DH, comp.n), wrt))


def _ions_and_phi(m: np.ndarray, values) -> tuple[np.ndarray, np.ndarray]:
    comp = Composition(SEA_IONS, m, np.full(m.shape[0], 298.15))
    out = _run(comp, values, _all(comp)).values
    ln = np.stack([out[ln_gamma(n)][0] for n in comp.names], axis=-1)
    return ln, out[OSMOTIC][0]


def test_sea_ions_have_unsymmetrical_terms_and_mixing_parameters():
    comp = Composition(SEA_IONS, SEA_M, np.full(2, 298.15))
    keys = MODEL.keys_for(comp)
    assert ParameterKey("theta", ("Na+", "Mg+2")) in keys
    assert ParameterKey("theta", ("Cl-", "SO4-2")) in keys
    assert ParameterKey("psi", ("Na+", "Mg+2", "Cl-")) in keys
    assert ParameterKey("psi", ("Na+", "Cl-", "SO4-2")) in keys
    # 3 cations x 2 anions: 6 pairs; 3 + 1 like pairs; 3 x 2 + 1 x 3 triplets
    assert sum(k.name == "theta" for k in keys) == 4
    assert sum(k.name == "psi" for k in keys) == 9


def test_cross_differentials_of_every_ion_pair():
    values = _values(Composition(SEA_IONS, SEA_M, np.full(2, 298.15)))
    k_ions = len(SEA_IONS)
    for row in range(SEA_M.shape[0]):
        m0 = SEA_M[row:row + 1]
        d = np.empty((k_ions, k_ions))
        for k in range(k_ions):
            h = 1e-6 * m0[0, k]
            up, dn = m0.copy(), m0.copy()
            up[0, k] += h
            dn[0, k] -= h
            d[:, k] = (_ions_and_phi(up, values)[0][0] - _ions_and_phi(dn, values)[0][0]) / (2 * h)
        assert np.abs(d).max() > 0.1  # the test has something to see
        np.testing.assert_allclose(d, d.T, rtol=1e-6, atol=1e-7)


def test_gibbs_duhem_by_finite_differences():
    # d[sum m (phi - 1)] / d m_k = sum_i m_i d ln gamma_i / d m_k, for each ion k
    values = _values(Composition(SEA_IONS, SEA_M, np.full(2, 298.15)))
    for row in range(SEA_M.shape[0]):
        m0 = SEA_M[row:row + 1]
        for k in range(len(SEA_IONS)):
            h = 1e-6 * m0[0, k]
            up, dn = m0.copy(), m0.copy()
            up[0, k] += h
            dn[0, k] -= h
            (lu, pu), (ld, pd) = _ions_and_phi(up, values), _ions_and_phi(dn, values)
            left = (up.sum() * (pu[0] - 1) - dn.sum() * (pd[0] - 1)) / (2 * h)
            right = m0[0] @ ((lu[0] - ld[0]) / (2 * h))
            assert left == pytest.approx(right, rel=1e-6, abs=1e-8)


def test_osmotic_coefficient_from_the_dilution_integral():
    # sum m (phi - 1) = sum_i m_i ln gamma_i(m) - int_0^1 sum_i m_i ln gamma_i(u m) du (the excess
    # Gibbs energy along dilution; Robinson and Stokes 1959, ch. 2), u = t^2 for the sqrt(I)
    # start, scipy.integrate.quad
    values = _values(Composition(SEA_IONS, SEA_M, np.full(2, 298.15)))
    m0 = SEA_M[:1]
    ln, phi = _ions_and_phi(m0, values)

    def integrand(t: float) -> float:
        return 2 * t * float(m0[0] @ _ions_and_phi(m0 * t * t, values)[0][0])

    integral, _ = quad(integrand, 0.0, 1.0, epsabs=1e-13, epsrel=1e-12, limit=200)
    expected = 1.0 + (float(m0[0] @ ln[0]) - integral) / m0.sum()
    assert phi[0] == pytest.approx(expected, abs=1e-9)


def test_water_activity_follows_from_phi():
    # ln a_w = -M_w phi sum m (IUPAC Green Book, 3rd ed., 2007, 2.13)
    comp = Composition(SEA_IONS, SEA_M, np.full(2, 298.15))
    out = _run(comp, _values(comp), (OSMOTIC, WATER_ACTIVITY)).values
    np.testing.assert_allclose(np.log(out[WATER_ACTIVITY][0]),
                               -MOLAR_MASS_WATER * out[OSMOTIC][0] * SEA_M.sum(axis=1), rtol=1e-13)


def test_means_of_salts_formed_from_the_ions():
    # ln gamma±(MgCl2) = (ln gamma(Mg) + 2 ln gamma(Cl)) / 3 (IUPAC Green Book, 2.13)
    comp = Composition(SEA_IONS, SEA_M, np.full(2, 298.15))
    qs = (ln_gamma("Mg+2"), ln_gamma("Cl-"), ln_gamma_pm("MgCl2"), ln_gamma_pm("Na2SO4"),
          ln_gamma("Na+"), ln_gamma("SO4-2"))
    out = _run(comp, _values(comp), qs).values
    np.testing.assert_allclose(out[qs[2]], (out[qs[0]] + 2 * out[qs[1]]) / 3, rtol=1e-14)
    np.testing.assert_allclose(out[qs[3]], (2 * out[qs[4]] + out[qs[5]]) / 3, rtol=1e-14)


def test_the_order_of_the_ions_does_not_matter():
    comp = Composition(SEA_IONS, SEA_M, np.full(2, 298.15))
    values = _values(comp)
    order = [4, 2, 0, 3, 1]
    other = Composition(tuple(SEA_IONS[j] for j in order), SEA_M[:, order], np.full(2, 298.15))
    # the same parameters under the other composition's keys (owners in its own order)
    by_set = {(k.name, frozenset(k.owner)): v for k, v in values.items()}
    moved = {k: by_set[(k.name, frozenset(k.owner))] for k in MODEL.keys_for(other)}
    a, b = _run(comp, values, _all(comp)).values, _run(other, moved, _all(comp)).values
    for q in _all(comp):
        np.testing.assert_allclose(b[q], a[q], rtol=1e-13)


def test_etheta_enters_only_for_unlike_charges():
    # NaCl + KCl: no unsymmetrical term (z equal), so with theta = psi = 0 the mixture is the
    # same as with Etheta switched off; NaCl + MgCl2 has one, which changes ln gamma(Na+)
    import saltbench.plugins._pitzer_mixture as mix

    nacl, kcl, mgcl2 = (parse_formula(f) for f in ("NaCl", "KCl", "MgCl2"))
    for salts, changes in (((nacl, kcl), False), ((nacl, mgcl2), True)):
        comp = Composition.of_salts([(salts[0], 1.0), (salts[1], 0.5)])
        values = _values(comp)
        values = {k: (np.zeros((1, 1)) if k.name in ("theta", "psi") else v)
                  for k, v in values.items()}
        q = (ln_gamma("Na+"), OSMOTIC)
        with_e = _run(comp, values, q).values
        real = mix.etheta
        try:
            mix.etheta = lambda zi, zj, i, a: (np.zeros_like(i), np.zeros_like(i))
            without = _run(comp, values, q).values
        finally:
            mix.etheta = real
        differs = abs(with_e[q[0]][0, 0] - without[q[0]][0, 0]) > 1e-6
        assert differs == changes


# -- one salt ----------------------------------------------------------------------------------
ONE_SALT = [
    # Pitzer and Mayorga (1973, 1974) sets as bundled in refdata/parameters/
    ("NaCl", {"beta0": 0.0765, "beta1": 0.2664, "C_phi": 0.00127}),
    ("CaCl2", {"beta0": 0.3159, "beta1": 1.614, "C_phi": -0.00034}),
    ("Na2SO4", {"beta0": 0.01958, "beta1": 1.113, "C_phi": 0.00497}),
    ("MgSO4", {"beta0": 0.2210, "beta1": 3.343, "beta2": -37.23, "C_phi": 0.0250}),
    ("LaCl3", {"beta0": 0.6105, "beta1": 5.487, "C_phi": -0.03198}),
]


@pytest.mark.parametrize("formula,params", ONE_SALT)
def test_one_salt_by_the_mixture_equations_is_the_binary_model(formula, params):
    # Pitzer (1991), ch. 3: the mixture equations reduce to eqs. 49-51 for one salt; here the
    # mixture code against the binary code, values and derivatives, to 1e-12 relative
    e = parse_formula(formula)
    m = np.geomspace(1e-4, 6.0, 40)
    comp = Composition.of_salt(e, m)
    defaults = MODEL.defaults(e)
    keys = MODEL.salt_keys(e)
    values = {k: np.array([[params.get(name, defaults[name])]]) for name, k in keys.items()}
    linear = tuple(keys[n] for n in ("beta0", "beta1", "beta2", "C_phi", "b"))
    qs = (ln_gamma_pm(formula), OSMOTIC)
    request = Request(comp, qs, values, Conditions.single(DH, comp.n), linear)
    binary = MODEL.compute(request)  # the binary fast path
    mixture = compute_mixture(request, MODEL.default_alphas)
    for q in qs:
        np.testing.assert_allclose(mixture.values[q], binary.values[q], rtol=1e-12)
        for k in linear:
            np.testing.assert_allclose(mixture.derivatives[q][k], binary.derivatives[q][k],
                                       rtol=1e-12, atol=1e-300)
    # and the same salt given as two ions, with no salt named, takes the mixture path
    ions = Composition(comp.ions, comp.molality, comp.temperature_k)
    assert ions.single_salt is None
    got = MODEL.compute(Request(ions, (ln_gamma_pm(formula),), values,
                                Conditions.single(DH, comp.n)))
    np.testing.assert_allclose(got.values[qs[0]], binary.values[qs[0]], rtol=1e-12)


def test_a_salt_at_vanishing_molality_in_another_leaves_the_other_alone():
    # NaCl + 1e-12 mol/kg KCl: NaCl's mean and phi are those of NaCl alone (to 1e-9)
    nacl, kcl = parse_formula("NaCl"), parse_formula("KCl")
    m = np.array([0.1, 1.0, 4.0])
    mix_comp = Composition.of_salts([(nacl, m), (kcl, 1e-12)])
    alone = Composition.of_salt(nacl, m)
    values = _values(mix_comp)
    single = {k: values[k] for k in MODEL.keys_for(alone)}
    qs = (ln_gamma_pm("NaCl"), OSMOTIC)
    a, b = _run(mix_comp, values, qs).values, _run(alone, single, qs).values
    for q in qs:
        np.testing.assert_allclose(a[q], b[q], rtol=1e-9)


# -- derivatives and the kit -----------------------------------------------------------------
def test_derivatives_of_every_key_against_central_differences():
    comp = Composition(SEA_IONS, SEA_M, np.full(2, 298.15))
    values = _values(comp)
    keys = tuple(values)
    qs = _all(comp) + (ln_gamma_pm("CaSO4"),)
    out = _run(comp, values, qs, keys)
    for key in keys:
        x0 = float(values[key][0, 0])
        h = 1e-6 * max(1.0, abs(x0))
        up = _run(comp, {**values, key: np.array([[x0 + h]])}, qs).values
        dn = _run(comp, {**values, key: np.array([[x0 - h]])}, qs).values
        for q in qs:
            fd = (up[q] - dn[q]) / (2 * h)
            np.testing.assert_allclose(out.derivatives[q][key], fd, rtol=1e-6, atol=1e-9,
                                       err_msg=f"d {q} / d {key}")


def test_two_parameter_sets_in_one_request():
    comp = Composition(SEA_IONS, SEA_M, np.full(2, 298.15))
    a, b = _values(comp, 1), _values(comp, 2)
    both = {k: np.vstack([a[k], b[k]]) for k in a}
    qs = _all(comp)
    out = _run(comp, both, qs).values
    one, two = _run(comp, a, qs).values, _run(comp, b, qs).values
    for q in qs:
        np.testing.assert_allclose(out[q][0], one[q][0], rtol=1e-13)
        np.testing.assert_allclose(out[q][1], two[q][0], rtol=1e-13)


def test_the_contract_kit_with_mixing_parameters():
    # the kit's mixtures (NaCl + KCl, NaCl + MgSO4, NaCl + CaCl2 + Na2SO4) with nonzero theta and
    # psi, and Etheta present in the last two; alphas given (0, their default, stands for the
    # charge-type value and has no finite differences)
    assert_model_contract(MODEL, params={"beta0": 0.1, "beta1": 0.5, "C_phi": 0.002,
                                         "theta": 0.03, "psi": -0.01, "alpha1": 2.0,
                                         "alpha2": 12.0})


def test_the_limiting_law_for_every_ion():
    # Debye and Hückel, Phys. Z. 24, 185 (1923): ln gamma_i -> -A_gamma z_i^2 sqrt(I), A_gamma =
    # 3 A_phi, at I = 1e-8 within 0.1 %
    comp = Composition(SEA_IONS, SEA_M[:1] * 1e-8 / (0.5 * SEA_M[0] @ [1, 4, 4, 1, 4]),
                       np.array([298.15]))
    out = _run(comp, _values(comp), _all(comp)).values
    root = math.sqrt(comp.ionic_strength[0])
    for ion in SEA_IONS:
        expected = -3 * 0.392 * ion.charge**2 * root
        assert out[ln_gamma(ion.name)][0, 0] == pytest.approx(expected, rel=1e-3)


def test_parameters_that_vary_by_row_give_each_row_its_own_values():
    # values (S, N) (a temperature form evaluated per row) against one row at a time; alphas
    # that differ between two sets take the general path of the alpha functions
    comp = Composition(SEA_IONS, SEA_M, np.full(2, 298.15))
    a, b = _values(comp, 3), _values(comp, 4)
    per_row = {k: np.array([[a[k][0, 0], b[k][0, 0]]]) for k in a}
    qs = _all(comp)
    out = _run(comp, per_row, qs, tuple(per_row)).values
    for row, vals in ((0, a), (1, b)):
        one = _run(comp.rows(slice(row, row + 1)), vals, qs).values
        for q in qs:
            np.testing.assert_allclose(out[q][0, row], one[q][0, 0], rtol=1e-13)
    key = ParameterKey("alpha1", ("Mg+2", "Cl-"))
    two = {k: np.vstack([v, v]) for k, v in a.items()}
    two[key] = np.array([[2.0], [2.5]])
    both = _run(comp, two, qs).values
    alt = _run(comp, {**a, key: np.array([[2.5]])}, qs).values
    for q in qs:
        np.testing.assert_allclose(both[q][1], alt[q][0], rtol=1e-13)
        np.testing.assert_allclose(both[q][0], _run(comp, a, qs).values[q][0], rtol=1e-13)


# -- random brines (hypothesis) ------------------------------------------------------------------
from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

BRINE_SALTS = ("NaCl", "KCl", "MgCl2", "CaCl2", "Na2SO4", "MgSO4", "HCl")


@st.composite
def brines(draw):
    """A solution of the salts above at 0 to 2 mol/kg each (at least one present), with
    parameters drawn in windows of the published sizes."""
    amounts = draw(st.lists(st.floats(0.0, 2.0), min_size=len(BRINE_SALTS),
                            max_size=len(BRINE_SALTS)))
    amounts = [a if a >= 1e-3 else 0.0 for a in amounts]  # absent, or present at 1e-3 or more
    if not any(amounts):
        amounts[0] = 0.5
    comp = Composition.of_salts([(parse_formula(f), a) for f, a in zip(BRINE_SALTS, amounts)])
    seed = draw(st.integers(0, 2**31 - 1))
    return comp, _values(comp, seed)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(brines())
def test_cross_differentials_and_gibbs_duhem_hold_for_random_brines(case):
    # the two identities of the module docstring, for solutions of up to 5 cations and 2 anions
    # (with H+, Etheta for 1-2 mixing on both sides), by central differences; 1e-5 relative
    # (ten times the fixed brine's) because an ion at 1e-3 mol/kg gets a step of 1e-9 mol/kg
    comp, values = case
    m0 = comp.molality
    present = np.flatnonzero(m0[0] > 0)

    def at(m):
        c = comp.with_molality(m)
        out = _run(c, values, tuple(ln_gamma(n) for n in c.names) + (OSMOTIC,)).values
        return np.array([out[ln_gamma(n)][0, 0] for n in c.names]), out[OSMOTIC][0, 0]

    d = np.zeros((len(comp.names), len(comp.names)))
    gd_left = np.zeros(len(comp.names))
    for k in present:
        h = 1e-6 * m0[0, k]
        up, dn = m0.copy(), m0.copy()
        up[0, k] += h
        dn[0, k] -= h
        (lu, pu), (ld, pd) = at(up), at(dn)
        d[:, k] = (lu - ld) / (2 * h)
        gd_left[k] = (up.sum() * (pu - 1) - dn.sum() * (pd - 1)) / (2 * h)
    sub = d[np.ix_(present, present)]
    np.testing.assert_allclose(sub, sub.T, rtol=1e-5, atol=1e-6)
    np.testing.assert_allclose(gd_left[present], m0[0] @ d[:, present], rtol=1e-5, atol=1e-6)
