"""A sample's primary-ion activity from its potential, with an uncertainty budget and flags.

Eq. (1) of :mod:`saltbench.measurements.electrode_response` solved for a_i:

    a_i = 10^((E - E0) / S_T) - a_0 - sum_j K_ij a_j^(z_i/z_j),   S_T = S T / T_cal         (1)

S_T is the fitted slope carried to the sample's temperature in proportion to T (as the Nernst
slope is; E0's own temperature dependence is not known from one calibration and is not
modelled, so a sample should be read at the calibration's temperature). The standard
uncertainty combines, by first-order propagation (JCGM 100:2008, the GUM, eq. 13):
the calibration's parameters with their covariance, the potential reading u(E), and the sample
temperature u(T). A concentration adds the spread of the activity coefficient across candidate
models (:func:`combine`), taken as a rectangular distribution over the half-range (GUM 4.3.7).

Flags (our rules): below the detection limit; outside the calibrated linear range; an
interferent whose activity exceeds the highest level the calibration held (the fitted K_ij is an
extrapolation there); an interferent without a coefficient; interference above
``INTERFERENCE_SHARE`` (1 %) of the reading.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from saltbench.measurements.electrode_response import ResponseFit

INTERFERENCE_SHARE = 0.01


@dataclass(frozen=True)
class SampleActivity:
    """a_i of one sample and the parts of its standard uncertainty."""

    emf: float  # V
    temperature_k: float
    activity: float | None  # None when the potential lies at or below the electrode's background
    u_activity: float | None
    budget: dict[str, float]  # component -> standard uncertainty of a_i
    flags: tuple[str, ...] = ()

    @property
    def px(self) -> float | None:
        return None if self.activity is None or self.activity <= 0 else -math.log10(self.activity)


def sample_activity(fit: ResponseFit, emf: float, u_emf: float, *,
                    interferents: Mapping[str, float] | None = None,
                    selectivity: Mapping[str, float] | None = None,
                    temperature_k: float | None = None, u_temperature_k: float = 0.0) -> SampleActivity:
    """a_i of a sample at potential ``emf`` (V) by eq. (1). ``interferents`` gives the sample's
    a_j; ``selectivity`` K_ij for interferents the fit did not fit (from the SSM or FIM) — such
    a K enters eq. (1) without an uncertainty of its own."""
    levels = dict(interferents or {})
    extra = dict(selectivity or {})
    t_cal = fit.data.temperature_k
    t = t_cal if temperature_k is None else float(temperature_k)
    ratio = t / t_cal
    e0, s = fit.e0, fit.slope
    s_t = s * ratio
    x = 10.0 ** ((emf - e0) / s_t)
    ln10 = math.log(10.0)
    b = fit.background(levels)
    flags: list[str] = []
    for ion, a_j in levels.items():
        if a_j <= 0:
            continue
        if ion in fit.fitted_interferents:
            continue
        if ion in extra:
            b += extra[ion] * float(fit.data.level(ion, a_j)) if ion in fit.data.interferent_charges else 0.0
        else:
            flags.append(f"{ion} present (a = {a_j:.3g}) with no selectivity coefficient: its "
                         "interference is not corrected")
    a = x - b
    grad = np.zeros(len(fit.names))
    for k, n in enumerate(fit.names):
        if n == "e0":
            grad[k] = -x * ln10 / s_t
        elif n == "slope":
            grad[k] = -x * ln10 * (emf - e0) / (s_t * s) if s else 0.0
        elif n == "log10_a0":
            grad[k] = -ln10 * fit.a0
        else:
            ion = n[len("log10_K("):-1]
            grad[k] = -ln10 * fit.selectivity(ion) * float(fit.data.level(ion, levels.get(ion, 0.0)))
    budget = {
        "calibration": float(math.sqrt(max(grad @ fit.covariance @ grad, 0.0))),
        "reading": float(x * ln10 / abs(s_t) * u_emf),
        "temperature": float(abs(x * ln10 * (emf - e0) / (s_t * t)) * u_temperature_k),
    }
    if a <= 0:
        flags.insert(0, "the potential lies at or below the electrode's background response: "
                        "no activity can be given (below the detection limit)")
        return SampleActivity(float(emf), t, None, None, budget, tuple(flags))
    if fit.detection_limit is not None and a < fit.detection_limit:
        flags.insert(0, f"below the detection limit ({fit.detection_limit:.3g})")
    lr = fit.linear_range
    if lr is None:
        flags.append("the calibration has no linear range by the stated rule")
    elif not (lr.low <= a <= lr.high):
        flags.append(f"outside the calibrated linear range ({lr.low:.3g} to {lr.high:.3g})")
    for ion in fit.fitted_interferents:
        a_j = levels.get(ion, 0.0)
        top = float(np.max(fit.data.interferents[ion]))
        if a_j > top:
            flags.append(f"{ion} at a = {a_j:.3g} exceeds the highest level in the calibration "
                         f"({top:.3g}): K({ion}) is extrapolated")
    for ion, a_j in levels.items():
        if a_j <= 0:
            continue
        k_ij = fit.selectivity(ion) if ion in fit.fitted_interferents else extra.get(ion)
        if k_ij is not None and ion in fit.data.interferent_charges:
            share = k_ij * float(fit.data.level(ion, a_j)) / a
            if share > INTERFERENCE_SHARE:
                flags.append(f"{ion} contributes {100 * share:.2g} % of the reading (above "
                             f"{100 * INTERFERENCE_SHARE:g} %)")
    if abs(t - t_cal) > 1.0:
        flags.append(f"read at {t:g} K, calibrated at {t_cal:g} K: E0's change with temperature is "
                     "not modelled")
    u = float(math.sqrt(sum(v**2 for v in budget.values())))
    return SampleActivity(float(emf), t, float(a), u, budget, tuple(flags))


@dataclass(frozen=True)
class Concentration:
    """The primary ion's molality from its activity, with the model-spread component."""

    molality: float  # mol/kg of the primary ion
    u_molality: float
    gamma: float  # of the primary ion under the chosen convention
    budget: dict[str, float]  # component -> standard uncertainty of the molality
    by_model: dict[str, float] = field(default_factory=dict)  # candidate -> molality
    refused: dict[str, str] = field(default_factory=dict)  # candidate -> why it gave none


def combine(activity: SampleActivity, molality: float, gamma: float,
            by_model: Mapping[str, float], refused: Mapping[str, str] | None = None) -> Concentration:
    """The molality's budget: each activity component divided by gamma, plus the candidates'
    half-range taken as rectangular (GUM 4.3.7)."""
    assert activity.activity is not None
    budget = {k: v / gamma for k, v in activity.budget.items()}
    values = [v for v in by_model.values() if math.isfinite(v)]
    budget["activity-coefficient model"] = ((max(values) - min(values)) / 2.0 / math.sqrt(3.0)
                                            if len(values) > 1 else 0.0)
    u = math.sqrt(sum(v**2 for v in budget.values()))
    return Concentration(float(molality), float(u), float(gamma), budget, dict(by_model),
                         dict(refused or {}))
