"""The figure of each model's region within tolerance in (temperature, molality): one panel per way
of judging (published set, refitted at each temperature, fitted across temperatures), molality
against temperature, each model a stepped outline with its region shaded beneath, in the look
of the report's other figures (:mod:`saltbench.report.figures`: colours, line styles, markers,
fixed rcParams, no time stamps)."""

from __future__ import annotations

from typing import Any

import numpy as np

from saltbench.comparison.region import CellState, ColumnKind, ElectrolyteRegion
from saltbench.report.figures import RC, WIDTH_IN, FigureImage, Style, _pyplot, legend_below, render_png

PANEL_TITLES = {ColumnKind.PUBLISHED: "published set", ColumnKind.REFITTED: "refitted at each temperature",
                ColumnKind.ACROSS: "fitted across temperatures"}
NOT_JUDGED = "#7f7f7f"


def _edges(temps_c: np.ndarray) -> np.ndarray:
    """Step edges half-way between data temperatures (one degree either side of a lone one)."""
    if temps_c.size == 1:
        return np.array([temps_c[0] - 1.0, temps_c[0] + 1.0])
    mid = (temps_c[1:] + temps_c[:-1]) / 2
    return np.concatenate([[temps_c[0] - (mid[0] - temps_c[0])], mid, [temps_c[-1] + (temps_c[-1] - mid[-1])]])


def region_figure(region: ElectrolyteRegion, styles: dict[str, Style], key: str) -> FigureImage:
    from matplotlib.lines import Line2D

    plt = _pyplot()
    kinds = region.kinds()
    temps_c = np.array([t - 273.15 for t in region.temperatures_k])
    edges = _edges(temps_c)
    top = [c.data_top for col in region.columns for c in col.cells if c.data_top is not None]
    ymax = max(top) * 1.08 if top else 1.0
    with plt.rc_context(RC):
        fig, axes = plt.subplots(1, len(kinds), figsize=(WIDTH_IN, 3.0), sharey=True, layout="constrained",
                                 squeeze=False)
        handles: dict[str, Line2D] = {}
        for ax, kind in zip(axes[0], kinds):
            for col in (c for c in region.columns if c.kind is kind):
                st = styles[col.model]
                line: Any = st.line  # a name or a dash tuple (figures.MODEL_LINES)
                handles.setdefault(col.model, Line2D([], [], color=st.colour, linestyle=line, marker=st.marker))
                reach = np.array([c.reach if c.state is CellState.WITHIN else 0.0 for c in col.cells])
                if np.any(reach > 0):
                    ax.stairs(reach, edges, color=st.colour, linestyle=st.line, linewidth=1.4, zorder=3)
                    ax.stairs(reach, edges, fill=True, color=st.colour, alpha=0.10, zorder=2)
                    beyond = np.array([c.beyond for c in col.cells])
                    for sel, face in ((reach > 0) & ~beyond, st.colour), ((reach > 0) & beyond, "white"):
                        if np.any(sel):  # open markers: a published set judged beyond its authors' range
                            ax.plot(temps_c[sel], reach[sel], linestyle="none", marker=st.marker, color=st.colour,
                                    markerfacecolor=face, zorder=4)
                    if np.any(beyond):
                        handles.setdefault("judged beyond the authors' temperatures",
                                           Line2D([], [], color="#555555", linestyle="none", marker="o",
                                                  markerfacecolor="white"))
                skipped = np.array([c.state is CellState.NOT_JUDGED for c in col.cells])
                if np.any(skipped):
                    ax.plot(temps_c[skipped], np.zeros(int(skipped.sum())), linestyle="none", marker="x",
                            color=NOT_JUDGED, markersize=6, clip_on=False, zorder=5)
                    handles.setdefault("not judged", Line2D([], [], color=NOT_JUDGED, linestyle="none",
                                                            marker="x"))
            tops = np.array([next((c.data_top for col in region.columns for c in col.cells
                                   if c.temperature_k == t and c.data_top is not None), np.nan)
                             for t in region.temperatures_k])
            ax.stairs(tops, edges, color="black", linestyle=(0, (1, 1.5)), linewidth=1.0, zorder=2)
            handles.setdefault("highest data molality", Line2D([], [], color="black", linestyle=(0, (1, 1.5))))
            ax.set_title(PANEL_TITLES[kind], loc="left")
            ax.set_xlabel("temperature / °C")
            ax.set_xlim(edges[0], edges[-1])
            ax.set_ylim(0.0, ymax)
        axes[0][0].set_ylabel(r"molality within tolerance / (mol kg$^{-1}$)")
        legend_below(fig, list(handles.values()), list(handles))
        png = render_png(fig)
    name = region.electrolyte
    return FigureImage(key, f"{name}: the molality up to which each model stays within tolerance at each data "
                       "temperature (a step per temperature, the region shaded beneath); crosses on the axis mark "
                       "temperatures where a published set was not judged (outside the temperatures its authors "
                       "fitted it to), and open markers the cells judged there on request; the dotted line is the "
                       "highest data molality.",
                       f"Validity region chart for {name}", png)
