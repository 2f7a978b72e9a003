"""The command line shared by the scripts that regenerate parts of the README and DEVELOPERS.md."""

from __future__ import annotations

import sys
from collections.abc import Callable
from pathlib import Path


def update_or_check(path: Path, render: Callable[[str], str]) -> None:
    """With --update, rewrite ``path`` through ``render``; otherwise exit 1 when it is stale."""
    text = path.read_text(encoding="utf-8")
    if "--update" in sys.argv:
        path.write_text(render(text), encoding="utf-8")
    else:
        sys.exit(0 if render(text) == text else 1)
