"""The reference composition of standard seawater, scaled by salinity or by a concentration factor.

F. J. Millero, R. Feistel, D. G. Wright and T. J. McDougall, "The composition of Standard
Seawater and the definition of the Reference-Composition Salinity Scale", Deep-Sea Research I
55, 50-72 (2008): the reference-composition table gives, for each solute j, its charge z_j, mole
fraction X_j of sea salt, molar mass M_j and mass fraction w_j; with it the mean molar mass of
sea salt M_S = 31.4038218 g/mol, the salinity factor u_PS = 35.16504/35 g/kg (reference
salinity S_R = u_PS S_P) and Z^2 = sum z_j^2 X_j = 1.2452898. Every value below is typed from
memory of that table; verify against the original before use in a regulated method.

Molalities follow exactly from the table: a kg of seawater holds S_R g of sea salt, that is
S_R / M_S mol of solute particles, in 1 - S_R/1000 kg of water, so
m_j = X_j (S_R / M_S) / (1 - S_R / 1000) (S_R in g/kg, M_S in g/mol).

The neutral solutes B(OH)3 and CO2 are kept in the table (their mass is part of S_R, so they
count in the water mass) but are not resolved as ions: the record's species are the 13 ions.
"""

from __future__ import annotations

from saltbench.chemistry.description import SolutionRecord
from saltbench.chemistry.ions import KNOWN_IONS, Ion, formula_mass
from saltbench.chemistry.solution import STANDARD_TEMPERATURE_K
from saltbench.chemistry.species import Species
from saltbench.errors import UserError

CITATION = ("F. J. Millero, R. Feistel, D. G. Wright and T. J. McDougall, The composition of Standard "
            "Seawater and the definition of the Reference-Composition Salinity Scale, Deep-Sea Res. I "
            "55, 50-72 (2008), the reference-composition table")
TYPED = (f"from memory of {CITATION}; verify against the original before use in a regulated method")

#: Reference salinity per unit practical salinity, g/kg (S_R = U_PS S_P).
U_PS = 35.16504 / 35.0
#: Mean molar mass of sea salt, g/mol.
MEAN_MOLAR_MASS = 31.4038218
#: sum z_j^2 X_j of the table.
Z_SQUARED = 1.2452898

#: (solute, charge z_j, mole fraction X_j, molar mass M_j in g/mol, mass fraction w_j), as the
#: table prints them (from memory).
TABLE: tuple[tuple[str, int, float, float, float], ...] = (
    ("Na", 1, 0.4188071, 22.98976928, 0.3065958),
    ("Mg", 2, 0.0471678, 24.3050, 0.0365055),
    ("Ca", 2, 0.0091823, 40.078, 0.0117186),
    ("K", 1, 0.0091159, 39.0983, 0.0113495),
    ("Sr", 2, 0.0000810, 87.62, 0.0002260),
    ("Cl", -1, 0.4874839, 35.453, 0.5503396),
    ("SO4", -2, 0.0252152, 96.0626, 0.0771319),
    ("HCO3", -1, 0.0015340, 61.01684, 0.0029805),
    ("Br", -1, 0.0007520, 79.904, 0.0019134),
    ("CO3", -2, 0.0002134, 60.0089, 0.0004078),
    ("B(OH)4", -1, 0.0000900, 78.84036, 0.0002259),
    ("F", -1, 0.0000610, 18.9984032, 0.0000369),
    ("OH", -1, 0.0000071, 17.00734, 0.0000038),
    ("B(OH)3", 0, 0.0002807, 61.83302, 0.0005527),
    ("CO2", 0, 0.0000086, 44.0095, 0.0000121),
)

#: The borate ion, which saltbench's ion table does not hold (molar mass from IUPAC atomic weights).
BORATE = Ion("B(OH)4", -1, formula_mass("BO4H4") / 1000.0)

#: Practical salinity up to which the reference composition describes open-ocean seawater
#: (the oceanographic range of the Practical Salinity Scale 1978, 2 to 42; from memory of
#: UNESCO Technical Papers in Marine Science 36, 1981).
OCEAN_RANGE = (2.0, 42.0)


def _ion(formula: str) -> Ion:
    return BORATE if formula == BORATE.formula else KNOWN_IONS[formula]


def total_molality(reference_salinity_g_per_kg: float) -> float:
    """Total molality of sea-salt solutes (ions and neutrals), mol/kg of water."""
    s = reference_salinity_g_per_kg
    return (s / MEAN_MOLAR_MASS) / (1.0 - s / 1000.0)


def reference_seawater(practical_salinity: float = 35.0, *, concentration_factor: float = 1.0,
                       temperature_k: float = STANDARD_TEMPERATURE_K) -> SolutionRecord:
    """Seawater of the reference composition at practical salinity ``practical_salinity``, then
    concentrated on a water basis by ``concentration_factor`` (molalities times the factor; see
    :meth:`SolutionRecord.concentrated`). Molalities are exact from the table (module docstring)."""
    if not (0 < practical_salinity < 280):
        raise UserError(f"practical salinity {practical_salinity!r} is outside 0-280 "
                        "(no water left above about 284)")
    s_r = U_PS * practical_salinity
    total = total_molality(s_r)
    ions = [(formula, x) for formula, z, x, _, _ in TABLE if z != 0]
    species = [Species.of_ion(_ion(formula)) for formula, _ in ions]
    cautions = []
    lo, hi = OCEAN_RANGE
    if not (lo <= practical_salinity <= hi):
        cautions.append(f"practical salinity {practical_salinity:g} is outside the open-ocean range "
                        f"{lo:g}-{hi:g}: the reference composition is scaled as if no mineral "
                        "precipitated or dissolved, which a concentrate or a diluted water need not obey")
    note = (f"reference composition at S_P = {practical_salinity:g} (S_R = {s_r:.5f} g/kg); the neutral "
            "solutes B(OH)3 and CO2 are left out as species but their mass counts in the water mass; "
            "carbonate, borate and hydroxide as in the table (no speciation at other pH or temperature)")
    record = SolutionRecord.resolve(
        f"reference seawater S_P={practical_salinity:g}", species, [x * total for _, x in ions],
        "mol/kg", temperature_k=temperature_k, source=CITATION, typed=TYPED, note=note,
        cautions=cautions)
    if concentration_factor != 1.0:
        record = record.concentrated(concentration_factor)
    return record
