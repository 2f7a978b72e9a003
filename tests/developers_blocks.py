"""DEVELOPERS.md's hook reference, built from the docstrings of saltbench.models.hookspecs.

Rewrite it with ``python tests/developers_blocks.py --update``.
"""

from __future__ import annotations

import inspect
import re
from pathlib import Path

from saltbench.models import hookspecs
from saltbench.models.discovery import HOOK_NAMES

DEVELOPERS = Path(__file__).resolve().parents[1] / "DEVELOPERS.md"
BLOCK = re.compile(r"(<!-- hooks -->\n).*?(<!-- end hooks -->)", re.S)


def reference() -> str:
    parts = []
    for name in HOOK_NAMES:
        fn = getattr(hookspecs, name)
        sig = str(inspect.signature(fn)).replace("'", "")
        doc = inspect.cleandoc(fn.__doc__ or "")
        parts.append(f"#### `{name}{sig}`\n\n{doc}\n")
    return "\n".join(parts)


def render(text: str) -> str:
    return BLOCK.sub(lambda m: m.group(1) + reference() + m.group(2), text)


if __name__ == "__main__":
    from generated_text import update_or_check

    update_or_check(DEVELOPERS, render)
