"""The Zdanovskii-Stokes-Robinson rule (Zdanovskii 1936; Stokes and Robinson, J. Phys. Chem. 70,
2126 (1966)): sum_i m_i / m_i°(a_w) = 1, m_i° the molality of salt i alone at the same a_w."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.curation.parameters import read_parameter_file
from saltbench.errors import ModelDomainError
from saltbench.models.zsr import binary_water_activity, zsr_water_activity
from saltbench.plugins.pitzer import Pitzer
from saltbench.refdata import __file__ as _refdata
from saltbench.water.properties import MOLAR_MASS_WATER

PITZER_1973 = {r.target: {k: v for k, v in r.values.items() if k != "m_max"} for r in
               read_parameter_file(Path(_refdata).parent / "parameters"
                                   / "pitzer-mayorga-1973.csv").rows}


def _binary(salt: str):
    # Pitzer with the bundled Pitzer and Mayorga (1973) set (typed from memory of their Table 2)
    return binary_water_activity(Pitzer(), parse_formula(salt), PITZER_1973[salt])


def test_identical_binaries_give_the_binary_at_the_total_molality():
    # Exact case of the rule (Stokes and Robinson 1966): two salts whose binary solutions are
    # the same have m° equal for both, so m1/m° + m2/m° = 1 puts m° at m1 + m2.
    nacl = _binary("NaCl")
    m = np.array([[0.3, 0.7], [1.0, 2.0], [0.01, 0.0], [0.0, 4.5]])
    np.testing.assert_allclose(zsr_water_activity([nacl, nacl], m), nacl(m.sum(axis=1)),
                               rtol=1e-14)


def test_one_salt_gives_its_binary_and_no_salt_pure_water():
    kcl = _binary("KCl")
    m = np.array([[0.1], [2.0], [0.0]])
    np.testing.assert_allclose(zsr_water_activity([kcl], m)[:2], kcl(m[:2, 0]), rtol=1e-14)
    assert zsr_water_activity([kcl], m)[2] == 1.0


def test_the_root_satisfies_the_rule_by_scipy_inversion():
    # The solved a_w must satisfy sum m_i / m_i°(a_w) = 1 with each m_i° found independently
    # by scipy.optimize.brentq (a general-purpose reference library).
    salts = ["NaCl", "MgCl2", "Na2SO4"]
    binaries = [_binary(s) for s in salts]
    m = np.array([[0.4, 0.05, 0.03], [2.0, 0.5, 0.3], [0.05, 0.8, 0.0]])
    aw = zsr_water_activity(binaries, m)
    for row, a in zip(m, aw):
        total = 0.0
        for f, mi in zip(binaries, row):
            if mi:
                m0 = brentq(lambda x, f=f, a=a: float(f(np.array([x]))[0]) - a, 1e-6, 8.0, xtol=1e-15,
                            rtol=1e-14)
                total += mi / m0
        assert total == pytest.approx(1.0, abs=1e-10)


def test_rows_are_solved_independently():
    binaries = [_binary("NaCl"), _binary("CaCl2")]
    m = np.array([[0.2, 0.1], [3.0, 0.2], [0.5, 1.5]])
    together = zsr_water_activity(binaries, m)
    alone = np.concatenate([zsr_water_activity(binaries, m[k]) for k in range(3)])
    np.testing.assert_allclose(together, alone, rtol=1e-13)


def test_seawater_osmotic_coefficient():
    # Standard seawater at salinity 35 and 25 °C has an osmotic coefficient of about 0.90 (from
    # memory of the oceanographic literature, e.g. Millero's compilations of seawater
    # thermodynamics, which give 0.902 to 0.903). Composition (mol/kg), from memory of the
    # reference composition of Millero et al., Deep-Sea Res. I 55, 50 (2008), minor ions folded
    # into the major ones: Na 0.486, Mg 0.0547, Ca 0.0107, K 0.0106, Cl 0.5687, SO4 0.0293, read
    # as salts with SO4 as Na2SO4 (one of several assignments; MgSO4 in its place is not in the
    # bundled 1973 set). Tolerance 0.01: ZSR itself is good to a few 0.001 in phi for such
    # mixtures at I = 0.7 (Stokes and Robinson 1966), the binary Pitzer fits to about 0.003, and
    # the remembered value to its last digit.
    salts = ["NaCl", "Na2SO4", "KCl", "MgCl2", "CaCl2"]
    m = np.array([0.486 - 2 * 0.0293, 0.0293, 0.0106, 0.0547, 0.0107])
    aw = zsr_water_activity([_binary(s) for s in salts], m)[0]
    ions = sum(parse_formula(s).nu * x for s, x in zip(salts, m))
    phi = -np.log(aw) / (MOLAR_MASS_WATER * ions)
    assert phi == pytest.approx(0.90, abs=0.01)


def test_a_binary_that_cannot_reach_the_water_activity_is_refused():
    nacl = _binary("NaCl")

    def weak(m):  # a salt whose water activity falls ten times slower than NaCl's
        return nacl(np.asarray(m) / 10.0)

    with pytest.raises(ModelDomainError, match="does not reach"):
        zsr_water_activity([nacl, weak], np.array([[3.0, 1.0]]), max_molality=[6.0, 6.0])

    def flat(m):
        return np.full(np.shape(m), 0.9)

    with pytest.raises(ModelDomainError, match="does not fall with molality"):
        zsr_water_activity([nacl, flat], np.array([[1.0, 1.0]]))
