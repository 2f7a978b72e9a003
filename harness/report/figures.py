"""The report's figures: coefficients against sqrt(m), residuals with the tolerance band, and how
far each model holds.

Look. Models take colours from the Okabe-Ito palette (M. Okabe and K. Ito, "Color Universal
Design", 2002/2008), chosen to stay distinct for the common colour-vision deficiencies; yellow is
left out because it vanishes on white paper. Each model also has its own line style and marker
shape, so a greyscale print still tells the models apart. Data points are black open symbols, one
shape per dataset, never shared with a model's marker. A model keeps its look in every figure.

Determinism. Figures are drawn with a fixed set of rcParams (font, sizes, dpi, the SVG hash
salt) and saved without creation-date or software metadata, so the same comparison gives the
same bytes. matplotlib is imported here only, and only when a figure is drawn.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

# Okabe-Ito colours (see module docstring), darkest first so the first models print darkest.
MODEL_COLOURS = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#000000", "#E69F00", "#56B4E9")
MODEL_LINES: tuple = ("-", "--", "-.", ":", (0, (6, 1.5, 1, 1.5, 1, 1.5)), (0, (9, 2.5)),
                      (0, (1, 1.2)))
MODEL_MARKERS = ("P", "X", "*", "h", "d", "p", "<", ">", "H")
DATA_MARKERS = ("o", "s", "^", "D", "v", "<", ">")
BAND = "#dcdcdc"  # the tolerance band: a light grey that survives photocopying
WIDTH_IN = 6.5  # fits the text width of A4 and Letter with 15 mm margins
DPI = 160

RC: dict = {
    "font.family": "DejaVu Sans",  # ships with matplotlib, so every machine draws the same glyphs
    "font.size": 9,
    "axes.titlesize": 9.5,
    "axes.labelsize": 9,
    "legend.fontsize": 8,
    "xtick.labelsize": 8,
    "ytick.labelsize": 8,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.color": "#e4e4e4",
    "grid.linewidth": 0.6,
    "lines.linewidth": 1.5,
    "lines.markersize": 5,
    "figure.dpi": 100,
    "savefig.dpi": DPI,
    "svg.hashsalt": "saltbench-report",
    "svg.fonttype": "path",
    "pdf.fonttype": 42,
    "axes.unicode_minus": True,
}

SQRT_M_LABEL = r"$\sqrt{m}$ / (mol kg$^{-1}$)$^{1/2}$"


@dataclass(frozen=True)
class Abscissa:
    """What the residual and validity figures run along: molality for one salt, ionic strength
    for a family of mixtures (where :class:`~saltbench.report.residuals.Residuals` and the
    outcomes' ranges hold ionic strengths in their molality fields)."""

    name: str  # in captions: "molality", "ionic strength"
    sqrt_label: str
    log_label: str


MOLALITY = Abscissa("molality", SQRT_M_LABEL, r"molality $m$ / (mol kg$^{-1}$), logarithmic")
IONIC_STRENGTH = Abscissa("ionic strength", r"$\sqrt{I}$ / (mol kg$^{-1}$)$^{1/2}$",
                          r"ionic strength $I$ / (mol kg$^{-1}$), logarithmic")


@dataclass(frozen=True)
class Style:
    colour: str
    line: object
    marker: str


def model_styles(model_ids: Sequence[str]) -> dict[str, Style]:
    """One look per model id, in the order given; past seven models the line styles shift so
    that no two models share colour, line and marker at once."""
    out = {}
    for i, mid in enumerate(model_ids):
        out[mid] = Style(MODEL_COLOURS[i % len(MODEL_COLOURS)],
                         MODEL_LINES[(i + i // len(MODEL_COLOURS)) % len(MODEL_LINES)],
                         MODEL_MARKERS[i % len(MODEL_MARKERS)])
    return out


@dataclass(frozen=True)
class FigureImage:
    key: str  # file stem, already safe (see writer)
    caption: str
    alt: str
    png: bytes


def _pyplot():
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    return plt


def legend_below(fig, handles: list, labels: list[str], most: int = 5):
    """A frameless legend under the panels, in as many columns (up to ``most``) as fit the
    figure's width: model ids are the plugins' own and may be long."""
    def draw(ncol: int):
        return fig.legend(handles, labels, loc="outside lower center", ncol=ncol, frameon=False,
                          handlelength=3.2)

    renderer = fig.canvas.get_renderer()
    for ncol in range(min(most, len(labels)), 1, -1):
        leg = draw(ncol)
        if leg.get_window_extent(renderer).width <= fig.bbox.width:
            return leg
        leg.remove()
    return draw(1)


def render_png(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=DPI, metadata={"Software": None}, bbox_inches=None)
    _pyplot().close(fig)
    return buf.getvalue()


def _data_label(key: str, source: str, prop: str) -> str:
    tail = " (from water activity)" if prop == "water_activity" else ""
    return f"data: {source}{tail}"


def _ratio(values: list[np.ndarray]) -> float:
    vals = np.concatenate(values)
    vals = vals[np.isfinite(vals) & (vals > 0)]
    return float(vals.max() / vals.min()) if vals.size else 1.0


def _limits(values: list[np.ndarray], pad: float = 0.08, log: bool = False) -> tuple[float, float] | None:
    vals = np.concatenate([v[np.isfinite(v)] for v in values]) if values else np.array([])
    if vals.size == 0:
        return None
    if log:
        vals = vals[vals > 0]
        lo, hi = float(vals.min()), float(vals.max())
        return lo / (hi / lo) ** pad, hi * (hi / lo) ** pad
    lo, hi = float(vals.min()), float(vals.max())
    span = max(hi - lo, 0.05 * max(abs(hi), 1e-3))
    return lo - pad * span - 0.02 * span, hi + pad * span + 0.02 * span


def coefficient_figure(name: str, outcomes, data, datasets: list[dict], styles: dict[str, Style],
                       key: str) -> FigureImage:
    """gamma± (left) and phi (right) against sqrt(m): data points and each model's refitted curve.

    The vertical range follows the data, so a model far off leaves the frame instead of
    flattening every other curve; the caption says so."""
    plt = _pyplot()
    with plt.rc_context(RC):
        fig, axes = plt.subplots(1, 2, figsize=(WIDTH_IN, 3.6), layout="constrained")
        kinds = [("ln_gamma", axes[0], r"mean activity coefficient $\gamma_\pm$ / 1"),
                 ("osmotic", axes[1], r"osmotic coefficient $\varphi$ / 1")]
        kind = np.asarray(data.kind).astype(str)
        ds = np.asarray(data.dataset).astype(str)
        m = np.asarray(data.molality, dtype=float)
        v = np.asarray(data.value, dtype=float)
        handles, labels = [], []
        for kname, ax, ylabel in kinds:
            shown = []
            for j, d in enumerate(datasets):
                sel = (ds == d["key"]) & (kind == kname)
                if not np.any(sel):
                    continue
                y = np.exp(v[sel]) if kname == "ln_gamma" else v[sel]
                shown.append(y)
                h = ax.plot(np.sqrt(m[sel]), y, linestyle="none", marker=DATA_MARKERS[j % len(DATA_MARKERS)],
                            markerfacecolor="white", markeredgecolor="black", markeredgewidth=0.9,
                            markersize=4.5, zorder=5)[0]
                lab = _data_label(d["key"], d.get("source", ""), d.get("property", ""))
                if lab not in labels:
                    handles.append(h)
                    labels.append(lab)
            curve_vals = []
            for o in outcomes:
                if not o.curve or "refit" not in o.curve:
                    continue
                c = o.curve["refit"]
                cm = np.asarray(c["molality"], dtype=float)
                cy = np.exp(np.asarray(c["ln_gamma_pm"], dtype=float)) if kname == "ln_gamma" \
                    else np.asarray(c["osmotic"], dtype=float)
                curve_vals.append(cy)
                st = styles[o.model]
                h = ax.plot(np.sqrt(cm), cy, color=st.colour, linestyle=st.line, marker=st.marker,
                            markevery=(4, 12), markersize=5, zorder=3)[0]
                if o.model not in labels:
                    handles.append(h)
                    labels.append(o.model)
            wide = kname == "ln_gamma" and bool(shown) and _ratio(shown) > 5
            lim = _limits(shown, log=wide) if shown else _limits(curve_vals)
            if wide:
                # gamma± of concentrated 2-1 salts spans decades; a linear axis would hide the
                # dilute end, where every model should agree with the data
                ax.set_yscale("log")
                ylabel += " (logarithmic)"
            if lim:
                ax.set_ylim(*lim)
            if not shown:
                ax.text(0.5, 0.95, "no data of this kind", transform=ax.transAxes, ha="center",
                        va="top", fontsize=8, color="#444444")
            ax.set_xlim(left=0)
            ax.set_xlabel(SQRT_M_LABEL)
            ax.set_ylabel(ylabel)
        axes[0].set_title(f"{name}: " + r"$\gamma_\pm$")
        axes[1].set_title(f"{name}: " + r"$\varphi$")
        legend_below(fig, handles, labels)
        png = render_png(fig)
    return FigureImage(key, f"{name}: mean activity coefficient and osmotic coefficient against the "
                       "square root of molality. Open black symbols: data (one shape per dataset); "
                       "lines: each model with its refitted parameters. The vertical range follows "
                       "the data, so a curve far from them leaves the frame.",
                       f"Plot of gamma± and phi against square root of molality for {name}", png)


def _band_limits(res: list[np.ndarray], tol: float) -> float:
    finite = [np.abs(r[np.isfinite(r)]) for r in res if r.size]
    top = max((float(a.max()) for a in finite if a.size), default=0.0)
    return 1.15 * max(4 * tol, min(top, 12 * tol))


def residual_figure(name: str, outcomes, residuals: dict, settings, styles: dict[str, Style],
                    key: str, axis: Abscissa = MOLALITY) -> FigureImage:
    """Data minus refitted model, for ln(gamma±) and phi, with the tolerance band shaded."""
    plt = _pyplot()
    with plt.rc_context(RC):
        fig, axes = plt.subplots(1, 2, figsize=(WIDTH_IN, 3.4), layout="constrained")
        panels = [("ln_gamma", axes[0], settings.tol_ln_gamma, r"$\Delta \ln\gamma_\pm$ (data $-$ model)"),
                  ("osmotic", axes[1], settings.tol_phi, r"$\Delta\varphi$ (data $-$ model)")]
        handles, labels = [], []
        for kname, ax, tol, ylabel in panels:
            parts, clipped, xmax = [], 0, 0.0
            for o in outcomes:
                r = residuals.get((name, o.model))
                if r is None:
                    continue
                sel = r.kind == kname
                parts.append(r.residual[sel])
                if np.any(sel):
                    xmax = max(xmax, float(np.sqrt(r.molality[sel]).max()))
            lim = _band_limits(parts, tol)
            for o in outcomes:
                r = residuals.get((name, o.model))
                if r is None:
                    continue
                sel = r.kind == kname
                if not np.any(sel):
                    continue
                st = styles[o.model]
                order = np.argsort(r.molality[sel])
                x = np.sqrt(r.molality[sel])[order]
                y = r.residual[sel][order]
                clipped += int(np.sum(np.abs(y) > lim))
                h = ax.plot(x, y, color=st.colour, linestyle=st.line, linewidth=1.0, marker=st.marker,
                            markersize=4.5, zorder=3)[0]
                if o.model not in labels:
                    handles.append(h)
                    labels.append(o.model)
            ax.axhspan(-tol, tol, color=BAND, zorder=0, linewidth=0)
            ax.axhline(0, color="black", linewidth=0.7, zorder=1)
            ax.set_ylim(-lim, lim)
            ax.set_xlim(0, xmax * 1.03 if xmax else 1)
            ax.set_xlabel(axis.sqrt_label)
            ax.set_ylabel(ylabel)
            note = f"grey band: tolerance ±{tol:g}"
            if clipped:
                note += f"\n{clipped} point(s) off scale (beyond ±{lim:.2g})"
            if not parts or all(p.size == 0 for p in parts):
                note = "no data of this kind"
            ax.set_title(note, fontsize=7.5, loc="left", color="#333333")
        fig.suptitle(f"{name}: residuals of the refitted models", fontsize=9.5)
        if handles:
            legend_below(fig, handles, labels)
        png = render_png(fig)
    return FigureImage(key, f"{name}: residuals (data minus model) of each refitted model against the "
                       f"square root of {axis.name}; the grey band is the tolerance. Residuals are on the "
                       "fitted basis: ln gamma± and phi.",
                       f"Residual plot for {name} with tolerance band", png)


def validity_figure(name: str, outcomes, data, target: float, styles: dict[str, Style],
                    key: str, axis: Abscissa = MOLALITY) -> FigureImage:
    """Horizontal bars: the molality range within tolerance, with published (hatched) and with
    refitted parameters (solid), from the lowest data molality on a logarithmic axis."""
    from matplotlib.patches import Patch

    plt = _pyplot()
    m = np.asarray(data.molality, dtype=float)
    lo, hi = float(m.min()), float(m.max())
    with plt.rc_context(RC):
        n = len(outcomes)
        fig, ax = plt.subplots(figsize=(WIDTH_IN, 1.3 + 0.48 * n), layout="constrained")
        xmin, xmax = lo / 1.6, max(hi, target) * 1.6
        ticks, names = [], []
        for i, o in enumerate(outcomes):
            y = n - 1 - i
            st = styles[o.model]
            ticks.append(y)
            names.append(o.model)
            for which, dy, height, solid in (("refit", 0.17, 0.32, True), ("published", -0.19, 0.26, False)):
                top = o.valid_up_to(which)
                has = (o.valid_refit if which == "refit" else o.valid_published) is not None
                if top is not None and top >= lo:
                    ax.barh(y + dy, top - lo, left=lo, height=height,
                            color=st.colour if solid else "white", edgecolor=st.colour,
                            hatch=None if solid else "////", linewidth=1.1, zorder=3)
                    ax.text(top * 1.06, y + dy, f"{top:g}", va="center", fontsize=7, zorder=4)
                else:
                    text = ("no published set" if not has else "none within tolerance") \
                        if which == "published" else ("failed" if o.error else "none within tolerance")
                    ax.text(lo, y + dy, "  " + text, va="center", fontsize=7, color="#444444", zorder=4)
        ax.axvline(target, color="black", linestyle=(0, (4, 2)), linewidth=1.0, zorder=2)
        ax.text(target, n - 0.45, " judged to", fontsize=7, va="bottom", ha="left")
        ax.set_xscale("log")
        ax.set_xlim(xmin, xmax)
        ax.set_ylim(-0.7, n - 0.2)
        ax.set_yticks(ticks, names)
        ax.grid(axis="y", visible=False)
        ax.set_xlabel(axis.log_label)
        ax.set_title(f"{name}: range within tolerance", loc="left")
        fig.legend(handles=[Patch(facecolor="#555555", edgecolor="#555555", label="refitted parameters"),
                           Patch(facecolor="white", edgecolor="#555555", hatch="////",
                                 label="published parameters")],
                  loc="outside lower center", ncol=2, frameon=False)
        png = render_png(fig)
    return FigureImage(key, f"{name}: the {axis.name} up to which each model stays within tolerance, with "
                       "refitted parameters (solid bar, judged on held-out predictions) and with the "
                       f"published parameter set (hatched bar). The dashed line marks the {axis.name} the "
                       f"comparison was judged to ({target:g} mol/kg).",
                       f"Validity range chart for {name}", png)

