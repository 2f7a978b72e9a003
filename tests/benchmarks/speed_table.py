"""The README's "Speed" table, made from a benchmark run's JSON (bench_compare.py --out).

    python tests/benchmarks/speed_table.py reports/benchmarks/bench-DATE.json \
        --mixture reports/benchmarks/pitzer-mixture-DATE.json --update

rewrites the table between the README's ``speed-table`` markers (and the JSON's name in the
sentence above it); without ``--update`` it prints the table. tests/test_readme_speed.py holds
the README to the table made from the JSON it names, so no figure is typed by hand.
"""

from __future__ import annotations

import argparse
import json
import re
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
BEGIN, END = "<!-- speed-table -->", "<!-- /speed-table -->"


def _met(flag: bool) -> str:
    return "met" if flag else "**not met**"


def _s(x: float) -> str:
    return f"{x:.2f} s" if x < 10 else f"{x:.1f} s"


def rows(run: dict[str, Any]) -> list[list[str]]:
    t = run["targets"]
    out: list[list[str]] = []
    c = run.get("compare")
    if c:
        d = c["default"]
        mem = d["peak_pss_all_processes_mb"] or d["max_rss_single_process_mb"]
        out += [
            [f"`compare --all` ({c['electrolytes']} electrolytes, {c['models']} models, "
             f"{c['default_jobs']} workers), wall time", _s(d["wall_s"]), "—",
             f"{d['wall_s'] / t['compare_all_wall_s_max']:.1f}x the target",
             f"< {t['compare_all_wall_s_max']} s: {_met(d['wall_s'] < t['compare_all_wall_s_max'])}"],
            ["same, CPU time (user + sys, all processes)", _s(d["cpu_user_s"] + d["cpu_sys_s"]),
             "—", "—", "—"],
            ["same, peak memory (summed PSS of all processes)", f"{mem:.0f} MB", "—",
             f"{mem / t['compare_all_memory_mb_max']:.2f} of the target",
             f"< {t['compare_all_memory_mb_max']} MB: {_met(mem < t['compare_all_memory_mb_max'])}"],
            ["`--jobs 2` against `--jobs 1`, wall time", _s(c["jobs2"]["wall_s"]),
             _s(c["jobs1"]["wall_s"]), f"{c['speedup_jobs2_over_jobs1']:.2f}x faster", "—"],
        ]
    lin = run.get("linear")
    if lin:
        out.append([f"linear models ({', '.join(lin['models'])}; {lin['assessments']} "
                    "assessments), CPU time of the comparison", _s(lin["saltbench_cpu_s"]),
                    f"{_s(lin['yardstick_cpu_s'])} (batched numpy yardstick)",
                    f"{lin['ratio']:.1f}x the yardstick",
                    f"<= {t['linear_cpu_over_yardstick_max']}x: {_met(lin['target_met'])}"])
    st = run.get("startup")
    if st:
        n = st["compare_nacl"]
        out += [
            [f"`saltbench compare NaCl` (every model), wall time, median of {n['runs']}",
             _s(n["saltbench_compare_nacl_median_s"]),
             f"{_s(n['python_import_numpy_scipy_optimize_median_s'])} "
             "(`python -c \"import numpy, scipy.optimize\"`)", f"{n['ratio']:.2f}",
             f"<= {t['compare_nacl_over_numpy_scipy_import_max']}: {_met(n['target_met'])}"],
            [f"`saltbench --help`, median of {st['runs']}", _s(st["saltbench_help_median_s"]),
             f"{_s(st['python_import_numpy_median_s'])} (`python -c \"import numpy\"`)",
             f"{st['ratio']:.2f}", f"<= {t['help_over_numpy_import_max']}: {_met(st['target_met'])}"],
        ]
    fit = run.get("fitting")
    if fit:
        p = fit["pitzer_30_points"]["in_turns"]
        out.append(["one Pitzer fit, 30 synthetic points, calls in turns",
                    f"{p['saltbench_s'] * 1e3:.2f} ms",
                    f"{p['purpose_written_s'] * 1e3:.2f} ms (purpose-written fit)",
                    f"{p['saltbench_over_purpose_written']:.1f}x",
                    f"<= {t['pitzer_fit_over_purpose_written_max']}x: "
                    f"{_met(fit['pitzer_30_points']['target_met'])}"])
        per = fit["fit_and_cv_per_model_nacl"]
        ok = [r for r in per["rows"] if "ratio" in r]
        slow = sorted((r for r in ok if not r["target_met"]), key=lambda r: -r["ratio"])
        out.append([f"fit plus 5-fold cross-validation, {len(ok)} one-salt models, bundled NaCl",
                    f"{min(r['ratio'] for r in ok):.2f}x to {max(r['ratio'] for r in ok):.2f}x "
                    "the baseline", "vectorised `curve_fit` loop over the same folds",
                    f"{per['models_meeting_target']} of {per['models']} faster",
                    "every model faster: " + (_met(not slow) if not slow else
                                              "**not met** (" + ", ".join(
                                                  f"{r['model']} {r['ratio']:.2f}x" for r in slow)
                                              + ")")])
    sc = run.get("scaling")
    if sc:
        e = sc["electrolytes"]
        out.append([f"growth with the number of electrolytes ({', '.join(str(r['factor']) for r in e['runs'])}"
                    "x copies), CPU", f"order {e['growth_order_cpu']:.2f}", "—", "—",
                    f"<= {t['electrolytes_growth_order_max']} (linear): {_met(e['target_met'])}"])
    mo = run.get("models")
    if mo:
        worst = mo["pitzer_exp_per_point_worst"]
        out.append(["np.exp calls per point, one Pitzer evaluation (ln gamma±, phi, a_w)",
                    f"{worst:g}", "—", "—",
                    f"<= {t['pitzer_exp_calls_per_point_max']}: {_met(mo['pitzer_exp_target_met'])}"])
    return out


