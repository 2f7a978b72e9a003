"""The Zdanovskii-Stokes-Robinson rule: the water activity of a mixture from its salts alone.

A. B. Zdanovskii, Trudy Solyanoi Laboratorii Akad. Nauk SSSR 6 (1936); R. H. Stokes and
R. A. Robinson, J. Phys. Chem. 70, 2126-2131 (1966). A solution of salts at molalities m_i has
the water activity a_w at which

    sum_i m_i / m_i°(a_w) = 1,

m_i°(a_w) being the molality of salt i alone in water at that same water activity (its binary
solution). The rule is exact for salts whose binary solutions behave identically, and holds to
within experimental error for many mixtures of salts of one charge type (Stokes and Robinson
1966); it needs no mixing parameter, only each salt's binary a_w(m), here a callable from any
model and parameter set (:func:`binary_water_activity`).

Solved as a bracketed root in y = -ln a_w, vectorised over solutions: with S = sum_i m_i, the
left side is >= 1 at the smallest of the binary y_i(S) and <= 1 at the largest (each m_i° is
then at most, or at least, S), so the root lies between; each m_i°(y) is itself a bracketed
root of y_i(m) = y. Both by the Illinois form of regula falsi (Dowell and Jarratt, BIT 11, 168
(1971), from memory), which keeps its bracket and converges superlinearly. Binary water
activity must fall as molality rises over the range searched (true below saturation for the
salts of the bundle; a callable may state where it ends with ``max_molality``).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.chemistry.solution import Composition
from saltbench.errors import ModelDomainError
from saltbench.models.contract import Conditions, Request, SolutionModel
from saltbench.models.quantities import WATER_ACTIVITY
from saltbench.water.debye_huckel import DebyeHuckel, debye_huckel_constants

#: A salt's binary water activity: molalities (n,) in mol/kg -> a_w (n,), pointwise.
BinaryWaterActivity = Callable[[np.ndarray], np.ndarray]

RTOL = 1e-13  # relative width of the final bracket in y = -ln a_w and in molality
MAX_ITERATIONS = 200
_EXPANSIONS = 60  # doublings of molality when bracketing a binary's inverse


def zsr_water_activity(binaries: Sequence[BinaryWaterActivity], molality: np.ndarray | Sequence,
                       *, max_molality: Sequence[float | None] | None = None) -> np.ndarray:
    """The water activity (N,) of N mixtures by the Zdanovskii-Stokes-Robinson rule.

    ``binaries[i]`` gives a_w of salt i alone at given molalities; ``molality`` is (N, n) or (n,)
    (salt molalities in mol/kg, one column per callable). ``max_molality[i]``, where given, is the
    highest molality the binary of salt i may be asked at (its range, or saturation); a mixture
    whose water activity salt i alone cannot reach below it raises ModelDomainError.
    """
    m = np.atleast_2d(np.asarray(molality, dtype=float))
    if m.shape[1] != len(binaries):
        raise ModelDomainError(f"{m.shape[1]} salt molalities for {len(binaries)} binary "
                               "water activities")
    if np.any(~np.isfinite(m)) or np.any(m < 0):
        raise ModelDomainError("salt molalities must be non-negative finite numbers (mol/kg)")
    caps = list(max_molality) if max_molality is not None else [None] * len(binaries)
    total = m.sum(axis=1)
    out = np.ones(total.size)
    rows = np.flatnonzero(total > 0)
    if not rows.size:
        return out
    s = total[rows]
    ys = [_y(f, s) for f in binaries]  # -ln a_w of each salt alone at the total molality
    y_lo, y_hi = np.minimum.reduce(ys), np.maximum.reduce(ys)
    # Each salt's inverse at the two ends bounds it at every y between (a_w falls with m).
    ends = [(_inverse(f, y_lo, s, cap), _inverse(f, y_hi, s, cap)) for f, cap in zip(binaries, caps)]
    mr = m[rows]

    def excess(y: np.ndarray, idx: np.ndarray) -> np.ndarray:
        acc = -np.ones(idx.size)
        for k, f in enumerate(binaries):
            present = mr[idx, k] > 0
            if present.any():
                sel = idx[present]
                lo, hi = ends[k][0][sel], ends[k][1][sel]
                target = y[present]
                m0 = _solve(_gap(f, target), lo, hi, _y(f, lo) - target, _y(f, hi) - target)
                acc[present] += mr[sel, k] / m0
        return acc

    every = np.arange(rows.size)
    y = _solve(excess, y_lo, y_hi, excess(y_lo, every), excess(y_hi, every))
    out[rows] = np.exp(-y)
    return out


def _y(f: BinaryWaterActivity, m: np.ndarray) -> np.ndarray:
    a = np.asarray(f(np.asarray(m, dtype=float)), dtype=float)
    if a.shape != np.shape(m) or np.any(~np.isfinite(a)) or np.any(a <= 0):
        raise ModelDomainError("a binary water activity gave a value that is not a positive "
                               "number for each molality")
    return -np.log(a)


def _inverse(f: BinaryWaterActivity, y: np.ndarray, s: np.ndarray, cap: float | None
             ) -> np.ndarray:
    """m with -ln a_w(m) = y for one salt (vectorised), starting from molality s."""
    lo, hi = s.copy(), s.copy()
    f_lo, f_hi = _y(f, lo) - y, _y(f, hi) - y
    for _ in range(_EXPANSIONS):
        low = f_lo > 0
        if not low.any():
            break
        lo[low] *= 0.5
        f_lo[low] = _y(f, lo[low]) - y[low]
    for _ in range(_EXPANSIONS):
        high = f_hi < 0
        if not high.any():
            break
        hi[high] = hi[high] * 2.0 if cap is None else np.minimum(hi[high] * 2.0, cap)
        f_hi[high] = _y(f, hi[high]) - y[high]
        if cap is not None and np.any((f_hi < 0) & (hi >= cap)):
            raise ModelDomainError(f"a salt alone does not reach the mixture's water activity "
                                   f"below {cap:g} mol/kg; the Zdanovskii-Stokes-Robinson rule "
                                   "needs its binary solution at that water activity")
    if np.any(f_lo > 0) or np.any(f_hi < 0):
        raise ModelDomainError("a binary water activity does not fall with molality over the "
                               "range searched; the Zdanovskii-Stokes-Robinson rule needs it to")
    return _solve(_gap(f, y), lo, hi, f_lo, f_hi)


def _gap(f: BinaryWaterActivity, target: np.ndarray) -> Callable[[np.ndarray, np.ndarray], np.ndarray]:
    """x, rows -> -ln a_w(x) - target[rows], the function whose root is the binary's inverse."""
    return lambda x, rows: _y(f, x) - target[rows]


