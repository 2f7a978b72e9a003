"""The model contract: what every activity-model plugin declares and computes.

A model is an instance of a subclass of :class:`ActivityModel`. The harness never looks inside
a model; it only uses what is declared here. Units: molality in mol/kg, temperature in K,
pressure in Pa; a parameter's own unit is declared with it (ion sizes are in Å, as published).
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.water.debye_huckel import DebyeHuckel

Scope = Literal["electrolyte", "cation", "anion"]
ID_PATTERN = re.compile(r"^[a-z][a-z0-9]*(?:-[a-z0-9]+)*$")


@dataclass(frozen=True)
class Parameter:
    """One adjustable quantity of a model.

    ``scope`` says what the value belongs to: the electrolyte as a whole, or its cation or anion
    (per-ion parameters such as ion sizes; fits across salts that share an ion tie them).
    ``ion_key`` is the column name used for per-ion values in parameter files (e.g. ``a`` for
    both ``a_cation`` and ``a_anion``). ``linear`` marks a parameter that enters ln(gamma±) and
    the osmotic coefficient linearly when the nonlinear ones are held fixed. ``fixed`` marks a
    parameter held at its default unless the user frees it (e.g. Pitzer's alpha).
    """

    name: str
    symbol: str
    unit: str
    default: float
    lower: float = -math.inf
    upper: float = math.inf
    scope: Scope = "electrolyte"
    ion_key: str | None = None
    linear: bool = False
    fixed: bool = False
    description: str = ""

    def __post_init__(self) -> None:
        if not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", self.name):
            raise ValueError(f"parameter name {self.name!r} must be an identifier")
        if not (self.lower <= self.default <= self.upper):
            raise ValueError(f"parameter {self.name}: default outside its bounds")
        if self.scope != "electrolyte" and not self.ion_key:
            raise ValueError(f"parameter {self.name}: per-ion parameters need an ion_key")


@dataclass(frozen=True)
class Validity:
    """The range the model's authors claim (not what saltbench finds; that is a ValidityRange)."""

    max_ionic_strength: float | None = None  # mol/kg
    max_molality: float | None = None  # mol/kg
    temperature_k: tuple[float, float] | None = None
    note: str = ""

    def covers_temperature(self, temperature_k: float) -> bool:
        """Whether the claimed temperature range (if any) includes ``temperature_k`` (to 0.01 K)."""
        span = self.temperature_k
        return span is None or span[0] - 0.01 <= temperature_k <= span[1] + 0.01

    def max_molality_for(self, electrolyte: Electrolyte) -> float | None:
        limits = []
        if self.max_molality is not None:
            limits.append(self.max_molality)
        if self.max_ionic_strength is not None:
            limits.append(float(electrolyte.molality_at_ionic_strength(self.max_ionic_strength)))
        return min(limits) if limits else None


@dataclass(frozen=True)
class EvalContext:
    """Everything about the conditions of one evaluation, passed to every model function.

    ``wrt`` names the parameters whose derivatives the caller of ``jacobian`` (or
    ``values_and_jacobian``) will use; ``None`` means all of them. A model may skip the others
    (a fit needs only its free parameters) or ignore ``wrt`` and return every derivative.
    """

    electrolyte: Electrolyte
    dh: DebyeHuckel
    wrt: frozenset[str] | None = None

    @property
    def temperature_k(self) -> float:
        return self.dh.temperature_k

    @property
    def pressure_pa(self) -> float:
        return self.dh.pressure_pa


Params = Mapping[str, float]


class ActivityModel:
    """Base class of activity models. Subclasses set the class attributes and ``ln_gamma_pm``.

    Required: ``id`` (lower-case words joined by hyphens, stable forever), ``name``, ``citation``,
    ``parameters`` and :meth:`ln_gamma_pm`. Optional: :meth:`osmotic` (analytic; otherwise the
    harness integrates Gibbs-Duhem), :meth:`ln_gamma_ions` (single-ion values, where the model
    defines them), :meth:`jacobian` (analytic derivatives with respect to the parameters) and
    :meth:`values_and_jacobian` (the three at once, sharing their intermediate terms).
    ``charge_types`` is a set of ``(|z+|, |z-|)`` the model supports, or ``None`` for any.
    """

    id: str = ""
    name: str = ""
    citation: str = ""
    charge_types: frozenset[tuple[int, int]] | None = None
    parameters: tuple[Parameter, ...] = ()
    validity: Validity = Validity()
    description: str = ""

    # -- what a plugin implements -------------------------------------------------------------
    def ln_gamma_pm(self, m: np.ndarray, params: Params, ctx: EvalContext) -> np.ndarray:
        """Natural logarithm of the molal mean ionic activity coefficient at molalities ``m``."""
        raise NotImplementedError

    def osmotic(self, m: np.ndarray, params: Params, ctx: EvalContext) -> np.ndarray | None:
        """Molal osmotic coefficient, analytic; ``None`` lets the harness integrate Gibbs-Duhem."""
        return None

    def ln_gamma_ions(
        self, m: np.ndarray, params: Params, ctx: EvalContext
    ) -> dict[str, np.ndarray] | None:
        """Single-ion ln(gamma_i) keyed ``"cation"`` and ``"anion"``, or ``None`` if undefined.

        Single-ion values depend on a non-thermodynamic convention; only their stoichiometric
        mean is measurable.
        """
        return None

    def jacobian(
        self, m: np.ndarray, params: Params, ctx: EvalContext
    ) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray]] | None:
        """Analytic d ln(gamma±)/d p and d phi/d p for each parameter name, or ``None``.

        Only the parameters named in ``ctx.wrt`` are needed when it is not ``None``.
        """
        return None

    def values_and_jacobian(
        self, m: np.ndarray, params: Params, ctx: EvalContext
    ) -> tuple[np.ndarray, np.ndarray, dict[str, np.ndarray], dict[str, np.ndarray]] | None:
        """``(ln_gamma_pm, osmotic, d_ln_gamma, d_phi)`` at once, or ``None`` (the default).

        For models with an analytic osmotic coefficient and Jacobian whose three functions share
        intermediate terms: a fit needs all three at the same parameters, and one call computes
        those terms once. The results must equal those of the three functions (the contract kit
        checks it); ``ctx.wrt`` applies as for :meth:`jacobian`.
        """
        return None

    # -- helpers the harness and plugin authors share -----------------------------------------
    def supports(self, electrolyte: Electrolyte) -> bool:
        return self.charge_types is None or electrolyte.charge_type in self.charge_types

    def parameter(self, name: str) -> Parameter:
        for p in self.parameters:
            if p.name == name:
                return p
        raise KeyError(name)

    def parameters_for(self, electrolyte: Electrolyte | None = None) -> tuple[Parameter, ...]:
        """The parameters as they apply to ``electrolyte``.

        Override when defaults or fixed flags depend on the charge type (Pitzer's beta2 and
        alpha values for 2-2 salts); names and order must stay those of ``parameters``.
        """
        return self.parameters

    def defaults(self, electrolyte: Electrolyte | None = None) -> dict[str, float]:
        return {p.name: p.default for p in self.parameters_for(electrolyte)}

    def free_parameters(self, electrolyte: Electrolyte | None = None) -> tuple[Parameter, ...]:
        return tuple(p for p in self.parameters_for(electrolyte) if not p.fixed)

    def __repr__(self) -> str:
        return f"<{type(self).__name__} {self.id}>"


def check_declaration(model: ActivityModel) -> list[str]:
    """Problems with a model's declaration (empty list when it is well formed)."""
    problems = []
    if not isinstance(model, ActivityModel):
        return [f"{model!r} is not an ActivityModel instance"]
    if not ID_PATTERN.match(model.id or ""):
        problems.append(f"id {model.id!r} must be lower-case words joined by hyphens")
    if not model.name:
        problems.append("no display name")
    if not model.citation:
        problems.append("no citation of the published form")
    names = [p.name for p in model.parameters]
    if len(set(names)) != len(names):
        problems.append("duplicate parameter names")
    if type(model).ln_gamma_pm is ActivityModel.ln_gamma_pm:
        problems.append("ln_gamma_pm is not implemented")
    return problems


@dataclass
class ModelInfo:
    """A discovered model with the plugin it came from (for listings and error messages)."""

    model: ActivityModel
    plugin: str
    plugin_version: str = ""
    source_path: str = ""
    extra: dict[str, str] = field(default_factory=dict)
