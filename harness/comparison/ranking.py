"""Plain-language verdicts and the recommendation: the simplest model that meets the tolerance
and is not materially less accurate than the best.

A model qualifies only when its fit has no flag (did not converge, singular, ill-conditioned,
parameter on a bound, model error...) and its refitted validity range reaches the requested
molality (or, without one, the end of the data). Among those, the most accurate is the one with
the smallest held-out RMS (ln gamma±, or phi where only osmotic data were compared), then AICc.
The recommendation is the model with the fewest free parameters that is not materially worse
than the most accurate, preferring models used within the range their authors claim. A model is
materially worse when its held-out RMS exceeds ``MATERIAL_RATIO`` times the best and its AICc
exceeds the best's by more than ``MATERIAL_AICC`` (Burnham and Anderson's rule of thumb, from
memory of Model Selection and Multimodel Inference, 2nd ed. 2002, sec. 2.6: a difference above 10
leaves essentially no support for the worse model). Held-out RMS values are compared to four
significant digits (two models with one equation differ only in floating-point noise); ties then
go to AICc, then the model id, so equivalent models are ranked by a stated rule. The most accurate
model is always named when it is not the one recommended.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from saltbench.comparison.outcome import ModelOutcome
from saltbench.fitting.validity import SPARSE

MATERIAL_RATIO = 1.5
MATERIAL_AICC = 10.0


@dataclass
class Recommendation:
    electrolyte: str
    model: str | None
    target_molality: float
    statement: str
    furthest_model: str | None = None
    furthest_molality: float | None = None
    most_accurate: str | None = None
    #: "recommended", "none-holds" (no model over the range) or "too-few-points"
    kind: str = "recommended"

    def to_dict(self) -> dict:
        return self.__dict__.copy()


def _reach(o: ModelOutcome) -> float:
    v = o.valid_up_to("refit")
    return v if v is not None else 0.0


def _heldout(o: ModelOutcome) -> float:
    """Held-out RMS to four significant digits (ln gamma±, else phi; inf when none)."""
    r = o.record()
    v = r["heldout_rms_ln_gamma"] if r["heldout_rms_ln_gamma"] is not None else r["heldout_rms_osmotic"]
    return float(f"{v:.4g}") if v is not None else float("inf")


def _aicc(o: ModelOutcome) -> float:
    v = o.record()["aicc"]
    return v if v is not None else float("inf")


def _materially_worse(o: ModelOutcome, best: ModelOutcome) -> bool:
    return _heldout(o) > MATERIAL_RATIO * _heldout(best) and _aicc(o) - _aicc(best) > MATERIAL_AICC


def verdict(o: ModelOutcome, target: float) -> str:
    if o.error:
        return f"failed: {o.error}"
    if o.fit_flags:
        return "not ranked: " + "; ".join(o.fit_flags)
    v = o.valid_up_to("refit")
    if v is None:
        too_few = [f for f in (o.valid_refit or {}).get("flags", []) if f.startswith("too few points")]
        return too_few[0] if too_few else "outside tolerance even at the lowest molality"
    limited = (o.valid_refit or {}).get("limited_by")
    sparse = [f for f in (o.valid_refit or {}).get("flags", []) if f.startswith(SPARSE)]
    gaps = f"; {'; '.join(sparse)}" if sparse else ""
    if v >= target * (1 - 1e-9):
        tail = " (the data end before the model fails)" if limited == "data" else ""
        return f"within tolerance over the whole range, to {v:g} mol/kg{tail}{gaps}"
    return f"within tolerance only up to {v:g} mol/kg{gaps}"


def recommend(outcomes: Sequence[ModelOutcome], target: float, tol_text: str) -> Recommendation:
    electrolyte = outcomes[0].electrolyte if outcomes else ""
    for o in outcomes:
        o.verdict = verdict(o, target)
    good = [o for o in outcomes if o.usable and _reach(o) >= target * (1 - 1e-9)]
    if good:
        accurate = min(good, key=lambda o: (_heldout(o), _aicc(o), o.model))
        # a model used beyond the range its authors claim is recommended only when none within
        # its claim qualifies (it is still named as the most accurate)
        fair = [o for o in good if not _materially_worse(o, accurate)]
        fair = [o for o in fair if o.beyond_claim is None] or fair
        best = min(fair, key=lambda o: (o.n_params, _heldout(o), _aicc(o), o.model))
        best.recommended = True
        text = (f"{best.model_name} [{best.model}] is the simplest model within {tol_text} up to "
                f"{target:g} mol/kg ({best.n_params} fitted parameter(s)) not materially less accurate "
                f"than the best")
        if accurate is not best:
            text += (f"; the most accurate is {accurate.model_name} [{accurate.model}] (held-out RMS "
                     f"{_heldout(accurate):.2g} against {_heldout(best):.2g})")
        return Recommendation(electrolyte, best.model, target, text + ".", most_accurate=accurate.model)
    n_points = max((o.record()["n_points"] or 0 for o in outcomes), default=0)
    if n_points < 3:
        return Recommendation(electrolyte, None, target, f"{electrolyte} has {n_points} data point(s) here: too "
                              "few to judge any model against.", kind="too-few-points")
    usable = [o for o in outcomes if o.usable and o.valid_up_to("refit")]
    if usable:
        far = max(usable, key=_reach)
        return Recommendation(electrolyte, None, target,
                              f"No model stays within {tol_text} up to {target:g} mol/kg; the furthest "
                              f"is {far.model_name} [{far.model}], to {_reach(far):g} mol/kg.",
                              far.model, _reach(far), kind="none-holds")
    return Recommendation(electrolyte, None, target, f"No model stays within {tol_text} for {electrolyte} "
                          "on these data.", kind="none-holds")
