"""What the solver, the result builder, cross-validation and validity scans ask of a problem.

:class:`~saltbench.fitting.problem.FitProblem` (one salt, or several salts sharing ions, over
molality) and :class:`~saltbench.fitting.mixture_problem.MixtureProblem` (points that are
compositions of several salts, over ionic strength) both provide it, so that one solver
(:func:`saltbench.fitting.least_squares.solve`), one report (:func:`saltbench.fitting.result.build_result`),
one cross-validation and one validity search serve both.

``molality`` is the scan coordinate of the points: molality for one salt, ionic strength for
mixtures. Folds are ranked by it and validity ranges are searched along it.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Protocol

import numpy as np

from saltbench.fitting.problem import GlobalParameter
from saltbench.models.contract import SolutionModel


class Problem(Protocol):
    """A weighted least-squares problem over one global parameter vector (see the module)."""

    @property
    def model(self) -> SolutionModel: ...
    @property
    def params(self) -> list[GlobalParameter]: ...
    @property
    def names(self) -> list[str]: ...
    @property
    def theta0(self) -> np.ndarray: ...
    @property
    def free(self) -> np.ndarray: ...
    @property
    def linear(self) -> np.ndarray: ...
    @property
    def nonlinear(self) -> np.ndarray: ...
    @property
    def lower(self) -> np.ndarray: ...
    @property
    def upper(self) -> np.ndarray: ...
    @property
    def linear_lower(self) -> np.ndarray: ...
    @property
    def linear_upper(self) -> np.ndarray: ...
    @property
    def linear_bounded(self) -> bool: ...
    @property
    def obs(self) -> np.ndarray: ...
    @property
    def sigma(self) -> np.ndarray: ...
    @property
    def molality(self) -> np.ndarray: ...  # the scan coordinate (see the module docstring)
    @property
    def kind(self) -> np.ndarray: ...  # each point's fitted property name
    @property
    def n_evaluations(self) -> int: ...
    @property
    def n(self) -> int: ...
    @property
    def k(self) -> int: ...
    @property
    def is_subset(self) -> bool: ...
    @property
    def is_refit(self) -> bool: ...  # a subset with fewer points than its root
    @property
    def electrolyte_label(self) -> str: ...
    @property
    def temperature_k(self) -> float: ...  # NaN when the points are at several temperatures

    def param_map(self) -> dict[str, dict[str, str]]:
        """For each electrolyte (or mixture) of the fit: model parameter name -> global name."""
        ...

    def predict(self, theta: np.ndarray) -> np.ndarray: ...

    def derivatives(self, theta: np.ndarray, cols: Sequence[int] | np.ndarray,
                    base: np.ndarray | None = None) -> np.ndarray: ...

    def linear_design(self, theta: np.ndarray) -> tuple[np.ndarray, np.ndarray]: ...

    def shared_design(self) -> tuple[np.ndarray, np.ndarray] | None: ...

    def screen_parts(self, points: np.ndarray
                     ) -> list[tuple[np.ndarray, np.ndarray | None] | None] | None: ...

    def subset(self, mask: np.ndarray) -> Problem: ...

    def with_start(self, theta: np.ndarray) -> Problem: ...

    def theta_from(self, values: Mapping[str, float]) -> np.ndarray: ...
