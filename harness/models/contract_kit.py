"""The contract test kit: one call that tells a plugin author what is wrong with a model.

    from saltbench.models.contract_kit import assert_model_contract
    assert_model_contract(MyModel())

Checks, each reported as one line naming the electrolyte and what failed:

1. the declaration (:func:`saltbench.models.contract.check_declaration`), defaults and any given
   parameter values inside their bounds;
2. shape and vectorisation: a length-1 and a length-N array give arrays of that shape, and the
   length-N result equals the results computed one molality at a time (to 1e-12 relative);
3. finite values over the declared range (``Validity``; 1 mol/kg where none is declared) for
   every supported electrolyte of the test list;
4. the Debye-Hückel limiting law at m = 1e-6 mol/kg: ln gamma± / (-A |z+ z-| sqrt(I)) within
   ``dh_tolerance`` (default 0.01) of 1. Every ion-size form deviates by about B a sqrt(I), which
   is 1e-3 for a = 4 Å in NaCl at that molality, so 0.01 leaves room for large ions;
5. Gibbs-Duhem: an analytic osmotic coefficient agrees with
   :func:`saltbench.models.evaluate.osmotic_by_gibbs_duhem` to 1e-8 (absolute). The quadrature
   there is good to about 1e-12, so a failure is the model's;
6. single-ion values, where given, average to ln gamma± as (nu+ ln g+ + nu- ln g-)/nu (1e-10);
7. an analytic Jacobian, where given, names only declared parameters, covers every free one and
   agrees with central finite differences (relative 1e-5, absolute 1e-8); asked for one
   parameter at a time (``ctx.wrt``) it gives that derivative as the full call does (1e-12);
8. ``values_and_jacobian``, where given, equals ``ln_gamma_pm``, ``osmotic`` and ``jacobian``
   (relative 1e-12), with and without ``ctx.wrt``;
9. ``compute`` itself, for one salt of each test electrolyte and, for a model that takes
   mixtures, for test mixtures: keys, shapes, batches of parameter sets, derivatives against
   finite differences, the limiting law for every ion, the cross-differential identity and
   Gibbs-Duhem along dilution (see :mod:`saltbench.models.solution_kit`);
10. for a model that declares ``stacks_parameter_sets``: three parameter sets drawn inside the
    bounds around the given values, stacked as (S, 1) arrays in one call of each one-salt
    function (values and every derivative, with and without ``ctx.wrt``), give rows equal to
    one call per set (relative 1e-12, after broadcasting to (S, N)); and where a set with one
    parameter at a bound is outside the model's domain (its own call raises ModelDomainError),
    stacking it between two others raises nothing, warns nothing (RuntimeWarning) and gives a
    non-finite row for its values (see :mod:`saltbench.models.stacked_kit`). A
    self-consistency check: the model against itself.

Checks 2-8 and 10 call the one-salt functions: a model's own where it is written to the one-salt form
(:class:`~saltbench.models.contract.ActivityModel`), otherwise those of its
:func:`~saltbench.models.salt_view.salt_view`. Parameter defaults are updated by ``params``.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import replace
from functools import partial
from typing import Any

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.chemistry.solution import Composition
from saltbench.models import solution_kit, stacked_kit
from saltbench.models.contract import ActivityModel, EvalContext, SolutionModel, check_declaration
from saltbench.models.evaluate import make_context, osmotic_by_gibbs_duhem
from saltbench.models.salt_view import salt_view

DEFAULT_ELECTROLYTES = ("NaCl", "CaCl2", "Na2SO4", "MgSO4", "LaCl3")
DILUTE_MOLALITY = 1e-6  # mol/kg, where the limiting law is checked
GIBBS_DUHEM_TOLERANCE = 1e-8
IONS_TOLERANCE = 1e-10
SAME_RTOL = 1e-12  # one quantity computed by two routes of the same model
JACOBIAN_RTOL = 1e-5
JACOBIAN_ATOL = 1e-8
FALLBACK_M_MAX = 1.0  # mol/kg, when a model declares no range
GRID_POINTS = 9


def _as_electrolytes(electrolytes: Iterable[Electrolyte | str] | None) -> list[Electrolyte]:
    items = DEFAULT_ELECTROLYTES if electrolytes is None else electrolytes
    return [parse_formula(e) if isinstance(e, str) else e for e in items]


def _grid(model: ActivityModel, e: Electrolyte) -> np.ndarray:
    m_max = model.validity.max_molality_for(e) or FALLBACK_M_MAX
    return np.geomspace(min(1e-4, m_max / 10.0), m_max, GRID_POINTS)


class _Problems(list):
    def add(self, e: Electrolyte | None, text: str) -> None:
        self.append(f"{e.name}: {text}" if e is not None else text)

    def add_named(self, label: str | None, text: str) -> None:
        self.append(f"{label}: {text}" if label else text)


def _call(problems: _Problems, e: Electrolyte, model: ActivityModel, method: str,
          m: np.ndarray, params: Mapping[str, float], ctx: EvalContext) -> Any:  # unchecked plugin output
    try:
        return getattr(model, method)(m, params, ctx)
    except Exception as exc:  # the kit reports, it does not crash on the plugin's bug
        problems.add(e, f"{method} raised {type(exc).__name__}: {exc}")
        return _FAILED


_FAILED = object()


def _array(problems: _Problems, e: Electrolyte, what: str, value: object,
           n: int) -> np.ndarray | None:
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        problems.add(e, f"{what} returned {type(value).__name__}, not an array of numbers")
        return None
    if arr.shape != (n,):
        problems.add(e, f"{what} has shape {arr.shape} for {n} molalities, expected ({n},)")
        return None
    if not np.all(np.isfinite(arr)):
        problems.add(e, f"{what} is not finite at some molalities in the declared range")
        return None
    return arr


def _check_parameters(model: ActivityModel, params: Mapping[str, float], problems: _Problems):
    names = {p.name for p in model.parameters}
    for key in params:
        if key not in names:
            problems.add(None, f"parameter {key!r} given but not declared")
    for p in model.parameters:
        if not (p.lower <= p.default <= p.upper):
            problems.add(None, f"parameter {p.name}: default {p.default} outside its bounds")
        value = params.get(p.name, p.default)
        if not (p.lower <= value <= p.upper):
            problems.add(None, f"parameter {p.name}: value {value} outside [{p.lower}, {p.upper}]")
        if p.scope != "electrolyte" and not p.ion_key:
            problems.add(None, f"parameter {p.name}: per-ion parameters need an ion_key")


def _check_method(model, method, e, m, values, ctx, problems) -> np.ndarray | None:
    """Shape, finiteness and pointwise agreement of one array-valued model function."""
    out = _call(problems, e, model, method, m, values, ctx)
    if out is _FAILED:
        return None
    if out is None and method == "osmotic":
        return None
    full = _array(problems, e, method, out, m.size)
    one = _call(problems, e, model, method, m[:1].copy(), values, ctx)
    if one is not _FAILED:
        _array(problems, e, f"{method} (one molality)", one, 1)
    if full is None:
        return None
    single = []
    for mk in m:
        r = _call(problems, e, model, method, np.array([mk]), values, ctx)
        if r is _FAILED:
            return full
        try:
            single.append(float(np.asarray(r, dtype=float).reshape(-1)[0]))
        except (TypeError, ValueError, IndexError):
            problems.add(e, f"{method} of a single molality is not a number")
            return full
    if not np.allclose(full, single, rtol=1e-12, atol=1e-14):
        k = int(np.argmax(np.abs(full - np.array(single))))
        problems.add(e, f"{method} is not pointwise: at m = {m[k]:g} the array call gives "
                        f"{full[k]:.15g}, the single call {single[k]:.15g}")
    return full


def _phi(model, m, values, ctx):
    out = model.osmotic(m, values, ctx)
    return osmotic_by_gibbs_duhem(model, m, values, ctx) if out is None else np.asarray(out)


def _check_jacobian(model, e, m, values, ctx, problems) -> None:
    jac = _call(problems, e, model, "jacobian", m, values, ctx)
    if jac is _FAILED or jac is None:
        return
    try:
        d_ln, d_phi = jac
        d_ln, d_phi = dict(d_ln), dict(d_phi)
    except (TypeError, ValueError):
        problems.add(e, "jacobian must return (d_ln_gamma, d_phi), two dicts keyed by parameter")
        return
    declared = {p.name: p for p in model.parameters}
    for key in set(d_ln) | set(d_phi):
        if key not in declared:
            problems.add(e, f"jacobian names undeclared parameter {key!r}")
    for p in model.free_parameters(e):  # of this salt: a mixing parameter has no part in it
        if p.name not in d_ln or p.name not in d_phi:
            problems.add(e, f"jacobian lacks free parameter {p.name!r}")
    for name in sorted(set(d_ln) & set(d_phi) & set(declared)):
        p = declared[name]
        x0 = values[name]
        h = 1e-6 * max(1.0, abs(x0))
        lo, hi = max(p.lower, x0 - h), min(p.upper, x0 + h)
        if hi <= lo:
            continue
        try:
            up, dn = dict(values, **{name: hi}), dict(values, **{name: lo})
            fd_ln = (np.asarray(model.ln_gamma_pm(m, up, ctx))
                     - np.asarray(model.ln_gamma_pm(m, dn, ctx))) / (hi - lo)
            fd_phi = (_phi(model, m, up, ctx) - _phi(model, m, dn, ctx)) / (hi - lo)
        except Exception as exc:
            problems.add(e, f"finite differences in {name} failed: {type(exc).__name__}: {exc}")
            continue
        for what, analytic, fd in (("d ln gamma±", d_ln[name], fd_ln),
                                   ("d phi", d_phi[name], fd_phi)):
            arr = _array(problems, e, f"jacobian {what}/d {name}", analytic, m.size)
            if arr is None:
                continue
            if not np.allclose(arr, fd, rtol=JACOBIAN_RTOL, atol=JACOBIAN_ATOL):
                k = int(np.argmax(np.abs(arr - fd)))
                problems.add(e, f"jacobian {what}/d {name} at m = {m[k]:g} is {arr[k]:.8g}, "
                                f"finite differences give {fd[k]:.8g}")
    for name in sorted(set(d_ln) & set(d_phi) & set(declared)):
        one = _call(problems, e, model, "jacobian", m, values,
                    replace(ctx, wrt=frozenset((name,))))
        if one is _FAILED:
            return
        _check_same_jacobian(problems, e, f"jacobian with ctx.wrt = {{{name!r}}}", one,
                             d_ln, d_phi, [name])


def _differs(a: object, b: np.ndarray) -> bool:
    try:
        arr = np.asarray(a, dtype=float)
    except (TypeError, ValueError):
        return True
    return arr.shape != b.shape or not np.allclose(arr, b, rtol=SAME_RTOL, atol=0.0)


def _check_same_jacobian(problems, e, what, got, d_ln, d_phi, names) -> None:
    """``got`` (a (d_ln, d_phi) pair) gives each of ``names`` as ``d_ln``/``d_phi`` do."""
    try:
        got_ln, got_phi = got
        got_ln, got_phi = dict(got_ln), dict(got_phi)
    except (TypeError, ValueError):
        problems.add(e, f"{what} must return two dicts keyed by parameter")
        return
    for name in names:
        for part, mine, full in (("d ln gamma±", got_ln, d_ln), ("d phi", got_phi, d_phi)):
            if name not in mine:
                problems.add(e, f"{what} lacks {part}/d {name}")
            elif _differs(mine[name], np.asarray(full[name], dtype=float)):
                problems.add(e, f"{what} gives another {part}/d {name} than the full jacobian")


def _check_values_and_jacobian(model, e, m, values, ctx, ln_g, phi, problems) -> None:
    """``values_and_jacobian`` agrees with the model's three separate functions."""
    for wrt in (None, frozenset(p.name for p in model.free_parameters(e))):
        c = ctx if wrt is None else replace(ctx, wrt=wrt)
        got = _call(problems, e, model, "values_and_jacobian", m, values, c)
        if got is _FAILED or got is None:
            return
        label = "values_and_jacobian" + ("" if wrt is None else " with ctx.wrt")
        try:
            got_ln, got_phi, got_dln, got_dphi = got
        except (TypeError, ValueError):
            problems.add(e, f"{label} must return (ln_gamma_pm, osmotic, d_ln_gamma, d_phi)")
            return
        if _differs(got_ln, ln_g):
            problems.add(e, f"{label} gives another ln gamma± than ln_gamma_pm")
        if phi is None or _differs(got_phi, phi):
            problems.add(e, f"{label} gives another phi than osmotic (which it needs)")
        jac = _call(problems, e, model, "jacobian", m, values, c)
        if jac is _FAILED or jac is None:
            problems.add(e, f"{label} is given but jacobian is not")
            return
        try:
            d_ln, d_phi = (dict(part) for part in jac)
        except (TypeError, ValueError):
            return  # reported by _check_jacobian
        names = sorted(set(d_ln) & set(d_phi)) if wrt is None else sorted(wrt)
        _check_same_jacobian(problems, e, label, (got_dln, got_dphi), d_ln, d_phi, names)


