"""Cost of Pitzer's model: one salt on its binary path against a reference copy of the plugin,
and a seawater-type mixture per composition in np.exp-equivalents (not a test).

    python tests/benchmarks/bench_pitzer.py OUT.json [--before FILE] [--compositions N]
                                             [--ions Na,K,Mg,Ca,Cl,SO4 [--ions ...]]

``--before`` names a copy of an earlier plugins/pitzer.py (e.g. ``git show REV:plugins/pitzer.py
> /tmp/pitzer_before.py``); both are timed in turns on the same one-salt calls (MgSO4, 20
molalities: ``values_and_jacobian`` as a fit calls it, ``ln_gamma_pm``, and ``compute``) and
the ratio after/before is printed. The mixture figure is a full evaluation (every ion's ln gamma,
phi, a_w) of a seawater-like solution with every key given a value (random, fixed parameters at
their defaults), over N compositions, divided by the time of np.exp on N points (issue 19,
item 7: at most 200 per composition). ``--ions`` names the ions (comma-separated, from
SEAWATER_LIKE below; Na, K, Mg, Ca, Cl, SO4, HCO3 unless given), and may be repeated to time several
lists in one run; ``mixture`` in the JSON is the first, ``mixtures`` all of them.

Both paths of the mixture evaluation are timed (``SALTBENCH_KERNEL=numpy`` and ``compiled``;
the compiled one where numba, the extra ``fast``, is installed): ``mixture`` holds the numpy
figures as before and ``compiled`` the kernel's, after a first call that compiled it or loaded
it from numba's cache. What that first call costs is timed apart, in fresh processes
(``kernel_start``): numba's import, then the first call with an empty cache (compiling) and with
the cache it left (loading), each against a second call. ``by_rows`` times one call of each path
at a few sizes of request, the figures behind the kernel's threshold (plugins/_pitzer_choice.py).
"""

from __future__ import annotations

import argparse
import importlib.util
import json
import math
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

from saltbench.chemistry.electrolyte import parse_formula
from saltbench.chemistry.ions import KNOWN_IONS
from saltbench.chemistry.solution import Composition
from saltbench.models.contract import Conditions, Request
from saltbench.models.evaluate import make_context
from saltbench.models.quantities import OSMOTIC, WATER_ACTIVITY, ln_gamma, ln_gamma_pm
from saltbench.plugins.pitzer import Pitzer

from timing import best_rate, in_turns_median_times

MGSO4 = {"beta0": 0.2210, "beta1": 3.343, "beta2": -37.23, "C_phi": 0.0250}  # Pitzer-Mayorga 1974
# Molalities of a seawater-like solution (mol/kg), approximate: rounded from memory of the major
# ions of seawater at salinity 35; a load for timing, not a reference composition.
SEAWATER_LIKE = {"Na": 0.486, "K": 0.0106, "Mg": 0.0547, "Ca": 0.0107, "Sr": 0.0001,
                 "Cl": 0.5687, "SO4": 0.0293, "Br": 0.00087, "HCO3": 0.0018, "F": 0.00007}
DEFAULT_IONS = "Na,K,Mg,Ca,Cl,SO4,HCO3"  # seven ions, as issue 19 item 7 names


def _one_salt_calls(model) -> dict:
    e = parse_formula("MgSO4")
    m = np.linspace(0.01, 3.0, 20)
    ctx = make_context(e)
    values = {**model.defaults(e), **MGSO4}
    keys = model.salt_keys(e)
    comp = Composition.of_salt(e, m)
    keyed = {k: np.array([[values[name]]]) for name, k in keys.items()}
    free = tuple(keys[p.name] for p in model.free_parameters(e))
    request = Request(comp, (ln_gamma_pm("MgSO4"), OSMOTIC), keyed,
                      Conditions.single(ctx.dh, comp.n), free)
    return {"values_and_jacobian": lambda: model.values_and_jacobian(m, values, ctx),
            "ln_gamma_pm": lambda: model.ln_gamma_pm(m, values, ctx),
            "compute": lambda: model.compute(request)}


