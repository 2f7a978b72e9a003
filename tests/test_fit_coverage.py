"""Coverage of the reported 1-sigma intervals over many synthetic data sets (deterministic).

Invented data: the extended Debye-Hückel test model with a = 4 Å, b = 0.05 kg/mol and Gaussian
noise u = 0.002 on ln(gamma±) and phi, 20 molalities, seeds 0..199.
"""

from __future__ import annotations

import numpy as np
import pytest
from fitting_models import ExtendedDH, synthetic
from scipy import stats

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.fitting import fit

NACL = parse_formula("NaCl")
GRID = np.round(np.linspace(0.05, 2.0, 20), 3)
SEEDS = range(200)
TRUTH = {"a": 4.0, "b": 0.05}
# A +-1 sigma normal interval holds the truth with probability 0.682689 (common practice,
# no source); over 200 independent data sets the count is binomial, and its two-sided 99.9 %
# interval (computed by scipy.stats.binom) is what the count must fall in.
P_1SIGMA = stats.norm.cdf(1) - stats.norm.cdf(-1)
LO, HI = stats.binom.interval(0.999, len(SEEDS), P_1SIGMA)


@pytest.fixture(scope="module")
def fits():
    out = {"none": [], "birge": []}
    model = ExtendedDH()
    for seed in SEEDS:
        data = synthetic((TRUTH["a"], TRUTH["b"]), NACL, GRID, seed=seed)
        for scaling, results in out.items():
            results.append(fit(model, NACL, data, covariance_scaling=scaling))
    return out


def test_interval_bounds_are_those_of_the_binomial_law():
    assert P_1SIGMA == pytest.approx(0.6827, abs=1e-4)
    assert 110 <= LO < 136 < HI <= 160


@pytest.mark.parametrize("name", sorted(TRUTH))
def test_one_sigma_intervals_cover_the_truth_about_68_percent(fits, name):
    for scaling, results in fits.items():
        assert all(r.converged and r.flags == [] for r in results)
        hits = sum(abs(r.value(name) - TRUTH[name]) <= r.stderr(name) for r in results)
        assert LO <= hits <= HI, f"{scaling}: {hits}/200 covered, expected {LO:.0f}..{HI:.0f}"


def test_birge_scaling_never_narrows_the_intervals(fits):
    for plain, scaled in zip(fits["none"], fits["birge"]):
        assert scaled.stderr("a") >= plain.stderr("a") * (1 - 1e-12)


def test_chi_square_averages_its_degrees_of_freedom(fits):
    # E[chi2] = dof and Var[chi2] = 2 dof for the chi-square law (common practice, no source);
    # the mean over 200 fits lies within 3.29 standard errors of dof (two-sided 99.9 %).
    chi2 = np.array([r.chi2 for r in fits["none"]])
    dof = fits["none"][0].dof
    assert dof == 38
    assert abs(chi2.mean() - dof) <= stats.norm.ppf(0.9995) * np.sqrt(2 * dof / chi2.size)
