"""``saltbench new-model``: write a working in-house model template and its contract test."""

from __future__ import annotations

import click


@click.command("new-model")
@click.argument("name")
@click.option("--out", "out_dir", default=".", show_default=True, type=click.Path(file_okay=False),
              help="Folder to write into.")
@click.option("--package", is_flag=True, help="Write a small installable package with an entry point "
              "instead of a drop-in file.")
@click.option("--force", is_flag=True, help="Overwrite existing files.")
def new_model(name: str, out_dir: str, package: bool, force: bool) -> None:
    """Start an in-house model NAME: a plugin file (or package) plus a test running the contract kit.

    Use a drop-in file with 'saltbench --plugin FILE ...'; install a package with 'pip install DIR'.
    """
    from pathlib import Path

    from saltbench.scaffold.writer import write_model_template

    Path(out_dir).mkdir(parents=True, exist_ok=True)
    for path in write_model_template(name, out_dir, package=package, overwrite=force):
        click.echo(f"wrote {path}")