#: The Pitzer mixture evaluation's target, np.exp-equivalents per composition (issue 19).
MIXTURE_EXP_MAX = 200


def mixture_rows(mix: dict[str, Any]) -> list[list[str]]:
    """Rows of a bench_pitzer.py run: both paths of the Pitzer mixture evaluation."""
    out = []
    for key, label in (("compiled", "compiled kernel (`fast` extra)"), ("mixture", "numpy path")):
        r = mix.get(key)
        if not r:
            continue
        eq = r["exp_equivalents_per_composition"]
        out.append([f"Pitzer mixture evaluation, {r['ions']} ions (every ion's ln gamma, phi, "
                    f"a_w), {r['compositions']:,} compositions: {label}",
                    f"{r['seconds_per_composition'] * 1e6:.2f} µs per composition",
                    f"{r['seconds_per_exp'] * 1e9:.2f} ns (np.exp per point)",
                    f"{eq:.0f} np.exp-equivalents",
                    f"<= {MIXTURE_EXP_MAX}: {_met(eq <= MIXTURE_EXP_MAX)}"])
    return out


def render(run: dict[str, Any], mixture: dict[str, Any] | None = None) -> str:
    lines = ["| figure | saltbench | baseline | ratio | target |", "|---|---|---|---|---|"]
    lines += ["| " + " | ".join(r) + " |"
              for r in rows(run) + (mixture_rows(mixture) if mixture else [])]
    return "\n".join(lines)


def block(run: dict[str, Any], mixture: dict[str, Any] | None = None) -> str:
    return f"{BEGIN}\n{render(run, mixture)}\n{END}"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("json", help="a bench_compare.py --out file, kept in reports/benchmarks/")
    ap.add_argument("--mixture", help="a bench_pitzer.py output, kept in reports/benchmarks/")
    ap.add_argument("--update", action="store_true", help="rewrite the README's table")
    args = ap.parse_args()
    path = Path(args.json)
    run = json.loads(path.read_text(encoding="utf-8"))
    mix_path = Path(args.mixture) if args.mixture else None
    mixture = json.loads(mix_path.read_text(encoding="utf-8")) if mix_path else None
    if not args.update:
        print(render(run, mixture))
        return
    readme = ROOT / "README.md"
    text = readme.read_text(encoding="utf-8")
    start, end = text.index(BEGIN), text.index(END) + len(END)
    text = text[:start] + block(run, mixture) + text[end:]
    rel = path.resolve().relative_to(ROOT).as_posix()
    text = re.sub(r"`reports/benchmarks/bench-[^`]+\.json`", f"`{rel}`", text)
    if mix_path:
        rel = mix_path.resolve().relative_to(ROOT).as_posix()
        text = re.sub(r"`reports/benchmarks/pitzer-mixture-[^`]+\.json`", f"`{rel}`", text)
    readme.write_text(text, encoding="utf-8")


if __name__ == "__main__":
    main()
