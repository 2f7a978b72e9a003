"""The README's "Speed" table is the one made from the benchmark run it names (kept in
reports/benchmarks/) by tests/benchmarks/speed_table.py: a figure retyped by hand, or left from
an older run, fails here."""

from __future__ import annotations

import json
import re
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests" / "benchmarks"))

import speed_table  # noqa: E402


def _speed_section() -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    start = text.index("## Speed")
    end = text.find("\n## ", start + 1)
    return text[start:end if end > 0 else None]


def _run(kind: str = "bench") -> dict:
    m = re.search(rf"`(reports/benchmarks/{kind}-[^`]+\.json)`", _speed_section())
    assert m, f"the Speed section names the JSON of its {kind} run"
    return json.loads((ROOT / m.group(1)).read_text(encoding="utf-8"))


def test_the_speed_table_is_made_from_the_named_runs() -> None:
    assert speed_table.block(_run(), _run("pitzer-mixture")) in _speed_section()


def test_the_mixture_rows_say_met_only_within_the_target() -> None:
    mix = _run("pitzer-mixture")
    for row, key in zip(speed_table.mixture_rows(mix), ("compiled", "mixture")):
        within = mix[key]["exp_equivalents_per_composition"] <= speed_table.MIXTURE_EXP_MAX
        assert row[-1].startswith(f"<= {speed_table.MIXTURE_EXP_MAX}: ")
        assert ("not met" in row[-1]) != within


def test_the_table_says_not_met_where_the_run_missed_a_target() -> None:
    run = _run()
    table = speed_table.render(run)
    # the run's own verdicts, one per target, against the words in the table
    missed = [not run["compare"]["default"]["wall_s"] < run["targets"]["compare_all_wall_s_max"],
              not run["linear"]["target_met"], not run["startup"]["compare_nacl"]["target_met"],
              not run["fitting"]["pitzer_30_points"]["target_met"]]
    assert table.count("**not met**") >= sum(missed)


def test_the_benchmark_document_sits_beside_the_script() -> None:
    doc = ROOT / "tests" / "benchmarks" / "SPEED.md"
    assert doc.exists() and "bench_compare.py" in doc.read_text(encoding="utf-8")
    assert "tests/benchmarks/SPEED.md" in _speed_section()
