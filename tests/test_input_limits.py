"""Files beyond the limits that fit the domain are refused in one line before they are read whole."""

from __future__ import annotations

from conftest import write

from saltbench.curation.blocks import MAX_FILE_BYTES, MAX_ROWS

HEAD = """# saltbench dataset 1
# electrolyte: NaCl
# property: gamma_pm
# temperature: 25 C
# source: big-1
# table: invented
# precision: 0.0001
# uncertainty: 0.003
# typed: measured at an invented bench (invented values)
molality,value
"""
BIB = "[big-1]\nauthors: A. Operator\ntitle: Invented long run (invented values)\npublisher: test\nyear: 2026\n"


def _rows(n: int) -> str:
    return "".join(f"{0.001 * (i + 1):.4f},{0.9 - 0.0001 * i:.4f}\n" for i in range(n))


def test_a_table_over_the_row_limit_is_refused_at_the_first_row_too_many(run_main, seeded_store, tmp_path) -> None:
    bib = write(tmp_path / "b.sources.txt", BIB)
    data = write(tmp_path / "long.csv", HEAD + _rows(MAX_ROWS + 1))
    code, out, err = run_main("data", "add", str(bib), str(data), store=seeded_store)
    assert code == 2 and err.count("\n") == 1
    assert f"long.csv:{10 + MAX_ROWS + 1}:" in err and f"more than {MAX_ROWS} rows" in err
    ok = write(tmp_path / "at-limit.csv", HEAD + _rows(MAX_ROWS))
    code, out, err = run_main("data", "add", str(bib), str(ok), store=seeded_store)
    assert code == 0, err


def test_a_file_over_the_size_limit_is_refused_unread(run_main, seeded_store, tmp_path) -> None:
    bib = write(tmp_path / "b.sources.txt", BIB)
    data = write(tmp_path / "huge.csv", HEAD + "# padding\n" * (MAX_FILE_BYTES // 10 + 1) + _rows(3))
    code, out, err = run_main("data", "add", str(bib), str(data), store=seeded_store)
    assert code == 2 and err.count("\n") == 1 and "MB; saltbench reads data files up to" in err
