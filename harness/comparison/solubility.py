"""How much of a mineral dissolves in a background solution, by one model: SI = 0.

The mineral M = (cation)nu_c (anion)nu_a . n H2O dissolved to s mol per kg of water adds
nu_c s and nu_a s to the background's molalities; its saturation molality is the s at which

    log10 IAP(s) = log10 Ksp,   IAP = (gamma_c m_c)^nu_c (gamma_a m_a)^nu_a a_w^n

(the usual solubility condition; IUPAC Gold Book, "solubility product", from memory). The
activities come from the model, its parameters resolved for the composition with the mineral's
ions in it (:func:`saltbench.comparison.solutions.resolve_values`). The root is bracketed on a
logarithmic grid of s evaluated in one model call (rows of one composition), then refined by
Brent's method (scipy.optimize.brentq; Brent, Algorithms for Minimization without Derivatives,
1973, ch. 4). log10 IAP rises with s wherever activity coefficients fall more slowly than
molalities rise, which holds for the sparingly soluble minerals of the table; the first
crossing of the grid is taken.

No ion pairing or speciation is made (see :mod:`saltbench.chemistry.minerals`): for a 2-2
sulfate in a model without an ion-pair term the free ions are overcounted and the computed
solubility is low.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from saltbench.chemistry.minerals import Mineral, log10_iap
from saltbench.chemistry.solution import Composition
from saltbench.comparison.solutions import LookupFn, Resolved, resolve_values
from saltbench.errors import ModelDomainError, ModelError, UserError
from saltbench.models.contract import SolutionModel
from saltbench.models.solution_eval import evaluate_solution

#: The grid that brackets the root: s from 1e-9 to ``upper`` mol/kg, 8 points per decade.
GRID_FROM = 1e-9
GRID_PER_DECADE = 8


@dataclass(frozen=True)
class Solubility:
    """One model's saturation molality of ``mineral`` (mol of formula units per kg of water) in
    the background, or why there is none (``reason``); ``si_background`` is the mineral's
    saturation index in the background itself (-inf when it lacks one of the ions)."""

    model_id: str
    mineral: Mineral
    molality_at_saturation: float | None
    si_background: float
    resolved: Resolved | None
    reason: str = ""

    @property
    def grams_per_kg_water(self) -> float | None:
        """The saturation molality as mass of the mineral (with its water of hydration) per kg
        of water."""
        if self.molality_at_saturation is None:
            return None
        return self.molality_at_saturation * self.mineral.molar_mass * 1000.0


def _with_mineral_ions(background: Composition, mineral: Mineral) -> tuple[Composition, np.ndarray]:
    """The background (one row) with the mineral's ions as columns, and the mineral's
    stoichiometry over those columns."""
    ions = list(background.ions)
    names = [i.name for i in ions]
    for ion, _ in mineral.ions:
        if ion.name not in names:
            ions.append(ion)
            names.append(ion.name)
    m = np.zeros((1, len(ions)))
    m[0, :background.molality.shape[1]] = background.molality[0]
    nu = np.zeros(len(ions))
    for ion, count in mineral.ions:
        nu[names.index(ion.name)] += count
    comp = Composition(tuple(ions), m, background.temperature_k[:1],
                       None if background.pressure_pa is None else background.pressure_pa[:1],
                       background.salts)
    return comp, nu


def saturation_molality(model: SolutionModel, background: Composition, mineral: Mineral,
                        lookup: LookupFn, *, missing: str = "error", upper: float = 10.0,
                        xtol: float = 1e-12) -> Solubility:
    """The molality of ``mineral`` at saturation in the one-row ``background`` by ``model``."""
    from scipy.optimize import brentq

    if background.n != 1:
        raise UserError("solubility: give one background solution (not a scaled series)")
    comp, nu = _with_mineral_ions(background, mineral)
    res = resolve_values(model, comp, lookup, missing)  # type: ignore[arg-type]
    if res.absent:
        return Solubility(model.id, mineral, None, float("nan"), res, res.refusal())
    if not model.supports_composition(comp):
        return Solubility(model.id, mineral, None, float("nan"), res,
                          "the model does not take this solution")
    log_ksp = mineral.log10_ksp

    def si(s: np.ndarray) -> np.ndarray:
        rows = comp.molality + s[:, None] * nu[None, :]
        trial = replace(comp, molality=rows, temperature_k=np.full(s.size, comp.temperature_k[0]),
                        pressure_pa=None if comp.pressure_pa is None else np.full(s.size, comp.pressure_pa[0]))
        props = evaluate_solution(model, trial, res.values)
        if not props.ln_gamma or props.water_activity is None:
            raise ModelDomainError(f"model {model.id} gives no single-ion values or water activity here")
        ln_g = np.column_stack([props.ln_gamma[n] for n in trial.names])
        return log10_iap([mineral], trial.names, trial.molality, ln_g, props.water_activity)[:, 0] - log_ksp

    try:
        base = float(si(np.zeros(1))[0]) if np.all(comp.molality[0][nu > 0] > 0) else -np.inf
        if base >= 0:
            return Solubility(model.id, mineral, 0.0, base, res,
                              "the background is saturated already (SI >= 0): nothing more dissolves")
        grid = np.logspace(np.log10(GRID_FROM), np.log10(upper),
                           int(GRID_PER_DECADE * np.log10(upper / GRID_FROM)) + 1)
        values = si(grid)
        above = np.flatnonzero(np.isfinite(values) & (values > 0))
        if above.size == 0:
            return Solubility(model.id, mineral, None, base, res,
                              f"not saturated below {upper:g} mol/kg")
        k = int(above[0])
        lo = grid[k - 1] if k else 0.0
        root = brentq(lambda x: float(si(np.array([x]))[0]), lo, grid[k], xtol=xtol * max(1.0, grid[k]),
                      rtol=1e-12)
    except (ModelDomainError, ModelError) as exc:
        return Solubility(model.id, mineral, None, float("nan"), res, str(exc))
    return Solubility(model.id, mineral, float(root), base, res)
