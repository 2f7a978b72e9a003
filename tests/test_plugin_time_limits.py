"""A plugin that hangs does not hold up the rest, and Ctrl-C stops a parallel run promptly."""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time

from conftest import write

LOOPING = '''import numpy as np
from saltbench.models import ActivityModel, Parameter, Validity, hookimpl


class Looping(ActivityModel):
    id = "looping"
    name = "Looping"
    citation = "a test plugin that never returns (invented)"
    parameters = (Parameter("b", "b", "kg/mol", 0.0, lower=-1, upper=1, linear=True),)
    validity = Validity(max_ionic_strength=1.0)

    def ln_gamma_pm(self, m, params, ctx):
        while True:
            pass


@hookimpl
def register_models(context):
    return [Looping()]
'''


def test_a_model_that_never_returns_is_stopped_and_flagged(tmp_path, run_main, seeded_store) -> None:
    plugin = write(tmp_path / "looping.py", LOOPING)
    code, out, err = run_main("--plugin", str(plugin), "compare", "NaCl", "--models", "looping,davies",
                              "--time-limit", "1", "--format", "json", "--jobs", "1", store=seeded_store)
    assert code == 0, err
    rows = {r["model"]: r for r in json.loads(out)}
    assert any("took longer than 1 s and was stopped" in f for f in rows["looping"]["flags"])
    assert rows["davies"]["valid_up_to_refit"] is not None  # the others finish


def test_a_plugin_that_hangs_at_import_is_skipped_and_reported(tmp_path, run_main, seeded_store,
                                                                monkeypatch) -> None:
    from saltbench.models import discovery

    monkeypatch.setattr(discovery, "IMPORT_TIME_LIMIT_S", 1.0)
    plugin = write(tmp_path / "stuck.py", "while True:\n    pass\n")
    code, out, err = run_main("--plugin", str(plugin), "plugins", "--format", "json", store=seeded_store)
    assert code == 0, err
    assert "stuck" in out and "took longer than 1 s" in out


SLOW = LOOPING.replace("Looping", "Slow").replace('"looping"', '"slow"').replace(
    "never returns", "takes a tenth of a second a call").replace(
    "        while True:\n            pass\n",
    "        import time\n        time.sleep(0.1)\n        return -0.5 * np.sqrt(np.asarray(m))\n")


def test_ctrl_c_stops_a_parallel_comparison_promptly(tmp_path) -> None:
    # Not a speed target: a guard that the run ends on SIGINT instead of finishing its work first,
    # with the one-line message and no traceback. A slow plugin keeps the comparison busy for
    # minutes, so the signal always lands mid-run (the bundled comparison alone now finishes in
    # a few seconds, before the signal on a fast machine). Python 3.11's pool printed a
    # traceback from its manager thread for a future cancelled before the workers were stopped,
    # when a worker's result arrived in between: a race this test does not force.
    plugin = write(tmp_path / "slow.py", SLOW)
    env = {**os.environ, "XDG_DATA_HOME": str(tmp_path / "xdg")}
    subprocess.run([sys.executable, "-m", "saltbench", "data", "list"], env=env, check=True, capture_output=True)
    proc = subprocess.Popen([sys.executable, "-m", "saltbench", "--plugin", str(plugin), "compare", "--all",
                             "--jobs", "2"], env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    time.sleep(3.0)
    start = time.monotonic()
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate(timeout=30)
    assert proc.returncode == 130 and ("Interrupted." in err.decode() or "Aborted." in err.decode())
    assert "Traceback" not in err.decode()
    assert time.monotonic() - start < 30
