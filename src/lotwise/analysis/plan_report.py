"""One result dictionary for any plan whose sample size varies (double,
multiple, sequential), in the same shape as :func:`lotwise.analysis.report.single_report`.

The keys are those of the single report -- ``scheme``, the plan's own keys
(``n1, c1, r1, n2, c2`` for a double plan), ``model``, ``lot_size``,
``defects``, ``targets``, ``models`` (per model ``pa_aql``, ``pa_rql``,
``alpha``, ``beta``, ``meets``), ``meets``, ``plan_quality``,
``statements`` -- plus what a varying sample adds:

``asn``
    ``{"aql", "rql", "max", "max_at"}``: average sample number under the
    judging model with every stage inspected in full;
``asn_curtailed``
    ``{"aql", "rql"}``: the same when inspection stops as soon as the
    decision is certain;
``aoql`` (lot size known)
    ``{"value", "at"}``: the largest average outgoing quality under
    rectifying inspection;
``poisson_verdict``
    how far the Poisson OC curve is from the exact one.

For a :class:`~lotwise.families.base.SinglePlan` :func:`plan_report` returns
:func:`lotwise.analysis.report.single_report` unchanged.

Examples
--------
An auditor checks a supplier's double plan for castings against AQL 1 %
and RQL 5 %: it protects the producer but lets lots at the RQL through
29 % of the time.

>>> from lotwise.core.types import Targets
>>> from lotwise.families.double import DoublePlan
>>> rep = plan_report(DoublePlan(n1=50, c1=1, n2=100, c2=3), Targets(aql=0.01, rql=0.05),
...                   Scope())
>>> rep["meets"], round(rep["models"]["binomial"]["beta"], 4), round(rep["asn"]["rql"], 2)
(False, 0.2904, 98.1)
"""

from __future__ import annotations

import numpy as np

from lotwise.analysis.audit import ModelRisk, PlanQuality, risks_under
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import format_level, format_pct

__all__ = ["quality_level", "plan_quality", "plan_report", "render_plan", "curve_error",
           "SAFETY"]

_TOL = 1e-12

#: Printed with every varying-sample report.
SAFETY = ("Sampling cannot guarantee a lot free of nonconforming items; critical "
          "characteristics need 100 % inspection or stricter plans per contract and "
          "regulation. Defer to your applicable standards and qualified quality "
          "professionals.")


def quality_level(plan, prob: float, model: str, scope: Scope, side: str = "producer") -> float:
    """Quality level where ``Pa`` equals ``prob`` (any plan): see
    :func:`lotwise.analysis.audit.quality_at`."""
    from lotwise.analysis.audit import quality_at

    return quality_at(plan, prob, model, scope, side)


def plan_quality(plan, targets, scope: Scope, model: str) -> PlanQuality:
    """Producer's, indifference and consumer's quality levels of ``plan``."""
    probs = (1.0 - targets.alpha, 0.5, targets.beta)
    return PlanQuality(model=model,
                       producer=quality_level(plan, probs[0], model, scope, "producer"),
                       indifference=quality_level(plan, probs[1], model, scope, "indifference"),
                       consumer=quality_level(plan, probs[2], model, scope, "consumer"),
                       probabilities=probs)


def curve_error(plan, scope: Scope, exact: str, points: int = 401):
    """Largest ``|Pa_poisson - Pa_exact|`` and where, from 0 to the level
    where the exact ``Pa`` has fallen to 0.001."""
    top = quality_level(plan, 0.001, exact, scope, "consumer")
    top = max(min(1.0, 1.2 * top), 1e-9)
    ps = np.linspace(0.0, top, points)
    if exact == "hypergeometric":
        ps = np.unique(np.round(ps * scope.lot_size)) / scope.lot_size
    e = np.asarray(plan.pa(ps, exact, scope))
    a = np.asarray(plan.pa(ps, "poisson", scope))
    err = np.abs(a - e)
    i = int(np.argmax(err))
    return float(err[i]), float(ps[i])


def _levels(targets, scope: Scope, model: str):
    """The AQL and RQL as evaluated under ``model`` (whole lot counts under
    the hypergeometric, rounded up at the AQL and down at the RQL)."""
    if model == "hypergeometric":
        from lotwise.core import kernels as oc

        N = scope.lot_size
        return (oc.lot_count(targets.aql, N, "up") / N, oc.lot_count(targets.rql, N, "down") / N)
    return targets.aql, targets.rql


