"""Does a published parameter set differ from the data only in where it anchors the dilute end?

Through the Gibbs-Duhem relation, ln gamma±(m) = (phi - 1) + integral from 0 to m of
(phi - 1) d ln m. Two evaluations that agree in phi over a range but not below it therefore
differ in ln gamma± by a constant over that range. An evaluation that fixes gamma± at one
molality (the Robinson-Stokes tables print every 2-2 sulfate as 0.150 at 0.1 mol/kg) and a
parameter set whose gamma± follows from its own phi integrated from infinite dilution (Pitzer
and Mayorga 1974) then disagree by a near-constant factor, which a refit would silently absorb
into the dilute parameters (Pitzer's beta1 and beta2). The comparison says it instead.
"""

from __future__ import annotations

import numpy as np

from saltbench.chemistry.electrolyte import Electrolyte
from saltbench.fitting.data import LN_GAMMA, OSMOTIC, FitData
from saltbench.fitting.flags import Flag, FlagKind, flag

#: A dataset is judged with at least this many activity points ...
ANCHOR_MIN_POINTS = 4
#: ... and its offset called an anchoring difference when it exceeds the tolerance while its
#: spread stays below this share of it (and below the tolerance): a shift, not a shape.
ANCHOR_SPREAD_SHARE = 0.25


def anchoring_flags(model, e: Electrolyte, data: FitData, set_id: str, values: dict[str, float], dh,
                    tolerance_ln_gamma: float) -> list[Flag]:
    """One ``PUBLISHED_ANCHORING`` flag per activity dataset that the set misses by a near-constant offset."""
    from saltbench.models.evaluate import evaluate, make_context

    ev = evaluate(model, e, data.molality, {**model.defaults(e), **values}, ctx=make_context(e, dh=dh))
    phi_gap = None
    osm = data.kind == OSMOTIC
    if np.any(osm):
        phi_gap = float(np.max(np.abs(data.value[osm] - ev.osmotic[osm])))
    flags = []
    for ds in dict.fromkeys(data.dataset[data.kind == LN_GAMMA]):
        sel = (data.dataset == ds) & (data.kind == LN_GAMMA)
        if sel.sum() < ANCHOR_MIN_POINTS:
            continue
        r = data.value[sel] - ev.ln_gamma_pm[sel]
        offset, spread = float(np.mean(r)), float(np.std(r))
        if abs(offset) > tolerance_ln_gamma and spread < min(ANCHOR_SPREAD_SHARE * abs(offset), tolerance_ln_gamma):
            m = data.molality[sel]
            flags.append(flag(FlagKind.PUBLISHED_ANCHORING, set_id=set_id, dataset=str(ds), offset=offset,
                              spread=spread, low=float(m.min()), high=float(m.max()),
                              scale=float(np.exp(offset)), phi_gap=phi_gap))
    return flags
