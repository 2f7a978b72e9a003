"""``python -m saltbench``: the same entry point as the ``saltbench`` command."""

from saltbench.cli import main

if __name__ == "__main__":
    main()
