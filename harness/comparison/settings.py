"""What a comparison is asked to do; one object so that reports and manifests can record it."""

from __future__ import annotations

from dataclasses import asdict, dataclass, field


@dataclass(frozen=True)
class CompareSettings:
    models: tuple[str, ...] = ()  # empty: every discovered model supporting the electrolyte
    up_to: float | None = None  # mol/kg; None: the whole data range
    tol_ln_gamma: float = 0.01
    tol_phi: float = 0.01
    folds: int | str = 5  # a number of folds, or "loo" for leave-one-out
    temperature_k: float = 298.15
    on: tuple[str, ...] = ("gamma_pm", "osmotic", "water_activity")
    datasets: tuple[str, ...] = ()
    validity_scan: bool = True
    #: seconds one model may spend on one electrolyte before it is stopped and flagged
    time_limit_s: float | None = 120.0
    extra: dict = field(default_factory=dict)
    #: (low, high) in K: judge at every data temperature in this range and assemble each model's
    #: region in (temperature, molality); None: one temperature, ``temperature_k``
    temperatures_k: tuple[float, float] | None = None
    #: judge published sets also outside the temperatures their authors fitted them to
    published_beyond_range: bool = False
    #: with ``temperatures_k``: also fit each model once across every temperature, its free
    #: parameters in this temperature form (saltbench.models.temperature), and judge it at each
    across_form: str | None = None

    @property
    def tolerances(self) -> dict[str, float]:
        """The tolerance of each fitted property (saltbench.fitting.properties), by its name."""
        return {"ln_gamma": self.tol_ln_gamma, "osmotic": self.tol_phi}

    @property
    def scan_folds(self) -> int:
        """Folds for the validity scan: leave-one-out means one fold per point at every trial."""
        return 10**9 if self.folds == "loo" else int(self.folds)

    @property
    def folds_text(self) -> str:
        return "leave-one-out cross-validation" if self.folds == "loo" else f"{self.folds}-fold cross-validation"

    def to_dict(self) -> dict:
        d = asdict(self)
        d["models"] = list(self.models)
        d["on"] = list(self.on)
        d["datasets"] = list(self.datasets)
        # written only when asked for, so the record of a one-temperature comparison stays as before
        if self.temperatures_k is None:
            del d["temperatures_k"]
        else:
            d["temperatures_k"] = list(self.temperatures_k)
        if not self.published_beyond_range:
            del d["published_beyond_range"]
        if self.across_form is None:
            del d["across_form"]
        return d
