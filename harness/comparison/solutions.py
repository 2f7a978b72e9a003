"""Every model on one described solution: what each says, where they part, what each rests on.

A user who asks what the activities in a brine are needs to see more than one model's answer:
the spread between models that each claim the solution is an honest measure of how far to trust
any one of them. :func:`assess_solution` runs each model that takes the solution on the same
composition, with its parameters looked up by a caller-given function (the API looks them up in
the store; no SQL here), and keeps, per model, the values, the parameter sets used, the keys no
set gave, whether the solution lies beyond the ionic strength the model's authors claim, and
the saturation indices of the minerals the solution's ions can form.

Missing parameters. A cation-anion pair, salt or ion parameter that no set gives makes the
model's answer for that solution a guess: the model is left out, with the keys named, unless
the caller allows defaults (``missing="default"``), when they are listed beside its values.
Parameters declared ``fixed`` (Pitzer's alpha and b, for example) take their declared values
without comment. Like-charged pair and triplet terms (theta, psi) that no set gives are taken as
zero, as is usual where no mixture data exist (Pitzer, Activity Coefficients in Electrolyte
Solutions, 2nd ed., 1991, ch. 3: the mixing terms are small corrections), and are listed.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

from saltbench.chemistry.minerals import Mineral, SaturationIndices, minerals_in, saturation_index
from saltbench.chemistry.solution import Composition
from saltbench.errors import ModelDomainError, ModelError, UserError
from saltbench.models.contract import ParameterKey, SolutionModel
from saltbench.models.solution_eval import SolutionProperties, evaluate_solution, pair_salts
from saltbench.models.temperature import row_values

MIXING_KINDS = ("like-pair", "triplet")


@dataclass(frozen=True)
class Lookup:
    """What a parameter lookup found: values by key, the set each came from, the keys no set
    holds, and the ground each set covers: ``fitted_to[(set, salt)]`` the highest molality of
    that salt its values were fitted to, ``set_temperature[set]`` its temperature (K)."""

    values: dict[ParameterKey, float]
    set_of: dict[ParameterKey, str]
    missing: list[ParameterKey]
    fitted_to: dict[tuple[str, str], float] = field(default_factory=dict)
    set_temperature: dict[str, float] = field(default_factory=dict)
    #: a temperature form's further coefficients of a key (``values`` holds its first), and the
    #: form and fitted range (K) of each set that has one
    coefficients: dict[ParameterKey, dict[str, float]] = field(default_factory=dict)
    set_form: dict[str, tuple[str, tuple[float, float]]] = field(default_factory=dict)


#: ``lookup(model, keys)`` -> the values the caller's parameter sets give for ``keys``.
LookupFn = Callable[[SolutionModel, Sequence[ParameterKey]], Lookup]


@dataclass(frozen=True)
class ModelOnSolution:
    """One model's answer for a solution, or why it gives none (``reason``)."""

    model_id: str
    name: str
    properties: SolutionProperties | None
    reason: str = ""
    sets: tuple[str, ...] = ()  # the parameter sets that gave values, in the order used
    set_of: dict[str, str] = field(default_factory=dict)  # key (as text) -> set id
    defaulted: tuple[str, ...] = ()  # pair/salt/ion keys at the model's defaults (allowed)
    zero_mixing: tuple[str, ...] = ()  # theta/psi keys no set gave, taken as zero
    marks: tuple[tuple[str, ...], ...] = ()  # per solution: why it is an extrapolation ('' none)
    saturation: SaturationIndices | None = None

    @property
    def ok(self) -> bool:
        return self.properties is not None


@dataclass(frozen=True)
class SolutionAssessment:
    """Each model's answer for the N solutions of ``composition``."""

    composition: Composition
    models: tuple[ModelOnSolution, ...]
    minerals: tuple[Mineral, ...]

    def spread(self, what: Literal["ln_gamma", "ln_gamma_pm", "osmotic", "water_activity"],
               of: str = "") -> tuple[np.ndarray, np.ndarray] | None:
        """Lowest and highest value (N,) of one quantity over the models that give it."""
        got = []
        for m in self.models:
            p = m.properties
            if p is None:
                continue
            v = (getattr(p, what) if what in ("osmotic", "water_activity")
                 else getattr(p, what).get(of))
            if v is not None:
                got.append(v)
        if not got:
            return None
        stack = np.vstack(got)
        return stack.min(axis=0), stack.max(axis=0)


