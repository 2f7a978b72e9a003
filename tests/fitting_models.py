"""Throwaway activity models and synthetic data for the fitting tests (not built-in models).

The extended Debye-Hückel form with a linear term,

    ln gamma± = -A_gamma |z+ z-| sqrt(I) / (1 + B a sqrt(I)) + b I,

has the closed-form osmotic coefficient (Gibbs-Duhem integrated term by term; from memory of
Robinson and Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 9), with x = B a sqrt(I):

    phi - 1 = -A_gamma |z+ z-| / ((B a)^3 I) * (1 + x - 2 ln(1 + x) - 1 / (1 + x)) + b I / 2.

Its agreement with the harness's Gibbs-Duhem quadrature is checked in test_fitting.py.

All synthetic data here are generated from these formulas with stated Gaussian noise.
"""

from __future__ import annotations

import numpy as np

from saltbench.fitting import FitData
from saltbench.models import ActivityModel, Parameter


def _f(x):
    return 1.0 + x - 2.0 * np.log1p(x) - 1.0 / (1.0 + x)


def ext_dh_ln_gamma(i, alpha, beta, b):
    s = np.sqrt(i)
    return -alpha * s / (1.0 + beta * s) + b * i


def ext_dh_osmotic(i, alpha, beta, b):
    x = beta * np.sqrt(i)
    return 1.0 - alpha / (beta**3 * i) * _f(x) + 0.5 * b * i


class ExtendedDH(ActivityModel):
    """Ion size ``a`` (Å, nonlinear) and linear coefficient ``b`` (kg/mol)."""

    id = "test-ext-dh"
    name = "test extended Debye-Hückel"
    citation = "test model"
    parameters = (
        Parameter("a", "a", "Å", 4.0, lower=0.5, upper=20.0),
        Parameter("b", "b", "kg/mol", 0.0, lower=-2.0, upper=2.0, linear=True),
    )

    def __init__(self, analytic_osmotic: bool = True, analytic_jacobian: bool = True):
        self.analytic_osmotic = analytic_osmotic
        self.analytic_jacobian = analytic_jacobian

    def _consts(self, m, params, ctx):
        e = ctx.electrolyte
        i = e.ionic_strength(m)
        alpha = ctx.dh.a_gamma * e.zz
        bb = ctx.dh.b_gamma_per_angstrom
        return i, alpha, bb

    def ln_gamma_pm(self, m, params, ctx):
        i, alpha, bb = self._consts(m, params, ctx)
        return ext_dh_ln_gamma(i, alpha, bb * params["a"], params["b"])

    def osmotic(self, m, params, ctx):
        if not self.analytic_osmotic:
            return None
        i, alpha, bb = self._consts(m, params, ctx)
        return ext_dh_osmotic(i, alpha, bb * params["a"], params["b"])

    def jacobian(self, m, params, ctx):
        if not self.analytic_jacobian:
            return None
        i, alpha, bb = self._consts(m, params, ctx)
        beta = bb * params["a"]
        s = np.sqrt(i)
        x = beta * s
        d_ln_a = alpha * bb * i / (1.0 + x) ** 2
        fprime = x**2 / (1.0 + x) ** 2
        d_g = bb * (fprime * s / beta**3 - 3.0 * _f(x) / beta**4)
        d_phi_a = -alpha / i * d_g
        return {"a": d_ln_a, "b": i}, {"a": d_phi_a, "b": 0.5 * i}


class CationSizeAnionLinear(ActivityModel):
    """Ion size from the cation only, linear term from the anion only: both identifiable
    across salts that share one ion."""

    id = "test-ion-split"
    name = "test per-ion split"
    citation = "test model"
    parameters = (
        Parameter("a_cation", "a+", "Å", 4.0, lower=0.5, upper=20.0, scope="cation",
                  ion_key="a"),
        Parameter("b_anion", "b-", "kg/mol", 0.0, lower=-2.0, upper=2.0, scope="anion",
                  ion_key="b", linear=True),
    )

    def ln_gamma_pm(self, m, params, ctx):
        e = ctx.electrolyte
        return ext_dh_ln_gamma(e.ionic_strength(m), ctx.dh.a_gamma * e.zz,
                               ctx.dh.b_gamma_per_angstrom * params["a_cation"],
                               params["b_anion"])


