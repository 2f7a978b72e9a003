"""The ``saltbench`` command: a thin layer over :mod:`saltbench.api`.

Commands are loaded lazily (one module per command group) so ``saltbench --help`` stays quick.
Every SaltbenchError becomes one ``Error: ...`` line on stderr and its exit status (2 for user
mistakes); nothing a user can do wrong produces a traceback.
"""

from __future__ import annotations

import importlib
import sys

import click

from saltbench import __version__

# command name -> "module:attribute" (each module is one command group or command)
COMMANDS = {
    "data": "saltbench.cli.data:data",
    "models": "saltbench.cli.models:models",
    "plugins": "saltbench.cli.models:plugins",
    "predict": "saltbench.cli.predict:predict",
    "compare": "saltbench.cli.compare:compare",
    "report": "saltbench.cli.report:report",
    "fit": "saltbench.cli.fit:fit",
    "params": "saltbench.cli.params:params",
    "new-model": "saltbench.cli.new_model:new_model",
    "readings": "saltbench.cli.readings:readings",
    "ion-activity": "saltbench.cli.ion_activity:ion_activity",
    "convert": "saltbench.cli.convert:convert",
    "solubility": "saltbench.cli.solubility:solubility",
    "electrode": "saltbench.cli.electrode:electrode",
}
HELP_ORDER = ["compare", "fit", "predict", "report", "data", "params", "readings", "convert", "ion-activity",
              "electrode", "solubility", "models", "plugins", "new-model"]


class LazyGroup(click.Group):
    def invoke(self, ctx: click.Context):
        try:
            return super().invoke(ctx)
        except BrokenPipeError:
            # The reader (e.g. `| head`) has gone: stop quietly and successfully. Point stdout at
            # devnull so the interpreter's final flush cannot raise again.
            _silence_stdout()
            raise click.exceptions.Exit(0) from None

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(COMMANDS, key=lambda n: HELP_ORDER.index(n) if n in HELP_ORDER else 99)

    def get_command(self, ctx: click.Context, name: str) -> click.Command | None:
        target = COMMANDS.get(name)
        if target is None:
            return None
        module, attr = target.split(":")
        return getattr(importlib.import_module(module), attr)


@click.group(cls=LazyGroup, context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100})
@click.version_option(__version__, prog_name="saltbench")
@click.option("--store", "store_path", metavar="PATH", envvar="SALTBENCH_STORE",
              help="SQLite store to use (default: per-user data file; env SALTBENCH_STORE).")
@click.option("--plugin", "plugin_files", metavar="PATH", multiple=True,
              help="Load a drop-in plugin file (repeatable; env SALTBENCH_PLUGINS).")
@click.option("--disable-plugin", "disabled", metavar="NAME", multiple=True,
              help="Skip the plugin NAME (repeatable; env SALTBENCH_DISABLE_PLUGINS).")
@click.pass_context
def cli(ctx: click.Context, store_path: str | None, plugin_files: tuple[str, ...],
        disabled: tuple[str, ...]) -> None:
    """Curated electrolyte activity data, and a harness that fits, validates and compares
    activity-coefficient models against it.

    Results are only as good as the data and models behind them. For dosing, safety limits or
    regulated measurements, verify every number under your local codes and licensed practice.
    """
    from pathlib import Path

    from saltbench.cli.context import AppContext
    from saltbench.errors import UserError

    for path in plugin_files:
        # a mistyped path must not leave the user comparing without the model they meant to add
        if not Path(path).is_file():
            raise UserError(f"--plugin {path}: no such file" if not Path(path).exists()
                            else f"--plugin {path}: not a file")
    ctx.obj = AppContext(store_path, list(plugin_files), list(disabled))


def _silence_stdout() -> None:
    import os

    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError, AttributeError):
        pass  # not a real file (a test runner's buffer): nothing left to flush into a closed pipe


def main(argv: list[str] | None = None) -> None:
    from saltbench.errors import SaltbenchError

    try:
        # Outside standalone mode click returns the code a command exits with (ctx.exit(1) of
        # `report --from` on disagreement); it must reach the shell.
        code = cli.main(args=argv, prog_name="saltbench", standalone_mode=False)
        if isinstance(code, int) and code != 0:
            sys.exit(code)
    except click.exceptions.Abort:
        click.echo("Aborted.", err=True)
        sys.exit(130)
    except click.ClickException as exc:
        exc.show()
        sys.exit(exc.exit_code)
    except SaltbenchError as exc:
        click.echo(f"Error: {exc}", err=True)
        sys.exit(exc.exit_code)
    except KeyboardInterrupt:
        click.echo("Interrupted.", err=True)
        sys.exit(130)
    except BrokenPipeError:
        _silence_stdout()
        sys.exit(0)
