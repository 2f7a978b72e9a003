"""Debye-Hückel constants from the density and permittivity of water.

    A_phi   = (1/3) (2 pi N_A rho_w)^(1/2) (e^2 / (4 pi eps0 eps_r k T))^(3/2)      [(kg/mol)^(1/2)]
    A_gamma = 3 A_phi (natural-log basis),  A_gamma / ln 10 (decadic basis)
    B_gamma = (2 N_A e^2 rho_w / (eps0 eps_r k T))^(1/2)                          [m^-1 (kg/mol)^(1/2)]

so that the Debye screening length is 1 / (B_gamma sqrt(I)). These are the usual forms of the
osmotic slope and screening constant (common practice, no source); Archer and Wang (J. Phys. Chem. Ref. Data 19, 371
(1990)) give A_phi = 0.3915 at 25 °C. Constants are CODATA values through ``scipy.constants``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from saltbench.water.properties import WaterState, water_state


@dataclass(frozen=True)
class DebyeHuckel:
    """Debye-Hückel constants at one temperature and pressure (molality basis)."""

    temperature_k: float
    pressure_pa: float
    a_phi: float  # (kg/mol)^1/2, osmotic-coefficient slope
    b_gamma: float  # m^-1 (kg/mol)^1/2
    density: float  # kg/m^3 of pure water used
    permittivity: float
    origin: str = "IAPWS-95 + IAPWS R8-97"

    @property
    def a_gamma(self) -> float:
        """Activity-coefficient slope on the natural-log basis, 3 A_phi."""
        return 3.0 * self.a_phi

    @property
    def a_gamma_log10(self) -> float:
        """Activity-coefficient slope on the decadic basis (about 0.5100 at 25 °C)."""
        return 3.0 * self.a_phi / math.log(10.0)

    @property
    def b_gamma_per_angstrom(self) -> float:
        """B_gamma in Å^-1 (kg/mol)^1/2 (about 0.3284 at 25 °C), for ion sizes given in Å."""
        return self.b_gamma * 1e-10


def a_phi_of_state(w: WaterState) -> float:
    """A_phi of the module docstring for one water state."""
    from scipy import constants as c

    bjerrum = c.e**2 / (4.0 * math.pi * c.epsilon_0 * w.permittivity * c.k * w.temperature_k)
    return (1.0 / 3.0) * math.sqrt(2.0 * math.pi * c.N_A * w.density) * bjerrum**1.5


def _constants(temperature_k: float, pressure_pa: float | None) -> DebyeHuckel:
    from scipy import constants as c

    w = water_state(temperature_k, pressure_pa)
    kt = c.k * w.temperature_k
    b_gamma = math.sqrt(2.0 * c.N_A * c.e**2 * w.density / (c.epsilon_0 * w.permittivity * kt))
    return DebyeHuckel(w.temperature_k, w.pressure_pa, a_phi_of_state(w), b_gamma, w.density, w.permittivity)


def debye_huckel_constants(
    temperature_k: float = 298.15, pressure_pa: float | None = None
) -> DebyeHuckel:
    """Debye-Hückel constants of water at ``temperature_k`` (K) and ``pressure_pa`` (Pa)."""
    return _constants(float(temperature_k), pressure_pa)


def with_a_phi(dh: DebyeHuckel, a_phi: float, origin: str) -> DebyeHuckel:
    """The same state with a published A_phi (e.g. 0.392 of Pitzer and Mayorga), B_gamma scaled.

    A_phi and B_gamma both scale with the Bjerrum length; keeping their ratio consistent means
    B_gamma ~ A_phi^(1/3) at fixed density.
    """
    scale = (a_phi / dh.a_phi) ** (1.0 / 3.0)
    return replace(dh, a_phi=float(a_phi), b_gamma=dh.b_gamma * scale, origin=origin)
