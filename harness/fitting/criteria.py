"""Information criteria for comparing models fitted to the same data.

With known standard uncertainties the Gaussian log-likelihood is -chi2/2 plus a constant that is
the same for every model fitted to the same points, so the weighted chi2 stands in for
-2 ln L and only differences between models mean anything:

    AIC  = chi2 + 2k                              (Akaike, IEEE Trans. Autom. Control 19, 716 (1974))
    AICc = AIC + 2k(k + 1) / (n - k - 1)          (Hurvich and Tsai, Biometrika 76, 297 (1989),
                                                   in the form of Burnham and Anderson, Model
                                                   Selection and Multimodel Inference, 2nd ed.,
                                                   2002, eq. 2.14)
    BIC  = chi2 + k ln n                          (Schwarz, Ann. Stat. 6, 461 (1978))

k counts the free parameters only: the uncertainties are given, not estimated. AICc is undefined
(returned as None) when n <= k + 1.
"""

from __future__ import annotations

import math


def aic(chi2: float, k: int) -> float:
    return float(chi2) + 2.0 * k


def aicc(chi2: float, k: int, n: int) -> float | None:
    if n - k - 1 <= 0:
        return None
    return aic(chi2, k) + 2.0 * k * (k + 1) / (n - k - 1)


def bic(chi2: float, k: int, n: int) -> float | None:
    if n <= 0:
        return None
    return float(chi2) + k * math.log(n)
