"""Properties of pure water and the Debye-Hückel constants derived from them."""

from saltbench.water.debye_huckel import (
    DebyeHuckel,
    debye_huckel_constants,
    with_a_phi,
)
from saltbench.water.properties import (
    MOLAR_MASS_WATER,
    T_MAX,
    T_MIN,
    WaterState,
    water_activity,
    water_state,
)
from saltbench.water.thermal_slopes import DebyeHuckelSlopes, debye_huckel_slopes

__all__ = [
    "DebyeHuckel", "debye_huckel_constants", "with_a_phi", "DebyeHuckelSlopes", "debye_huckel_slopes",
    "MOLAR_MASS_WATER", "water_activity", "T_MAX", "T_MIN", "WaterState", "water_state",
]
