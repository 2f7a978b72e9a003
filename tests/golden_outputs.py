"""Golden outputs: what users see today, saved so that a change of the house (the model contract
issue) can show it changes no number, verdict, flag or recommendation.

    python tests/golden_outputs.py --update     # rewrite tests/golden/*.json from this code
    python tests/golden_outputs.py              # exit 1 when the code no longer reproduces them

The outputs are those of the installed commands on a fresh store seeded from the bundle:
``compare --all --format json``, ``predict --format json`` for every model on NaCl, CaCl2 and
MgSO4 (with the published set where the store has one, else the defaults, knowingly), and the
manifest of ``report NaCl CaCl2 MgSO4`` (its results, not its time stamps or paths).
"""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
GOLDEN = ROOT / "tests" / "golden"
SALTS = ("NaCl", "CaCl2", "MgSO4")
REL = 1e-9


def _run(store: Path, *args: str) -> str:
    env = {**os.environ, "SALTBENCH_STORE": str(store), "COLUMNS": "100"}
    env.pop("SALTBENCH_PLUGINS", None)
    proc = subprocess.run([sys.executable, "-m", "saltbench", *args], cwd=ROOT, env=env, capture_output=True,
                          text=True, timeout=900)
    if proc.returncode != 0:
        raise RuntimeError(f"saltbench {' '.join(args)} exited {proc.returncode}: {proc.stderr}")
    return proc.stdout


def produce() -> dict[str, object]:
    with tempfile.TemporaryDirectory() as tmp:
        store = Path(tmp) / "golden.sqlite"
        out: dict[str, object] = {"compare-all": json.loads(_run(store, "compare", "--all", "--format", "json",
                                                                   "--jobs", "2"))}
        models = [m["id"] for m in json.loads(_run(store, "models", "--format", "json"))]
        predictions = {}
        for salt in SALTS:
            for mid in models:
                for choice in ("auto", "defaults"):
                    env_args = ["predict", salt, "--model", mid, "--m", "0.001,0.01,0.1,0.5,1", "--params", choice,
                                "--format", "json"]
                    try:
                        predictions[f"{salt}/{mid}"] = json.loads(_run(store, *env_args))
                        break
                    except RuntimeError as exc:
                        if "does not support" in str(exc):
                            break
                        if choice == "defaults":
                            raise
        out["predict"] = predictions
        folder = Path(tmp) / "report"
        _run(store, "report", *SALTS, "--out", str(folder), "--jobs", "2")
        manifest = json.loads((folder / "manifest.json").read_text(encoding="utf-8"))
        out["report-results"] = manifest["results"]
        return out


def differences(old: object, new: object, where: str = "") -> list[str]:
    """Places where ``new`` differs from ``old``: numbers beyond 1e-9 relative, anything else exactly."""
    if isinstance(old, dict) and isinstance(new, dict):
        diffs = [f"{where}/{k}: missing" for k in old if k not in new]
        diffs += [f"{where}/{k}: new" for k in new if k not in old]
        for k in old:
            if k in new:
                diffs += differences(old[k], new[k], f"{where}/{k}")
        return diffs
    if isinstance(old, list) and isinstance(new, list):
        if len(old) != len(new):
            return [f"{where}: {len(old)} items, now {len(new)}"]
        return [d for i, (a, b) in enumerate(zip(old, new)) for d in differences(a, b, f"{where}[{i}]")]
    if isinstance(old, float) and isinstance(new, (int, float)) and not isinstance(new, bool):
        if math.isclose(old, new, rel_tol=REL, abs_tol=1e-300) or (math.isnan(old) and math.isnan(new)):
            return []
        return [f"{where}: {old!r} -> {new!r}"]
    return [] if old == new else [f"{where}: {old!r} -> {new!r}"]


def load() -> dict[str, object]:
    return {p.stem: json.loads(p.read_text(encoding="utf-8")) for p in sorted(GOLDEN.glob("*.json"))}


if __name__ == "__main__":
    new = produce()
    if "--update" in sys.argv:
        GOLDEN.mkdir(exist_ok=True)
        for name, value in new.items():
            (GOLDEN / f"{name}.json").write_text(json.dumps(value, indent=0, sort_keys=True) + "\n", encoding="utf-8")
    else:
        found = differences(load(), new)
        print("\n".join(found[:50]) or "golden outputs reproduced")
        sys.exit(1 if found else 0)
