"""The result of a fit: parameters with standard errors, residual statistics, flags, criteria.

Covariance. The unscaled covariance is (J^T J)^-1 with J the Jacobian of the residuals
(y - f)/u at the optimum (first-order; e.g. Press et al., Numerical Recipes, 3rd ed., 2007,
sec. 15.5). By default (``covariance_scaling="birge"``) it is multiplied by
max(1, chi2_red), the squared Birge ratio (Birge, Phys. Rev. 40, 207 (1932)). Reason: when
chi2_red > 1 the points scatter more than their stated uncertainties allow (the model or the
uncertainties fall short) and unscaled errors would be too small; when chi2_red < 1 the stated
uncertainties of curated tables are usually generous (rounding, nominal values), and shrinking
the errors on that evidence, often from few degrees of freedom, would overstate what the data
show. ``"none"`` keeps the stated uncertainties as exact (right for synthetic data with known
noise); ``"always"`` multiplies by chi2_red either way (what a fit with unknown common scale of
the uncertainties would do).

Conditioning. The condition number is that of J with unit-norm columns, so that it does not
depend on the parameters' units; above 1e6 the fit is flagged ill-conditioned (standard errors
then rest on a nearly degenerate combination of parameters), and a smallest singular value
below 1e-9 of the largest is treated as singular (no covariance). These thresholds are our
choice, set against the ~1e-10 relative accuracy of central-difference Jacobians.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np

from saltbench.fitting import criteria
from saltbench.fitting.flags import FAILED_FIT_KINDS, Flag, FlagKind, flag, texts
from saltbench.fitting.least_squares import ScaledSVD, Solution, scaled_svd
from saltbench.fitting.properties import REGISTRY
from saltbench.fitting.protocol import Problem

ILL_CONDITIONED = 1e6
SINGULAR = 1e-9
SCALINGS = ("birge", "none", "always")


def _json_float(x: Any) -> float | None:
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


@dataclass
class FitResult:
    """Everything a fit found. ``to_dict()`` gives a JSON-ready summary.

    ``correlation``, ``residual_stats`` and ``kind`` are worked out on first reading: most
    callers never read them, and a fit to a few dozen points costs little more than they do.
    """

    electrolyte: str
    model: str
    parameters: list[dict[str, Any]]  # name, value, stderr (None if held or unknown), fixed, unit
    free_names: list[str]
    covariance: np.ndarray
    covariance_scale: float
    covariance_scaling: str
    chi2: float
    chi2_reduced: float
    n_points: int
    n_params: int
    dof: int
    converged: bool
    message: str
    flags: list[Flag]
    aic: float
    aicc: float | None
    bic: float | None
    condition_number: float
    temperature_k: float
    # per-point arrays, aligned with the problem's data (blocks in order)
    molality: np.ndarray = field(repr=False)
    kind: np.ndarray = field(repr=False)  # each point's fitted property (fitting.properties)
    observed: np.ndarray = field(repr=False)
    uncertainty: np.ndarray = field(repr=False)
    prediction: np.ndarray = field(repr=False)
    stderr_free: np.ndarray = field(repr=False)  # standard errors of the free parameters
    param_map: dict[str, dict[str, str]] = field(default_factory=dict)
    n_evaluations: int = 0
    #: a fit across temperatures: its form, coefficients, which the data determine and the
    #: residuals at each temperature (:class:`saltbench.fitting.temperature_fit.TemperatureSummary`);
    #: None for a fit at one temperature made by fit()/fit_joint()
    temperature: Any = None

    @property
    def ok(self) -> bool:
        """Converged without a model error, singularity or too few points."""
        return self.converged and not any(f.kind in FAILED_FIT_KINDS for f in self.flags)

    @property
    def values(self) -> dict[str, float]:
        return {p["name"]: p["value"] for p in self.parameters}

    @property
    def stderrs(self) -> dict[str, float | None]:
        return {p["name"]: p["stderr"] for p in self.parameters}

    def value(self, name: str) -> float:
        return self.values[name]

    def stderr(self, name: str) -> float | None:
        return self.stderrs[name]

    def model_values(self, electrolyte: str | None = None) -> dict[str, float]:
        """Values by the model's own parameter names for one electrolyte of the fit."""
        key = electrolyte or next(iter(self.param_map))
        if key not in self.param_map:
            raise KeyError(f"{key} was not part of this fit")
        values = self.values
        return {mname: values[gname] for mname, gname in self.param_map[key].items()}

    @property
    def residual(self) -> np.ndarray:
        return self.observed - self.prediction

    @cached_property
    def correlation(self) -> np.ndarray:
        """Correlation matrix of the free parameters (NaN where a standard error is unknown)."""
        k = self.n_params
        if not k:
            return np.zeros((0, 0))
        sd = self.stderr_free
        # zero or unknown standard errors give NaN or inf entries, without warnings
        with np.errstate(invalid="ignore", divide="ignore"):
            return self.covariance / (sd[:, None] * sd)

    @cached_property
    def residual_stats(self) -> dict[str, dict[str, float | int | None]]:
        """Count, RMS and largest absolute residual per fitted property (each registered one)."""
        residual = self.residual
        out = {}
        for name, prop in REGISTRY.items():
            sel = self.kind == name
            if prop.always_listed or sel.any():
                out[name] = _kind_stats(residual, sel)
        return out

    def to_dict(self) -> dict[str, Any]:
        params = [{"name": p["name"], "value": _json_float(p["value"]),
                   "stderr": _json_float(p["stderr"]), "fixed": bool(p["fixed"]),
                   "unit": p.get("unit", "")} for p in self.parameters]

        def matrix(a: np.ndarray) -> list[list[float | None]]:
            return [[_json_float(v) for v in row] for row in np.asarray(a)]

        stats = {kind: {k: (_json_float(v) if isinstance(v, float) else v) for k, v in d.items()}
                 for kind, d in self.residual_stats.items()}
        return {
            "electrolyte": self.electrolyte,
            "model": self.model,
            "parameters": params,
            "correlation": {"names": list(self.free_names), "matrix": matrix(self.correlation)},
            "covariance": {"names": list(self.free_names), "matrix": matrix(self.covariance),
                           "scale": _json_float(self.covariance_scale),
                           "scaling": self.covariance_scaling},
            "residuals": {
                **stats,
                "chi2": _json_float(self.chi2),
                "chi2_reduced": _json_float(self.chi2_reduced),
                "n_points": self.n_points,
                "n_params": self.n_params,
                "dof": self.dof,
            },
            "converged": self.converged,
            "message": self.message,
            "flags": texts(self.flags),
            "aic": _json_float(self.aic),
            "aicc": _json_float(self.aicc),
            "bic": _json_float(self.bic),
            "condition_number": _json_float(self.condition_number),
            "temperature_k": _json_float(self.temperature_k),
            **({"temperature_fit": self.temperature.to_dict()} if self.temperature is not None else {}),
        }


