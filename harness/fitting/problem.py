"""A fitting problem: which parameters are free, what the model predicts, and its derivatives.

One problem holds one or more *blocks*, each an electrolyte with its observations. A block maps
the model's parameter names to entries of one global parameter vector: for a single-salt fit the
mapping is the identity; for a joint fit a parameter of scope ``cation`` or ``anion`` is shared
by every salt with that ion (global name ``a_cation[Na]``) and one of scope ``electrolyte`` is
per salt (``b[NaCl]``).

Predictions are ln(gamma±) at ``ln_gamma`` points and phi at ``osmotic`` points, with the same
checks as :func:`saltbench.models.evaluate.evaluate` (shape, finiteness, plugin errors turned into
ModelError). ln(gamma±) at every distinct molality of a block comes from one model call; phi from
the model's ``osmotic`` where it has one, otherwise from the Gibbs-Duhem integral of
:mod:`saltbench.models.evaluate` (same Gauss-Legendre nodes), whose nodes ride in that same call.
The quadrature runs only at the distinct molalities of osmotic points. A fit calls the model
hundreds of times on a few dozen points, so per-call overhead, not arithmetic, is what costs.

Derivatives with respect to a parameter come from the model's ``jacobian`` where it gives them,
asked only for the parameters a request needs (``EvalContext.wrt``); where values and
derivatives are both needed at the same parameters (the linear design of variable projection)
a model that offers ``values_and_jacobian`` gives them in one call. Otherwise a parameter marked
``linear`` is differenced with a unit step, which is exact for a quantity affine in it, and any
other one by central differences with step eps^(1/3) max(1, |p|) (the usual choice balancing
truncation and rounding error; common practice, no source).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from itertools import accumulate
from typing import Any, NamedTuple

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.gibbs_duhem import dilution_grid, osmotic_from_ln_gamma
from saltbench.errors import FitError, ModelDomainError, ModelError, UserError
from saltbench.fitting.data import FitData
from saltbench.models.contract import ActivityModel, EvalContext, Parameter, SolutionModel, call_model
from saltbench.models.evaluate import make_context
from saltbench.models.salt_view import salt_view
from saltbench.water.debye_huckel import DebyeHuckel

_FD_STEP = float(np.finfo(float).eps) ** (1.0 / 3.0)
# What a stacked evaluation turns into non-finite values of the sets concerned.
_STACK_FAILURES = (ModelError, ModelDomainError, FloatingPointError, ValueError)
_ACTIVITY_KINDS = frozenset(("ln_gamma", "osmotic"))  # what a block predicts (see the module)


class GlobalParameter(NamedTuple):
    """One entry of the parameter vector a problem fits (immutable; ``_replace`` to change)."""

    name: str  # e.g. "b", or "a_cation[Na]" in a joint fit
    model_name: str  # the model's own parameter name
    lower: float
    upper: float
    linear: bool
    free: bool
    value: float  # start value if free, held value if not


class ParameterLayout(NamedTuple):
    """The arrays a solver reads off a parameter list: names, start values, which are free and
    of those which enter linearly, and the bounds (all, and of the free linear ones)."""

    names: list[str]
    theta0: np.ndarray
    free: np.ndarray
    linear: np.ndarray
    nonlinear: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    linear_lower: np.ndarray
    linear_upper: np.ndarray
    linear_bounded: bool


def parameter_layout(params: Sequence[GlobalParameter]) -> ParameterLayout:
    """The :class:`ParameterLayout` of ``params`` (one-salt and mixture problems alike)."""
    # Plain lists first: these are a handful of entries, where numpy costs more per call.
    free = [i for i, p in enumerate(params) if p.free]
    linear = [i for i in free if params[i].linear]
    return ParameterLayout(
        [p.name for p in params], np.array([p.value for p in params], dtype=float),
        np.array(free, dtype=int), np.array(linear, dtype=int),
        np.array([i for i in free if not params[i].linear], dtype=int),
        np.array([p.lower for p in params], dtype=float), np.array([p.upper for p in params], dtype=float),
        np.array([params[i].lower for i in linear], dtype=float),
        np.array([params[i].upper for i in linear], dtype=float),
        any(math.isfinite(params[i].lower) or math.isfinite(params[i].upper) for i in linear))


class _Jacobian(NamedTuple):
    """A model's derivatives on a block's ``union`` at one parameter vector."""

    key: tuple[int, bytes]
    wrt: frozenset[str] | None  # what was asked for (None: everything)
    d_ln: dict[str, np.ndarray]
    d_phi: dict[str, np.ndarray]
    checked: dict[str, tuple | None]  # shape-checked (ln part, phi part) by name


@dataclass
class Block:
    """One electrolyte's observations and how its model parameters map to the global vector."""

    electrolyte: Electrolyte
    ctx: EvalContext
    data: FitData
    mapping: dict[str, int]  # model parameter name -> global index
    # Distinct molalities: osmotic ones first (these need phi), then the others.
    union: np.ndarray = field(init=False)
    n_osm_unique: int = field(init=False)
    is_osm: np.ndarray = field(init=False)
    # Model values come as ln(gamma±) on ``union`` followed by phi on its first
    # ``n_osm_unique`` entries; ``gather`` picks each point's value out of that stack.
    gather: np.ndarray = field(init=False, repr=False)
    has_ln: bool = field(init=False, repr=False)
    has_osm: bool = field(init=False, repr=False)
    names: tuple[str, ...] = field(init=False, repr=False)
    indices: np.ndarray = field(init=False, repr=False)  # global index of each of ``names``
    users: dict[int, list[str]] = field(init=False, repr=False)  # global index -> names
    # The last model values and Jacobian asked for, keyed by model and parameter values: the
    # optimiser asks for the Jacobian at the point it has just evaluated, and the solver again
    # at the solution.
    _last_values: tuple | None = field(default=None, init=False, repr=False)
    _last_jacobian: _Jacobian | None = field(default=None, init=False, repr=False)

    def __post_init__(self) -> None:
        is_osm = self.is_osm = self.data.is_osmotic
        # Plain Python on lists: a fit builds blocks often, mostly of a few dozen points, where
        # each numpy call costs more than the work it does (floats compare and hash as numpy's).
        ml, osm = self.data.molality.tolist(), is_osm.tolist()
        u_osm = sorted({x for x, o in zip(ml, osm) if o})
        rest = sorted({x for x, o in zip(ml, osm) if not o}.difference(u_osm))
        union = u_osm + rest
        where = {x: i for i, x in enumerate(union)}
        self.union = np.array(union, dtype=float)
        self.n_osm_unique = len(u_osm)
        n_union = len(union)
        self.gather = np.array([where[x] + n_union if o else where[x]
                                for x, o in zip(ml, osm)], dtype=np.intp)
        self.has_osm = bool(self.n_osm_unique)
        self.has_ln = not all(osm)
        self.names = tuple(self.mapping)
        self.indices = np.array(list(self.mapping.values()), dtype=np.intp)
        users: dict[int, list[str]] = {}
        for name, g in self.mapping.items():
            users.setdefault(g, []).append(name)
        self.users = users

    @cached_property
    def with_nodes(self) -> np.ndarray:
        """``union`` followed by the Gibbs-Duhem nodes m u^2 of each osmotic molality."""
        u_osm = self.union[:self.n_osm_unique]
        return np.concatenate([self.union, dilution_grid(u_osm)])


