"""What users see today stays what they see: compare --all, predict for every model on NaCl, CaCl2
and MgSO4, and a report's results, against tests/golden/ (numbers to 1e-9 relative, verdicts,
flags and recommendations exactly). A change made on purpose regenerates them with
``python tests/golden_outputs.py --update`` and says why in its commit."""

from golden_outputs import differences, load, produce


def test_outputs_match_the_golden_files() -> None:
    golden = load()
    assert set(golden) == {"compare-all", "predict", "report-results"}
    assert len(golden["compare-all"]) > 1000 and len(golden["predict"]) >= 30
    found = differences(golden, produce())
    assert not found, "\n".join(found[:30])


def test_the_comparison_can_fail() -> None:
    golden = load()
    changed = [dict(r) for r in golden["compare-all"]]
    changed[0]["rms_ln_gamma"] = changed[0]["rms_ln_gamma"] * (1 + 1e-6)
    changed[1]["verdict"] = "something else"
    found = differences(golden["compare-all"], changed)
    assert len(found) == 2
