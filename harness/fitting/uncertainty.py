"""Propagating parameter covariance to ln(gamma±), gamma± and phi at chosen molalities.

First-order (linear) propagation, u^2(y) = J C J^T with J = dy/dp at the fitted parameters
(GUM, JCGM 100:2008, eq. 13), for y = ln(gamma±) and y = phi; then u(gamma±) = gamma± u(ln gamma±)
by the same rule for gamma± = exp(ln gamma±). J comes from the model's analytic ``jacobian``
where it gives one, otherwise from differences (see :mod:`saltbench.fitting.problem`).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import UserError
from saltbench.fitting.data import FitData
from saltbench.fitting.problem import FitProblem, build_problem
from saltbench.fitting.result import FitResult
from saltbench.models.contract import EvalContext, SolutionModel
from saltbench.water.debye_huckel import DebyeHuckel

_ALIASES = {"ln_gamma_pm": "ln_gamma", "u_ln_gamma_pm": "u_ln_gamma", "gamma_pm": "gamma",
            "u_gamma_pm": "u_gamma", "u_phi": "u_osmotic", "phi": "osmotic"}


@dataclass(frozen=True)
class Propagation:
    molality: np.ndarray
    ln_gamma: np.ndarray
    u_ln_gamma: np.ndarray
    gamma: np.ndarray
    u_gamma: np.ndarray
    osmotic: np.ndarray
    u_osmotic: np.ndarray

    def __getitem__(self, key: str) -> np.ndarray:
        """Also readable by the store's column names (``u_gamma_pm``, ``u_osmotic``...)."""
        name = _ALIASES.get(key, key)
        if name not in self.to_dict():
            raise KeyError(key)
        return getattr(self, name)

    def to_dict(self) -> dict[str, Any]:
        def clean(a: np.ndarray) -> list[float | None]:
            return [float(v) if np.isfinite(v) else None for v in a]

        return {k: clean(getattr(self, k)) for k in
                ("molality", "ln_gamma", "u_ln_gamma", "gamma", "u_gamma", "osmotic",
                 "u_osmotic")}


def propagate(model: SolutionModel, electrolyte: Electrolyte | str,
              molality: Sequence[float] | np.ndarray,
              result: FitResult | Mapping[str, float] | None = None,
              covariance: np.ndarray | tuple[Sequence[str], Any] | None = None, *,
              params: Mapping[str, float] | None = None, names: Sequence[str] | None = None,
              dh: DebyeHuckel | None = None, ctx: EvalContext | None = None,
              temperature_k: float | None = None) -> Propagation:
    """u(ln gamma±), u(gamma±) and u(phi) at ``molality`` from a fit's covariance.

    Either pass a :class:`FitResult` (single or joint; for a joint fit name the electrolyte), or
    parameter values (model names -> values, as ``result`` or ``params``) with ``covariance``:
    a matrix whose rows are ``names`` (default: the model's free parameters in declared order)
    or a ``(names, matrix)`` pair as stored with published sets. ``ctx`` or ``dh`` fixes the
    Debye-Hückel constants (e.g. a published A_phi).
    """
    from saltbench.fitting.engine import as_electrolyte

    e = as_electrolyte(electrolyte)
    if isinstance(result, Mapping):
        params, result = result, None
    if ctx is not None:
        dh = ctx.dh
    if isinstance(covariance, tuple):
        names, covariance = list(covariance[0]), covariance[1]
    if result is not None:
        if e.name not in result.param_map:
            raise UserError(f"the fit of {result.electrolyte} does not cover {e.name}")
        mapping = result.param_map[e.name]
        values = result.model_values(e.name)
        row = {g: j for j, g in enumerate(result.free_names)}
        free_model = [m for m, g in mapping.items() if g in row]
        idx = [row[mapping[m]] for m in free_model]
        cov = np.asarray(result.covariance, dtype=float)[np.ix_(idx, idx)]
        if temperature_k is None and np.isfinite(result.temperature_k):
            temperature_k = result.temperature_k
    else:
        if params is None or covariance is None:
            raise UserError("propagate needs a FitResult, or parameter values and a covariance")
        if names is None:
            names = [p.name for p in model.free_parameters()]
        values, free_model = dict(params), list(names)
        cov = np.asarray(covariance, dtype=float)
        if cov.shape != (len(free_model), len(free_model)):
            raise UserError("covariance must be square with one row per name")
    m = np.atleast_1d(np.asarray(molality, dtype=float))
    n = m.size
    data = FitData(np.concatenate([m, m]), np.zeros(2 * n), np.ones(2 * n),
                   np.array(["ln_gamma"] * n + ["osmotic"] * n, dtype=object),
                   np.asarray("propagation", dtype=object))
    base = build_problem(model, [(e, data)], dh=dh,
                         temperature_k=temperature_k if temperature_k is not None else 298.15)
    unknown = [x for x in free_model if x not in base.names]
    if unknown:
        raise UserError(f"model {model.id} has no parameter {unknown[0]!r}")
    params_list = [p._replace(free=p.name in free_model) for p in base.params]
    problem = FitProblem(model, base.blocks, params_list)
    theta = problem.theta_from(values)
    order = [free_model.index(problem.names[i]) for i in problem.free]
    cov = cov[np.ix_(order, order)]
    pred = problem.predict(theta)
    jac = problem.derivatives(theta, problem.free, base=pred)
    var = np.einsum("ij,jk,ik->i", jac, cov, jac) if problem.k else np.zeros(2 * n)
    u = np.sqrt(np.clip(var, 0.0, None))
    ln_g, phi = pred[:n], pred[n:]
    return Propagation(m, ln_g, u[:n], np.exp(ln_g), np.exp(ln_g) * u[:n], phi, u[n:])
