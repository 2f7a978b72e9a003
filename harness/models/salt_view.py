"""A solution model seen as formulas for one salt: what the one-salt paths of the harness call.

Fitting, cross-validation and validity scans work on one salt at a time and ask for ln gamma±,
phi and their derivatives at a vector of molalities many times over. :func:`salt_view` gives
every model that shape: a model written to the one-salt form (:class:`ActivityModel`) is
returned as it is; any other :class:`SolutionModel` is wrapped, and each call becomes one
:meth:`SolutionModel.compute` request for a solution of that salt alone, with the parameters
keyed by :meth:`Parameter.key_for`.
"""

from __future__ import annotations

import numpy as np

from saltbench.chemistry.solution import Composition
from saltbench.models.contract import (
    ActivityModel,
    Computed,
    Conditions,
    EvalContext,
    ParameterKey,
    Params,
    Request,
    SolutionModel,
)
from saltbench.models.quantities import OSMOTIC, Quantity, ln_gamma, ln_gamma_pm


def salt_view(model: SolutionModel) -> ActivityModel:
    """``model`` as one-salt formulas (itself when it is written that way)."""
    if isinstance(model, ActivityModel):
        return model
    return SaltView(model)


def unwrapped(model: SolutionModel) -> SolutionModel:
    """The model a :func:`salt_view` shows (``model`` itself when it is not a view): two views
    made of one model are the same model."""
    return model.model if isinstance(model, SaltView) else model


class SaltView(ActivityModel):
    """One-salt calls answered by the wrapped model's ``compute``."""

    def __init__(self, model: SolutionModel) -> None:
        self.model = model
        for attr in ("id", "name", "citation", "charge_types", "parameters", "validity",
                     "description", "single_ion_convention"):
            setattr(self, attr, getattr(model, attr))

    @property
    def computes(self) -> frozenset[str]:  # type: ignore[override]
        return self.model.computes

    def parameters_for(self, electrolyte=None):
        return self.model.parameters_for(electrolyte)

    def supports(self, electrolyte):
        return self.model.supports(electrolyte)

    def compute(self, request: Request) -> Computed:
        return self.model.compute(request)

    def _ask(self, m: np.ndarray, params: Params, ctx: EvalContext,
             quantities: tuple[Quantity, ...], derivatives: bool
             ) -> tuple[Computed, dict[str, ParameterKey]]:
        e = ctx.electrolyte
        m = np.asarray(m, dtype=float)
        comp = Composition.of_salt(e, m, ctx.temperature_k, ctx.pressure_pa)
        keys = self.model.salt_keys(e)
        values = {k: np.array([[float(params[name])]]) for name, k in keys.items()}
        wrt: tuple[ParameterKey, ...] = ()
        if derivatives:
            wrt = tuple(k for name, k in keys.items() if ctx.wrt is None or name in ctx.wrt)
        request = Request(comp, quantities, values, Conditions.single(ctx.dh, m.size), wrt)
        return self.model.compute(request), keys

    def ln_gamma_pm(self, m, params, ctx):
        q = ln_gamma_pm(ctx.electrolyte.name)
        return self._ask(m, params, ctx, (q,), False)[0].values[q][0]

    def osmotic(self, m, params, ctx):
        if "osmotic" not in self.model.computes:
            return None
        return self._ask(m, params, ctx, (OSMOTIC,), False)[0].values[OSMOTIC][0]

    def ln_gamma_ions(self, m, params, ctx):
        if "ln_gamma" not in self.model.computes:
            return None
        e = ctx.electrolyte
        qc, qa = ln_gamma(e.cation.name), ln_gamma(e.anion.name)
        out = self._ask(m, params, ctx, (qc, qa), False)[0].values
        return {"cation": out[qc][0], "anion": out[qa][0]}

    def _derivatives(self, out: Computed, keys: dict[str, ParameterKey], q: Quantity
                     ) -> dict[str, np.ndarray]:
        given = out.derivatives.get(q, {})
        return {name: given[k][0] for name, k in keys.items() if k in given}

    def _with_derivatives(self, m, params, ctx):
        """The model's answer with derivatives, or None when it gives none of those asked for
        (then the harness differences; a model need not give derivatives)."""
        if "osmotic" not in self.model.computes:
            return None
        q = ln_gamma_pm(ctx.electrolyte.name)
        out, keys = self._ask(m, params, ctx, (q, OSMOTIC), True)
        asked = [name for name in keys if ctx.wrt is None or name in ctx.wrt]
        if asked and not any(out.derivatives.get(q, {})):
            return None
        return (out.values[q][0], out.values[OSMOTIC][0], self._derivatives(out, keys, q),
                self._derivatives(out, keys, OSMOTIC))

    def jacobian(self, m, params, ctx):
        got = self._with_derivatives(m, params, ctx)
        return None if got is None else got[2:]

    def values_and_jacobian(self, m, params, ctx):
        return self._with_derivatives(m, params, ctx)
