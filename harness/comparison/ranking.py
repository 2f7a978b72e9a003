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
from enum import StrEnum

from saltbench.comparison.outcome import ModelOutcome, Verdict, VerdictKind
from saltbench.fitting.flags import FlagKind

MATERIAL_RATIO = 1.5
MATERIAL_AICC = 10.0


class RecommendationKind(StrEnum):
    RECOMMENDED = "recommended"
    NONE_HOLDS = "none-holds"  # no model over the range
    TOO_FEW_POINTS = "too-few-points"


@dataclass
class Recommendation:
    """The recommendation for one electrolyte; :attr:`statement` is its wording in every output."""

    electrolyte: str
    model: str | None
    target_molality: float
    furthest_model: str | None = None
    furthest_molality: float | None = None
    most_accurate: str | None = None
    kind: RecommendationKind = RecommendationKind.RECOMMENDED
    tol_ln_gamma: float = 0.01
    tol_phi: float = 0.01
    model_name: str | None = None  # of the recommended model
    n_params: int | None = None  # of the recommended model
    most_accurate_name: str | None = None
    heldout_model: float | None = None  # held-out RMS of the recommended model (4 significant digits)
    heldout_most_accurate: float | None = None
    furthest_name: str | None = None
    n_points: int | None = None  # with TOO_FEW_POINTS

    @property
    def statement(self) -> str:
        tol = f"|d ln gamma±| <= {self.tol_ln_gamma:g} and |d phi| <= {self.tol_phi:g}"
        if self.kind is RecommendationKind.RECOMMENDED:
            text = (f"{self.model_name} [{self.model}] is the simplest model within {tol} up to "
                    f"{self.target_molality:g} mol/kg ({self.n_params} fitted parameter(s)) not materially "
                    "less accurate than the best")
            if self.most_accurate != self.model:
                text += (f"; the most accurate is {self.most_accurate_name} [{self.most_accurate}] (held-out "
                         f"RMS {self.heldout_most_accurate:.2g} against {self.heldout_model:.2g})")
            return text + "."
        if self.kind is RecommendationKind.TOO_FEW_POINTS:
            return (f"{self.electrolyte} has {self.n_points} data point(s) here: too few to judge any model "
                    "against.")
        if self.furthest_model is not None:
            return (f"No model stays within {tol} up to {self.target_molality:g} mol/kg; the furthest is "
                    f"{self.furthest_name} [{self.furthest_model}], to {self.furthest_molality:g} mol/kg.")
        return f"No model stays within {tol} for {self.electrolyte} on these data."

    def to_dict(self) -> dict:
        """The manifest's record (its keys and wording as before typed results)."""
        return {"electrolyte": self.electrolyte, "model": self.model, "target_molality": self.target_molality,
                "statement": self.statement, "furthest_model": self.furthest_model,
                "furthest_molality": self.furthest_molality, "most_accurate": self.most_accurate,
                "kind": str(self.kind)}


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


def verdict(o: ModelOutcome, target: float) -> Verdict:
    if o.error:
        return Verdict(VerdictKind.FAILED, error=o.error)
    if o.fit_flags:
        return Verdict(VerdictKind.NOT_RANKED, reasons=tuple(o.fit_flags))
    v = o.valid_up_to("refit")
    flags = o.valid_refit.flags if o.valid_refit else []
    if v is None:
        too_few = tuple(f for f in flags if f.kind is FlagKind.TOO_FEW_TO_JUDGE)
        return Verdict(VerdictKind.TOO_FEW_POINTS, reasons=too_few[:1]) if too_few else Verdict(VerdictKind.NONE_VALID)
    sparse = tuple(f for f in flags if f.kind is FlagKind.SPARSE)
    if v >= target * (1 - 1e-9):
        data_end = o.valid_refit is not None and o.valid_refit.limited_by == "data"
        return Verdict(VerdictKind.WHOLE_RANGE, reach=v, data_end=data_end, sparse=sparse)
    return Verdict(VerdictKind.PART_RANGE, reach=v, sparse=sparse)


def recommend(outcomes: Sequence[ModelOutcome], target: float, tol_ln_gamma: float = 0.01,
              tol_phi: float = 0.01) -> Recommendation:
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
        return Recommendation(electrolyte, best.model, target, most_accurate=accurate.model,
                              model_name=best.model_name, n_params=best.n_params,
                              most_accurate_name=accurate.model_name, heldout_model=_heldout(best),
                              heldout_most_accurate=_heldout(accurate), tol_ln_gamma=tol_ln_gamma, tol_phi=tol_phi)
    n_points = max((o.record()["n_points"] or 0 for o in outcomes), default=0)
    if n_points < 3:
        return Recommendation(electrolyte, None, target, kind=RecommendationKind.TOO_FEW_POINTS, n_points=n_points,
                              tol_ln_gamma=tol_ln_gamma, tol_phi=tol_phi)
    usable = [o for o in outcomes if o.usable and o.valid_up_to("refit")]
    if usable:
        far = max(usable, key=_reach)
        return Recommendation(electrolyte, None, target, far.model, _reach(far), kind=RecommendationKind.NONE_HOLDS,
                              furthest_name=far.model_name, tol_ln_gamma=tol_ln_gamma, tol_phi=tol_phi)
    return Recommendation(electrolyte, None, target, kind=RecommendationKind.NONE_HOLDS,
                          tol_ln_gamma=tol_ln_gamma, tol_phi=tol_phi)
