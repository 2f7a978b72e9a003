"""One model against one electrolyte's data: everything the comparison table and report need."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from enum import StrEnum
from typing import Any

from saltbench.fitting.flags import Flag, texts
from saltbench.fitting.validity import ValidityRange


def _num(x: Any) -> float | None:
    if x is None:
        return None
    try:
        x = float(x)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) else None


class VerdictKind(StrEnum):
    FAILED = "failed"  # the model raised or ran out of time: ``error``
    NOT_RANKED = "not-ranked"  # its fit is flagged: ``reasons``
    TOO_FEW_POINTS = "too-few-points"  # too few points to judge a refit: ``reasons``
    NONE_VALID = "none-valid"  # outside tolerance even at the lowest molality
    WHOLE_RANGE = "whole-range"  # within tolerance up to the target: ``reach``, ``data_end``, ``sparse``
    PART_RANGE = "part-range"  # within tolerance only up to ``reach`` (``sparse``)


@dataclass(frozen=True)
class Verdict:
    """How one model fared on one electrolyte; :attr:`text` is its wording in every output."""

    kind: VerdictKind
    reach: float | None = None  # mol/kg
    data_end: bool = False  # the data end before the model leaves the tolerance
    sparse: tuple[Flag, ...] = ()  # stretches too sparse to judge, below the reach
    reasons: tuple[Flag, ...] = ()  # the flags behind NOT_RANKED or TOO_FEW_POINTS
    error: str | None = None

    @property
    def text(self) -> str:
        k = self.kind
        if k is VerdictKind.FAILED:
            return f"failed: {self.error}"
        if k is VerdictKind.NOT_RANKED:
            return "not ranked: " + "; ".join(texts(self.reasons))
        if k is VerdictKind.TOO_FEW_POINTS:
            return texts(self.reasons)[0]
        if k is VerdictKind.NONE_VALID:
            return "outside tolerance even at the lowest molality"
        gaps = f"; {'; '.join(texts(self.sparse))}" if self.sparse else ""
        if k is VerdictKind.WHOLE_RANGE:
            tail = " (the data end before the model fails)" if self.data_end else ""
            return f"within tolerance over the whole range, to {self.reach:g} mol/kg{tail}{gaps}"
        return f"within tolerance only up to {self.reach:g} mol/kg{gaps}"

    def __str__(self) -> str:
        return self.text


@dataclass
class ModelOutcome:
    electrolyte: str
    model: str
    model_name: str
    plugin: str
    n_params: int
    fit: dict | None  # FitResult.to_dict()
    heldout: dict | None  # CrossValidation.to_dict() without points
    valid_refit: ValidityRange | None  # without its trials
    valid_published: ValidityRange | None
    published_set: str | None
    published_from_memory: bool
    flags: list[Flag] = field(default_factory=list)
    error: str | None = None
    verdict: Verdict | None = None
    recommended: bool = False
    curve: dict | None = None  # molality grid and model curves for plots
    beyond_claim: float | None = None  # mol/kg its authors claim, where the data go beyond it

    @property
    def usable(self) -> bool:
        return self.error is None and self.fit is not None and not self.fit_flags

    @property
    def fit_flags(self) -> list[Flag]:
        """The flags that keep the model out of the ranking (not the notes)."""
        return [f for f in self.flags if f.blocks_ranking]

    def valid_up_to(self, which: str = "refit") -> float | None:
        v = self.valid_refit if which == "refit" else self.valid_published
        return _num(v.max_molality) if v else None

    def record(self) -> dict[str, Any]:
        """The flat JSON/CSV record (snake_case keys, molality in mol/kg)."""
        fit = self.fit or {}
        res = fit.get("residuals", {})
        held = (self.heldout or {}).get("held_out", {})
        return {
            "electrolyte": self.electrolyte,
            "model": self.model,
            "model_name": self.model_name,
            "plugin": self.plugin,
            "n_params": self.n_params,
            "parameters": [{"name": p["name"], "value": _num(p["value"]), "stderr": _num(p["stderr"])}
                           for p in fit.get("parameters", []) if not p.get("fixed")],
            "n_points": res.get("n_points"),
            "rms_ln_gamma": _num(res.get("ln_gamma", {}).get("rms")),
            "max_ln_gamma": _num(res.get("ln_gamma", {}).get("max_abs")),
            "rms_osmotic": _num(res.get("osmotic", {}).get("rms")),
            "max_osmotic": _num(res.get("osmotic", {}).get("max_abs")),
            "chi2_reduced": _num(res.get("chi2_reduced")),
            "heldout_rms_ln_gamma": _num(held.get("ln_gamma", {}).get("rms")),
            "heldout_rms_osmotic": _num(held.get("osmotic", {}).get("rms")),
            "aicc": _num(fit.get("aicc")),
            "bic": _num(fit.get("bic")),
            "valid_up_to_published": self.valid_up_to("published"),
            "valid_up_to_refit": self.valid_up_to("refit"),
            "valid_ionic_strength_refit": _num(self.valid_refit.max_ionic_strength) if self.valid_refit else None,
            "limited_by_refit": self.valid_refit.limited_by if self.valid_refit else None,
            "limited_by_published": self.valid_published.limited_by if self.valid_published else None,
            "published_set": self.published_set,
            "converged": fit.get("converged"),
            "flags": texts(self.flags) + ([f"error: {self.error}"] if self.error else []),
            "verdict": self.verdict.text if self.verdict else "",
            "recommended": self.recommended,
            "beyond_authors_range": self.beyond_claim,
        }
