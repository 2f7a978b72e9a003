"""The electrode-validation figures: an ion-selective electrode's calibration (potential against
pX, with the fitted Nikolsky-Eisenman curve, the linear range and the detection limit marked) and
a pH calibration (potential against the buffers' pH with the fitted line).

Same look as the comparison figures (:mod:`saltbench.report.figures`): its rcParams, palette and
deterministic PNG output; data points black open symbols with their standard-uncertainty bars.
"""

from __future__ import annotations

import numpy as np

from saltbench.report.figures import (
    BAND,
    DATA_MARKERS,
    DPI,
    MODEL_COLOURS,
    MODEL_LINES,
    RC,
    WIDTH_IN,
    FigureImage,
    _pyplot,
    render_png,
)

MV = 1e3


def _series(standards) -> dict[tuple, list]:
    """Standards grouped by their interferent levels (log10 a_j to 0.1; none for zero): the
    plain series and each fixed-interference series."""
    groups: dict[tuple, list] = {}
    for s in standards:
        key = tuple(sorted((j, round(float(np.log10(a)), 1)) for j, a in s.interferents.items() if a > 0))
        groups.setdefault(key, []).append(s)
    return dict(sorted(groups.items(), key=lambda kv: (len(kv[0]), kv[0])))


def calibration_figure(cal, key: str) -> FigureImage:
    """``cal``: a :class:`saltbench.api.ElectrodeCalibration`. One fitted curve per series of
    standards sharing interferent levels, drawn at that series' mean levels."""
    plt = _pyplot()
    fit = cal.fit
    ion = cal.set.ion.name
    a_all = np.array([s.activity for s in cal.standards])
    grid = np.logspace(float(np.log10(a_all.min())) - 1.0, float(np.log10(a_all.max())) + 0.3, 200)
    with plt.rc_context(RC):
        fig, ax = plt.subplots(figsize=(WIDTH_IN, 3.6), dpi=DPI)
        rng = fit.linear_range
        if rng is not None:
            ax.axvspan(-np.log10(rng.high), -np.log10(rng.low), color=BAND, zorder=0,
                       label=f"linear range ({rng.n_standards} standards)")
        for i, (levels, stds) in enumerate(_series(cal.standards).items()):
            mean = {j: np.full(grid.shape, float(np.mean([s.interferents[j] for s in stds]))) for j, _ in levels}
            name = "standards" if not levels else "standards with " + ", ".join(
                f"a({j}) ≈ {10 ** lg:.2g}" for j, lg in levels)
            colour, marker = MODEL_COLOURS[i % len(MODEL_COLOURS)], DATA_MARKERS[i % len(DATA_MARKERS)]
            ax.plot(-np.log10(grid), fit.predict(grid, mean) * MV, color=colour, lw=1.5,
                    ls=MODEL_LINES[i % len(MODEL_LINES)], label=f"fitted response, {name}")
            ax.errorbar([s.px for s in stds], [s.emf * MV for s in stds], yerr=[s.u_emf * MV for s in stds],
                        fmt=marker, mfc="white", mec="black", ecolor="black", ms=5, capsize=2, lw=0.8,
                        label=name, zorder=3)
        if fit.detection_limit is not None and fit.detection_limit > 0:
            ax.axvline(-np.log10(fit.detection_limit), color="black", ls=":", lw=1.2,
                       label="detection limit (IUPAC)")
        ax.set_xlabel(f"pX = -log10 a({ion}), {cal.convention_label} convention")
        ax.set_ylabel("E / mV")
        ax.legend(loc="best", frameon=False)
        fig.tight_layout()
        png = render_png(fig)
    lod = "" if fit.detection_limit is None else f", the detection limit at a = {fit.detection_limit:.3g}"
    return FigureImage(key, f"{cal.set.key}: potential of each standard against pX of {ion} (activities on "
                       f"the {cal.convention_label} convention) and the fitted Nikolsky-Eisenman response of "
                       f"each series of standards at its interferent levels; the linear range shaded{lod}.",
                       f"Calibration plot of {cal.set.key}", png)


def ph_figure(run, key: str) -> FigureImage:
    """``run``: a :class:`saltbench.api.PhCalibrationRun`."""
    plt = _pyplot()
    cal = run.calibration
    ph, emf, u = np.asarray(cal.ph), np.asarray(cal.emf) * MV, np.asarray(cal.u_emf) * MV
    grid = np.linspace(float(ph.min()) - 0.5, float(ph.max()) + 0.5, 50)
    with plt.rc_context(RC):
        fig, ax = plt.subplots(figsize=(WIDTH_IN, 3.2), dpi=DPI)
        ax.plot(grid, (cal.e0 - cal.slope * grid) * MV, color=MODEL_COLOURS[0], lw=1.5, label="calibration line")
        ax.errorbar(ph, emf, yerr=u, fmt="s", mfc="white", mec="black", ecolor="black", ms=5, capsize=2,
                    lw=0.8, label="buffers (certified pH)", zorder=3)
        ax.set_xlabel("pH (buffer certificates; Bates-Guggenheim convention)")
        ax.set_ylabel("E / mV")
        ax.legend(loc="best", frameon=False)
        fig.tight_layout()
        png = render_png(fig)
    return FigureImage(key, f"{run.set.key}: potential in each buffer against its certified pH, with the "
                       "calibration line.", f"pH calibration plot of {run.set.key}", png)
