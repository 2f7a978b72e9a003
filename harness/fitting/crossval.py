"""Held-out error by cross-validation over molality.

Points are ranked by molality; a k-fold split assigns them to folds either *interleaved* (rank
mod k: every fold spans the whole range, so each held-out point is an interpolation; the honest
default for tables printed on a regular grid) or *contiguous* (k blocks of neighbouring
molalities: held-out blocks test extrapolation). Leave-one-out is the interleaved split with
k = n. Each fold is refitted from the full-data optimum and predicts its held-out points (Stone,
J. R. Stat. Soc. B 36, 111 (1974)); held-out residuals are observed minus predicted.

Across temperatures there is a third scheme, *by-temperature*: each fold is one temperature
(points within 0.05 K), so every held-out temperature is predicted from the form's coefficients
fitted to the others (an interpolation or extrapolation in temperature); the number of folds is
the number of temperatures.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.errors import ModelDomainError, ModelError, UserError
from saltbench.fitting.data import FitData
from saltbench.fitting.flags import Flag, FlagKind, flag, texts
from saltbench.fitting.least_squares import solve
from saltbench.fitting.masked import MaskedLinear
from saltbench.fitting.problem import build_problem
from saltbench.fitting.properties import per_point
from saltbench.fitting.protocol import Problem
from saltbench.fitting.together import can_refit_together, solve_together
from saltbench.models.contract import SolutionModel
from saltbench.water.debye_huckel import DebyeHuckel

SCHEMES = ("interleaved", "contiguous")
BY_TEMPERATURE = "by-temperature"
ALL_SCHEMES = (*SCHEMES, BY_TEMPERATURE)


def temperature_fold_labels(temperature: np.ndarray) -> np.ndarray:
    """The fold of each point when each temperature is one fold (0.. by rising temperature)."""
    from saltbench.fitting.data import temperature_groups

    labels, groups = temperature_groups(np.asarray(temperature, dtype=float))
    if len(groups) < 2:
        raise UserError("cross-validation by temperature needs data at two temperatures or more")
    return labels


def point_temperatures(problem: Problem) -> np.ndarray:
    """Each point's temperature (K): a fit across temperatures knows them; a fit at one
    temperature has its blocks' one temperature."""
    known = getattr(problem, "point_temperature", None)
    if known is not None:
        return np.asarray(known, dtype=float)
    return np.full(problem.n, problem.temperature_k)


def fold_labels(molality: np.ndarray, folds: int, scheme: str = "interleaved") -> np.ndarray:
    """The fold (0..folds-1) of each point, by its molality rank (ties keep data order)."""
    m = np.asarray(molality, dtype=float)
    n = m.size
    if scheme not in SCHEMES:
        raise UserError(f"unknown cross-validation scheme {scheme!r} "
                        f"(expected {' or '.join(SCHEMES)})")
    if not 2 <= folds <= n:
        raise UserError(f"cross-validation needs 2 <= folds <= number of points ({n}), got {folds}")
    rank = np.empty(n, dtype=int)
    rank[np.argsort(m, kind="stable")] = np.arange(n)
    if scheme == "interleaved":
        return rank % folds
    return rank * folds // n


