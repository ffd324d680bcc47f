"""Several plans side by side, whatever their type.

:func:`compare_plans` judges each plan against its targets under the model
it is judged by and returns one row per plan: acceptance probabilities and
risks at the AQL and RQL, whether it meets them, its own quality levels (where
``Pa`` is ``1 - alpha``, 0.50 and ``beta``) and, for plans whose sample size
varies, the ASN at the two quality levels. Single plans go through the same
audit as ``lotwise check``; other plan types (variables, double, sequential,
chain, skip-lot) through their own ``pa`` (and ``asn``) methods, with the
quality levels found by bisection on ``p`` (``Pa`` falls in ``p``).

Examples
--------
A supplier's "32, accept on 1" against the designed plan for AQL 1 %, RQL 8 %:

>>> from lotwise.core.types import Targets
>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> t = Targets(aql=0.01, rql=0.08)
>>> rows = compare_plans([("supplier", SinglePlan(n=32, c=1), t, Scope(), None),
...                       ("designed", SinglePlan(n=65, c=2), t, Scope(), None)])
>>> [r["meets"] for r in rows]
[False, True]
"""

from __future__ import annotations

__all__ = ["compare_plans", "row_for", "plan_risks"]

def plan_risks(plan, targets, scope, model=None) -> tuple[str, float, float]:
    """The model ``plan`` is judged by and its ``Pa`` at the AQL and the RQL,
    computed as ``lotwise check`` computes them (:meth:`Plan.risks`: whole lot
    counts rounded the conservative way under the hypergeometric model; a
    variables plan on its own process curve, at the worst edge of a two-limit
    band for each side)."""
    mdl = plan.judging_model(scope, model)
    r = plan.risks(targets, scope, mdl)
    return mdl, r.pa_aql, r.pa_rql


def row_for(label, plan, targets, scope, model=None) -> dict:
    """One comparison row (JSON-ready), from the plan's :func:`~lotwise.analysis.assess.assess`."""
    from lotwise.analysis.assess import assess

    rep = assess(plan, targets, scope, model, verdict=False, rectifying=False).report
    row = {"label": label, "scheme": plan.scheme, "plan": plan.to_dict(), "model": rep["model"],
           **{k: rep[k] for k in ("pa_aql", "pa_rql", "alpha", "beta", "meets",
                                  "plan_quality", "targets")},
           "per_unit": scope.per_unit}
    for key in ("plan_quality_counts", "plan_quality_pa"):  # finite lot: whole counts
        if key in rep:
            row[key] = rep[key]
    if "asn" in rep:
        row["asn"] = {"aql": rep["asn"]["aql"], "rql": rep["asn"]["rql"]}
    return row


def compare_plans(entries) -> list[dict]:
    """``entries``: ``(label, plan, targets, scope, model)`` tuples."""
    return [row_for(*e) for e in entries]
