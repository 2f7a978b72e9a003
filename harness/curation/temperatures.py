"""Points at one temperature: how data at several temperatures are grouped (issue 21).

Two points are at one temperature when their temperatures differ by less than
``SAME_TEMPERATURE_K`` (0.05 K: a thermostat's usual stability is a few hundredths of a kelvin,
and tables print temperatures to 0.01 K at best; common practice, no source). A group is a run
of sorted temperatures whose neighbours are that close; its temperature is the group's mean.
The data check, the listings and the EMF reduction all group this way.
"""

from __future__ import annotations

import numpy as np

SAME_TEMPERATURE_K = 0.05


def temperature_groups(temperature_k: np.ndarray, tol: float = SAME_TEMPERATURE_K
                       ) -> list[tuple[float, np.ndarray]]:
    """(mean temperature, indices of its points) for each group, coldest first."""
    t = np.asarray(temperature_k, dtype=float)
    if t.size == 0:
        return []
    order = np.argsort(t, kind="stable")
    breaks = np.flatnonzero(np.diff(t[order]) >= tol) + 1
    return [(float(t[idx].mean()), np.sort(idx)) for idx in np.split(order, breaks)]


def distinct_temperatures(temperature_k: np.ndarray, tol: float = SAME_TEMPERATURE_K) -> list[float]:
    """The groups' temperatures in K, coldest first."""
    return [t for t, _ in temperature_groups(temperature_k, tol)]