@dataclass(frozen=True)
class Resolved:
    """A model's parameter values for a composition under the rules of the module docstring."""

    values: dict[ParameterKey, Any]  # a number, or (N,) per solution from a temperature form
    found: Lookup
    defaulted: tuple[str, ...]
    zero_mixing: tuple[str, ...]
    absent: tuple[str, ...]  # keys no set gives and no rule fills: the model must refuse

    @property
    def sets(self) -> tuple[str, ...]:
        return tuple(dict.fromkeys(self.found.set_of.values()))

    @property
    def set_of(self) -> dict[str, str]:
        return {str(k): v for k, v in self.found.set_of.items()}

    def refusal(self) -> str:
        shown = ", ".join(self.absent[:6]) + (f" and {len(self.absent) - 6} more" if len(self.absent) > 6 else "")
        return f"no parameter set gives {shown}"


def resolve_values(model: SolutionModel, composition: Composition, lookup: LookupFn,
                   missing: Literal["error", "default"]) -> Resolved:
    """The values ``model`` takes for ``composition``: the sets' values, fixed and model-wide
    parameters at their declarations, mixing terms no set gives at zero, other keys no set
    gives at the model's defaults (``missing="default"``) or listed as absent."""
    keys = model.keys_for(composition)
    found = lookup(model, list(keys))
    values: dict[ParameterKey, Any] = dict(found.values)
    values.update(values_at_rows(found, composition.temperature_k))
    zero_mixing, defaulted, absent = [], [], []
    pairs = {(s.cation.name, s.anion.name): s for s in pair_salts(composition)}
    for key in found.missing:
        p = keys[key]
        salt = pairs.get(key.owner) if len(key.owner) == 2 else None
        if salt is not None and model.supports(salt):
            p = next((q for q in model.parameters_for(salt) if q.name == p.name), p)
        if p.owner_kind == "model":
            values[key] = float(p.default)  # the model's own constant (Davies' b, b-dot's a)
            continue
        if p.fixed:
            continue  # declared values: Pitzer's alphas and b, its beta2 outside 2-2 pairs
        if p.owner_kind in MIXING_KINDS:
            values[key] = 0.0
            zero_mixing.append(str(key))
        elif missing == "default":
            defaulted.append(str(key))
        else:
            absent.append(str(key))
    return Resolved(values, found, tuple(defaulted), tuple(zero_mixing), tuple(absent))


def values_at_rows(found: Lookup, temperature_k: np.ndarray) -> dict[ParameterKey, Any]:
    """The keys whose set gives a temperature form, each at the solutions' temperatures
    (``temperature.row_values``): one number when every row has the same temperature, else one
    value per row (N,), which a request takes as (1, N)."""
    t = np.atleast_1d(np.asarray(temperature_k, dtype=float))
    out: dict[ParameterKey, Any] = {}
    for key, further in found.coefficients.items():
        form_range = found.set_form.get(found.set_of.get(key, ""))
        if form_range is None:
            continue
        rows = row_values(form_range[0], float(found.values[key]), further, t)
        out[key] = float(rows[0]) if np.all(t == t[0]) else rows
    return out


def _one(model: SolutionModel, composition: Composition, lookup: LookupFn,
         missing: Literal["error", "default"], minerals: Sequence[Mineral]) -> ModelOnSolution:
    res = resolve_values(model, composition, lookup, missing)
    found, sets, set_of = res.found, res.sets, res.set_of
    if res.absent:
        return ModelOnSolution(model.id, model.name, None, res.refusal(), sets, set_of)
    try:
        props = evaluate_solution(model, composition, res.values)
    except (ModelDomainError, ModelError) as exc:
        return ModelOnSolution(model.id, model.name, None, str(exc), sets, set_of)
    marks = extrapolation_marks(model, composition, found)
    sat = None
    usable = minerals_in(minerals, composition.names)
    if usable and props.ln_gamma and props.water_activity is not None:
        ln_g = np.column_stack([props.ln_gamma[n] for n in composition.names])
        sat = saturation_index(usable, composition.names, composition.molality, ln_g,
                               props.water_activity, composition.temperature_k, model=model.id,
                               model_has_ion_pairing=pairs_ions(model))
    return ModelOnSolution(model.id, model.name, props, "", sets, set_of, res.defaulted,
                           res.zero_mixing, marks, sat)


