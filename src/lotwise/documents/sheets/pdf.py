"""One-page PDF rendering of a plan sheet, drawn with matplotlib.

The page is A4 portrait. Text is laid out top to bottom with a cursor;
tables are aligned in fixed columns; the OC figure sits beside the
plain-words guarantees. If the content would run past the bottom margin the
page is laid out again with slightly smaller type, so the sheet is always
exactly one page. The text is set in the PDF core font Helvetica
(:data:`CORE_FONTS`), which every reader has, so nothing is embedded and the
numbers can be extracted from the PDF text.
"""

from __future__ import annotations

import io
import textwrap

from lotwise.documents.sheets.content import PLAN_HEADER, RISK_HEADER
from lotwise.documents.sheets.figures import aoq_plot, oc_plot

__all__ = ["render"]

PAGE_W, PAGE_H = 8.27, 11.69  # inches, A4

#: The page's fonts: the PDF core Helvetica (no font file embedded or
#: subset; the sheet's text is plain ASCII and the minus sign is the hyphen).
CORE_FONTS = {"pdf.use14corefonts": True, "font.family": "sans-serif",
              "font.sans-serif": ["Helvetica"], "axes.unicode_minus": False}
MARGIN = 0.55


class _Page:
    """The cursor over one page; with ``fig`` None it only measures (the cursor
    moves by the same arithmetic, nothing is drawn)."""

    def __init__(self, fig, scale: float):
        self.fig = fig
        self.s = scale
        self.y = PAGE_H - MARGIN  # cursor, inches from the bottom

    def _xy(self, x, y):
        return x / PAGE_W, y / PAGE_H

    def line_h(self, size):
        return size * self.s * 1.45 / 72.0

    def text(self, s, size=7.4, x=MARGIN, width=PAGE_W - 2 * MARGIN, weight="normal",
             color="0.0", advance=True, style="normal"):
        size_eff = size * self.s
        factor = 0.6 if weight == "bold" else 0.53
        chars = max(20, int(width * 72.0 / (factor * size_eff)))
        lines = []
        for para in str(s).split("\n"):
            lines += textwrap.wrap(para, chars) or [""]
        y = self.y
        for ln in lines:
            y -= self.line_h(size)
            if self.fig is not None:
                self.fig.text(*self._xy(x, y), ln, fontsize=size_eff, weight=weight,
                              color=color, va="bottom", ha="left", style=style)
        if advance:
            self.y = y
        return y

    def heading(self, s):
        self.y -= 0.06 * self.s
        self.text(s, size=8.6, weight="bold")
        y = self.y - 0.025
        if self.fig is not None:
            self.fig.add_artist(_hline(self.fig, MARGIN, PAGE_W - MARGIN, y))
        self.y = y - 0.02

    def table(self, header, rows, widths, size=7.0):
        xs = [MARGIN]
        for w in widths[:-1]:
            xs.append(xs[-1] + w * self.s)
        h = self.line_h(size)
        self.y -= h
        if self.fig is None:  # measuring: the same steps, nothing drawn
            for _ in rows:
                self.y -= h
            self.y -= 0.04
            return
        for x, v in zip(xs, header):
            self.fig.text(*self._xy(x, self.y), v, fontsize=size * self.s, weight="bold",
                          va="bottom")
        for r in rows:
            self.y -= h
            for x, v in zip(xs, r):
                self.fig.text(*self._xy(x, self.y), str(v), fontsize=size * self.s, va="bottom")
        self.y -= 0.04


def _hline(fig, x0, x1, y):
    from matplotlib.lines import Line2D

    return Line2D([x0 / PAGE_W, x1 / PAGE_W], [y / PAGE_H, y / PAGE_H], color="0.4",
                  linewidth=0.6, transform=fig.transFigure)


