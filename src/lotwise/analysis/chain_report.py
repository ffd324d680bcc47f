"""Reports of chain (ChSP-1) plans: risks under every model, the plan's own
quality levels and plain-words statements."""

from __future__ import annotations

from lotwise.core import kernels as oc
from lotwise.core.quantities import format_level, format_pct
from lotwise.core.types import TOL, Scope
from lotwise.families.chain import ChainDesign, ChainPlan
from lotwise.families.single import SinglePlan

__all__ = ["chain_report", "render_chain"]


def _risks(plan, targets, scope, m):
    if m == "hypergeometric":
        d1 = oc.lot_count(targets.aql, scope.lot_size, "up")
        d2 = oc.lot_count(targets.rql, scope.lot_size, "down")
        pa1, pa2 = float(plan.pa_count(d1, scope)), float(plan.pa_count(d2, scope))
    else:
        d1 = d2 = None
        pa1 = float(plan.pa(targets.aql, m, scope))
        pa2 = float(plan.pa(targets.rql, m, scope))
    e = {"pa_aql": pa1, "pa_rql": pa2, "alpha": 1.0 - pa1, "beta": pa2,
         "meets_alpha": bool(1.0 - pa1 <= targets.alpha + TOL),
         "meets_beta": bool(pa2 <= targets.beta + TOL)}
    e["meets"] = e["meets_alpha"] and e["meets_beta"]
    if d1 is not None:
        e["lot_counts"] = {"aql": d1, "rql": d2}
    return e


def chain_report(plan: ChainPlan, targets, scope: Scope, model: str | None = None, *,
                 design: ChainDesign | None = None) -> dict:
    """Result dictionary for a ChSP-1 plan judged against ``targets``.

    Keys: ``scheme`` ("chain"), ``n``, ``i``, ``model``, ``lot_size``,
    ``targets``, ``models`` (per model ``pa_aql``, ``pa_rql``, ``alpha``,
    ``beta``, ``meets``), ``pa_aql``, ``pa_rql``, ``alpha``, ``beta``,
    ``meets`` under ``model``, ``zero_acceptance_same_n`` (the plain c = 0
    plan of the same ``n`` under ``model``), ``plan_quality`` and
    ``statements``; designs add ``zero_acceptance_n`` (the c = 0 sample size
    meeting beta alone) and ``searched``.
    """
    from lotwise.analysis.zero import quality_level

    model = scope.check_model(model)
    models = {m: _risks(plan, targets, scope, m) for m in scope.models}
    main = models[model]
    zero = _risks(SinglePlan(n=plan.n, c=0), targets, scope, model)
    q = {"producer": quality_level(plan, 1.0 - targets.alpha, model, scope, "producer"),
         "indifference": quality_level(plan, 0.5, model, scope, "indifference"),
         "consumer": quality_level(plan, targets.beta, model, scope, "consumer")}
    out = {
        "scheme": "chain", "n": plan.n, "i": plan.i, "model": model,
        "lot_size": scope.lot_size, "defects": scope.defects,
        "targets": targets.as_dict(), "models": models,
        "pa_aql": main["pa_aql"], "pa_rql": main["pa_rql"], "alpha": main["alpha"],
        "beta": main["beta"], "meets": main["meets"],
        "zero_acceptance_same_n": {"n": plan.n, "c": 0, **zero},
        "plan_quality": q,
    }
    if design is not None:
        out["feasible"] = True
        out["zero_acceptance_n"] = design.zero_n
        out["searched"] = [{"i": i, "n": n, "alpha": a} for i, n, a in design.searched]
    out["statements"] = _statements(out, scope)
    return out


def _statements(r: dict, scope: Scope) -> list[str]:
    pu = scope.defects
    t = r["targets"]
    lv = lambda x: format_level(x, pu)  # noqa: E731
    z = r["zero_acceptance_same_n"]
    ok = lambda b: "met" if b else "NOT met"  # noqa: E731
    m = r["models"][r["model"]]
    out = [
        f"Inspect {r['n']} units of every lot; accept on 0 nonconforming, or on 1 if the "
        f"samples of the {r['i']} preceding lots held none; otherwise reject.",
        f"Lots at the AQL {lv(t['aql'])} are accepted {format_pct(r['pa_aql'])} of the time: "
        f"producer's risk {format_pct(r['alpha'])}, target {format_pct(t['alpha'])}, "
        f"{ok(m['meets_alpha'])}.",
        f"Lots at the RQL {lv(t['rql'])} are accepted {format_pct(r['pa_rql'])} of the time: "
        f"consumer's risk {format_pct(r['beta'])}, target {format_pct(t['beta'])}, "
        f"{ok(m['meets_beta'])}.",
        f"The plain c = 0 plan with the same n = {r['n']} accepts lots at the AQL only "
        f"{format_pct(z['pa_aql'])} of the time (producer's risk {format_pct(z['alpha'])}) "
        f"and lots at the RQL {format_pct(z['pa_rql'])} of the time.",
        "Chain sampling assumes a continuing series of lots of the same product from a steady "
        "process, inspected in the order produced; for isolated lots or a new supplier use a "
        "single plan.",
        "Sampling cannot guarantee a lot free of nonconforming items; critical characteristics "
        "need 100 % inspection or stricter plans as contracts and regulations require.",
    ]
    if "zero_acceptance_n" in r:
        out.insert(4, f"A c = 0 plan meeting the consumer's risk alone needs "
                      f"n = {r['zero_acceptance_n']}.")
    return out


def render_chain(rep: dict, title: str) -> str:
    from lotwise.analysis.report import table

    pu = rep["defects"]
    t = rep["targets"]
    lot = f"lot of {rep['lot_size']}" if rep["lot_size"] else "no lot size (process)"
    lines = [title,
             f"  plan      ChSP-1: n = {rep['n']}, i = {rep['i']}",
             f"  judged by {rep['model']}; {lot}",
             f"  targets   AQL {format_level(t['aql'], pu)} at alpha {format_pct(t['alpha'])}, "
             f"RQL {format_level(t['rql'], pu)} at beta {format_pct(t['beta'])}", ""]
    rows = []
    for m, r in rep["models"].items():
        rows.append([m + (" *" if m == rep["model"] else ""), f"{r['pa_aql']:.5f}",
                     format_pct(r["alpha"]), f"{r['pa_rql']:.5f}", format_pct(r["beta"]),
                     "yes" if r["meets"] else "NO"])
    z = rep["zero_acceptance_same_n"]
    rows.append([f"c = 0, n = {z['n']}", f"{z['pa_aql']:.5f}", format_pct(z["alpha"]),
                 f"{z['pa_rql']:.5f}", format_pct(z["beta"]), "yes" if z["meets"] else "NO"])
    lines.append(table(rows, ["model", "Pa(AQL)", "alpha", "Pa(RQL)", "beta", "meets"]))
    lines.append("  (* the model the plan is judged by; last row: the plain c = 0 plan of the "
                 "same n under it)")
    lines.append("")
    lines += [f"  - {s}" for s in rep["statements"]]
    return "\n".join(lines)
