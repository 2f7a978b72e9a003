"""How many copying slips ``data check`` catches on the bundled data (a benchmark, not a test).

    python tests/benchmarks/bench_slips.py OUT.json [--electrolytes A B ...]

Every bundled activity or osmotic point is corrupted in turn, each way
:mod:`saltbench.curation.slips` makes a slip, and the data check of that electrolyte is run on
the corrupted data; the slip counts as caught when a finding names its file and line. The JSON
holds the fraction caught per kind, per source table, per dataset and overall, the findings on
the clean bundle (there must be none), and the run time. The README's figures come from it.
"""

from __future__ import annotations

import argparse
import json
import multiprocessing
import os
import tempfile
import time
from collections import defaultdict
from pathlib import Path

from saltbench.api import Session
from saltbench.curation import checks
from saltbench.curation.checks import check_electrolyte
from saltbench.curation.slips import KINDS, printed, slips


def _apply(settings: list[str]) -> None:
    for item in settings:
        name, value = item.split("=")
        setattr(checks, name, float(value))


def _one(job: tuple[str, str, list[str]]) -> tuple[dict, list]:
    """Every slip of every point of one electrolyte: (counts, findings on the clean data)."""
    path, name, settings = job
    _apply(settings)
    s = Session(path, seed=False)
    meta = s.datasets()
    counts: dict[tuple, list[int]] = defaultdict(lambda: [0, 0])
    e = s.electrolyte(name)
    pts = s.points(name).reset_index(drop=True)
    sub = meta[meta.electrolyte == name]
    clean = [f.as_dict() for f in check_electrolyte(e, pts).findings]
    for i, row in pts.iterrows():
        if row.property == "water_activity" or row.basis != "linear":
            continue
        text = printed(float(row.value_printed), float(row.precision))
        for kind, new in slips(text):
            bad = pts.copy()
            bad.loc[i, ["value", "value_printed"]] = new
            found = check_electrolyte(e, bad).findings
            hit = any(f.file == row.file and f.line == row.line for f in found)
            source = str(sub.loc[sub.key == row.dataset, "source"].iloc[0])
            for key in (("kind", kind), ("source", source, kind), ("dataset", row.dataset, kind)):
                counts[key][0] += hit
                counts[key][1] += 1
    return dict(counts), clean


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("out")
    ap.add_argument("--electrolytes", nargs="*", default=None)
    ap.add_argument("--set", nargs="*", default=[], metavar="NAME=VALUE",
                    help="try another value of a tolerance in saltbench.curation.checks (calibration)")
    ap.add_argument("--jobs", type=int, default=os.cpu_count() or 1)
    args = ap.parse_args()
    _apply(args.set)
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        seeded = Session(Path(tmp) / "bench.sqlite")
        names = args.electrolytes or list(seeded.electrolytes().electrolyte)
        seeded.store.close()
        work = [(str(Path(tmp) / "bench.sqlite"), name, args.set) for name in names]
        with multiprocessing.get_context("spawn").Pool(args.jobs) as pool:
            parts = pool.map(_one, work)
    counts: dict[tuple, list[int]] = defaultdict(lambda: [0, 0])
    clean_findings = []
    for part_counts, part_findings in parts:
        clean_findings += part_findings
        for key, (hit, made) in part_counts.items():
            counts[key][0] += hit
            counts[key][1] += made
    fraction = lambda k: {"caught": counts[k][0], "made": counts[k][1],
                          "fraction": counts[k][0] / counts[k][1] if counts[k][1] else None}
    result = {
        "overall": {kind: fraction(("kind", kind)) for kind in KINDS},
        "by_source": {src: {kind: fraction(("source", src, kind)) for kind in KINDS
                            if counts[("source", src, kind)][1]}
                      for src in sorted({k[1] for k in counts if k[0] == "source"})},
        "by_dataset": {ds: {kind: fraction(("dataset", ds, kind)) for kind in KINDS
                            if counts[("dataset", ds, kind)][1]}
                       for ds in sorted({k[1] for k in counts if k[0] == "dataset"})},
        "clean_findings": clean_findings,
        "electrolytes": len(names),
        "seconds": round(time.perf_counter() - t0, 1),
        "tolerances": {n: getattr(checks, n) for n in ("NEIGHBOUR_SIGMAS", "ADEQUACY", "SPARSE_RATIO", "END_RATIO")},
    }
    Path(args.out).write_text(json.dumps(result, indent=1, default=str) + "\n", encoding="utf-8")
    for kind, f in result["overall"].items():
        print(f"{kind:11s} {f['caught']:5d} / {f['made']:5d}  {f['fraction']:.3f}" if f["made"] else kind)
    for src, d in result["by_source"].items():
        print(src, {k: round(v["fraction"], 3) for k, v in d.items()})
    print(f"clean findings: {len(clean_findings)}; {result['seconds']} s")


if __name__ == "__main__":
    main()
