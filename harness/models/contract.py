"""The model contract: what every activity-model plugin declares and computes.

A model is an instance of a subclass of :class:`SolutionModel`. Its one entry point is
:meth:`SolutionModel.compute`: for a :class:`~saltbench.chemistry.solution.Composition` (N
solutions of K ions, each at its own temperature and pressure) and one or more sets of parameter
values, it returns the quantities asked for, keyed by
:class:`~saltbench.models.quantities.Quantity`, with their derivatives with respect to the
parameters named in ``wrt``. Parameters are keyed by what they belong to
(:class:`ParameterKey`). :class:`ActivityModel` is the one-salt form of the contract (the
contract before solutions): a model written to it implements ``ln_gamma_pm`` and friends for
one salt, and its ``compute`` adapts them, so such plugins keep working unchanged.

The harness never looks inside a model; it only uses what is declared here. Units: molality in
mol/kg, temperature in K, pressure in Pa; a parameter's own unit is declared with it (ion sizes
are in Å, as published).
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any, ClassVar, Literal, NamedTuple

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.solution import Composition
from saltbench.errors import ModelDomainError, ModelError, UserError
from saltbench.models.quantities import OSMOTIC, Quantity, kinds, ln_gamma, ln_gamma_pm
from saltbench.water.debye_huckel import DebyeHuckel

Scope = Literal["electrolyte", "cation", "anion"]
#: What a parameter belongs to: the model as a whole, one electrolyte (salt), one ion, a
#: cation-anion pair, two like-charged ions, or a triplet (two like-charged ions and one of
#: opposite charge).
Belongs = Literal["model", "electrolyte", "ion", "pair", "like-pair", "triplet"]
_OWNER_SIZE = {"model": 0, "electrolyte": 1, "ion": 1, "pair": 2, "like-pair": 2, "triplet": 3}
ID_PATTERN = re.compile(r"^[a-z][a-z0-9]*(?:-[a-z0-9]+)*$")


@dataclass(frozen=True)
class Parameter:
    """One adjustable quantity of a model.

    ``belongs_to`` says what the value belongs to (see :data:`Belongs`); in a solution the
    parameter has one value per owner, keyed ``ParameterKey(key_name, owner)``. ``scope`` is its
    one-salt reading: the electrolyte as a whole, or its cation or anion (per-ion parameters
    such as ion sizes; fits across salts that share an ion tie them). ``ion_key`` is the column
    name used for per-ion values in parameter files (e.g. ``a`` for both ``a_cation`` and
    ``a_anion``) and the key name of a per-ion parameter. ``linear`` marks a parameter that enters ln(gamma±) and
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
    belongs_to: Belongs | None = None  # None: from scope ("ion" for cation/anion, else electrolyte)

    @property
    def owner_kind(self) -> Belongs:
        if self.belongs_to is not None:
            return self.belongs_to
        return "electrolyte" if self.scope == "electrolyte" else "ion"

    @property
    def key_name(self) -> str:
        """The name of this parameter's key: ``ion_key`` for per-ion parameters, else ``name``."""
        return self.ion_key if self.scope != "electrolyte" and self.ion_key else self.name

    def key_for(self, electrolyte: Electrolyte) -> ParameterKey:
        """This parameter's key in a solution of ``electrolyte`` alone."""
        owner: tuple[str, ...]
        kind = self.owner_kind
        if kind == "model":
            owner = ()
        elif kind == "electrolyte":
            owner = (electrolyte.name,)
        elif kind == "ion":
            owner = ((electrolyte.anion if self.scope == "anion" else electrolyte.cation).name,)
        elif kind == "pair":
            owner = (electrolyte.cation.name, electrolyte.anion.name)
        else:
            raise ValueError(f"parameter {self.name}: a {kind} parameter has no value in a "
                             "solution of one salt")
        return ParameterKey(self.key_name, owner)

    def __post_init__(self) -> None:
        if not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", self.name):
            raise ValueError(f"parameter name {self.name!r} must be an identifier")
        if not (self.lower <= self.default <= self.upper):
            raise ValueError(f"parameter {self.name}: default outside its bounds")
        if self.scope != "electrolyte" and not self.ion_key:
            raise ValueError(f"parameter {self.name}: per-ion parameters need an ion_key")
        if self.belongs_to is not None and self.belongs_to not in _OWNER_SIZE:
            raise ValueError(f"parameter {self.name}: belongs_to must be one of "
                             f"{', '.join(_OWNER_SIZE)}")