def _request(formulas: list[str], n: int) -> Request:
    """A full evaluation (every ion's ln gamma, phi, a_w) of ``formulas`` over ``n``
    seawater-like compositions, every key given a value (random; fixed ones at their default)."""
    rng = np.random.default_rng(0)
    ions = tuple(KNOWN_IONS[f] for f in formulas)
    base = np.array([SEAWATER_LIKE[f] for f in formulas])
    comp = Composition(ions, base * rng.uniform(0.2, 5.0, (n, 1)), np.full(n, 298.15))
    model = Pitzer()
    values = {k: np.array([[p.default if p.fixed else rng.normal(0, 0.05)]])
              for k, p in model.keys_for(comp).items()}
    qs = tuple(ln_gamma(i.name) for i in ions) + (OSMOTIC, WATER_ACTIVITY)
    return Request(comp, qs, values, Conditions.of(comp))


def _mixture(formulas: list[str], n: int, path: str = "numpy") -> dict:
    """One full evaluation of ``formulas`` over ``n`` compositions by ``path`` (numpy or
    compiled), timed against np.exp on as many points just before (the best of 20 and of 10
    runs)."""
    os.environ["SALTBENCH_KERNEL"] = path
    rng = np.random.default_rng(1)
    request = _request(formulas, n)
    ions = request.composition.ions
    values = request.params
    model = Pitzer()
    model.compute(request)  # untimed: the compiled path's first call compiles or loads it
    x = rng.uniform(-1.0, 0.0, n)
    exp_rate = best_rate(lambda: np.exp(x), n, 20)
    mix_rate = best_rate(lambda: model.compute(request), n, 10)
    exp_cpu = _best_cpu(lambda: np.exp(x), 20)
    mix_cpu = _best_cpu(lambda: model.compute(request), 10)
    return {"path": path, "compositions": n, "ions": len(ions), "ion_list": [i.name for i in ions],
            "keys": len(values),
            "seconds_per_composition": 1.0 / mix_rate,
            "seconds_per_exp": 1.0 / exp_rate,
            "exp_equivalents_per_composition": exp_rate / mix_rate,
            # the same ratio in CPU time of this process (all its threads): a call of tens of
            # milliseconds on a loaded machine is preempted where np.exp's 0.1 ms is not, so
            # wall times then overstate the ratio; threads of a parallel BLAS count in full
            "cpu_exp_equivalents_per_composition": mix_cpu / exp_cpu}


def _by_rows(formulas: list[str], sizes: list[int]) -> list[dict]:
    """Seconds of one call of each path (best of repeats) for requests of ``sizes`` rows."""
    model = Pitzer()
    out = []
    for n in sizes:
        request = _request(formulas, n)
        row: dict = {"compositions": n}
        for path in ("numpy", "compiled"):
            os.environ["SALTBENCH_KERNEL"] = path
            model.compute(request)
            row[f"{path}_s"] = 1.0 / best_rate(lambda: model.compute(request), 1, 30 if n < 10_000 else 5)
        out.append(row)
    return out


START = """
import json, os, sys, time
sys.path.insert(0, {here!r})
os.environ["SALTBENCH_KERNEL"] = "compiled"
from bench_pitzer import _request
from saltbench.plugins.pitzer import Pitzer
request = _request({formulas!r}, 1000)
model = Pitzer()
t0 = time.perf_counter()
import numba  # noqa: F401
t1 = time.perf_counter()
model.compute(request)
t2 = time.perf_counter()
model.compute(request)
t3 = time.perf_counter()
import saltbench.plugins._pitzer_choice as choice
print(json.dumps({{"import_numba_s": t1 - t0, "first_call_s": t2 - t1, "second_call_s": t3 - t2,
                  "kernel_ran": bool(choice.KERNEL.proven)}}))
"""


