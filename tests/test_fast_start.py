"""A command imports only what it needs (issue: a fast start).

A comparison at 25 °C needs neither pandas (no DataFrame is returned) nor the IAPWS library
(the 25 °C water state is written out; tests/test_water.py holds it to a fresh computation).
The tables of the Python API still come as DataFrames, pandas imported on demand.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

PROBE = """
import sys
from saltbench.cli import main
try:
    main({args!r})
finally:
    print("LOADED", *sorted(m for m in ("pandas", "iapws", "matplotlib") if m in sys.modules),
          file=sys.stderr)
"""


def _loaded(args: list[str], store: Path) -> set[str]:
    import os

    env = {**os.environ, "SALTBENCH_STORE": str(store)}
    proc = subprocess.run([sys.executable, "-c", PROBE.format(args=args)], capture_output=True,
                          text=True, env=env, timeout=300)
    assert proc.returncode == 0, proc.stderr
    (line,) = [x for x in proc.stderr.splitlines() if x.startswith("LOADED")]
    return set(line.split()[1:])


def test_compare_imports_neither_pandas_nor_the_water_library(seeded_store: Path) -> None:
    loaded = _loaded(["compare", "NaCl", "--models", "davies,pitzer", "--jobs", "1"], seeded_store)
    assert not loaded & {"pandas", "iapws", "matplotlib"}


def test_compare_all_lists_the_electrolytes_without_pandas(seeded_store: Path) -> None:
    # --all iterates over the stored electrolytes' names: no DataFrame is returned.
    loaded = _loaded(["compare", "--all", "--models", "davies", "--jobs", "1", "--format", "json"],
                     seeded_store)
    assert not loaded & {"pandas", "iapws", "matplotlib"}


def test_compare_away_from_cached_states_computes_the_water_state(seeded_store: Path) -> None:
    # 30 °C is not a cached state: the water-property library is asked for it.
    loaded = _loaded(["predict", "NaCl", "--model", "davies", "--temperature", "303.15",
                      "--m", "0.1"], seeded_store)
    assert "iapws" in loaded


def test_the_api_tables_are_still_dataframes(seeded_store: Path) -> None:
    import pandas as pd

    from saltbench import api

    s = api.Session(seeded_store)
    for frame in (s.electrolytes(), s.datasets("NaCl"), s.points("NaCl"), api.parameter_sets(s)):
        assert isinstance(frame, pd.DataFrame) and len(frame)
    sel = api.select_data(s, "NaCl")
    assert isinstance(sel.frame, pd.DataFrame) and len(sel.frame) == sel.data.n
