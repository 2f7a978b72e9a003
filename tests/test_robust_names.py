"""File names derived from user text cannot leave the output folder (issue 7, item 11).

What a path may do is POSIX's: "/" separates components, ".." names the parent, a symbolic
link is followed on resolution, NUL cannot appear in a path (POSIX.1-2017, Base Definitions,
3.271 "Pathname" and 4.13 "Pathname Resolution"; from memory of that standard). Windows also
separates on "\\" (common practice, no source). The report-title case is tested with the report.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from saltbench.errors import UserError
from saltbench.scaffold.names import inside


def _all_files(root: Path) -> set[Path]:
    return {p for p in root.rglob("*") if p.is_file()}


# names a user might type, some hostile; each must give files inside --out or a one-line refusal
HOSTILE = ["../../x", "../../../../tmp/escape", "/etc/passwd", "a/b/c", "..", ".", "C:\\Windows\\x",
           "..\\..\\x", "évian model", "Modèle ünïcode", "x\0y", "~/.bashrc", "$(touch pwned)",
           "name\nwith newline", "——", "日本語", "   ", "-rf", "con", "9lives"]


@pytest.mark.parametrize("package", [False, True], ids=["file", "package"])
@pytest.mark.parametrize("name", HOSTILE, ids=[repr(n) for n in HOSTILE])
def test_new_model_writes_only_inside_the_output_folder(name: str, package: bool, tmp_path: Path,
                                                        run_main, monkeypatch: pytest.MonkeyPatch) -> None:
    work = tmp_path / "deep" / "er" / "work"
    out = work / "out"
    work.mkdir(parents=True)
    monkeypatch.chdir(work)
    before = _all_files(tmp_path)
    # "--" so that a name such as "-rf" is taken as the name, as a user would have to type it
    args = ["new-model", "--out", str(out)] + (["--package"] if package else []) + ["--", name]
    code, stdout, err = run_main(*args)
    written = _all_files(tmp_path) - before
    outside = [p for p in written if out.resolve() not in p.resolve().parents]
    assert outside == [], outside
    if code == 0:
        assert written, "reported success but wrote nothing"
        reported = {Path(line.removeprefix("wrote ")).resolve()
                    for line in stdout.splitlines() if line.startswith("wrote ")}
        assert reported == {p.resolve() for p in written}
        for p in written:
            rel = p.resolve().relative_to(out.resolve())
            assert all(part.isascii() and ".." not in part and "\0" not in part for part in rel.parts)
    else:
        assert code == 2, (code, err)
        assert written == set()
        assert err.startswith("Error: ") and err.count("\n") == 1, err
        assert "Traceback" not in err


def test_a_name_with_no_letters_is_refused_not_turned_into_an_empty_file(tmp_path: Path, run_main) -> None:
    code, out, err = run_main("new-model", "../..", "--out", str(tmp_path / "out"))
    assert (code, out) == (2, "")
    assert err.startswith("Error: model name '../..' must contain letters and start with a letter")
    assert list((tmp_path / "out").rglob("*")) == []


@pytest.mark.parametrize("bad", ["../x", "../../x", "a/b", "/abs", "a\\b", "..\\x", "", ".", "..",
                                 "x\0y", "sub/../../x"])
def test_inside_refuses_anything_that_is_not_a_plain_name(bad: str, tmp_path: Path) -> None:
    with pytest.raises(UserError, match="refusing file name"):
        inside(tmp_path, bad)


@pytest.mark.parametrize("good", ["report.md", "résumé.html", "日本語.csv", "..hidden", "a..b", "-x"])
def test_inside_keeps_a_plain_name_in_the_folder(good: str, tmp_path: Path) -> None:
    target = inside(tmp_path, good)
    assert target.parent == tmp_path.resolve()
    assert target.name == good


def test_inside_refuses_a_symlink_that_points_out_of_the_folder(tmp_path: Path) -> None:
    folder = tmp_path / "out"
    folder.mkdir()
    (tmp_path / "elsewhere").mkdir()
    os.symlink(tmp_path / "elsewhere" / "target.md", folder / "innocent.md")
    with pytest.raises(UserError, match="it would be written outside"):
        inside(folder, "innocent.md")


HOSTILE_NAMES = [
    'Evil"; import os; os.system("echo PWNED") #',
    "Quote's model",
    'Back\\slash "model"',
    "Line\nbreak model",
    "Braces {cls} model",
    '"""triple""" model',
]


@pytest.mark.parametrize("name", HOSTILE_NAMES)
def test_new_model_names_never_become_code(name: str, tmp_path) -> None:
    import ast
    import subprocess
    import sys

    from saltbench.scaffold.writer import write_model_template

    files = write_model_template(name, tmp_path)
    for f in files:
        ast.parse(f.read_text(encoding="utf-8"))  # every generated file is valid Python
    model_file = next(f for f in files if not f.name.startswith("test_"))
    proc = subprocess.run([sys.executable, "-c", f"import runpy; m = runpy.run_path({str(model_file)!r}); "
                           "print(m['register_models'](context=None)[0].name)"],
                          capture_output=True, text=True, cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr
    assert "PWNED" not in proc.stdout.replace(name, "")
    assert proc.stdout.rstrip("\n") == name  # the display name survives, exactly, as data


def test_generated_class_names_do_not_repeat_model() -> None:
    from saltbench.scaffold.names import model_names

    assert model_names("Our Lab Model")[2] == "OurLabModel"
    assert model_names("Kestrel")[2] == "KestrelModel"


@pytest.mark.parametrize("name", HOSTILE_NAMES)
def test_new_model_package_metadata_stays_valid_toml(name: str, tmp_path) -> None:
    import tomllib

    from saltbench.scaffold.writer import write_model_template

    files = write_model_template(name, tmp_path, package=True)
    meta = tomllib.loads(next(f for f in files if f.name == "pyproject.toml").read_text(encoding="utf-8"))
    assert meta["project"]["description"].startswith(name)
