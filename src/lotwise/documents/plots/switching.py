"""Figure of a switching scheme: the scheme's OC beside each plan's, and the
expected number of lots until tightened inspection (and discontinuation).

Examples
--------
>>> from lotwise.analysis.switching import Scheme
>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> s = Scheme(normal=SinglePlan(n=80, c=2), tightened=SinglePlan(n=80, c=1))
>>> fig = scheme_figure(s, Scope(), points=21)
>>> [ax.get_ylabel() for ax in fig.axes]
['Probability of acceptance', 'Expected lots from a fresh start']
"""

from __future__ import annotations

import numpy as np

__all__ = ["scheme_figure"]

_PLAN_STYLE = {"normal": 1, "tightened": 2, "reduced": 3}  # places in the curve cycle


def scheme_figure(scheme, scope, *, model=None, max_p=None, points: int = 101, aql=None,
                  rql=None, title=None):
    """Left: the scheme's long-run OC (solid) and each plan's OC; right: the
    expected lots from a fresh start on normal until the first switch to
    tightened and until discontinuation, on a log scale. Returns the figure."""
    from lotwise.analysis.switching import scheme_oc
    from lotwise.documents.plots.style import (STYLE, cycle_style, legend_outside, level_text,
                                               mpl, pct_axis)

    plt = mpl()
    model = scope.check_model(model)
    pu = scope.per_unit
    if max_p is None:
        max_p = 1.1 * float(scheme.normal.quality_at(0.02, model, scope, "consumer"))
        if not pu:
            max_p = min(max_p, 1.0)
    ps = np.linspace(0.0, max_p, points)
    marks = [x for x in (aql, rql) if x is not None]
    whole = scheme_oc(scheme, np.concatenate([ps, marks]), model, scope)  # one chain for all
    oc, at = whole.levels[:points], whole.levels[points:]
    fig, (ax, bx) = plt.subplots(1, 2, figsize=(10.0, 4.0), dpi=110)
    for a in (ax, bx):
        for side in ("top", "right"):
            a.spines[side].set_visible(False)
        a.grid(True, color="0.88", linewidth=0.6)
        a.set_axisbelow(True)
        a.tick_params(labelsize=8.5)
        a.set_xlim(0, max_p)
        a.set_xlabel("Quality level: nonconformities per unit" if pu
                     else "Quality level: nonconforming (%)", fontsize=9.5)
        pct_axis(a, pu)
    ax.plot(ps, [lv.pa for lv in oc], label="whole scheme (long run)",
            **{**STYLE["exact"], "linewidth": 2.4})
    for sev, plan in scheme.plans().items():
        ax.plot(ps, [lv.plan_pa[sev] for lv in oc], label=f"{sev} {plan.label}",
                **cycle_style(_PLAN_STYLE[sev], dense=points > 30))
    found = iter(at)
    for level, marker, name in ((aql, "o", "AQL"), (rql, "s", "RQL")):
        lv = next(found) if level is not None else None
        if level is not None and level <= max_p:
            y = lv.pa
            ax.plot([level], [y], marker=marker, markersize=7, markerfacecolor="white",
                    markeredgecolor="0.0", markeredgewidth=1.3, linestyle="none",
                    label=f"{name} {level_text(level, pu)}: scheme Pa {y:.3f}")
    ax.set_ylim(0, 1.02)
    ax.set_ylabel("Probability of acceptance", fontsize=9.5)
    ax.set_title(title or f"Switching scheme, {model} model", fontsize=10.5, loc="left")
    legend_outside(ax, ncol=1)
    _lots_axis(bx, ps, oc, STYLE)
    fig.tight_layout()
    return fig


def _lots_axis(bx, ps, levels, style) -> None:
    to_t = np.array([np.nan if lv.lots_to_tightened is None else lv.lots_to_tightened
                     for lv in levels])
    to_d = np.array([np.nan if lv.lots_to_discontinue is None else lv.lots_to_discontinue
                     for lv in levels])
    if np.isfinite(to_t).any():
        bx.plot(ps, to_t, label="lots until tightened", **style["exact"])
    if np.isfinite(to_d).any():
        bx.plot(ps, to_d, label="lots until discontinued", **style["poisson"])
    finite = np.concatenate([to_t[np.isfinite(to_t)], to_d[np.isfinite(to_d)]])
    if finite.size:
        from lotwise.documents.plots.style import legend_outside, plain_log_axis

        bx.set_yscale("log")
        bx.set_ylim(1, max(10.0, min(float(finite.max()) * 1.5, 1e7)))
        plain_log_axis(bx.yaxis)
    else:
        bx.text(0.5, 0.5, "the scheme never tightens", transform=bx.transAxes,
                ha="center", va="center", fontsize=9)
    bx.set_ylabel("Expected lots from a fresh start", fontsize=9.5)
    bx.set_title("Lots until the switch (fresh start on normal)", fontsize=10.5, loc="left")
    if finite.size:
        legend_outside(bx, ncol=1)
