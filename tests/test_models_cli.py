"""`saltbench models`, `plugins` and `predict`: discovery through entry points, drop-ins, refusals."""

from __future__ import annotations

import json
import subprocess
import sys

BUILT_IN = {"debye-huckel-limiting", "extended-debye-huckel", "extended-debye-huckel-ions", "guntelberg",
            "huckel", "davies", "truesdell-jones", "b-dot", "bromley", "bromley-ions", "meissner", "pitzer",
            "sit", "stokes-robinson"}


def test_models_lists_every_built_in_through_entry_points(run_main):
    code, out, err = run_main("models", "--format", "json")
    assert code == 0, err
    records = {r["id"]: r for r in json.loads(out)}
    assert BUILT_IN <= set(records)
    for r in records.values():
        assert r["citation"] and r["plugin"] and isinstance(r["parameters"], list)
    # the built-ins come through the entry-point group, like any third-party plugin
    from importlib import metadata

    eps = {ep.value for ep in metadata.entry_points(group="saltbench.plugins")}
    assert {f"saltbench.plugins.{records[m]['plugin']}" for m in BUILT_IN} <= eps


def test_a_broken_plugin_is_named_and_the_rest_keep_working(tmp_path, run_main):
    bad = tmp_path / "oops.py"
    bad.write_text("import not_a_module_anywhere\n")
    code, out, err = run_main("--plugin", str(bad), "models", "--format", "json")
    assert code == 0
    assert "plugin oops" in err and "not_a_module_anywhere" in err
    assert BUILT_IN <= {r["id"] for r in json.loads(out)}
    code, out, err = run_main("--plugin", str(bad), "plugins", "--format", "json")
    status = {r["name"]: r["status"] for r in json.loads(out)}
    assert status["oops"].startswith("problem: failed to import")
    assert status["pitzer"] == "loaded"


def test_disable_plugin(run_main):
    code, out, _ = run_main("--disable-plugin", "pitzer", "models", "--format", "json")
    assert code == 0
    assert "pitzer" not in {r["id"] for r in json.loads(out)}


def test_predict_records_and_published_constant(seeded_store, run_main):
    code, out, err = run_main("predict", "NaCl", "--model", "pitzer", "--m", "0.1,1,3", "--format", "json",
                              store=seeded_store)
    assert code == 0, err
    rows = json.loads(out)
    assert [r["molality"] for r in rows] == [0.1, 1.0, 3.0]
    for r in rows:
        assert {"molality", "gamma_pm", "ln_gamma_pm", "osmotic", "water_activity"} <= set(r)
        assert abs(r["gamma_pm"] - 2.718281828459045 ** r["ln_gamma_pm"]) < 1e-12
    # Robinson and Stokes (1959), Appendix 8.10, NaCl at 1 mol/kg: gamma± = 0.657 (from memory);
    # the published Pitzer-Mayorga set with its own A_phi = 0.392 reproduces it within 0.003.
    assert abs(rows[1]["gamma_pm"] - 0.657) < 0.003
    code, out2, _ = run_main("predict", "NaCl", "--model", "pitzer", "--m", "0.1,1,3", "--format", "json",
                             "--current-constant", store=seeded_store)
    # today's A_phi (0.3913 vs 0.392) changes gamma± slightly, in the expected direction (larger)
    assert json.loads(out2)[0]["gamma_pm"] > rows[0]["gamma_pm"]


def test_predict_refuses_unsupported_charge_types_and_marks_extrapolation(seeded_store, run_main):
    code, out, err = run_main("predict", "MgSO4", "--model", "stokes-robinson", store=seeded_store)
    assert code == 2
    assert err.startswith("Error: model stokes-robinson does not support 2-2 electrolytes")
    code, out, err = run_main("predict", "NaCl", "--model", "davies", "--m", "0.1,2", "--format", "json",
                              store=seeded_store)
    assert code == 0
    rows = json.loads(out)
    assert [r["extrapolated"] for r in rows] == [False, True]
    assert "Warning:" in err and "extrapolation" in err
    code, _, err = run_main("predict", "NaCl", "--model", "davies", "--m", "0.1,-1", store=seeded_store)
    assert code == 2 and "positive" in err


def test_new_model_template_passes_its_own_test(tmp_path, run_main):
    code, out, err = run_main("new-model", "Our Lab Model", "--out", str(tmp_path / "m"))
    assert code == 0, err
    files = sorted(p.name for p in (tmp_path / "m").iterdir())
    assert files == ["our_lab_model.py", "test_our_lab_model.py"]
    proc = subprocess.run([sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider",
                           str(tmp_path / "m" / "test_our_lab_model.py")], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    code, out, err = run_main("--plugin", str(tmp_path / "m" / "our_lab_model.py"), "models", "--format", "json")
    assert "our-lab-model" in {r["id"] for r in json.loads(out)}
    code, out, err = run_main("new-model", "Pkg Model", "--package", "--out", str(tmp_path / "p"))
    assert code == 0, err
    assert (tmp_path / "p" / "pkg-model" / "pyproject.toml").read_text().count('"saltbench.plugins"') == 1
    proc = subprocess.run([sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider",
                           str(tmp_path / "p" / "pkg-model" / "test_pkg_model.py")], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stdout + proc.stderr
