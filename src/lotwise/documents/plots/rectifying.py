"""Figures of rectifying inspection: AOQ and ATI curves, and OC, AOQ and ATI
of one plan one above the other.

The numbers come from :mod:`lotwise.analysis.rectifying` (``aoq``, ``aoql``,
``ati`` and the quality grid ``curve_grid``); this module only draws them,
in the style of :mod:`lotwise.documents.plots.style` (exact model solid,
Poisson dashed, binomial dotted). matplotlib is imported inside the style
helpers.

Examples
--------
>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> fig = aoq_figure(SinglePlan(n=50, c=1), Scope(lot_size=1000))
>>> len(fig.axes[0].lines)  # three models and the AOQL mark
4
"""

from __future__ import annotations

import numpy as np

from lotwise.analysis.rectifying import (aoq, aoql, ati, check_formula, curve_grid,
                                         format_outgoing)
from lotwise.core.quantities import format_level
from lotwise.core.types import Scope, lot_counts
from lotwise.families.base import need_lot

__all__ = ["aoq_figure", "ati_figure", "rectifying_figure"]


def _style_order(models, scope: Scope) -> tuple:
    """Exact model first (solid), then Poisson (dashed), then the binomial
    (dotted), matching :func:`lotwise.documents.plots.style.oc_figure`."""
    exact = scope.exact_model
    rest = [m for m in ("poisson", "binomial", "hypergeometric") if m in models and m != exact]
    return tuple(([exact] if exact in models else []) + rest)


def _xlabel(scope: Scope) -> str:
    return ("Incoming quality: nonconformities per unit" if scope.per_unit else
            "Incoming quality: nonconforming (%)")


def aoq_figure(plan, scope: Scope, ax=None, *, models=None, formula: str = "screened",
               max_p=None, points: int = 401, title=None):
    """AOQ curves of ``plan`` (exact model solid, the others dashed/dotted),
    with each model's AOQL marked. Returns the figure.

    Under the hypergeometric model the curve is drawn at the whole counts the
    lot can hold.
    """
    from lotwise.documents.plots.style import curve_figure

    check_formula(formula, "formula")
    models = _style_order(models or scope.models, scope)
    ps = curve_grid(plan, scope, max_p, points)
    curves, marks = [], []
    for m in models:
        x = ps
        if m == "hypergeometric":
            x = lot_counts(ps, scope.lot_size, "nearest") / scope.lot_size
        y = np.asarray(aoq(plan, x, m, scope, formula), dtype=float)
        tag = " (exact)" if m == scope.exact_model else ""
        curves.append((f"{m}{tag}", y))
        a = aoql(plan, scope, m, formula)
        if m == scope.exact_model:
            marks.append((a.at, a.value, f"AOQL {format_outgoing(a.value, scope.per_unit)} at "
                          f"{format_level(a.at, scope.per_unit)}"))
    lot = f", lot of {scope.lot_size}" if scope.lot_size else " (large lot)"
    fig = curve_figure(ps, curves, xlabel=_xlabel(scope),
                       ylabel="Average outgoing quality" + ("" if scope.per_unit else " (%)"),
                       per_unit=scope.per_unit, ax=ax, y_percent=not scope.per_unit,
                       marks=marks, title=title or f"AOQ of {plan.label}{lot}")
    return fig


def ati_figure(plan, scope: Scope, ax=None, *, models=None, max_p=None, points: int = 401,
               title=None, marks=()):
    """ATI curves of ``plan`` for the lot size in ``scope`` (items inspected per
    lot), with guide lines at ``n`` and ``N``. Returns the figure."""
    from lotwise.documents.plots.style import curve_figure

    N = need_lot(scope, "ATI curve")
    models = _style_order(models or scope.models, scope)
    ps = curve_grid(plan, scope, max_p, points)
    curves = []
    for m in models:
        tag = " (exact)" if m == scope.exact_model else ""
        curves.append((f"{m}{tag}", np.asarray(ati(plan, ps, m, scope), dtype=float)))
    fig = curve_figure(ps, curves, xlabel=_xlabel(scope),
                       ylabel="Average total inspection per lot", per_unit=scope.per_unit,
                       ax=ax, marks=list(marks),
                       title=title or f"ATI of {plan.label}, lot of {N}")
    ax_ = fig.axes[0] if ax is None else ax
    ax_.axhline(N, color="0.55", linewidth=0.8, linestyle=":")
    ax_.set_ylim(0, N * 1.05)
    return fig


def rectifying_figure(plan, scope: Scope, *, formula: str = "screened", aql=None, rql=None,
                      max_p=None):
    """OC, AOQ and ATI of ``plan`` one above the other (for a known lot size)."""
    from lotwise.documents.plots.style import mpl, oc_figure

    plt = mpl()
    fig, axes = plt.subplots(3, 1, figsize=(6.4, 10.5), dpi=110)
    ps = curve_grid(plan, scope, max_p, 3)
    top = float(ps[-1])
    oc_figure([(plan, scope)], aql=aql, rql=rql, max_p=top, ax=axes[0],
              title=f"OC of {plan.label}, lot of {scope.lot_size}")
    aoq_figure(plan, scope, ax=axes[1], formula=formula, max_p=top)
    ati_figure(plan, scope, ax=axes[2], max_p=top)
    fig.tight_layout()
    return fig
