"""Figures: OC curves (exact beside Poisson) and the helpers later curves reuse.

matplotlib is imported inside each function (Agg backend), so importing
this module costs nothing on the command line's fast paths. Every helper
takes an optional ``ax`` and returns the figure.

The style is plain and survives grey print: the exact model is a solid
line, the Poisson approximation dashed, the binomial dotted where it is not
the exact model; several plans (up to eight) differ in dash pattern and in
marker (:data:`CYCLE`); the AQL point is marked with an open circle and the
RQL point with an open square, each with a thin guide line to the axes.
Legends sit outside the data area, below the axis label
(:func:`legend_outside`); log axes are labelled in plain decimals
(:func:`plain_log_axis`).

Examples
--------
>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> fig = oc_figure([(SinglePlan(n=80, c=2), Scope())], aql=0.01, rql=0.08)
>>> fig.axes[0].get_xlabel()
'Quality level: nonconforming (%)'
"""

from __future__ import annotations

from contextlib import contextmanager

import numpy as np

__all__ = ["oc_figure", "curve_figure", "new_axes", "target_point", "STYLE", "CYCLE",
           "cycle_style", "legend_outside", "legend_above", "plain_log_axis",
           "plain_decimal", "level_text"]

#: Line styles by role; grey levels rather than hues.
STYLE = {
    "exact": {"color": "0.05", "linestyle": "-", "linewidth": 1.8},
    "poisson": {"color": "0.35", "linestyle": (0, (5, 3)), "linewidth": 1.4},
    "binomial": {"color": "0.45", "linestyle": (0, (1, 2)), "linewidth": 1.4},
    "other": [
        {"color": "0.25", "linestyle": (0, (6, 2, 1, 2)), "linewidth": 1.5},
        {"color": "0.5", "linestyle": (0, (2, 1)), "linewidth": 1.5},
        {"color": "0.15", "linestyle": (0, (8, 2, 1, 2, 1, 2)), "linewidth": 1.2},
        {"color": "0.6", "linestyle": "-", "linewidth": 2.6},
    ],
}

MARKERS = ("o", "s", "^", "D", "v", "P")

#: Eight curves told apart in grey print: each differs from every other in
#: its dash pattern AND its marker (open markers, spaced along the curve).
#: The circle and the square are left to the AQL and RQL points.
CYCLE = (
    {"color": "0.0", "linestyle": "-", "marker": "^"},
    {"color": "0.3", "linestyle": (0, (5, 2)), "marker": "D"},
    {"color": "0.45", "linestyle": (0, (1, 1.5)), "marker": "v"},
    {"color": "0.15", "linestyle": (0, (6, 2, 1, 2)), "marker": "P"},
    {"color": "0.5", "linestyle": (0, (2, 1)), "marker": "X"},
    {"color": "0.25", "linestyle": (0, (8, 2, 1, 2, 1, 2)), "marker": "*"},
    {"color": "0.55", "linestyle": (0, (10, 3)), "marker": "<"},
    {"color": "0.1", "linestyle": (0, (3, 1, 1, 1, 1, 1)), "marker": ">"},
)


def cycle_style(i: int, *, dense: bool = True) -> dict:
    """Keyword arguments of ``ax.plot`` for the ``i``-th of several curves
    (:data:`CYCLE`, repeating after eight). ``dense`` curves (hundreds of
    points) carry a marker every tenth of the curve's length, each curve at
    its own offset so markers of neighbouring curves do not sit together."""
    st = dict(CYCLE[i % len(CYCLE)])
    st.update(linewidth=1.5, markersize=5.5, markerfacecolor="white",
              markeredgecolor=st["color"], markeredgewidth=1.1)
    if dense:
        st["markevery"] = (0.013 * (i % len(CYCLE)), 0.1)
    return st