def check_model(model: SolutionModel, electrolytes: Iterable[Electrolyte | str] | None = None,
                params: Mapping[str, float] | None = None, *, temperature_k: float = 298.15,
                dh_tolerance: float = 0.01) -> list[str]:
    """Every contract problem of ``model`` as a list of one-line messages (empty when it passes).

    ``electrolytes`` are formulas or :class:`Electrolyte` objects (default: NaCl, CaCl2, Na2SO4,
    MgSO4, LaCl3), filtered by what the model supports; ``params`` update the defaults.
    """
    problems = _Problems(check_declaration(model))
    if problems:
        return list(problems)
    solution_model, model = model, salt_view(model)
    params = dict(params or {})
    _check_parameters(model, params, problems)
    values = {**model.defaults(), **params}
    supported = [e for e in _as_electrolytes(electrolytes) if model.supports(e)]
    if not supported:
        problems.add(None, "supports none of the test electrolytes; pass electrolytes=[...]")
    for e in supported:
        ctx = make_context(e, temperature_k)
        m = _grid(model, e)
        ln_g = _check_method(model, "ln_gamma_pm", e, m, values, ctx, problems)
        if ln_g is None:
            continue
        # Limiting law at infinite dilution.
        m0 = np.array([DILUTE_MOLALITY])
        lim = _call(problems, e, model, "ln_gamma_pm", m0, values, ctx)
        if lim is not _FAILED:
            lim_arr = _array(problems, e, "ln_gamma_pm (dilute)", lim, 1)
            if lim_arr is not None:
                slope = -ctx.dh.a_gamma * e.zz * math.sqrt(float(e.ionic_strength(DILUTE_MOLALITY)))
                ratio = float(lim_arr[0]) / slope
                if abs(ratio - 1.0) > dh_tolerance:
                    problems.add(e, f"does not reach the Debye-Hückel limiting law: at m = "
                                    f"{DILUTE_MOLALITY:g} ln gamma± / (-A|z+z-|sqrt(I)) = "
                                    f"{ratio:.6g}, not 1 within {dh_tolerance:g}")
        phi = _check_method(model, "osmotic", e, m, values, ctx, problems)
        if phi is not None:
            try:
                gd = osmotic_by_gibbs_duhem(model, m, values, ctx)
            except Exception as exc:
                problems.add(e, f"Gibbs-Duhem integration failed: {exc}")
            else:
                dev = np.abs(phi - gd)
                if np.max(dev) > GIBBS_DUHEM_TOLERANCE:
                    k = int(np.argmax(dev))
                    problems.add(e, f"osmotic coefficient breaks Gibbs-Duhem: at m = {m[k]:g} "
                                    f"analytic {phi[k]:.12g}, from ln gamma± {gd[k]:.12g}")
        ions = _call(problems, e, model, "ln_gamma_ions", m, values, ctx)
        if ions is not _FAILED and ions is not None:
            if not isinstance(ions, Mapping) or set(ions) != {"cation", "anion"}:
                problems.add(e, "ln_gamma_ions must return a dict with keys 'cation' and 'anion'")
            else:
                c = _array(problems, e, "ln_gamma_ions['cation']", ions["cation"], m.size)
                a = _array(problems, e, "ln_gamma_ions['anion']", ions["anion"], m.size)
                if c is not None and a is not None:
                    mean = (e.nu_cation * c + e.nu_anion * a) / e.nu
                    if not np.allclose(mean, ln_g, rtol=IONS_TOLERANCE, atol=IONS_TOLERANCE):
                        problems.add(e, "single-ion values do not average to ln gamma± "
                                        f"(largest difference {np.max(np.abs(mean - ln_g)):.3g})")
        _check_jacobian(model, e, m, values, ctx, problems)
        _check_values_and_jacobian(model, e, m, values, ctx, ln_g, phi, problems)
        stacked_kit.check_electrolyte(model, m, values, ctx, partial(problems.add, e))
        solution_kit.check_compute(solution_model, Composition.of_salt(e, m, temperature_k),
                                   values, ctx.dh, e.name, problems.add_named)
    if getattr(solution_model, "mixtures", False) and supported:
        dh = make_context(supported[0], temperature_k).dh
        m_max = min(_grid(model, e)[-1] for e in supported)
        mixtures = solution_kit.kit_mixtures(solution_model, m_max)
        if not mixtures:
            problems.add(None, "takes mixtures but none of the test mixtures")
        for comp, amounts in mixtures:
            label = " + ".join(s.name for s in comp.salts)
            if solution_kit.check_compute(solution_model, comp, values, dh, label,
                                          problems.add_named) is not None:
                solution_kit.check_mixture(solution_model, comp, amounts, values, dh,
                                           dh_tolerance, problems.add_named)
    return list(problems)


def assert_model_contract(model: SolutionModel,
                          electrolytes: Iterable[Electrolyte | str] | None = None,
                          params: Mapping[str, float] | None = None, **options: float) -> None:
    """Raise AssertionError listing every contract problem of ``model`` (see :func:`check_model`)."""
    problems = check_model(model, electrolytes, params, **options)
    if problems:
        raise AssertionError(f"model {getattr(model, 'id', model)!r} breaks the contract:\n  "
                             + "\n  ".join(problems))
