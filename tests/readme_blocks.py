"""The README's command blocks: run them, and compare or rewrite their printed output.

A block is ``<!-- run: saltbench ARGS -->`` followed by a fenced ``text`` block and
``<!-- end -->``. Blocks run in order against one fresh store, from the repository root.
Rewrite them with ``python tests/readme_blocks.py --update``.
"""

from __future__ import annotations

import os
import re
import shlex
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
README = ROOT / "README.md"
BLOCK = re.compile(r"(<!-- run: (?P<cmd>.+?) -->\n```text\n)(?P<out>.*?)(```\n<!-- end -->)", re.S)


def run(command: str, store: Path) -> str:
    args = shlex.split(command)
    assert args[0] == "saltbench", command
    env = {**os.environ, "COLUMNS": "100", "SALTBENCH_STORE": str(store)}
    env.pop("SALTBENCH_PLUGINS", None)
    proc = subprocess.run([sys.executable, "-m", "saltbench", *args[1:]], cwd=ROOT, env=env,
                          capture_output=True, text=True, timeout=600)
    if proc.returncode != 0:
        raise RuntimeError(f"{command} exited {proc.returncode}: {proc.stderr}")
    return proc.stdout


def blocks(text: str) -> list[tuple[str, str]]:
    return [(m.group("cmd"), m.group("out")) for m in BLOCK.finditer(text)]


def render(text: str) -> str:
    with tempfile.TemporaryDirectory() as tmp:
        store = Path(tmp) / "readme.sqlite"
        outputs = [run(cmd, store) for cmd, _ in blocks(text)]
    it = iter(outputs)
    return BLOCK.sub(lambda m: m.group(1) + next(it) + m.group(4), text)


if __name__ == "__main__":
    from generated_text import update_or_check

    update_or_check(README, render)
