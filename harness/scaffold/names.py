"""Turning user text into safe identifiers and file names that cannot leave the output folder."""

from __future__ import annotations

import re
import unicodedata
from pathlib import Path

from saltbench.errors import UserError


def slug(text: str, sep: str = "-", max_len: int = 60) -> str:
    """Lower-case ASCII words joined by ``sep``; never empty, never a path."""
    norm = unicodedata.normalize("NFKD", text).encode("ascii", "ignore").decode()
    words = re.findall(r"[a-z0-9]+", norm.lower())
    out = sep.join(words)[:max_len].strip(sep)
    return out


def model_names(name: str) -> tuple[str, str, str]:
    """(model id, python module name, class name) from a user-typed model name."""
    model_id = slug(name, "-")
    if not model_id or not model_id[0].isalpha():
        raise UserError(f"model name {name!r} must contain letters and start with a letter "
                        "(it becomes the model id, e.g. 'my-model')")
    module = model_id.replace("-", "_")
    stem = "".join(w.capitalize() for w in model_id.split("-"))
    cls = stem if stem.endswith("Model") else stem + "Model"  # "Our Lab Model" -> OurLabModel
    return model_id, module, cls


def inside(folder: Path, filename: str) -> Path:
    """``folder / filename``, refusing anything that would resolve outside ``folder``."""
    if "/" in filename or "\\" in filename or filename in ("", ".", "..") or "\0" in filename:
        raise UserError(f"refusing file name {filename!r}: it must be a plain name inside {folder}")
    target = (folder / filename).resolve()
    if target.parent != folder.resolve():
        raise UserError(f"refusing file name {filename!r}: it would be written outside {folder}")
    return target
