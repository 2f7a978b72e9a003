"""Building the plugin manager: entry points, drop-in files, and loud reporting of problems.

Load order (documented in DEVELOPERS.md): 1. entry points of the ``saltbench.plugins`` group,
built-ins (distribution ``saltbench``) first, then other distributions by name; 2. files listed
in ``SALTBENCH_PLUGINS`` (separated by the OS path separator); 3. files given with ``--plugin``.
A plugin named in ``disabled`` (or ``SALTBENCH_DISABLE_PLUGINS``, comma-separated) is skipped.
A plugin that fails to import, implements an unknown hook or returns a bad model is reported
in ``PluginRegistry.problems`` and the rest keep working.
"""

from __future__ import annotations

import contextlib
import hashlib
import importlib
import importlib.util
import os
import sys
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from importlib import metadata
from pathlib import Path
from types import ModuleType
from typing import Any

import pluggy

from saltbench import __version__
from saltbench.errors import UserError
from saltbench.models import hookspecs
from saltbench.models.contract import ModelInfo, SolutionModel, check_declaration
from saltbench.models.timelimit import PluginTimeout, time_limit

ENTRY_POINT_GROUP = "saltbench.plugins"
ENV_PLUGINS = "SALTBENCH_PLUGINS"
ENV_DISABLE = "SALTBENCH_DISABLE_PLUGINS"


@dataclass(frozen=True)
class PluginProblem:
    plugin: str
    path: str
    error: str

    def __str__(self) -> str:
        where = f" ({self.path})" if self.path else ""
        return f"plugin {self.plugin}{where}: {self.error}"


@dataclass
class PluginRecord:
    name: str
    kind: str  # "entry-point" or "file"
    path: str
    version: str
    module: ModuleType | None = None


@dataclass
class PluginRegistry:
    """The outcome of discovery: the manager, the plugins, their models and any problems."""

    manager: pluggy.PluginManager
    plugins: list[PluginRecord] = field(default_factory=list)
    models: dict[str, ModelInfo] = field(default_factory=dict)
    problems: list[PluginProblem] = field(default_factory=list)
    context: hookspecs.PluginContext | None = None

    def model(self, model_id: str) -> SolutionModel:
        try:
            return self.models[model_id].model
        except KeyError:
            import difflib

            known = ", ".join(sorted(self.models)) or "none"
            close = difflib.get_close_matches(model_id.lower(), list(self.models), n=1, cutoff=0.6)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise UserError(f"unknown model {model_id!r}{hint}; known models: {known}") from None

    def call_list_hook(self, name: str, **kwargs: object) -> list[tuple[PluginRecord, Any]]:  # items unchecked
        """Call a list-returning hook plugin by plugin, in load order, isolating failures.

        Returns (plugin, item) pairs. pluggy passes each implementation only the keyword
        arguments it names, so hooks can grow arguments without breaking old plugins.
        """
        kwargs.setdefault("context", self.context)
        by_module = {id(rec.module): rec for rec in self.plugins}
        impls = getattr(self.manager.hook, name).get_hookimpls()
        out: list[tuple[PluginRecord, object]] = []
        for rec in self.plugins:
            for impl in impls:
                if by_module.get(id(impl.plugin)) is not rec:
                    continue
                try:
                    items = impl.function(**{k: kwargs[k] for k in impl.argnames if k in kwargs})
                except Exception as exc:  # a plugin's bug must not stop the others
                    self.problems.append(PluginProblem(rec.name, rec.path, f"{name} raised {exc!r}"))
                    continue
                if items is None:
                    continue
                if not isinstance(items, (list, tuple)):
                    self.problems.append(PluginProblem(
                        rec.name, rec.path, f"{name} returned {type(items).__name__}, not a list"))
                    continue
                out.extend((rec, item) for item in items)
        return out


def _file_module(path: Path) -> ModuleType:
    digest = hashlib.sha1(str(path.resolve()).encode()).hexdigest()[:10]
    mod_name = f"saltbench_dropin_{path.stem}_{digest}"
    spec = importlib.util.spec_from_file_location(mod_name, path)
    if spec is None or spec.loader is None:
        raise ImportError(f"cannot import {path}")
    module = importlib.util.module_from_spec(spec)
    sys.modules[mod_name] = module
    try:
        spec.loader.exec_module(module)
    except BaseException:
        sys.modules.pop(mod_name, None)
        raise
    return module


def _entry_points() -> list[metadata.EntryPoint]:
    eps = list(metadata.entry_points(group=ENTRY_POINT_GROUP))
    seen: dict[str, metadata.EntryPoint] = {}
    for ep in eps:  # an editable and a regular install can both list the same entry point
        seen.setdefault(ep.name, ep)

    def order(ep: metadata.EntryPoint) -> tuple[int, str, str]:
        dist = ep.dist.name if ep.dist else ""
        return (0 if dist == "saltbench" else 1, dist, ep.name)

    return sorted(seen.values(), key=order)


