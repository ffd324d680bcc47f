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

__all__ = ["compare_plans", "row_for"]

_TOL = 1e-12


def row_for(label, plan, targets, scope, model=None) -> dict:
    """One comparison row (JSON-ready)."""
    from lotwise.analysis.audit import quality_at
    from lotwise.analysis.report import single_report

    if plan.scheme == "single":
        rep = single_report(plan, targets, scope, model, verdict=False)
        r = rep["models"][rep["model"]]
        row = {"label": label, "scheme": "single", "plan": plan.to_dict(), "model": rep["model"],
               "pa_aql": r["pa_aql"], "pa_rql": r["pa_rql"], "alpha": r["alpha"],
               "beta": r["beta"], "meets": r["meets"], "plan_quality": rep["plan_quality"],
               "targets": rep["targets"], "defects": scope.defects}
        return row
    mdl = getattr(plan, "exact_model", None) or scope.check_model(model)
    kw = {"envelope": "lower"} if plan.scheme == "variables" else {}
    pa_aql = float(plan.pa(targets.aql, mdl, scope, **kw))
    pa_rql = float(plan.pa(targets.rql, mdl, scope))
    row = {"label": label, "scheme": plan.scheme, "plan": plan.to_dict(), "model": mdl,
           "pa_aql": pa_aql, "pa_rql": pa_rql, "alpha": 1 - pa_aql, "beta": pa_rql,
           "meets": bool(1 - pa_aql <= targets.alpha + _TOL and pa_rql <= targets.beta + _TOL),
           "targets": targets.as_dict(), "defects": scope.defects,
           "plan_quality": {
               "producer": quality_at(plan, 1 - targets.alpha, mdl, scope, "producer"),
               "indifference": quality_at(plan, 0.5, mdl, scope, "indifference"),
               "consumer": quality_at(plan, targets.beta, mdl, scope, "consumer")}}
    if hasattr(plan, "asn"):
        row["asn"] = {"aql": float(plan.asn(targets.aql, mdl, scope)),
                      "rql": float(plan.asn(targets.rql, mdl, scope))}
    return row


def compare_plans(entries) -> list[dict]:
    """``entries``: ``(label, plan, targets, scope, model)`` tuples."""
    return [row_for(*e) for e in entries]
