"""The validity range a model earns against data: how far up in molality it stays in tolerance.

Tolerances (defaults |d ln gamma±| <= 0.01 and |d phi| <= 0.01) are absolute deviations from
the observations; they only mean something where the data are better than the tolerance.

* Fixed parameters (e.g. a published set; no refit): every point is a held-out point. Scanning
  the data's molalities upwards, the range ends below the lowest molality at which some point
  is out of tolerance.
* Refitted parameters, judged by the fit (``judge="fit"``, the default): for each trial limit L
  on the data's molality grid (from the lowest one leaving ``MIN_DOF`` more points than free
  parameters), the model is fitted to the points with m <= L; L passes when every point is
  within tolerance of that fit. This answers "up to which molality does the model, with
  parameters fitted to these data, hold to this tolerance"; how well the parameters are
  determined is a separate question, answered by cross-validation (the comparison reports the
  held-out error beside the range, and says so where it exceeds the tolerance) and by the
  parameters' standard errors. Judged this way, a model that fits a sparse table within
  tolerance is valid over its range, where held-out predictions across a wide gap would have
  measured the gap instead of the model.
* Refitted parameters, judged on held-out predictions (``judge="heldout"``): for each trial
  limit the model is cross-validated on the points with m <= L (see
  :mod:`saltbench.fitting.crossval`); L passes when every held-out prediction is within
  tolerance. Stricter on sparse data, for those who want it.
Either way the range is the highest passing L (searched from the top, so that a few dilute
points cannot end it early); the first failing limit above it is reported.

When no point or trial fails the range is limited by the data, not the model, and says so.
Stretches where the data are too sparse to judge a model (``sparse_stretches``) are named in
the flags, whichever way the range is judged.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any, Literal, NamedTuple

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import ModelDomainError, ModelError
from saltbench.fitting.crossval import CrossValidation, cross_validate_problem
from saltbench.fitting.data import FitData
from saltbench.fitting.flags import FAILED_FIT_KINDS, Flag, FlagKind, flag, texts
from saltbench.fitting.masked import MaskedLinear
from saltbench.fitting.problem import FitProblem, build_problem
from saltbench.fitting.properties import per_point
from saltbench.fitting.protocol import Problem
from saltbench.fitting.result import FitResult, build_result, fit_flags
from saltbench.fitting.together import can_refit_together, solve_together
from saltbench.models.contract import SolutionModel
from saltbench.models.evaluate import make_context
from saltbench.models.salt_view import unwrapped
from saltbench.water.debye_huckel import DebyeHuckel

#: A fit judged on its own points needs this many more points than free parameters.
MIN_DOF = 3
#: Neighbouring data molalities further apart than this ratio, or (above 1 mol/kg) than
#: ``SPARSE_GAP_ABOVE_1`` mol/kg, leave the stretch between them unjudged: a 1-2-5 grid is
#: dense enough, a 2-5-10-15-20 mol/kg grid is not (curves steepen and bend there).
SPARSE_RATIO = 2.6
SPARSE_GAP_ABOVE_1 = 1.5


def sparse_stretches(molality: np.ndarray) -> list[tuple[float, float]]:
    """(a, b) for each pair of neighbouring data molalities too far apart to judge between."""
    grid = np.unique(np.asarray(molality, float))
    out: list[tuple[float, float]] = []
    for a, b in zip(grid[:-1], grid[1:]):
        if b / a > SPARSE_RATIO or (b > 1.0 and b - max(a, 1.0) > SPARSE_GAP_ABOVE_1):
            if out and out[-1][1] == a:
                out[-1] = (out[-1][0], float(b))
            else:
                out.append((float(a), float(b)))
    return out


def json_number(x: float | None) -> float | None:
    """A float for JSON: None for a missing or non-finite value."""
    return None if x is None or not math.isfinite(x) else float(x)


def json_trials(trials: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """A validity scan's trials for JSON, their non-finite floats as None."""
    return [{k: (json_number(v) if isinstance(v, float) else v) for k, v in t.items()} for t in trials]


