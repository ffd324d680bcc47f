"""Figures for plans whose sample size varies: ASN curves, the trade-off
view and the sequential decision chart.

Same conventions as :mod:`lotwise.documents.plots.style`: matplotlib imported inside each
function (Agg backend), an optional ``ax``, the figure returned, grey line
styles that survive black-and-white print.

Examples
--------
>>> from lotwise.families.double import DoublePlan
>>> from lotwise.core.types import Scope
>>> fig = asn_figure([(DoublePlan(n1=50, c1=1, n2=100, c2=3), Scope())], aql=0.01, rql=0.05)
>>> fig.axes[0].get_ylabel()
'Average sample number (units)'
"""

from __future__ import annotations

import numpy as np

from lotwise.documents.plots.style import (STYLE, MARKERS, cycle_style, legend_outside,
                                           level_text, new_axes, pct_axis)

__all__ = ["asn_figure", "tradeoff_figure", "sequential_figure", "oc_asn_figure"]


def _style(i: int, count: int) -> dict:
    """The ``i``-th of ``count`` curves: one curve solid, several after
    :data:`~lotwise.documents.plots.style.CYCLE`."""
    return dict(STYLE["exact"]) if count == 1 else cycle_style(i)


def _xlabel(per_unit):
    return ("Quality level: nonconformities per unit" if per_unit
            else "Quality level: nonconforming (%)")


def asn_figure(items, *, model=None, aql=None, rql=None, max_p=None, labels=None,
               curtailed=False, curtailed_label="{label}, curtailed", ax=None,
               points: int = 201, title=None):
    """ASN curves of one or more plans against the quality level.

    Parameters
    ----------
    items : list of (plan, Scope), or a :class:`lotwise.analysis.tradeoff.Tradeoff`
        Plans with an ``asn`` method; a single plan is drawn as a flat line
        at its sample size. A trade-off result is drawn as its ASN panel
        (see :func:`tradeoff_figure`).
    model : str, optional
        Model for every curve (default each scope's exact model).
    aql, rql : float, optional
        Quality levels to mark on the first curve.
    curtailed : bool
        Also draw each plan's curtailed ASN (thin, same style), labelled by
        ``curtailed_label`` (``{label}`` is the plan's label).
    """
    if not isinstance(items, (list, tuple)):  # a trade-off result
        fig, ax = new_axes(ax)
        return tradeoff_figure(items, ax=ax, title=title)
    fig, ax = new_axes(ax)
    scope0 = items[0][1]
    per_unit = scope0.per_unit
    if max_p is None:
        max_p = 2.5 * rql if rql else 0.1
        if not per_unit:
            max_p = min(max_p, 1.0)
    ps = np.linspace(0.0, max_p, points)
    labels = labels or [p.label for p, _ in items]
    first_y = None
    top = 0.0
    for i, ((plan, scope), label) in enumerate(zip(items, labels)):
        m = model or scope.exact_model
        y = np.asarray(plan.asn(ps, m, scope), dtype=float)
        top = max(top, float(np.max(y)))
        ax.plot(ps, y, label=label, **_style(i, len(items)))
        if curtailed and plan.has_curtailment:
            yc = np.asarray(plan.asn_curtailed(ps, m, scope), dtype=float)
            st = _style(i, len(items))
            st["linewidth"] = 0.9
            ax.plot(ps, yc, label=curtailed_label.format(label=label), **st)
        if first_y is None:
            first_y = (plan, scope, m)
    plan, scope, m = first_y
    for level, marker, name in ((aql, "o", "AQL"), (rql, "s", "RQL")):
        if level is None:
            continue
        y = float(plan.asn(level, m, scope))
        ax.axvline(level, color="0.55", linewidth=0.7, linestyle=":")
        ax.plot([level], [y], marker=marker, markersize=7, markerfacecolor="white",
                markeredgecolor="0.0", markeredgewidth=1.3, linestyle="none",
                label=f"{name} {level_text(level, per_unit)}")
    ax.set_xlim(0, max_p)
    ax.set_ylim(0, top * 1.08 + 1)
    ax.set_xlabel(_xlabel(per_unit), fontsize=9.5)
    ax.set_ylabel("Average sample number (units)", fontsize=9.5)
    pct_axis(ax, per_unit)
    if title:
        ax.set_title(title, fontsize=10.5, loc="left")
    legend_outside(ax)
    fig.tight_layout()
    return fig


