"""Figure of a plan and its accept-on-zero (c = 0) equivalent, overlaid.

The numbers come from :func:`lotwise.analysis.zero.zero_equivalent`; this
module only draws them, in the style of :mod:`lotwise.documents.plots.style`.

Examples
--------
>>> from lotwise.analysis.zero import zero_equivalent
>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> fig = equivalent_figure(zero_equivalent(SinglePlan(n=125, c=3), Scope(), aql=0.01))
>>> fig.axes[0].get_ylabel()
'Probability of acceptance Pa'
"""

from __future__ import annotations

import numpy as np

from lotwise.analysis.zero import ZeroEquivalent, quality_level
from lotwise.documents.plots.style import (STYLE, cycle_style, legend_outside, level_text,
                                           new_axes, pct_axis)

__all__ = ["equivalent_figure"]


def equivalent_figure(eq: ZeroEquivalent, ax=None, *, max_p=None, points: int = 401,
                      title=None):
    """The given plan's OC curve and its c = 0 equivalent's, overlaid, with the
    shared RQL point (open square) and the producer's-side level (open
    circles on both curves). Returns the figure."""
    fig, ax = new_axes(ax)
    scope, model = eq.scope, eq.model
    pu = scope.per_unit
    if max_p is None:
        max_p = max(quality_level(eq.plan, 0.005, model, scope, "consumer"),
                    quality_level(eq.zero_plan, 0.005, model, scope, "consumer")) * 1.1
        if not pu:
            max_p = min(max_p, 1.0)
    ps = np.linspace(0.0, max_p, points)
    lab = eq.plan.label
    ax.plot(ps, eq.plan.pa(ps, model, scope), label=f"{lab}", **STYLE["exact"])
    ax.plot(ps, eq.zero_plan.pa(ps, model, scope), label=f"c = 0 equivalent: {eq.zero_plan.label}",
            **cycle_style(1))

    def lvl(x):
        return level_text(x, pu)

    ax.plot([eq.point, eq.point], [0, eq.beta], color="0.55", linewidth=0.7, linestyle=":")
    ax.plot([eq.point], [eq.pa_point["plan"]], marker="s", markersize=7,
            markerfacecolor="white", markeredgecolor="0.0", markeredgewidth=1.3,
            linestyle="none", label=f"shared RQL point {lvl(eq.point)}: Pa {eq.beta:.2f}")
    ax.plot([eq.level, eq.level], [0, 1], color="0.55", linewidth=0.7, linestyle=":")
    name = "AQL" if eq.level_kind == "aql" else "producer's quality of the plan"
    ax.plot([eq.level, eq.level], [eq.pa_level["plan"], eq.pa_level["zero_plan"]], marker="o",
            markersize=7, markerfacecolor="white", markeredgecolor="0.0", markeredgewidth=1.3,
            linestyle="none", label=f"{name} {lvl(eq.level)}: Pa {eq.pa_level['plan']:.3f} vs "
            f"{eq.pa_level['zero_plan']:.3f}")
    ax.set_xlim(0, max_p)
    ax.set_ylim(0, 1.02)
    ax.set_ylabel("Probability of acceptance Pa", fontsize=9.5)
    ax.set_xlabel("Quality level: nonconformities per unit" if pu
                  else "Quality level: nonconforming (%)", fontsize=9.5)
    pct_axis(ax, pu)
    lot = f", lot of {scope.lot_size}" if scope.lot_size else ""
    ax.set_title(title or f"{lab} and its accept-on-zero equivalent ({model}{lot})",
                 fontsize=10.5, loc="left")
    legend_outside(ax)
    fig.tight_layout()
    return fig
