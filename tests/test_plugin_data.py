"""A plugin can contribute data files and parameter sets, not only models (the data hooks)."""

import json
import textwrap


def _plugin(tmp_path):
    (tmp_path / "lab.sources.txt").write_text(textwrap.dedent("""\
        [lab-sheet-3]
        authors: Invented Laboratory
        title: Invented data sheet for a plugin test (not a real source)
        publisher: saltbench tests
        year: 2026
        """))
    (tmp_path / "NaCl.gamma_pm.lab-sheet-3.csv").write_text(textwrap.dedent("""\
        # saltbench dataset 1
        # electrolyte: NaCl
        # property: gamma_pm
        # temperature: 25 C
        # source: lab-sheet-3
        # table: sheet 3 (invented)
        # precision: 0.001
        # uncertainty: 0.003
        # typed: measured (INVENTED values for a plugin test)
        molality,value
        0.1,0.778
        0.5,0.681
        1.0,0.657
        """))
    (tmp_path / "lab-set.csv").write_text(textwrap.dedent("""\
        # saltbench parameters 1
        # set: lab-davies-set
        # model: huckel
        # source: lab-sheet-3
        # table: sheet 3 (invented)
        # temperature: 25 C
        # typed: from memory of nothing real; verify against the original before use in a regulated method
        electrolyte,a,b
        NaCl,4.0,0.05
        """))
    plugin = tmp_path / "labdata.py"
    plugin.write_text(textwrap.dedent(f"""\
        from pathlib import Path
        from saltbench.models import hookimpl
        HERE = Path({str(tmp_path)!r})

        @hookimpl
        def register_data_files(context):
            return [HERE / "lab.sources.txt", HERE / "NaCl.gamma_pm.lab-sheet-3.csv"]

        @hookimpl
        def register_parameter_sets(context):
            return [HERE / "lab-set.csv"]
        """))
    return plugin


def test_plugin_data_and_parameter_sets_reach_the_store(tmp_path, run_main):
    plugin = _plugin(tmp_path)
    store = tmp_path / "s.sqlite"
    code, out, err = run_main("--plugin", str(plugin), "data", "show", "NaCl", "--format", "json",
                              store=store)
    assert code == 0, err
    keys = [d["key"] for d in json.loads(out)["datasets"]]
    assert "NaCl.gamma_pm.lab-sheet-3" in keys
    code, out, err = run_main("--plugin", str(plugin), "predict", "NaCl", "--model", "huckel",
                              "--params", "lab-davies-set", "--m", "0.1", "--format", "json",
                              store=store)
    assert code == 0, err
    row = json.loads(out)[0]
    # the plugin's set (a = 4.0 Å, b = 0.05 kg/mol), not the model defaults, was used
    from saltbench.chemistry.electrolyte import parse_formula
    from saltbench.models.discovery import build_registry
    from saltbench.models.evaluate import evaluate

    model = build_registry().model("huckel")
    expected = evaluate(model, parse_formula("NaCl"), [0.1], {"a": 4.0, "b": 0.05})
    assert abs(row["ln_gamma_pm"] - float(expected.ln_gamma_pm[0])) < 1e-12
    other = evaluate(model, parse_formula("NaCl"), [0.1], {"a": 5.0, "b": 0.0})
    assert abs(row["ln_gamma_pm"] - float(other.ln_gamma_pm[0])) > 1e-4
