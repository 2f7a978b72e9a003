"""Plain-language verdicts and the recommendation: the simplest model that meets the tolerance.

A model qualifies only when its fit has no flag (did not converge, singular, ill-conditioned,
parameter on a bound, model error...) and its refitted validity range, judged on held-out
predictions, reaches the requested molality (or, without one, the end of the data). Among those
the fewest free parameters wins; ties go to the smaller held-out RMS of ln gamma±, then AICc.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from saltbench.comparison.outcome import ModelOutcome


@dataclass
class Recommendation:
    electrolyte: str
    model: str | None
    target_molality: float
    statement: str
    furthest_model: str | None = None
    furthest_molality: float | None = None

    def to_dict(self) -> dict:
        return self.__dict__.copy()


def _reach(o: ModelOutcome) -> float:
    v = o.valid_up_to("refit")
    return v if v is not None else 0.0


def verdict(o: ModelOutcome, target: float) -> str:
    if o.error:
        return f"failed: {o.error}"
    if o.fit_flags:
        return "not ranked: " + "; ".join(o.fit_flags)
    v = o.valid_up_to("refit")
    if v is None:
        return "outside tolerance even at the lowest molality"
    limited = (o.valid_refit or {}).get("limited_by")
    if v >= target * (1 - 1e-9):
        tail = " (the data end before the model fails)" if limited == "data" else ""
        return f"within tolerance over the whole range, to {v:g} mol/kg{tail}"
    return f"within tolerance only up to {v:g} mol/kg"


def recommend(outcomes: Sequence[ModelOutcome], target: float, tol_text: str) -> Recommendation:
    electrolyte = outcomes[0].electrolyte if outcomes else ""
    for o in outcomes:
        o.verdict = verdict(o, target)
    good = [o for o in outcomes if o.usable and _reach(o) >= target * (1 - 1e-9)]
    if good:
        def key(o: ModelOutcome):
            r = o.record()
            return (o.n_params, r["heldout_rms_ln_gamma"] if r["heldout_rms_ln_gamma"] is not None else 1e9,
                    r["aicc"] if r["aicc"] is not None else 1e9, o.model)
        best = min(good, key=key)
        best.recommended = True
        return Recommendation(electrolyte, best.model, target,
                              f"{best.model_name} [{best.model}] is the simplest model within {tol_text} "
                              f"up to {target:g} mol/kg ({best.n_params} fitted parameter(s)).")
    usable = [o for o in outcomes if o.usable and o.valid_up_to("refit")]
    if usable:
        far = max(usable, key=_reach)
        return Recommendation(electrolyte, None, target,
                              f"No model stays within {tol_text} up to {target:g} mol/kg; the furthest "
                              f"is {far.model_name} [{far.model}], to {_reach(far):g} mol/kg.",
                              far.model, _reach(far))
    return Recommendation(electrolyte, None, target, f"No model stays within {tol_text} for {electrolyte} "
                          "on these data.")
