"""Reduction of raw measurements (EMF, isopiestic, water activity) and single-ion conventions.

Pure numpy/scipy functions on arrays, SI units and molality inside, with first-order
uncertainties. Each module cites its method:

- :mod:`~saltbench.measurements.nernst`: Nernst slope, EMF <-> activity, electrode calibration
- :mod:`~saltbench.measurements.emf_cell`: cells without junction -> gamma±; E° by extrapolation
- :mod:`~saltbench.measurements.concentration_cell`: activity ratios against a reference solution
- :mod:`~saltbench.measurements.isopiestic`: phi of a sample from a reference salt
- :mod:`~saltbench.measurements.water_activity`: phi from a_w readings or vapour-pressure ratios
- :mod:`~saltbench.measurements.gibbs_duhem`: osmotic <-> activity, explicit dilute extrapolation
- :mod:`~saltbench.measurements.conventions`: single-ion activity coefficients (conventional)
"""

from saltbench.measurements.concentration_cell import (
    ActivityRatio,
    SampleActivity,
    ion_activity_from_reference,
    ion_activity_ratio,
    mean_activity_from_reference,
    mean_activity_ratio,
)
from saltbench.measurements.conventions import (
    BATES_GUGGENHEIM_MAX_I,
    PH_CAUTION,
    SINGLE_ION_CAVEAT,
    SaltAmounts,
    SingleIonResult,
    bates_guggenheim,
    extended_debye_huckel,
    ion_molalities,
    ionic_strength,
    macinnes,
    model_single_ion,
    truesdell_jones,
)
from saltbench.measurements.emf_cell import (
    CellSpec,
    EmfReduction,
    StandardEmf,
    e_prime,
    emf_from_gamma,
    extrapolate_standard_emf,
    gamma_from_emf,
)
from saltbench.measurements.gibbs_duhem import (
    DiluteExtrapolation,
    GibbsDuhemResult,
    activity_from_osmotic,
    osmotic_from_activity,
    sigma,
)
from saltbench.measurements.isopiestic import IsopiesticResult, osmotic_from_isopiestic
from saltbench.measurements.nernst import (
    CALIBRATION_CAUTION,
    Calibration,
    activity_from_emf,
    calibrate_electrode,
    emf_from_activity,
    nernst_slope,
    thermal_voltage,
)
from saltbench.measurements.water_activity import (
    IDEAL_VAPOUR_NOTE,
    WaterActivityReduction,
    osmotic_from_vapour_pressure,
    osmotic_from_water_activity,
    saturation_pressure,
    water_activity_from_osmotic,
)

__all__ = [
    # nernst
    "CALIBRATION_CAUTION", "Calibration", "activity_from_emf", "calibrate_electrode",
    "emf_from_activity", "nernst_slope", "thermal_voltage",
    # emf_cell
    "CellSpec", "EmfReduction", "StandardEmf", "e_prime", "emf_from_gamma",
    "extrapolate_standard_emf", "gamma_from_emf",
    # concentration_cell
    "ActivityRatio", "SampleActivity", "ion_activity_from_reference", "ion_activity_ratio",
    "mean_activity_from_reference", "mean_activity_ratio",
    # isopiestic and water activity
    "IsopiesticResult", "osmotic_from_isopiestic",
    "IDEAL_VAPOUR_NOTE", "WaterActivityReduction", "osmotic_from_vapour_pressure",
    "osmotic_from_water_activity", "saturation_pressure", "water_activity_from_osmotic",
    # gibbs_duhem
    "DiluteExtrapolation", "GibbsDuhemResult", "activity_from_osmotic", "osmotic_from_activity",
    "sigma",
    # conventions
    "BATES_GUGGENHEIM_MAX_I", "PH_CAUTION", "SINGLE_ION_CAVEAT", "SaltAmounts",
    "SingleIonResult", "bates_guggenheim", "model_single_ion",
    "extended_debye_huckel", "ion_molalities", "ionic_strength", "macinnes",
    "truesdell_jones",
]