class ParameterKey(NamedTuple):
    """A parameter in a solution: its name and what it belongs to (ion or salt names, in the
    order cation(s) before anion(s); e.g. ``("beta0", ("Na+", "Cl-"))``, ``("a", ("Na+",))``,
    ``("theta", ("K+", "Na+"))``, ``("b", ())`` for a model-wide value)."""

    name: str
    owner: tuple[str, ...] = ()

    def __str__(self) -> str:
        return f"{self.name}[{'/'.join(self.owner)}]" if self.owner else self.name


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
#: Parameter values in a request: each key's values for S parameter sets, shaped (S, 1) when
#: the same for every solution or (S, N) when they vary (a temperature form evaluated per row).
KeyedParams = Mapping["ParameterKey", np.ndarray]


@dataclass(frozen=True)
class Conditions:
    """The Debye-Hückel constants of each solution of a composition.

    ``dh`` holds one :class:`DebyeHuckel` per distinct condition (temperature, pressure, or a
    published constant its authors used) and ``group`` (N,) says which applies to each row.
    """

    dh: tuple[DebyeHuckel, ...]
    group: np.ndarray

    @classmethod
    def single(cls, dh: DebyeHuckel, n: int) -> Conditions:
        """One set of constants for all ``n`` rows (one temperature, or a published constant)."""
        return cls((dh,), np.zeros(n, dtype=np.intp))

    @classmethod
    def of(cls, composition: Composition) -> Conditions:
        """The constants of water at each row's own temperature and pressure (IAPWS, through
        :func:`saltbench.water.debye_huckel.debye_huckel_constants`), computed once per
        distinct state."""
        from saltbench.water.debye_huckel import debye_huckel_constants

        p = composition.pressure_pa
        states = list(zip(composition.temperature_k.tolist(),
                          [None] * composition.n if p is None else p.tolist()))
        distinct = list(dict.fromkeys(states))
        where = {state: k for k, state in enumerate(distinct)}
        group = np.array([where[state] for state in states], dtype=np.intp)
        return cls(tuple(debye_huckel_constants(t, pa) for t, pa in distinct), group)

    def _per_row(self, values: list[float]) -> np.ndarray:
        if len(values) == 1:
            return np.full(self.group.shape, values[0])
        return np.asarray(values)[self.group]

    @property
    def a_gamma(self) -> np.ndarray:
        """A_gamma = 3 A_phi (natural log basis, (kg/mol)^1/2) of each row."""
        return self._per_row([d.a_gamma for d in self.dh])

    @property
    def a_phi(self) -> np.ndarray:
        return self._per_row([d.a_phi for d in self.dh])

    @property
    def b_gamma_per_angstrom(self) -> np.ndarray:
        return self._per_row([d.b_gamma_per_angstrom for d in self.dh])


@dataclass(frozen=True)
class Request:
    """What a caller asks of :meth:`SolutionModel.compute`.

    ``params`` gives a value for every parameter key the model uses here (see
    :meth:`SolutionModel.keys_for`), for S sets at once (a fit's folds and trials); ``wrt``
    names the keys whose derivatives are wanted (empty: none). ``quantities`` are the
    quantities wanted; a model returns those it computes and leaves out the rest
    (:func:`saltbench.models.evaluate.compute` derives phi from ln gamma± by Gibbs-Duhem for one
    salt, and a_w from phi).
    """

    composition: Composition
    quantities: tuple[Quantity, ...]
    params: KeyedParams
    conditions: Conditions
    wrt: tuple[ParameterKey, ...] = ()

    @property
    def n_sets(self) -> int:
        return int(next(iter(self.params.values())).shape[0]) if self.params else 1

    def named_values(self, names: Mapping[str, ParameterKey], s: int, row: int) -> dict[str, float]:
        """Parameter set ``s`` at one row, by the names in ``names`` (a one-salt model's own
        parameter names, each with its key: see :meth:`SolutionModel.salt_keys`)."""
        n = self.composition.n
        return {name: float(np.broadcast_to(self.value(key)[s], (n,))[row])
                for name, key in names.items()}

    def value(self, key: ParameterKey) -> np.ndarray:
        """The values of ``key``, (S, 1) or (S, N); a ModelDomainError names a missing key."""
        try:
            return self.params[key]
        except KeyError:
            raise ModelDomainError(f"no value for parameter {key}") from None


