"""Per-point residuals (data minus model) of each refitted model, for the residual figures.

The comparison keeps summary statistics of each fit, not its per-point predictions, so the
report re-evaluates every model at the data molalities with its fitted parameters, on the same
basis the fit used: ln(gamma±) for activity coefficients, phi for osmotic coefficients (water
activities arrive already converted to phi; see :mod:`saltbench.fitting.data`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Residuals:
    molality: np.ndarray
    kind: np.ndarray  # "ln_gamma" or "osmotic", aligned with molality
    residual: np.ndarray  # data - model, on the basis of ``kind``

    def rms(self, kind: str) -> float | None:
        sel = self.kind == kind
        return float(np.sqrt(np.mean(self.residual[sel] ** 2))) if np.any(sel) else None


def refit_residuals(comparison, registry, electrolytes: dict) -> dict[tuple[str, str], Residuals]:
    """``{(electrolyte, model id): Residuals}`` for every outcome with a fit and no error.

    ``electrolytes`` maps names to :class:`~saltbench.chemistry.electrolyte.Electrolyte`.
    A model that cannot be evaluated here is left out (the report then says so).
    """
    from saltbench.errors import SaltbenchError
    from saltbench.models.evaluate import evaluate, make_context
    from saltbench.water.debye_huckel import debye_huckel_constants

    dh = debye_huckel_constants(comparison.settings.temperature_k)
    out: dict[tuple[str, str], Residuals] = {}
    for name, outcomes in comparison.outcomes.items():
        data = comparison.data[name]
        e = electrolytes[name]
        ctx = make_context(e, dh=dh)
        m = np.asarray(data.molality, dtype=float)
        kind = np.asarray(data.kind).astype(str)
        for o in outcomes:
            if o.error or not o.fit or o.model not in registry.models:
                continue
            values = {p["name"]: p["value"] for p in o.fit["parameters"] if p["value"] is not None}
            try:
                ev = evaluate(registry.models[o.model].model, e, m, values, ctx=ctx)
            except SaltbenchError:
                continue
            pred = np.where(kind == "osmotic", ev.osmotic, ev.ln_gamma_pm)
            out[(name, o.model)] = Residuals(m, kind, np.asarray(data.value, dtype=float) - pred)
    return out


def mixture_residuals(comparison, data, registry) -> dict[tuple[str, str], Residuals]:
    """``{(system, model id): Residuals}`` of a mixture comparison on ``data`` (the
    :class:`saltbench.fitting.MixtureData` it was run on): each model evaluated at every
    composition with its fitted values held (mixing terms as refitted, binary values as held),
    on the fit's basis. ``Residuals.molality`` holds each point's ionic strength, the scan
    coordinate of mixture data."""
    from saltbench.errors import SaltbenchError
    from saltbench.fitting.mixture_problem import build_mixture_problem
    from saltbench.water.debye_huckel import debye_huckel_constants

    dh = debye_huckel_constants(comparison.settings.temperature_k)
    ionic = np.asarray(data.composition.ionic_strength, dtype=float)
    kind = np.asarray(data.kind).astype(str)
    out: dict[tuple[str, str], Residuals] = {}
    for o in comparison.outcomes:
        if o.error or not o.fit or o.model not in registry.models:
            continue
        values = {p["name"]: p["value"] for p in o.fit["parameters"] if p["value"] is not None}
        try:
            problem = build_mixture_problem(registry.models[o.model].model, data, held=values, free=(),
                                            dh=dh, require_free=False)
            pred = problem.predict(problem.theta0)
        except SaltbenchError:
            continue
        out[(comparison.system, o.model)] = Residuals(ionic, kind, np.asarray(data.value, dtype=float) - pred)
    return out