def legend_outside(ax, *, where: str = "below", ncol: int | None = None,
                   fontsize: float = 7.5, grow: bool = True):
    """The legend of ``ax`` outside its data area, clear of the ticks and
    the axis labels: ``"below"`` the x-axis label (columns side by side) or
    to the ``"right"`` of the axes. The gap below is measured in points from
    the drawn tick labels and axis label, so a later ``tight_layout`` keeps
    it. A figure made here (``new_axes`` without ``ax``) grows by the
    legend's height (``grow``) so the data area keeps its size. Returns the
    legend, or None when there is nothing to show."""
    if ax.get_legend() is not None:
        ax.get_legend().remove()
    handles, labels = ax.get_legend_handles_labels()
    if not handles:
        return None
    fig = ax.figure
    if where == "right":
        return ax.legend(fontsize=fontsize, frameon=False, loc="upper left",
                         bbox_to_anchor=(1.0, 1.0), borderaxespad=1.0)
    if ncol is None:
        longest = max(len(t) for t in labels)
        ncol = 1 if longest > 42 or len(labels) < 3 else 2
    renderer = fig.canvas.get_renderer()
    below = ax.xaxis.get_tightbbox(renderer)  # tick labels and axis label, not the y label
    gap_px = max(ax.bbox.y0 - below.y0, 0.0) if below is not None else 0.0
    gap_pt = gap_px * 72.0 / fig.dpi + 6.0
    leg = ax.legend(fontsize=fontsize, frameon=False, loc="upper center",
                    bbox_to_anchor=(0.5, 0.0), borderaxespad=gap_pt / fontsize, ncol=ncol,
                    columnspacing=1.5, handlelength=3.2)
    if grow and getattr(fig, "_lotwise_own", False) and len(fig.axes) == 1:
        h = leg.get_window_extent(renderer).height / fig.dpi + gap_pt / 72.0
        w, h0 = fig.get_size_inches()
        fig.set_size_inches(w, h0 + h)
    return leg


def legend_above(ax, floor: float) -> None:
    """Raise the bottom of ``ax`` (shortening it) until the legend
    :func:`legend_outside` put below it ends above ``floor`` (a fraction of
    the figure's height): for axes placed on a page whose space below is
    taken."""
    leg = ax.get_legend()
    if leg is None:
        return
    fig = ax.figure
    bottom = leg.get_window_extent(fig.canvas.get_renderer()).y0 / fig.bbox.height
    if bottom < floor:
        pos = ax.get_position()
        lift = min(floor - bottom, 0.8 * pos.height)
        ax.set_position([pos.x0, pos.y0 + lift, pos.width, pos.height - lift])


def plain_decimal(v: float) -> str:
    """A tick value as a plain decimal: ``600``, ``0.002``, ``12,000`` (whole
    thousands grouped by commas).

    >>> plain_decimal(600.0), plain_decimal(0.002), plain_decimal(12000.0), plain_decimal(1.5)
    ('600', '0.002', '12,000', '1.5')
    """
    if v == 0:
        return "0"
    if abs(v) >= 1000 and float(v).is_integer():
        return f"{v:,.0f}"
    return np.format_float_positional(float(f"{v:.6g}"), trim="-")


def plain_log_axis(axis) -> None:
    """Plain decimal tick labels on a log-scaled ``axis`` (``ax.xaxis`` or
    ``ax.yaxis``): majors always, minors only over a short span."""
    from matplotlib.ticker import FuncFormatter

    def major(v, _pos):
        return plain_decimal(v)

    def minor(v, _pos):
        lo, hi = sorted(axis.get_view_interval())
        if lo <= 0 or np.log10(hi / lo) > 1.5:
            return ""
        digit = round(v / 10 ** np.floor(np.log10(v) + 1e-9), 6)
        return plain_decimal(v) if digit in (2, 3, 5) or np.log10(hi / lo) < 0.7 else ""

    axis.set_major_formatter(FuncFormatter(major))
    axis.set_minor_formatter(FuncFormatter(minor))


