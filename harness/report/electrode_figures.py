"""The electrode-validation figures: an ion-selective electrode's calibration (potential against
pX, with the fitted Nikolsky-Eisenman curve, the linear range and the detection limit marked) and
a pH calibration (potential against the buffers' pH with the fitted line).

Same look as the comparison figures (:mod:`saltbench.report.figures`): its rcParams, palette and
deterministic PNG output; data points black open symbols with their standard-uncertainty bars.
"""

from __future__ import annotations

import numpy as np

from saltbench.report.figures import BAND, DPI, MODEL_COLOURS, RC, WIDTH_IN, FigureImage, _pyplot, render_png

MV = 1e3


def calibration_figure(cal, key: str) -> FigureImage:
    """``cal``: a :class:`saltbench.api.ElectrodeCalibration`."""
    plt = _pyplot()
    fit = cal.fit
    ion = cal.set.ion.name
    std = cal.standards
    px = np.array([s.px for s in std])
    emf = np.array([s.emf for s in std]) * MV
    u = np.array([s.u_emf for s in std]) * MV
    a = np.array([s.activity for s in std])
    lo, hi = float(np.log10(a.min())) - 1.0, float(np.log10(a.max())) + 0.3
    grid = np.logspace(lo, hi, 200)
    levels = {j: np.full(grid.shape, v) for j, v in fit.lod_levels.items()}
    curve = fit.predict(grid, levels) * MV
    with plt.rc_context(RC):
        fig, ax = plt.subplots(figsize=(WIDTH_IN, 3.6), dpi=DPI)
        rng = fit.linear_range
        if rng is not None:
            ax.axvspan(-np.log10(rng.high), -np.log10(rng.low), color=BAND, zorder=0,
                       label=f"linear range ({rng.n_standards} standards)")
        ax.plot(-np.log10(grid), curve, color=MODEL_COLOURS[0], lw=1.5, label="fitted response")
        ax.errorbar(px, emf, yerr=u, fmt="o", mfc="white", mec="black", ecolor="black", ms=5,
                    capsize=2, lw=0.8, label="standards", zorder=3)
        if fit.detection_limit is not None and fit.detection_limit > 0:
            ax.axvline(-np.log10(fit.detection_limit), color=MODEL_COLOURS[1], ls="--", lw=1.2,
                       label="detection limit (IUPAC)")
        ax.set_xlabel(f"pX = -log10 a({ion}), {cal.convention_label} convention")
        ax.set_ylabel("E / mV")
        ax.legend(loc="best", frameon=False)
        fig.tight_layout()
        png = render_png(fig)
    lod = "" if fit.detection_limit is None else f", detection limit at a = {fit.detection_limit:.3g}"
    return FigureImage(key, f"{cal.set.key}: potential of each standard against pX of {ion} (activities on "
                       f"the {cal.convention_label} convention), the fitted Nikolsky-Eisenman response at the "
                       f"lowest standard's interferent levels, the linear range shaded{lod}.",
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