def extrapolation_marks(model: SolutionModel, composition: Composition, found: Lookup
                        ) -> tuple[tuple[str, ...], ...]:
    """Per solution, the reasons it lies outside the ground the model and its parameters cover:
    above the ionic strength the model's authors claim; above the ionic strength at which a
    salt's binary values were fitted in their set (its highest molality, as ionic strength: the
    usual reading of binary parameters in a mixture); at a temperature other than a set's or
    outside the authors' claimed range."""
    i = composition.ionic_strength
    t = composition.temperature_k
    out: list[list[str]] = [[] for _ in range(composition.n)]
    limit = model.validity.max_ionic_strength
    if limit is not None:
        for r in np.flatnonzero(i > limit * (1 + 1e-12)):
            out[r].append(f"I above {limit:g} mol/kg, the model authors' range")
    salts = {s.name: s for s in pair_salts(composition)}
    used = {(set_id, "/".join(key.owner)) for key, set_id in found.set_of.items() if len(key.owner) == 2}
    for (set_id, salt_name), m_max in sorted(found.fitted_to.items()):
        salt = salts.get(salt_name)
        if salt is None or (set_id, f"{salt.cation.name}/{salt.anion.name}") not in used:
            continue
        i_max = float(salt.ionic_strength(m_max))
        for r in np.flatnonzero(i > i_max * (1 + 1e-12)):
            out[r].append(f"I above {i_max:.4g} mol/kg, where {set_id} fitted {salt_name} "
                          f"(to {m_max:g} mol/kg)")
    for set_id in dict.fromkeys(found.set_of.values()):
        if set_id in found.set_form:
            low, high = found.set_form[set_id][1]
            for r in np.flatnonzero((t < low - 0.01) | (t > high + 0.01)):
                out[r].append(f"T = {t[r]:g} K, outside {low:g}-{high:g} K, the range of "
                              f"{set_id}'s temperature form")
            continue
        ts = found.set_temperature.get(set_id)
        if ts is None:
            continue
        for r in np.flatnonzero(np.abs(t - ts) > 0.01):
            out[r].append(f"T = {t[r]:g} K, where {set_id} holds values for {ts:g} K")
    formed = [found.set_form[s][1] for s in dict.fromkeys(found.set_of.values()) if s in found.set_form]
    for row in range(composition.n):
        # where every set used carries a temperature form, the sets speak for the temperature
        # (their own ranges, above); the model's claim is that of one-temperature parameters
        if formed and len(formed) == len(set(found.set_of.values())):
            continue
        if not model.validity.covers_temperature(float(t[row])):
            out[row].append(f"T = {t[row]:g} K, outside the model authors' temperatures")
    return tuple(tuple(dict.fromkeys(m)) for m in out)


def pairs_ions(model: SolutionModel) -> bool:
    """Whether the model has a term standing for 2-2 ion association (Pitzer's beta2)."""
    return any(p.name == "beta2" for p in model.parameters)


def assess_solution(composition: Composition, models: Sequence[SolutionModel], lookup: LookupFn,
                    *, missing: Literal["error", "default"] = "error",
                    minerals: Sequence[Mineral] = ()) -> SolutionAssessment:
    """Each of ``models`` on ``composition`` (see the module docstring). Models that do not take
    the solution at all are kept with the reason, so the caller can say why a model is absent."""
    if missing not in ("error", "default"):
        raise UserError("missing must be 'error' or 'default'")
    at_25 = tuple(m for m in minerals if np.all(np.abs(composition.temperature_k - m.temperature_k) <= 0.5))
    out = []
    for model in models:
        if not model.supports_composition(composition):
            why = ("takes one salt at a time" if not getattr(model, "mixtures", False)
                   else "does not take these ions")
            out.append(ModelOnSolution(model.id, model.name, None, why))
            continue
        out.append(_one(model, composition, lookup, missing, at_25))
    return SolutionAssessment(composition, tuple(out), at_25)
