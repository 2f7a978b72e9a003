"""The README's table of copying slips caught by ``data check``, made from the benchmark's JSON.

The block is ``<!-- slips: reports/benchmarks/NAME.json -->`` ... ``<!-- end slips -->``; rewrite
it with ``python tests/readme_slips.py --update`` after a run of tests/benchmarks/bench_slips.py.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
README = ROOT / "README.md"
BLOCK = re.compile(r"(<!-- slips: (?P<json>\S+) -->\n)(?P<table>.*?)(<!-- end slips -->)", re.S)
SOURCES = {  # table rows: the bundle's sources, as a reader knows them
    "crc-acids-bases-salts": "handbook, 0.1-1.0 mol/kg table (transcribed)",
    "robinson-stokes-1959": "Robinson-Stokes, beyond 1 mol/kg and osmotic (remembered)",
    "crc-handbook": "handbook, 92nd ed., 0.001-20 mol/kg (transcribed; NaCl, KCl, HCl remembered)",
    "crc-handbook-online": "handbook, 2-20 mol/kg table (transcribed)",
}
KINDS = (("first", "first digit ±1"), ("second", "second digit ±1"), ("swap", "last two digits swapped (≥ 1 %)"))


def table(run: dict) -> str:
    pct = lambda f: f"{100 * f['caught'] / f['made']:.1f} % of {f['made']}" if f["made"] else "—"
    lines = ["| points of | " + " | ".join(label for _, label in KINDS) + " |",
             "|---|" + "---|" * len(KINDS)]
    for src, label in SOURCES.items():
        row = run["by_source"].get(src)
        if row:
            lines.append(f"| {label} | " + " | ".join(pct(row[k]) if k in row else "—" for k, _ in KINDS) + " |")
    lines.append("| **whole bundle** | " + " | ".join(f"**{pct(run['overall'][k])}**" for k, _ in KINDS) + " |")
    lines.append("| target | 100 % | ≥ 90 % | ≥ 90 % |")
    lines.append("")
    lines.append(f"Findings on the bundle as printed: {len(run['clean_findings'])}. "
                 f"{run['electrolytes']} electrolytes; run time {run['seconds']:g} s on 2 cores.")
    return "\n".join(lines) + "\n"


def render(text: str) -> str:
    def sub(m: re.Match) -> str:
        run = json.loads((ROOT / m.group("json")).read_text(encoding="utf-8"))
        return m.group(1) + table(run) + m.group(4)
    return BLOCK.sub(sub, text)


if __name__ == "__main__":
    from generated_text import update_or_check

    update_or_check(README, render)