def plan_report(plan, targets, scope: Scope, model: str | None = None, *, design=None,
                verdict: bool = True) -> dict:
    """The full result for ``plan`` judged against ``targets`` in ``scope``.

    Parameters
    ----------
    plan : SinglePlan, DoublePlan, MultiplePlan or SequentialPlan
    targets : lotwise.families.single.Targets
    scope : Scope
    model : str, optional
        The judging model (default the exact one for the scope).
    design : object, optional
        A designer's result; its ``report_extra()`` dictionary is merged in.
    """
    if isinstance(plan, SinglePlan):
        from lotwise.analysis.report import single_report

        return single_report(plan, targets, scope, model, design=design, verdict=verdict)
    model = scope.check_model(model)
    plan = plan.for_scope(scope)
    risks: dict[str, ModelRisk] = {m: risks_under(plan, targets, scope, m) for m in scope.models}
    quality = plan_quality(plan, targets, scope, model)
    la, lr = _levels(targets, scope, model)
    asn_aql = float(plan.asn(la, model, scope))
    asn_rql = float(plan.asn(lr, model, scope))

    amax, amax_at = plan.max_asn(model, scope)
    if hasattr(plan, "asn_curtailed"):
        cur = {"aql": float(plan.asn_curtailed(la, model, scope)),
               "rql": float(plan.asn_curtailed(lr, model, scope))}
    else:
        cur = None
    models = {}
    for m, r in risks.items():
        d = r.as_dict()
        ma, mr = _levels(targets, scope, m)
        d["asn_aql"] = float(plan.asn(ma, m, scope))
        d["asn_rql"] = float(plan.asn(mr, m, scope))
        models[m] = d
    out = {"scheme": plan.scheme}
    out.update(plan.to_dict())
    out.update({
        "label": plan.label,
        "notation": plan.notation(),
        "n_max": plan.n_max,
        "model": model,
        "lot_size": scope.lot_size,
        "defects": scope.defects,
        "targets": targets.as_dict(),
        "models": models,
        "meets": risks[model].meets,
        "plan_quality": quality.as_dict(),
        "asn": {"aql": asn_aql, "rql": asn_rql, "max": amax, "max_at": amax_at},
        "asn_curtailed": cur,
    })
    if model == "hypergeometric":
        r = risks["hypergeometric"]
        out["lot_counts"] = {"aql": r.count_aql, "rql": r.count_rql,
                             "aql_rounding": "up", "rql_rounding": "down"}
    if scope.lot_size:
        out["aoql"] = _aoql(plan, model, scope, quality.consumer)
    if plan.scheme == "sequential":
        out["wald"] = _wald(plan, targets, scope)
        out["truncation_rule"] = ("a lot still undecided after the last unit is accepted if "
                                  "its count is at most the midpoint line s*n0 + (h2 - h1)/2 "
                                  f"= {plan.midpoint:.4g}, rejected otherwise")
    if design is not None and hasattr(design, "report_extra"):
        out.update(design.report_extra())
    if verdict:
        if model == "poisson" or scope.defects:
            out["poisson_verdict"] = {"exact_model": "poisson", "exact_is_poisson": True,
                                      "summary": "Poisson is the exact model for "
                                                 "nonconformities per unit; no approximation "
                                                 "is involved."}
        else:
            exact = scope.exact_model
            err, at = curve_error(plan, scope, exact)
            pr, er = risks["poisson"], risks[exact]
            out["poisson_verdict"] = {
                "exact_model": exact, "exact_is_poisson": False,
                "max_abs_error": err, "max_abs_error_at": at,
                "summary": (f"Largest |Poisson - {exact}| difference in Pa: {err:.4f} at "
                            f"{format_level(at)}. At the AQL Poisson gives Pa "
                            f"{pr.pa_aql:.4f} against {er.pa_aql:.4f}; at the RQL "
                            f"{pr.pa_rql:.4f} against {er.pa_rql:.4f}; the Poisson "
                            f"answer {'meets' if pr.meets else 'does NOT meet'} the targets, "
                            f"the exact one {'meets' if er.meets else 'does NOT meet'} them.")}
    out["statements"] = _statements(out, plan, scope)
    return out