@dataclass(frozen=True)
class ValidityRange:
    max_molality: float | None  # mol/kg; None when no point is valid
    max_ionic_strength: float | None  # mol/kg
    limited_by: Literal["tolerance", "data", "none-valid"]
    first_failing_molality: float | None
    tolerance: dict[str, float]  # {"ln_gamma": ..., "osmotic": ...}
    mode: Literal["fixed", "refit"]
    highest_data_molality: float
    flags: list[Flag] = field(default_factory=list)
    trials: list[dict[str, Any]] = field(default_factory=list, repr=False)

    def to_dict(self) -> dict[str, Any]:
        num = json_number
        return {"max_molality": num(self.max_molality),
                "max_ionic_strength": num(self.max_ionic_strength),
                "limited_by": self.limited_by,
                "first_failing_molality": num(self.first_failing_molality),
                "tolerance": dict(self.tolerance), "mode": self.mode,
                "highest_data_molality": num(self.highest_data_molality),
                "flags": texts(self.flags), "trials": json_trials(self.trials)}


Tolerance = Mapping[str, float]  # by fitted property (saltbench.fitting.properties)


def _within(residual: np.ndarray, kind: np.ndarray, tol: Tolerance) -> np.ndarray:
    return np.isfinite(residual) & (np.abs(residual) <= per_point(kind, tol))


def _worst_by_kind(residual: np.ndarray, kind: np.ndarray, sel: np.ndarray | bool,
                   tol: Tolerance) -> dict[str, float | None]:
    """``worst_<property>`` for each property with a tolerance: the largest |residual| of its
    points in ``sel``."""
    return {f"worst_{name}": _worst(residual, (kind == name) & sel) for name in tol}


def _worst(residual: np.ndarray, sel: np.ndarray) -> float | None:
    r = residual[sel]
    if r.size == 0:
        return None
    return float(np.max(np.abs(r))) if np.all(np.isfinite(r)) else math.nan


def _finish(electrolyte: Electrolyte, mode: str, last_ok: float | None,
            first_fail: float | None, top: float, tol: dict[str, float], flags: list[Flag],
            trials: list[dict[str, Any]]) -> ValidityRange:
    limited_by = limit_reason(last_ok, first_fail, top, flags)
    ionic = float(electrolyte.ionic_strength(last_ok)) if last_ok is not None else None
    return ValidityRange(last_ok, ionic, limited_by, first_fail, tol, mode, top,  # type: ignore[arg-type]
                         flags, trials)


def limit_reason(last_ok: float | None, first_fail: float | None, top: float,
                 flags: list[Flag]) -> Literal["tolerance", "data", "none-valid"]:
    """What ends a range: the data (no limit failed; a ``data-end`` flag is added to
    ``flags``), no valid point at all, or the tolerance."""
    if first_fail is None and last_ok is not None:
        flags.append(flag(FlagKind.DATA_END, top=top))
        return "data"
    if last_ok is None:
        return "none-valid"
    return "tolerance"


def _fixed_scan(problem: Problem, theta: np.ndarray, tol: Tolerance
                ) -> tuple[float | None, float | None, list[Flag], list[dict[str, Any]]]:
    flags: list[Flag] = []
    try:
        resid = problem.obs - problem.predict(theta)
    except (ModelError, ModelDomainError) as exc:
        flags.append(flag(FlagKind.MODEL_ERROR, detail=str(exc)))
        return None, None, flags, []
    ok = _within(resid, problem.kind, tol)
    m = problem.molality
    grid = np.unique(m)
    first_fail = float(m[~ok].min()) if not ok.all() else None
    below = grid[grid < first_fail] if first_fail is not None else grid
    last_ok = float(below.max()) if below.size else None
    trials = [{"limit": float(L), "passed": bool(ok[m <= L].all()),
               **_worst_by_kind(resid, problem.kind, m <= L, tol)} for L in grid]
    return last_ok, first_fail, flags, trials


