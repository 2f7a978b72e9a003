"""From single-ion values to whatever a request asks: the last step of a mixture model's compute.

A model on the solution contract that works out ln gamma of every ion (S, N, K) and the osmotic
coefficient (S, N), with their derivatives, hands them to :func:`assemble`, which picks each ion,
forms the mean of each neutral salt asked for, ln gamma± = (nu+ ln gamma+ + nu- ln gamma-) / nu,
and the water activity ln a_w = -M_w phi sum_i m_i (IUPAC Green Book, 3rd ed., 2007, 2.13), with
the derivatives carried through the same linear maps.
"""

from __future__ import annotations

import numpy as np

from saltbench.models.contract import Computed, ParameterKey, Request
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, Quantity
from saltbench.water.properties import MOLAR_MASS_WATER, water_activity


def assemble(request: Request, ln_ions: np.ndarray, d_ions: dict[ParameterKey, np.ndarray],
             phi: np.ndarray | None, d_phi: dict[ParameterKey, np.ndarray], *,
             total: np.ndarray | None = None) -> Computed:
    """The request's quantities from single-ion values (S, N, K) and phi (S, N).

    ``total`` is sum_i m_i of each row (N,) where the model has it already (summing a few
    columns of many rows is slow in numpy, a sizeable part of a fast model's time)."""
    comp = request.composition
    if total is None:
        total = comp.molality.sum(axis=1)
    values: dict[Quantity, np.ndarray] = {}
    derivs: dict[Quantity, dict[ParameterKey, np.ndarray]] = {}
    for q in request.quantities:
        if q.kind == "ln_gamma":
            j = comp.index(q.of)
            values[q] = ln_ions[:, :, j]
            derivs[q] = {k: d[:, :, j] for k, d in d_ions.items()}
        elif q.kind == "ln_gamma_pm":
            salt = comp.salt(q.of)
            jc, ja = comp.index(salt.cation.name), comp.index(salt.anion.name)
            fc, fa = salt.nu_cation / salt.nu, salt.nu_anion / salt.nu
            values[q] = fc * ln_ions[:, :, jc] + fa * ln_ions[:, :, ja]
            derivs[q] = {k: fc * d[:, :, jc] + fa * d[:, :, ja] for k, d in d_ions.items()}
        elif q == OSMOTIC and phi is not None:
            values[q], derivs[q] = phi, dict(d_phi)
        elif q == WATER_ACTIVITY and phi is not None:
            values[q] = water_activity(total, phi)
            derivs[q] = {k: -MOLAR_MASS_WATER * total * values[q] * d for k, d in d_phi.items()}
    return Computed(values, derivs)
