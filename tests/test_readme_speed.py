"""The README's "Speed" figures are those of the benchmark run it names, kept in reports/benchmarks/:
a figure retyped by hand or left from an older run fails here."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _speed_section() -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    start = text.index("## Speed")
    end = text.find("\n## ", start + 1)
    return text[start:end if end > 0 else None]


@pytest.fixture(scope="module")
def run() -> dict:
    m = re.search(r"`(reports/benchmarks/[^`]+\.json)`", _speed_section())
    assert m, "the Speed section names the JSON of its run"
    return json.loads((ROOT / m.group(1)).read_text(encoding="utf-8"))


def _row(label: str) -> list[str]:
    for line in _speed_section().splitlines():
        if line.startswith("| " + label):
            return [c.strip() for c in line.strip().strip("|").split("|")]
    raise AssertionError(f"no row starting {label!r}")


def _first_number(cell: str) -> float:
    return float(re.search(r"\d+(?:\.\d+)?", cell).group())


def test_compare_all_figures_are_the_runs(run) -> None:
    row = _row("`compare --all`")
    assert _first_number(row[1]) == round(run["compare"]["default"]["wall_s"], 1)
    mem = _row("same, peak memory")
    assert _first_number(mem[1]) == round(run["compare"]["default"]["peak_pss_all_processes_mb"])
    jobs = _row("`--jobs 2` against `--jobs 1`")
    assert _first_number(jobs[3]) == round(run["compare"]["speedup_jobs2_over_jobs1"], 2)


def test_startup_figure_is_the_runs(run) -> None:
    assert _first_number(_row("`saltbench --help`")[3]) == round(run["startup"]["ratio"], 2)


def test_pitzer_fit_figures_are_the_runs(run) -> None:
    fit = run["fitting"]["pitzer_30_points"]
    row = _row("one Pitzer fit, 30 synthetic points")
    assert _first_number(row[1]) == round(fit["saltbench_s"] * 1e3, 2)
    assert _first_number(row[2]) == round(fit["baseline_curve_fit_s"] * 1e3, 2)
    assert _first_number(row[3]) == round(fit["speedup"], 1)
    assert ("not met" in row[4]) == (not fit["target_met"])
    yardstick = _row("yardstick")
    assert _first_number(yardstick[1]) == round(fit["purpose_written_s"] * 1e3, 2)
    assert _first_number(yardstick[3]) == round(fit["purpose_written_speedup"], 1)
    turns = fit["in_turns"]
    row = _row("same fit, the calls taken in turns")
    assert _first_number(row[1]) == round(turns["saltbench_s"] * 1e3, 2)
    assert _first_number(row[2]) == round(turns["baseline_curve_fit_s"] * 1e3, 2)
    assert _first_number(row[3]) == round(turns["speedup"], 1)
    yardstick = _row("yardstick, calls taken in turns")
    assert _first_number(yardstick[1]) == round(turns["purpose_written_s"] * 1e3, 2)
    assert _first_number(yardstick[3]) == round(turns["purpose_written_speedup"], 1)
