"""A fitting problem across temperatures: parameters as temperature forms with fitted coefficients.

The points are grouped by electrolyte and temperature (points within 0.05 K are one
temperature); each group is a :class:`~saltbench.fitting.problem.Block` with its own context,
the Debye-Hückel constants of water at that temperature (IAPWS, through
:func:`saltbench.models.evaluate.make_context`). A parameter p that *varies* is fitted as the
coefficients of a temperature form (:mod:`saltbench.models.temperature`), named as in parameter
files (``beta0.c0``, ``beta0.c1``, ...), with p(T) = sum_j c_j f_j(T) at each block; a parameter
that does not vary keeps one value at every temperature.

How it is computed: an inner :class:`~saltbench.fitting.problem.FitProblem` holds one copy of
each varying parameter per temperature (``beta0@298.15``) and the others once; its vector is
psi = A theta with A the (fixed) matrix of basis values f_j(T). Predictions are the inner
problem's at A theta and derivatives follow by the chain rule, d f / d c_j = (d f / d p) f_j(T)
(as :func:`saltbench.models.temperature.chain` states it). Because A is linear, a parameter
that enters the model linearly keeps its coefficients linear, and variable projection solves
them exactly: their design columns are the inner design times A. The one-temperature path
(:func:`saltbench.fitting.problem.build_problem`) is untouched by this module.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import FitError, UserError
from saltbench.fitting.data import FitData, temperature_groups
from saltbench.fitting.problem import (
    Block,
    FitProblem,
    GlobalParameter,
    ProblemBase,
    _global_name,
    build_problem,
    checked_value,
    parameter_layout,
)
from saltbench.fitting.thermal_points import (
    CP_PHI,
    THERMAL_KINDS,
    ParamMap,
    ThermalGroup,
    ThermalPart,
    cp2_name,
    stencil_weights,
    thermal_groups,
)
from saltbench.models.contract import SolutionModel
from saltbench.models.evaluate import make_context
from saltbench.models.temperature import TemperatureForm
from saltbench.models.temperature import form as form_named


def coefficient_name(parameter: str, coefficient: str) -> str:
    """The fitted name of one coefficient of a varying parameter: ``beta0.c1``."""
    return f"{parameter}.{coefficient}"


class TemperatureProblem(ProblemBase):
    """Weighted least squares of one model across temperatures (see the module); provides
    :class:`saltbench.fitting.protocol.Problem`. Its size, free count, subset mark and the
    design shared by the folds of an all-linear problem are :class:`ProblemBase`'s."""

    def __init__(self, inner: FitProblem, params: list[GlobalParameter], mapping: np.ndarray,
                 form: TemperatureForm, varying: dict[str, list[int]],
                 temperatures: list[float], point_temperature: np.ndarray,
                 root: TemperatureProblem | None = None, rows: np.ndarray | None = None,
                 thermal: ThermalPart | None = None) -> None:
        self.inner = inner
        self.thermal = thermal if thermal is not None and thermal.n else None
        self.model = inner.model
        self.params = params
        self.mapping = mapping  # A: inner vector = A @ theta
        self.form = form
        self.varying = varying  # base global name -> indices of its coefficients in ``params``
        self.temperatures = temperatures  # the distinct block temperatures (K), rising
        self.point_temperature = point_temperature  # each point's block temperature (K)
        (self.names, self.theta0, self.free, self.linear, self.nonlinear, self.lower, self.upper,
         self.linear_lower, self.linear_upper, self.linear_bounded) = parameter_layout(params)
        if self.thermal is None:
            self.obs, self.sigma, self.molality, self.kind = inner.obs, inner.sigma, inner.molality, inner.kind
        else:  # the thermal points follow the activity and osmotic ones
            th = self.thermal
            self.obs = np.concatenate((inner.obs, th.obs))
            self.sigma = np.concatenate((inner.sigma, th.sigma))
            self.molality = np.concatenate((inner.molality, th.molality))
            self.kind = np.concatenate((inner.kind, th.kind))
        self._is_linear = {i: p.linear for i, p in enumerate(params)}
        self._root = root if root is not None else self
        self._rows = rows
        self._design_memo: dict[bytes, tuple[np.ndarray, np.ndarray]] = {}

    # -- bookkeeping ----------------------------------------------------------------------------
    @property
    def n_evaluations(self) -> int:
        return self.inner.n_evaluations

    @property
    def electrolyte_label(self) -> str:
        return " + ".join(self.param_map())

    @property
    def temperature_k(self) -> float:
        """The one temperature of the points (K), NaN when there are several."""
        temps = sorted(set(self.point_temperature.tolist()))
        return float(temps[0]) if len(temps) == 1 else math.nan

    def param_map(self) -> dict[str, dict[str, str]]:
        """Per electrolyte: model parameter name -> its global name (for a varying parameter,
        its first coefficient, the value at the form's reference temperature)."""
        out: dict[str, dict[str, str]] = {}
        base_of = {i: name for name, idx in self.varying.items() for i in idx}
        for b in self.inner.blocks:
            entry = out.setdefault(b.electrolyte.name, {})
            for mname, g in b.mapping.items():
                if mname in entry:
                    continue
                cols = np.flatnonzero(self.mapping[g])
                first = int(cols[0])
                entry[mname] = self.names[self.varying[base_of[first]][0]] if first in base_of \
                    else self.names[first]
        for group in self.thermal.groups if self.thermal is not None else ():
            entry = out.setdefault(group.electrolyte.name, {})
            for mname, (idx, _) in group.params.items():
                entry.setdefault(mname, self.names[idx[0]])
        return out

    def subset(self, mask: np.ndarray) -> TemperatureProblem:
        mask = np.asarray(mask, dtype=bool)
        rows = np.flatnonzero(mask)
        n_in = self.inner.n
        thermal = None if self.thermal is None else self.thermal.subset(mask[n_in:])
        return TemperatureProblem(self.inner.subset(mask[:n_in]), self.params, self.mapping, self.form,
                                  self.varying, self.temperatures, self.point_temperature[mask],
                                  self._root, rows if self._rows is None else self._rows[rows],
                                  thermal)

    def with_start(self, theta: np.ndarray) -> TemperatureProblem:
        params = list(self.params)
        for i in self.free:
            params[i] = params[i]._replace(value=float(np.clip(theta[i], params[i].lower,
                                                               params[i].upper)))
        return TemperatureProblem(self.inner, params, self.mapping, self.form, self.varying,
                                  self.temperatures, self.point_temperature, self._root,
                                  self._rows, self.thermal)

    def theta_from(self, values: Mapping[str, float]) -> np.ndarray:
        """A full vector from values by global name, or by a model parameter name (a varying
        parameter's name sets its first coefficient)."""
        theta = self.theta0.copy()
        by_name = {name: i for i, name in enumerate(self.names)}
        for key, value in values.items():
            if key in by_name:
                hits = [by_name[key]]
            elif key in self.varying:
                hits = [self.varying[key][0]]
            else:
                hits = [i for i, p in enumerate(self.params)
                        if p.model_name == key and (p.name == key or p.name.endswith(".c0")
                                                    or "." not in p.name)]
            if not hits:
                raise UserError(f"model {self.model.id} has no parameter {key!r} "
                                f"(parameters: {', '.join(self.names)})")
            theta[hits] = float(value)
        return theta

    # -- predictions and derivatives ----------------------------------------------------------
    def inner_theta(self, theta: np.ndarray) -> np.ndarray:
        return self.mapping @ theta

    def predict(self, theta: np.ndarray) -> np.ndarray:
        if self._rows is not None and self.linear.size and not self.nonlinear.size:
            held = np.ones(theta.size, dtype=bool)
            held[self.linear] = False  # the shared design holds every other entry at theta0's
            shared = self.shared_design() if np.array_equal(theta[held], self.theta0[held]) else None
            if shared is not None:
                return shared[0] + shared[1] @ theta[self.linear]
        y = self.inner.predict(self.inner_theta(theta))
        if self.thermal is None:
            return y
        return np.concatenate((y, self.thermal.predict(theta)))

    def derivatives(self, theta: np.ndarray, cols: Sequence[int] | np.ndarray,
                    base: np.ndarray | None = None) -> np.ndarray:
        cols = np.asarray(cols, dtype=np.intp)
        n_in = self.inner.n
        a = self.mapping[:, cols]
        inner_cols = np.flatnonzero(np.any(a != 0.0, axis=1))
        if not inner_cols.size:
            d = np.zeros((n_in, cols.size))
        else:
            d = self.inner.derivatives(self.inner_theta(theta), inner_cols,
                                       base=None if base is None else base[:n_in]) @ a[inner_cols]
        if self.thermal is None:
            return d
        th = self.thermal.derivatives(theta, cols.tolist(), self._is_linear,
                                      base=None if base is None else base[n_in:])
        return np.concatenate((d, th))

    def linear_design(self, theta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Offset and design in the free linear coefficients at fixed nonlinear ones."""
        if not self.nonlinear.size:
            shared = self.shared_design()  # the root's, built once (None where it fails)
            if shared is not None:
                return shared
        return self._design_now(theta)

    def _design_now(self, theta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        t0 = theta.copy()
        t0[self.linear] = 0.0
        psi0 = self.inner_theta(t0)
        off, design = self.inner.linear_design(psi0)
        lin = self.inner.linear
        # The inner offset has the inner linear parameters at zero; held coefficients give
        # them values of their own, put back here (the model is affine in them).
        offset = off + design @ psi0[lin] if lin.size else off
        d = design @ self.mapping[np.ix_(lin, self.linear)] if lin.size else \
            np.zeros((self.inner.n, self.linear.size))
        if self.thermal is None:
            return offset, d
        th_off = self.thermal.predict(t0)
        th_d = self.thermal.derivatives(t0, self.linear.tolist(), self._is_linear, base=th_off)
        return np.concatenate((offset, th_off)), np.concatenate((d, th_d))

    def screen_parts(self, points: np.ndarray) -> None:
        """No shared screening across temperatures: the solver evaluates each point."""
        return None

    # -- what the result reports ----------------------------------------------------------------
    def coefficient_table(self, theta: np.ndarray) -> dict[str, dict[str, float]]:
        """Each varying parameter's coefficients by name (``{"beta0": {"c0": .., "c1": ..}}``)."""
        out: dict[str, dict[str, float]] = {}
        for name, idx in self.varying.items():
            out[name] = {c: float(theta[i]) for c, i in zip(self.form.coefficients, idx)}
        return out


def _split_keys(values: Mapping[str, float], form: TemperatureForm) -> tuple[dict, dict]:
    """Request keys that name a coefficient (``beta0.c1``) or a C°_p,2 (``Cp2[set]``) apart from
    the others."""
    coefficient, plain = {}, {}
    for key, value in values.items():
        head, dot, tail = key.rpartition(".")
        if (dot and tail in form.coefficients and head) or key.startswith("Cp2["):
            coefficient[key] = value
        else:
            plain[key] = value
    return coefficient, plain


def build_temperature_problem(model: SolutionModel, items: Sequence[tuple[Electrolyte, FitData]], *,
                              form: str | TemperatureForm = "reference-expansion",
                              vary: Iterable[str] | None = None, joint: bool = False,
                              fixed: Mapping[str, float] | None = None,
                              start: Mapping[str, float] | None = None,
                              free: Iterable[str] | None = None,
                              bounds: Mapping[str, tuple[float, float]] | None = None
                              ) -> TemperatureProblem:
    """Set up a fit across the temperatures of the points of ``items`` (see the module).

    ``form`` names the temperature form; ``vary`` the parameters (model or global names) that
    take it (None: every free parameter); the others keep one value at all temperatures.
    ``fixed``, ``start`` and ``bounds`` take parameter names as :func:`build_problem` does, and
    also coefficient names (``beta0.c3=0`` holds that coefficient; a bound on ``beta0`` bounds
    its first coefficient, the value at the reference temperature) and ``Cp2[<dataset>]``, the
    C°_p,2 of a dataset of C_p,phi points (:mod:`saltbench.fitting.thermal_points`). Thermal
    points (``L_phi``, ``Cp_phi``) need activity or osmotic points beside them. Raises UserError
    for a mistake in the request.
    """
    tform = form if isinstance(form, TemperatureForm) else _form(form)
    coef_fixed, plain_fixed = _split_keys(dict(fixed or {}), tform)
    coef_start, plain_start = _split_keys(dict(start or {}), tform)
    if not items or all(d.n == 0 for _, d in items):
        raise FitError(f"no data points to fit model {model.id} to")
    # activity and osmotic points go to the inner problem, thermal ones apart
    activity = [(e, d.subset(~np.isin(d.kind.astype(str), THERMAL_KINDS))) for e, d in items]
    thermal_data = [(e, d.subset(np.isin(d.kind.astype(str), THERMAL_KINDS))) for e, d in items]
    if all(d.n == 0 for _, d in activity):
        raise UserError("thermal data (L_phi, Cp_phi) need activity or osmotic data beside them: "
                        "they give only the temperature derivatives of the parameters")
    all_t = np.concatenate([d.temperature for _, d in items])
    labels, groups = temperature_groups(all_t)
    temps = [float(np.mean(g)) for g in groups]
    # The base problem gives the parameter list (names, bounds, which are free) as a fit at
    # one temperature would; its blocks are not used.
    base = build_problem(model, activity, joint=joint, fixed=plain_fixed, start=plain_start,
                         free=free, bounds=bounds)
    base_free = [p for p in base.params if p.free]
    wanted = None if vary is None else set(vary)
    if wanted is not None:
        known = {p.name for p in base.params} | {p.model_name for p in base.params}
        unknown = sorted(wanted - known)
        if unknown:
            raise UserError(f"model {model.id} has no parameter {unknown[0]!r} to vary with "
                            f"temperature (parameters: {', '.join(p.name for p in base.params)})")
        held = sorted(p.name for p in base.params if not p.free
                      and (p.name in wanted or p.model_name in wanted))
        if held:
            raise UserError(f"parameter {held[0]} is held; free it to vary it with temperature")
    varies = [p for p in base_free
              if wanted is None or p.name in wanted or p.model_name in wanted]
    vary_names = {p.name for p in varies}
    # outer parameters: coefficients of each varying one, the others as they are
    outer: list[GlobalParameter] = []
    varying: dict[str, list[int]] = {}
    outer_of: dict[str, int] = {}
    for p in base.params:
        if p.name not in vary_names:
            outer_of[p.name] = len(outer)
            outer.append(p)
            continue
        idx = []
        for j, c in enumerate(tform.coefficients):
            idx.append(len(outer))
            outer.append(GlobalParameter(coefficient_name(p.name, c), p.model_name,
                                         p.lower if j == 0 else -math.inf,
                                         p.upper if j == 0 else math.inf,
                                         p.linear, True, p.value if j == 0 else 0.0))
        varying[p.name] = idx
    # C°_p,2 of each dataset of heat capacities
    cp_sets = list(dict.fromkeys(str(ds) for _, d in thermal_data
                                 for ds, k in zip(d.dataset, d.kind) if k == CP_PHI))
    cp_index: dict[str, int] = {}
    for ds in cp_sets:
        cp_index[ds] = len(outer)
        outer.append(GlobalParameter(cp2_name(ds), "Cp2", -math.inf, math.inf, True, True, 0.0))
    by_name = {p.name: i for i, p in enumerate(outer)}
    for what, table in (("start", coef_start), ("fix", coef_fixed)):
        for key, value in table.items():
            head, _, tail = key.rpartition(".")
            # a coefficient of a model parameter's name means it in every copy (joint fits)
            hits = [by_name[key]] if key in by_name else \
                [by_name[coefficient_name(b, tail)] for b in varying
                 if outer[varying[b][0]].model_name == head]
            if not hits:
                hint = (f"{head} does not vary with temperature"
                        if head in outer_of or any(outer[i].model_name == head for i in outer_of.values())
                        else f"parameters: {', '.join(outer_of) or '-'}; varying: "
                             f"{', '.join(varying) or '-'}")
                raise UserError(f"model {model.id}: no coefficient {key!r} to {what} ({hint})")
            for i in hits:
                p = outer[i]
                outer[i] = p._replace(value=checked_value(p, value, "value"),
                                      free=p.free if what == "start" else False)
    # inner parameters: one copy per temperature of each varying one
    basis = tform.basis(np.array(temps))  # (T, J)
    inner: list[GlobalParameter] = []
    rows: list[np.ndarray] = []
    inner_of: dict[tuple[str, int], int] = {}
    theta0 = np.array([p.value for p in outer])
    for p in base.params:
        if p.name not in vary_names:
            inner_of[(p.name, -1)] = len(inner)
            row = np.zeros(len(outer))
            row[outer_of[p.name]] = 1.0
            inner.append(p)
            rows.append(row)
            continue
        idx = varying[p.name]
        any_free = any(outer[i].free for i in idx)
        for t_i, t in enumerate(temps):
            row = np.zeros(len(outer))
            row[idx] = basis[t_i]
            inner_of[(p.name, t_i)] = len(inner)
            inner.append(GlobalParameter(f"{p.name}@{t:.2f}", p.model_name, -math.inf, math.inf,
                                         p.linear, any_free, float(row @ theta0)))
            rows.append(row)
    mapping = np.array(rows).reshape(len(inner), len(outer))
    # inner blocks: per electrolyte and temperature, in that order; thermal groups likewise
    blocks: list[Block] = []
    offset = 0
    point_t: list[np.ndarray] = []
    th_groups: list[ThermalGroup] = []
    th_parts: list[FitData] = []
    th_t: list[np.ndarray] = []
    names = {p.name for p in base.params}
    for (electrolyte, data), (_, act), (_, th) in zip(items, activity, thermal_data):
        lab = labels[offset:offset + data.n]
        offset += data.n
        is_th = np.isin(data.kind.astype(str), THERMAL_KINDS)
        base_map = {p.name: _global_name(p.name, p.scope, electrolyte, joint)
                    for p in model.parameters_for(electrolyte)}
        base_map = {m: g for m, g in base_map.items() if g in names}
        act_lab, th_lab = lab[~is_th], lab[is_th]
        for t_i in sorted(set(act_lab.tolist())):
            sel = act_lab == t_i
            block_map = {m: inner_of[(g, t_i if g in vary_names else -1)] for m, g in base_map.items()}
            ctx = make_context(electrolyte, temps[t_i])
            blocks.append(Block(electrolyte, ctx, act.subset(sel), block_map))
            point_t.append(np.full(int(sel.sum()), temps[t_i]))
        if th.n:
            def param_map(t_i: int, stencil: list[float],
                          base_map: dict[str, str] = base_map) -> ParamMap:
                weights = stencil_weights(tform, stencil)
                return {m: (varying[g], weights) if g in vary_names else ([outer_of[g]], None)
                        for m, g in base_map.items()}

            th_groups += thermal_groups(electrolyte, th.molality, th_lab, temps,
                                        sum(x.n for x in th_parts), param_map)
            th_parts.append(th)
            th_t.append(np.array([temps[t_i] for t_i in th_lab.tolist()]))
    problem = FitProblem(model, blocks, inner)
    thermal = None
    if th_parts:
        th_all = FitData.concat(th_parts) if len(th_parts) > 1 or not th_parts[0].electrolyte \
            else th_parts[0]
        cp2 = np.array([cp_index[str(ds)] if k == CP_PHI else -1
                        for ds, k in zip(th_all.dataset, th_all.kind)], dtype=np.intp)
        thermal = ThermalPart(model, th_groups, th_all.kind.copy(), cp2, th_all.value, th_all.uncertainty,
                              th_all.molality)
        point_t.extend(th_t)
    return TemperatureProblem(problem, outer, mapping, tform, varying, temps,
                              np.concatenate(point_t), thermal=thermal)


def _form(name: str) -> TemperatureForm:
    try:
        return form_named(name)
    except KeyError as exc:
        raise UserError(str(exc.args[0])) from None