def _solve(f: Callable[[np.ndarray, np.ndarray], np.ndarray], lo: np.ndarray, hi: np.ndarray,
           f_lo: np.ndarray, f_hi: np.ndarray) -> np.ndarray:
    """Roots of f(x, rows) on brackets [lo, hi] (f_lo, f_hi of opposite sign or zero), one per
    row, by the Illinois method; ``f`` is called with the still-open rows only."""
    lo, hi = np.array(lo, dtype=float), np.array(hi, dtype=float)
    f_lo, f_hi = np.array(f_lo, dtype=float), np.array(f_hi, dtype=float)
    x = np.where(f_lo == 0, lo, np.where(f_hi == 0, hi, 0.5 * (lo + hi)))
    side = np.zeros(lo.size, dtype=int)  # which end the last step moved: -1 lo, +1 hi
    open_ = (f_lo != 0) & (f_hi != 0) & (hi - lo > RTOL * np.maximum(np.abs(lo), np.abs(hi)))
    for _ in range(MAX_ITERATIONS):
        idx = np.flatnonzero(open_)
        if not idx.size:
            return x
        a, b, fa, fb = lo[idx], hi[idx], f_lo[idx], f_hi[idx]
        xi = np.clip((a * fb - b * fa) / (fb - fa), a, b)
        fx = f(xi, idx)
        x[idx] = xi
        to_hi = np.sign(fx) == np.sign(fb)
        j_hi, j_lo = idx[to_hi], idx[~to_hi]
        # Illinois: an end kept twice in a row has its value halved, so both ends move.
        f_lo[j_hi[side[j_hi] == 1]] *= 0.5
        f_hi[j_lo[side[j_lo] == -1]] *= 0.5
        hi[j_hi], f_hi[j_hi], side[j_hi] = xi[to_hi], fx[to_hi], 1
        lo[j_lo], f_lo[j_lo], side[j_lo] = xi[~to_hi], fx[~to_hi], -1
        width = hi[idx] - lo[idx]
        open_[idx] = (fx != 0) & (width > RTOL * np.maximum(np.abs(lo[idx]), np.abs(hi[idx])))
    raise ModelDomainError("the Zdanovskii-Stokes-Robinson solve did not converge")


def binary_water_activity(model: SolutionModel, salt: Electrolyte,
                          params: Mapping[str, float] | None = None, *,
                          temperature_k: float = 298.15,
                          dh: DebyeHuckel | None = None) -> BinaryWaterActivity:
    """a_w(m) of ``salt`` alone under ``model`` with ``params`` (by the model's parameter names;
    defaults for the rest), through the harness's checked call (phi by Gibbs-Duhem where the
    model gives none). ``dh`` overrides the water state's Debye-Hückel constants (a published
    set's own A_phi)."""
    from saltbench.models.evaluate import compute

    constants = dh or debye_huckel_constants(temperature_k)
    values = {**model.defaults(salt), **dict(params or {})}
    keys = model.salt_keys(salt)
    keyed = {key: np.array([[float(values[name])]]) for name, key in keys.items()}

    def water_activity(m: np.ndarray) -> np.ndarray:
        comp = Composition.of_salt(salt, np.asarray(m, dtype=float), temperature_k)
        request = Request(comp, (WATER_ACTIVITY,), keyed, Conditions.single(constants, comp.n))
        return compute(model, request).values[WATER_ACTIVITY][0]

    return water_activity
