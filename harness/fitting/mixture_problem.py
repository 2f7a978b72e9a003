"""A fitting problem on mixture data: a model's parameter keys for the compositions, free or held.

The parameter vector holds one entry per key the model uses for the data's compositions
(:meth:`SolutionModel.keys_for`), named ``str(key)`` (``theta[H+/Na+]``, ``beta0[Na+/Cl-]``),
linear or not and bounded as the model declares them. The caller holds some keys at values it
gives (typically the binary parameters of a published set) and frees others (by default the
model's like-pair and triplet keys: the mixing terms). A key neither held nor freed takes its
declared default only where that default is what the model means by leaving it out: mixing
terms (like-pair, triplet; 0 is "no such term"), and parameters the model holds fixed, for the
salt of their pair where they belong to one (Pitzer's alpha, its beta2 outside 2-2 pairs). Any
other key must be given; a mistake in the request is a UserError.

Predictions and derivatives come from one checked
:func:`saltbench.models.evaluate.compute` call per evaluation, for every quantity of the data at
once, with ``wrt`` the keys whose derivatives are needed. A derivative the model does not give is
differenced: with a unit step for a parameter declared ``linear`` (exact for it), otherwise by
central differences with step eps^(1/3) max(1, |p|) (common practice, no source), one-sided near
a bound, as in :mod:`saltbench.fitting.problem`.

The problem has the interface of :class:`saltbench.fitting.protocol.Problem`, so the solver,
the result builder, cross-validation and validity scans take it as they take one-salt problems;
its scan coordinate (``molality`` in that interface) is each point's ionic strength. Problems
made by ``subset`` share their root's linear design when every free parameter is linear (a
model's value at a composition does not depend on the other compositions of the call).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence

import numpy as np

from saltbench.chemistry.electrolyte import neutral_salt
from saltbench.errors import ModelDomainError, ModelError, UserError
from saltbench.fitting.mixture_data import MixtureData
from saltbench.fitting.problem import GlobalParameter, ProblemBase, parameter_layout
from saltbench.models.contract import Computed, Conditions, Parameter, ParameterKey, Request, SolutionModel
from saltbench.models.evaluate import compute
from saltbench.water.debye_huckel import DebyeHuckel

_FD_STEP = float(np.finfo(float).eps) ** (1.0 / 3.0)
#: Keys that default to their declared value when the caller neither holds nor frees them.
MIXING_KINDS = ("like-pair", "triplet")

KeyLike = ParameterKey | str


class MixtureProblem(ProblemBase):
    """Weighted least squares of one model against mixture data (see the module docstring)."""

    def __init__(self, model: SolutionModel, data: MixtureData, conditions: Conditions,
                 keys: Sequence[ParameterKey], params: list[GlobalParameter]) -> None:
        self.model = model
        self.data = data
        self.conditions = conditions
        self.keys = list(keys)
        self.params = params
        (self.names, self.theta0, self.free, self.linear, self.nonlinear, self.lower, self.upper,
         self.linear_lower, self.linear_upper, self.linear_bounded) = parameter_layout(params)
        self.obs = data.value
        self.sigma = np.asarray(data.uncertainty, dtype=float)
        self.molality = data.ionic_strength  # the scan coordinate (see the module docstring)
        self.kind = data.kind
        self.n_evaluations = 0
        quantities = tuple(dict.fromkeys(data.quantities))
        where = {q: j for j, q in enumerate(quantities)}
        self.quantities = quantities
        self._which = np.array([where[q] for q in data.quantities], dtype=np.intp)
        self._points = np.arange(data.n)
        self._last: tuple[bytes, np.ndarray] | None = None
        self._root: MixtureProblem = self
        self._rows: np.ndarray | None = None
        self._design_memo: dict[bytes, tuple[np.ndarray, np.ndarray] | None] = {}

    # -- bookkeeping --------------------------------------------------------------------------
    @property
    def ionic_strength(self) -> np.ndarray:
        return self.molality

    @property
    def electrolyte_label(self) -> str:
        comp = self.data.composition
        return " + ".join(s.name for s in comp.salts) if comp.salts else " + ".join(comp.names)

    @property
    def temperature_k(self) -> float:
        temps = {round(t, 6) for t in self.data.composition.temperature_k.tolist()}
        return float(temps.pop()) if len(temps) == 1 else math.nan

    def param_map(self) -> dict[str, dict[str, str]]:
        return {self.electrolyte_label: {name: name for name in self.names}}

    def _copy(self, data: MixtureData, conditions: Conditions,
              params: list[GlobalParameter]) -> MixtureProblem:
        out = MixtureProblem(self.model, data, conditions, self.keys, params)
        out._root = self._root
        return out

    def subset(self, mask: np.ndarray) -> MixtureProblem:
        """The same parameters against only the points picked by a boolean ``mask``."""
        rows = np.flatnonzero(np.asarray(mask, dtype=bool))
        cond = Conditions(self.conditions.dh, self.conditions.group[rows])
        sub = self._copy(self.data.subset(rows), cond, list(self.params))
        sub._rows = rows if self._rows is None else self._rows[rows]
        return sub

    def with_start(self, theta: np.ndarray) -> MixtureProblem:
        """The same problem started from ``theta`` (free entries only are taken)."""
        params = list(self.params)
        for i in self.free:
            v = float(np.clip(theta[i], params[i].lower, params[i].upper))
            params[i] = params[i]._replace(value=v)
        out = self._copy(self.data, self.conditions, params)
        out._rows = self._rows
        return out

    def theta_from(self, values: Mapping[str, float]) -> np.ndarray:
        """A full parameter vector from values keyed by ``str(key)``."""
        theta = self.theta0.copy()
        index = {name: i for i, name in enumerate(self.names)}
        for name, value in values.items():
            if name not in index:
                raise UserError(f"model {self.model.id} has no parameter {name!r} for these "
                                f"data (parameters: {', '.join(self.names)})")
            theta[index[name]] = float(value)
        return theta

    # -- model calls --------------------------------------------------------------------------
    def _call(self, theta: np.ndarray, wrt: tuple[ParameterKey, ...] = ()) -> Computed:
        params = {key: np.array([[v]]) for key, v in zip(self.keys, theta.tolist())}
        request = Request(self.data.composition, self.quantities, params, self.conditions, wrt)
        self.n_evaluations += 1
        return compute(self.model, request)

    def _pick(self, by_quantity: Mapping, what: str) -> np.ndarray:
        """Each point's entry out of (1, N) arrays keyed by quantity."""
        stack = np.stack([np.asarray(by_quantity[q], dtype=float)[0] for q in self.quantities])
        out = stack[self._which, self._points]
        if not np.all(np.isfinite(out)):
            raise ModelError(f"model {self.model.id}: {what} is not finite at some compositions")
        return out

    def _keep(self, theta: np.ndarray, pred: np.ndarray) -> np.ndarray:
        self._last = (theta.tobytes(), pred)
        return pred

    def predict(self, theta: np.ndarray) -> np.ndarray:
        """Model values at every point (ln gamma± or phi by its quantity), in data order."""
        key = theta.tobytes()
        if self._last is not None and self._last[0] == key:
            return self._last[1]
        if self._rows is not None and self.linear.size and not self.nonlinear.size:
            t0 = theta.copy()
            t0[self.linear] = 0.0
            shared = self._shared_design(t0)
            if shared is not None:
                return self._keep(theta, shared[0] + shared[1] @ theta[self.linear])
        return self._keep(theta, self._pick(self._call(theta).values, "a value"))

    def derivatives(self, theta: np.ndarray, cols: Sequence[int] | np.ndarray,
                    base: np.ndarray | None = None) -> np.ndarray:
        """d(prediction)/d(theta[c]) for each global index ``c`` in ``cols``: an (n, len) array."""
        cols = [int(c) for c in np.asarray(cols, dtype=np.intp).tolist()]
        out = np.zeros((self.n, len(cols)))
        if not cols:
            return out
        computed = self._call(theta, tuple(self.keys[c] for c in cols))
        if base is None:
            base = self._keep(theta, self._pick(computed.values, "a value"))
        for j, c in enumerate(cols):
            key = self.keys[c]
            given = {q: computed.derivatives.get(q, {}).get(key) for q in self.quantities}
            if all(v is not None for v in given.values()):
                out[:, j] = self._pick(given, f"d/d {key}")
            else:
                out[:, j] = self._difference(theta, c, base)
        return out

    def _difference(self, theta: np.ndarray, c: int, base: np.ndarray) -> np.ndarray:
        p = self.params[c]
        x = float(theta[c])

        def at(value: float) -> np.ndarray:
            t = theta.copy()
            t[c] = value
            return self._pick(self._call(t).values, "a value")

        if p.linear:  # affine in this parameter: a unit step gives the derivative exactly
            return at(x + 1.0) - base
        h = _FD_STEP * max(1.0, abs(x))
        if x + h > p.upper:
            return (base - at(x - h)) / h
        if x - h < p.lower:
            return (at(x + h) - base) / h
        return (at(x + h) - at(x - h)) / (2 * h)

    def linear_design(self, theta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Offset and design matrix in the free linear parameters at fixed nonlinear ones."""
        t0 = theta.copy()
        t0[self.linear] = 0.0
        if not self.nonlinear.size:
            shared = self._shared_design(t0)
            if shared is not None:
                return shared
        return self._design_now(t0)

    def _design_now(self, t0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        cols = self.linear.tolist()
        if not cols:
            return self.predict(t0), np.zeros((self.n, 0))
        design = self.derivatives(t0, cols)
        assert self._last is not None and self._last[0] == t0.tobytes()
        return self._last[1], design

    def screen_parts(self, points: np.ndarray
                     ) -> list[tuple[np.ndarray, np.ndarray | None] | None] | None:
        """None: the spread screen evaluates each point itself (mixture models are called
        once per point of the screen)."""
        return None


# -- building problems ------------------------------------------------------------------------
def _parse_key(text: str) -> ParameterKey | None:
    """``"theta[K+/Na+]"`` -> ParameterKey("theta", ("K+", "Na+")); ``"b"`` -> ParameterKey("b")."""
    text = text.strip()
    name, bracket, rest = text.partition("[")
    if not bracket:
        return ParameterKey(name) if name else None
    if not rest.endswith("]") or not name:
        return None
    return ParameterKey(name, tuple(part.strip() for part in rest[:-1].split("/")))


def _resolve(item: KeyLike, keys: Mapping[ParameterKey, Parameter], by_name: Mapping[str, ParameterKey],
             model: SolutionModel, what: str) -> ParameterKey:
    """The model's key meant by ``item``: a key or its name, its ions in any order (the ions of
    one key are distinct, so they name it whatever their order: ``theta[K+/Na+]`` is the
    model's ``theta[Na+/K+]`` where it lists Na+ first)."""
    given = item if isinstance(item, ParameterKey) else _parse_key(str(item))
    key = None
    if given is not None:
        key = given if given in keys else next(
            (k for k in keys if k.name == given.name and len(k.owner) == len(given.owner)
             and set(k.owner) == set(given.owner)), None)
    if key is None:
        known = ", ".join(by_name) or "none"
        raise UserError(f"model {model.id} has no parameter {str(item)!r} to {what} for these "
                        f"data (its keys here: {known})")
    return key


def _present_together(data: MixtureData, key: ParameterKey) -> bool:
    """Whether some point of ``data`` holds every ion (or salt) ``key`` belongs to."""
    comp = data.composition
    if not key.owner:
        return True
    ions: list[str] = []
    for owner in key.owner:
        if owner in comp.names:
            ions.append(owner)
        else:  # a salt
            salt = comp.salt(owner)
            ions += [salt.cation.name, salt.anion.name]
    together = np.all(comp.molality[:, [comp.index(i) for i in ions]] > 0, axis=1)
    return bool(together.any())


def _implied_default(model: SolutionModel, data: MixtureData, key: ParameterKey,
                     p: Parameter) -> float | None:
    """The value a key takes when the caller neither holds nor frees it, or None when it must
    be given (see the module docstring)."""
    kind = p.owner_kind
    if kind in MIXING_KINDS:
        return p.default
    if kind == "pair":
        comp = data.composition
        cation, anion = (comp.ions[comp.index(name)] for name in key.owner)
        for q in model.parameters_for(neutral_salt(cation, anion)):
            if q.name == p.name:
                return q.default if q.fixed else None
    return p.default if p.fixed else None


def build_mixture_problem(model: SolutionModel, data: MixtureData, *,
                          held: Mapping[KeyLike, float] | None = None,
                          free: Iterable[KeyLike] | None = None,
                          bounds: Mapping[KeyLike, tuple[float, float]] | None = None,
                          start: Mapping[KeyLike, float] | None = None,
                          dh: DebyeHuckel | None = None,
                          require_free: bool = True) -> MixtureProblem:
    """Set up the parameter vector of ``model`` for ``data``; raises UserError for a mistake.

    Keys may be given as :class:`ParameterKey` or as their names (``"theta[H+/Na+]"``).
    ``held`` gives values to hold; ``free`` the keys to fit (default: every like-pair and
    triplet key of the model for these compositions); ``bounds`` narrows declared bounds;
    ``start`` gives start values of free keys. ``dh`` gives the Debye-Hückel constants for every
    point (e.g. a published A_phi); without it each point has those of water at its own
    temperature and pressure (IAPWS). ``require_free=False`` allows a problem with nothing to
    fit (a model judged as given).
    """
    if not isinstance(data, MixtureData):
        raise UserError("mixture fit: data must be MixtureData")
    comp = data.composition
    if not model.supports_composition(comp):
        raise UserError(f"model {model.id} does not take solutions of {', '.join(comp.names)}")
    keys = model.keys_for(comp)
    by_name = {str(k): k for k in keys}
    hold = {}
    for item, value in dict(held or {}).items():
        key = _resolve(item, keys, by_name, model, "hold")
        value = float(value)
        if not math.isfinite(value):
            raise UserError(f"parameter {key}: held value must be finite")
        hold[key] = value
    if free is None:
        fit = [k for k, p in keys.items() if p.owner_kind in MIXING_KINDS and k not in hold]
    else:
        items = [free] if isinstance(free, str | ParameterKey) else list(free)
        fit = list(dict.fromkeys(_resolve(item, keys, by_name, model, "fit") for item in items))
    both = [str(k) for k in fit if k in hold]
    if both:
        raise UserError(f"parameter {both[0]} is both held and free")
    if require_free and not fit:
        raise UserError(f"no free parameter: model {model.id} has no mixing terms (like-pair or "
                        f"triplet keys) for {', '.join(comp.names)} to fit by default; name the "
                        f"keys to fit (its keys here: {', '.join(by_name)})")
    for key in fit:
        if not _present_together(data, key):
            raise UserError(f"the data cannot determine {key}: no point holds "
                            f"{' and '.join(key.owner)} together")
    narrowed: dict[ParameterKey, tuple[float, float]] = {}
    for item, (lo, hi) in dict(bounds or {}).items():
        key = _resolve(item, keys, by_name, model, "bound")
        p = keys[key]
        lo, hi = max(float(lo), p.lower), min(float(hi), p.upper)
        if not lo <= hi:
            raise UserError(f"parameter {key}: bounds {lo}..{hi} are empty")
        narrowed[key] = (lo, hi)
    starts = {_resolve(item, keys, by_name, model, "start"): float(v)
              for item, v in dict(start or {}).items()}
    params: list[GlobalParameter] = []
    missing: list[str] = []
    is_free = set(fit)
    for key, p in keys.items():
        lo, hi = narrowed.get(key, (p.lower, p.upper))
        if key in hold:
            value = hold[key]
            if not lo <= value <= hi:
                raise UserError(f"parameter {key}: held value {value:g} lies outside its bounds "
                                f"{lo:g}..{hi:g}")
        else:
            implied = _implied_default(model, data, key, p)
            if key in is_free:
                value = starts.get(key, p.default if implied is None else implied)
                value = float(np.clip(value, lo, hi))
            elif implied is None:
                missing.append(str(key))
                continue
            else:
                value = implied
        params.append(GlobalParameter(str(key), key.name, lo, hi, p.linear, key in is_free,
                                      float(value)))
    if missing:
        raise UserError(f"no value for {', '.join(missing)}: hold them at published values "
                        "(held=) or fit them (free=)")
    conditions = Conditions.of(comp) if dh is None else Conditions.single(dh, comp.n)
    problem = MixtureProblem(model, data, conditions, list(keys), params)
    try:  # what the model cannot give for these solutions is a mistake in the request
        problem.predict(problem.theta0)
    except ModelDomainError as exc:
        raise UserError(f"model {model.id} cannot be fitted to these data: {exc}") from None
    except (ModelError, FloatingPointError):
        pass  # a failure at the start values: the solver reports it as a flag of the fit
    problem.n_evaluations = 0
    return problem
