"""What a comparison is asked to do; one object so that reports and manifests can record it."""

from __future__ import annotations

from dataclasses import asdict, dataclass, field


@dataclass(frozen=True)
class CompareSettings:
    models: tuple[str, ...] = ()  # empty: every discovered model supporting the electrolyte
    up_to: float | None = None  # mol/kg; None: the whole data range
    tol_ln_gamma: float = 0.01
    tol_phi: float = 0.01
    folds: int = 5
    temperature_k: float = 298.15
    on: tuple[str, ...] = ("gamma_pm", "osmotic", "water_activity")
    datasets: tuple[str, ...] = ()
    validity_scan: bool = True
    extra: dict = field(default_factory=dict)

    def to_dict(self) -> dict:
        d = asdict(self)
        d["models"] = list(self.models)
        d["on"] = list(self.on)
        d["datasets"] = list(self.datasets)
        return d
