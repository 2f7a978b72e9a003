"""Shared fixtures for the foundation tests: stores of each lifetime, and ways to run the CLI.

Scopes: ``memory_store`` (function, in-memory, unseeded), ``store_path`` (function, a path in
tmp_path that does not exist yet), ``seeded_store_file`` (session, one store file seeded from
the bundled data, to be copied rather than written to) and ``seeded_store`` (function, a fresh
copy of it). ``run_cli`` goes through click's CliRunner; ``run_main`` goes through
``saltbench.cli.main``, where SaltbenchError becomes ``Error: ...`` and exit status 2.
"""

from __future__ import annotations

import os
import shutil
import sqlite3
from collections.abc import Callable, Iterator
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import settings

from saltbench.store import open_store
from saltbench.store.connection import Store

REFDATA = Path(__file__).resolve().parent.parent / "refdata"

# Property tests draw the same examples on every run, so that CI is reproducible; set
# SALTBENCH_HYPOTHESIS=explore to draw new ones (and fix what they find).
settings.register_profile("reproducible", derandomize=True)
settings.register_profile("explore", derandomize=False)
settings.load_profile(os.environ.get("SALTBENCH_HYPOTHESIS", "reproducible"))

CliResult = tuple[int, str, str]


@pytest.fixture(autouse=True)
def _no_ambient_store(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> None:
    """No test may touch the user's own store, or see a store or plugins from the environment."""
    monkeypatch.delenv("SALTBENCH_STORE", raising=False)
    monkeypatch.delenv("SALTBENCH_PLUGINS", raising=False)
    monkeypatch.delenv("SALTBENCH_DISABLE_PLUGINS", raising=False)
    monkeypatch.setenv("XDG_DATA_HOME", str(tmp_path / "xdg-data"))


@pytest.fixture
def memory_store() -> Iterator[Store]:
    store = open_store(memory=True)
    yield store
    store.close()


@pytest.fixture
def store_path(tmp_path: Path) -> Path:
    return tmp_path / "store.sqlite"


@pytest.fixture(scope="session")
def seeded_store_file(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """One store seeded from the bundle per test run; tests copy it, never write to it."""
    from saltbench.api import Session

    path = tmp_path_factory.mktemp("seeded") / "seeded.sqlite"
    session = Session(path)
    session.store.close()
    return path


def copy_store(src: Path, dst: Path) -> Path:
    """Copy a (WAL-mode) store by SQLite backup, so no page still in the -wal file is lost."""
    with sqlite3.connect(src) as a, sqlite3.connect(dst) as b:
        a.backup(b)
    a.close()
    b.close()
    return dst


@pytest.fixture
def seeded_store(seeded_store_file: Path, tmp_path: Path) -> Path:
    """A private copy of the seeded store for a test that writes."""
    return copy_store(seeded_store_file, tmp_path / "seeded-copy.sqlite")


@pytest.fixture
def run_cli(store_path: Path) -> Callable[..., CliResult]:
    """Invoke ``saltbench.cli.cli`` with ``--store <tmp>``; returns (exit_code, stdout, stderr).

    Errors raised as SaltbenchError surface here as exceptions (CliRunner does not go through
    ``main()``); use ``run_main`` to test what a user sees for an error.
    """
    from saltbench.cli import cli

    def run(*args: str, store: Path | None = None) -> CliResult:
        runner = CliRunner()
        result = runner.invoke(cli, ["--store", str(store or store_path), *args],
                               catch_exceptions=False)
        return result.exit_code, result.stdout, result.stderr

    return run


@pytest.fixture
def run_main(store_path: Path, capsys: pytest.CaptureFixture[str]) -> Callable[..., CliResult]:
    """Call ``saltbench.cli.main`` with argv, as the installed command does."""
    from saltbench.cli import main

    def run(*args: str, store: Path | None = None) -> CliResult:
        capsys.readouterr()
        try:
            main(["--store", str(store or store_path), *args])
            code = 0
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
        out, err = capsys.readouterr()
        return code, out, err

    return run


def write(path: Path, text: str) -> Path:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8")
    return path


def bundle_copy(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    """Copy the bundled refdata into tmp_path and make the store sync read the copy."""
    from saltbench.store import bundled

    files = bundled.bundled_files()
    root = tmp_path / "bundle"
    out = []
    for f in files:
        rel = f.relative_to(f.parent.parent) if f.parent.name in ("datasets", "parameters") else Path(f.name)
        dst = root / rel
        dst.parent.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(f, dst)
        out.append(dst)
    monkeypatch.setattr(bundled, "bundled_files", lambda: list(out))
    return root
