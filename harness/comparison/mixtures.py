"""Which model to trust for a family of mixtures: each model judged on mixture data.

The same method as for one salt (:mod:`saltbench.comparison.assess` and the ranking of
:mod:`saltbench.comparison.ranking`), along ionic strength instead of molality:

- binary parameters (cation-anion pairs, salts, ions) are held at the values of published sets
  (the rules of :func:`saltbench.comparison.solutions.resolve_values`); the free parameters are
  the model's mixing terms that the data can see (Pitzer's theta and psi), none for a model
  without mixing terms, which is then judged as it stands;
- the fit's residuals, its held-out error by k-fold cross-validation over ionic strength, and
  the highest ionic strength up to which the model stays within tolerance, with the mixing
  terms refitted ("refit") and with every value as published ("published");
- the recommendation: the simplest model within tolerance up to the target ionic strength that
  is not materially less accurate than the most accurate (:func:`ranking.recommend`).

The outcomes are :class:`~saltbench.comparison.outcome.ModelOutcome` values whose
``electrolyte`` is the system's name and whose ranges are ionic strengths (mol/kg).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from saltbench.comparison.outcome import ModelOutcome
from saltbench.comparison.ranking import Recommendation, recommend
from saltbench.comparison.settings import CompareSettings
from saltbench.comparison.solutions import MIXING_KINDS, LookupFn, resolve_values
from saltbench.errors import SaltbenchError
from saltbench.fitting.flags import FlagKind, flag
from saltbench.fitting.mixture_problem import KeyLike
from saltbench.fitting.validity import ValidityRange


@dataclass
class MixtureComparison:
    """Every model on one system's mixture data, and the recommendation."""

    system: str
    n_points: int
    max_ionic_strength: float
    outcomes: list[ModelOutcome]
    recommendation: Recommendation
    settings: CompareSettings

    def records(self) -> list[dict]:
        return [o.record() | {"scan": "ionic_strength"} for o in self.outcomes]


def _as_range(v) -> ValidityRange:
    """A mixture validity range in the one-salt type, its molality fields holding ionic strength
    (the scan coordinate), so ranking and output read it unchanged."""
    return ValidityRange(v.max_ionic_strength, v.max_ionic_strength, v.limited_by,
                         v.first_failing_ionic_strength, dict(v.tolerance), v.mode,
                         v.highest_data_ionic_strength, list(v.flags), [])


def _rms(r: np.ndarray) -> float | None:
    return float(np.sqrt(np.mean(r**2))) if r.size else None


def assess_mixture(model, plugin: str, system: str, data, lookup: LookupFn,
                   settings: CompareSettings, missing: str = "error") -> ModelOutcome:
    """One model on ``data`` (a :class:`saltbench.fitting.MixtureData`)."""
    from saltbench.fitting import cross_validate_mixture, mixture_validity
    from saltbench.fitting.least_squares import solve
    from saltbench.fitting.mixture_problem import build_mixture_problem
    from saltbench.fitting.result import build_result
    from saltbench.water.debye_huckel import debye_huckel_constants

    out = ModelOutcome(system, model.id, model.name, plugin, 0, None, None, None, None, None, False)
    try:
        comp = data.composition
        res = resolve_values(model, comp, lookup, missing)  # type: ignore[arg-type]
        if res.absent:
            out.error = res.refusal()
            return out
        keys = model.keys_for(comp)
        mixing = [k for k, p in keys.items() if p.owner_kind in MIXING_KINDS and p.linear]
        published: dict[KeyLike, float] = {k: v for k, v in res.values.items()}
        held: dict[KeyLike, float] = {k: v for k, v in published.items() if k not in mixing}
        out.published_set = ", ".join(res.sets) or None
        dh = debye_huckel_constants(settings.temperature_k)
        free = None if mixing else ()
        try:
            problem = build_mixture_problem(model, data, held=held, free=free, dh=dh,
                                            require_free=bool(mixing))
        except SaltbenchError:
            # the data never hold the ions of any mixing term together: judged as published
            mixing, free = [], ()
            held = published
            problem = build_mixture_problem(model, data, held=held, free=(), dh=dh, require_free=False)
        out.n_params = problem.k
        result = build_result(problem, solve(problem))
        out.fit = result.to_dict()
        out.flags += list(result.flags)
        if not result.converged and not any(f.kind is FlagKind.DID_NOT_CONVERGE for f in result.flags):
            out.flags.append(flag(FlagKind.DID_NOT_CONVERGE, detail=result.message))
        if problem.k:
            cv = cross_validate_mixture(model, data, held=held, free=free, dh=dh, folds=settings.folds)
            held_out = cv.to_dict()
            held_out.pop("points", None)
            out.heldout = held_out
        else:
            r = data.value - result.prediction
            kind = np.asarray(data.kind)
            out.heldout = {"scheme": "none (no free parameters)", "folds": 0, "held_out": {
                "ln_gamma": {"rms": _rms(r[kind == "ln_gamma"])},
                "osmotic": {"rms": _rms(r[kind == "osmotic"])}}, "flags": []}
        limit = model.validity.max_ionic_strength
        top = float(np.max(comp.ionic_strength))
        if limit is not None and top > limit * (1 + 1e-9):
            out.beyond_claim = limit
        if settings.validity_scan:
            tl, tp = settings.tol_ln_gamma, settings.tol_phi
            out.valid_refit = _as_range(mixture_validity(
                model, data, held=held, free=free, dh=dh, refit=bool(problem.k),
                folds=settings.scan_folds, tolerance_ln_gamma=tl, tolerance_phi=tp))
            out.valid_published = _as_range(mixture_validity(
                model, data, held=published, free=(), dh=dh, refit=False,
                tolerance_ln_gamma=tl, tolerance_phi=tp))
    except SaltbenchError as exc:
        out.error = str(exc)
    except Exception as exc:  # a plugin bug must not stop the comparison of the other models
        out.error = f"{type(exc).__name__}: {exc}"
    return out


def compare_mixtures(system: str, data, models: Sequence[tuple[object, str]], lookup: LookupFn,
                     settings: CompareSettings, *, missing: str = "error") -> MixtureComparison:
    """Each of ``models`` (model, plugin name) on ``data``; the target is ``settings.up_to`` as
    an ionic strength, or the highest ionic strength of the data."""
    outcomes = [assess_mixture(m, plugin, system, data, lookup, settings, missing)
                for m, plugin in models]
    top = float(np.max(data.composition.ionic_strength))
    target = settings.up_to if settings.up_to is not None else top
    rec = recommend(outcomes, target, settings.tol_ln_gamma, settings.tol_phi)
    return MixtureComparison(system, data.composition.n, top, outcomes, rec, settings)
