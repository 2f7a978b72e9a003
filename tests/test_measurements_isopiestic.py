"""Isopiestic reduction: KCl against NaCl reference solutions."""

import numpy as np
import pytest
from scipy.interpolate import CubicSpline, PchipInterpolator
from scipy.optimize import brentq

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.measurements import osmotic_from_isopiestic, water_activity_from_osmotic

# Osmotic coefficients at 25 °C: from memory of Robinson and Stokes, Electrolyte Solutions,
# 2nd ed. (1959), Appendix 8.10 (NaCl and KCl); verify against the original before use in a
# regulated method.
NACL_M = np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0, 1.2, 1.4, 1.6, 1.8, 2.0,
                   2.5, 3.0])
NACL_PHI = np.array([0.9324, 0.9245, 0.9215, 0.9203, 0.9209, 0.9230, 0.9257, 0.9288, 0.9320,
                     0.9355, 0.9428, 0.9513, 0.9616, 0.9723, 0.9833, 1.0130, 1.0453])
KCL_M = np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0, 1.2, 1.4, 1.6, 1.8, 2.0])
KCL_PHI = np.array([0.9266, 0.9130, 0.9063, 0.9017, 0.9000, 0.8987, 0.8980, 0.8977, 0.8976,
                    0.8974, 0.8986, 0.9008, 0.9034, 0.9066, 0.9104])

NACL = parse_formula("NaCl")
KCL = parse_formula("KCl")


def isopiestic_pairs():
    """NaCl molalities at the water activity of each tabulated KCl solution (nu = 2 for both).

    Built with a cubic spline of the NaCl table; the reduction below uses a different
    interpolant (PCHIP) of the same table, so the check does not share the construction.
    """
    spline = CubicSpline(NACL_M, NACL_PHI)
    target = KCL_M * KCL_PHI
    return np.array([brentq(lambda x, t=t: x * spline(x) - t, 0.05, 3.0) for t in target])


def test_kcl_osmotic_coefficients_from_nacl_reference_pairs():
    m_ref = isopiestic_pairs()
    phi_ref = PchipInterpolator(NACL_M, NACL_PHI)
    out = osmotic_from_isopiestic(KCL, KCL_M, NACL, m_ref, phi_ref)
    assert np.max(np.abs(out.osmotic - KCL_PHI)) < 0.002
    # Both solutions share one water activity, a_w = exp(-nu m M_w phi) (definition of phi;
    # IUPAC Green Book, 3rd ed., 2007, section 2.11).
    assert np.allclose(out.water_activity, water_activity_from_osmotic(KCL, KCL_M, out.osmotic),
                       rtol=1e-12)


def test_isopiestic_ratio_carries_the_ion_numbers():
    # phi = nu_ref m_ref phi_ref / (nu m) (Robinson and Stokes, 2nd ed., 1959, eq. 8.1):
    # 1.0 mol/kg NaCl (phi 0.9355, table above) against 0.7 mol/kg CaCl2 (nu = 3).
    out = osmotic_from_isopiestic(parse_formula("CaCl2"), 0.7, NACL, 1.0,
                                  lambda m: np.full_like(m, 0.9355))
    assert float(out.osmotic[0]) == pytest.approx(2 * 1.0 * 0.9355 / (3 * 0.7), rel=1e-12)
    assert float(out.isopiestic_ratio[0]) == pytest.approx(2.0 / 2.1, rel=1e-12)


def test_uncertainty_from_molalities_and_reference():
    phi_ref = PchipInterpolator(NACL_M, NACL_PHI)
    out = osmotic_from_isopiestic(KCL, 1.0, NACL, 0.95, phi_ref, u_molality=1e-4,
                                  u_reference_molality=1e-4, u_reference_osmotic=0.001)
    phi = float(out.osmotic[0])
    d = float(phi_ref(0.95, 1))
    # First-order propagation of phi = m_ref phi_ref(m_ref) / m (common practice, no source).
    expected = np.sqrt((phi * 1e-4) ** 2 + ((float(phi_ref(0.95)) + 0.95 * d) * 1e-4) ** 2
                       + (0.95 * 0.001) ** 2)
    assert float(out.u_osmotic[0]) == pytest.approx(expected, rel=1e-5)


def test_mismatched_inputs_are_refused():
    with pytest.raises(UserError, match="2 sample molalities but 1 reference"):
        osmotic_from_isopiestic(KCL, [0.5, 1.0], NACL, [0.5], lambda m: m * 0 + 0.92)
