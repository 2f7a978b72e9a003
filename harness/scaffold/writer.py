"""Writing a model template as a drop-in file or a small package (with its test)."""

from __future__ import annotations

from pathlib import Path

from saltbench.errors import UserError
from saltbench.scaffold import templates as t
from saltbench.scaffold.names import inside, model_names


def write_model_template(name: str, out_dir: str | Path = ".", package: bool = False,
                         overwrite: bool = False) -> list[Path]:
    model_id, module, cls = model_names(name)
    out = Path(out_dir)
    if package:
        root_name = model_id
        root = inside(out, root_name)
        files = {
            root / "pyproject.toml": t.render(t.PYPROJECT, dist=f"saltbench-{model_id}", module=module,
                                              display=name),
            root / "src" / f"{module}.py": t.render(t.MODEL, display=name, cls=cls, model_id=model_id),
            root / f"test_{module}.py": t.render(
                t.TEST, display=name, module=module, model_id=model_id, test_file=f"test_{module}.py",
                loader=t.render(t.PACKAGE_LOADER, module=module)),
        }
    else:
        files = {
            inside(out, f"{module}.py"): t.render(t.MODEL, display=name, cls=cls, model_id=model_id),
            inside(out, f"test_{module}.py"): t.render(
                t.TEST, display=name, module=module, model_id=model_id, test_file=f"test_{module}.py",
                loader=t.render(t.DROPIN_LOADER, module=module)),
        }
    clashes = [p for p in files if p.exists()]
    if clashes and not overwrite:
        raise UserError(f"{clashes[0]} already exists; use --force to overwrite")
    for path, text in files.items():
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8")
    return list(files)