def tradeoff_figure(result, *, ax=None, title=None):
    """ASN curves (left) and OC curves (right) of a
    :class:`lotwise.analysis.tradeoff.Tradeoff`. With ``ax`` given only the ASN panel
    is drawn there."""
    from lotwise.documents.plots.style import mpl

    t = result.targets
    per_unit = result.scope.per_unit
    if ax is None:
        plt = mpl()
        fig, (a1, a2) = plt.subplots(1, 2, figsize=(10.5, 5.0), dpi=110)
        new_axes(a1)
        new_axes(a2)
    else:
        fig, a1, a2 = ax.figure, ax, None
    top = 0.0
    k = len(result.asn_curves)
    for i, (label, y) in enumerate(result.asn_curves.items()):
        a1.plot(result.ps, y, label=label, **_style(i, k))
        top = max(top, float(np.max(y)))
    for level, marker, name in ((t.aql, "o", "AQL"), (t.rql, "s", "RQL")):
        a1.axvline(level, color="0.55", linewidth=0.7, linestyle=":")
        for i, row in enumerate(r for r in result.rows if r.plan is not None):
            y = row.asn_aql if name == "AQL" else row.asn_rql
            a1.plot([level], [y], marker=marker, markersize=6, markerfacecolor="white",
                    markeredgecolor="0.0", markeredgewidth=1.1, linestyle="none",
                    label=f"{name} {level_text(level, per_unit)}" if i == 0 else None)
    a1.set_xlim(0, float(result.ps.max()))
    a1.set_ylim(0, top * 1.08 + 1)
    a1.set_xlabel(_xlabel(per_unit), fontsize=9.5)
    a1.set_ylabel("Average sample number (units)", fontsize=9.5)
    a1.set_title(title or f"Average sample number, {result.model} model", fontsize=10,
                 loc="left")
    pct_axis(a1, per_unit)
    legend_outside(a1, ncol=1, fontsize=7)
    if a2 is not None:
        k = len(result.pa_curves)
        for i, (label, y) in enumerate(result.pa_curves.items()):
            a2.plot(result.ps, y, label=label, **_style(i, k))
        for level, marker, prob, name, risk in ((t.aql, "o", 1 - t.alpha, "AQL", "1 - alpha"),
                                                (t.rql, "s", t.beta, "RQL", "beta")):
            a2.plot([level], [prob], marker=marker, markersize=7, markerfacecolor="white",
                    markeredgecolor="0.0", markeredgewidth=1.3, linestyle="none",
                    label=f"{name} {level_text(level, per_unit)} at Pa {prob:.3g} ({risk})")
        a2.set_xlim(0, float(result.ps.max()))
        a2.set_ylim(0, 1.02)
        a2.set_xlabel(_xlabel(per_unit), fontsize=9.5)
        a2.set_ylabel("Probability of acceptance Pa", fontsize=9.5)
        a2.set_title("OC curves with the two risk points", fontsize=10, loc="left")
        pct_axis(a2, per_unit)
        legend_outside(a2, ncol=1, fontsize=7)
    fig.tight_layout()
    return fig


def sequential_figure(plan, *, per_unit=False, ax=None, title=None, upto=None):
    """Decision chart of a sequential plan: the acceptance and rejection
    lines, the whole acceptance and rejection numbers as steps, and the
    truncation point."""
    fig, ax = new_axes(ax, size=(6.8, 4.2))
    n0 = plan.truncate
    last = int(min(n0, upto)) if upto else n0
    ns, a, r = plan.numbers()
    ns, a, r = ns[:last], a[:last], r[:last]
    x = np.linspace(0, last, 400)
    ax.plot(x, -plan.h1 + plan.s * x, label=f"acceptance line d = -{plan.h1:.3g} + {plan.s:.3g} n",
            **STYLE["exact"])
    ax.plot(x, plan.h2 + plan.s * x, label=f"rejection line d = {plan.h2:.3g} + {plan.s:.3g} n",
            **STYLE["poisson"])
    ok = a >= 0
    ax.step(ns[ok], a[ok], where="post", color="0.3", linewidth=1.0,
            label="accept on at most (whole numbers)")
    rr = r if per_unit else np.where(r <= ns, r, np.nan)
    ax.step(ns, rr, where="post", color="0.6", linewidth=1.0,
            label="reject on at least (whole numbers)")
    ax.fill_between(x, -plan.h1 + plan.s * x, plan.h2 + plan.s * x, color="0.93",
                    label="continue inspecting")
    if last == n0:
        ax.axvline(n0, color="0.4", linewidth=0.8, linestyle=(0, (1, 2)))
        ax.plot([n0], [plan.midpoint], marker="D", markersize=6, markerfacecolor="white",
                markeredgecolor="0.0", linestyle="none",
                label=f"truncation at n = {n0}: accept on <= {int(a[-1])}")
    first = plan.first_acceptance
    ax.plot([first], [0], marker=MARKERS[0], markersize=6, markerfacecolor="white",
            markeredgecolor="0.0", linestyle="none",
            label=f"first acceptance possible at n = {first}")
    ax.set_xlim(0, last * 1.02)
    shown = rr[np.isfinite(rr)] if not per_unit else rr
    ax.set_ylim(0, max(float(np.max(shown)) if len(shown) else 1.0,
                       plan.h2 + plan.s * last, 1.0) * 1.08)
    ax.set_xlabel("Units inspected n", fontsize=9.5)
    ax.set_ylabel("Nonconformities found" if per_unit else "Nonconforming items found d",
                  fontsize=9.5)
    if title:
        ax.set_title(title, fontsize=10.5, loc="left")
    legend_outside(ax, fontsize=7.2)
    fig.tight_layout()
    return fig


def oc_asn_figure(plan, scope, *, model=None, aql=None, rql=None, max_p=None, title=None):
    """OC curve (exact beside Poisson) and ASN curves (full and curtailed)
    of a double, multiple or sequential plan, side by side."""
    from lotwise.documents.plots.style import mpl, oc_figure

    plt = mpl()
    fig, (a1, a2) = plt.subplots(1, 2, figsize=(10.5, 4.2), dpi=110)
    if max_p is None:
        max_p = 2.5 * rql if rql else None
    if max_p is None:

        max_p = 1.1 * plan.quality_at(0.005, model or scope.exact_model, scope, "consumer")
    if not scope.per_unit:
        max_p = min(max_p, 1.0)
    oc_figure([(plan, scope)], aql=aql, rql=rql, max_p=max_p, ax=a1,
              title=title or plan.label)
    asn_figure([(plan, scope)], model=model, aql=aql, rql=rql, max_p=max_p, ax=a2,
               curtailed=True, labels=["every stage inspected in full"],
               curtailed_label="curtailed: stop when the decision is certain",
               title="Average sample number")
    fig.tight_layout()
    return fig
