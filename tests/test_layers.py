"""The import layers: the linter's contract, DEVELOPERS.md's diagram of it, and the plugins.

The contract is ``[tool.importlinter]`` in pyproject.toml (import-linter's own format). Layering
is a fact of this code base, not of the outside world: common practice, no source.
"""

from __future__ import annotations

import ast
import re
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
PREFIX = "saltbench."


def _contracts() -> list[dict]:
    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["importlinter"]
    assert config["root_package"] == "saltbench"
    # every exemption must be argued beside it; there are none, and a new one must come here first
    assert all("ignore_imports" not in c for c in config["contracts"])
    return config["contracts"]


def _layers() -> list[list[str]]:
    """The layers contract, top first, each layer as its modules without the ``saltbench.``."""
    (contract,) = [c for c in _contracts() if c["type"] == "layers"]
    out = []
    for layer in contract["layers"]:
        names = [n.strip() for n in layer.split("|")]
        assert all(n.startswith(PREFIX) for n in names), layer
        out.append([n[len(PREFIX):] for n in names])
    return out


def _developers() -> str:
    return (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")


def _diagram() -> list[list[str]]:
    """The layer list in DEVELOPERS.md, "Layout", between its markers."""
    m = re.search(r"<!-- layers:[^\n]*-->\n```\n(.*?)```\n<!-- end layers -->", _developers(), re.S)
    assert m, "DEVELOPERS.md, 'Layout': the layer list between '<!-- layers: ... -->' and '<!-- end layers -->'"
    return [[n.strip() for n in line.split("|")] for line in m.group(1).splitlines() if line.strip()]


def _render(layers: list[list[str]]) -> str:
    return "\n".join(" | ".join(layer) for layer in layers)


def test_developers_diagram_lists_the_contract_layers_in_order() -> None:
    expected, found = _layers(), _diagram()
    assert found == expected, ("DEVELOPERS.md's layer list differs from [tool.importlinter] in "
                               f"pyproject.toml; it should read:\n{_render(expected)}")


def test_developers_folder_list_follows_the_layers() -> None:
    """The harness/ folder list in "Layout" names every layer once, top layer first."""
    layout = _developers().split("## Layout\n", 1)[1].split("\n## ", 1)[0]
    block = layout[layout.index("harness/        import package"):]
    entries = [m.group(1) for m in re.finditer(r"^  (\w+)(?:/|\.py)\s", block, re.M)]
    flat = [n for layer in _layers() for n in layer]
    assert entries == flat, f"harness/ entries {entries} should follow the layers {flat}"


def test_every_harness_package_is_in_a_layer() -> None:
    """A new subpackage or top-level module must be placed in the contract, not left outside it."""
    harness = ROOT / "harness"
    present = {p.name for p in harness.iterdir() if p.is_dir() and (p / "__init__.py").exists()}
    present |= {p.stem for p in harness.glob("*.py") if p.name != "__init__.py"}
    assert present == {n for layer in _layers() for n in layer}


def _lint_imports() -> str:
    exe = Path(sys.executable).with_name("lint-imports")
    found = str(exe) if exe.exists() else shutil.which("lint-imports")
    if found is None:
        pytest.fail("lint-imports is not installed: pip install -e '.[test]' (the test extra holds import-linter)")
    return found


def test_lint_imports_keeps_every_contract() -> None:
    proc = subprocess.run([_lint_imports(), "--no-cache"], cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    assert "0 broken" in proc.stdout


def test_lint_imports_catches_an_upward_import(tmp_path: Path) -> None:
    """The linter sees this tree: with the store put above the API, the API's imports of the store
    break the contract (so a real upward import would too)."""
    layers = [" | ".join(PREFIX + x for x in layer) for layer in _layers()]
    api, store = layers.index("saltbench.api"), layers.index("saltbench.store")
    layers[api], layers[store] = layers[store], layers[api]
    config = tmp_path / "inverted.toml"
    config.write_text('[tool.importlinter]\nroot_package = "saltbench"\n\n[[tool.importlinter.contracts]]\n'
                      'name = "inverted"\ntype = "layers"\nlayers = [' + ", ".join(f'"{x}"' for x in layers)
                      + "]\n", encoding="utf-8")
    proc = subprocess.run([_lint_imports(), "--no-cache", str(config)], cwd=ROOT, capture_output=True, text=True,
                          timeout=300)
    assert proc.returncode != 0
    assert "saltbench.api -> saltbench.store" in proc.stdout


def _imports(path: Path) -> list[tuple[int, str]]:
    """Absolute ``saltbench`` imports of a file as (line, module); ``from saltbench import x``
    counts as ``saltbench.x``."""
    out = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
        if isinstance(node, ast.Import):
            out += [(node.lineno, a.name) for a in node.names]
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            if node.module == "saltbench":
                out += [(node.lineno, f"saltbench.{a.name}") for a in node.names]
            else:
                out.append((node.lineno, node.module))
    return [(line, m) for line, m in out if m == "saltbench" or m.startswith(PREFIX)]


def _under(module: str, package: str) -> bool:
    return module == package or module.startswith(package + ".")


def test_plugins_import_nothing_above_models() -> None:
    """import-linter does not see plugins/ (it is mapped into the package by package-dir), so the
    rule for the plugins is checked here: a plugin may use the model contract and what lies below
    it, never fitting, comparison, the report, the API or the CLI."""
    layers = _layers()
    models = next(i for i, layer in enumerate(layers) if "models" in layer)
    above = [PREFIX + n for layer in layers[:models] for n in layer]
    files = sorted((ROOT / "plugins").rglob("*.py"))
    assert files
    bad = [f"{f.relative_to(ROOT)}:{line}: {m}" for f in files for line, m in _imports(f)
           if any(_under(m, a) for a in above)]
    assert not bad, "plugins import from above saltbench.models:\n" + "\n".join(bad)


def test_harness_never_imports_the_plugins() -> None:
    """The core knows no particular model: discovery loads plugins by entry point, by name."""
    bad = [f"{f.relative_to(ROOT)}:{line}: {m}" for f in sorted((ROOT / "harness").rglob("*.py"))
           for line, m in _imports(f) if _under(m, "saltbench.plugins")]
    assert not bad, "the harness imports saltbench.plugins:\n" + "\n".join(bad)
