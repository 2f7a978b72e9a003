"""Fitting across temperatures: the entry point, which coefficients the data determine, and the
residuals at each temperature.

:func:`fit_temperatures` fits a model to points at several temperatures with parameters as
temperature forms (:mod:`saltbench.fitting.temperature_problem`). Points at one temperature only
take the one-temperature path (:func:`saltbench.fitting.engine.fit`) unchanged: a form cannot be
fitted from one temperature, and the result says so.

Which coefficients the data determine (our rule; the thresholds are those the fit report already
uses, :mod:`saltbench.fitting.result`). Take the weighted Jacobian of the free parameters at the
optimum with its columns scaled to unit norm and its singular value decomposition. A free
parameter is *undetermined* when

1. it takes part (a component above 0.2 in absolute value, as the report's singular-combination
   flag reads it) in a right singular vector whose singular value is below 1e-6 of the largest
   (the report's ill-conditioning bound): the data fix only a combination of it with others;
   with data at two temperatures, a four-coefficient form has two such directions for every
   parameter that takes it; or
2. its standard error is unknown.

Of the determined ones, a coefficient whose standard error exceeds its absolute value is
reported *not resolved from zero* (relative standard error above 1): the data give it, but
cannot tell it from nought. Standard errors of the determined parameters, where the full
covariance is singular, are those of a fit of the determined ones alone with the undetermined
held at their fitted values (conditional standard errors; said so in the report).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.fitting.crossval import CrossValidation
from saltbench.fitting.data import FitData, temperature_groups
from saltbench.fitting.least_squares import scaled_svd, solve
from saltbench.fitting.properties import names as property_names
from saltbench.fitting.result import ILL_CONDITIONED, FitResult, build_result
from saltbench.fitting.temperature_problem import TemperatureProblem, build_temperature_problem
from saltbench.fitting.thermal_points import THERMAL_KINDS
from saltbench.models.contract import SolutionModel

COLLINEAR = 1.0 / ILL_CONDITIONED  # singular value ratio below which a direction is undetermined
INVOLVED = 0.2  # component of a singular vector above which a parameter takes part in it

RULE = ("undetermined: in a direction of the scaled Jacobian with singular value below "
        f"{COLLINEAR:g} of the largest (component above {INVOLVED}), or no standard error; "
        "not resolved from zero: standard error above |value|")


@dataclass(frozen=True)
class CoefficientReport:
    """One free parameter of a fit across temperatures (a coefficient ``beta0.c1``, or a
    parameter that does not vary), with what the data say of it."""

    name: str
    parameter: str  # the model's parameter name
    coefficient: str | None  # ``c1``; None for a parameter held constant over temperature
    value: float
    stderr: float | None
    determined: bool
    resolved: bool  # determined and |value| > stderr
    conditional: bool  # stderr from the determined parameters alone (the full covariance is singular)

    def to_dict(self) -> dict[str, Any]:
        return {"name": self.name, "parameter": self.parameter, "coefficient": self.coefficient,
                "value": self.value,
                "stderr": None if self.stderr is None or not math.isfinite(self.stderr) else self.stderr,
                "determined": self.determined, "resolved_from_zero": self.resolved,
                "conditional_stderr": self.conditional}


@dataclass
class TemperatureSummary:
    """What a fit across temperatures adds to its :class:`~saltbench.fitting.result.FitResult`."""

    form: str
    reference_k: float
    temperatures: list[float]  # the distinct temperatures of the points (K), rising
    #: each varying parameter's coefficients, by the model's parameter name (one electrolyte)
    #: or global name (joint fits): ``{"beta0": {"c0": .., "c1": .., ..}}``
    coefficients: dict[str, dict[str, float]]
    reports: list[CoefficientReport]
    point_temperature: np.ndarray = field(repr=False)
    per_temperature: list[dict[str, Any]] = field(default_factory=list)
    rule: str = RULE
    note: str = ""

    @property
    def undetermined(self) -> list[str]:
        return [r.name for r in self.reports if not r.determined]

    def to_dict(self) -> dict[str, Any]:
        return {"form": self.form, "reference_k": self.reference_k,
                "temperatures_k": list(self.temperatures),
                "coefficients": self.coefficients,
                "free": [r.to_dict() for r in self.reports],
                "undetermined": self.undetermined, "rule": self.rule,
                "per_temperature": self.per_temperature, "note": self.note}


def fit_temperatures(model: SolutionModel, items: Sequence[tuple[Electrolyte | str, FitData]], *,
                     form: str = "reference-expansion", vary: Iterable[str] | None = None,
                     joint: bool | None = None, fixed: Mapping[str, float] | None = None,
                     start: Mapping[str, float] | None = None, free: Iterable[str] | None = None,
                     bounds: Mapping[str, tuple[float, float]] | None = None,
                     covariance_scaling: str = "birge",
                     max_evaluations: int | None = None) -> FitResult:
    """Fit ``model`` to points at several temperatures, parameters as temperature forms.

    ``items`` are (electrolyte, data) pairs (several: a joint fit, ``joint`` defaults to
    ``len(items) > 1``); ``form`` names the temperature form; ``vary`` the parameters that take
    it (None: every free one); ``fixed``/``start`` may name coefficients (``beta0.c3``). The
    result's ``temperature`` holds the form, the coefficients, which the data determine and the
    residuals at each temperature. Points at one temperature only are fitted as today (the
    form is not used; the summary says so).
    """
    from saltbench.fitting.engine import as_electrolyte, fit, fit_joint

    pairs = [(as_electrolyte(e), d) for e, d in items]
    joint = len(pairs) > 1 if joint is None else joint
    all_t = np.concatenate([d.temperature for _, d in pairs]) if pairs else np.zeros(0)
    _, groups = temperature_groups(all_t)
    thermal = any(np.isin(d.kind.astype(str), THERMAL_KINDS).any() for _, d in pairs)
    if len(groups) == 1 and not thermal:
        t = float(np.mean(groups[0]))
        if joint:
            result = fit_joint(model, pairs, fixed=fixed, start=start, free=free, bounds=bounds,
                               temperature_k=t, covariance_scaling=covariance_scaling,
                               max_evaluations=max_evaluations)
        else:
            e, d = pairs[0]
            result = fit(model, e, d, fixed=fixed, start=start, free=free, bounds=bounds,
                         temperature_k=t, covariance_scaling=covariance_scaling,
                         max_evaluations=max_evaluations)
        result.temperature = TemperatureSummary(
            "constant", t, [t], {}, [], np.full(result.n_points, t),
            _per_temperature(result, np.full(result.n_points, t), [t]),
            note="data at one temperature: the parameters are fitted as constants (a temperature "
                 "form needs data at several temperatures)")
        return result
    problem = build_temperature_problem(model, pairs, form=form, vary=vary, joint=joint,
                                        fixed=fixed, start=start, free=free, bounds=bounds)
    solution = solve(problem, max_evaluations=max_evaluations)
    result = build_result(problem, solution, covariance_scaling=covariance_scaling)
    result.temperature = summarize(problem, result, solution.jacobian)
    return result


def summarize(problem: TemperatureProblem, result: FitResult,
              jacobian: np.ndarray | None) -> TemperatureSummary:
    """The :class:`TemperatureSummary` of a solved problem (``jacobian``: the solver's weighted
    Jacobian of the free parameters at the optimum, None when it has none)."""
    theta = np.array([p["value"] for p in result.parameters], dtype=float)
    free = problem.free.tolist()
    names = [problem.names[i] for i in free]
    stderr = [float("nan") if s is None else float(s) for s in
              (result.stderrs[n] for n in names)]
    determined = [math.isfinite(s) for s in stderr]
    conditional = [False] * len(free)
    if jacobian is not None and len(free):
        svd = scaled_svd(jacobian)
        s = svd.s
        weak = np.zeros(len(free), dtype=bool)
        if s.size < len(free):
            weak[:] = True  # fewer points than parameters
        else:
            for i in np.flatnonzero(s < COLLINEAR * s[0]):
                weak |= np.abs(svd.vt[i]) > INVOLVED
        determined = [d and not w for d, w in zip(determined, weak.tolist())]
        if any(weak) and not all(weak):
            keep = np.flatnonzero(~weak)
            sub = jacobian[:, keep]
            try:
                cov = np.linalg.inv(sub.T @ sub) * result.covariance_scale
                for j, c in zip(keep.tolist(), np.sqrt(np.clip(np.diag(cov), 0, None)).tolist()):
                    if not math.isfinite(stderr[j]):
                        stderr[j], conditional[j], determined[j] = c, True, True
            except np.linalg.LinAlgError:
                pass
    coef_of = {i: (base, c) for base, idx in problem.varying.items()
               for c, i in zip(problem.form.coefficients, idx)}
    reports = []
    for j, i in enumerate(free):
        p = problem.params[i]
        value = float(theta[i])
        se = stderr[j]
        reports.append(CoefficientReport(
            p.name, p.model_name, coef_of[i][1] if i in coef_of else None, value,
            se if math.isfinite(se) else None, determined[j],
            determined[j] and math.isfinite(se) and abs(value) > se, conditional[j]))
    table = problem.coefficient_table(theta)
    single = len({b.electrolyte.name for b in problem.inner.blocks}) == 1
    if single:  # by the model's own names, as parameter files write them
        table = {problem.params[problem.varying[k][0]].model_name: v for k, v in table.items()}
    return TemperatureSummary(problem.form.id, problem.form.reference_k, list(problem.temperatures),
                              table, reports, problem.point_temperature.copy(),
                              _per_temperature(result, problem.point_temperature,
                                               problem.temperatures))


def _per_temperature(result: FitResult, point_t: np.ndarray, temps: list[float]) -> list[dict]:
    """Count, mean (observed minus predicted), RMS and largest |residual| of each fitted
    property at each temperature."""
    out = []
    r = result.residual
    for t in temps:
        at = np.abs(point_t - t) < 1e-9
        for kind in property_names():
            sel = at & (result.kind == kind)
            if not sel.any():
                continue
            x = r[sel]
            ok = bool(np.isfinite(x).all())
            out.append({"temperature_k": float(t), "kind": kind, "n": int(sel.sum()),
                        "mean": float(x.mean()) if ok else None,
                        "rms": float(np.sqrt(np.mean(x * x))) if ok else None,
                        "max_abs": float(np.abs(x).max()) if ok else None})
    return out


def cross_validate_temperatures(model: SolutionModel,
                                items: Sequence[tuple[Electrolyte | str, FitData]], *,
                                form: str = "reference-expansion", vary: Iterable[str] | None = None,
                                joint: bool | None = None, fixed: Mapping[str, float] | None = None,
                                start: Mapping[str, float] | None = None,
                                free: Iterable[str] | None = None,
                                bounds: Mapping[str, tuple[float, float]] | None = None,
                                folds: int | str = 5, scheme: str = "by-temperature") -> CrossValidation:
    """Held-out error of a fit across temperatures (options as :func:`fit_temperatures`):
    ``scheme="by-temperature"`` leaves out one whole temperature per fold; ``interleaved`` and
    ``contiguous`` fold over molality as :func:`saltbench.fitting.crossval.cross_validate`."""
    from saltbench.fitting.crossval import cross_validate_problem
    from saltbench.fitting.engine import as_electrolyte

    pairs = [(as_electrolyte(e), d) for e, d in items]
    joint = len(pairs) > 1 if joint is None else joint
    problem = build_temperature_problem(model, pairs, form=form, vary=vary, joint=joint,
                                        fixed=fixed, start=start, free=free, bounds=bounds)
    return cross_validate_problem(problem, folds, scheme)
