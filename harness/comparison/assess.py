"""Assess one model on one electrolyte: fit, held-out error, validity (published and refitted).

Runs in worker processes too, so it takes only picklable inputs and finds the model by id.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.comparison.anchoring import anchoring_flags
from saltbench.comparison.outcome import ModelOutcome
from saltbench.comparison.settings import CompareSettings
from saltbench.errors import SaltbenchError
from saltbench.fitting.data import FitData
from saltbench.fitting.flags import Flag, FlagKind, flag


@dataclass
class PublishedInput:
    set_id: str
    values: dict[str, float]
    a_phi: float | None
    from_memory: bool
    temperature_k: float = 298.15
    #: the range of the set's temperature form (K); None for values at one temperature
    temperature_range_k: tuple[float, float] | None = None

    def basis(self, temperature_k: float):
        """The constant and temperature this set is judged at (saltbench.water.basis)."""
        from saltbench.water.basis import evaluation_basis

        return evaluation_basis(temperature_k, set_id=self.set_id, set_a_phi=self.a_phi,
                                set_temperature_k=self.temperature_k,
                                set_temperature_range_k=self.temperature_range_k)


def _curves(model, e: Electrolyte, values: dict[str, float], m_top: float, dh) -> dict:
    from saltbench.models.evaluate import evaluate, make_context

    grid = np.geomspace(min(1e-3, m_top / 100), m_top, 80)
    ev = evaluate(model, e, grid, values, ctx=make_context(e, dh=dh))
    return {"molality": grid.tolist(), "ln_gamma_pm": ev.ln_gamma_pm.tolist(), "osmotic": ev.osmotic.tolist()}


def assess(model, plugin: str, e: Electrolyte, data: FitData, published: PublishedInput | None,
           settings: CompareSettings, curves: bool = False) -> ModelOutcome:
    from saltbench.fitting import validity_range
    from saltbench.fitting.crossval import cross_validate_problem
    from saltbench.fitting.engine import run
    from saltbench.fitting.problem import build_problem
    from saltbench.water.debye_huckel import debye_huckel_constants

    n_free = len(model.free_parameters(e))
    out = ModelOutcome(e.name, model.id, model.name, plugin, n_free, None, None, None, None,
                       published.set_id if published else None,
                       bool(published and published.from_memory))
    dh = debye_huckel_constants(settings.temperature_k)
    try:
        # One problem for the fit and its cross-validation: the folds are seeded from the fit's
        # optimum, which cross_validate would otherwise compute a second time.
        problem = build_problem(model, [(e, data)], dh=dh)
        result = run(problem)
        out.fit = result.to_dict()
        out.flags += list(result.flags)
        if not result.converged and not any(f.kind is FlagKind.DID_NOT_CONVERGE for f in result.flags):
            out.flags.append(flag(FlagKind.DID_NOT_CONVERGE, detail=result.message))
        cv = None
        if n_free > 0:
            solved = bool(np.all(np.isfinite(result.prediction)))
            cv = cross_validate_problem(problem, settings.folds,
                                        start=problem.theta_from(result.values) if solved else None)
            held = cv.to_dict(points=False)
            out.heldout = held
        else:
            pred = result.prediction
            r = data.value - pred
            held = {"ln_gamma": _rms(r, data.kind == "ln_gamma"), "osmotic": _rms(r, data.kind == "osmotic")}
            out.heldout = {"scheme": "none (no free parameters)", "folds": 0,
                           "held_out": {k: {"rms": v} for k, v in held.items()}, "flags": []}
        out.flags += determination_notes(result, out.heldout, settings)
        if model.validity and not model.validity.covers_temperature(settings.temperature_k):
            span = model.validity.temperature_k
            out.flags.append(flag(FlagKind.AUTHORS_TEMPERATURE, model_name=model.name, low=span[0], high=span[1],
                                  temperature=settings.temperature_k))
        claim = model.validity.max_molality_for(e) if model.validity else None
        top = float(data.molality.max())
        if claim is not None and top > claim * (1 + 1e-9):
            out.beyond_claim = claim
            out.flags.append(flag(FlagKind.AUTHORS_MOLALITY, model_name=model.name, claim=claim, electrolyte=e.name,
                                  note=model.validity.note or "its Validity", top=top))
        if settings.validity_scan:
            if n_free > 0:
                refit = validity_range(model, e, data, tolerance_ln_gamma=settings.tol_ln_gamma,
                                       tolerance_phi=settings.tol_phi, folds=settings.scan_folds,
                                       dh=dh, full_cv=cv, stop_early=True,
                                       full_fit=(problem, result))
            else:
                refit = validity_range(model, e, data, params={}, tolerance_ln_gamma=settings.tol_ln_gamma,
                                       tolerance_phi=settings.tol_phi, dh=dh)
            # The comparison keeps only the range and its limits, so each trial's folds stop at
            # the first one out of tolerance (pass or fail is then known; see validity_range).
            out.valid_refit = replace(refit, trials=[])
            if published is not None:
                basis = published.basis(settings.temperature_k)
                pdh = basis.dh
                if basis.off_temperature and published.temperature_range_k is not None:
                    low, high = published.temperature_range_k
                    out.flags.append(flag(FlagKind.PUBLISHED_TEMPERATURE_RANGE, set_id=published.set_id,
                                          low=low, high=high, temperature=settings.temperature_k))
                elif basis.off_temperature:
                    out.flags.append(flag(FlagKind.PUBLISHED_TEMPERATURE, set_id=published.set_id,
                                          set_temperature=published.temperature_k,
                                          temperature=settings.temperature_k, constant=basis.constant))
                out.valid_published = replace(validity_range(
                    model, e, data, params=published.values, tolerance_ln_gamma=settings.tol_ln_gamma,
                    tolerance_phi=settings.tol_phi, dh=pdh), trials=[])
                out.flags += anchoring_flags(model, e, data, published.set_id, published.values, pdh,
                                             settings.tol_ln_gamma)
        if curves:
            top = float(data.molality.max())
            out.curve = {"refit": _curves(model, e, result.model_values(e.name), top, dh)}
            if published is not None:
                pdh = published.basis(settings.temperature_k).dh
                out.curve["published"] = _curves(model, e, {**model.defaults(e), **published.values}, top, pdh)
    except SaltbenchError as exc:
        out.error = str(exc)
    except Exception as exc:  # a plugin bug must not stop the comparison of the other models
        out.error = f"{type(exc).__name__}: {exc}"
    return out


def determination_notes(result, heldout: dict | None, settings: CompareSettings) -> list[Flag]:
    """How well the data determine the parameters, in words, apart from whether the model holds:
    held-out errors beyond the tolerance, and parameters whose standard error exceeds their value."""
    notes = []
    held = (heldout or {}).get("held_out", {})
    for kind, tol in settings.tolerances.items():
        worst = (held.get(kind) or {}).get("max_abs")
        if heldout and heldout.get("folds") and worst is not None and worst > tol:
            notes.append(flag(FlagKind.DETERMINATION_HELDOUT, worst=worst, quantity=kind, tolerance=tol))
    for p in result.parameters:
        se = p.get("stderr")
        if se is not None and np.isfinite(se) and se > abs(p["value"]):
            notes.append(flag(FlagKind.DETERMINATION_STDERR, name=p["name"], value=p["value"], stderr=se))
    return notes


def _rms(r: np.ndarray, sel: np.ndarray) -> float | None:
    return float(np.sqrt(np.mean(r[sel] ** 2))) if np.any(sel) else None
