"""Osmotic coefficients from water activity and vapour pressure."""

import numpy as np
import pytest

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.errors import UserError
from saltbench.measurements import (
    osmotic_from_vapour_pressure,
    osmotic_from_water_activity,
    saturation_pressure,
)
from saltbench.water import MOLAR_MASS_WATER

NACL = parse_formula("NaCl")


def test_saturated_nacl_humidity_gives_the_handbook_osmotic_coefficient():
    # Relative humidity over saturated NaCl at 25 °C: 75.29 +/- 0.12 % (from memory of
    # Greenspan, J. Res. NBS 81A, 89 (1977), Table 2). Saturation molality 6.144 mol/kg
    # (from memory of the CRC Handbook aqueous solubility table, 26.45 mass % at 25 °C).
    out = osmotic_from_water_activity(NACL, 6.144, 0.7529, u_water_activity=0.0012)
    # phi(NaCl) 1.2312 at 5.5 and 1.2706 at 6.0 mol/kg, from memory of Robinson and Stokes,
    # 2nd ed. (1959), Appendix 8.10, extended linearly to 6.144 mol/kg.
    handbook = 1.2706 + (6.144 - 6.0) * (1.2706 - 1.2312) / 0.5
    assert abs(float(out.osmotic[0]) - handbook) < 2 * float(out.u_osmotic[0])
    # u(phi) = u(a_w) / (a_w nu m M_w): first-order propagation (common practice, no source).
    expected = 0.0012 / (0.7529 * 2 * 6.144 * MOLAR_MASS_WATER)
    assert float(out.u_osmotic[0]) == pytest.approx(expected)


def test_ideal_solution_has_unit_osmotic_coefficient():
    # ln a_w = -nu m M_w for phi = 1 (definition; IUPAC Green Book, 3rd ed., 2007, section 2.11).
    m = np.array([0.1, 1.0, 3.0])
    out = osmotic_from_water_activity(NACL, m, np.exp(-2 * m * MOLAR_MASS_WATER))
    assert np.allclose(out.osmotic, 1.0, rtol=1e-12)


def test_saturation_pressure_of_water_at_25c():
    # 3.1699 kPa at 25 °C: from memory of the CRC Handbook table "Vapor Pressure of Water from
    # 0 to 370 °C" (IAPWS-95 values).
    assert saturation_pressure(298.15) == pytest.approx(3169.9, abs=1.0)
    # IAPWS-IF97 region 4 check value: p_s(300 K) = 0.353658941e-2 MPa (from memory of IAPWS
    # R7-97(2012), Table 35).
    assert saturation_pressure(300.0) == pytest.approx(3536.58941, rel=1e-8)


def test_vapour_pressure_route_matches_water_activity_route():
    p_star = saturation_pressure(298.15)
    a_w = 0.9669
    by_p = osmotic_from_vapour_pressure(NACL, 1.0, a_w * p_star, u_pressure_pa=1.0)
    by_a = osmotic_from_water_activity(NACL, 1.0, a_w)
    assert float(by_p.osmotic[0]) == pytest.approx(float(by_a.osmotic[0]), rel=1e-12)
    assert "ideal-vapour" in by_p.note
    assert float(by_p.u_osmotic[0]) == pytest.approx(
        1.0 / (a_w * p_star) / (2 * 1.0 * MOLAR_MASS_WATER), rel=1e-9)


def test_water_activity_above_one_is_refused():
    with pytest.raises(UserError, match="above 1"):
        osmotic_from_water_activity(NACL, 0.1, 1.001)
