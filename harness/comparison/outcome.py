"""One model against one electrolyte's data: everything the comparison table and report need."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any


def _num(x: Any) -> float | None:
    if x is None:
        return None
    try:
        x = float(x)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) else None


#: Flags that describe, without unranking: where the data end, a published set's note, how
#: well the parameters are determined, a use beyond the authors' range, sparse stretches.
NOTES = ("data end", "published:", "determination:", "authors:", "data too sparse")


@dataclass
class ModelOutcome:
    electrolyte: str
    model: str
    model_name: str
    plugin: str
    n_params: int
    fit: dict | None  # FitResult.to_dict()
    heldout: dict | None  # CrossValidation.to_dict() without points
    valid_refit: dict | None  # ValidityRange.to_dict()
    valid_published: dict | None
    published_set: str | None
    published_from_memory: bool
    flags: list[str] = field(default_factory=list)
    error: str | None = None
    verdict: str = ""
    recommended: bool = False
    curve: dict | None = None  # molality grid and model curves for plots
    beyond_claim: float | None = None  # mol/kg its authors claim, where the data go beyond it

    @property
    def usable(self) -> bool:
        return self.error is None and self.fit is not None and not self.fit_flags

    @property
    def fit_flags(self) -> list[str]:
        return [f for f in self.flags if not f.startswith(NOTES)]

    def valid_up_to(self, which: str = "refit") -> float | None:
        v = self.valid_refit if which == "refit" else self.valid_published
        return _num(v.get("max_molality")) if v else None

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
            "valid_ionic_strength_refit": _num((self.valid_refit or {}).get("max_ionic_strength")),
            "limited_by_refit": (self.valid_refit or {}).get("limited_by"),
            "limited_by_published": (self.valid_published or {}).get("limited_by"),
            "published_set": self.published_set,
            "converged": fit.get("converged"),
            "flags": list(self.flags) + ([f"error: {self.error}"] if self.error else []),
            "verdict": self.verdict,
            "recommended": self.recommended,
            "beyond_authors_range": self.beyond_claim,
        }
