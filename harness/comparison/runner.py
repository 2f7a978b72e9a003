"""Models x electrolytes: gather the inputs from the store, run assessments (in parallel
processes with ``jobs > 1``), rank, and return a :class:`Comparison`."""

from __future__ import annotations

import math
import multiprocessing
import os
import sys
from collections.abc import Sequence
from concurrent.futures import Executor, ProcessPoolExecutor, as_completed
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from saltbench.comparison.assess import PublishedInput, assess
from saltbench.comparison.outcome import ModelOutcome
from saltbench.comparison.ranking import Recommendation, recommend
from saltbench.comparison.settings import CompareSettings
from saltbench.comparison.sources import SourceDisagreement


@dataclass
class ElectrolyteTask:
    electrolyte: Any  # Electrolyte
    data: Any  # FitData
    datasets: list[dict]
    published: dict[str, PublishedInput | None]
    model_ids: list[str]
    target: float


@dataclass
class Comparison:
    settings: CompareSettings
    outcomes: dict[str, list[ModelOutcome]] = field(default_factory=dict)
    recommendations: dict[str, Recommendation] = field(default_factory=dict)
    datasets: dict[str, list[dict]] = field(default_factory=dict)
    data: dict[str, Any] = field(default_factory=dict)  # electrolyte -> FitData
    skipped: dict[str, list[str]] = field(default_factory=dict)  # electrolyte -> unsupported models
    per_ion: dict[str, list[str]] = field(default_factory=dict)  # electrolyte -> models needing several salts
    disagreements: dict[str, list[SourceDisagreement]] = field(default_factory=dict)  # electrolyte -> sources apart
    plugin_problems: list[str] = field(default_factory=list)
    #: electrolyte -> model -> the published set left unjudged at this temperature (a WithheldSet
    #: of saltbench.comparison.region), when comparing over a range of temperatures
    withheld: dict[str, dict[str, Any]] = field(default_factory=dict)

    def records(self) -> list[dict]:
        return [o.record() for outs in self.outcomes.values() for o in outs]

    def frame(self):
        import pandas as pd

        return pd.DataFrame(self.records())


_REGISTRY = None


def _worker_registry(plugin_files: Sequence[str | os.PathLike[str]], disabled: Sequence[str]):
    global _REGISTRY
    if _REGISTRY is None:
        from saltbench.models.discovery import build_registry

        _REGISTRY = build_registry(list(plugin_files), list(disabled))
    return _REGISTRY


def run_task(task: ElectrolyteTask, settings: CompareSettings, plugin_files: Sequence[str | os.PathLike[str]],
             disabled: Sequence[str], curves: bool, registry=None) -> tuple[str, list[ModelOutcome]]:
    from saltbench.models.discovery import plugin_output_to_stderr
    from saltbench.models.timelimit import PluginTimeout, time_limit

    reg = registry or _worker_registry(plugin_files, disabled)
    outs = []
    with plugin_output_to_stderr():
        for mid in task.model_ids:
            info = reg.models[mid]
            try:
                with time_limit(settings.time_limit_s, f"model {mid} on {task.electrolyte.name}"):
                    out = assess(info.model, info.plugin, task.electrolyte, task.data, task.published.get(mid),
                                 settings, curves=curves)
            except PluginTimeout as exc:
                out = ModelOutcome(task.electrolyte.name, mid, info.model.name, info.plugin,
                                   len(info.model.free_parameters(task.electrolyte)), None, None, None, None,
                                   None, False, error=str(exc))
            outs.append(out)
    return task.electrolyte.name, outs


def _warm_before_fork(settings: CompareSettings, registry) -> None:
    """Do once, here, the set-up every worker needs: the water state (which imports iapws and
    scipy.optimize) and the plugin registry. Workers started by fork (the default on Linux)
    inherit them instead of each paying about a second for them; spawned workers still build
    their own registry, from the same plugin files and disabled names."""
    global _REGISTRY
    import scipy.optimize  # noqa: F401  (needed by every fit)

    from saltbench.water.debye_huckel import debye_huckel_constants

    debye_huckel_constants(settings.temperature_k)
    _REGISTRY = registry


def expected_cost(task: ElectrolyteTask) -> float:
    """A rough measure of a task's run time, to schedule large ones first.

    Each model is fitted and cross-validated at several trial limits; a fit costs a fixed
    overhead per model call (the constant) plus work in proportion to the number of points.
    Only the order matters, not the scale.
    """
    return len(task.model_ids) * (10.0 + float(task.data.n))


def _cgroup_cpus(root: Path = Path("/sys/fs/cgroup")) -> float | None:
    """The CPU quota of this process's control group (containers), in CPUs, if one is set:
    cgroup v2's ``cpu.max`` ("quota period") or v1's ``cpu.cfs_quota_us`` over
    ``cpu.cfs_period_us``; None where there is none or it cannot be read."""
    try:
        text = (root / "cpu.max").read_text().split()
        if text and text[0] != "max":
            return int(text[0]) / int(text[1])
        return None
    except (OSError, ValueError, IndexError):
        pass
    try:
        quota = int((root / "cpu" / "cpu.cfs_quota_us").read_text())
        period = int((root / "cpu" / "cpu.cfs_period_us").read_text())
        return quota / period if quota > 0 and period > 0 else None
    except (OSError, ValueError):
        return None


