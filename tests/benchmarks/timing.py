"""Timing helpers shared by the benchmark scripts (none of them is collected by pytest).

Machines are shared and noisy: a figure is a median (or, for throughput, the best) of repeats.
Things compared with each other are timed the same number of times, either back to back (each
in a steady state) or in turns, one call of each per round (each call then follows other work,
and a change of load during the run falls on all alike).
"""

from __future__ import annotations

import math
import statistics
import time
from collections.abc import Callable, Mapping
from typing import Any


def median_time(fn: Callable[[], Any], repeat: int) -> tuple[float, Any]:
    """Median wall time of ``repeat`` single calls of ``fn``, and the last call's result."""
    times, out = [], None
    for _ in range(repeat):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times), out


def back_to_back_median_times(fns: Mapping[str, Callable[[], Any]], repeat: int
                              ) -> dict[str, tuple[float, Any]]:
    """Median wall time of ``repeat`` single calls of each of ``fns``, one after the other (a
    steady state: the code and data of the call are warm); name -> (median s, last result)."""
    out = {}
    for name, fn in fns.items():
        fn()  # untimed warm-up: imports and caches
        out[name] = median_time(fn, repeat)
    return out


def in_turns_median_times(fns: Mapping[str, Callable[[], Any]], repeat: int
                          ) -> dict[str, tuple[float, Any]]:
    """Median wall time of single calls of each of ``fns``, called in turns for ``repeat`` rounds
    after one untimed warm-up call each, so that each call follows a different one (as a fit
    does amid other work); name -> (median seconds, last result)."""
    out = {name: fn() for name, fn in fns.items()}
    times: dict[str, list[float]] = {name: [] for name in fns}
    for _ in range(repeat):
        for name, fn in fns.items():
            t = time.perf_counter()
            out[name] = fn()
            times[name].append(time.perf_counter() - t)
    return {name: (statistics.median(times[name]), out[name]) for name in fns}


def best_rate(fn: Callable[[], Any], n: int, repeat: int) -> float:
    """``n`` per second in the fastest of ``repeat`` runs (the least disturbed by others)."""
    best = math.inf
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return n / best