class _Figures:
    """The three pyplot calls the plots make (``figure``, ``subplots``,
    ``close``) on matplotlib's object API: a ``Figure`` with an Agg canvas,
    never pyplot (no GUI backend, no global figure registry, a faster
    import). Saving to PDF or SVG picks that backend by the file format."""

    @staticmethod
    def figure(figsize=None, dpi=None):
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        fig = Figure(figsize=figsize, dpi=dpi)
        FigureCanvasAgg(fig)
        return fig

    def subplots(self, nrows=1, ncols=1, *, figsize=None, dpi=None, **kw):
        fig = self.figure(figsize=figsize, dpi=dpi)
        return fig, fig.subplots(nrows, ncols, **kw)

    @staticmethod
    def close(fig) -> None:
        """Nothing to release: the figure is not registered anywhere."""


def mpl():
    """The figure factory of every plot (see :class:`_Figures`)."""
    return _Figures()


def defer_font_subsetting() -> None:
    """Let matplotlib's PDF backend load without fontTools' subsetter.

    ``matplotlib.backends.backend_pdf`` imports ``fontTools.subset`` (about
    0.1 s) for embedding subsets of TrueType fonts; a page set in the PDF core
    fonts embeds none. The module is registered with the standard library's
    :class:`importlib.util.LazyLoader`: it is loaded, unchanged, the first time
    anything uses it."""
    import importlib.util
    import sys

    name = "fontTools.subset"
    if name in sys.modules:
        return
    try:
        spec = importlib.util.find_spec(name)
    except ImportError:
        return
    if spec is None or spec.loader is None:
        return
    spec.loader = importlib.util.LazyLoader(spec.loader)
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    spec.loader.exec_module(module)
    # ``from fontTools import subset`` then finds the attribute and does not
    # touch the module (the import system's checks would load it).
    setattr(sys.modules["fontTools"], "subset", module)


@contextmanager
def font_lookups():
    """Within the block, each font lookup is searched once per family, style,
    variant, weight, stretch and file rather than once per type size too.

    matplotlib's font manager caches a lookup per font size and reads eleven
    settings per call; a sheet sets text in a dozen sizes, and each new size
    scans every installed font again. The best match never depends on the size
    when every installed font is scalable (matplotlib scores the size only for
    bitmap fonts), which is checked; otherwise lookups go to matplotlib as
    they are. The font settings (``font.family``, ``font.sans-serif`` ...,
    which an ``rc_context`` may change inside the block) are part of the key.
    """
    import matplotlib
    from matplotlib import font_manager

    rc = matplotlib.rcParams
    rc_keys = [f"font.{k}" for k in ("family", "style", "variant", "weight", "stretch",
                                     "serif", "sans-serif", "cursive", "fantasy", "monospace")]
    mgr = font_manager.fontManager
    if not all(f.size == "scalable" for f in (*mgr.ttflist, *mgr.afmlist)):
        yield
        return
    own = {name: mgr.__dict__[name] for name in ("findfont", "_find_fonts_by_props")
           if name in mgr.__dict__}
    found: dict = {}

    def cached(real):
        def lookup(prop, fontext="ttf", directory=None, fallback_to_default=True,
                   rebuild_if_missing=True):
            if not isinstance(prop, font_manager.FontProperties):
                return real(prop, fontext, directory, fallback_to_default, rebuild_if_missing)
            settings = tuple(tuple(v) if isinstance(v, list) else v
                             for v in (dict.__getitem__(rc, k) for k in rc_keys))
            key = (real.__name__, tuple(prop.get_family()), prop.get_style(),
                   prop.get_variant(), prop.get_weight(), prop.get_stretch(), prop.get_file(),
                   fontext, directory, fallback_to_default, rebuild_if_missing, settings)
            if key not in found:
                found[key] = real(prop, fontext, directory, fallback_to_default,
                                  rebuild_if_missing)
            hit = found[key]
            return list(hit) if isinstance(hit, list) else hit
        return lookup

    module_findfont = font_manager.findfont  # the module's alias, which the PDF backend calls
    mgr.findfont = cached(mgr.findfont)
    mgr._find_fonts_by_props = cached(mgr._find_fonts_by_props)
    font_manager.findfont = mgr.findfont
    try:
        yield
    finally:
        font_manager.findfont = module_findfont
        for name in ("findfont", "_find_fonts_by_props"):
            if name in own:
                setattr(mgr, name, own[name])
            else:
                delattr(mgr, name)