def _aoql(plan, model: str, scope: Scope, consumer: float) -> dict:
    top = max(min(1.0, 1.5 * consumer), 1e-6)
    ps = np.linspace(0.0, top, 201)
    if model == "hypergeometric":
        ps = np.unique(np.round(ps * scope.lot_size)) / scope.lot_size
    v = np.asarray(plan.aoq(ps, model, scope))
    i = int(np.argmax(v))
    if model != "hypergeometric" and 0 < i < len(ps) - 1:
        fine = np.linspace(ps[i - 1], ps[i + 1], 201)
        fv = np.asarray(plan.aoq(fine, model, scope))
        j = int(np.argmax(fv))
        if fv[j] > v[i]:
            return {"value": float(fv[j]), "at": float(fine[j])}
    return {"value": float(v[i]), "at": float(ps[i])}


def _wald(plan, targets, scope: Scope) -> dict:
    per_unit = scope.defects
    return {"pa_aql": float(plan.wald_pa(targets.aql, per_unit)),
            "pa_rql": float(plan.wald_pa(targets.rql, per_unit)),
            "asn_aql": float(plan.wald_asn(targets.aql, per_unit)),
            "asn_rql": float(plan.wald_asn(targets.rql, per_unit))}


def _pct(x: float) -> str:
    """``format_pct`` of ``x`` rounded to 12 decimals (so 0.0999999999999999
    prints as 10.0 %, not 10.00 %)."""
    return format_pct(round(float(x), 12))


def _pct_vs(x: float, target: float) -> str:
    """:func:`_pct`, with more digits when rounding would make a risk that
    misses its target look equal to it."""
    a = _pct(x)
    if a == _pct(target) and abs(x - target) > 1e-9:
        return format_pct(x, 6)
    return a


def _statements(rep: dict, plan, scope: Scope) -> list[str]:
    t, m = rep["targets"], rep["models"][rep["model"]]
    per_unit = scope.defects
    lots = "lots averaging" if per_unit else "lots with"
    unit = " nonconformities per unit" if per_unit else " nonconforming"
    lvl = lambda x: format_level(x, per_unit) + ("" if per_unit else unit)  # noqa: E731
    ok = lambda b: "met" if b else "NOT met"  # noqa: E731
    q = rep["plan_quality"]
    a = rep["asn"]
    if rep.get("never_accepts"):
        return [f"This plan never accepts a lot: the acceptance number is below 0 at every "
                f"unit up to the truncation point (the midpoint line there is "
                f"{plan.midpoint:.4g}), so every lot is rejected after {rep['n_max']} units "
                "at most and Pa is 0 at every quality level. Lower h1 or raise h2 (or the "
                "truncation point) before using it.", SAFETY]
    out = [
        f"Accepts {lots} {lvl(t['aql'])} (the AQL) {_pct(m['pa_aql'])} of the time: "
        f"producer's risk {_pct_vs(m['alpha'], t['alpha'])} against a target of "
        f"{_pct(t['alpha'])}, {ok(m['meets_alpha'])}.",
        f"Accepts {lots} {lvl(t['rql'])} (the RQL) {_pct(m['pa_rql'])} of the time: "
        f"consumer's risk {_pct_vs(m['beta'], t['beta'])} against a target of "
        f"{_pct(t['beta'])}, {ok(m['meets_beta'])}.",
        f"The AQL it really protects: {lots} {lvl(q['producer'])} are accepted "
        f"{_pct(1 - t['alpha'])} of the time; indifference quality "
        f"{lvl(q['indifference'])}; the RQL it really gives: {lvl(q['consumer'])} (accepted "
        f"{_pct(t['beta'])} of the time).",
        f"Average sample number: {a['aql']:.1f} units at the AQL and {a['rql']:.1f} at the RQL; "
        f"the largest average is {a['max']:.1f} at {lvl(a['max_at'])}; never more than "
        f"{rep['n_max']} units.",
    ]
    cur = rep.get("asn_curtailed")
    if cur:
        out.append(f"Stopping as soon as the decision is certain (curtailment) lowers the "
                   f"average to {cur['aql']:.1f} at the AQL and {cur['rql']:.1f} at the RQL; "
                   "the decisions do not change.")
    if "wald" in rep:
        w = rep["wald"]
        out.append(f"Wald's approximations (untruncated test, no overshoot) say Pa "
                   f"{w['pa_aql']:.4f} at the AQL and {w['pa_rql']:.4f} at the RQL, ASN "
                   f"{w['asn_aql']:.1f} and {w['asn_rql']:.1f}; the exact truncated plan gives "
                   f"{m['pa_aql']:.4f}, {m['pa_rql']:.4f}, {a['aql']:.1f} and {a['rql']:.1f}.")
    if "aoql" in rep:
        out.append(f"With rejected lots inspected 100 % and nonconforming items replaced, the "
                   f"average outgoing quality is at worst {format_level(rep['aoql']['value'])} "
                   f"(AOQL, at {format_level(rep['aoql']['at'])} incoming).")
    if rep["model"] == "hypergeometric":
        lc = rep["lot_counts"]
        out.append(f"Lot of {rep['lot_size']}: the AQL is taken as {lc['aql']} and the RQL as "
                   f"{lc['rql']} nonconforming item(s) (rounded up and down, the conservative "
                   "way for each risk).")
    out.append(SAFETY)
    return out