@dataclass
class CrossValidation:
    scheme: str
    folds: int
    molality: np.ndarray = field(repr=False)
    kind: np.ndarray = field(repr=False)
    observed: np.ndarray = field(repr=False)
    prediction: np.ndarray = field(repr=False)  # held-out predictions; NaN where a fold failed
    fold: np.ndarray = field(repr=False)
    flags: list[Flag] = field(default_factory=list)
    theta: np.ndarray | None = field(default=None, repr=False)  # last fold's parameters
    folds_run: int | None = None  # fewer than ``folds`` when stopped early (see stop_outside)
    temperature: np.ndarray | None = field(default=None, repr=False)  # by-temperature: each point's

    def by_temperature(self) -> list[dict[str, Any]]:
        """Scheme by-temperature: each held-out temperature with the held-out count, RMS and
        largest |residual| of each fitted property there (empty for other schemes)."""
        if self.temperature is None:
            return []
        out = []
        for f in range(self.folds):
            at = self.fold == f
            row: dict[str, Any] = {"temperature_k": float(np.mean(self.temperature[at]))}
            for kind in dict.fromkeys(self.kind.tolist()):
                r = self.residual[at & (self.kind == kind)]
                if r.size:
                    ok = bool(np.isfinite(r).all())
                    row[str(kind)] = {"n": int(r.size),
                                      "rms": float(np.sqrt(np.mean(r * r))) if ok else None,
                                      "max_abs": float(np.abs(r).max()) if ok else None}
            out.append(row)
        return out

    @property
    def ran(self) -> np.ndarray:
        """Which points belong to a fold that was run."""
        return self.fold < (self.folds if self.folds_run is None else self.folds_run)

    @property
    def residual(self) -> np.ndarray:
        return self.observed - self.prediction

    def _stat(self, kind: str, how: str) -> float | None:
        r = self.residual[self.kind == kind]
        if r.size == 0:
            return None
        if not np.all(np.isfinite(r)):
            return float("nan")
        return float(np.sqrt(np.mean(r**2)) if how == "rms" else np.max(np.abs(r)))

    @property
    def rms_ln_gamma(self) -> float | None:
        return self._stat("ln_gamma", "rms")

    @property
    def rms_phi(self) -> float | None:
        return self._stat("osmotic", "rms")

    @property
    def max_abs_ln_gamma(self) -> float | None:
        return self._stat("ln_gamma", "max")

    @property
    def max_abs_phi(self) -> float | None:
        return self._stat("osmotic", "max")

    def to_dict(self, points: bool = True) -> dict[str, Any]:
        """A JSON-ready summary; ``points=False`` leaves out the per-point list."""
        def num(x: float | None) -> float | None:
            return None if x is None or not np.isfinite(x) else float(x)

        return {
            "scheme": self.scheme, "folds": self.folds,
            "held_out": {"ln_gamma": {"rms": num(self.rms_ln_gamma),
                                      "max_abs": num(self.max_abs_ln_gamma),
                                      "n": int(np.sum(self.kind == "ln_gamma"))},
                         "osmotic": {"rms": num(self.rms_phi), "max_abs": num(self.max_abs_phi),
                                     "n": int(np.sum(self.kind == "osmotic"))}},
            **({"points": [{"molality": float(m), "kind": str(k), "observed": float(o),
                            "predicted": num(p), "fold": int(f)}
                           for m, k, o, p, f in zip(self.molality, self.kind, self.observed,
                                                    self.prediction, self.fold)]}
               if points else {}),
            "flags": texts(self.flags),
            **({"held_out_temperatures": self.by_temperature()} if self.temperature is not None else {}),
            **({"folds_run": self.folds_run}
               if self.folds_run is not None and self.folds_run < self.folds else {}),
        }


