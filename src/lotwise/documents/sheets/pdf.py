"""PDF rendering of a plan sheet, drawn with matplotlib.

The pages are A4 portrait. Text is laid out top to bottom with a cursor;
tables are aligned in fixed columns; the OC figure sits beside the
plain-words guarantees. The first page is the sheet: if its content would
run past the bottom margin it is laid out again with slightly smaller type,
so it is always exactly one page. A plan that meets its targets is followed
by the bench procedure (page 2 on, long tables continued on further pages)
and the blank record form (page 2 on, then the bench procedure); a plan that falls short has the
first page only, headed by a banner saying it is not for use at the bench. The text is set in the PDF core font Helvetica
(:data:`CORE_FONTS`), which every reader has, so nothing is embedded and the
numbers can be extracted from the PDF text.
"""

from __future__ import annotations

import io
import textwrap

from lotwise.documents.sheets.content import ORDER_NOTE, PLAN_HEADER, RISK_HEADER, order_rows
from lotwise.documents.plots.style import legend_above, legend_outside
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

    #: Average character width of the text, in ems, for wrapping lines.
    factor = 0.53

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
        factor = self.factor * (1.13 if weight == "bold" else 1.0)
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


def _layout(content, pp, scale: float, figures: bool = True, where: str = ""):
    """Lay the page out at ``scale``: ``(figure, cursor at the end)``. With
    ``figures`` False nothing is drawn (the figure is None): the cursor depends
    on the text and the scale only, so a trial layout is arithmetic."""
    from lotwise.documents.plots.style import mpl

    fig = mpl().figure(figsize=(PAGE_W, PAGE_H)) if figures else None
    pg = _Page(fig, scale)
    c = content
    if c.banner:  # first on the page: what this sheet is not, and why
        _banner(pg, c)
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
    if c.procedures:  # a work instruction: the plan meets its targets
        _instruction_box(pg, c, where)
    else:
        pg.text(c.plan_line, size=8.0)
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
        floor = (top - plot_h) / PAGE_H
        if figures:  # a trial layout only measures the text
            ax = fig.add_axes([MARGIN / PAGE_W + 0.045, (top - plot_h) / PAGE_H + 0.028,
                               plot_w / PAGE_W, (plot_h - 0.35) / PAGE_H])
            oc_plot(pp, ax=ax)
            ax.xaxis.label.set_fontsize(7.5)  # page sizes: room for the legend below
            ax.set_ylabel("Probability of\nacceptance Pa", fontsize=7.5)
            ax.tick_params(labelsize=7)
            legend_outside(ax, fontsize=6, ncol=2)
            legend_above(ax, floor)
        if rect:
            if figures:
                ax2 = fig.add_axes([(MARGIN + plot_w + 0.75) / PAGE_W, (top - plot_h) / PAGE_H
                                    + 0.028, (PAGE_W - 2 * MARGIN - plot_w - 0.8) / PAGE_W,
                                    (plot_h - 0.5) / PAGE_H])
                aoq_plot(pp, ax=ax2)
                _small_axes(ax2)
                legend_outside(ax2, fontsize=6, ncol=1)
                legend_above(ax2, floor)
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
    if c.cost:
        pg.heading("Inspection load and cost")
        for x in c.cost:
            pg.text(x, size=6.9)
    pg.heading("Cautions")
    for x in c.cautions:
        pg.text(x, size=6.9, weight="bold" if x.startswith("This part has a CRITICAL") else
                "normal")
    _approvals(pg, c)
    pg.y -= 0.04
    pg.text(c.footer, size=6.3, color="0.25")
    return fig, pg.y


def _banner(pg, c):
    """The not-for-use banner: a heavy frame across the top, the verdict and
    the reasons inside it."""
    top = pg.y
    pg.y -= 0.08
    pg.text(c.banner, size=12.5, weight="bold", x=MARGIN + 0.12,
            width=PAGE_W - 2 * MARGIN - 0.24)
    pg.y -= 0.03
    for r in c.reasons:
        pg.text(r, size=7.8, weight="bold", x=MARGIN + 0.12, width=PAGE_W - 2 * MARGIN - 0.24)
    pg.y -= 0.08
    _frame(pg, top, 3.0)
    pg.y -= 0.12


