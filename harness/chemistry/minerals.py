"""Minerals and their saturation state in a solution.

The saturation index of a mineral M = (cation)nu_c (anion)nu_a . n H2O is

    SI = log10(IAP / Ksp),   IAP = a_c^nu_c a_a^nu_a a_w^n,   a_i = gamma_i m_i

(IUPAC Gold Book, "solubility product", and the usual definition of the saturation index; from
memory of the IUPAC Compendium of Chemical Terminology): SI > 0 supersaturated, 0 saturated,
< 0 undersaturated. Activities are on the molality scale; the ions' ln gamma and the water
activity come from whichever activity model the caller used, and the result names it.

No ion pairing or speciation is made here: a carbonate's CO3-2 is the molality the caller gives,
and a 2-2 sulfate's ions are counted free, which overstates their activity where a model
without ion-pair terms is used (CaSO4 and MgSO4 pair strongly; Pitzer's beta2 stands for that).
Vectorised over N solutions.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.ions import Ion
from saltbench.errors import UserError

LN10 = float(np.log(10.0))

#: Shown with every saturation result: it may be used to judge scaling risk, so it says what it is.
SCALING_CAUTION = ("Saturation indices are screening estimates from one activity model and a 25 °C "
                   "solubility-product table; they do not predict whether, where or how fast scale forms "
                   "(kinetics, nucleation, inhibitors, temperature, pressure and pH changes are not modelled). "
                   "Do not set dosing, recovery or scaling limits from them alone: defer to local codes, the "
                   "equipment supplier's limits and licensed practice.")
NO_SPECIATION = ("No ion pairing or speciation is made: carbonate minerals take the CO3-2 molality as given "
                 "(not from alkalinity and pH), and 2-2 sulfates count their ions as free; a model without "
                 "ion-pair terms then overstates their saturation.")


@dataclass(frozen=True)
class Mineral:
    """A mineral (or a salt) with its solubility product: ``name`` as its table prints it,
    ``mineral`` where the table names the mineral ('' otherwise), ``ions`` with their numbers per
    formula unit, ``water`` of hydration, ``log10_ksp`` at ``temperature_k``, and ``source``."""

    name: str
    mineral: str
    formula: str
    ions: tuple[tuple[Ion, int], ...]
    water: int
    log10_ksp: float
    temperature_k: float = 298.15
    source: str = ""

    @property
    def label(self) -> str:
        return self.mineral or self.name

    @property
    def molar_mass(self) -> float:
        """kg/mol of the formula unit with its water of hydration (atomic weights as for the
        ions, :mod:`saltbench.chemistry.ions`)."""
        from saltbench.chemistry.ions import formula_mass

        return sum(ion.molar_mass * n for ion, n in self.ions) + self.water * formula_mass("H2O") / 1000.0

    @property
    def pairs_strongly(self) -> bool:
        """A carbonate, or a sulfate of two doubly charged ions: where free-ion counting misleads."""
        names = {ion.name for ion, _ in self.ions}
        two_two = all(abs(ion.charge) == 2 for ion, _ in self.ions)
        return "CO3-2" in names or (two_two and "SO4-2" in names)


@dataclass(frozen=True, eq=False)
class SaturationIndices:
    """SI (N, M) of M minerals in N solutions, with log10 IAP (N, M) and log10 Ksp (M,); ``model``
    names the activity model used; ``cautions`` go with every output of these numbers."""

    minerals: tuple[Mineral, ...]
    si: np.ndarray
    log10_iap: np.ndarray
    log10_ksp: np.ndarray
    model: str
    cautions: tuple[str, ...]

    def by_label(self) -> dict[str, np.ndarray]:
        return {m.label: self.si[:, j] for j, m in enumerate(self.minerals)}


def log10_iap(minerals: Sequence[Mineral], ions: Sequence[str], molality: np.ndarray,
              ln_gamma: np.ndarray, water_activity: np.ndarray) -> np.ndarray:
    """log10 of each mineral's ion activity product (N, M), from ``molality`` and ``ln_gamma``
    (N, K) of the ions named ``ions`` (K) and the water activity (N,). A zero molality gives
    -inf. Raises UserError where a mineral's ion is not in the solution."""
    m = np.atleast_2d(np.asarray(molality, dtype=float))
    lg = np.atleast_2d(np.asarray(ln_gamma, dtype=float))
    aw = np.atleast_1d(np.asarray(water_activity, dtype=float))
    names = list(ions)
    if m.shape != lg.shape or m.shape[1] != len(names) or aw.shape != (m.shape[0],):
        raise UserError(f"saturation: shapes do not agree (molality {m.shape}, ln gamma {lg.shape}, "
                        f"water activity {aw.shape}, {len(names)} ions)")
    nu = np.zeros((len(names), len(minerals)))
    for j, mineral in enumerate(minerals):
        for ion, count in mineral.ions:
            if ion.name not in names:
                raise UserError(f"{mineral.label}: ion {ion.name} is not in the solution ({', '.join(names)})")
            nu[names.index(ion.name), j] = count
    water = np.array([mineral.water for mineral in minerals], dtype=float)
    with np.errstate(divide="ignore"):
        ln_a = np.log(m) + lg
    # 0 * -inf is nan: an ion a mineral does not contain must not count
    ln_a = np.where(np.isneginf(ln_a), -np.inf, ln_a)
    ln_iap = np.zeros((m.shape[0], len(minerals)))
    for j in range(len(minerals)):
        used = nu[:, j] > 0
        ln_iap[:, j] = ln_a[:, used] @ nu[used, j]
    return (ln_iap + np.log(aw)[:, None] * water[None, :]) / LN10


def saturation_index(minerals: Sequence[Mineral], ions: Sequence[str], molality: np.ndarray,
                     ln_gamma: np.ndarray, water_activity: np.ndarray, temperature_k: np.ndarray | float,
                     *, model: str, model_has_ion_pairing: bool = False) -> SaturationIndices:
    """SI = log10(IAP / Ksp) (N, M). ``temperature_k`` (N,) must be that of each mineral's Ksp
    (within 0.5 K): a table at 25 °C is not extrapolated. ``model`` names the activity model;
    ``model_has_ion_pairing`` (e.g. Pitzer with beta2 for 2-2 salts) drops the caution on
    carbonates and 2-2 sulfates."""
    minerals = tuple(minerals)
    if not minerals:
        raise UserError("saturation: no minerals asked for")
    t = np.atleast_1d(np.asarray(temperature_k, dtype=float))
    for mineral in minerals:
        off = np.abs(t - mineral.temperature_k)
        if np.any(off > 0.5):
            raise UserError(f"{mineral.label}: its solubility product is known at "
                            f"{mineral.temperature_k - 273.15:g} °C only; the solution is at "
                            f"{float(t[np.argmax(off)]) - 273.15:g} °C")
    iap = log10_iap(minerals, ions, molality, ln_gamma, water_activity)
    ksp = np.array([mineral.log10_ksp for mineral in minerals])
    cautions = [SCALING_CAUTION]
    if not model_has_ion_pairing and any(mineral.pairs_strongly for mineral in minerals):
        cautions.append(NO_SPECIATION)
    return SaturationIndices(minerals, iap - ksp[None, :], iap, ksp, model, tuple(cautions))


def minerals_in(minerals: Sequence[Mineral], ions: Sequence[str]) -> tuple[Mineral, ...]:
    """The minerals whose every ion is among ``ions`` (those a solution can be saturated with)."""
    present = set(ions)
    return tuple(m for m in minerals if all(ion.name in present for ion, _ in m.ions))