#: Trial limits are first taken on a coarse grid (each at least this factor above the last),
#: searched from the top; the step between the highest passing and the next failing coarse
#: limit is then refined by bisection over the data's own molalities.
COARSE_FACTOR = 1.35


#: Once the top trial fails, the coarse trials below it are solved this many at a time,
#: together (see ``_search``): more at once share more of each round's model call, but the
#: search usually stops at the second or third, and each one solved ahead that it never
#: reaches is wasted.
PREFETCH = 3


def _coarse(grid: np.ndarray) -> list[int]:
    picks = [0]
    for i in range(1, len(grid)):
        if grid[i] >= grid[picks[-1]] * COARSE_FACTOR:
            picks.append(i)
    if picks[-1] != len(grid) - 1:
        picks.append(len(grid) - 1)
    return picks


def _same_points(cv: CrossValidation | None, problem: Problem, folds: int,
                 scheme: str) -> bool:
    """Whether ``cv`` is a cross-validation of exactly ``problem``'s points with these folds."""
    return (cv is not None and cv.folds == folds and cv.scheme == scheme
            and cv.molality.shape == problem.molality.shape
            and bool(np.array_equal(cv.molality, problem.molality))
            and bool(np.array_equal(cv.observed, problem.obs))
            and bool(np.array_equal(cv.kind, problem.kind)))


def _refit_scan(problem: Problem, tol: Tolerance, folds: int, scheme: str,
                full_cv: CrossValidation | None = None, stop_early: bool = False
                ) -> tuple[float | None, float | None, list[Flag], list[dict[str, Any]]]:
    flags: list[Flag] = []
    trials: list[dict[str, Any]] = []
    m = problem.molality
    k = problem.k
    grid = [float(L) for L in np.unique(m)
            if (lambda n: min(folds, n) >= 2 and n - math.ceil(n / min(folds, n)) >= k + 1)(int((m <= L).sum()))]
    if not grid:
        flags.append(flag(FlagKind.TOO_FEW_TO_JUDGE, n_points=problem.n, n_params=k))
        return None, None, flags, trials
    cache: dict[int, bool] = {}
    start = None

    def passes(i: int) -> bool:
        nonlocal start
        if i in cache:
            return cache[i]
        L = grid[i]
        sel = m <= L
        n = int(sel.sum())
        sub = problem.subset(sel)
        # The top trial is the cross-validation of all the data, which a caller such as the
        # comparison has often run already (same problem, same start): reuse it.
        if start is None and full_cv is not None and _same_points(full_cv, sub, min(folds, n), scheme):
            cv = full_cv
        else:
            cv = cross_validate_problem(sub, min(folds, n), scheme, start=start,
                                        stop_outside=tol if stop_early else None)
        if cv.theta is not None:
            start = cv.theta
        ok = _within(cv.residual, cv.kind, tol)
        cache[i] = bool(ok.all())
        ran = cv.ran
        trials.append({"limit": L, "passed": cache[i], "folds": min(folds, n),
                       "folds_run": int(cv.folds_run or cv.folds),
                       **_worst_by_kind(cv.residual, cv.kind, ran, tol),
                       "flags": texts(cv.flags)})
        if not cache[i] and cv.flags:
            flags.append(flag(FlagKind.TRIAL_FAILED, limit=L, detail=str(cv.flags[0])))
        return cache[i]

    # Search from the top: the range is the highest trial limit at which the refitted model
    # predicts its held-out points within tolerance. Scanning upwards and stopping at the first
    # failure would let a flexible model's wild extrapolations from a handful of dilute points
    # end the range before the data that pin it down are even used.
    last_ok, first_fail = _search(grid, passes)
    return last_ok, first_fail, flags, trials