def _instruction_box(pg, c, where: str):
    """The plan's instruction in a frame, with where the procedure is."""
    top = pg.y - 0.02
    pg.y = top - 0.04
    inner = PAGE_W - 2 * MARGIN - 0.2
    pg.text("At the bench", size=7.4, weight="bold", x=MARGIN + 0.1, width=inner, color="0.3")
    pg.text(c.plan_line, size=8.0, weight="bold", x=MARGIN + 0.1, width=inner)
    pg.text(where or "Blank record form and step-by-step procedure: the following pages.",
            size=7.0,
            x=MARGIN + 0.1, width=inner)
    pg.y -= 0.05
    _frame(pg, top, 1.2)
    pg.y -= 0.03


def _frame(pg, top: float, width: float):
    """A frame across the page from ``top`` down to the cursor."""
    from matplotlib.patches import Rectangle

    if pg.fig is None:  # measuring only
        return
    pg.fig.add_artist(Rectangle((MARGIN / PAGE_W, pg.y / PAGE_H),
                                (PAGE_W - 2 * MARGIN) / PAGE_W, (top - pg.y) / PAGE_H,
                                transform=pg.fig.transFigure, fill=False, linewidth=width,
                                edgecolor="0.0"))


def _approvals(pg, c, size=7.2):
    """Prepared by, approved by, date: the names given or lines to sign."""
    if not c.approvals:
        return
    pg.y -= 0.06
    width = (PAGE_W - 2 * MARGIN) / len(c.approvals)
    y = pg.y - pg.line_h(size)
    y2 = y - pg.line_h(size) - 0.1  # the name given, or a line to sign on
    for j, (label, value) in enumerate(c.approvals):
        if pg.fig is None:  # measuring only: the cursor moves the same
            break
        x = MARGIN + j * width
        pg.fig.text(*pg._xy(x, y), f"{label}:", fontsize=size * pg.s, weight="bold",
                    va="bottom")
        if value:
            chars = int((width - 0.15) * 72.0 / (0.53 * size * pg.s))
            pg.fig.text(*pg._xy(x, y2), textwrap.shorten(str(value), chars, placeholder="..."),
                        fontsize=size * pg.s, va="bottom")
        pg.fig.add_artist(_hline(pg.fig, x, x + width - 0.15, y2 - 0.03))
    pg.y = y2 - 0.06


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


