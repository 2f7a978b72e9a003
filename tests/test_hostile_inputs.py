"""Inputs that used to get through: each is now a one-line error with exit status 2."""

from __future__ import annotations

import pytest


@pytest.mark.parametrize("args, words", [
    (("compare", "NaCl", "--tol", "nan", "--jobs", "1"), "--tol"),
    (("compare", "NaCl", "--tol", "inf", "--jobs", "1"), "--tol"),
    (("compare", "NaCl", "--folds", "1000", "--jobs", "1"), "--folds"),
    (("predict", "NaCl", "--model", "davies", "--m", "0.1,,1"), "empty item"),
    (("predict", "NaCl", "--model", "davies", "--m", "1e308"), "beyond any aqueous solution"),
])
def test_refused_in_one_line(run_main, seeded_store, args, words) -> None:
    code, out, err = run_main(*args, store=seeded_store)
    assert code == 2 and out == "", err
    assert err.count("\n") == 1 and err.startswith("Error: ") and words in err


def test_a_plot_into_a_missing_folder_is_refused(run_main, seeded_store, tmp_path) -> None:
    from conftest import write

    bib = write(tmp_path / "nb.sources.txt", "[nb-1]\nauthors: A. Operator\ntitle: Bench notes (test entry)\n"
                "publisher: test bench\nyear: 2026\n")
    rows = "".join(f"{m},{e}\n" for m, e in [(0.001, 579.1), (0.002, 544.5), (0.005, 499.0), (0.01, 464.5),
                                              (0.02, 430.6)])
    data = write(tmp_path / "hcl-emf.csv", "# saltbench readings 1\n# kind: emf\n# electrolyte: HCl\n"
                 "# temperature: 25 C\n# source: nb-1\n# typed: measured by the test operator (invented values)\n"
                 "# cell: Pt | H2 | HCl(m) | AgCl | Ag\n# e_standard: extrapolate\n# u_emf: 0.02 mV\n"
                 "# u_molality: 0.05 %\nmolality,emf_mv\n" + rows)
    code, _, err = run_main("readings", "add", str(bib), str(data), store=seeded_store)
    assert code == 0, err
    code, out, err = run_main("readings", "show", "hcl-emf", "--plot", str(tmp_path / "no" / "such" / "p.png"),
                              store=seeded_store)
    assert code == 2 and err.count("\n") == 1 and "no folder" in err


def test_workers_never_outnumber_the_work(monkeypatch) -> None:
    from concurrent import futures

    from saltbench.comparison import runner

    seen = []

    class Spy(futures.ProcessPoolExecutor):
        def __init__(self, max_workers=None, **kw):
            seen.append(max_workers)
            super().__init__(max_workers=max_workers, **kw)

    monkeypatch.setattr(runner, "ProcessPoolExecutor", Spy)
    from saltbench.api import Session, compare
    from saltbench.comparison.settings import CompareSettings

    s = Session(seed=True)
    compare(s, ["NaCl", "KCl"], CompareSettings(models=("davies",)), jobs=1000)
    assert seen and seen[0] <= min(2, runner.default_jobs())