def _built_from(full_fit: tuple[FitProblem, FitResult] | None, model: SolutionModel,
                e: Electrolyte, data: FitData, dh: DebyeHuckel | None, temperature_k: float) -> bool:
    """Whether ``full_fit``'s problem is what ``build_problem(model, [(e, data)], dh=dh,
    temperature_k=temperature_k)`` gives (the same model, electrolyte, data object and
    constants, and no options), so that it need not be built again to be compared."""
    if full_fit is None or not isinstance(full_fit[0], FitProblem):
        return False
    p = full_fit[0]
    return (unwrapped(p.model) is unwrapped(model) and len(p.blocks) == 1
            and p.blocks[0].data is data and p.blocks[0].electrolyte == e
            and p.blocks[0].ctx == make_context(e, temperature_k, dh=dh))


def _same_fit(full_fit: tuple[FitProblem, FitResult] | None, sub: Problem) -> bool:
    """Whether ``full_fit`` (a problem and its result) fits exactly ``sub``'s points with the
    same model, constants, parameters, bounds and start."""
    if full_fit is None or not isinstance(sub, FitProblem):
        return False
    other = full_fit[0]
    return (unwrapped(other.model) is unwrapped(sub.model) and other.n == sub.n
            and len(other.blocks) == len(sub.blocks)
            and all(a.ctx == b.ctx for a, b in zip(other.blocks, sub.blocks))
            and bool(np.array_equal(other.molality, sub.molality))
            and bool(np.array_equal(other.obs, sub.obs))
            and bool(np.array_equal(other.sigma, sub.sigma))
            and list(other.kind) == list(sub.kind)
            and other.params == sub.params)


def _fit_scan(problem: Problem, tol: Tolerance,
              full_fit: tuple[FitProblem, FitResult] | None = None
              ) -> tuple[float | None, float | None, list[Flag], list[dict[str, Any]]]:
    from saltbench.fitting.engine import run

    flags: list[Flag] = []
    trials: list[dict[str, Any]] = []
    m = problem.molality
    k = problem.k
    limits = np.unique(m)
    below = np.searchsorted(np.sort(m), limits, side="right")  # points with m <= each limit
    grid = [L for L, n in zip(limits.tolist(), below.tolist()) if n >= k + MIN_DOF]
    if not grid:
        flags.append(flag(FlagKind.TOO_FEW_TO_JUDGE, n_points=problem.n, n_params=k))
        return None, None, flags, trials
    cache: dict[int, bool] = {}
    start: list[np.ndarray] = []
    # Every free parameter linear: a trial is a solve of the rows of one design (no problem,
    # solver or result of its own), with the flags its result would carry.
    masked = MaskedLinear.of(problem)

    def outcome(sel: np.ndarray) -> tuple[bool, np.ndarray, np.ndarray, list[Flag], np.ndarray | None]:
        """Whether the fit to the points of ``sel`` solved, its residuals, their kinds, its
        flags and its full parameter vector."""
        if start == [] and full_fit is not None and bool(sel.all()) and _same_fit(full_fit, problem):
            # The top trial is often the caller's own fit of all the data (same points and
            # start, as problem.subset(sel) would have): reuse it.
            result = full_fit[1]
        else:
            sol = None if masked is None else masked.solve(sel)
            if sol is not None:
                assert sol.prediction is not None  # a masked solve either solves or says None
                fl = fit_flags(problem, sol, int(np.count_nonzero(sel)))
                solved = not any(f.kind in FAILED_FIT_KINDS for f in fl)
                return solved, problem.obs[sel] - sol.prediction, problem.kind[sel], fl, sol.theta
            sub = problem.subset(sel)
            trial = sub.with_start(start[-1]) if start else sub
            result = full_fit[1] if full_fit is not None and _same_fit(full_fit, trial) \
                else run(trial)
        return _outcome_of(problem, result)

    ahead: dict[int, tuple] = {}  # trials solved before their turn: (problem, solution)

    def prefetch(indices: list[int]) -> None:
        """Solve the trials ``indices`` together, each from the last solved start (one model
        call per round for all of them where the model stacks parameter sets)."""
        if masked is not None or len(indices) < 2 or not can_refit_together(problem):
            return
        base = problem.with_start(start[-1]) if start else problem
        sels = np.array([m <= grid[i] for i in indices])
        ahead.update(zip(indices, solve_together(base, sels, jacobian=True)))

    def passes(i: int) -> bool:
        if i in cache:
            return cache[i]
        L = grid[i]
        solved, resid, kind, trial_flags, theta = \
            _outcome_of(problem, build_result(*ahead.pop(i))) if i in ahead else outcome(m <= L)
        if solved and theta is not None:
            start.append(theta)
        ok = solved and bool(_within(resid, kind, tol).all())
        cache[i] = ok
        trials.append({"limit": L, "passed": ok, **_worst_by_kind(resid, kind, True, tol),
                       "flags": texts(trial_flags)})
        if not solved and trial_flags:
            flags.append(flag(FlagKind.TRIAL_FAILED, limit=L, detail=str(trial_flags[0])))
        return ok

    last_ok, first_fail = _search(grid, passes, prefetch)
    return last_ok, first_fail, flags, trials


