"""One LAPACK call the fit makes often enough that numpy's wrapper around it shows in profiles."""

from __future__ import annotations

import math

import numpy as np

_gesdd = None


def thin_svd(a: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``np.linalg.svd(a, full_matrices=False)`` through LAPACK's dgesdd (the routine numpy uses
    too), called through scipy's thin wrapper: on the few columns of a fit, numpy's own
    wrapper costs more than the decomposition. Failures are left to numpy, to raise as it does.
    """
    global _gesdd
    if _gesdd is None:
        from scipy.linalg.lapack import dgesdd  # not at import time (see CONVENTIONS)

        _gesdd = dgesdd
    if a.dtype == np.float64 and a.ndim == 2 and a.size:
        u, s, vt, info = _gesdd(a, compute_uv=1, full_matrices=0)
        if info == 0 and math.isfinite(np.add.reduce(s)):  # else numpy's error, as before
            return u, s, vt
    return np.linalg.svd(a, full_matrices=False)
