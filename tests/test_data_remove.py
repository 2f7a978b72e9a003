"""The same points are not stored twice, and a user's dataset can be removed in one transaction."""

from __future__ import annotations

from conftest import REFDATA, write

BIB = """[harbour-lab-2026]
authors: Harbour Works Laboratory
title: Invented activity runs on sodium chloride (test scenario, invented values)
publisher: saltbench test scenario
year: 2026
"""
OWN = """# saltbench dataset 1
# electrolyte: NaCl
# property: gamma_pm
# temperature: 25 C
# source: harbour-lab-2026
# table: run sheet 4 (invented)
# precision: 0.001
# uncertainty: 0.004
# typed: measured by the invented Harbour Works laboratory (test scenario, invented values)
molality,value
0.1,0.779
0.3,0.711
0.5,0.680
1.0,0.658
"""


def _count(run_main, store) -> int:
    import json

    code, out, _ = run_main("data", "show", "NaCl", "--format", "json", store=store)
    return len(json.loads(out)["datasets"])


def test_a_bundled_table_added_again_under_another_name_is_refused(run_main, seeded_store, tmp_path) -> None:
    copy = write(tmp_path / "my-nacl.csv", (REFDATA / "datasets" / "NaCl.gamma_pm.crc-acids-bases-salts.csv")
                 .read_text(encoding="utf-8"))
    before = _count(run_main, seeded_store)
    code, out, err = run_main("data", "add", str(REFDATA / "sources.txt"), str(copy), store=seeded_store)
    assert code == 2 and err.count("\n") == 1
    assert "my-nacl.csv" in err and "the same points as dataset NaCl.gamma_pm.crc-acids-bases-salts" in err
    assert _count(run_main, seeded_store) == before


def test_own_data_added_twice_is_refused_and_can_be_removed(run_main, seeded_store, tmp_path) -> None:
    bib, own = write(tmp_path / "lab.sources.txt", BIB), write(tmp_path / "run4.csv", OWN)
    twin = write(tmp_path / "run4-again.csv", OWN)
    assert run_main("data", "add", str(bib), str(own), store=seeded_store)[0] == 0
    code, _, err = run_main("data", "add", str(twin), store=seeded_store)
    assert code == 2 and "the same points as dataset run4" in err
    before = _count(run_main, seeded_store)
    # a fit to it depends on it: removal is refused, nothing changes
    assert run_main("fit", "NaCl", "--model", "davies", "--data", "run4", "--name", "run4-fit",
                    store=seeded_store)[0] == 0
    code, _, err = run_main("data", "remove", "run4", store=seeded_store)
    assert code == 2 and "parameter set run4-fit" in err and _count(run_main, seeded_store) == before
    code, out, err = run_main("data", "remove", "run4", "--force", store=seeded_store)
    assert code == 0 and "removed dataset run4" in out and "removed parameter set run4-fit" in out
    assert _count(run_main, seeded_store) == before - 1
    code, _, err = run_main("params", "run4-fit", store=seeded_store)
    assert code == 2


def test_bundled_datasets_are_not_removed(run_main, seeded_store) -> None:
    code, _, err = run_main("data", "remove", "NaCl.gamma_pm.crc-acids-bases-salts", store=seeded_store)
    assert code == 2 and "bundled" in err