@dataclass
class Computed:
    """What :meth:`SolutionModel.compute` returns: values (S, N) per quantity and, per
    quantity, derivatives (S, N) per parameter key in the request's ``wrt``."""

    values: dict[Quantity, np.ndarray]
    derivatives: dict[Quantity, dict[ParameterKey, np.ndarray]] = field(default_factory=dict)


class SolutionModel:
    """Base class of activity models on the solution contract.

    Required: ``id`` (lower-case words joined by hyphens, stable forever), ``name``,
    ``citation``, ``parameters`` (each with what it ``belongs_to``) and :meth:`compute`.
    ``computes`` names the quantity kinds ``compute`` returns itself. ``single_ion_convention``
    says on what convention its ``ln_gamma`` of single ions rests ('' when it gives none).
    ``charge_types`` is a set of ``(|z+|, |z-|)`` the model supports for one salt, or ``None``
    for any.
    """

    id: str = ""
    name: str = ""
    citation: str = ""
    charge_types: frozenset[tuple[int, int]] | None = None
    parameters: tuple[Parameter, ...] = ()
    validity: Validity = Validity()
    description: str = ""
    computes: frozenset[str] = frozenset({"ln_gamma_pm"})
    single_ion_convention: str = ""
    #: Whether ``compute`` takes solutions of several salts (not only one salt's ions).
    mixtures: bool = False

    def mixing_rule_defect(self, composition: Composition, values: Mapping[ParameterKey, float],
                           dh: DebyeHuckel) -> float | None:
        """How far this model's mixture rule may break the cross-differential identity.

        ``None`` (the default) for a model whose mixture values are the derivatives of one
        excess Gibbs energy: the contract kit holds the identity to 1e-6 relative. A published
        mixing rule that is not so derivable (Bromley's, b-dot's) returns the largest defect
        |nu_j d ln gamma±_j/d m_k - nu_k d ln gamma±_k/d m_j| in kg/mol it is known to have for
        ``composition`` at the parameter ``values`` (every key of ``keys_for``) and the
        Debye-Hückel constants ``dh``, derived or measured and explained in the model's module.
        The kit adds it to its tolerance, so the exception is written down and a defect that
        grows still fails.
        """
        return None

    def computes_for(self, composition: Composition) -> frozenset[str]:
        """The quantity kinds ``compute`` returns itself for ``composition`` (``computes``
        unless a model gives more for mixtures than its one-salt form does)."""
        return self.computes

    # -- what a plugin implements -------------------------------------------------------------
    def compute(self, request: Request) -> Computed:
        """The quantities of ``request`` for its composition, with derivatives if asked."""
        raise NotImplementedError

    def keys_for(self, composition: Composition) -> dict[ParameterKey, Parameter]:
        """The parameter keys this model uses for ``composition``, each with its declaration.

        The default gives each declared parameter one key per owner of its kind present: the
        model, each salt named in the composition, each ion (cation- or anion-scoped parameters
        for ions of that sign), each cation-anion pair, each pair of like-charged ions and each
        triplet.
        """
        cations = [i.name for i in composition.ions if i.charge > 0]
        anions = [i.name for i in composition.ions if i.charge < 0]
        like: list[tuple[str, ...]] = [
            (x, y) for same in (cations, anions) for i, x in enumerate(same) for y in same[i + 1:]]
        triplets: list[tuple[str, ...]] = [
            (x, y, a) for i, x in enumerate(cations) for y in cations[i + 1:] for a in anions]
        triplets += [(c, x, y) for i, x in enumerate(anions) for y in anions[i + 1:] for c in cations]
        owners: dict[str, list[tuple[str, ...]]] = {
            "model": [()],
            "electrolyte": [(s.name,) for s in composition.salts],
            "pair": [(c, a) for c in cations for a in anions],
            "like-pair": like,
            "triplet": triplets,
        }
        out: dict[ParameterKey, Parameter] = {}
        for p in self.parameters:
            kind = p.owner_kind
            if kind == "ion":
                ions = (cations if p.scope == "cation" else anions if p.scope == "anion"
                        else cations + anions)
                found: list[tuple[str, ...]] = [(ion,) for ion in ions]
            else:
                found = owners[kind]
            for owner in found:
                out[ParameterKey(p.key_name, owner)] = p
        return out

    def supports_composition(self, composition: Composition) -> bool:
        """Whether ``compute`` takes ``composition`` (one salt of a supported charge type, or
        any solution for a model with ``mixtures``)."""
        salt = composition.single_salt
        if salt is not None:
            return self.supports(salt)
        return self.mixtures

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

    def salt_keys(self, electrolyte: Electrolyte) -> dict[str, ParameterKey]:
        """Each parameter's name -> its key in a solution of ``electrolyte`` alone."""
        return {p.name: p.key_for(electrolyte) for p in self.parameters_for(electrolyte)}

    def __repr__(self) -> str:
        return f"<{type(self).__name__} {self.id}>"