def _plan_lines(rep: dict) -> list[str]:
    s = rep["scheme"]
    if s == "double":
        return [f"  plan      first sample n1 = {rep['n1']}: accept on {rep['c1']} or fewer, "
                f"reject on {rep['r1']} or more;",
                f"            otherwise second sample n2 = {rep['n2']}: accept on a total of "
                f"{rep['c2']} or fewer, reject on {rep['c2'] + 1} or more"]
    if s == "multiple":
        from lotwise.analysis.report import table

        cum, t = [], 0
        for n in rep["n"]:
            t += n
            cum.append(t)
        rows = [[str(i + 1), str(n), str(m), "-" if a is None else str(a), str(r)]
                for i, (n, m, a, r) in enumerate(zip(rep["n"], cum, rep["c"], rep["r"]))]
        return ["  plan      multiple sampling, cumulative counts:",
                table(rows, ["stage", "units", "in all", "accept on <=", "reject on >="],
                      indent="            ")]
    if s == "sequential":
        return [f"  plan      item by item: accept when d <= -{rep['h1']:.4g} + {rep['s']:.4g} n, "
                f"reject when d >= {rep['h2']:.4g} + {rep['s']:.4g} n;",
                f"            truncated at n = {rep['truncate']} "
                f"({rep.get('truncation_rule', '')})"]
    return [f"  plan      {rep.get('label', '')}"]


def render_plan(rep: dict, title: str) -> str:
    """Terminal text for a :func:`plan_report` dictionary."""
    from lotwise.analysis.report import context_lines, render_single, table, verdict_word

    if rep["scheme"] == "single":
        return render_single(rep, title)
    t = rep["targets"]
    lines = [title]
    lines += _plan_lines(rep)
    lines += context_lines(rep, _pct)
    rows = []
    for m, r in rep["models"].items():
        mark = " *" if m == rep["model"] else ""
        rows.append([m + mark, f"{r['pa_aql']:.5f}", _pct_vs(r["alpha"], t["alpha"]),
                     f"{r['pa_rql']:.5f}", _pct_vs(r["beta"], t["beta"]), f"{r['asn_aql']:.1f}",
                     f"{r['asn_rql']:.1f}", verdict_word(r)])
    if "wald" in rep:
        w = rep["wald"]
        rows.append(["Wald approx.", f"{w['pa_aql']:.5f}", _pct(1 - w["pa_aql"]),
                     f"{w['pa_rql']:.5f}", _pct(w["pa_rql"]), f"{w['asn_aql']:.1f}",
                     f"{w['asn_rql']:.1f}", "(untruncated)"])
    lines.append("")
    lines.append(table(rows, ["model", "Pa(AQL)", "alpha", "Pa(RQL)", "beta", "ASN(AQL)",
                              "ASN(RQL)", "meets"]))
    lines.append("  (* the model the plan is judged by)")
    lines.append("")
    for s in rep["statements"]:
        lines.append(f"  - {s}")
    if "poisson_verdict" in rep:
        lines.append("")
        lines.append("  Poisson approximation: " + rep["poisson_verdict"]["summary"])
    return "\n".join(lines)