def _kernel_start(formulas: list[str]) -> dict:
    """numba's import and the kernel's first call in fresh processes: with an empty cache
    folder (compiling) and again with the cache that run left (loading)."""
    here = os.path.dirname(os.path.abspath(__file__))
    code = START.format(here=here, formulas=formulas)
    out = {}
    with tempfile.TemporaryDirectory() as cache:
        env = {**os.environ, "NUMBA_CACHE_DIR": cache}
        for name in ("cold_cache", "warm_cache"):
            proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                                  env=env, check=True)
            out[name] = json.loads(proc.stdout.strip().splitlines()[-1])
    return out


def _compiled_available() -> bool:
    return importlib.util.find_spec("numba") is not None


def _best_cpu(fn, repeat: int) -> float:
    """The least CPU time of the process over ``repeat`` calls of ``fn``."""
    best = math.inf
    for _ in range(repeat):
        t = time.process_time()
        fn()
        best = min(best, time.process_time() - t)
    return best


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("out")
    ap.add_argument("--before")
    ap.add_argument("--compositions", type=int, default=100_000)
    ap.add_argument("--repeat", type=int, default=2000)
    ap.add_argument("--only-compiled", action="store_true",
                    help="time the compiled path alone (no numpy figures, no start-up runs)")
    ap.add_argument("--ions", action="append",
                    help=f"comma-separated ions of {', '.join(SEAWATER_LIKE)} "
                         f"(default {DEFAULT_IONS}); repeat to time several lists")
    args = ap.parse_args()
    lists = [[f.strip() for f in spec.split(",") if f.strip()] for spec in args.ions or [DEFAULT_IONS]]
    for formulas in lists:
        unknown = [f for f in formulas if f not in SEAWATER_LIKE]
        if unknown or len(set(formulas)) != len(formulas):
            ap.error(f"--ions: give distinct ions of {', '.join(SEAWATER_LIKE)} "
                     f"(got {','.join(formulas)})")
    out: dict = {}
    if args.before:
        spec = importlib.util.spec_from_file_location("pitzer_before", args.before)
        assert spec and spec.loader
        mod = importlib.util.module_from_spec(spec)
        spec.loader.exec_module(mod)
        before, after = _one_salt_calls(mod.Pitzer()), _one_salt_calls(Pitzer())
        fns = {f"{k}/before": v for k, v in before.items()}
        fns.update({f"{k}/after": v for k, v in after.items()})
        times = in_turns_median_times(fns, args.repeat)
        out["one_salt"] = {k: {"before_s": times[f"{k}/before"][0],
                               "after_s": times[f"{k}/after"][0],
                               "ratio": times[f"{k}/after"][0] / times[f"{k}/before"][0]}
                           for k in before}
    n = args.compositions
    out["load_average_at_start"] = os.getloadavg()
    if args.only_compiled:
        out["compiled_mixtures"] = [_mixture(formulas, n, "compiled") for formulas in lists]
        print(json.dumps(out, indent=1))
        return
    out["mixtures"] = [_mixture(formulas, n) for formulas in lists]
    out["mixture"] = out["mixtures"][0]
    if _compiled_available():
        out["compiled_mixtures"] = [_mixture(formulas, n, "compiled") for formulas in lists]
        out["compiled"] = out["compiled_mixtures"][0]
        out["kernel_start"] = _kernel_start(lists[0])
        out["by_rows"] = _by_rows(lists[0], [1, 10, 100, 1000, 4096, 10_000, 100_000])
    else:
        out["compiled"] = "numba is not installed (pip install -e '.[fast]')"
    out["load_average_at_end"] = os.getloadavg()
    print(json.dumps(out, indent=1))
    with open(args.out, "w", encoding="utf-8") as fh:
        json.dump(out, fh, indent=1)


if __name__ == "__main__":
    main()
