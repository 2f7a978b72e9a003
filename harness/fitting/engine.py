"""The fitting entry points: one electrolyte (:func:`fit`) or several sharing ions (:func:`fit_joint`).

Both set up a :class:`~saltbench.fitting.problem.FitProblem`, solve it by variable projection
(:mod:`saltbench.fitting.least_squares`) and report a :class:`~saltbench.fitting.result.FitResult`.
Mistakes in the request (an unknown parameter, no data) raise UserError or FitError; whatever
goes wrong with the model or the numerics is a flag in the result.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence

from saltbench.chemistry.electrolyte import Electrolyte, parse_formula
from saltbench.errors import UserError
from saltbench.fitting.data import FitData
from saltbench.fitting.least_squares import solve
from saltbench.fitting.problem import build_problem
from saltbench.fitting.protocol import Problem
from saltbench.fitting.result import FitResult, build_result
from saltbench.models.contract import SolutionModel
from saltbench.water.debye_huckel import DebyeHuckel


def as_electrolyte(electrolyte: Electrolyte | str) -> Electrolyte:
    if isinstance(electrolyte, Electrolyte):
        return electrolyte
    try:
        return parse_formula(str(electrolyte))
    except ValueError as exc:
        raise UserError(str(exc)) from None


def run(problem: Problem, *, covariance_scaling: str = "birge",
        max_evaluations: int | None = None) -> FitResult:
    """Solve a prepared problem and report it."""
    solution = solve(problem, max_evaluations=max_evaluations)
    return build_result(problem, solution, covariance_scaling=covariance_scaling)


def fit(model: SolutionModel, electrolyte: Electrolyte | str, data: FitData, *,
        fixed: Mapping[str, float] | None = None, start: Mapping[str, float] | None = None,
        free: Iterable[str] | None = None,
        bounds: Mapping[str, tuple[float, float]] | None = None,
        dh: DebyeHuckel | None = None, temperature_k: float = 298.15,
        covariance_scaling: str = "birge", max_evaluations: int | None = None) -> FitResult:
    """Weighted least-squares fit of ``model``'s free parameters to ``data`` of one electrolyte.

    ``fixed`` holds parameters at values (like ``--fix NAME=VALUE``); ``free`` frees parameters
    the model holds fixed by default; ``start`` gives start values; ``bounds`` narrows declared
    bounds. ``dh`` overrides the Debye-Hückel constants (e.g. a published A_phi); otherwise they
    follow from water at ``temperature_k``.
    """
    e = as_electrolyte(electrolyte)
    problem = build_problem(model, [(e, data)], fixed=fixed, start=start, free=free,
                            bounds=bounds, dh=dh, temperature_k=temperature_k)
    return run(problem, covariance_scaling=covariance_scaling, max_evaluations=max_evaluations)


def fit_joint(model: SolutionModel, items: Sequence[tuple[Electrolyte | str, FitData]], *,
              fixed: Mapping[str, float] | None = None, start: Mapping[str, float] | None = None,
              free: Iterable[str] | None = None,
              bounds: Mapping[str, tuple[float, float]] | None = None,
              dh: DebyeHuckel | None = None, temperature_k: float = 298.15,
              covariance_scaling: str = "birge",
              max_evaluations: int | None = None) -> FitResult:
    """One fit across several electrolytes; per-ion parameters are shared by ion formula.

    Result parameter names are ``NAME[ION]`` for cation/anion scope (``a_cation[Na]``) and
    ``NAME[ELECTROLYTE]`` for electrolyte scope (``b[NaCl]``); ``fixed``, ``start``, ``free``
    and ``bounds`` accept either those names or a model parameter name (all its copies).
    """
    pairs = [(as_electrolyte(e), d) for e, d in items]
    names = [e.name for e, _ in pairs]
    if len(set(names)) != len(names):
        raise UserError("fit_joint: each electrolyte may appear once (combine its datasets "
                        "with FitData.concat)")
    problem = build_problem(model, pairs, joint=True, fixed=fixed, start=start, free=free,
                            bounds=bounds, dh=dh, temperature_k=temperature_k)
    return run(problem, covariance_scaling=covariance_scaling, max_evaluations=max_evaluations)
