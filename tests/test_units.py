"""Unit parsing and concentration-scale conversions against hand calculations.

The scale relations are those of Robinson and Stokes, Electrolyte Solutions, 2nd ed. (1959),
ch. 2 (from memory of Robinson and Stokes 1959, ch. 2):
    m = c / (rho - c M2),  m = x / ((1 - x) M_w),  gamma± = f± / (1 + nu m M_w),
    gamma± = y± c / (m rho_w).
Each expected number below is worked by hand in the comment beside it, not by our code.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from conftest import write

from saltbench.curation import units
from saltbench.curation.datasets import read_dataset
from saltbench.errors import InputFileError

# -- temperature and pressure ---------------------------------------------------------------


@pytest.mark.parametrize(("text", "kelvin"), [
    # T/K = t/°C + 273.15 (ITS-90 / SI definition of the Celsius scale; common practice, no source)
    ("25 C", 298.15), ("25 °C", 298.15), ("25°C", 298.15), ("25 c", 298.15),
    ("0 C", 273.15), ("-5 C", 268.15), ("37.5 C", 310.65),
    ("298.15 K", 298.15), ("373.15 k", 373.15),
])
def test_temperature_parsing(text: str, kelvin: float) -> None:
    assert units.parse_temperature(text) == pytest.approx(kelvin, abs=1e-9)


@pytest.mark.parametrize(("text", "words"), [
    ("25 K", "25 K looks like a Celsius temperature given as K (did you mean '25 C'?)"),
    ("25", "expected a temperature with its unit"),
    ("25 F", "expected a temperature with its unit"),
    ("warm", "expected a temperature with its unit"),
    ("", "expected a temperature with its unit"),
])
def test_temperature_refusals(text: str, words: str) -> None:
    with pytest.raises(ValueError) as info:
        units.parse_temperature(text)
    assert words in str(info.value)


@pytest.mark.parametrize(("text", "pascal"), [
    # 1 atm = 101 325 Pa exactly and 1 bar = 10^5 Pa exactly (BIPM SI Brochure, 9th ed., 2019,
    # table of non-SI units; from memory of the SI Brochure).
    ("1 atm", 101325.0), ("1 bar", 1.0e5), ("101325 Pa", 101325.0), ("101.325 kPa", 101325.0),
    ("0.1 MPa", 1.0e5), ("2.5e5 Pa", 2.5e5), ("10 MPa", 1.0e7),
])
def test_pressure_parsing(text: str, pascal: float) -> None:
    assert units.parse_pressure(text) == pytest.approx(pascal, rel=1e-12)


@pytest.mark.parametrize("text", ["1", "14.7 psi", "1 torr", "-1 bar", "one atm"])
def test_pressure_refusals(text: str) -> None:
    with pytest.raises(ValueError, match="expected a pressure with its unit"):
        units.parse_pressure(text)


# -- concentration scales -------------------------------------------------------------------

# M(NaCl) = 58.44 g/mol from IUPAC standard atomic weights Na 22.990, Cl 35.45 (from memory of
# the IUPAC 2013 table); M_w = 18.015 g/mol from H 1.008, O 15.999 (same source).
M_NACL = 0.05844
M_W = 0.018015
# Density of 1.000 mol/L aqueous NaCl near room temperature, 1.0369 kg/L (from memory of the
# CRC Handbook table "Concentrative properties of aqueous solutions"); any plausible density
# serves, since the expected molality is worked from it by hand.
RHO_1M_NACL = 1.0369


def test_molality_from_molarity_by_hand() -> None:
    # m = c / (rho - c M2) = 1.000 / (1.0369 - 0.05844) = 1 / 0.97846 = 1.022014 mol/kg
    m = units.molality_from_molarity(np.array([1.0]), np.array([RHO_1M_NACL]), M_NACL)
    assert m[0] == pytest.approx(1.022014, rel=1e-6)


def test_molality_from_molarity_is_vectorised_and_inverts() -> None:
    c = np.array([0.1, 0.5, 1.0, 2.0])
    rho = np.array([1.0024, 1.0181, 1.0369, 1.0746])
    m = units.molality_from_molarity(c, rho, M_NACL)
    # The inverse relation c = m rho / (1 + m M2) (Robinson and Stokes 1959, ch. 2, from memory)
    np.testing.assert_allclose(m * rho / (1.0 + m * M_NACL), c, rtol=1e-12)
    assert np.all(m > c)  # a kilogram of water is less than a litre of solution holds


def test_molality_from_mole_fraction_by_hand() -> None:
    # m = x / ((1 - x) M_w) = 0.01 / (0.99 x 0.018015) = 0.01 / 0.01783485 = 0.560700 mol/kg
    m = units.molality_from_mole_fraction(np.array([0.01]))
    assert m[0] == pytest.approx(0.560700, rel=1e-5)
    # and the inverse x = m M_w / (1 + m M_w) at 1 mol/kg: 0.018015 / 1.018015 = 0.0176962
    x = 0.018015 / 1.018015
    assert units.molality_from_mole_fraction(np.array([x]))[0] == pytest.approx(1.0, rel=1e-9)


def test_rational_to_molal_activity_coefficient_by_hand() -> None:
    # gamma± = f± / (1 + nu m M_w); NaCl (nu = 2) at 1 mol/kg, f± = 1:
    # 1 / (1 + 2 x 1 x 0.018015) = 1 / 1.03603 = 0.965223
    g = units.gamma_from_rational(np.array([1.0]), np.array([1.0]), 2)
    assert g[0] == pytest.approx(0.965223, rel=1e-6)
    # nu = 3 (a 2-1 salt) at 0.5 mol/kg: 1 / (1 + 3 x 0.5 x 0.018015) = 1 / 1.0270225 = 0.973689
    assert units.gamma_from_rational(1.0, 0.5, 3) == pytest.approx(0.973689, rel=1e-6)


def test_molar_to_molal_activity_coefficient_by_hand() -> None:
    # gamma± = y± c / (m rho_w); y± = 0.700, c = 1 mol/L, m = 1.022014 mol/kg, and rho_w =
    # 0.997048 kg/L (IAPWS-95 density of water at 25 °C, 997.048 kg/m3; from memory of
    # Wagner and Pruss 2002): 0.700 / (1.022014 x 0.997048) = 0.700 / 1.019 = 0.686950
    g = units.gamma_from_molar(0.700, 1.0, 1.022014, 0.997048)
    assert g == pytest.approx(0.686950, rel=1e-6)


# -- the conversions applied when a dataset file is read ------------------------------------

MOLARITY_FILE = """\
# saltbench dataset 1
# electrolyte: NaCl
# property: gamma_pm
# scale: molarity
# temperature: 25 C
# source: tidewater-2026
# table: invented molar-scale sheet (test scenario, invented values)
# precision: 0.001
# uncertainty: 0.004
# typed: measured by the invented Tidewater Test Laboratory (invented values)
molarity,value,density
1.0,0.700,1.0369
"""


def test_molarity_dataset_is_converted_to_molality(tmp_path: Path) -> None:
    d = read_dataset(write(tmp_path / "molar.csv", MOLARITY_FILE))
    assert d.scale == "molarity"
    # m = 1.022014 mol/kg by hand above
    assert d.molality[0] == pytest.approx(1.022014, rel=1e-6)
    # gamma± = y± c / (m rho_w(25 °C)) = 0.700 / (1.022014 x 0.99705) = 0.68695, to the
    # precision of the IAPWS-95 water density the reader uses (997.05 kg/m3, Wagner and Pruss
    # 2002, from memory).
    assert d.value[0] == pytest.approx(0.68695, rel=2e-5)
    assert d.value_printed[0] == 0.700


def test_mole_fraction_dataset_is_converted_to_molality(tmp_path: Path) -> None:
    text = (MOLARITY_FILE.replace("scale: molarity", "scale: mole_fraction")
            .replace("molarity,value,density\n1.0,0.700,1.0369", "mole_fraction,value\n0.01,0.700"))
    d = read_dataset(write(tmp_path / "x.csv", text))
    # m = 0.560700 (by hand above); gamma± = f± / (1 + 2 m M_w) = 0.700 / (1 + 2 x 0.5607 x
    # 0.018015) = 0.700 / 1.0202020 = 0.686139
    assert d.molality[0] == pytest.approx(0.560700, rel=1e-5)
    assert d.value[0] == pytest.approx(0.686139, rel=1e-5)


def test_log_basis_is_converted_to_linear(tmp_path: Path) -> None:
    text = (MOLARITY_FILE.replace("scale: molarity", "scale: molality")
            .replace("# property: gamma_pm\n", "# property: gamma_pm\n# basis: log10\n")
            .replace("molarity,value,density\n1.0,0.700,1.0369", "molality,value\n1.0,-0.1824"))
    d = read_dataset(write(tmp_path / "log.csv", text))
    # 10^-0.1824 = 0.657052 (hand calculation: ln 10 x 0.1824 = 0.419992, e^-0.419992 = 0.657052)
    assert d.value[0] == pytest.approx(0.657052, rel=1e-6)
    # u(gamma) = gamma ln10 u(log10 gamma) = 0.657052 x 2.302585 x 0.004 = 0.0060517
    assert d.u_value[0] == pytest.approx(0.0060517, rel=1e-4)


def test_implausible_density_is_refused(tmp_path: Path) -> None:
    bad = write(tmp_path / "d.csv", MOLARITY_FILE.replace("1.0,0.700,1.0369", "1.0,0.700,10.369"))
    with pytest.raises(InputFileError) as info:
        read_dataset(bad)
    assert (info.value.line, info.value.field) == (12, "density")
