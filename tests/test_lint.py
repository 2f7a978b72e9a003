"""The linter passes on the code as committed (rules in pyproject.toml, [tool.ruff])."""

import shutil
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_ruff_passes():
    ruff = shutil.which("ruff") or str(Path(sys.executable).with_name("ruff"))
    proc = subprocess.run([ruff, "check", "harness", "plugins", "tests", "refdata/tools"], cwd=ROOT,
                          capture_output=True, text=True)
    assert proc.returncode == 0, proc.stdout + proc.stderr
