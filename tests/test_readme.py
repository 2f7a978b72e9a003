"""The README shows real command output: regenerate it when the output changes.

Fix a failure with ``python tests/readme_blocks.py --update`` and review the diff.
"""

from readme_blocks import README, blocks, render


def test_readme_blocks_are_current():
    text = README.read_text(encoding="utf-8")
    assert len(blocks(text)) >= 5
    assert render(text) == text, "README output blocks are stale: run python tests/readme_blocks.py --update"


def test_readme_has_exactly_the_two_setup_commands():
    text = README.read_text(encoding="utf-8")
    setup = text.split("## Set up", 1)[1].split("\n## ", 1)[0]
    commands = [line for line in setup.splitlines() if line.startswith(("python3 ", "bash "))]
    assert commands == [
        "python3 -m venv .venv && .venv/bin/python -m pip install . && .venv/bin/saltbench compare --all",
        "bash .ci/run",
    ]


def test_readme_slip_figures_come_from_the_benchmark_json():
    import readme_slips

    text = README.read_text(encoding="utf-8")
    assert readme_slips.BLOCK.search(text), "the README keeps a table of slips caught"
    assert readme_slips.render(text) == text, "slip figures are stale: run python tests/readme_slips.py --update"


def test_readme_counts_of_the_bundle_are_those_of_the_bundle():
    """The sentence in "What is bundled" that counts electrolytes and points holds to the files."""
    import re

    from conftest import REFDATA

    files = list((REFDATA / "datasets").glob("*.csv"))
    electrolytes = {p.name.split(".")[0] for p in files}
    remembered = sum(len([ln for ln in p.read_text(encoding="utf-8").splitlines()[1:]
                          if ln and not ln.startswith(("#", "molality"))])
                     for p in files if "# typed: from memory of" in p.read_text(encoding="utf-8"))
    section = README.read_text(encoding="utf-8").split("## What is bundled", 1)[1].split("\n## ", 1)[0]
    m = re.search(r"(\d+) electrolytes in (\d+) datasets; (\d+) of their (\d+) points", section)
    assert m, "the bundle section states its counts"
    points = sum(len([ln for ln in p.read_text(encoding="utf-8").splitlines()[1:]
                      if ln and not ln.startswith(("#", "molality"))]) for p in files)
    assert [int(g) for g in m.groups()] == [len(electrolytes), len(files), remembered, points]


def test_readme_counts_of_recommendations_are_those_of_a_fresh_comparison(seeded_store_file):
    """The sentence under "Choosing a model" counting recommendations holds for the bundle."""
    import re
    import shutil
    import tempfile
    from collections import Counter
    from pathlib import Path

    from saltbench.api import Session, compare
    from saltbench.comparison.settings import CompareSettings

    section = README.read_text(encoding="utf-8").split("### Choosing a model", 1)[1].split("\n### ", 1)[0]
    m = re.search(r"(\d+) of the (\d+) bundled electrolytes get a recommendation; for (\d+) no model "
                  r"holds over the\s+whole range of their data, and (\d+) have too few points", section)
    assert m, "the section counts the bundle's recommendations"
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "store.sqlite"
        shutil.copy(seeded_store_file, path)
        s = Session(path)
        names = list(s.electrolytes().electrolyte)
        kinds = Counter(r.kind for r in compare(s, names, CompareSettings(), jobs=2).recommendations.values())
    assert [int(g) for g in m.groups()] == [kinds["recommended"], len(names), kinds["none-holds"],
                                            kinds["too-few-points"]]