def new_axes(ax=None, size=(6.4, 4.0)):
    """An ``(fig, ax)`` pair in the project's plain style."""
    plt = mpl()
    if ax is None:
        fig, ax = plt.subplots(figsize=size, dpi=110)
        fig._lotwise_own = True
    else:
        fig = ax.figure
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    ax.grid(True, color="0.88", linewidth=0.6)
    ax.set_axisbelow(True)
    ax.tick_params(labelsize=8.5)
    return fig, ax


def _tidy(fig):
    """Tight layout only for figures made here, never for a caller's page."""
    if getattr(fig, "_lotwise_own", False):
        fig.tight_layout()


def pct_axis(ax, per_unit: bool, which: str = "x"):
    from matplotlib.ticker import FuncFormatter

    if per_unit:
        return
    fmt = FuncFormatter(lambda v, _: plain_decimal(100 * v))  # plain decimals, never 1e-05
    (ax.xaxis if which == "x" else ax.yaxis).set_major_formatter(fmt)


def oc_figure(items, *, models=None, aql=None, rql=None, alpha=None, beta=None,
              max_p=None, labels=None, ax=None, points: int = 401, title=None):
    """OC curves of one or more plans.

    Parameters
    ----------
    items : list of (plan, Scope)
        The first plan is drawn under every model in ``models`` (exact solid,
        Poisson dashed); further plans under their exact model only.
    models : sequence of str, optional
        Models for the first plan; default the scope's models.
    aql, rql : float, optional
        Quality levels to mark (with the first plan's exact ``Pa`` there).
    max_p : float, optional
        Right end of the quality axis.
    labels : list of str, optional
        Legend labels for the plans.
    ax : matplotlib Axes, optional
    """
    fig, ax = new_axes(ax)
    plan0, scope0 = items[0]
    per_unit = scope0.per_unit
    exact = plan0.judging_model(scope0)
    models = tuple(models or plan0.models_for(scope0))
    if plan0.count_rule() is None:  # every model is drawn for plans of one fixed sample
        models = (exact,)
    if max_p is None:
        from lotwise.analysis.audit import quality_at

        max_p = max(quality_at(plan0, 0.005, exact, scope0, "consumer") * 1.1,
                    (rql or 0) * 1.3, 1e-6)
        if not per_unit:
            max_p = min(max_p, 1.0)
    ps = np.linspace(0.0, max_p, points)
    labels = labels or [p.label for p, _ in items]

    several = len(items) > 1
    order = [exact] + [m for m in models if m != exact]
    for m in order:
        if m not in models:
            continue
        if m == exact:
            style = cycle_style(0) if several else STYLE["exact"]
            name = f"{labels[0]}: {m} (exact)"
        else:
            style, name = STYLE.get(m, STYLE["poisson"]), f"{labels[0]}: {m}"
            if several:  # beside other plans' curves: thin, without markers
                style = {**style, "linewidth": 0.9}
        if m == "hypergeometric" and scope0.lot_size:  # at the whole counts a lot can hold
            N = scope0.lot_size
            xs = np.arange(0, min(N, int(np.ceil(max_p * N))) + 1) / N
            if "markevery" in style and xs.size < 40:
                style = {**style, "markevery": 1}
            ax.plot(xs, plan0.pa_count(xs * N, scope0), label=name, **style)
            continue
        ax.plot(ps, plan0.pa(ps, m, scope0), label=name, **style)

    for i, (plan, scope) in enumerate(items[1:]):
        style = cycle_style(i + 1)
        own = plan.judging_model(scope)
        ax.plot(ps, plan.pa(ps, scope.exact_model, scope), label=f"{labels[i + 1]}: {own}",
                **style)

    for level, marker, name, rounding in ((aql, "o", "AQL", "up"), (rql, "s", "RQL", "down")):
        if level is None:
            continue
        y, where, x = target_point(plan0, level, exact, scope0, rounding)
        ax.plot([x, x], [0, y], color="0.55", linewidth=0.7, linestyle=":")
        ax.plot([0, x], [y, y], color="0.55", linewidth=0.7, linestyle=":")
        ax.plot([x], [y], marker=marker, markersize=7, markerfacecolor="white",
                markeredgecolor="0.0", markeredgewidth=1.3, linestyle="none",
                label=f"{name} {level_text(level, per_unit)}{where}: Pa {y:.3f}")

    ax.set_xlim(0, max_p)
    ax.set_ylim(0, 1.02)
    ax.set_ylabel("Probability of acceptance Pa", fontsize=9.5)
    ax.set_xlabel("Quality level: nonconformities per unit" if per_unit
                  else "Quality level: nonconforming (%)", fontsize=9.5)
    pct_axis(ax, per_unit)
    if title:
        ax.set_title(title, fontsize=10.5, loc="left")
    legend_outside(ax)
    _tidy(fig)
    return fig


