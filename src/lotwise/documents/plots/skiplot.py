"""Figure of a skip-lot plan: its OC beside the reference plan's and the
fraction of lots inspected."""

from __future__ import annotations

import numpy as np

from lotwise.core.types import Scope
from lotwise.documents.plots.style import STYLE, legend_outside, new_axes, pct_axis
from lotwise.families.skiplot import SkipLotPlan

__all__ = ["skiplot_figure"]


def skiplot_figure(plan: SkipLotPlan, scope: Scope, ax=None, *, model=None, max_p=None,
                   points: int = 401, aql=None, rql=None, title=None):
    """OC curve of the skip-lot plan beside its reference plan's, and the
    average fraction of lots inspected ``F`` (dotted). Returns the figure."""
    from lotwise.analysis.audit import quality_at
    from lotwise.documents.plots.style import STYLE, pct_axis, new_axes, target_point

    model = scope.check_model(model)
    fig, ax = new_axes(ax)
    pu = scope.per_unit
    if max_p is None:
        max_p = quality_at(plan.reference, 0.005, "poisson" if pu else "binomial", scope,
                           "consumer") * 1.1
        if not pu:
            max_p = min(max_p, 1.0)
    ps = np.linspace(0.0, max_p, points)
    ax.plot(ps, plan.pa(ps, model, scope), label=f"{plan.label}: Pa", **STYLE["exact"])
    ax.plot(ps, plan.reference.pa(ps, model, scope), label=f"reference {plan.reference.label}: Pa",
            **STYLE["poisson"])
    ax.plot(ps, plan.fraction_inspected(ps, model, scope),
            label="fraction of lots inspected F", **STYLE["binomial"])
    for level, marker, name, rounding in ((aql, "o", "AQL", "up"), (rql, "s", "RQL", "down")):
        if level is not None:
            y, where, x = target_point(plan, level, model, scope, rounding)
            ax.plot([x], [y], marker=marker, markersize=7, markerfacecolor="white",
                    markeredgecolor="0.0", markeredgewidth=1.3, linestyle="none",
                    label=f"{name}{where}: Pa {y:.3f}")
    ax.set_xlim(0, max_p)
    ax.set_ylim(0, 1.02)
    ax.set_ylabel("Probability / fraction of lots", fontsize=9.5)
    ax.set_xlabel("Quality level: nonconformities per unit" if pu
                  else "Quality level: nonconforming (%)", fontsize=9.5)
    pct_axis(ax, pu)
    ax.set_title(title or f"Skip-lot plan i={plan.i}, f={plan.f:g}, {model} model",
                 fontsize=10.5, loc="left")
    legend_outside(ax)
    fig.tight_layout()
    return fig