def _kind_stats(residual: np.ndarray, sel: np.ndarray) -> dict[str, float | int | None]:
    r = residual[sel]
    if r.size == 0:
        return {"n": 0, "rms": None, "max_abs": None}
    return {"n": int(r.size), "rms": math.sqrt(float(r @ r) / r.size),
            "max_abs": float(np.abs(r).max())}


def _covariance(jac: np.ndarray, names: list[str], svd: ScaledSVD | None = None
                ) -> tuple[np.ndarray, float, list[Flag]]:
    """Unscaled covariance from the weighted Jacobian; NaN when singular. Also cond and flags.

    ``svd`` is the decomposition of ``jac`` when the solver already made it.
    """
    k = jac.shape[1]
    if k == 0:
        return np.zeros((0, 0)), 1.0, []
    if svd is None:
        svd = scaled_svd(jac)
    norms, s, vt = svd.norms, svd.s, svd.vt
    norm_list, s_list = norms.tolist(), s.tolist()  # a few numbers: plain Python tests them
    if not all(x > 0 for x in norm_list):
        dead = [names[j] for j in range(k) if not norm_list[j] > 0]
        return np.full((k, k), np.nan), math.inf, [flag(FlagKind.SINGULAR, names=tuple(dead))]
    if len(s_list) < k or s_list[-1] <= SINGULAR * s_list[0]:
        if len(s_list) < k:  # fewer points than parameters: every parameter is involved
            involved = list(names)
        else:
            involved = [names[j] for j in np.argsort(-np.abs(vt[-1])) if abs(vt[-1][j]) > 0.2]
        return np.full((k, k), np.nan), math.inf, [flag(FlagKind.SINGULAR_COMBINATION, names=tuple(involved))]
    cond = s_list[0] / s_list[-1]
    cov = (vt.T / s**2) @ vt / (norms[:, None] * norms)
    flags = [flag(FlagKind.ILL_CONDITIONED, condition_number=cond)] if cond > ILL_CONDITIONED else []
    return cov, cond, flags