class PowerSeries(ActivityModel):
    """ln gamma± = -A_gamma|z+z-| sqrt(I)/(1+sqrt(I)) + b1 m + b2 m^2; phi by Gibbs-Duhem."""

    id = "test-power"
    name = "test power series"
    citation = "test model"
    parameters = (
        Parameter("b1", "b1", "kg/mol", 0.0, linear=True),
        Parameter("b2", "b2", "kg2/mol2", 0.0, linear=True),
    )

    def ln_gamma_pm(self, m, params, ctx):
        e = ctx.electrolyte
        i = e.ionic_strength(m)
        return (-ctx.dh.a_gamma * e.zz * np.sqrt(i) / (1.0 + np.sqrt(i))
                + params["b1"] * m + params["b2"] * m**2)


class Twin(ActivityModel):
    """Two linear parameters that enter identically: a singular problem by construction."""

    id = "test-twin"
    name = "test twin"
    citation = "test model"
    parameters = (Parameter("p", "p", "kg/mol", 0.0, linear=True),
                  Parameter("q", "q", "kg/mol", 0.0, linear=True))

    def ln_gamma_pm(self, m, params, ctx):
        return (params["p"] + params["q"]) * m


class NearTwin(ActivityModel):
    """Columns m and m (1 + 1e-8 m): nearly collinear, ill-conditioned but not singular."""

    id = "test-near-twin"
    name = "test near twin"
    citation = "test model"
    parameters = (Parameter("p", "p", "kg/mol", 0.0, linear=True),
                  Parameter("q", "q", "kg/mol", 0.0, linear=True))

    def ln_gamma_pm(self, m, params, ctx):
        return params["p"] * m + params["q"] * m * (1.0 + 1e-8 * m)


class NaNModel(ExtendedDH):
    id = "test-nan"

    def ln_gamma_pm(self, m, params, ctx):
        return np.full_like(np.asarray(m, dtype=float), np.nan)

    def osmotic(self, m, params, ctx):
        return None

    def jacobian(self, m, params, ctx):
        return None


class RaisingModel(ExtendedDH):
    id = "test-raise"

    def ln_gamma_pm(self, m, params, ctx):
        raise RuntimeError("deliberate failure")


class NaNBelowSize(ExtendedDH):
    """Fails (NaN) for ion sizes below 3 Å: the optimiser must step back, not crash."""

    id = "test-nan-region"

    def ln_gamma_pm(self, m, params, ctx):
        out = super().ln_gamma_pm(m, params, ctx)
        return out if params["a"] >= 3.0 else out * np.nan


def synthetic(model_values, electrolyte, molality, *, u_ln=0.002, u_phi=0.002, seed=None,
              kinds=("ln_gamma", "osmotic"), a_gamma=None, b_gamma=None):
    """ln(gamma±) and phi of the extended Debye-Hückel form plus Gaussian noise of stated size.

    ``model_values`` = (a in Å, b in kg/mol). Constants default to water at 25 °C from
    saltbench.water (IAPWS-based).
    """
    from saltbench.water import debye_huckel_constants

    dh = debye_huckel_constants(298.15)
    a_gamma = dh.a_gamma if a_gamma is None else a_gamma
    b_gamma = dh.b_gamma_per_angstrom if b_gamma is None else b_gamma
    a, b = model_values
    m = np.asarray(molality, dtype=float)
    i = electrolyte.ionic_strength(m)
    alpha = a_gamma * electrolyte.zz
    rng = np.random.default_rng(seed)
    parts = []
    if "ln_gamma" in kinds:
        y = ext_dh_ln_gamma(i, alpha, b_gamma * a, b)
        if seed is not None:
            y = y + rng.normal(0.0, u_ln, m.size)
        parts.append(FitData.from_property("ln_gamma_pm", m, y, u_ln, dataset="synthetic-g"))
    if "osmotic" in kinds:
        y = ext_dh_osmotic(i, alpha, b_gamma * a, b)
        if seed is not None:
            y = y + rng.normal(0.0, u_phi, m.size)
        parts.append(FitData.from_property("osmotic", m, y, u_phi, dataset="synthetic-phi"))
    return FitData.concat(parts)
