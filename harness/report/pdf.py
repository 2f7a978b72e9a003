"""The report as a PDF drawn by matplotlib alone (PdfPages), so it exists on any machine.

Layout. A4 pages with 15 mm margins; text is wrapped by a character budget of the DejaVu fonts
that ship with matplotlib (tables in DejaVu Sans Mono, whose fixed advance of 0.602 em makes
column widths exact); figures are placed as the same PNG images the HTML embeds. Text is kept as
TrueType text (``pdf.fonttype`` 42) so it can be searched and extracted.

Safety. matplotlib reads ``$...$`` as mathematics; every string is given with ``$`` escaped, so
user text is drawn as typed. No creation date is written, so equal content gives equal bytes.
"""

from __future__ import annotations

import io
import textwrap
from pathlib import Path
from typing import Any

from saltbench.report.document import (
    Bullets,
    Document,
    Fields,
    Figure,
    Notice,
    Paragraph,
    Section,
    SignOff,
    Table,
)
from saltbench.report.figures import RC

PAGE_W, PAGE_H = 8.27, 11.69  # A4 in inches
MARGIN = 0.59  # 15 mm
TEXT_W = PAGE_W - 2 * MARGIN
SANS_EM = 0.56  # mean advance of DejaVu Sans in em, for the wrap budget (a little generous)
MONO_EM = 0.602  # DejaVu Sans Mono advance in em


def _plain(text: str) -> str:
    return str(text).replace("$", r"\$")


#: Inches of the following text a heading needs below it on its page, or it moves to the next.
HEADING_KEEP_WITH_NEXT = 1.1


class _Pages:
    def __init__(self, pdf, plt, footer: str):
        self.pdf, self.plt, self.footer = pdf, plt, footer
        self.fig: Any = None  # the open page (a matplotlib Figure, as untyped as plt itself), or None
        self.page = 0
        self.y = 0.0  # inches from the bottom

    def new_page(self) -> None:
        self.close_page()
        self.fig = self.plt.figure(figsize=(PAGE_W, PAGE_H))
        self.page += 1
        self.y = PAGE_H - MARGIN
        self.fig.text(MARGIN / PAGE_W, 0.35 / PAGE_H, _plain(self.footer), fontsize=6.5, color="#555555")
        self.fig.text(1 - MARGIN / PAGE_W, 0.35 / PAGE_H, f"page {self.page}", fontsize=6.5,
                      color="#555555", ha="right")

    def close_page(self) -> None:
        if self.fig is not None:
            self.pdf.savefig(self.fig)
            self.plt.close(self.fig)
            self.fig = None

    def need(self, height: float) -> None:
        if self.fig is None or self.y - height < MARGIN + 0.2:
            self.new_page()

    def _put(self, x: float, text: str, size: float, **kw) -> None:
        self.fig.text(x / PAGE_W, self.y / PAGE_H, _plain(text), fontsize=size, va="top", **kw)

    def lines(self, text: str, size: float = 8.5, indent: float = 0.0, weight: str = "normal",
              color: str = "#1a1a1a", family: str = "DejaVu Sans", em: float = SANS_EM,
              after: float = 0.06, keep: int = 2, keep_after: float = 0.0) -> None:
        """Wrapped text; ``keep`` lines stay together, and ``keep_after`` inches of what follows
        must fit on the same page too (a heading is never left alone at the foot of a page)."""
        width = max(10, int((TEXT_W - indent) * 72 / (em * size)))
        wrapped = textwrap.wrap(text, width, break_long_words=True) or [""]
        step = size * 1.32 / 72
        self.need(step * min(keep, len(wrapped)) + keep_after)
        for line in wrapped:
            self.need(step)
            self._put(MARGIN + indent, line, size, weight=weight, color=color, family=family)
            self.y -= step
        self.y -= after

    def rule(self, width: float = 0.5, x0: float = MARGIN, x1: float = PAGE_W - MARGIN) -> None:
        from matplotlib.lines import Line2D

        self.fig.add_artist(Line2D([x0 / PAGE_W, x1 / PAGE_W], [self.y / PAGE_H] * 2, linewidth=width,
                                   color="#9e9e9e", transform=self.fig.transFigure))

    def table(self, t: Table) -> None:
        size = 6.3
        budget = int(TEXT_W * 72 / (MONO_EM * size))
        ncol = len(t.columns)
        labels = {"memory": " [FROM MEMORY]", "recommended": " [recommended]", "invented": " [INVENTED]"}
        rows = [list(r) for r in t.rows]
        for i, r in enumerate(rows):
            mark = t.marks[i] if t.marks else ""
            if mark and r:
                r[0] += labels.get(mark, "")
        # headers wrap at word breaks, so a long header does not widen a column of short numbers
        widths = [max([max(map(len, t.columns[j].split()), default=1)] + [len(r[j]) for r in rows])
                  for j in range(ncol)]
        avail = budget - 2 * (ncol - 1)
        # short columns (ids, numbers) stay whole; long text columns wrap first, and only if
        # that is not enough do the short ones give way too
        for floor in ([w if w <= 24 else 12 for w in widths], [min(w, 6) for w in widths]):
            while sum(widths) > avail and any(w > f for w, f in zip(widths, floor)):
                j = max(range(ncol), key=lambda k: widths[k] - floor[k])
                widths[j] -= 1
        step = size * 1.3 / 72
        self.lines(t.caption, size=7.5, color="#444444", after=0.02)

        def draw_row(cells: list[str], weight: str) -> None:
            wrapped = [textwrap.wrap(c, widths[j], break_long_words=True) or [""] for j, c in enumerate(cells)]
            height = step * max(len(w) for w in wrapped) + 0.03
            self.need(height + 0.05)
            # one text per printed line: with a fixed-width font the columns line up by padding,
            # and a few long texts draw far faster than one text per cell
            for k in range(max(len(w) for w in wrapped)):
                parts = []
                for j, w in enumerate(wrapped):
                    line = w[k] if k < len(w) else ""
                    parts.append(line.rjust(widths[j]) if t.numeric[j] else line.ljust(widths[j]))
                self.fig.text(MARGIN / PAGE_W, (self.y - k * step) / PAGE_H, _plain("  ".join(parts).rstrip()),
                              fontsize=size, family="DejaVu Sans Mono", va="top", weight=weight)
            self.y -= height
            self.rule(0.3)

        self.need(step * 3)
        self.rule(0.6)
        draw_row(list(t.columns), "bold")
        for r in rows:
            draw_row(r, "normal")
        self.y -= 0.1

    def figure(self, f: Figure, number: int) -> None:
        import matplotlib.image as mpimg

        img = mpimg.imread(io.BytesIO(f.png), format="png")
        h_px, w_px = img.shape[:2]
        w = TEXT_W
        h = w * h_px / w_px
        self.need(h + 0.45)
        ax = self.fig.add_axes([MARGIN / PAGE_W, (self.y - h) / PAGE_H, w / PAGE_W, h / PAGE_H])
        ax.imshow(img, interpolation="none")
        ax.set_axis_off()
        self.y -= h + 0.06
        self.lines(f"Figure {number}. {f.caption}", size=7.5, color="#444444", after=0.12)


