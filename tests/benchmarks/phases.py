"""Where the time of a benchmarked call goes: its phases' shares of a profile.

A target that is not met is reported with the profile that explains it (issue: speed). The
call is run under ``cProfile`` (which slows small Python calls more than numpy's work, so the
shares are indicative, not exact); each phase is the cumulative time of the functions named for
it, as a fraction of the whole call. Phases may nest (a model call inside a refit): their
shares then overlap, and the JSON says which nest in which.
"""

from __future__ import annotations

import cProfile
import pstats
from collections.abc import Callable, Mapping, Sequence
from typing import Any


def phase_shares(fn: Callable[[], Any], phases: Mapping[str, Sequence[tuple[str, str]]]
                 ) -> dict[str, Any]:
    """Run ``fn`` once under the profiler; for each phase (a list of (file suffix, function
    name)), the summed cumulative time of those functions over the call's total."""
    prof = cProfile.Profile()
    prof.enable()
    fn()
    prof.disable()
    stats = pstats.Stats(prof).stats  # type: ignore[attr-defined]
    total = sum(tt for (_, _, _), (_, _, tt, _, _) in stats.items())
    out: dict[str, Any] = {"profiled_total_s": total}
    for name, funcs in phases.items():
        cum = 0.0
        for (path, _, func), (_, _, _, ct, _) in stats.items():
            if any(path.endswith(suffix) and func == f for suffix, f in funcs):
                cum += ct
        out[name] = round(cum / total, 3) if total else None
    return out
