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

_TOL = 1e-12


def plan_risks(plan, targets, scope, model=None) -> tuple[str, float, float]:
    """The model ``plan`` is judged by and its ``Pa`` at the AQL and the RQL,
    computed as ``lotwise check`` computes them for the plan's family.

    Attributes plans (any family) go through
    :func:`lotwise.analysis.audit.risks_under`: under the hypergeometric
    model the AQL and RQL become whole counts of the lot, rounded up at the
    AQL and down at the RQL (the conservative way for each risk). A
    variables plan is judged on its own process curve (the lot size does not
    enter), at the producer's worst case at the AQL and the consumer's at the
    RQL; a two-limit estimate-method plan by the seeded simulation that
    ``check`` runs.
    """
    if plan.scheme == "variables":
        a, r = targets.aql, targets.rql
        if plan.exact_model == "estimate-simulated":
            from lotwise.families.variables import simulate_estimate_method

            pa, _ = simulate_estimate_method(plan.n, plan.m, [a, r])
            return plan.exact_model, float(pa[0].min()), float(pa[1].max())
        return (plan.exact_model, float(plan.pa(a, envelope="lower")),
                float(plan.pa(r, envelope="upper")))
    from lotwise.analysis.audit import risks_under

    mdl = scope.check_model(model)
    r = risks_under(plan, targets, scope, mdl)
    return mdl, r.pa_aql, r.pa_rql


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
    mdl, pa_aql, pa_rql = plan_risks(plan, targets, scope, model)
    row = {"label": label, "scheme": plan.scheme, "plan": plan.to_dict(), "model": mdl,
           "pa_aql": pa_aql, "pa_rql": pa_rql, "alpha": 1 - pa_aql, "beta": pa_rql,
           "meets": bool(1 - pa_aql <= targets.alpha + _TOL and pa_rql <= targets.beta + _TOL),
           "targets": targets.as_dict(), "defects": scope.defects,
           "plan_quality": {
               "producer": quality_at(plan, 1 - targets.alpha, mdl, scope, "producer"),
               "indifference": quality_at(plan, 0.5, mdl, scope, "indifference"),
               "consumer": quality_at(plan, targets.beta, mdl, scope, "consumer")}}
    la, lr = targets.aql, targets.rql
    if mdl == "hypergeometric":  # the levels the risks are evaluated at (whole counts)
        from lotwise.core.kernels import lot_count

        N = scope.lot_size
        la, lr = lot_count(la, N, "up") / N, lot_count(lr, N, "down") / N
    row["asn"] = {"aql": float(plan.asn(la, mdl, scope)), "rql": float(plan.asn(lr, mdl, scope))}
    return row


def compare_plans(entries) -> list[dict]:
    """``entries``: ``(label, plan, targets, scope, model)`` tuples."""
    return [row_for(*e) for e in entries]