HOOK_NAMES = (
    "register_data_files", "register_parameter_sets", "register_models", "register_report_sections",
)


def _unknown_hooks(module: ModuleType) -> list[str]:
    known = set(HOOK_NAMES)
    marker = f"{hookspecs.PROJECT}_impl"
    return [
        n for n in dir(module)
        if hasattr(getattr(module, n, None), marker) and n not in known
    ]


#: A plugin whose import takes longer (a loop at import time) is skipped and reported.
IMPORT_TIME_LIMIT_S = 30.0


@contextlib.contextmanager
def plugin_output_to_stderr():
    """Whatever plugin code prints goes to standard error, so that standard output holds results
    only (a plugin printing at import or in a model function must not corrupt JSON or CSV)."""
    with contextlib.redirect_stdout(sys.stderr):
        yield


def build_registry(
    plugin_files: Sequence[str | os.PathLike[str]] = (),
    disabled: Iterable[str] = (),
    use_entry_points: bool = True,
    use_environment: bool = True,
) -> PluginRegistry:
    """Discover plugins and collect their models. Never raises for a faulty plugin."""
    pm = pluggy.PluginManager(hookspecs.PROJECT)
    pm.add_hookspecs(hookspecs)
    ctx = hookspecs.PluginContext(saltbench_version=__version__)
    reg = PluginRegistry(manager=pm, context=ctx)
    off = set(disabled)
    if use_environment and os.environ.get(ENV_DISABLE):
        off |= {s.strip() for s in os.environ[ENV_DISABLE].split(",") if s.strip()}

    candidates: list[tuple[str, str, str, object]] = []  # name, kind, path, loader
    if use_entry_points:
        for ep in _entry_points():
            version = ep.dist.version if ep.dist else ""
            candidates.append((ep.name, "entry-point", ep.value, (ep, version)))
    files = []
    if use_environment and os.environ.get(ENV_PLUGINS):
        files += [p for p in os.environ[ENV_PLUGINS].split(os.pathsep) if p]
    files += [str(p) for p in plugin_files]
    for f in files:
        candidates.append((Path(f).stem, "file", str(f), None))

    with plugin_output_to_stderr():
        _load_candidates(reg, pm, candidates, off)
        return _collect_models(reg)


def _load_candidates(reg: PluginRegistry, pm, candidates, off: set[str]) -> None:
    for name, kind, path, loader in candidates:
        if name in off:
            continue
        try:
            if kind == "entry-point":
                ep, version = loader  # type: ignore[misc]
                with time_limit(IMPORT_TIME_LIMIT_S, f"plugin {name}'s import"):
                    module = ep.load()
            else:
                p = Path(path)
                if not p.is_file():
                    raise FileNotFoundError(f"no such plugin file: {path}")
                with time_limit(IMPORT_TIME_LIMIT_S, f"plugin {name}'s import"):
                    module = _file_module(p)
                version = str(getattr(module, "__version__", ""))
        except PluginTimeout as exc:
            reg.problems.append(PluginProblem(name, path, f"skipped: {exc}"))
            continue
        except Exception as exc:
            reg.problems.append(PluginProblem(name, path, f"failed to import: {exc!r}"))
            continue
        bad = _unknown_hooks(module)
        if bad:
            reg.problems.append(PluginProblem(
                name, path, f"implements unknown hook(s) {', '.join(bad)}; known hooks: "
                + ", ".join(HOOK_NAMES)))
            continue
        try:
            pm.register(module, name=f"{kind}:{name}:{path}")
        except Exception as exc:
            reg.problems.append(PluginProblem(name, path, f"failed to register: {exc}"))
            continue
        reg.plugins.append(PluginRecord(name, kind, path, version, module))


def _collect_models(reg: PluginRegistry) -> PluginRegistry:
    for rec, model in reg.call_list_hook("register_models"):
        problems = check_declaration(model)
        if problems:
            reg.problems.append(PluginProblem(
                rec.name, rec.path, f"bad model {getattr(model, 'id', model)!r}: "
                + "; ".join(problems)))
            continue
        if model.id in reg.models:
            first = reg.models[model.id]
            reg.problems.append(PluginProblem(
                rec.name, rec.path,
                f"duplicate model id {model.id!r} (already registered by plugin "
                f"{first.plugin}); ignored"))
            continue
        reg.models[model.id] = ModelInfo(model, rec.name, rec.version, rec.path)
    return reg
