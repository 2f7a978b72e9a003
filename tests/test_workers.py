"""Where a comparison's work runs: this process, worker processes of our own, or any
concurrent.futures.Executor (a distributed engine's). The verdicts must not depend on it."""

from __future__ import annotations

import sys
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

from saltbench import api
from saltbench.comparison import runner
from saltbench.comparison.settings import CompareSettings

SALTS = ["NaCl", "KCl", "CaCl2"]
SETTINGS = CompareSettings(models=("davies", "sit", "extended-debye-huckel"))


def _verdicts(comp) -> list[tuple]:
    return [(r["electrolyte"], r["model"], r["verdict"], r["aicc"], r["valid_up_to_refit"])
            for r in comp.records()]


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    s = api.Session(tmp_path_factory.mktemp("w") / "store.sqlite")
    return s, _verdicts(api.compare(s, SALTS, SETTINGS))


def test_an_executor_of_threads_gives_the_same_verdicts(reference):
    s, expected = reference
    with ThreadPoolExecutor(max_workers=2) as pool:
        comp = api.compare(s, SALTS, SETTINGS, executor=pool)
    assert _verdicts(comp) == expected
    assert list(comp.outcomes) == SALTS  # in the order asked, whatever order they finished in


def test_our_own_worker_processes_give_the_same_verdicts(reference):
    s, expected = reference
    assert _verdicts(api.compare(s, SALTS, SETTINGS, jobs=2)) == expected


def test_a_dask_cluster_in_this_process_gives_the_same_verdicts(reference):
    # dask.distributed is an optional extra ('pip install saltbench[distributed]'; .ci/run
    # installs it). Its local cluster without processes runs the tasks on threads here.
    distributed = pytest.importorskip("distributed")
    s, expected = reference
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=2,
                            dashboard_address=None) as client:
        comp = api.compare(s, SALTS, SETTINGS, executor=client.get_executor())
    assert _verdicts(comp) == expected


def test_the_cpu_count_follows_a_container_quota(tmp_path: Path):
    # cgroup v2: "quota period" in cpu.max (Linux kernel documentation, cgroup-v2, "cpu");
    # 150000/100000 is 1.5 CPUs, which leaves room for 2 workers.
    (tmp_path / "cpu.max").write_text("150000 100000\n")
    assert runner._cgroup_cpus(tmp_path) == 1.5
    assert runner.usable_cpus(tmp_path) <= 2
    (tmp_path / "cpu.max").write_text("max 100000\n")
    assert runner._cgroup_cpus(tmp_path) is None
    # cgroup v1: cpu.cfs_quota_us over cpu.cfs_period_us; -1 means no quota.
    (tmp_path / "cpu.max").unlink()
    (tmp_path / "cpu").mkdir()
    (tmp_path / "cpu" / "cpu.cfs_quota_us").write_text("100000\n")
    (tmp_path / "cpu" / "cpu.cfs_period_us").write_text("100000\n")
    assert runner._cgroup_cpus(tmp_path) == 1.0 and runner.usable_cpus(tmp_path) == 1
    (tmp_path / "cpu" / "cpu.cfs_quota_us").write_text("-1\n")
    assert runner._cgroup_cpus(tmp_path) is None


def test_the_cpu_count_follows_the_affinity_mask(monkeypatch, tmp_path: Path):
    # What the scheduler lets the process run on, not the machine's core count.
    monkeypatch.delattr(runner.os, "process_cpu_count", raising=False)
    monkeypatch.setattr(runner.os, "sched_getaffinity", lambda pid: {0}, raising=False)
    monkeypatch.setattr(runner.os, "cpu_count", lambda: 64)
    assert runner.usable_cpus(tmp_path) == 1


def test_the_start_method_is_chosen_not_inherited():
    expected = "fork" if sys.platform.startswith("linux") else "spawn"
    assert runner.start_method() == expected
