"""When an electrolyte's own sources disagree by more than the tolerance, no model can stay within
it of all of them, and a short range then says nothing about the model. Find such disagreements
where two datasets print the same property at the same molality."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from saltbench.fitting.data import FitData
from saltbench.fitting.properties import REGISTRY


@dataclass(frozen=True)
class SourceDisagreement:
    """Two datasets of one quantity that differ beyond the tolerance where both print a value."""

    first: str
    second: str
    quantity: str  # a fitted property's name ("ln_gamma", "osmotic")
    worst: float  # largest difference
    low: float  # mol/kg, the common molalities' range
    high: float
    tolerance: float

    @property
    def text(self) -> str:
        what = REGISTRY[self.quantity].text
        return (f"{self.first} and {self.second} differ by up to {self.worst:.3f} in {what} at the molalities both "
                f"print ({self.low:g} to {self.high:g} mol/kg), beyond the tolerance {self.tolerance:g}: no model "
                "can stay within it of both; compare one of them with --data")

    def __str__(self) -> str:
        return self.text


def source_disagreements(data: FitData, tolerances: Mapping[str, float]) -> list[SourceDisagreement]:
    """One per pair of datasets that differ beyond the tolerance of their property (keyed by
    fitted property) at common molalities."""
    out = []
    keys = list(dict.fromkeys(data.dataset))
    for i, a in enumerate(keys):
        for b in keys[i + 1:]:
            for kind in dict.fromkeys(data.kind[data.dataset == a]):
                sa = (data.dataset == a) & (data.kind == kind)
                sb = (data.dataset == b) & (data.kind == kind)
                common, ia, ib = np.intersect1d(np.round(data.molality[sa], 9), np.round(data.molality[sb], 9),
                                                return_indices=True)
                if not common.size:
                    continue
                diff = np.abs(data.value[sa][ia] - data.value[sb][ib])
                tol = tolerances[str(kind)]
                if diff.max() > tol:
                    out.append(SourceDisagreement(str(a), str(b), str(kind), float(diff.max()), float(common.min()),
                                                  float(common.max()), tol))
    return out
