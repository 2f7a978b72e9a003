"""Run a Python example of DEVELOPERS.md (our own document) as written, by its marker."""

from __future__ import annotations

import re
from pathlib import Path

DEVELOPERS = Path(__file__).resolve().parents[1] / "DEVELOPERS.md"


def developers_example(marker: str) -> dict:
    """The namespace left by the example block between ``<!-- example: MARKER -->`` and
    ``<!-- end example -->`` after running it."""
    block = re.compile(rf"<!-- example: {re.escape(marker)} -->\n```python\n(.*?)```\n"
                       r"<!-- end example -->", re.S)
    found = block.search(DEVELOPERS.read_text(encoding="utf-8"))
    assert found, f"DEVELOPERS.md lost its example {marker!r}"
    namespace: dict = {}
    exec(compile(found.group(1), "DEVELOPERS.md example", "exec"), namespace)  # our own doc
    return namespace