def _block(p: _Pages, b, numbers: dict[str, int]) -> None:
    if isinstance(b, Paragraph):
        p.lines(b.text, after=0.08)
    elif isinstance(b, Notice):
        tag = "CAUTION" if b.kind == "caution" else "NOTE"
        p.lines(f"{tag}: {b.title}", size=8.5, weight="bold",
                color="#8a1c1c" if b.kind == "caution" else "#8a5200", after=0.0, keep=3)
        p.lines(b.text, size=8.5, indent=0.15, after=0.1)
    elif isinstance(b, Fields):
        for k, v in b.pairs:
            p.lines(f"{k}: {v}", size=8.5, after=0.02)
        p.y -= 0.06
    elif isinstance(b, Bullets):
        for item in b.items:
            p.lines("• " + item, size=8.5, indent=0.1, after=0.03)
        p.y -= 0.05
    elif isinstance(b, Table):
        p.table(b)
    elif isinstance(b, Figure):
        p.figure(b, numbers[b.key])
    elif isinstance(b, SignOff):
        p.need(0.4 + 0.55 * len(b.roles))
        p.rule(0.6)
        for role in b.roles:
            p.y -= 0.08
            for x, label in ((0.0, role), (1.6, "Name:"), (3.9, "Signature:"), (6.0, "Date:")):
                p.fig.text((MARGIN + x) / PAGE_W, p.y / PAGE_H, _plain(label), fontsize=8.5, va="top",
                           weight="bold" if x == 0 else "normal")
            p.y -= 0.45
            p.rule(0.4)
    else:
        raise TypeError(f"unknown block {type(b).__name__}")


def _section(p: _Pages, s: Section, level: int, numbers: dict[str, int]) -> None:
    size = {2: 12.5, 3: 10.0}.get(level, 9.0)
    if level == 2 and s.key.startswith("electrolyte-") and p.fig is not None:
        p.new_page()
    p.y -= 0.12 if level == 2 else 0.06
    p.lines(s.heading, size=size, weight="bold", after=0.05, keep=6, keep_after=HEADING_KEEP_WITH_NEXT)
    if level == 2:
        p.rule(1.0)
        p.y -= 0.08
    for b in s.blocks:
        _block(p, b, numbers)
    for c in s.children:
        _section(p, c, level + 1, numbers)


def write_pdf(doc: Document, path: Path, version: str) -> None:
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt
    from matplotlib.backends.backend_pdf import PdfPages

    numbers = {f.key: i for i, f in enumerate(doc.figures(), start=1)}
    with plt.rc_context(RC), PdfPages(path, metadata={"Title": doc.title, "Creator": f"saltbench {version}",
                                                      "CreationDate": None}) as pdf:
        p = _Pages(pdf, plt, f"{doc.title} · {doc.subtitle}")
        p.new_page()
        p.lines(doc.title, size=16, weight="bold", after=0.04)
        p.lines(doc.subtitle, size=8.5, color="#555555", after=0.15)
        for s in doc.sections:
            _section(p, s, 2, numbers)
        p.close_page()