class ActivityModel(SolutionModel):
    """The one-salt form of the contract: formulas for one salt, adapted to :meth:`compute`.

    Subclasses set the class attributes and ``ln_gamma_pm``. Optional: :meth:`osmotic`
    (analytic; otherwise the harness integrates Gibbs-Duhem), :meth:`ln_gamma_ions` (single-ion
    values, where the model defines them), :meth:`jacobian` (analytic derivatives with respect
    to the parameters) and :meth:`values_and_jacobian` (the three at once, sharing their
    intermediate terms). Parameters are named flat; ``compute`` keys them by
    :meth:`Parameter.key_for`. Plugins written before the solution contract subclass this and
    keep working unchanged.

    ``stacks_parameter_sets`` (opt-in, default ``False``) declares that the one-salt functions
    (``ln_gamma_pm``, ``osmotic``, ``ln_gamma_ions``, ``jacobian``, ``values_and_jacobian``)
    take S parameter sets in one call. Each value in ``params`` is then either a float (the
    behaviour is exactly that of a model without the attribute, a ModelDomainError included)
    or a numpy array of shape (S, 1), with ``m`` of shape (N,); every returned array (values
    and each derivative) broadcasts to (S, N), row s for set s (a derivative that does not
    depend on the parameters may stay (N,)). In this stacked form (any value an array) a set
    outside the model's domain gives non-finite values (NaN or inf) in its row: the call does
    not raise and emits no numpy RuntimeWarning. Without the attribute a caller calls the
    functions once per set with floats. The contract kit holds a declaring model to it
    (:mod:`saltbench.models.contract_kit`, check 10); :func:`stacked_sets` tells the two forms
    apart.
    """

    #: Whether the one-salt functions take S parameter sets at once (see the class docstring).
    stacks_parameter_sets: ClassVar[bool] = False

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

    # -- the adapter ------------------------------------------------------------------------
    @property
    def computes(self) -> frozenset[str]:  # type: ignore[override]
        kinds = {"ln_gamma_pm"}
        if type(self).osmotic is not ActivityModel.osmotic:
            kinds.add("osmotic")
        if type(self).ln_gamma_ions is not ActivityModel.ln_gamma_ions:
            kinds.add("ln_gamma")
        return frozenset(kinds)

    def compute(self, request: Request) -> Computed:
        """The one-salt formulas asked row group by row group and parameter set by set."""
        comp = request.composition
        salt = comp.single_salt
        if salt is None:
            raise ModelDomainError(f"model {self.id} is written for one salt; this solution has "
                                   f"{', '.join(comp.names)}")
        m_all = comp.salt_molality(salt)
        keys = self.salt_keys(salt)
        by_key = {k: name for name, k in keys.items()}
        wrt_names = frozenset(by_key[k] for k in request.wrt if k in by_key)
        wanted = set(request.quantities)
        mean_q, ions_q = ln_gamma_pm(salt.name), (ln_gamma(salt.cation.name),
                                                 ln_gamma(salt.anion.name))
        s_count = request.n_sets
        values: dict[Quantity, np.ndarray] = {}
        derivs: dict[Quantity, dict[ParameterKey, np.ndarray]] = {}

        def put(target: dict, q: object, s: int, rows: np.ndarray, v: object) -> None:
            arr = target.setdefault(q, np.empty((s_count, comp.n)))
            arr[s, rows] = np.asarray(v, dtype=float)

        analytic_phi = "osmotic" in self.computes
        groups = [np.flatnonzero(request.conditions.group == g)
                  for g in range(len(request.conditions.dh))]
        for g, rows in enumerate(groups):
            if not rows.size:
                continue
            m = m_all[rows]
            ctx = EvalContext(salt, request.conditions.dh[g], wrt_names if request.wrt else None)
            for s in range(s_count):
                p = request.named_values(keys, s, rows[0])
                phi = d_ln = d_phi = None
                combined = None
                if request.wrt and OSMOTIC in wanted and analytic_phi:
                    combined = self.values_and_jacobian(m, p, ctx)
                if combined is not None:
                    ln_g, phi, d_ln, d_phi = combined
                else:
                    ln_g = self.ln_gamma_pm(m, p, ctx)
                    if OSMOTIC in wanted:
                        phi = self.osmotic(m, p, ctx)
                    if request.wrt:
                        jac = self.jacobian(m, p, ctx)
                        if jac is not None:
                            d_ln, d_phi = jac
                put(values, mean_q, s, rows, ln_g)
                if phi is not None:
                    put(values, OSMOTIC, s, rows, phi)
                if any(q in wanted for q in ions_q):
                    ions = self.ln_gamma_ions(m, p, ctx)
                    if ions is not None:
                        put(values, ions_q[0], s, rows, ions["cation"])
                        put(values, ions_q[1], s, rows, ions["anion"])
                for q, d in ((mean_q, d_ln), (OSMOTIC, d_phi)):
                    if d is None or (q == OSMOTIC and phi is None):
                        continue
                    for name, col in dict(d).items():
                        if name in wrt_names:
                            put(derivs.setdefault(q, {}), keys[name], s, rows, col)
        return Computed(values, derivs)


