"""Benchmark: one saltbench fit against a plain per-point curve_fit baseline.

Usage: python tests/benchmarks/bench_fit.py OUT.json [--repeat N]

Invented data: an extended Debye-Hückel form (a = 4 Å, b = 0.05 kg/mol) with Gaussian noise
u = 0.002 on 40 ln(gamma±) and 40 phi values for NaCl at 25 °C; phi comes from the Gibbs-Duhem
integral (the model has no closed form and no analytic Jacobian, as many plugins will not).
The baseline is what a user would write: scipy.optimize.curve_fit with finite differences over
a function that evaluates the model one point at a time. Reports the median wall time of each
and their ratio (baseline / saltbench). Not collected by pytest (timed runs are not tests).
"""

from __future__ import annotations

import argparse
import json

import numpy as np

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.fitting import FitData, fit
from saltbench.models import ActivityModel, Parameter
from saltbench.models.evaluate import evaluate

from timing import median_time


class BenchDH(ActivityModel):
    id = "bench-dh"
    name = "benchmark extended Debye-Hückel"
    citation = "benchmark model"
    parameters = (Parameter("a", "a", "Å", 3.0, lower=0.5, upper=20.0),
                  Parameter("b", "b", "kg/mol", 0.0, lower=-2.0, upper=2.0, linear=True))

    def ln_gamma_pm(self, m, params, ctx):
        i = ctx.electrolyte.ionic_strength(m)
        s = np.sqrt(i)
        return (-ctx.dh.a_gamma * ctx.electrolyte.zz * s
                / (1.0 + ctx.dh.b_gamma_per_angstrom * params["a"] * s) + params["b"] * i)


def make_data(model, e, seed=2024):
    m = np.round(np.linspace(0.05, 4.0, 40), 4)
    truth = evaluate(model, e, m, {"a": 4.0, "b": 0.05})
    rng = np.random.default_rng(seed)
    return FitData.concat([
        FitData.from_property("ln_gamma_pm", m, truth.ln_gamma_pm + rng.normal(0, 0.002, m.size),
                              0.002, dataset="bench-g"),
        FitData.from_property("osmotic", m, truth.osmotic + rng.normal(0, 0.002, m.size), 0.002,
                              dataset="bench-phi"),
    ])


def baseline(model, e, data):
    from scipy.optimize import curve_fit

    def f(_x, a, b):
        out = []
        for m, kind in zip(data.molality, data.kind):
            ev = evaluate(model, e, [m], {"a": a, "b": b})
            out.append(ev.osmotic[0] if kind == "osmotic" else ev.ln_gamma_pm[0])
        return np.array(out)

    popt, pcov = curve_fit(f, data.molality, data.value, p0=[3.0, 0.0], sigma=data.uncertainty,
                           absolute_sigma=True, bounds=([0.5, -2.0], [20.0, 2.0]))
    return popt, np.sqrt(np.diag(pcov))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("out", help="JSON file to write")
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    model, e = BenchDH(), parse_formula("NaCl")
    data = make_data(model, e)
    t_fit, res = median_time(lambda: fit(model, e, data, covariance_scaling="none"), args.repeat)
    t_base, (popt, perr) = median_time(lambda: baseline(model, e, data), args.repeat)
    report = {
        "n_points": data.n,
        "saltbench_seconds": t_fit,
        "baseline_seconds": t_base,
        "ratio_baseline_over_saltbench": t_base / t_fit,
        "saltbench_parameters": res.values,
        "baseline_parameters": {"a": float(popt[0]), "b": float(popt[1])},
        "saltbench_stderr": res.stderrs,
        "baseline_stderr": {"a": float(perr[0]), "b": float(perr[1])},
        "saltbench_model_evaluations": res.n_evaluations,
    }
    with open(args.out, "w", encoding="utf-8") as fh:
        json.dump(report, fh, indent=2)
    print(json.dumps(report, indent=2))


if __name__ == "__main__":
    main()
