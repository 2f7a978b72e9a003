"""Evaluating a model the same way for every plugin: checks, Gibbs-Duhem, water activity.

The osmotic coefficient follows from ln(gamma±) through the Gibbs-Duhem relation for a binary
solution (:mod:`saltbench.chemistry.gibbs_duhem`), good to 1e-12 for every built-in model, well
inside the 1e-8 the contract asks for.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.gibbs_duhem import GAUSS_NODES, dilution_grid, osmotic_from_ln_gamma
from saltbench.errors import ModelDomainError, ModelError
from saltbench.models.contract import (
    Computed,
    EvalContext,
    Params,
    Request,
    SolutionModel,
    call_model,
)
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, ln_gamma_pm
from saltbench.models.salt_view import salt_view
from saltbench.water.debye_huckel import DebyeHuckel, debye_huckel_constants
from saltbench.water.properties import water_activity as water_activity_of

__all__ = ["GAUSS_NODES", "Evaluation", "call_model", "check_supported", "compute", "evaluate",
           "make_context", "osmotic_by_gibbs_duhem", "water_activity"]



@dataclass(frozen=True)
class Evaluation:
    molality: np.ndarray
    ln_gamma_pm: np.ndarray
    osmotic: np.ndarray
    osmotic_source: str  # "analytic" or "gibbs-duhem"
    ln_gamma_ions: dict[str, np.ndarray] | None
    water_activity: np.ndarray

    @property
    def gamma_pm(self) -> np.ndarray:
        return np.exp(self.ln_gamma_pm)


def _checked(model: SolutionModel, what: str, value: object, shape: tuple[int, ...]) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if arr.shape != shape:
        raise ModelError(f"model {model.id}: {what} has shape {arr.shape}, expected {shape}")
    if not np.all(np.isfinite(arr)):
        raise ModelError(f"model {model.id}: {what} is not finite at some molalities")
    return arr


def osmotic_by_gibbs_duhem(model: SolutionModel, m: np.ndarray, params: Params,
                           ctx: EvalContext, nodes: int = GAUSS_NODES) -> np.ndarray:
    """phi(m) from the model's ln(gamma±) through the Gibbs-Duhem integral (vectorised)."""
    model = salt_view(model)
    m = np.asarray(m, dtype=float)
    grid = dilution_grid(m, nodes)
    ln_g_grid = _checked(model, "ln_gamma_pm", call_model(model, "ln_gamma_pm", grid, params, ctx),
                         grid.shape)
    ln_g = _checked(model, "ln_gamma_pm", call_model(model, "ln_gamma_pm", m, params, ctx), m.shape)
    return osmotic_from_ln_gamma(ln_g, ln_g_grid, nodes)


def water_activity(electrolyte: Electrolyte, m: np.ndarray, osmotic: np.ndarray) -> np.ndarray:
    """a_w = exp(-nu m M_w phi) (:func:`saltbench.water.properties.water_activity`)."""
    return water_activity_of(electrolyte.nu * np.asarray(m), osmotic)


def make_context(electrolyte: Electrolyte, temperature_k: float = 298.15,
                 pressure_pa: float | None = None, dh: DebyeHuckel | None = None) -> EvalContext:
    return EvalContext(electrolyte, dh or debye_huckel_constants(temperature_k, pressure_pa))


def check_supported(model: SolutionModel, electrolyte: Electrolyte) -> None:
    """Raise :class:`ModelDomainError` when ``model`` does not take ``electrolyte``'s charge type."""
    if not model.supports(electrolyte):
        types = ", ".join(f"{a}-{b}" for a, b in sorted(model.charge_types or ()))
        raise ModelDomainError(
            f"model {model.id} does not support {electrolyte.charge_label} electrolytes like "
            f"{electrolyte.name} (supported: {types})")


