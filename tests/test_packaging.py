"""The wheel carries the bundled data and works outside the source tree.

Builds the wheel, installs it with --no-deps into a fresh venv that borrows the system's
dependencies (--system-site-packages, so nothing is downloaded), and runs the installed
``saltbench`` from an unrelated working directory.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parent.parent


#: What the wheel is built from; copied first so the build leaves nothing in the shared tree.
SOURCE_ITEMS = ("pyproject.toml", "README.md", "LICENSE", "harness", "plugins", "refdata")


def _build_backend_present() -> bool:
    """True when the build requirements of pyproject.toml are installed here already."""
    from importlib import metadata

    try:
        major = int(metadata.version("setuptools").split(".")[0])
        metadata.version("wheel")
    except metadata.PackageNotFoundError:
        return False
    return major >= 70


@pytest.fixture(scope="module")
def wheel(tmp_path_factory: pytest.TempPathFactory) -> Path:
    src = tmp_path_factory.mktemp("src")
    for item in SOURCE_ITEMS:
        p = REPO / item
        if p.is_dir():
            shutil.copytree(p, src / item, ignore=shutil.ignore_patterns("__pycache__", "*.pyc"))
        elif p.exists():
            shutil.copy2(p, src / item)
    out = tmp_path_factory.mktemp("wheel")
    env = {**os.environ, "PIP_DISABLE_PIP_VERSION_CHECK": "1"}
    # Without the build requirements at hand pip fetches them (setuptools, wheel) from the
    # package index into an isolated build environment, as any user's install would.
    isolation = ["--no-build-isolation"] if _build_backend_present() else []
    run = subprocess.run([sys.executable, "-m", "pip", "wheel", str(src), "--no-deps", *isolation,
                          "-w", str(out), "-q"], check=False, cwd=src, env=env, capture_output=True, text=True)
    assert run.returncode == 0, run.stdout[-3000:] + run.stderr[-3000:]
    wheels = list(out.glob("saltbench-*.whl"))
    assert len(wheels) == 1, wheels
    return wheels[0]


def test_wheel_holds_the_bundled_data(wheel: Path) -> None:
    names = set(zipfile.ZipFile(wheel).namelist())
    bundled = sorted(p.relative_to(REPO / "refdata").as_posix()
                     for p in (REPO / "refdata").rglob("*")
                     if p.suffix in (".csv", ".txt") and not {"examples", "tools"} & set(p.parts))
    assert bundled, "no bundled data found in the source tree"
    missing = [b for b in bundled if f"saltbench/refdata/{b}" not in names]
    assert not missing
    # the transcription script and its lists are the curators', not the product's
    assert not any(n.startswith("saltbench/refdata/tools/") for n in names)
    assert "saltbench/py.typed" in names
    assert not any(n.startswith(("tests/", "harness/")) for n in names)


def test_installed_wheel_runs_from_elsewhere(wheel: Path, tmp_path: Path) -> None:
    # The wheel goes into a folder of its own, run by this very interpreter (whose environment
    # holds the dependencies): a venv with --system-site-packages would see the base Python's
    # packages, not this environment's, and pass or fail with whatever the machine has there.
    target = tmp_path / "installed"
    env = {k: v for k, v in os.environ.items() if k not in ("SALTBENCH_STORE", "SALTBENCH_PLUGINS")}
    env.update(PIP_NO_INDEX="1", PIP_DISABLE_PIP_VERSION_CHECK="1", XDG_DATA_HOME=str(tmp_path / "xdg"),
               PYTHONPATH=str(target))
    subprocess.run([sys.executable, "-m", "pip", "install", "--no-deps", "--target", str(target), "-q", str(wheel)],
                   check=True, env=env, capture_output=True, text=True)
    py = sys.executable

    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    where = subprocess.run(
        [str(py), "-c", ("import saltbench, saltbench.refdata, pathlib; "
                         "print(pathlib.Path(saltbench.refdata.__file__).resolve()); "
                         "print(pathlib.Path(saltbench.__file__).resolve())")],
        check=True, env=env, cwd=elsewhere, capture_output=True, text=True).stdout.split()
    for p in where:
        assert Path(p).is_relative_to(target.resolve()), p
        assert not Path(p).is_relative_to(REPO), p

    store = tmp_path / "store.sqlite"
    run = subprocess.run([str(py), "-m", "saltbench", "--store", str(store), "data", "list", "--format", "json"],
                         check=False, env=env, cwd=elsewhere, capture_output=True, text=True)
    assert run.returncode == 0, run.stderr
    rows = json.loads(run.stdout)
    names = {r["electrolyte"] for r in rows}
    # Bundled with both gamma± and osmotic data in refdata/datasets (see test_data_cli).
    assert {"NaCl", "KCl", "CaCl2", "MgSO4"} <= names
    assert all(r["citations"] for r in rows)
    assert store.exists()


def test_the_declared_licence_has_its_text() -> None:
    import tomllib

    meta = tomllib.loads((REPO / "pyproject.toml").read_text(encoding="utf-8"))
    assert meta["project"]["license"] == {"text": "MIT"}
    text = (REPO / "LICENSE").read_text(encoding="utf-8")
    assert text.startswith("MIT License") and "WITHOUT WARRANTY OF ANY KIND" in text
