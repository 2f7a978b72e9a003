"""The reference composition of standard seawater (Millero, Feistel, Wright and McDougall,
Deep-Sea Res. I 55, 50-72 (2008), the reference-composition table; typed from memory, as
saltbench.chemistry.seawater says) checked against what the paper states about it, and against
an independent formula for seawater's ionic strength."""

from __future__ import annotations

import numpy as np
import pytest

from saltbench.chemistry import seawater as sw
from saltbench.chemistry.ions import ATOMIC_WEIGHTS
from saltbench.curation.solutions import parse_inline

# the table prints X_j and w_j to 7 decimals: each carries at most half a unit of the last one
HALF_DIGIT = 0.5e-7


def test_the_table_is_charge_neutral_to_its_rounding():
    # sea salt is electrically neutral (Millero et al. 2008 build the composition so)
    net = sum(z * x for _, z, x, _, _ in sw.TABLE)
    assert abs(net) <= HALF_DIGIT * sum(abs(z) for _, z, _, _, _ in sw.TABLE)
    # and its mole and mass fractions sum to one
    assert sum(x for _, _, x, _, _ in sw.TABLE) == pytest.approx(1.0, abs=HALF_DIGIT * len(sw.TABLE))
    assert sum(w for *_, w in sw.TABLE) == pytest.approx(1.0, abs=HALF_DIGIT * len(sw.TABLE))


def test_the_table_gives_its_own_mean_molar_mass_and_z_squared():
    # M_S = sum X_j M_j = 31.4038218 g/mol and Z^2 = sum z_j^2 X_j = 1.2452898 (both stated in the paper)
    m_s = sum(x * m for _, _, x, m, _ in sw.TABLE)
    assert m_s == pytest.approx(31.4038218, abs=HALF_DIGIT * sum(m for *_, m, _ in sw.TABLE))
    assert sum(z * z * x for _, z, x, _, _ in sw.TABLE) == pytest.approx(1.2452898, abs=HALF_DIGIT * 4 * 15)
    # mass fractions w_j = X_j M_j / M_S, each to its printed digit
    for name, _, x, m, w in sw.TABLE:
        assert x * m / m_s == pytest.approx(w, abs=HALF_DIGIT * 1.1), name


def test_mass_of_the_record_gives_the_reference_salinity():
    # at S_P = 35 the reference salinity is 35.16504 g/kg (the definition of the scale). The record's
    # ions, weighed with saltbench's own molar masses (IUPAC 2021 atomic weights, not the paper's 2005
    # ones), plus the neutral B(OH)3 and CO2 it leaves out, per kg of solution, give it back; the two
    # editions of the atomic weights differ most for Cl (35.45 against 35.453), 0.0016 g/kg of chloride.
    r = sw.reference_seawater(35.0)
    ion_mass = float(r.molality @ np.array([i.molar_mass for i in r.ions])) * 1000  # g per kg of water
    neutral = {name: x for name, z, x, _, _ in sw.TABLE if z == 0}
    h, b, c, o = (ATOMIC_WEIGHTS[e] for e in ("H", "B", "C", "O"))
    neutral_mass = sw.total_molality(35.16504) * (neutral["B(OH)3"] * (b + 3 * (o + h))
                                                  + neutral["CO2"] * (c + 2 * o))
    solutes = ion_mass + neutral_mass  # g per kg of water
    assert 1000 * solutes / (1000 + solutes) == pytest.approx(35.16504, abs=0.003)


def test_ionic_strength_at_salinity_35():
    # I = 19.924 S / (1000 - 1.005 S) mol/kg-H2O (from memory of Dickson, Sabine and Christian, Guide
    # to Best Practices for Ocean CO2 Measurements, PICES Special Publication 3, 2007, chapter 5):
    # 0.72277 at S = 35; that formula predates the 2008 composition, hence the 0.001 allowed
    r = sw.reference_seawater(35.0)
    assert r.ionic_strength == pytest.approx(19.924 * 35 / (1000 - 1.005 * 35), abs=1e-3)
    assert r.ionic_strength == pytest.approx(0.72, abs=0.005)
    assert abs(r.charge_balance.percent[0]) < 1e-4
    assert r.cautions == ()
    assert r.typed.startswith("from memory of F. J. Millero") and "verify" in r.typed


def test_scaling_by_salinity_and_by_concentration_factor():
    base = sw.reference_seawater(35.0)
    # salinity: mass fractions constant per kg of solution, so m scales as S_R / (1000 - S_R)
    s70 = sw.reference_seawater(70.0)
    s_r35, s_r70 = 35.16504, 70.33008
    ratio = (s_r70 / (1000 - s_r70)) / (s_r35 / (1000 - s_r35))
    assert s70.molality == pytest.approx(ratio * base.molality, rel=1e-12)
    assert any("outside the open-ocean range" in c for c in s70.cautions)
    # a 2x concentrate on a water basis (half the water removed) doubles every molality; it is a little
    # less than S_P = 70, since that also counts the salt in the kilogram of solution
    x2 = sw.reference_seawater(35.0, concentration_factor=2.0)
    assert x2.molality == pytest.approx(2 * base.molality, rel=1e-14)
    assert x2.ionic_strength < s70.ionic_strength
    assert parse_inline("seawater x2").molality.tolist() == x2.molality.tolist()
    assert parse_inline("seawater S=70").molality.tolist() == s70.molality.tolist()

