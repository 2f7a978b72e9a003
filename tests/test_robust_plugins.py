"""A faulty plugin is isolated: it is named with its error and the other models' results are
unaffected (issue 7, item 9).

The faulty plugins are files of our own test corpus (tests/corpus/plugins, invented models of
the Fennwick brine bench scenario). The reference each run is compared with is the same
comparison without the faulty plugin, so nothing here depends on saltbench's own numbers.
"""

from __future__ import annotations

import contextlib
import io
import json
from pathlib import Path

import pytest
from conftest import copy_store

PLUGINS = Path(__file__).resolve().parent / "corpus" / "plugins"

# file -> fragment the faulty model's flags must carry
EVAL_CASES = {
    "eval_raises.py": "ln_gamma_pm raised ZeroDivisionError: corpus model divides by zero",
    "eval_nan.py": "ln_gamma_pm is not finite at some molalities",
    "eval_wrong_shape.py": "ln_gamma_pm has shape",
}


def _by_model(out: str) -> dict[str, dict]:
    records = json.loads(out)
    by = {r["model"]: r for r in records}
    assert len(by) == len(records)
    return by


@pytest.fixture(scope="module")
def reference_pitzer(seeded_store_file: Path, tmp_path_factory: pytest.TempPathFactory) -> dict:
    """Pitzer's NaCl record without any extra plugin."""
    from saltbench.cli import main

    store = copy_store(seeded_store_file, tmp_path_factory.mktemp("ref") / "ref.sqlite")
    buf, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(buf), contextlib.redirect_stderr(err):
        main(["--store", str(store), "compare", "NaCl", "--models", "pitzer", "--format", "json"])
    # Nothing on stderr but the regulated-use caution that every machine-readable output carries.
    assert [line for line in err.getvalue().splitlines() if not line.startswith("Validity ranges hold only")] == []
    return _by_model(buf.getvalue())["pitzer"]


@pytest.mark.parametrize("name", list(EVAL_CASES))
def test_misbehaving_model_is_flagged_and_pitzer_is_unaffected(
        name: str, reference_pitzer: dict, seeded_store: Path, run_main) -> None:
    code, out, err = run_main("--plugin", str(PLUGINS / name), "compare", "NaCl",
                              "--models", "pitzer,bad-model", "--format", "json", store=seeded_store)
    assert code == 0, err
    by = _by_model(out)
    assert set(by) == {"pitzer", "bad-model"}
    assert by["pitzer"] == reference_pitzer
    bad = by["bad-model"]
    assert bad["plugin"] == Path(name).stem
    assert any(EVAL_CASES[name] in f and "bad-model" in f for f in bad["flags"]), bad["flags"]
    assert bad["recommended"] is False


def test_plugin_failing_at_import_is_named_and_pitzer_is_unaffected(
        reference_pitzer: dict, seeded_store: Path, run_main) -> None:
    path = PLUGINS / "import_error.py"
    code, out, err = run_main("--plugin", str(path), "compare", "NaCl", "--models", "pitzer",
                              "--format", "json", store=seeded_store)
    assert code == 0, err
    assert f"Warning: plugin import_error ({path}): failed to import: ModuleNotFoundError" in err
    assert _by_model(out) == {"pitzer": reference_pitzer}


def test_asking_for_the_model_of_a_plugin_that_failed_to_import_is_a_user_error(
        seeded_store: Path, run_main) -> None:
    code, out, err = run_main("--plugin", str(PLUGINS / "import_error.py"), "compare", "NaCl",
                              "--models", "pitzer,bad-model", "--format", "json", store=seeded_store)
    assert (code, out) == (2, "")
    assert err.startswith("Error: unknown model 'bad-model'; known models: "), err
    assert err.count("\n") == 1, err


NOISY = '''print("hello from import")
import numpy as np
from saltbench.models import ActivityModel, Parameter, Validity, hookimpl


class Noisy(ActivityModel):
    id = "noisy"
    name = "Noisy"
    citation = "a test plugin that prints (invented)"
    parameters = (Parameter("b", "b", "kg/mol", 0.0, lower=-1, upper=1, linear=True),)
    validity = Validity(max_ionic_strength=1.0)

    def ln_gamma_pm(self, m, params, ctx):
        print("evaluating")
        s = np.sqrt(ctx.electrolyte.ionic_strength(m))
        return -ctx.dh.a_gamma * abs(ctx.electrolyte.zz) * s / (1 + s) + params["b"] * m


@hookimpl
def register_models(context):
    return [Noisy()]
'''


def test_what_a_plugin_prints_goes_to_stderr_not_into_json_or_csv(tmp_path, run_main, seeded_store) -> None:
    import csv
    import io
    import json

    from conftest import write

    plugin = write(tmp_path / "noisy.py", NOISY)
    for jobs in ("1", "2"):
        code, out, err = run_main("--plugin", str(plugin), "compare", "NaCl", "--models", "noisy", "--format",
                                  "json", "--jobs", jobs, store=seeded_store)
        assert code == 0, err
        assert [r["model"] for r in json.loads(out)] == ["noisy"]
        if jobs == "1":  # worker processes write to the same stderr, outside capsys
            assert "hello from import" in err and "evaluating" in err
    code, out, err = run_main("--plugin", str(plugin), "predict", "NaCl", "--model", "noisy", "--params",
                              "defaults", "--format", "csv", store=seeded_store)
    assert code == 0, err
    assert list(csv.DictReader(io.StringIO(out)))[0]["molality"] == "0.001"


def test_a_missing_plugin_file_is_an_error(tmp_path, run_main, seeded_store) -> None:
    code, out, err = run_main("--plugin", str(tmp_path / "nope.py"), "models", store=seeded_store)
    assert code == 2 and out == ""
    assert err == f"Error: --plugin {tmp_path / 'nope.py'}: no such file\n"