def _flags_and_covariance(p: Problem, solution: Solution, n: int,
                          free_names: list[str] | None = None
                          ) -> tuple[list[Flag], np.ndarray, float]:
    """The flags of a solved problem of ``n`` points (the solver's, too few points, the
    covariance's, parameters at a bound), its unscaled covariance and condition number."""
    k = p.k
    flags = list(solution.flags)
    if n - k <= 0:
        flags.append(flag(FlagKind.TOO_FEW_POINTS, n_points=n, n_params=k))
    if solution.jacobian is not None:
        if free_names is None:
            free_names = [p.names[i] for i in p.free.tolist()]
        cov, cond, more = _covariance(solution.jacobian, free_names, solution.jacobian_svd)
        flags.extend(more)
    else:
        cov, cond = np.full((k, k), np.nan), math.nan
    for g, side in sorted(solution.at_bound.items()):
        bound = p.params[g].lower if side == "lower" else p.params[g].upper
        flags.append(flag(FlagKind.AT_BOUND, name=p.names[g], side=side, bound=bound))
    return flags, cov, cond


def fit_flags(problem: Problem, solution: Solution, n_points: int) -> list[Flag]:
    """The flags :func:`build_result` gives ``solution``, a fit of ``problem``'s parameters to
    ``n_points`` points (all of them, or the subset a masked solve fitted), in the same order."""
    return _flags_and_covariance(problem, solution, n_points)[0]


def build_result(problem: Problem, solution: Solution, *,
                 covariance_scaling: str = "birge") -> FitResult:
    """Statistics, covariance and flags of a solved problem."""
    if covariance_scaling not in SCALINGS:
        raise ValueError(f"covariance_scaling must be one of {', '.join(SCALINGS)}")
    p = problem
    n, k = p.n, p.k
    free = p.free.tolist()
    free_names = [p.names[i] for i in free]
    flags, cov, cond = _flags_and_covariance(p, solution, n, free_names)
    dof = n - k
    pred = solution.prediction if solution.prediction is not None else np.full(n, np.nan)
    weighted = solution.weighted_residual  # the solver's, when it has them (with its prediction)
    if weighted is None:
        weighted = (p.obs - pred) / p.sigma
    chi2 = float(weighted @ weighted)
    chi2_red = chi2 / dof if dof > 0 else math.nan
    if covariance_scaling == "birge":
        scale = max(1.0, chi2_red) if math.isfinite(chi2_red) else 1.0
    elif covariance_scaling == "always":
        scale = chi2_red if math.isfinite(chi2_red) else 1.0
    else:
        scale = 1.0
    if scale != 1.0:
        cov = cov * scale
    # sqrt(max(var, 0)), NaN kept: the same numbers as numpy's, without its per-call cost
    sd_list = [math.sqrt(v) if not v < 0.0 else 0.0 for v in cov.diagonal().tolist()]

    stderr_of = dict(zip(free, sd_list))
    units = {q.name: q.unit for q in p.model.parameters}
    parameters = [{"name": gp.name, "value": value,
                   "stderr": stderr_of.get(i) if gp.free else None,
                   "fixed": not gp.free, "unit": units.get(gp.model_name, "")}
                  for i, (gp, value) in enumerate(zip(p.params, solution.theta.tolist()))]
    param_map = p.param_map()
    crit_ok = solution.prediction is not None
    return FitResult(
        electrolyte=p.electrolyte_label, model=p.model.id, parameters=parameters,
        free_names=free_names, covariance=cov, covariance_scale=float(scale),
        covariance_scaling=covariance_scaling, chi2=chi2, chi2_reduced=chi2_red, n_points=n,
        n_params=k, dof=dof, converged=solution.converged, message=solution.message,
        flags=flags,
        aic=criteria.aic(chi2, k) if crit_ok else math.nan,
        aicc=criteria.aicc(chi2, k, n) if crit_ok else None,
        bic=criteria.bic(chi2, k, n) if crit_ok else None,
        condition_number=cond, temperature_k=p.temperature_k,
        molality=p.molality.copy(), kind=p.kind.copy(), observed=p.obs.copy(),
        uncertainty=p.sigma.copy(), prediction=pred,
        stderr_free=np.array(sd_list, dtype=float), param_map=param_map,
        n_evaluations=p.n_evaluations,
    )
