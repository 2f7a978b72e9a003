"""What one model says about whole solutions: every ion, every salt its ions form, the solvent.

:func:`evaluate_solution` asks a model, through the checked :func:`saltbench.models.evaluate.compute`,
for ln gamma of each ion (where the model gives single-ion values), ln gamma± of each neutral
salt that a cation and an anion of the solution form, the osmotic coefficient and the water
activity, for N solutions at once. A quantity the model cannot give for this solution is left
out and named in ``not_given``; nothing is invented for it. Parameters are keyed
(:class:`~saltbench.models.contract.ParameterKey`); those the caller does not give take the
model's declared defaults and are listed in ``defaulted``, so that the caller can refuse or say
so.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte, neutral_salt
from saltbench.chemistry.solution import Composition
from saltbench.errors import ModelDomainError
from saltbench.models.contract import Conditions, ParameterKey, Request, SolutionModel
from saltbench.models.evaluate import compute
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, Quantity, ln_gamma, ln_gamma_pm


@dataclass(frozen=True)
class SolutionProperties:
    """One model's values for N solutions; arrays are (N,), logarithms natural."""

    model_id: str
    composition: Composition
    ln_gamma: dict[str, np.ndarray]  # ion name -> ln gamma_i (empty: the model gives none)
    ln_gamma_pm: dict[str, np.ndarray]  # neutral salt -> ln gamma±
    salts: tuple[Electrolyte, ...]  # the salts of ``ln_gamma_pm``, in its order
    osmotic: np.ndarray | None
    water_activity: np.ndarray | None
    single_ion_convention: str
    #: the values used, defaults included (one per solution (N,) where a temperature form gave it)
    parameters: dict[ParameterKey, Any]
    defaulted: tuple[ParameterKey, ...]  # keys the caller gave no value for
    not_given: tuple[str, ...]  # quantities the model does not give for this solution

    @property
    def ionic_strength(self) -> np.ndarray:
        return self.composition.ionic_strength


def pair_salts(composition: Composition) -> tuple[Electrolyte, ...]:
    """The neutral salt of each cation-anion pair of the solution, cations in their order."""
    cations = [i for i in composition.ions if i.charge > 0]
    anions = [i for i in composition.ions if i.charge < 0]
    return tuple(neutral_salt(c, a) for c in cations for a in anions)


def _ask(model: SolutionModel, composition: Composition, quantities: tuple[Quantity, ...],
         values: dict[ParameterKey, np.ndarray], conditions: Conditions):
    return compute(model, Request(composition, quantities, values, conditions)).values


def evaluate_solution(model: SolutionModel, composition: Composition,
                      params: Mapping[ParameterKey, float] | None = None, *,
                      conditions: Conditions | None = None) -> SolutionProperties:
    """Everything ``model`` gives for ``composition`` (see the module docstring).

    Raises :class:`ModelDomainError` when the model does not take the solution at all, and
    :class:`~saltbench.errors.ModelError` when it fails on it.
    """
    if not model.supports_composition(composition):
        raise ModelDomainError(f"model {model.id} does not take a solution of "
                               f"{', '.join(composition.names)}")
    given = dict(params or {})
    keys = model.keys_for(composition)
    # a value per solution (N,) comes from a temperature form; the request takes it as (1, N)
    used = {k: (np.asarray(given[k], dtype=float) if np.ndim(given[k]) else float(given[k])) if k in given
            else float(p.default) for k, p in keys.items()}
    defaulted = tuple(k for k in keys if k not in given)
    values = {k: np.atleast_2d(v) if np.ndim(v) else np.full((1, 1), v) for k, v in used.items()}
    conditions = conditions or Conditions.of(composition)
    salts = pair_salts(composition)
    # The pair salts ride with the composition, so a model finds each by name (ions a dataset or a
    # reference composition declares have no formula to parse).
    composition = replace(composition, salts=tuple(dict.fromkeys(composition.salts + salts)))
    ions = tuple(ln_gamma(name) for name in composition.names) if "ln_gamma" in model.computes else ()
    means = tuple(ln_gamma_pm(s.name) for s in salts)
    solvent = (OSMOTIC, WATER_ACTIVITY)
    not_given: list[str] = []
    try:
        out = _ask(model, composition, ions + means + solvent, values, conditions)
    except ModelDomainError:
        # Ask for each group alone: a model may give means but no solvent properties for a
        # mixture (or the reverse); only what it cannot give is left out.
        out = {}
        for group in (ions, means, solvent):
            if not group:
                continue
            try:
                out.update(_ask(model, composition, group, values, conditions))
            except ModelDomainError:
                not_given.extend(str(q) for q in group)
    def row(q: Quantity) -> np.ndarray | None:
        v = out.get(q)
        return None if v is None else np.asarray(v)[0]

    ln_ions = {q.of: row(q) for q in ions if q in out}
    ln_means = {q.of: row(q) for q in means if q in out}
    return SolutionProperties(
        model.id, composition, ln_ions, ln_means,  # type: ignore[arg-type]
        tuple(s for s in salts if s.name in ln_means), row(OSMOTIC), row(WATER_ACTIVITY),
        model.single_ion_convention if ln_ions else "", used, defaulted, tuple(not_given))
