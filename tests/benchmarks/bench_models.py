"""Throughput of every built-in model next to np.exp on the same array.

    python tests/benchmarks/bench_models.py OUT.json [--points N] [--repeat R]

Prints points per second of ln_gamma_pm (and of the osmotic coefficient as the harness gets it:
analytic, or Gibbs-Duhem) for NaCl, and the ratio to np.exp throughput. Not a test.
"""

from __future__ import annotations

import argparse
import json

import numpy as np

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.models.discovery import build_registry
from saltbench.models.evaluate import make_context, osmotic_by_gibbs_duhem
from saltbench.models.salt_view import salt_view

from timing import best_rate


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("out")
    ap.add_argument("--points", type=int, default=100_000)
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    e = parse_formula("NaCl")
    ctx = make_context(e)
    reg = build_registry(use_environment=False)
    m = np.linspace(1e-3, 1.0, args.points)
    exp_rate = best_rate(lambda: np.exp(m), m.size, args.repeat)
    rows = []
    for mid, info in sorted(reg.models.items()):
        model = salt_view(info.model)  # one-salt calls, through compute for solution models
        if not model.supports(e):
            continue
        p = model.defaults()
        r_ln = best_rate(lambda: model.ln_gamma_pm(m, p, ctx), m.size, args.repeat)

        def phi():
            out = model.osmotic(m, p, ctx)
            return osmotic_by_gibbs_duhem(model, m, p, ctx) if out is None else out
        r_phi = best_rate(phi, m.size, args.repeat)
        rows.append({"model": mid, "ln_gamma_pm_points_per_s": r_ln,
                     "osmotic_points_per_s": r_phi, "ln_gamma_pm_ratio_to_exp": r_ln / exp_rate,
                     "osmotic_ratio_to_exp": r_phi / exp_rate})
        print(f"{mid:28s} ln_gamma {r_ln:12.3e}/s ({r_ln / exp_rate:7.4f} x exp)   "
              f"phi {r_phi:12.3e}/s ({r_phi / exp_rate:7.4f} x exp)")
    print(f"{'np.exp':28s} {exp_rate:12.3e}/s")
    with open(args.out, "w") as fh:
        json.dump({"electrolyte": e.name, "points": args.points, "exp_points_per_s": exp_rate,
                   "models": rows}, fh, indent=2)


if __name__ == "__main__":
    main()
