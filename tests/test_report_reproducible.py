"""Reproducibility and the output folder: the same report twice on the same store differs only in
its time stamp; ``--from MANIFEST`` re-runs it and says the results agree (and says so when they
do not); a title cannot steer files out of the output folder."""

from __future__ import annotations

import json
import shutil
import subprocess
from pathlib import Path

import pytest
from conftest import copy_store
from test_report_common import poppler, run

from saltbench.errors import UserError

TITLE = "../../etc"
ARGS = ("report", "NaCl", "--models", "davies,pitzer", "--title", TITLE, "--jobs", "1")
STAMPED = ("report.html", "report.md")  # text files that carry the time stamp


@pytest.fixture(scope="module")
def runs(tmp_path_factory: pytest.TempPathFactory, seeded_store_file: Path) -> dict:
    """The same command twice, from the same folder, on the same store."""
    root = tmp_path_factory.mktemp("repro")
    store = copy_store(seeded_store_file, tmp_path_factory.mktemp("repro-store") / "store.sqlite")
    work = root / "work"
    work.mkdir()
    mp = pytest.MonkeyPatch()
    mp.chdir(work)
    try:
        code, out, err = run(store, *ARGS)
        assert code == 0, out + err
        first = root / "first"
        shutil.copytree(work / "reports" / "etc", first)
        code, out, err = run(store, *ARGS)
        assert code == 0, out + err
    finally:
        mp.undo()
    return {"store": store, "work": work, "first": first, "second": work / "reports" / "etc"}


def _stamp(folder: Path) -> str:
    return json.loads((folder / "manifest.json").read_text(encoding="utf-8"))["created"]


def test_title_cannot_leave_the_output_folder(runs: dict) -> None:
    work = runs["work"]
    files = sorted(p for p in work.rglob("*") if p.is_file())
    assert files and all(p.is_relative_to(work / "reports" / "etc") for p in files)
    assert not (work.parent / "etc").exists() and not (work.parent.parent / "etc").exists()


@pytest.mark.parametrize("title", ["../../etc", "..", "/etc/passwd", "..\\..\\x", "a/../../b", "\0"])
def test_default_folder_stays_under_reports(tmp_path: Path, title: str) -> None:
    from saltbench.report.writer import default_folder

    folder = default_folder(title, ["NaCl"], base=tmp_path)
    assert folder.parent == (tmp_path / "reports").resolve()
    assert folder.name and "/" not in folder.name and ".." not in folder.name


def test_inside_refuses_escaping_names(tmp_path: Path) -> None:
    from saltbench.scaffold.names import inside

    for bad in ("../x.png", "..", "a/b.png", ""):
        with pytest.raises(UserError):
            inside(tmp_path, bad)


def test_same_report_twice_differs_only_in_time_stamp(runs: dict) -> None:
    a, b = runs["first"], runs["second"]
    ta, tb = _stamp(a), _stamp(b)
    names = sorted(p.relative_to(a).as_posix() for p in a.rglob("*") if p.is_file())
    assert names == sorted(p.relative_to(b).as_posix() for p in b.rglob("*") if p.is_file())
    for name in names:
        if name.endswith((".png", ".csv")):
            assert (a / name).read_bytes() == (b / name).read_bytes(), name
    for name in STAMPED:
        text_a = (a / name).read_text(encoding="utf-8")
        text_b = (b / name).read_text(encoding="utf-8")
        assert ta in text_a and tb in text_b, name  # the stamp is there, so masking it means something
        assert text_a.replace(ta, "<time>") == text_b.replace(tb, "<time>"), name
    pdf = [subprocess.run([poppler("pdftotext"), "-layout", str(f / "report.pdf"), "-"], check=True,
                          capture_output=True, text=True).stdout for f in (a, b)]
    assert ta in pdf[0]
    assert pdf[0].replace(ta, "<time>") == pdf[1].replace(tb, "<time>")
    ma = json.loads((a / "manifest.json").read_text(encoding="utf-8"))
    mb = json.loads((b / "manifest.json").read_text(encoding="utf-8"))
    for m in (ma, mb):
        m.pop("created")
        for name in (*STAMPED, "report.pdf"):
            m["files"].pop(name)
    assert ma == mb


def test_from_manifest_reruns_and_agrees(runs: dict, tmp_path: Path) -> None:
    code, out, err = run(runs["store"], "report", "--from", str(runs["first"] / "manifest.json"),
                         "--out", str(tmp_path / "rerun"), "--jobs", "1")
    assert code == 0, out + err
    assert "Results agree with the manifest." in out
    assert (tmp_path / "rerun" / "report.html").is_file()


def test_from_manifest_says_when_results_differ(runs: dict, tmp_path: Path) -> None:
    manifest = json.loads((runs["first"] / "manifest.json").read_text(encoding="utf-8"))
    rec = next(r for r in manifest["results"]["records"] if r["model"] == "pitzer")
    rec["rms_ln_gamma"] *= 1.01  # as if an earlier run had found a 1 % larger misfit
    edited = tmp_path / "manifest.json"
    edited.write_text(json.dumps(manifest), encoding="utf-8")
    code, out, _ = run(runs["store"], "report", "--from", str(edited), "--out", str(tmp_path / "rerun"),
                       "--jobs", "1")
    assert code == 1
    assert "Results differ from the manifest in 1 place(s):" in out
    assert "NaCl pitzer.rms_ln_gamma" in out


def test_from_refuses_extra_electrolytes_or_options(runs: dict, run_main) -> None:
    code, _, err = run_main("report", "NaCl", "--from", str(runs["first"] / "manifest.json"),
                            store=runs["store"])
    assert code == 2
    assert err.strip() == ("Error: --from re-runs the manifest's own electrolytes and options; give no "
                           "ELECTROLYTE and no comparison option with it (only --out and --jobs)")


def test_time_stamp_follows_source_date_epoch(monkeypatch: pytest.MonkeyPatch) -> None:
    from saltbench.report.writer import time_stamp

    # the Unix epoch, 1970-01-01 00:00:00 UTC (POSIX.1-2017, sec. 4.16; from memory of the standard)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "0")
    assert time_stamp() == "1970-01-01T00:00:00Z"
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "86400")  # one day later (common practice, no source)
    assert time_stamp() == "1970-01-02T00:00:00Z"


def test_pdf_bytes_repeat_and_carry_no_creation_date(tmp_path: Path) -> None:
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    from saltbench.report.document import Document, Figure, Paragraph, Section, Table
    from saltbench.report.figures import render_png
    from saltbench.report.pdf import write_pdf

    fig, ax = plt.subplots(figsize=(3, 2))
    ax.plot([0, 1, 2], [1, 0.8, 0.9])
    png = render_png(fig)
    doc = Document("Two runs", "fixed", "fixed", [Section("s", "1 One", [
        Paragraph("A paragraph with $dollars$ kept as typed."),
        Table("t", "A table", ["a", "b"], [["x", "1.5"], ["y", "2"]], [False, True]),
        Figure("f", "A figure", "alt", png)])])
    write_pdf(doc, tmp_path / "a.pdf", "0")
    write_pdf(doc, tmp_path / "b.pdf", "0")
    a, b = (tmp_path / "a.pdf").read_bytes(), (tmp_path / "b.pdf").read_bytes()
    assert a == b
    assert b"/CreationDate" not in a
    text = subprocess.run([poppler("pdftotext"), str(tmp_path / "a.pdf"), "-"], check=True,
                          capture_output=True, text=True).stdout
    assert "A paragraph with $dollars$ kept as typed." in text