def _outcome_of(problem: Problem, result: FitResult
                ) -> tuple[bool, np.ndarray, np.ndarray, list[Flag], np.ndarray | None]:
    """A trial fit's outcome as the fit scan reads it (see ``_fit_scan``)."""
    solved = result.ok and bool(np.all(np.isfinite(result.prediction)))
    return (solved, result.residual, result.kind, result.flags,
            problem.theta_from(result.values) if solved else None)


def _search(grid: list[float], passes, prefetch=None) -> tuple[float | None, float | None]:
    """Highest passing trial limit (coarse from the top, then bisection) and the first failing
    one above it. ``prefetch``, where given, is told the next ``PREFETCH`` coarse limits below
    a failing one, to solve them ahead of their turn (together)."""
    coarse = _coarse(np.array(grid))
    last_pass, first_fail = -1, None
    for j in range(len(coarse) - 1, -1, -1):
        if j < len(coarse) - 1 and (len(coarse) - 2 - j) % PREFETCH == 0 and prefetch is not None:
            prefetch([coarse[i] for i in range(j, max(j - PREFETCH, -1), -1)])
        if passes(coarse[j]):
            last_pass = coarse[j]
            if j + 1 < len(coarse):
                first_fail = coarse[j + 1]
            break
        first_fail = coarse[j]
    if first_fail is not None and first_fail - last_pass > 1:
        lo, hi = last_pass, first_fail  # grid[lo] passes (or lo = -1), grid[hi] fails
        while hi - lo > 1:
            mid = (lo + hi) // 2
            if passes(mid):
                lo = mid
            else:
                hi = mid
        last_pass, first_fail = lo, hi
    return (grid[last_pass] if last_pass >= 0 else None,
            grid[first_fail] if first_fail is not None else None)


