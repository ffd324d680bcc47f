"""The figures on a plan sheet: the OC curves of every characteristic and,
when the lot size is known, the first plan's AOQ curve."""

from __future__ import annotations

from lotwise.documents.sheets.content import error_free, plan_name

__all__ = ["oc_plot", "aoq_plot"]


def oc_plot(pp, ax=None):
    """The sheet's OC figure: each characteristic's exact curve and the first's
    Poisson curve, with AQL and RQL points marked; with inspection errors also
    each plan's OC under a perfect inspection (the curve its error-free sheet
    would show), beside the true one."""
    from lotwise.documents.plots.style import oc_figure

    scope = pp.request.scope
    items = [(plan, scope) for plan in pp.plans]
    labels = [f"{r['characteristic']['id']} ({plan_name(r)})" for r in pp.reports]
    for plan, rep in zip(pp.plans, pp.reports):  # inspection errors: the perfect-inspection OC
        inner = error_free(plan)
        if inner is not None:
            items.append((inner, scope))
            labels.append(f"{rep['characteristic']['id']} with a perfect inspection")
    first = pp.reports[0]["targets"]
    top = max(1.25 * r["targets"]["rql"] for r in pp.reports)
    # every model for a plan of one fixed sample, the judging model otherwise
    models = None if pp.plans[0].count_rule() is not None else [pp.reports[0]["model"]]
    aql = None if pp.reports[0].get("rql_only") else first["aql"]  # no AQL stated: no mark
    return oc_figure(items, models=models, aql=aql, rql=first["rql"], labels=labels,
                     ax=ax, max_p=None if len(items) == 1 else top)


def aoq_plot(pp, ax=None):
    """AOQ curve of the first characteristic's plan (lot size known)."""
    from lotwise.documents.plots.rectifying import aoq_figure
    from lotwise.families.single import SinglePlan

    rep = pp.reports[0]
    plan = pp.plans[0] if pp.plans else SinglePlan(n=rep["n"], c=rep["c"])
    return aoq_figure(plan, pp.request.scope, ax=ax,
                      title=f"AOQ, {rep['characteristic']['id']} (n={rep['n']}, c={rep['c']})")