def stacked_sets(params: Mapping[str, object]) -> int:
    """The number S of parameter sets in ``params`` when any value is an array of them (the
    stacked form of :attr:`ActivityModel.stacks_parameter_sets`), else 0 (every value a float)."""
    for value in params.values():
        if isinstance(value, np.ndarray) and value.ndim:
            return int(value.shape[0])
    return 0


def call_model(model: SolutionModel, method: str, *args: object) -> Any:
    # Any: the plugin's return, unchecked; callers check its shape
    """Call one model function, turning any exception of the plugin's into a ModelError (a
    UserError, such as a setting it refuses, passes as it is: the user's to fix)."""
    try:
        return getattr(model, method)(*args)
    except (ModelError, UserError):
        raise
    except Exception as exc:
        raise ModelError(f"model {model.id}: {method} raised {type(exc).__name__}: {exc}") from exc


def check_declaration(model: SolutionModel) -> list[str]:
    """Problems with a model's declaration (empty list when it is well formed)."""
    problems = []
    if not isinstance(model, SolutionModel):
        return [f"{model!r} is not a SolutionModel (or ActivityModel) instance"]
    if not ID_PATTERN.match(model.id or ""):
        problems.append(f"id {model.id!r} must be lower-case words joined by hyphens")
    if not model.name:
        problems.append("no display name")
    if not model.citation:
        problems.append("no citation of the published form")
    names = [p.name for p in model.parameters]
    if len(set(names)) != len(names):
        problems.append("duplicate parameter names")
    if isinstance(model, ActivityModel):
        if type(model).ln_gamma_pm is ActivityModel.ln_gamma_pm:
            problems.append("ln_gamma_pm is not implemented")
    elif type(model).compute is SolutionModel.compute:
        problems.append("compute is not implemented")
    if ("ln_gamma" in model.computes and not model.single_ion_convention
            and not isinstance(model, ActivityModel)):
        problems.append("gives single-ion values but states no single_ion_convention")
    unknown = sorted(set(model.computes) - {k.name for k in kinds()})
    if unknown:
        problems.append(f"computes unknown quantity kinds: {', '.join(unknown)}")
    return problems


@dataclass
class ModelInfo:
    """A discovered model with the plugin it came from (for listings and error messages)."""

    model: SolutionModel
    plugin: str
    plugin_version: str = ""
    source_path: str = ""
    extra: dict[str, str] = field(default_factory=dict)