def validity_range(model: SolutionModel, electrolyte: Electrolyte | str, data: FitData, *,
                   params: Mapping[str, float] | None = None,
                   tolerance_ln_gamma: float = 0.01, tolerance_phi: float = 0.01,
                   folds: int = 5, scheme: str = "interleaved",
                   fixed: Mapping[str, float] | None = None,
                   start: Mapping[str, float] | None = None, free: Iterable[str] | None = None,
                   bounds: Mapping[str, tuple[float, float]] | None = None,
                   dh: DebyeHuckel | None = None,
                   temperature_k: float = 298.15,
                   full_cv: CrossValidation | None = None,
                   stop_early: bool = False,
                   judge: Literal["fit", "heldout"] = "fit",
                   full_fit: tuple[FitProblem, FitResult] | None = None) -> ValidityRange:
    """Highest molality (and ionic strength) up to which ``model`` stays within tolerance.

    With ``params`` (model parameter names -> values; others at their defaults) the model is
    judged as given, without refitting. Without them its free parameters are refitted and it
    is judged by the fit to the points up to each trial limit (``judge="fit"``) or on
    cross-validated held-out predictions (``judge="heldout"``: ``folds``, ``scheme``; the other
    options as for :func:`saltbench.fitting.fit`); see the module docstring. ``full_cv`` is the caller's
    :func:`saltbench.fitting.cross_validate` of the same model on all of ``data`` with the same
    options; the scan starts with that very computation and then reuses it (it is checked to
    cover the same points with the same folds, and ignored otherwise). ``stop_early`` ends a
    trial's cross-validation at its first fold with a held-out point out of tolerance: the
    range, the limits and pass or fail of every trial stay the same, but a failing trial's
    worst deviations and flags then cover only the folds run (``folds_run`` in its record).
    ``full_fit`` is the caller's fit of the same model to all of ``data`` with the same
    options, as (problem, result); a trial of exactly its points, parameters and start reuses
    it (that is checked, and it is ignored otherwise).
    """
    from saltbench.fitting.engine import as_electrolyte

    e = as_electrolyte(electrolyte)
    tol = tolerances(tolerance_ln_gamma, tolerance_phi)
    theta: np.ndarray | None = None
    problem: FitProblem
    if params is not None:
        problem = build_problem(model, [(e, data)], dh=dh, temperature_k=temperature_k)
        theta = problem.theta_from(params)
    elif not (fixed or start or free or bounds) and _built_from(full_fit, model, e, data, dh,
                                                              temperature_k):
        # The caller's problem is this one: its trials then share the designs and screen
        # values it has built already (FitProblem.subset).
        assert full_fit is not None  # _built_from says so
        problem = full_fit[0]
    else:
        problem = build_problem(model, [(e, data)], fixed=fixed, start=start, free=free,
                                bounds=bounds, dh=dh, temperature_k=temperature_k)
        if full_fit is not None and _same_fit(full_fit, problem):
            problem = full_fit[0]  # as above
    found = scan(problem, tol, theta=theta, judge=judge, folds=folds, scheme=scheme,
                 full_cv=full_cv, stop_early=stop_early, full_fit=full_fit)
    return _finish(e, found.mode, found.last_ok, found.first_fail,
                   float(problem.molality.max()), tol, found.flags, found.trials)


def tolerances(ln_gamma: float = 0.01, phi: float = 0.01) -> dict[str, float]:
    """Tolerances by fitted property: |d ln gamma±| and |d phi| (absolute)."""
    return {"ln_gamma": float(ln_gamma), "osmotic": float(phi)}


class Scan(NamedTuple):
    """What a validity search found along a problem's scan coordinate (``problem.molality``:
    molality for one salt, ionic strength for mixtures)."""

    mode: Literal["fixed", "refit"]
    last_ok: float | None  # the highest passing limit
    first_fail: float | None  # the first failing limit above it
    flags: list[Flag]
    trials: list[dict[str, Any]]  # sorted by limit


def scan(problem: Problem, tol: Tolerance, *, theta: np.ndarray | None = None,
         judge: Literal["fit", "heldout"] = "fit", folds: int = 5,
         scheme: str = "interleaved", full_cv: CrossValidation | None = None,
         stop_early: bool = False,
         full_fit: tuple[FitProblem, FitResult] | None = None) -> Scan:
    """The validity search of the module docstring on a prepared problem, by the same rules
    for one salt and for mixtures: with ``theta`` (a full parameter vector) the model is judged
    as given; without, its free parameters are refitted at each trial limit and judged by
    ``judge``. Sparse stretches below the range are flagged."""
    if theta is not None:
        result = _fixed_scan(problem, theta, tol)
        mode: Literal["fixed", "refit"] = "fixed"
    else:
        if judge == "fit":
            result = _fit_scan(problem, tol, full_fit)
        else:
            result = _refit_scan(problem, tol, folds, scheme, full_cv, stop_early)
        mode = "refit"
    last_ok, first_fail, flags, trials = result
    if last_ok is not None:
        flags += [flag(FlagKind.SPARSE, low=a, high=min(b, last_ok))
                  for a, b in sparse_stretches(problem.molality) if a < last_ok]
    trials.sort(key=lambda t: t["limit"])
    return Scan(mode, last_ok, first_fail, flags, trials)