def evaluate(model: SolutionModel, electrolyte: Electrolyte, molality: np.ndarray | list[float],
             params: Params | None = None, *, ctx: EvalContext | None = None,
             temperature_k: float = 298.15, ions: bool = False) -> Evaluation:
    """Evaluate ``model`` for ``electrolyte`` at ``molality`` with ``params`` (defaults if None).

    Raises :class:`ModelDomainError` for an unsupported charge type or a non-positive molality,
    and :class:`ModelError` when the plugin raises or returns NaN or the wrong shape.
    """
    check_supported(model, electrolyte)
    model = salt_view(model)
    m = np.atleast_1d(np.asarray(molality, dtype=float))
    if m.ndim != 1 or np.any(~np.isfinite(m)) or np.any(m <= 0):
        raise ModelDomainError("molalities must be positive finite numbers (mol/kg)")
    values = dict(model.defaults(electrolyte))
    if params:
        values.update(params)
    ctx = ctx or make_context(electrolyte, temperature_k)
    ln_g = _checked(model, "ln_gamma_pm", call_model(model, "ln_gamma_pm", m, values, ctx), m.shape)
    phi_raw = call_model(model, "osmotic", m, values, ctx)
    if phi_raw is None:
        phi, source = osmotic_by_gibbs_duhem(model, m, values, ctx), "gibbs-duhem"
    else:
        phi, source = _checked(model, "osmotic", phi_raw, m.shape), "analytic"
    ion_values = None
    if ions:
        raw = call_model(model, "ln_gamma_ions", m, values, ctx)
        if raw is not None:
            ion_values = {k: _checked(model, f"ln_gamma_ions[{k}]", v, m.shape)
                          for k, v in dict(raw).items()}
    return Evaluation(m, ln_g, phi, source, ion_values, water_activity(electrolyte, m, phi))


def compute(model: SolutionModel, request: Request) -> Computed:
    """``model.compute(request)`` checked, with what the harness derives for every model.

    Plugin exceptions become :class:`ModelError` (a UserError, a setting the plugin refuses,
    passes as it is); every value must be finite and (S, N).
    Asked-for quantities the model does not give are derived where thermodynamics allows: the
    osmotic coefficient of a solution of one salt by the Gibbs-Duhem integral of its ln gamma±
    (:mod:`saltbench.chemistry.gibbs_duhem`), and the water activity from phi,
    ln a_w = -M_w phi sum_i m_i (IUPAC Green Book, 3rd ed., 2007, 2.13). Anything else missing
    is a :class:`ModelDomainError` naming it.
    """
    comp = request.composition
    if not model.supports_composition(comp):
        raise ModelDomainError(f"model {model.id} does not take a solution of "
                               f"{', '.join(comp.names)}")
    wanted = set(request.quantities)
    gives = model.computes_for(comp)
    own = tuple(q for q in request.quantities if q.kind in gives)
    salt = comp.single_salt
    need_phi = (OSMOTIC in wanted or WATER_ACTIVITY in wanted) and "osmotic" not in gives
    if need_phi and salt is not None:
        own += (ln_gamma_pm(salt.name),)
    elif need_phi and "water_activity" not in gives:
        raise ModelDomainError(f"model {model.id} gives no osmotic coefficient for mixtures")
    if (WATER_ACTIVITY in wanted and WATER_ACTIVITY not in own and "osmotic" in gives):
        own += (OSMOTIC,)
    out = call_model(model, "compute", replace(request, quantities=tuple(dict.fromkeys(own))))
    shape = (request.n_sets, comp.n)
    values = {q: _checked(model, str(q), v, shape) for q, v in dict(out.values).items()}
    derivs = {q: {k: _checked(model, f"d {q}/d {k}", v, shape) for k, v in dict(d).items()}
              for q, d in dict(out.derivatives).items()}
    if need_phi and salt is not None and OSMOTIC not in values:
        m = comp.salt_molality(salt)
        phi = np.empty(shape)
        names = model.salt_keys(salt)
        for g, dh in enumerate(request.conditions.dh):
            rows = np.flatnonzero(request.conditions.group == g)
            if not rows.size:
                continue
            ctx = make_context(salt, dh=dh)
            for s in range(request.n_sets):
                phi[s, rows] = osmotic_by_gibbs_duhem(model, m[rows],
                                                      request.named_values(names, s, rows[0]), ctx)
        values[OSMOTIC] = phi
    if WATER_ACTIVITY in wanted and WATER_ACTIVITY not in values:
        values[WATER_ACTIVITY] = water_activity_of(comp.molality.sum(axis=1), values[OSMOTIC])
    missing = [str(q) for q in request.quantities if q not in values]
    if missing:
        raise ModelDomainError(f"model {model.id} does not give {', '.join(missing)}")
    return Computed({q: values[q] for q in request.quantities}, derivs)

