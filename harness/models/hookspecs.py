"""The saltbench hook specifications: the whole surface a plugin can implement.

Plugins implement these with ``@saltbench.models.hookimpl`` and are discovered through the
``saltbench.plugins`` entry-point group or given as drop-in files (``--plugin PATH`` or the
``SALTBENCH_PLUGINS`` environment variable). All hooks are called with keyword arguments only;
new arguments may be added in later versions, and pluggy passes each implementation only the
arguments it names, so existing plugins keep working.

Hooks are grouped by phase. Each returns a list (pluggy collects one list per plugin).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pluggy

if TYPE_CHECKING:  # pragma: no cover
    from saltbench.models.contract import SolutionModel

PROJECT = "saltbench"
hookspec = pluggy.HookspecMarker(PROJECT)
hookimpl = pluggy.HookimplMarker(PROJECT)


@dataclass(frozen=True)
class PluginContext:
    """The one small object every hook receives as ``context``."""

    saltbench_version: str
    options: dict[str, Any] = field(default_factory=dict)


# -- data phase ------------------------------------------------------------------------------
@hookspec
def register_data_files(context: PluginContext) -> list[Path]:
    """Contribute curated data files (bibliography or dataset files in the saltbench format).

    Called when a store is seeded or refreshed with bundled and plugin data. Return paths to
    files; bibliography files (``*.sources.txt`` or ``sources.txt``) are loaded before datasets.
    Data contributed this way is stored with origin ``bundled`` (like saltbench's own bundle)
    and re-synced whenever those files change; a user's own data are never touched by it.
    """


@hookspec
def register_parameter_sets(context: PluginContext) -> list[Path]:
    """Contribute published parameter-set files (saltbench parameter format).

    Called when a store is seeded or refreshed, after the data files. Each file names the model
    id it belongs to, its source key, the table it was read from and the Debye-Hückel constant
    its authors used.
    """


# -- model phase -----------------------------------------------------------------------------
@hookspec
def register_models(context: PluginContext) -> list[SolutionModel]:
    """Contribute activity models: instances of :class:`saltbench.models.SolutionModel` (or of
    :class:`saltbench.models.ActivityModel`, its one-salt form).

    Called once when the plugin manager is built. Model ids must be unique across all plugins;
    a duplicate is reported with both plugins' names and the later one is ignored.
    """


# -- reporting phase -------------------------------------------------------------------------
@hookspec
def register_report_sections(context: PluginContext) -> list[Any]:
    """Contribute extra report sections: objects with ``title`` and ``render(comparison)``.

    ``render`` receives the :class:`saltbench.comparison.runner.Comparison` and returns plain
    text, paragraphs separated by blank lines; it is escaped in every output format. Called once
    per report; the sections appear in plugin load order after the per-electrolyte sections and
    before the limits and cautions. A section whose ``render`` raises is replaced by a note
    saying so, and the report is still written.

    A section that also has ``render_mixture(comparison)`` appears in mixture reports
    (``report --mixture``) too, in the same place, given the
    :class:`saltbench.comparison.mixtures.MixtureComparison`; sections without it are left out
    of them, so a section written for one-salt comparisons never sees a mixture's. Likewise
    ``render_electrode(view)`` for electrode-validation reports (``report --electrode``), given
    the :class:`saltbench.report.electrode_content.ElectrodeView` (its ``items``: calibrations
    with their samples, or pH calibrations).
    """