class _Flow(_Page):
    """Pages that continue one another: the bench procedure and the record form."""

    factor = 0.47

    def __init__(self, plt, title: str):
        self.plt = plt
        self.title = title
        self.figs = []
        self._new()

    def _new(self):
        self.fig = self.plt.figure(figsize=(PAGE_W, PAGE_H))
        self.figs.append(self.fig)
        self.s = 1.0
        self.y = PAGE_H - MARGIN
        self.text(self.title + (" (continued)" if len(self.figs) > 1 else ""), size=12.5,
                  weight="bold")
        self.y -= 0.05

    def need(self, h: float):
        if self.y - h < MARGIN + 0.25:
            self._new()

    def height(self, s, size=7.4, width=PAGE_W - 2 * MARGIN, weight="normal") -> float:
        factor = self.factor * (1.13 if weight == "bold" else 1.0)
        chars = max(20, int(width * 72.0 / (factor * size)))
        lines = sum(len(textwrap.wrap(p, chars) or [""]) for p in str(s).split("\n"))
        return lines * self.line_h(size)

    def para(self, s, size=7.4, **kw):
        self.need(self.height(s, size, kw.get("width", PAGE_W - 2 * MARGIN),
                              kw.get("weight", "normal")))
        self.text(s, size=size, **kw)

    def heading(self, s):
        self.need(0.6)
        super().heading(s)

    def grid(self, header, rows, widths, size=7.0, boxed=False, row_h=None):
        """A table that continues on the next page (header repeated); ``boxed``
        draws every cell as a box to write in."""
        from matplotlib.patches import Rectangle

        h = row_h or self.line_h(size)
        xs = [MARGIN]
        for w in widths[:-1]:
            xs.append(xs[-1] + w)
        total = sum(widths)

        def head():
            self.y -= self.line_h(size)
            for x, v in zip(xs, header):
                self.fig.text(*self._xy(x + 0.03, self.y), v, fontsize=size, weight="bold",
                              va="bottom")
        self.need(2 * h + self.line_h(size))
        head()
        for r in rows:
            if self.y - h < MARGIN + 0.25:
                self._new()
                head()
            self.y -= h
            for x, w, v in zip(xs, widths, r):
                self.fig.text(*self._xy(x + 0.03, self.y + (h - self.line_h(size)) / 2 + 0.02),
                              str(v), fontsize=size, va="bottom")
                if boxed:
                    self.fig.add_artist(Rectangle(self._xy(x, self.y), w / PAGE_W, h / PAGE_H,
                                                  transform=self.fig.transFigure, fill=False,
                                                  linewidth=0.6, edgecolor="0.3"))
        if not boxed:
            self.fig.add_artist(_hline(self.fig, MARGIN, MARGIN + total, self.y - 0.02))
        self.y -= 0.08

    def number_pages(self, first: int, last: int):
        for j, fig in enumerate(self.figs):
            fig.text(*self._xy(PAGE_W - MARGIN, MARGIN * 0.5), f"page {first + j} of {last}",
                     fontsize=6.3, color="0.3", ha="right", va="bottom")


