"""Thermal data in a fit across temperatures: L_phi and C_p,phi points, predicted from the model.

A model gives ln gamma± and phi only; the thermal properties follow from its excess Gibbs energy
at neighbouring temperatures exactly as :mod:`saltbench.models.thermal` computes them (the same
five temperatures T + k h, h = 0.5 K, the same stencil pressure and five-point differences of
:mod:`saltbench.water.thermal_slopes`, each temperature with its own Debye-Hückel constants and
its own parameter values p(T + k h) from the temperature form), so that

    L_phi = -R T^2 g'(T),   C_p,phi = C°_p,2 - R (2 T g' + T^2 g''),   g = nu (1 - phi + ln gamma±).

C°_p,2, the partial molar heat capacity of the salt at infinite dilution, is not a property of
the excess Gibbs energy: each dataset of C_p,phi points gets one free parameter of its own,
``Cp2[<dataset>]`` (J/(K mol)), which enters linearly. L_phi needs none. The contexts of the five
temperatures of each (electrolyte, temperature) are made once and kept.

Derivatives with respect to the fit's parameters: a parameter that enters the model linearly
enters L_phi and C_p,phi linearly too (they are linear in g), so a unit step gives its column
exactly; others by central differences with the step of :mod:`saltbench.fitting.problem`.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.models.contract import EvalContext, SolutionModel
from saltbench.models.evaluate import evaluate, make_context
from saltbench.models.temperature import TemperatureForm
from saltbench.water.debye_huckel import debye_huckel_constants
from saltbench.water.thermal_slopes import STENCIL, STEP_K, five_point, stencil_pressure

L_PHI = "L_phi"
CP_PHI = "Cp_phi"
THERMAL_KINDS = (L_PHI, CP_PHI)
_FD_STEP = float(np.finfo(float).eps) ** (1.0 / 3.0)
#: model parameter name -> (indices into the fit's vector, the form's basis at the five
#: temperatures (5, J)), or ([index], None) for a parameter that keeps one value
ParamMap = dict[str, tuple[list[int], "np.ndarray | None"]]


def cp2_name(dataset: str) -> str:
    """The free parameter C°_p,2 of one dataset of C_p,phi points."""
    return f"Cp2[{dataset}]"


@dataclass
class ThermalGroup:
    """The thermal points of one electrolyte at one temperature."""

    electrolyte: Electrolyte
    temperature_k: float
    union: np.ndarray  # distinct molalities
    rows: np.ndarray  # which thermal points (indices into the part's arrays)
    where: np.ndarray  # each of those points' index into ``union``
    params: ParamMap
    contexts: list[EvalContext]


class ThermalPart:
    """The thermal points of a fit and their predictions (see the module)."""

    def __init__(self, model: SolutionModel, groups: list[ThermalGroup], kind: np.ndarray,
                 cp2_index: np.ndarray, obs: np.ndarray, sigma: np.ndarray,
                 molality: np.ndarray) -> None:
        self.model = model
        self.groups = groups
        self.kind = kind
        self.obs, self.sigma, self.molality = obs, sigma, molality
        self.is_cp = kind == CP_PHI
        self.cp2_index = cp2_index  # per point: index of its C°_p,2 parameter, -1 for L_phi
        self.used: set[int] = {i for g in groups for idx, _ in g.params.values() for i in idx}

    @property
    def n(self) -> int:
        return int(self.kind.size)

    def subset(self, mask: np.ndarray) -> ThermalPart:
        rows = np.flatnonzero(mask)
        new_index = np.full(self.n, -1)
        new_index[rows] = np.arange(rows.size)
        groups = []
        for g in self.groups:
            keep = np.asarray(mask)[g.rows]
            if keep.any():
                groups.append(ThermalGroup(g.electrolyte, g.temperature_k, g.union,
                                           new_index[g.rows[keep]], g.where[keep], g.params,
                                           g.contexts))
        return ThermalPart(self.model, groups, self.kind[rows], self.cp2_index[rows], self.obs[rows],
                           self.sigma[rows], self.molality[rows])

    def predict(self, theta: np.ndarray) -> np.ndarray:
        out = np.zeros(self.n)
        for g in self.groups:
            lphi, cprel = self._group(g, theta)
            cp = self.is_cp[g.rows]
            out[g.rows] = np.where(cp, cprel[g.where], lphi[g.where])
        cp_rows = np.flatnonzero(self.is_cp)
        out[cp_rows] += theta[self.cp2_index[cp_rows]]
        return out

    def _group(self, g: ThermalGroup, theta: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        from scipy import constants

        gs = []
        for k, ctx in enumerate(g.contexts):
            values = {}
            for name, (idx, weights) in g.params.items():
                values[name] = float(theta[idx[0]]) if weights is None else float(weights[k] @ theta[idx])
            ev = evaluate(self.model, g.electrolyte, g.union, values, ctx=ctx)
            gs.append(g.electrolyte.nu * (1.0 - ev.osmotic + ev.ln_gamma_pm))
        g1, g2 = five_point(np.array(gs), STEP_K)
        r, t = constants.R, g.temperature_k
        return -r * t * t * g1, -r * (2.0 * t * g1 + t * t * g2)

    def derivatives(self, theta: np.ndarray, cols: Sequence[int], linear: Mapping[int, bool],
                    base: np.ndarray | None = None) -> np.ndarray:
        out = np.zeros((self.n, len(cols)))
        if not self.n:
            return out
        y0 = self.predict(theta) if base is None else base
        for j, c in enumerate(cols):
            if c in self.used:
                x = float(theta[c])
                if linear[c]:
                    t = theta.copy()
                    t[c] = x + 1.0
                    out[:, j] = self.predict(t) - y0
                else:
                    h = _FD_STEP * max(1.0, abs(x))
                    tp, tm = theta.copy(), theta.copy()
                    tp[c], tm[c] = x + h, x - h
                    out[:, j] = (self.predict(tp) - self.predict(tm)) / (2 * h)
            out[:, j] += self.cp2_index == c
        return out


def thermal_groups(electrolyte: Electrolyte, molality: np.ndarray, labels: np.ndarray,
                   temps: Sequence[float], offset: int,
                   params: Callable[[int, list[float]], ParamMap]) -> list[ThermalGroup]:
    """One group per temperature of one electrolyte's thermal points (``labels``: each point's
    temperature group; ``offset``: index of its first point among all thermal points);
    ``params(t_index, stencil temperatures)`` gives the group's parameter map."""
    out = []
    for t_i in sorted(set(labels.tolist())):
        sel = np.flatnonzero(labels == t_i)
        union, where = np.unique(molality[sel], return_inverse=True)
        t = float(temps[t_i])
        p = stencil_pressure(t, STEP_K, None)
        stencil = [t + k * STEP_K for k in STENCIL]
        contexts = [make_context(electrolyte, dh=debye_huckel_constants(tk, p)) for tk in stencil]
        out.append(ThermalGroup(electrolyte, t, union, sel + offset, where, params(t_i, stencil),
                                contexts))
    return out


def stencil_weights(form: TemperatureForm, stencil: Sequence[float]) -> np.ndarray:
    """The form's basis at each stencil temperature: (5, J)."""
    return form.basis(np.asarray(stencil, dtype=float))

