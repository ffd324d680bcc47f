"""Figures for lot records and negotiations, in the style of :mod:`lotwise.documents.plots.style`.

* :func:`run_chart_figure` -- the lot fractions of one supplier and part in
  inspection order against their lot ids (or, where lots have none, their
  dates), the process average and the exact binomial probability limits for
  each lot's sample size (a step line, since the limits change with the
  sample size); lots beyond the limits are drawn as filled markers, rejected
  lots as crosses, lots of a run-rule signal ringed.
* :func:`run_charts_figure` -- several run charts stacked in one figure.
* :func:`tradeoff_figure` -- the price of tighter targets: sample size
  against the discrimination ratio RQL/AQL, one line per AQL, and beside it
  the supplier's expected rejection rate.

matplotlib is imported inside each function; each takes an optional ``ax``
(or ``axes``) and returns the figure.

Examples
--------
>>> import pandas as pd
>>> chart = pd.DataFrame({"fraction": [0.0, 0.0125, 0.0375], "lower": [0.0] * 3,
...                       "upper": [0.075] * 3, "out": [False] * 3,
...                       "accepted": [True, True, False]})
>>> fig = run_chart_figure(chart, process_average=0.0167, title="Acme / H-100")
>>> fig.axes[0].get_ylabel()
'Lot fraction nonconforming (%)'
"""

from __future__ import annotations

import numpy as np

from lotwise.core.numbers import percent
from lotwise.documents.plots.style import (STYLE, cycle_style, legend_outside, mpl, new_axes,
                                           pct_axis, plain_decimal, plain_log_axis)

__all__ = ["run_chart_figure", "run_charts_figure", "tradeoff_figure"]


def run_chart_figure(chart, *, process_average: float, title: str | None = None, ax=None,
                     tail: float = 0.00135):
    """Run chart of one group's lots (``chart`` as kept by
    :func:`lotwise.data.records.summarise`: a mapping or DataFrame with columns
    ``fraction, lower, upper, out, accepted``, in inspection order, and
    optionally ``lot_id``, ``date`` and ``signal``). The x axis names the lots
    by their ids when every lot has one (in inspection order), else places
    them at their dates; without either, at their order."""
    fig, ax = new_axes(ax, size=(7.0, 3.2))
    y = np.asarray(chart["fraction"], dtype=float)
    x, xlabel, dress = _lot_axis(chart, y.size)
    out = np.asarray(chart["out"], dtype=bool)
    acc = np.asarray(chart["accepted"], dtype=bool)
    ax.plot(x, y, color="0.55", linewidth=0.8, zorder=2)
    inside = ~out & acc
    ax.plot(x[inside], y[inside], linestyle="none", marker="o", markersize=4,
            markerfacecolor="white", markeredgecolor="0.1", markeredgewidth=1.0,
            label="lot (accepted)", zorder=3)
    rej = ~acc
    if rej.any():
        ax.plot(x[rej], y[rej], linestyle="none", marker="x", markersize=6, color="0.0",
                markeredgewidth=1.4, label="lot rejected", zorder=4)
    if out.any():
        ax.plot(x[out], y[out], linestyle="none", marker="o", markersize=6,
                markerfacecolor="0.0", markeredgecolor="0.0", label="beyond the limits",
                zorder=5)
    sig = np.asarray(chart["signal"], dtype=bool) if "signal" in chart else \
        np.zeros(y.size, dtype=bool)
    if sig.any():
        ax.plot(x[sig], y[sig], linestyle="none", marker="o", markersize=10,
                markerfacecolor="none", markeredgecolor="0.35", markeredgewidth=0.9,
                label="run-rule signal", zorder=2.5)
    ax.axhline(process_average, **STYLE["exact"], label=f"process average "
               f"{percent(process_average)}")
    upper = np.asarray(chart["upper"], dtype=float)
    lower = np.asarray(chart["lower"], dtype=float)
    lim = {**STYLE["poisson"], "linewidth": 1.1}
    ax.step(x, upper, where="mid", **lim,
            label=f"exact binomial limits ({percent(tail)} each side)")
    if np.any(lower > 0):
        ax.step(x, lower, where="mid", **lim)
    if xlabel != "Inspection date":
        ax.set_xlim(0.5, max(y.size, 1) + 0.5)
    top = max(float(np.max(upper, initial=0)), float(np.max(y, initial=0)), process_average)
    ax.set_ylim(bottom=0, top=(top or 0.01) * 1.08)
    ax.set_xlabel(xlabel, fontsize=9.5)
    dress(ax)
    ax.set_ylabel("Lot fraction nonconforming (%)", fontsize=9.5)
    pct_axis(ax, False, "y")
    if title:
        ax.set_title(title, fontsize=10.5, loc="left")
    legend_outside(ax, fontsize=6.8, ncol=3)
    fig.tight_layout()
    return fig