def _proc_table(flow, proc):
    """One procedure's table; long tables of three columns side by side."""
    if not proc.header:
        return
    header, rows = list(proc.header), [list(r) for r in proc.rows]
    total = PAGE_W - 2 * MARGIN
    if len(header) == 3 and len(rows) > 24:  # a long sequential table: columns side by side
        groups = 3
        per = -(-len(rows) // groups)
        wide = []
        for j in range(per):
            line = []
            for g in range(groups):
                k = g * per + j
                line += rows[k] if k < len(rows) else ["", "", ""]
            wide.append(line)
        header = header * groups
        rows = wide
        w = total / groups
        widths = [w * 0.42, w * 0.29, w * 0.29] * groups
        flow.grid(header, rows, widths, size=6.6)
        return
    if proc.kind == "stages":
        widths = [0.75, 0.85, 0.8, 0.95, 0.9, 0.9, total - 5.15]
    elif proc.kind == "chain":
        widths = [1.2, 3.2, total - 4.4]
    elif proc.kind == "skiplot":
        widths = [1.2, 2.0, total - 3.2]
    else:
        widths = [total / len(header)] * len(header)
    flow.grid(header, rows, widths, size=7.0)


def _procedure_pages(plt, c):
    """The bench procedure: one section per characteristic."""
    flow = _Flow(plt, "Bench procedure: " + c.title.split(": ", 1)[-1])
    flow.para(c.plan_line, size=7.8, weight="bold")
    flow.y -= 0.05
    for proc in c.procedures:
        _one_procedure(flow, proc)
    if c.order:
        flow.heading("Inspection order")
        flow.para(ORDER_NOTE, size=7.2)
        total = PAGE_W - 2 * MARGIN
        flow.grid(["Positions"] + [""] * 10, order_rows(c.order),
                  [0.95] + [(total - 0.95) / 10] * 10, size=6.8)
    flow.para("The record form (page 2, and " + c.record_csv + ") holds one lot's results; "
              "keep it with the lot's documents.", size=7.0, color="0.2")
    return flow


def _one_procedure(flow, proc):
    flow.heading(proc.heading)
    for j, step in enumerate(proc.steps, 1):
        flow.para(f"{j}. {step}", size=7.4)
    _proc_table(flow, proc)
    for note in proc.notes:
        flow.para(note, size=7.2, weight="bold" if note.startswith("Worked line")
                  or "CRITICAL" in note else "normal")
    if proc.reference is not None:
        flow.para("The plan an inspected lot is judged by:", size=7.4, weight="bold")
        for j, step in enumerate(proc.reference.steps, 1):
            flow.para(f"{j}. {step}", size=7.4)
        _proc_table(flow, proc.reference)


def _record_pages(plt, c):
    """The blank record form: the lot, each characteristic's fields, the decision."""
    flow = _Flow(plt, "Inspection record (blank form, one per lot): "
                 + c.title.split(": ", 1)[-1])
    total = PAGE_W - 2 * MARGIN
    head = [(k, v) for k, v in c.record_head]
    rows = []
    for j in range(0, len(head), 2):
        pair = head[j:j + 2]
        row = []
        for k, v in pair:
            row += [k, v]
        rows.append(row + ["", ""] * (2 - len(pair)))
    flow.grid(["", "", "", ""], rows, [1.0, total / 2 - 1.0, 1.0, total / 2 - 1.0],
              size=7.2, boxed=True, row_h=0.3)
    for b in c.records:
        flow.heading(b.heading)
        if b.boxes:
            per = 7
            cells = [f"x{j}" for j in range(1, b.boxes + 1)]
            lines = [cells[j:j + per] for j in range(0, len(cells), per)]
            w = total / per
            flow.grid([""] * per, [ln + [""] * (per - len(ln)) for ln in lines], [w] * per,
                      size=5.8, boxed=True, row_h=0.3)
        n = len(b.header)
        flow.grid(list(b.header), [list(r) for r in b.rows], [total / n] * n, size=6.8,
                  boxed=True, row_h=0.34)
        for ln in b.lines:
            flow.para(ln, size=6.9, color="0.2")
    flow.heading("Lot decision")
    flow.grid(["Lot accepted (every characteristic accepted) / rejected", "Inspector",
               "Signature", "Date"], [["", "", "", ""]], [total * 0.4, total * 0.2,
                                                          total * 0.2, total * 0.2],
              size=6.8, boxed=True, row_h=0.4)
    flow.para("Remarks:", size=7.2, weight="bold")
    flow.grid([""], [[""]], [total], boxed=True, row_h=0.8)
    return flow


def _render(content, pp, plt) -> bytes:
    import matplotlib

    from lotwise.documents.plots.style import defer_font_subsetting

    defer_font_subsetting()  # the core fonts embed nothing

    with matplotlib.rc_context(CORE_FONTS):
        flows = []
        if content.procedures:  # a plan for the bench: its record form and procedure
            flows = [_record_pages(plt, content), _procedure_pages(plt, content)]
        last = 1 + sum(len(f.figs) for f in flows)
        where = ""
        if flows:
            form, proc = 2, 2 + len(flows[0].figs)
            where = (f"Blank record form (one per lot): page {form}"
                     + (f"-{proc - 1}" if proc - 1 > form else "")
                     + f", and {content.record_csv} beside this sheet. Step-by-step procedure "
                     f"for each characteristic: page {proc}"
                     + (f"-{last}" if last > proc else "") + ".")
        for scale in (1.0, 0.93, 0.86, 0.8, 0.74, 0.68):
            # the cursor does not depend on the figures: draw them once, at the end
            _, bottom = _layout(content, pp, scale, figures=False, where=where)
            if bottom >= MARGIN * 0.6:
                break
        fig, _ = _layout(content, pp, scale, where=where)
        if last > 1:
            fig.text(1 - MARGIN / PAGE_W, MARGIN * 0.5 / PAGE_H, f"page 1 of {last}",
                     fontsize=6.3, color="0.3", ha="right", va="bottom")
        first = 2
        for f in flows:
            f.number_pages(first, last)
            first += len(f.figs)
        from matplotlib.backends.backend_pdf import PdfPages

        buf = io.BytesIO()
        with PdfPages(buf, metadata={"Creator": "lotwise", "Title": content.title}) as doc:
            for f in [fig] + [g for fl in flows for g in fl.figs]:
                doc.savefig(f)
                plt.close(f)
    return buf.getvalue()