def level_text(level: float, per_unit: bool) -> str:
    """A marked quality level in a legend (:func:`lotwise.core.numbers.level`):
    ``'1 %'``, ``'250 ppm'``, ``'0.5/unit'``."""
    from lotwise.core import numbers

    return f"{numbers.significant(level, 4)}/unit" if per_unit else numbers.level(level)


def target_point(plan, level: float, model: str, scope, rounding: str):
    """``(Pa, words, x)`` at an AQL (``rounding='up'``) or RQL (``'down'``) as
    the check and the OC table state it: in a finite lot at the whole count
    ``D`` design uses, with ``words`` = ``" (D = d of N)"`` and the point drawn
    at ``x = D/N`` on the whole-count curve; elsewhere at the level itself."""
    if model == "hypergeometric" and plan.attribute_plan and scope.lot_size:
        from lotwise.core.types import lot_counts

        d = int(lot_counts(level, scope.lot_size, rounding))
        return (float(plan.pa_count(d, scope)), f" (D = {d} of {scope.lot_size})",
                d / scope.lot_size)
    return float(plan.pa(level, model, scope)), "", level


def curve_figure(x, curves, *, xlabel, ylabel, per_unit=False, ax=None, title=None,
                 y_percent=False, marks=()):
    """A generic family of curves (AOQ, ATI, ASN ...) in the same style.

    ``curves`` is a list of ``(label, y)``; ``marks`` a list of
    ``(x, y, label)`` points drawn with open markers.
    """
    fig, ax = new_axes(ax)
    styles = [STYLE["exact"], STYLE["poisson"], STYLE["binomial"]]
    for i, (label, y) in enumerate(curves):
        ax.plot(x, y, label=label, **(styles[i] if len(curves) <= len(styles)
                                      else cycle_style(i)))
    for i, (mx, my, label) in enumerate(marks):
        ax.plot([mx], [my], marker=MARKERS[i % len(MARKERS)], markersize=7,
                markerfacecolor="white", markeredgecolor="0.0", markeredgewidth=1.3,
                linestyle="none", label=label)
    ax.set_xlabel(xlabel, fontsize=9.5)
    ax.set_ylabel(ylabel, fontsize=9.5)
    ax.set_xlim(0, float(np.max(x)) if len(x) else 1)
    ax.set_ylim(bottom=0)
    pct_axis(ax, per_unit)
    if y_percent:
        pct_axis(ax, False, "y")
    if title:
        ax.set_title(title, fontsize=10.5, loc="left")
    legend_outside(ax)
    _tidy(fig)
    return fig