def _layout(content, pp, scale: float, figures: bool = True):
    """Lay the page out at ``scale``: ``(figure, cursor at the end)``. With
    ``figures`` False nothing is drawn (the figure is None): the cursor depends
    on the text and the scale only, so a trial layout is arithmetic."""
    from lotwise.documents.plots.style import mpl

    fig = mpl().figure(figsize=(PAGE_W, PAGE_H)) if figures else None
    pg = _Page(fig, scale)
    c = content
    pg.text(c.title, size=13.5, weight="bold")
    pg.y -= 0.04
    pg.text(c.subtitle, size=8.5, color="0.15" if "SHORT" not in c.subtitle and "NO PLAN"
            not in c.subtitle else "0.0", weight="bold" if "SHORT" in c.subtitle or "NO PLAN" in
            c.subtitle else "normal")
    pg.heading("Scope")
    for k, v in c.scope:
        y0 = pg.y
        pg.text(k, weight="bold", advance=False)
        pg.y = y0
        pg.text(v, x=MARGIN + 1.15, width=PAGE_W - 2 * MARGIN - 1.15)
    pg.heading("Plan")
    pg.text(c.plan_line, size=8.0, weight="bold")
    if c.plan_rows:
        pg.table(PLAN_HEADER, c.plan_rows, [1.0, 0.7, 0.85, 1.4, 0.8, 1.35, 1.35])
    if c.alternatives:
        pg.text(c.alternatives, size=6.8, color="0.2")
    if c.risk_rows:
        pg.heading("Targets against achieved risks (every applicable model)")
        pg.table(RISK_HEADER, c.risk_rows, [0.75, 1.25, 0.7, 0.65, 0.65, 0.7, 0.65, 0.65, 0.7],
                 size=6.9)
        pg.text(c.model_note, size=6.8, color="0.2")
    if pp.n is not None and pp.reports:
        pg.heading("OC curve and what the plan guarantees")
        plot_h = 2.75 * scale
        top = pg.y - 0.05
        rect = "aoql" in pp.reports[0]
        plot_w = 4.1 if rect else 4.05
        if figures:  # a trial layout only measures the text
            ax = fig.add_axes([MARGIN / PAGE_W + 0.045, (top - plot_h) / PAGE_H + 0.028,
                               plot_w / PAGE_W, (plot_h - 0.35) / PAGE_H])
            oc_plot(pp, ax=ax)
        if rect:
            if figures:
                ax2 = fig.add_axes([(MARGIN + plot_w + 0.75) / PAGE_W, (top - plot_h) / PAGE_H
                                    + 0.028, (PAGE_W - 2 * MARGIN - plot_w - 0.8) / PAGE_W,
                                    (plot_h - 0.5) / PAGE_H])
                aoq_plot(pp, ax=ax2)
                _small_axes(ax2)
            pg.y = top - plot_h - 0.05
            for g in c.guarantees:
                pg.text(g, size=6.8)
        else:
            right_x = MARGIN + plot_w + 0.75
            pg.y = top
            for g in c.guarantees:
                pg.text(g, size=6.9, x=right_x, width=PAGE_W - MARGIN - right_x)
                pg.y -= 0.05
            pg.y = min(pg.y, top - plot_h)
    if c.poisson:
        pg.heading("The Poisson approximation beside the exact model")
        for p in c.poisson:
            pg.text(p, size=6.7)
    pg.heading("Selecting the sample")
    pg.text(c.selection, size=7.0)
    pg.heading("A rejected lot")
    pg.text(c.rejected, size=7.0)
    if c.rationale:
        pg.heading("Rationale")
        pg.text(c.rationale.strip(), size=7.0)
    pg.heading("Cautions")
    for x in c.cautions:
        pg.text(x, size=6.9, weight="bold" if x.startswith("This part has a CRITICAL") else
                "normal")
    pg.y -= 0.08
    pg.text(c.footer, size=6.3, color="0.25")
    return fig, pg.y


def _small_axes(ax):
    """The type sizes of the small AOQ figure beside the OC curve."""
    for t in (ax.title, ax._left_title):
        t.set_fontsize(7.5)
    ax.xaxis.label.set_fontsize(7)
    ax.yaxis.label.set_fontsize(7)
    ax.tick_params(labelsize=6.5)
    leg = ax.get_legend()
    if leg is not None:
        for t in leg.get_texts():
            t.set_fontsize(6)


def render(content, pp) -> bytes:
    """PDF bytes of exactly one page."""
    from lotwise.documents.plots.style import mpl

    import logging

    plt = mpl()
    # The core Helvetica's metrics file calls its regular weight "Medium"; the
    # font manager warns of the substitution it makes on purpose.
    fm_log = logging.getLogger("matplotlib.font_manager")
    level = fm_log.level
    fm_log.setLevel(logging.ERROR)
    try:
        return _render(content, pp, plt)
    finally:
        fm_log.setLevel(level)


def _render(content, pp, plt) -> bytes:
    import matplotlib

    from lotwise.documents.plots.style import defer_font_subsetting

    defer_font_subsetting()  # the core fonts embed nothing

    with matplotlib.rc_context(CORE_FONTS):
        for scale in (1.0, 0.93, 0.86, 0.8, 0.74, 0.68):
            # the cursor does not depend on the figures: draw them once, at the end
            _, bottom = _layout(content, pp, scale, figures=False)
            if bottom >= MARGIN * 0.6:
                break
        fig, _ = _layout(content, pp, scale)
        buf = io.BytesIO()
        fig.savefig(buf, format="pdf", metadata={"Creator": "lotwise",
                                                 "Title": content.title})
        plt.close(fig)
    return buf.getvalue()