def cross_validate_problem(problem: Problem, folds: int | str = 5,
                           scheme: str = "interleaved",
                           start: np.ndarray | None = None,
                           stop_outside: Mapping[str, float] | None = None) -> CrossValidation:
    """Cross-validate a prepared problem; ``start`` (a full parameter vector) seeds each fold.

    ``stop_outside`` (a tolerance per fitted property) stops after the first fold with a
    held-out point outside it, or with no prediction: for a caller that only asks whether every
    held-out point is within tolerance, the answer is then known. The folds not run keep NaN
    predictions and ``folds_run`` says how many ran.
    """
    n = problem.n
    if scheme == BY_TEMPERATURE:
        labels = temperature_fold_labels(point_temperatures(problem))
        folds = int(labels.max()) + 1
    else:
        if folds == "loo":
            folds, scheme = n, "interleaved"
        if not isinstance(folds, int | np.integer):
            raise UserError(f"folds must be a whole number or 'loo', got {folds!r}")
        labels = fold_labels(problem.molality, int(folds), scheme)
    # Every free parameter linear: each fold is a solve of the rows of one design, and a start
    # changes none of them (the start of a linear parameter is not used).
    masked = MaskedLinear.of(problem)
    seeded = problem if start is None or masked is not None else problem.with_start(start)
    if start is None and problem.k and masked is None:
        full = solve(problem)
        if full.prediction is not None:
            seeded = problem.with_start(full.theta)
    held_out = labels[None, :] == np.arange(int(folds))[:, None]  # folds x points
    # Without a stop all folds of a linear model are solved at once; with one, only those run.
    stacked = masked.solve_all(~held_out) if masked is not None and stop_outside is None else None
    # A nonlinear parameter free: the folds' minimisations advance together (one model call per
    # round for all of them where the model stacks parameter sets), each then checked against
    # spread starts on its own. All folds are minimised even where a stop may end the loop
    # early: together they cost about what one fold costs alone.
    # With the folds solved together: every fold's values at every point (None where unsolved).
    held_values: list[np.ndarray | None] | None = None
    if masked is None and can_refit_together(seeded):
        stacked = [sol for _, sol in solve_together(seeded, ~held_out)]
        solved = [s.theta for s in stacked if s is not None and s.prediction is not None]
        if solved:
            values = iter(seeded.stack_predict(np.array(solved)))  # type: ignore[attr-defined]
            held_values = [next(values) if s is not None and s.prediction is not None else None
                           for s in stacked]
    pred = np.full(n, np.nan)
    flags: list[Flag] = []
    theta = None
    folds_run = 0
    for f in range(int(folds)):
        folds_run = f + 1
        held = held_out[f]
        sol = None
        if stacked is not None:
            sol = stacked[f]
        elif masked is not None:
            sol = masked.solve(~held)
        if sol is None:  # the general path (also for a masked solve that met a failure)
            sol = solve(seeded.subset(~held), jacobian=False)
        which = {"fold": f + 1, "folds": folds}
        n_train = n - int(np.count_nonzero(held))
        if n_train <= problem.k:
            flags.append(flag(FlagKind.FOLD_TOO_FEW, **which, n_points=n_train, n_params=problem.k))
        if sol.prediction is None:
            flags.append(flag(FlagKind.FOLD_UNSOLVED, **which,
                              reason=str(sol.flags[-1]) if sol.flags else sol.message))
            if stop_outside is not None:
                break
            continue
        if not sol.converged:
            flags.append(flag(FlagKind.FOLD_NOT_CONVERGED, **which, detail=sol.message))
        theta = sol.theta
        row = None if held_values is None else held_values[f]
        known = None if row is None else row[held]
        try:
            if known is not None and np.isfinite(known).all():
                pred[held] = known  # the model's values there, from one call for all folds
            else:
                pred[held] = masked.predict(held, sol.theta) if masked is not None \
                    else seeded.subset(held).predict(sol.theta)
        except (ModelError, ModelDomainError) as exc:
            flags.append(flag(FlagKind.FOLD_HELDOUT_ERROR, **which, detail=str(exc)))
        if stop_outside is not None:
            r = np.abs(problem.obs[held] - pred[held])
            tol = per_point(problem.kind[held], stop_outside)
            if not np.all(r <= tol):  # NaN (no prediction or tolerance) counts as outside
                break
    kind = np.asarray(problem.kind, dtype=object).copy()
    return CrossValidation(scheme, int(folds), problem.molality.copy(), kind, problem.obs.copy(),
                           pred, labels, flags, theta, folds_run,
                           point_temperatures(problem).copy() if scheme == BY_TEMPERATURE else None)


def cross_validate(model: SolutionModel, electrolyte: Electrolyte | str, data: FitData, *,
                   folds: int | str = 5, scheme: str = "interleaved",
                   fixed: Mapping[str, float] | None = None,
                   start: Mapping[str, float] | None = None, free: Iterable[str] | None = None,
                   bounds: Mapping[str, tuple[float, float]] | None = None,
                   dh: DebyeHuckel | None = None,
                   temperature_k: float = 298.15) -> CrossValidation:
    """k-fold (``folds=k``) or leave-one-out (``folds="loo"``) held-out error of a refitted model.

    Options as for :func:`saltbench.fitting.fit`. Returns held-out predictions per point and
    the held-out RMS and largest |residual| of ln(gamma±) and of phi.
    """
    from saltbench.fitting.engine import as_electrolyte

    problem = build_problem(model, [(as_electrolyte(electrolyte), data)], fixed=fixed,
                            start=start, free=free, bounds=bounds, dh=dh,
                            temperature_k=temperature_k)
    return cross_validate_problem(problem, folds, scheme)
