"""Check 10 of the contract kit: one call for S parameter sets equals S calls for one set.

A one-salt model that declares ``stacks_parameter_sets``
(:class:`~saltbench.models.contract.ActivityModel`) promises that its functions, given every
parameter value as an array (S, 1), return arrays that broadcast to (S, N) whose row s is what a
call with the floats of set s returns, and that a set outside its domain gives a non-finite row
(no error, no numpy RuntimeWarning) where the call for that set alone raises ModelDomainError.
This is a self-consistency check of the model against itself (no outside source); the values it
compares are held to their published forms by the model's own tests.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Callable, Mapping
from dataclasses import replace
from typing import Any

import numpy as np

from saltbench.errors import ModelDomainError
from saltbench.models.contract import ActivityModel, EvalContext

N_SETS = 3
#: Each parameter's shift in set k is _SHIFTS[(k + j) % 3] (j its position) times its span
#: between bounds, or max(1, |value|) where a bound is infinite; then clipped into the bounds.
_SHIFTS = (0.0, 0.1, -0.05)
STACKED_RTOL = 1e-12  # the same formulas on the same numbers: rounding only
_OUTSIDE = object()
_METHODS = ("ln_gamma_pm", "osmotic", "ln_gamma_ions", "jacobian", "values_and_jacobian")


def drawn_sets(model: ActivityModel, values: Mapping[str, float]) -> list[dict[str, float]]:
    """N_SETS deterministic parameter sets inside the bounds around ``values`` (fixed
    parameters stay at their value)."""
    sets = []
    for k in range(N_SETS):
        one = dict(values)
        for j, p in enumerate(model.parameters):
            if p.fixed or p.name not in values:
                continue
            v = float(values[p.name])
            span = p.upper - p.lower if math.isfinite(p.upper - p.lower) else max(1.0, abs(v))
            one[p.name] = min(p.upper, max(p.lower, v + _SHIFTS[(k + j) % len(_SHIFTS)] * span))
        sets.append(one)
    return sets


def outside_set(model: ActivityModel, m: np.ndarray, values: Mapping[str, float],
                ctx: EvalContext) -> dict[str, float] | None:
    """A set inside the bounds (one free parameter at a bound) for which ``ln_gamma_pm`` at
    ``m`` raises ModelDomainError, or None when every such set is inside the domain."""
    for p in model.parameters:
        if p.fixed or p.name not in values:
            continue
        for bound in (p.upper, p.lower):
            if not math.isfinite(bound):
                continue
            trial = dict(values, **{p.name: bound})
            try:
                model.ln_gamma_pm(m, trial, ctx)
            except ModelDomainError:
                return trial
            except Exception:  # not a domain edge; the kit's other checks report it
                continue
    return None


def _parts(method: str, out: Any) -> dict[str, Any] | None:
    """A function's output as labelled arrays (labels of derivatives start with " d ")."""
    if out is None:
        return None
    if method in ("ln_gamma_pm", "osmotic"):
        return {"": out}
    if method == "ln_gamma_ions":
        return {f"['{k}']": v for k, v in dict(out).items()}
    if method == "jacobian":
        d_ln, d_phi = out
    else:
        ln_g, phi, d_ln, d_phi = out
    parts = {} if method == "jacobian" else {" ln gamma±": ln_g, " phi": phi}
    parts.update({f" d ln gamma±/d {k}": v for k, v in dict(d_ln).items()})
    parts.update({f" d phi/d {k}": v for k, v in dict(d_phi).items()})
    return parts


def _one(model: ActivityModel, method: str, m: np.ndarray, params: Mapping[str, Any],
         ctx: EvalContext) -> Any:
    try:
        return _parts(method, getattr(model, method)(m, params, ctx))
    except ModelDomainError:
        return _OUTSIDE


def check_stacked(model: ActivityModel, m: np.ndarray, sets: list[dict[str, float]],
                  ctx: EvalContext, add: Callable[[str], None], label: str = "") -> None:
    """Every function of ``model``, called once with ``sets`` stacked, against one call per set;
    each problem goes to ``add`` as one line."""
    n_sets, n = len(sets), m.size
    stacked = {name: np.array([[s[name]] for s in sets], dtype=float) for name in sets[0]}
    free = frozenset(p.name for p in model.free_parameters(ctx.electrolyte))
    for method in _METHODS:
        for wrt in ((None,) if method in _METHODS[:3] else (None, free)):
            c = ctx if wrt is None else replace(ctx, wrt=wrt)
            what = method + ("" if wrt is None else " with ctx.wrt")
            try:
                looped = [_one(model, method, m, s, c) for s in sets]
            except Exception as exc:  # the kit reports, it does not crash on the plugin's bug
                add(f"{what} raised {type(exc).__name__} for a parameter set drawn inside the "
                    f"bounds: {exc}")
                continue
            inside = [one for one in looped if one is not _OUTSIDE]
            if not inside:
                continue
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always")
                try:
                    got = _parts(method, getattr(model, method)(m, stacked, c))
                except Exception as exc:
                    add(f"{what} with {n_sets} stacked parameter sets{label} raised "
                        f"{type(exc).__name__}: {exc}")
                    continue
            runtime = [w for w in caught if issubclass(w.category, RuntimeWarning)]
            if runtime:
                add(f"{what} with {n_sets} stacked parameter sets{label} warned: "
                    f"{runtime[0].message}")
            _compare(what, got, looped, inside[0], m, n_sets, n, label, add)


def _compare(what, got, looped, reference, m, n_sets, n, label, add) -> None:
    stack = f"{n_sets} stacked parameter sets{label}"
    if reference is None or got is None:
        if (reference is None) != (got is None):
            add(f"{what} returns {'None' if got is None else 'values'} with {stack}, "
                f"{'None' if reference is None else 'values'} for one set")
        return
    for key in reference:
        if key not in got:
            add(f"{what} with {stack} lacks{key}")
            continue
        try:
            arr = np.broadcast_to(np.asarray(got[key], dtype=float), (n_sets, n))
        except (TypeError, ValueError):
            add(f"{what}{key} with {stack} has shape {np.shape(got[key])}, which does not "
                f"broadcast to ({n_sets}, {n})")
            continue
        for k, one in enumerate(looped):
            if one is _OUTSIDE:
                if not key.startswith(" d ") and np.all(np.isfinite(arr[k])):
                    add(f"{what}{key} with {stack}: set {k + 1} is outside the domain (its own "
                        "call raises ModelDomainError) but its row is finite")
                continue
            ref = np.broadcast_to(np.asarray(one[key], dtype=float), (n,))
            off = ~np.isclose(arr[k], ref, rtol=STACKED_RTOL, atol=0.0, equal_nan=True)
            if off.any():
                j = int(np.argmax(off))
                add(f"{what}{key} with {stack}: row {k + 1} at m = {m[j]:g} is "
                    f"{arr[k, j]:.15g}, the call for that set alone gives {ref[j]:.15g}")
                break


def check_electrolyte(model: ActivityModel, m: np.ndarray, values: Mapping[str, float],
                      ctx: EvalContext, add: Callable[[str], None]) -> None:
    """Check 10 for the electrolyte of ``ctx``: drawn sets, then (where the model has a domain edge inside
    its bounds) the drawn sets with one outside the domain between them."""
    if not getattr(model, "stacks_parameter_sets", False):
        return
    sets = drawn_sets(model, values)
    check_stacked(model, m, sets, ctx, add)
    outside = outside_set(model, m, values, ctx)
    if outside is not None:
        check_stacked(model, m, [sets[0], outside, sets[1]], ctx, add,
                      " (set 2 outside the domain)")
