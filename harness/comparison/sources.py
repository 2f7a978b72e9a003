"""When an electrolyte's own sources disagree by more than the tolerance, no model can stay within
it of all of them, and a short range then says nothing about the model. Find such disagreements
where two datasets print the same property at the same molality."""

from __future__ import annotations

import numpy as np

from saltbench.fitting.data import LN_GAMMA, FitData


def source_disagreements(data: FitData, tol_ln_gamma: float, tol_phi: float) -> list[str]:
    """One sentence per pair of datasets that differ beyond the tolerance at common molalities."""
    out = []
    keys = list(dict.fromkeys(data.dataset))
    for i, a in enumerate(keys):
        for b in keys[i + 1:]:
            for kind in dict.fromkeys(data.kind[data.dataset == a]):
                sa = (data.dataset == a) & (data.kind == kind)
                sb = (data.dataset == b) & (data.kind == kind)
                common, ia, ib = np.intersect1d(np.round(data.molality[sa], 9), np.round(data.molality[sb], 9),
                                                return_indices=True)
                if not common.size:
                    continue
                diff = np.abs(data.value[sa][ia] - data.value[sb][ib])
                tol = tol_ln_gamma if kind == LN_GAMMA else tol_phi
                if diff.max() > tol:
                    what = "ln gamma±" if kind == LN_GAMMA else "phi"
                    out.append(f"{a} and {b} differ by up to {diff.max():.3f} in {what} at the molalities both "
                               f"print ({common.min():g} to {common.max():g} mol/kg), beyond the tolerance "
                               f"{tol:g}: no model can stay within it of both; compare one of them with --data")
    return out
