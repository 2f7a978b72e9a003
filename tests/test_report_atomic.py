"""A report is written whole or not at all, and never mixed with an earlier one."""

from __future__ import annotations

from pathlib import Path

import pytest

from saltbench.api import Session, make_report
from saltbench.comparison.settings import CompareSettings


@pytest.fixture
def session(seeded_store) -> Session:
    return Session(seeded_store)


def test_a_new_report_replaces_the_old_one_whole(session, tmp_path) -> None:
    out = tmp_path / "reports" / "rep"
    first = make_report(session, ["NaCl", "KCl"], CompareSettings(models=("davies",)), folder=out)
    old_files = {p.relative_to(out) for p in out.rglob("*") if p.is_file()}
    assert any("kcl" in str(p) for p in old_files)
    make_report(session, ["NaCl"], CompareSettings(models=("davies",)), folder=out)
    new_files = {p.relative_to(out) for p in out.rglob("*") if p.is_file()}
    assert not any("kcl" in str(p) for p in new_files), "figures of the earlier run were left beside the new"
    assert first.manifest["files"].keys() != {str(p) for p in new_files}
    assert sorted(p.name for p in out.parent.iterdir()) == ["rep"]  # no partial or old folder left


def test_an_interrupted_report_leaves_nothing_that_looks_like_one(session, tmp_path, monkeypatch) -> None:
    import saltbench.report.pdf as pdf

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(pdf, "write_pdf", interrupted)
    with pytest.raises(KeyboardInterrupt):
        make_report(session, ["NaCl"], CompareSettings(models=("davies",)), folder=tmp_path / "reports" / "rep")
    assert list((tmp_path / "reports").iterdir()) == []


def test_a_folder_of_other_files_is_not_taken_over(session, tmp_path) -> None:
    from saltbench.errors import UserError

    out = tmp_path / "mine"
    out.mkdir()
    (out / "notes.txt").write_text("a user's own file", encoding="utf-8")
    with pytest.raises(UserError, match="not a saltbench report"):
        make_report(session, ["NaCl"], CompareSettings(models=("davies",)), folder=out)
    assert (out / "notes.txt").read_text(encoding="utf-8") == "a user's own file"
    assert Path(out).is_dir() and len(list(out.iterdir())) == 1