def _lot_axis(chart, m: int):
    """``(x, label, dress)``: where the lots go on the x axis, its label and a
    function that sets its ticks. Lot ids, when every lot has one, label
    positions 1..m (at most about 12 labels shown, turned); else the lots'
    dates; else their order."""
    ids = [str(v).strip() for v in chart["lot_id"]] if "lot_id" in chart else []
    if ids and all(ids):
        import matplotlib.ticker as mticker

        x = np.arange(1, m + 1)
        step = max(1, int(np.ceil(m / 12)))
        ticks = list(range(1, m + 1, step))

        def place(ax):
            ax.xaxis.set_major_locator(mticker.FixedLocator(ticks))
            ax.set_xticklabels([ids[t - 1] for t in ticks], rotation=45, ha="right",
                               fontsize=7.5)
        return x, "Lot id, in inspection order", place
    if "date" in chart:
        dates = np.asarray(chart["date"], dtype="datetime64[ns]")
        if dates.size and not np.isnat(dates).any():
            def turn(ax):
                for t in ax.get_xticklabels():
                    t.set_rotation(30)
                    t.set_ha("right")
            return dates, "Inspection date", turn

    def whole(ax):
        from matplotlib.ticker import MaxNLocator

        ax.xaxis.set_major_locator(MaxNLocator(integer=True))  # lots are counted
    return np.arange(1, m + 1), "Lot, in inspection order", whole


def run_charts_figure(groups, *, limit: int = 8):
    """Stacked run charts of up to ``limit`` groups
    (:class:`~lotwise.data.records.GroupSummary` with charts kept)."""
    plt = mpl()
    shown = list(groups)[:limit]
    k = max(len(shown), 1)
    fig, axes = plt.subplots(k, 1, figsize=(7.0, 2.9 * k), dpi=110, squeeze=False)
    for ax, g in zip(axes[:, 0], shown):
        run_chart_figure(g.chart, process_average=g.process_average, ax=ax,
                         title=f"{g.supplier} / {g.part}: {g.lots} lots, "
                               f"{g.accepted} accepted")
    fig.tight_layout()
    return fig


def tradeoff_figure(rows, *, axes=None, title: str | None = None):
    """Sample size and the supplier's rejection rate against RQL/AQL.

    ``rows`` are :class:`~lotwise.analysis.supplier.TradeoffRow`; rows without a plan
    are left out. One line per AQL, markers per the plots' marker cycle.
    """
    plt = mpl()
    if axes is None:
        have_rate = any(r.p_reject is not None for r in rows)
        if have_rate:
            fig, axes = plt.subplots(1, 2, figsize=(10.0, 4.0), dpi=110)
        else:
            fig, ax = plt.subplots(figsize=(6.4, 4.0), dpi=110)
            axes = [ax]
    fig = axes[0].figure
    for ax in axes:
        new_axes(ax)
    aqls = sorted({r.aql for r in rows if r.plan is not None})
    for i, a in enumerate(aqls):
        sub = sorted((r for r in rows if r.aql == a and r.plan is not None),
                     key=lambda r: r.ratio)
        x = [r.ratio for r in sub]
        st = cycle_style(i, dense=False)
        label = f"AQL {percent(a, trim=True)}"
        axes[0].plot(x, [r.n for r in sub], label=label, **st)
        if len(axes) > 1:
            axes[1].plot(x, [r.p_reject_predictive if r.p_reject_predictive is not None
                             else r.p_reject for r in sub], label=label, **st)
    axes[0].set_xscale("log")
    axes[0].set_yscale("log")
    axes[0].set_xlabel("Discrimination ratio RQL / AQL", fontsize=9.5)
    axes[0].set_ylabel("Sample size n", fontsize=9.5)
    axes[0].set_title(title or "Sample size against the discrimination ratio", fontsize=10,
                      loc="left")
    if len(axes) > 1:
        axes[1].set_xscale("log")
        axes[1].set_xlabel("Discrimination ratio RQL / AQL", fontsize=9.5)
        axes[1].set_ylabel("Supplier's lots rejected (%)", fontsize=9.5)
        axes[1].set_title("Supplier's expected rejection rate", fontsize=10, loc="left")
        pct_axis(axes[1], False, "y")
        axes[1].set_ylim(bottom=0)
    from matplotlib.ticker import FixedLocator, FuncFormatter, NullFormatter, NullLocator

    ratios = [r.ratio for r in rows if r.plan is not None]
    nice = [1, 1.25, 1.5, 2, 3, 4, 5, 6, 8, 10, 15, 20, 30, 50, 100, 200, 500, 1000]
    inside = [t for t in nice if min(ratios) / 1.05 <= t <= max(ratios) * 1.05] or nice
    span = np.log10(max(inside) / min(inside)) or 1.0
    ticks = []
    first = (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 3, 1.5, 4, 8, 30, 15, 6, 1.25)
    for t in sorted(inside, key=first.index):  # round values first, then fill the gaps,
        if all(abs(np.log10(t / u)) >= span / 11 for u in ticks):  # no two labels touching
            ticks.append(t)
    ticks.sort()
    for ax in axes:
        ax.xaxis.set_major_locator(FixedLocator(ticks))
        ax.xaxis.set_minor_locator(NullLocator())
        ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: plain_decimal(v)))
        ax.xaxis.set_minor_formatter(NullFormatter())
    plain_log_axis(axes[0].yaxis)
    for ax in axes:
        legend_outside(ax)
    fig.tight_layout()
    return fig
