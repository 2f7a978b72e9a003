"""The README shows real command output: regenerate it when the output changes.

Fix a failure with ``python tests/readme_blocks.py --update`` and review the diff.
"""

from readme_blocks import README, blocks, render


def test_readme_blocks_are_current():
    text = README.read_text(encoding="utf-8")
    assert len(blocks(text)) >= 5
    assert render(text) == text, "README output blocks are stale: run python tests/readme_blocks.py --update"


def test_readme_has_exactly_the_two_setup_commands():
    text = README.read_text(encoding="utf-8")
    setup = text.split("## Set up", 1)[1].split("\n## ", 1)[0]
    commands = [line for line in setup.splitlines() if line.startswith("python3 -m pip")]
    assert commands == [
        "python3 -m pip install . && saltbench compare --all",
        "python3 -m pip install -e '.[test]' && python3 -m pytest",
    ]