def usable_cpus(cgroup_root: Path = Path("/sys/fs/cgroup")) -> int:
    """How many CPUs this process may use: those of its affinity mask (what the scheduler
    lets it run on; ``os.process_cpu_count`` where Python has it), capped by a container's CPU
    quota, rounded up, at least one."""
    count = getattr(os, "process_cpu_count", None)
    if count is not None:
        n = count() or 1
    elif hasattr(os, "sched_getaffinity"):
        n = len(os.sched_getaffinity(0))
    else:
        n = os.cpu_count() or 1
    quota = _cgroup_cpus(cgroup_root)
    if quota is not None:
        n = min(n, math.ceil(quota))
    return max(1, n)


def default_jobs() -> int:
    return usable_cpus()


def start_method() -> str:
    """The way worker processes start, chosen here rather than left to the Python version
    (3.14 changed Linux's default): ``fork`` on Linux, where workers inherit the warmed water
    state and plugin registry at no cost; ``spawn`` elsewhere (macOS, where forking a process
    that has loaded system frameworks is unsafe, and Windows, which cannot fork)."""
    return "fork" if sys.platform.startswith("linux") else "spawn"


def run_comparison(tasks: list[ElectrolyteTask], settings: CompareSettings, *, registry,
                   plugin_files: Sequence[str | os.PathLike[str]] = (), disabled: Sequence[str] = (), jobs: int = 1,
                   curves: bool = False, progress: bool = False,
                   executor: Executor | None = None) -> Comparison:
    """Assess every task and rank. With ``executor`` (any :class:`concurrent.futures.Executor`,
    e.g. a distributed engine's) each electrolyte's work is submitted to it and ``jobs`` is
    ignored; otherwise ``jobs > 1`` starts a pool of worker processes of our own."""
    return run_comparisons([(tasks, settings)], registry=registry, plugin_files=plugin_files, disabled=disabled,
                           jobs=jobs, curves=curves, progress=progress, executor=executor)[0]


def run_comparisons(batches: Sequence[tuple[list[ElectrolyteTask], CompareSettings]], *, registry,
                    plugin_files: Sequence[str | os.PathLike[str]] = (), disabled: Sequence[str] = (),
                    jobs: int = 1, curves: bool = False, progress: bool = False,
                    executor: Executor | None = None) -> list[Comparison]:
    """:func:`run_comparison` for several comparisons at once (one per temperature of a
    comparison over temperatures), each its tasks with its settings: every task goes to one pool,
    so the workers stay busy across comparisons. One comparison per batch, in order."""
    work = [(b, t, settings) for b, (tasks, settings) in enumerate(batches) for t in tasks]
    bar = _progress(len(work), progress)
    results: dict[tuple[int, str], list[ModelOutcome]] = {}
    own_pool = executor is None and jobs > 1 and len(work) > 1
    if executor is not None or own_pool:
        # Largest first, so that no long task starts last while the other workers sit idle.
        by_cost = sorted(work, key=lambda w: expected_cost(w[1]), reverse=True)
        if own_pool:
            for _, settings in batches:  # the water state at each temperature
                _warm_before_fork(settings, registry)
            # never more workers than tasks or than the CPUs this process may use
            pool: Executor = ProcessPoolExecutor(
                max_workers=min(jobs, len(work), default_jobs()),
                mp_context=multiprocessing.get_context(start_method()))
        else:
            assert executor is not None
            pool = executor
        futures: dict = {}
        try:
            futures = {pool.submit(run_task, t, settings, list(plugin_files), list(disabled), curves): b
                       for b, t, settings in by_cost}
            for fut in as_completed(futures):
                name, outs = fut.result()
                results[(futures[fut], name)] = outs
                bar(name)
        except BaseException:
            if own_pool:
                # Ctrl-C (or a failure): stop the workers now instead of waiting for their tasks.
                # The pool then marks every future not done as broken; a future cancelled here
                # first would make its manager thread fail on it with a traceback (Python 3.11).
                for proc in list(getattr(pool, "_processes", {}).values()):
                    proc.terminate()
                pool.shutdown(wait=False)
            else:
                for fut in futures:
                    fut.cancel()
            raise
        if own_pool:
            pool.shutdown()
    else:
        for b, t, settings in work:
            name, outs = run_task(t, settings, plugin_files, disabled, curves, registry=registry)
            results[(b, name)] = outs
            bar(name)
    bar(None)
    comps = []
    for b, (tasks, settings) in enumerate(batches):
        comp = Comparison(settings)
        comp.plugin_problems = [str(p) for p in registry.problems]
        for t in tasks:  # keep the order of the request
            name = t.electrolyte.name
            comp.outcomes[name] = results[(b, name)]
            comp.recommendations[name] = recommend(results[(b, name)], t.target, settings.tol_ln_gamma,
                                                   settings.tol_phi)
            comp.datasets[name] = t.datasets
            comp.data[name] = t.data
        comps.append(comp)
    return comps


def _progress(total: int, enabled: bool):
    if not enabled or not sys.stderr.isatty() or total < 2:
        return lambda name: None
    from tqdm import tqdm

    bar = tqdm(total=total, file=sys.stderr, unit="electrolyte", leave=False)

    def step(name):
        if name is None:
            bar.close()
        else:
            bar.set_postfix_str(name)
            bar.update(1)
    return step