class ProblemBase:
    """What a one-salt problem (:class:`FitProblem`) and a mixture problem share: their size,
    the count of free parameters, whether subset() made them, and the design of a problem whose
    free parameters all enter linearly, built once on the root problem and read by every
    problem made from it (folds and trials). For a class with ``obs``, ``free``,
    ``nonlinear``, ``linear``, ``theta0``, ``_root``, ``_rows``, ``_design_memo`` and
    ``_design_now(t0)``."""

    obs: np.ndarray
    free: np.ndarray
    nonlinear: np.ndarray
    linear: np.ndarray
    theta0: np.ndarray
    _root: Any
    _rows: np.ndarray | None
    _design_memo: dict

    @property
    def n(self) -> int:
        return int(self.obs.size)

    @property
    def k(self) -> int:
        return int(self.free.size)

    @property
    def is_subset(self) -> bool:
        """Whether this problem was made by subset() from another (and shares its designs)."""
        return self._rows is not None

    @property
    def is_refit(self) -> bool:
        """Whether this problem holds only some of its root's points (a fold of a
        cross-validation, a trial limit below the top), so that its fit starts near the
        root's minimum (see :mod:`saltbench.fitting.least_squares`)."""
        return self._rows is not None and self._rows.size < self._root.n

    def _design_now(self, t0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        raise NotImplementedError

    def shared_design(self) -> tuple[np.ndarray, np.ndarray] | None:
        """Where every free parameter enters linearly: the offset and design of this problem's
        points (as :meth:`linear_design` gives them), read from its root's, which is built once
        and kept. None when a free parameter is nonlinear or none is free, or when the root
        cannot give it (the model fails at one of its points)."""
        if self.nonlinear.size or not self.linear.size:
            return None
        t0 = self.theta0.copy()
        t0[self.linear] = 0.0
        return self._shared_design(t0)

    def _shared_design(self, t0: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
        """The design of every free parameter linear, built once on the root problem and read
        by each problem made from it by subset() (the folds of a cross-validation, the trial
        limits of a validity scan): the model is not called again for points it has seen.
        The values are those the subset's own call would give (a model's value at a point
        does not depend on the other points). None when the root cannot give it (a model
        failure at one of its points, which the subset may not hold): the subset then calls
        the model itself, as it always did."""
        root, rows = self._root, self._rows
        if rows is None:  # the root, or a copy of it with another start: the same points
            return root._root_design(t0)
        if root.nonlinear.size or root.linear.tolist() != self.linear.tolist():
            return None
        full = root._root_design(t0)
        if full is None:
            return None
        return full[0][rows], full[1][rows]

    def _root_design(self, t0: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
        """This problem's offset and design at ``t0`` (its free linear parameters at zero), kept
        for the problems made from it; None, also kept, where the model fails."""
        key = t0.tobytes()
        if key not in self._design_memo:
            try:
                self._design_memo[key] = self._design_now(t0)
            except (ModelError, ModelDomainError, FloatingPointError):
                self._design_memo[key] = None
        return self._design_memo[key]


class FitProblem(ProblemBase):
    """Weighted least squares of one model against one or more blocks of observations."""

    def __init__(self, model: SolutionModel, blocks: list[Block],
                 params: list[GlobalParameter]) -> None:
        model = self.model = salt_view(model)
        self.blocks = blocks
        self.params = params
        (self.names, self.theta0, self.free, self.linear, self.nonlinear, self.lower, self.upper,
         self.linear_lower, self.linear_upper, self.linear_bounded) = parameter_layout(params)
        if len(blocks) == 1:
            d = blocks[0].data
            self.obs, self.sigma, self.molality = d.value, d.uncertainty, d.molality
            self.is_osm, self.kind = blocks[0].is_osm, d.kind
        else:
            self.obs = _stack([b.data.value for b in blocks], float)
            self.sigma = _stack([b.data.uncertainty for b in blocks], float)
            self.is_osm = _stack([b.is_osm for b in blocks], bool)
            self.kind = _stack([b.data.kind for b in blocks], object)
            self.molality = _stack([b.data.molality for b in blocks], float)
        sizes = [b.data.n for b in blocks]
        self.slices = [slice(s - n, s) for s, n in zip(accumulate(sizes), sizes)]
        self.n_evaluations = 0
        self._no_jacobian = False  # the model said it has none; stop asking
        model_type = type(model)
        self._analytic_osmotic = "osmotic" in model.computes
        self._combined = (self._analytic_osmotic and model_type.values_and_jacobian
                          is not ActivityModel.values_and_jacobian)
        self._contexts: dict[tuple[int, frozenset[str]], EvalContext] = {}
        # Problems made by subset() share their root's linear design (see linear_design):
        # the root and the rows of its points that this problem holds, in order.
        self._root: FitProblem = self
        self._rows: np.ndarray | None = None
        self._design_memo: dict[bytes, tuple[np.ndarray, np.ndarray] | None] = {}
        self._screen_memo: dict[bytes, list[tuple[np.ndarray, np.ndarray | None] | None]] = {}

    # -- bookkeeping --------------------------------------------------------------------------
    @property
    def electrolyte_label(self) -> str:
        return " + ".join(b.electrolyte.name for b in self.blocks)

    @property
    def temperature_k(self) -> float:
        """The temperature of the blocks (K), NaN when they differ."""
        temps = {round(b.ctx.temperature_k, 6) for b in self.blocks}
        return float(temps.pop()) if len(temps) == 1 else math.nan

    def param_map(self) -> dict[str, dict[str, str]]:
        """For each electrolyte: the model's parameter name -> its global name."""
        return {b.electrolyte.name: {m: self.names[g] for m, g in b.mapping.items()}
                for b in self.blocks}

    def values_for(self, block: Block, theta: np.ndarray) -> dict[str, float]:
        return dict(zip(block.names, theta[block.indices].tolist()))

    def subset(self, mask: np.ndarray) -> FitProblem:
        """The same parameters against only the points picked by a boolean ``mask`` (length n)."""
        mask = np.asarray(mask, dtype=bool)
        blocks = []
        for b, sl in zip(self.blocks, self.slices):
            sel = mask[sl]
            if sel.any():
                blocks.append(Block(b.electrolyte, b.ctx, b.data.subset(sel), dict(b.mapping)))
        sub = FitProblem(self.model, blocks, list(self.params))
        sub._no_jacobian = self._no_jacobian
        rows = np.flatnonzero(mask)
        sub._root, sub._rows = self._root, rows if self._rows is None else self._rows[rows]
        return sub

    def with_start(self, theta: np.ndarray) -> FitProblem:
        """The same problem started from ``theta`` (free entries only are taken)."""
        params = list(self.params)
        for i in self.free:
            v = float(np.clip(theta[i], params[i].lower, params[i].upper))
            params[i] = params[i]._replace(value=v)
        out = FitProblem(self.model, self.blocks, params)
        out._no_jacobian = self._no_jacobian
        out._root, out._rows = self._root, self._rows
        return out

    def theta_from(self, values: Mapping[str, float]) -> np.ndarray:
        """A full parameter vector from values keyed by global or model parameter name."""
        theta = self.theta0.copy()
        by_name = {name: i for i, name in enumerate(self.names)}
        for key, value in values.items():
            hits = [by_name[key]] if key in by_name else \
                [i for i, p in enumerate(self.params) if p.model_name == key]
            if not hits:
                raise UserError(f"model {self.model.id} has no parameter {key!r} "
                                f"(parameters: {', '.join(self.names)})")
            theta[hits] = float(value)
        return theta

    # -- predictions --------------------------------------------------------------------------
    def _key(self, block: Block, theta: np.ndarray) -> tuple[int, bytes]:
        return id(self.model), theta[block.indices].tobytes()

    def _block_values(self, block: Block, theta: np.ndarray) -> np.ndarray:
        """ln(gamma±) at all of ``block.union`` followed by phi at its first ``n_osm_unique``."""
        key = self._key(block, theta)
        if block._last_values is not None and block._last_values[0] == key:
            return block._last_values[1]
        values = self.values_for(block, theta)
        self.n_evaluations += 1
        model, ctx, n_osm = self.model, block.ctx, block.n_osm_unique
        phi = None
        if n_osm and self._analytic_osmotic:
            ln_g = _finite(model, "ln_gamma_pm",
                           call_model(model, "ln_gamma_pm", block.union, values, ctx),
                           block.union.shape)
            raw = call_model(model, "osmotic", block.union[:n_osm], values, ctx)
            if raw is not None:
                phi = _finite(model, "osmotic", raw, (n_osm,))
        if n_osm and phi is None:
            # Gibbs-Duhem: phi - 1 = ln gamma(m) - int_0^1 ln gamma(m u^2) 2u du, the nodes
            # evaluated in the same call as the data molalities.
            every = _finite(model, "ln_gamma_pm",
                            call_model(model, "ln_gamma_pm", block.with_nodes, values, ctx),
                            block.with_nodes.shape)
            ln_g = every[:block.union.size]
            phi = osmotic_from_ln_gamma(ln_g[:n_osm], every[block.union.size:])
        elif not n_osm:
            ln_g = _finite(model, "ln_gamma_pm",
                           call_model(model, "ln_gamma_pm", block.union, values, ctx),
                           block.union.shape)
        return _keep_values(block, key, ln_g, phi)

    def _values_and_jacobian(self, block: Block, theta: np.ndarray, wrt: frozenset[str]) -> None:
        """Values and the derivatives in ``wrt`` at ``theta`` from one model call, where the model
        offers one; both are kept as the block's last values and Jacobian (else nothing)."""
        if not self._combined or self._no_jacobian:
            return
        key = self._key(block, theta)
        if (block._last_values is not None and block._last_values[0] == key) or \
                (block._last_jacobian is not None and block._last_jacobian.key == key):
            return  # one of them is known already: the other is asked for on its own
        values = self.values_for(block, theta)
        raw = call_model(self.model, "values_and_jacobian", block.union, values,
                         self._context(block, wrt))
        if raw is None:
            self._combined = False
            return
        try:
            ln_g, phi, d_ln, d_phi = raw  # type: ignore[misc]
            d_ln, d_phi = dict(d_ln), dict(d_phi)
        except (TypeError, ValueError) as exc:
            raise ModelError(f"model {self.model.id}: values_and_jacobian must return "
                             f"(ln_gamma_pm, osmotic, d_ln_gamma, d_phi)") from exc
        self.n_evaluations += 1
        shape, n_osm = block.union.shape, block.n_osm_unique
        ln_g = _finite(self.model, "ln_gamma_pm", ln_g, shape)
        if n_osm:
            phi = _finite(self.model, "osmotic", _shaped(self.model, "osmotic", phi, shape)[:n_osm],
                          (n_osm,))
        _keep_values(block, key, ln_g, phi if n_osm else None)
        block._last_jacobian = _Jacobian(key, wrt, d_ln, d_phi, {})

    def predict_block(self, block: Block, theta: np.ndarray) -> np.ndarray:
        return self._block_values(block, theta)[block.gather]

    def predict(self, theta: np.ndarray) -> np.ndarray:
        """Model values at every observation (ln gamma± or phi by kind), in data order."""
        if not self.blocks:
            return np.zeros(0)
        if self._rows is not None and self.linear.size and not self.nonlinear.size:
            # A subset of a problem whose free parameters are all linear: its root's design
            # gives the values without calling the model (see linear_design).
            t0 = theta.copy()
            t0[self.linear] = 0.0
            shared = self._shared_design(t0)
            if shared is not None:
                return shared[0] + shared[1] @ theta[self.linear]
        if len(self.blocks) == 1:
            return self.predict_block(self.blocks[0], theta)
        return np.concatenate([self.predict_block(b, theta) for b in self.blocks])

    # -- derivatives --------------------------------------------------------------------------
    def _context(self, block: Block, wrt: frozenset[str] | None) -> EvalContext:
        """The block's context asking for the derivatives in ``wrt`` (kept per problem)."""
        if wrt is None:
            return block.ctx
        key = (id(block), wrt)  # the problem holds its blocks, so their ids stay theirs
        ctx = self._contexts.get(key)
        if ctx is None:
            ctx = self._contexts[key] = EvalContext(block.ctx.electrolyte, block.ctx.dh, wrt)
        return ctx

    def _wrt(self, block: Block, cols: Iterable[int]) -> frozenset[str]:
        """The block's model parameter names behind the global indices ``cols``."""
        users = block.users
        return frozenset(name for c in cols if c in users for name in users[c])

    def _analytic(self, block: Block, theta: np.ndarray, wrt: frozenset[str]) -> _Jacobian | None:
        """The model's Jacobian on ``block.union`` covering ``wrt`` (kept), or None."""
        if self._no_jacobian:
            return None
        key = self._key(block, theta)
        last = block._last_jacobian
        if last is not None and last.key == key and (last.wrt is None or wrt <= last.wrt):
            return last
        values = self.values_for(block, theta)
        raw = call_model(self.model, "jacobian", block.union, values, self._context(block, wrt))
        if raw is None:
            self._no_jacobian = True
            return None
        d_ln, d_phi = _jacobian_dicts(self.model, raw)
        out = block._last_jacobian = _Jacobian(key, wrt, d_ln, d_phi, {})
        return out

    def derivatives(self, theta: np.ndarray, cols: Sequence[int] | np.ndarray,
                    base: np.ndarray | None = None) -> np.ndarray:
        """d(prediction)/d(theta[c]) for each global index ``c`` in ``cols``: an (n, len) array.

        ``base`` is ``predict(theta)`` when the caller has it (saves one evaluation).
        """
        cols = list(np.asarray(cols, dtype=np.intp).tolist())
        if len(self.blocks) == 1:
            return self._block_derivatives(self.blocks[0], theta, cols, base)
        out = np.zeros((self.n, len(cols)))
        if not cols:
            return out
        for b, sl in zip(self.blocks, self.slices):
            out[sl] = self._block_derivatives(b, theta, cols, None if base is None else base[sl])
        return out

    def _block_derivatives(self, b: Block, theta: np.ndarray, cols: list[int],
                           y_base: np.ndarray | None) -> np.ndarray:
        used = [(j, c, b.users[c]) for j, c in enumerate(cols) if c in b.users]
        if len(used) < len(cols) or not cols:
            out = np.zeros((b.data.n, len(cols)))
            if not used:
                return out
        else:
            out = None
        analytic = self._analytic(b, theta, self._wrt(b, cols))
        given: list[tuple[int, list[str], tuple[np.ndarray, np.ndarray | None]]] = []
        missing: list[tuple[int, int]] = []
        for j, c, names in used:
            col = self._analytic_column(b, analytic, names)
            if col is None:
                missing.append((j, c))
            else:
                given.append((j, names, col))
        if given:
            # The model's columns are stacked as its values are (ln gamma± on ``union``, then
            # phi on its osmotic part; see ``gather``), checked together and spread to the
            # points at once: a few numpy calls whatever the number of columns.
            rows = np.array([ln for _, _, (ln, _) in given])
            if b.has_osm:
                rows = np.concatenate((rows, np.array([phi for _, _, (_, phi) in given])),
                                      axis=1)
            assert analytic is not None  # a column is given only from analytic derivatives
            if not math.isfinite(np.add.reduce(rows, axis=None)):
                self._raise_non_finite(b, analytic, [names for _, names, _ in given])
            spread = rows.T[b.gather]
            if out is None and len(given) == len(cols):
                out = spread
            else:
                if out is None:
                    out = np.zeros((b.data.n, len(cols)))
                out[:, [j for j, _, _ in given]] = spread
        if missing:
            if out is None:
                out = np.zeros((b.data.n, len(cols)))
            if y_base is None:
                y_base = self.predict_block(b, theta)
            for j, c in missing:
                out[:, j] = self._difference_column(b, theta, c, y_base)
        assert out is not None  # every used column was given or missing, and both fill ``out``
        return out

    def _analytic_column(self, block: Block, analytic: _Jacobian | None, names: list[str]
                         ) -> tuple[np.ndarray, np.ndarray | None] | None:
        """The summed derivatives of ``names``: d ln(gamma±) on ``union`` and d phi on its
        osmotic part (None without osmotic points), shape-checked but not yet checked for
        finiteness; None if the model does not give one of them."""
        if analytic is None:
            return None
        checked = analytic.checked
        total = None
        for name in names:
            if name not in checked:
                checked[name] = self._derivative_parts(block, analytic, name)
            col = checked[name]
            if col is None:
                return None
            if total is None:
                total = col
            else:
                total = (total[0] + col[0], None if col[1] is None else total[1] + col[1])
        return total

    def _derivative_parts(self, block: Block, analytic: _Jacobian, name: str
                          ) -> tuple[np.ndarray, np.ndarray | None] | None:
        """d ln(gamma±) on ``union`` and d phi on its osmotic part, shape-checked; None when the
        model leaves out a derivative the block needs."""
        d_ln, d_phi = analytic.d_ln, analytic.d_phi
        if (block.has_ln and name not in d_ln) or (block.has_osm and name not in d_phi):
            return None
        shape = block.union.shape
        # Without ln(gamma±) points ``gather`` never looks at the first part; zeros hold it.
        ln_part = _shaped(self.model, f"jacobian[{name}]", d_ln[name], shape) \
            if block.has_ln else np.zeros(shape)
        if not block.has_osm:
            return ln_part, None
        phi_part = _shaped(self.model, f"jacobian[{name}]", d_phi[name], shape)
        return ln_part, phi_part[:block.n_osm_unique]

    def _raise_non_finite(self, block: Block, analytic: _Jacobian,
                          columns: list[list[str]]) -> None:
        """Name the first derivative that is not finite where the block uses it."""
        d_ln, d_phi = analytic.d_ln, analytic.d_phi
        for names in columns:
            for name in names:
                if block.has_ln:
                    _finite(self.model, f"jacobian[{name}]", d_ln[name], block.union.shape)
                if block.has_osm:
                    _finite(self.model, f"jacobian[{name}]",
                            np.asarray(d_phi[name], dtype=float)[:block.n_osm_unique],
                            (block.n_osm_unique,))

    def _difference_column(self, block: Block, theta: np.ndarray, c: int,
                           y_base: np.ndarray) -> np.ndarray:
        p = self.params[c]
        x = float(theta[c])
        if p.linear:
            # Affine in this parameter, so a unit step gives the derivative exactly.
            t = theta.copy()
            t[c] = x + 1.0
            return self.predict_block(block, t) - y_base
        h = _FD_STEP * max(1.0, abs(x))
        t_plus, t_minus = theta.copy(), theta.copy()
        if x + h > p.upper:  # one-sided towards the inside when a bound is near
            t_minus[c] = x - h
            return (y_base - self.predict_block(block, t_minus)) / h
        if x - h < p.lower:
            t_plus[c] = x + h
            return (self.predict_block(block, t_plus) - y_base) / h
        t_plus[c], t_minus[c] = x + h, x - h
        return (self.predict_block(block, t_plus) - self.predict_block(block, t_minus)) / (2 * h)

    # -- many parameter vectors at once ------------------------------------------------------
    @property
    def stacks(self) -> bool:
        """Whether the model evaluates several parameter sets in one call
        (``stacks_parameter_sets``; see :class:`~saltbench.models.contract.ActivityModel`)."""
        return bool(getattr(self.model, "stacks_parameter_sets", False))

    def stack_predict(self, thetas: np.ndarray) -> np.ndarray:
        """:meth:`predict` at each row of ``thetas`` (sets x parameters): (sets, n). Not finite
        where the model fails (every value of a set whose own call would raise). One model call
        per block for all sets where the model stacks them, else one per set."""
        parts = [self._stack_block(b, thetas)[:, b.gather] for b in self.blocks]
        return parts[0] if len(parts) == 1 else np.concatenate(parts, axis=1)

    def _stack_block(self, block: Block, thetas: np.ndarray) -> np.ndarray:
        """:meth:`_block_values` of each row of ``thetas``, stacked (NaN where it fails)."""
        sets = thetas.shape[0]
        if self.stacks:
            values = {name: thetas[:, g][:, None] for name, g in block.mapping.items()}
            try:
                with np.errstate(all="ignore"):
                    return self._stacked_values(block, values, sets)
            except _STACK_FAILURES:
                pass  # each set on its own below, where a failure stays that set's
        return _set_by_set(lambda t: self._block_values(block, t), thetas,
                           (block.union.size + block.n_osm_unique,))

    def _stacked_values(self, block: Block, values: dict[str, np.ndarray], sets: int
                        ) -> np.ndarray:
        model, ctx, n_osm, size = self.model, block.ctx, block.n_osm_unique, block.union.size
        self.n_evaluations += 1
        phi = None
        if n_osm and self._analytic_osmotic:
            ln_g = _broadcast(model, "ln_gamma_pm",
                              call_model(model, "ln_gamma_pm", block.union, values, ctx), (sets, size))
            raw = call_model(model, "osmotic", block.union[:n_osm], values, ctx)
            if raw is not None:
                phi = _broadcast(model, "osmotic", raw, (sets, n_osm))
        if n_osm and phi is None:
            nodes = block.with_nodes
            every = _broadcast(model, "ln_gamma_pm",
                               call_model(model, "ln_gamma_pm", nodes, values, ctx),
                               (sets, nodes.size))
            ln_g = every[:, :size]
            phi = osmotic_from_ln_gamma(ln_g[:, :n_osm].T, every[:, size:].T).T
        elif not n_osm:
            ln_g = _broadcast(model, "ln_gamma_pm",
                              call_model(model, "ln_gamma_pm", block.union, values, ctx), (sets, size))
        return ln_g if phi is None else np.concatenate((ln_g, phi), axis=1)

    def stack_derivatives(self, thetas: np.ndarray, cols: Sequence[int] | np.ndarray
                          ) -> np.ndarray:
        """:meth:`derivatives` at each row of ``thetas``: (sets, n, len(cols)), not finite where
        the model fails. The model's stacked Jacobian where it gives one, else differences of
        stacked values with the steps :meth:`derivatives` takes."""
        cols = list(np.asarray(cols, dtype=np.intp).tolist())
        parts = [self._stack_block_derivatives(b, thetas, cols) for b in self.blocks]
        return parts[0] if len(parts) == 1 else np.concatenate(parts, axis=1)

    def _stack_block_derivatives(self, b: Block, thetas: np.ndarray, cols: list[int]
                                 ) -> np.ndarray:
        sets = thetas.shape[0]
        out = np.zeros((sets, b.data.n, len(cols)))
        used = [(j, c, b.users[c]) for j, c in enumerate(cols) if c in b.users]
        if not used:
            return out

        def each_set() -> np.ndarray:
            return _set_by_set(lambda t: self._block_derivatives(b, t, cols, None), thetas,
                               (b.data.n, len(cols)))

        if not self.stacks:
            return each_set()
        missing = [(j, c) for j, c, _ in used]
        if not self._no_jacobian:
            values = {name: thetas[:, g][:, None] for name, g in b.mapping.items()}
            ctx = self._context(b, self._wrt(b, [c for _, c, _ in used]))
            try:
                with np.errstate(all="ignore"):
                    raw = call_model(self.model, "jacobian", b.union, values, ctx)
                    missing = self._stacked_columns(b, raw, used, out, sets)
            except _STACK_FAILURES:
                return each_set()  # as for values: each set on its own, a failure its own
        for j, c in missing:
            out[:, :, j] = self._stack_difference(b, thetas, c)
        return out

    def _stacked_columns(self, b: Block, raw: Any, used: list, out: np.ndarray, sets: int
                         ) -> list[tuple[int, int]]:
        """Put the model's stacked derivatives of ``used`` into ``out``; the columns it does
        not give are returned."""
        if raw is None:
            return [(j, c) for j, c, _ in used]
        d_ln, d_phi = _jacobian_dicts(self.model, raw)
        size, n_osm = b.union.size, b.n_osm_unique
        missing = []
        for j, c, names in used:
            if any((b.has_ln and n not in d_ln) or (b.has_osm and n not in d_phi) for n in names):
                missing.append((j, c))
                continue
            ln = np.zeros((sets, size))
            if b.has_ln:
                for n in names:
                    ln = ln + _broadcast(self.model, f"jacobian[{n}]", d_ln[n], (sets, size))
            if b.has_osm:
                phi = np.zeros((sets, size))
                for n in names:
                    phi = phi + _broadcast(self.model, f"jacobian[{n}]", d_phi[n], (sets, size))
                ln = np.concatenate((ln, phi[:, :n_osm]), axis=1)
            out[:, :, j] = ln[:, b.gather]
        return missing

    def _stack_difference(self, b: Block, thetas: np.ndarray, c: int) -> np.ndarray:
        """:meth:`_difference_column` for each row of ``thetas``, from one stacked call."""
        p = self.params[c]
        x = thetas[:, c]
        ahead, behind = thetas.copy(), thetas.copy()
        if p.linear:
            ahead[:, c] = x + 1.0
            step = np.ones_like(x)
        else:
            h = _FD_STEP * np.maximum(1.0, np.abs(x))
            # one-sided towards the inside when a bound is near (the upper one checked first)
            up_bad = x + h > p.upper
            down_bad = (x - h < p.lower) & ~up_bad
            ahead[:, c] = np.where(up_bad, x, x + h)
            behind[:, c] = np.where(down_bad, x, x - h)
            step = np.where(up_bad | down_bad, h, 2.0 * h)
        both = self._stack_block(b, np.concatenate((ahead, behind)))[:, b.gather]
        sets = thetas.shape[0]
        return (both[:sets] - both[sets:]) / step[:, None]

    def linear_design(self, theta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Offset and design matrix in the free linear parameters at fixed nonlinear ones.

        prediction = offset + design @ theta[linear]; the offset is the prediction with the free
        linear parameters at zero.
        """
        t0 = theta.copy()
        t0[self.linear] = 0.0
        if not self.nonlinear.size:
            shared = self._shared_design(t0)
            if shared is not None:
                return shared
        return self._design_now(t0)

    def _design_now(self, t0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        cols = self.linear.tolist()
        for b in self.blocks:
            self._values_and_jacobian(b, t0, self._wrt(b, cols))
        offset = self.predict(t0)
        return offset, self.derivatives(t0, cols, base=offset)

    def screen_parts(self, points: np.ndarray
                     ) -> list[tuple[np.ndarray, np.ndarray | None] | None] | None:
        """For each row of ``points`` (values of the free nonlinear parameters): the
        prediction at the free linear parameters' zero and the design in them (None without
        free linear parameters), on this problem's points; None for a point where the model
        fails. Built once on the root problem and read by the problems made from it by
        subset(), so that a fold or trial screening the same points calls no model. None
        when this problem cannot share its root's (different free parameters)."""
        root, rows = self._root, self._rows
        if root is not self and (root.nonlinear.tolist() != self.nonlinear.tolist()
                                 or root.linear.tolist() != self.linear.tolist()):
            return None
        key = np.ascontiguousarray(points, dtype=float).tobytes()
        parts = root._screen_memo.get(key)
        if parts is None:
            parts = []
            for x in points:
                t = root.theta0.copy()
                t[root.nonlinear] = x
                t[root.linear] = 0.0
                if root.linear.size:
                    parts.append(root._root_design(t))
                    continue
                try:
                    parts.append((root.predict(t), None))
                except (ModelError, ModelDomainError, FloatingPointError):
                    parts.append(None)
            root._screen_memo[key] = parts
        if rows is None:
            return parts
        return [None if q is None else (q[0][rows], None if q[1] is None else q[1][rows])
                for q in parts]



def _keep_values(block: Block, key: tuple, ln_g: np.ndarray, phi: np.ndarray | None
                 ) -> np.ndarray:
    """Stack checked values as ``gather`` reads them (ln gamma± on ``union``, then phi on its
    osmotic part) and keep them as the block's last values."""
    out = ln_g if phi is None else np.concatenate((ln_g, phi))
    block._last_values = (key, out)
    return out


def _stack(parts: list[np.ndarray], dtype: type) -> np.ndarray:
    return np.concatenate(parts) if parts else np.zeros(0, dtype=dtype)


def _shaped(model: ActivityModel, what: str, value: object, shape: tuple[int, ...]
            ) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if arr.shape != shape:
        raise ModelError(f"model {model.id}: {what} has shape {arr.shape}, expected {shape}")
    return arr


def _jacobian_dicts(model: ActivityModel, raw: Any) -> tuple[dict[str, Any], dict[str, Any]]:
    """A model's ``jacobian`` return (d ln gamma±, d phi) as two dicts; ModelError otherwise."""
    try:
        d_ln, d_phi = raw
        return dict(d_ln), dict(d_phi)
    except (TypeError, ValueError) as exc:
        raise ModelError(f"model {model.id}: jacobian must return two dicts") from exc


def _set_by_set(fn, thetas: np.ndarray, shape: tuple[int, ...]) -> np.ndarray:
    """``fn(theta)`` of shape ``shape`` for each row of ``thetas``, stacked; NaN for a set where
    the model fails (what a stacked evaluation gives when the model does not stack the sets, or
    raises for some of them)."""
    out = np.empty((thetas.shape[0], *shape))
    for s, theta in enumerate(thetas):
        try:
            out[s] = fn(theta)
        except _STACK_FAILURES:
            out[s] = np.nan
    return out


def _broadcast(model: ActivityModel, what: str, value: object, shape: tuple[int, ...]
               ) -> np.ndarray:
    """A stacked call's ``value`` as an array of ``shape`` (sets x points); ModelError when it
    does not broadcast to it."""
    try:
        return np.broadcast_to(np.asarray(value, dtype=float), shape)
    except ValueError as exc:
        raise ModelError(f"model {model.id}: {what} has shape {np.asarray(value).shape}, which does not "
                         f"broadcast to {shape}") from exc


def _finite(model: ActivityModel, what: str, value: object, shape: tuple[int, ...]) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if arr.shape != shape:
        raise ModelError(f"model {model.id}: {what} has shape {arr.shape}, expected {shape}")
    # A sum is finite only if every term is; the elementwise test runs only when it is not.
    if not math.isfinite(np.add.reduce(arr, axis=None)) and not np.isfinite(arr).all():
        raise ModelError(f"model {model.id}: {what} is not finite at some molalities")
    return arr


# -- building problems ------------------------------------------------------------------------
def checked_value(p: GlobalParameter, value: float, what: str = "fixed value") -> float:
    """``value`` for parameter ``p`` as a float, refused (UserError naming ``what``) when it is
    not finite or lies outside the parameter's bounds."""
    value = float(value)
    if not math.isfinite(value):
        raise UserError(f"parameter {p.name}: {what} must be finite")
    if not p.lower <= value <= p.upper:
        raise UserError(f"parameter {p.name}: {what} {value:g} lies outside its "
                        f"bounds {p.lower:g}..{p.upper:g}")
    return value


def parse_assignments(items: Iterable[str]) -> dict[str, float]:
    """``["b=0.2", "a=4"]`` -> ``{"b": 0.2, "a": 4.0}`` (raises UserError on a malformed item)."""
    out: dict[str, float] = {}
    for item in items:
        name, sep, text = str(item).partition("=")
        name = name.strip()
        if not sep or not name:
            raise UserError(f"expected NAME=VALUE, got {item!r}")
        try:
            out[name] = float(text)
        except ValueError:
            raise UserError(f"parameter {name}: {text.strip()!r} is not a number") from None
        if not math.isfinite(out[name]):
            raise UserError(f"parameter {name}: value must be finite")
    return out


def _global_name(param_name: str, scope: str, electrolyte: Electrolyte, joint: bool) -> str:
    if not joint:
        return param_name
    if scope == "cation":
        return f"{param_name}[{electrolyte.cation.formula}]"
    if scope == "anion":
        return f"{param_name}[{electrolyte.anion.formula}]"
    return f"{param_name}[{electrolyte.name}]"


def build_problem(model: SolutionModel, items: Sequence[tuple[Electrolyte, FitData]], *,
                  joint: bool = False, fixed: Mapping[str, float] | None = None,
                  start: Mapping[str, float] | None = None, free: Iterable[str] | None = None,
                  bounds: Mapping[str, tuple[float, float]] | None = None,
                  dh: DebyeHuckel | None = None, temperature_k: float = 298.15) -> FitProblem:
    """Set up the parameter vector and blocks; raises UserError for a mistake in the request.

    ``fixed`` holds parameters at given values; ``free`` frees parameters the model holds fixed
    by default (e.g. Pitzer's alpha); ``start`` sets start values; ``bounds`` narrows the
    declared bounds. In a joint fit, keys may be a model parameter name (every copy of it) or
    a global name such as ``a_cation[Na]``.
    """
    fixed, start, bounds = dict(fixed or {}), dict(start or {}), dict(bounds or {})
    free_set = set(free or ())
    if not items or all(d.n == 0 for _, d in items):
        raise FitError(f"no data points to fit model {model.id} to")
    declared = {p.name: p for p in model.parameters}
    if len(declared) != len(model.parameters):
        raise ModelError(f"model {model.id}: duplicate parameter names")
    params: list[GlobalParameter] = []
    index: dict[str, int] = {}
    blocks: list[Block] = []
    for electrolyte, data in items:
        if data.electrolyte and data.electrolyte != electrolyte.name:
            raise UserError(f"fit data are for {data.electrolyte}, not {electrolyte.name}")
        if not _ACTIVITY_KINDS.issuperset(data.kind.tolist()):
            raise UserError("thermal data (L_phi, Cp_phi) are fitted across temperatures only "
                            "(saltbench.fitting.temperature_fit)")
        if not model.supports(electrolyte):
            types = ", ".join(f"{a}-{b}" for a, b in sorted(model.charge_types or ()))
            raise ModelDomainError(
                f"model {model.id} does not support {electrolyte.charge_label} electrolytes like "
                f"{electrolyte.name} (supported: {types})")
        mapping = {}
        p: Parameter | GlobalParameter  # a model's parameter here, a fit's global one below
        for p in model.parameters_for(electrolyte):
            gname = _global_name(p.name, p.scope, electrolyte, joint)
            if gname not in index:
                index[gname] = len(params)
                params.append(GlobalParameter(gname, p.name, p.lower, p.upper, p.linear,
                                              not p.fixed, p.default))
            mapping[p.name] = index[gname]
        if data.n:
            ctx = make_context(electrolyte, temperature_k, dh=dh)
            blocks.append(Block(electrolyte, ctx, data, mapping))

    def targets(key: str, what: str) -> list[int]:
        if key in index:
            return [index[key]]
        hits = [i for i, p in enumerate(params) if p.model_name == key]
        if not hits:
            known = ", ".join(p.name for p in params)
            raise UserError(f"model {model.id} has no parameter {key!r} to {what} "
                            f"(parameters: {known})")
        return hits

    for key in free_set:
        for i in targets(key, "free"):
            params[i] = params[i]._replace(free=True)
    for key, (lo, hi) in bounds.items():
        for i in targets(key, "bound"):
            p = params[i]
            lo, hi = max(float(lo), p.lower), min(float(hi), p.upper)
            if not lo <= hi:
                raise UserError(f"parameter {p.name}: bounds {lo}..{hi} are empty")
            params[i] = p._replace(lower=lo, upper=hi, value=float(np.clip(p.value, lo, hi)))
    for key, value in start.items():
        for i in targets(key, "start"):
            p = params[i]
            params[i] = p._replace(value=float(np.clip(float(value), p.lower, p.upper)))
    for key, value in fixed.items():
        for i in targets(key, "fix"):
            p = params[i]
            params[i] = p._replace(free=False, value=checked_value(p, value))
    return FitProblem(model, blocks, params)
