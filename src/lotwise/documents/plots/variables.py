"""Figures for variables plans: the OC curve (with the attributes plan for the
same points beside it) and the normal probability plot of a sample.

Same plain style as :mod:`lotwise.documents.plots.style` (grey levels, exact curve solid,
open markers at the AQL and RQL); matplotlib is imported inside each
function, which takes an optional ``ax`` and returns the figure.

Examples
--------
>>> from lotwise.families.variables import VariablesPlan
>>> fig = variables_oc_figure(VariablesPlan(n=42, k=1.901, limit="upper"), aql=0.01, rql=0.06)
>>> fig.axes[0].get_ylabel()
'Probability of acceptance Pa'
"""

from __future__ import annotations

import numpy as np

from lotwise.documents.plots.style import STYLE, legend_outside, level_text, new_axes, pct_axis

__all__ = ["variables_oc_figure", "normal_probability_figure"]


def variables_oc_figure(plan, *, aql=None, rql=None, max_p=None, attributes_plan=None,
                        ax=None, points: int = 301, title=None):
    """OC curve of a variables plan against the fraction nonconforming.

    Two-limit plans whose split between the tails is open are drawn as a
    band (upper edge solid: the consumer's worst case; lower edge dashed:
    the producer's); estimate-method plans show the exact band and the
    exact one-tail curve. ``attributes_plan`` (a single plan by
    attributes) adds its binomial curve for comparison.
    """
    fig, ax = new_axes(ax)
    if max_p is None:
        max_p = max(1.3 * (rql or 0.0), 0.05)
    ps = np.linspace(0.0, max_p, points)
    band = plan.limit == "both" and (plan.sigma == "unknown" or plan.width is None)
    if band and plan.sigma == "unknown":
        ps = np.linspace(0.0, max_p, min(points, 41))
    hi = np.asarray(plan.pa(ps), dtype=float)
    if band:
        lo = np.asarray(plan.pa(ps, envelope="lower"), dtype=float)
        ax.fill_between(ps, lo, hi, color="0.88", linewidth=0)
        ax.plot(ps, hi, label="upper edge: consumer's worst case", **STYLE["exact"])
        ax.plot(ps, lo, label="lower edge: producer's worst case", **STYLE["poisson"])
        if plan.sigma == "unknown":
            one = plan.pa(ps, "noncentral-t")
            ax.plot(ps, one, label="mean near one limit: noncentral t (exact)",
                    **STYLE["binomial"])
    else:
        ax.plot(ps, hi, label=f"{plan.exact_model} (exact)", **STYLE["exact"])
    if attributes_plan is not None:
        from lotwise.core.kernels import pa_binomial

        ax.plot(ps, pa_binomial(attributes_plan.n, attributes_plan.c, ps),
                label=f"attributes {attributes_plan.label}: binomial", **STYLE["other"][0])
    for level, marker, tag, env in ((aql, "o", "AQL", "lower"), (rql, "s", "RQL", "upper")):
        if level is None:
            continue
        y = float(plan.pa(level, envelope=env))
        ax.plot([level, level], [0, y], color="0.55", linewidth=0.7, linestyle=":")
        ax.plot([0, level], [y, y], color="0.55", linewidth=0.7, linestyle=":")
        ax.plot([level], [y], marker=marker, markersize=7, markerfacecolor="white",
                markeredgecolor="0.0", markeredgewidth=1.3, linestyle="none",
                label=f"{tag} {level_text(level, False)}: Pa {y:.3f}")
    ax.set_xlim(0, max_p)
    ax.set_ylim(0, 1.02)
    ax.set_ylabel("Probability of acceptance Pa", fontsize=9.5)
    ax.set_xlabel("Process fraction nonconforming (%)"
                  + (" beyond both limits" if plan.limit == "both" else ""), fontsize=9.5)
    pct_axis(ax, False)
    ax.set_title(title or plan.label, fontsize=9.5, loc="left")
    legend_outside(ax)
    fig.tight_layout()
    return fig


def normal_probability_figure(values, *, lower=None, upper=None, ax=None, title=None,
                              note=None, mean=None, sd=None):
    """Normal probability plot: ordered measurements against normal scores
    (Blom's positions ``(i - 3/8)/(n + 1/4)``), with the line
    ``xbar + s z`` and the specification limits. Points far from the line
    (a bend, an S shape, a lone outlier) argue against normality.

    ``mean`` and ``sd`` are the sample's mean and s when already computed
    (``lotwise judge`` computes them scale-free); a line that leaves the
    floats (values near 1e308) is refused, naming ``--plot``.
    """
    from scipy import special

    from lotwise.core.quantities import InputError

    x = np.sort(np.asarray(values, dtype=float))
    n = x.size
    z = special.ndtri((np.arange(1, n + 1) - 0.375) / (n + 0.25))
    m = float(np.mean(x)) if mean is None else mean
    s = (float(x.std(ddof=1)) if n > 1 else 0.0) if sd is None else sd
    zz = np.array([min(z.min(), -2.5), max(z.max(), 2.5)])
    with np.errstate(over="ignore", invalid="ignore"):
        line = m + s * zz
    if not (np.isfinite(line).all() and np.isfinite(x).all()):
        raise InputError(f"--plot: the normal line of these measurements (mean {m:.4g}, "
                         f"s {s:.4g}) reaches beyond the largest number a float holds; give "
                         "the measurements in other units to plot them")
    fig, ax = new_axes(ax, size=(6.0, 4.4))
    ax.plot(z, x, marker="o", markersize=5, markerfacecolor="white", markeredgecolor="0.0",
            linestyle="none", label=f"measurements (n = {n})")
    ax.plot(zz, line, label=f"normal line: mean {m:.5g}, s {s:.4g}", **STYLE["exact"])
    for level, tag in ((lower, "lower limit"), (upper, "upper limit")):
        if level is not None:
            ax.axhline(level, color="0.35", linewidth=1.0, linestyle=(0, (5, 3)))
            ax.annotate(f"{tag} {level:g}", (zz[1], level), fontsize=8, va="bottom",
                        ha="right", color="0.25")
    span = [x.min(), x.max()] + [v for v in (lower, upper) if v is not None]
    pad = 0.08 * (max(span) - min(span) or 1.0)
    ax.set_ylim(min(span) - pad, max(span) + pad)
    ax.set_xlabel("Normal score (standard deviations)", fontsize=9.5)
    ax.set_ylabel("Measurement", fontsize=9.5)
    if title:
        ax.set_title(title, fontsize=10.5, loc="left")
    if note:
        ax.text(0.99, 0.02, note, transform=ax.transAxes, fontsize=8, ha="right", va="bottom",
                color="0.2")
    legend_outside(ax)
    fig.tight_layout()
    return fig
