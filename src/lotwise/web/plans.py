"""The web API's commands on given plans: ``check``, ``oc``, ``compare`` and
``tradeoff`` (what ``lotwise ... --json`` prints), and the supplier's outlook
at a process average (the page's own view).

See :mod:`lotwise.web.commands` for the rules these follow.
"""

from __future__ import annotations

from lotwise.core.quantities import InputError, parse_level, parse_rate
from lotwise.web.commands import (Refused, Reply, csp_model, csp_refuse, error_rates, judged,
                                  levels_options, lot_size_option, risk_options,
                                  scope_and_model, plan_from, with_rates)

__all__ = ["check", "oc", "compare", "tradeoff", "outlook"]


def check(q) -> Reply:
    """``lotwise check --plan ... --json`` (exit 1, reported as ``exit_code``,
    when the plan falls short)."""
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets

    aql, rql, lot, model = q.get("aql"), q.get("rql"), q.get("lot_size"), q.get("model")
    alpha, beta, per_unit = q.get("alpha", "5%"), q.get("beta", "10%"), q.flag("per_unit")
    aoq_formula, skip_lot = q.get("aoq_formula"), q.get("skip_lot")
    at, run_length = q.many("at"), q.get("run_length")
    p = plan_from(q.get("plan"), q.get("n"), q.get("c"))
    rates = error_rates(q)
    if p.evaluation == "flow":
        from lotwise.analysis.outputs import csp_check

        csp_refuse(p.scheme, {"--aql": aql, "--rql": rql, "--lot-size": lot,
                               "--per-unit": per_unit, "--aoq-formula": aoq_formula,
                               "--skip-lot": skip_lot, "--miss-rate": q.get("miss_rate"),
                               "--false-alarm": q.get("false_alarm"),
                               "--study": q.get("study")})
        csp_model(model)
        return Reply(body=csp_check(p, at=at, run_length=run_length))
    for opt, val in (("--at", at), ("--run-length", run_length)):
        if val:
            raise InputError(f"{opt} ({val if opt == '--run-length' else ', '.join(val)}) "
                             "applies to continuous sampling plans (csp1, csp2, csp3)")
    if p.evaluation == "process":
        return _check_variables(p, aql, rql, alpha, beta, rates)
    p, layer = p.audit_parts()  # a skip-lot plan: its reference plan with --skip-lot
    if layer is not None:
        if skip_lot is not None:
            raise InputError(f"--skip-lot ({skip_lot}) cannot be combined with a skip-lot "
                             "--plan")
        skip_lot = layer
    a, r = levels_options(aql, rql, per_unit)
    al, be = risk_options(alpha, beta)
    scope, mdl = scope_and_model(lot, per_unit, model)
    p.check_scope(scope)
    if rates is not None:  # judged at the true quality
        p = judged(p.for_scope(scope), rates, scope)
    if not r > a:
        _out_of_order(a, r, per_unit)
    if aoq_formula is not None and not scope.lot_size:
        raise InputError(f"--aoq-formula ({aoq_formula}) needs --lot-size (AOQ and ATI are "
                         "computed for lots of a known size)")
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    rep = with_rates(assess(p, targets, scope, mdl, aoq_formula=aoq_formula).to_json(), rates)
    if skip_lot is not None:
        rep = _skip_lot(rep, p, scope, mdl, targets, skip_lot, aoq_formula)
    meets = rep["meets"] and rep.get("skip_lot", {}).get("meets", True)
    return Reply(body=rep, exit_code=0 if meets else 1)


def _out_of_order(a, r, per_unit):
    from lotwise.core.quantities import format_level

    raise Refused(f"the RQL ({format_level(r, per_unit)}) must be above the AQL "
                  f"({format_level(a, per_unit)})",
                  {"feasible": False, "reason": "rql must be above aql"})


def _check_variables(p, aql, rql, alpha, beta, rates=None) -> Reply:
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Scope, Targets

    a, r = levels_options(aql, rql, False)
    al, be = risk_options(alpha, beta)
    judged(p, rates, Scope())  # refused: a gauge's error is --measurement-sd
    if not r > a:
        _out_of_order(a, r, False)
    rep = assess(p, Targets(aql=a, rql=r, alpha=al, beta=be), Scope()).to_json()
    return Reply(body=rep, exit_code=0 if rep["meets"] else 1)


def _skip_lot(rep, plan, scope, model, targets, skip_lot, aoq_formula) -> dict:
    """The skip-lot comparison ``check --skip-lot`` adds."""
    if not (plan.lot_by_lot and plan.attribute_plan):
        raise InputError(f"--skip-lot ({skip_lot}) applies to a plan that sentences each "
                         f"lot on its own sample, not to a {plan.scheme} plan")
    from lotwise.analysis.skiplot_report import skiplot_report
    from lotwise.families.skiplot import SkipLotPlan, parse_skip

    i, f = parse_skip(skip_lot) if isinstance(skip_lot, str) else skip_lot
    sk = SkipLotPlan(reference=plan, i=i, f=f)
    rep["skip_lot"] = skiplot_report(sk, targets, scope, model)
    if scope.lot_size:
        from lotwise.analysis.rectifying import aoql

        a = aoql(sk, scope, model, aoq_formula or "screened")
        rep["skip_lot"]["aoql"] = a.value
        rep["skip_lot"]["aoql_p"] = a.at
    return rep


def oc(q) -> Reply:
    """``lotwise oc --plan ... --json``."""
    from lotwise.analysis import outputs

    lot, model, per_unit = q.get("lot_size"), q.get("model"), q.flag("per_unit")
    aql, rql, at = q.get("aql"), q.get("rql"), q.many("at")
    max_p, points = q.get("max_p"), q.get("points", "21")
    p = plan_from(q.get("plan"), q.get("n"), q.get("c"))
    rates = error_rates(q)
    if p.evaluation == "flow":
        csp_refuse(p.scheme, {"--lot-size": lot, "--per-unit": per_unit, "--aql": aql,
                               "--rql": rql, "--miss-rate": q.get("miss_rate"),
                               "--false-alarm": q.get("false_alarm"),
                               "--study": q.get("study")})
        csp_model(model)
        return Reply(body=outputs.csp_oc(p, outputs.csp_grid(p, max_p=max_p, points=points,
                                                               at=at)))
    if p.evaluation == "process":
        judged(p, rates, None)  # refused: a gauge's error is --measurement-sd
        _a, r = levels_options(aql, rql, False, need=False)
        return Reply(body=outputs.variables_oc(p, max_p=max_p, points=points, at=at, rql=r))
    scope, mdl = scope_and_model(lot, per_unit, model)
    p.check_scope(scope)
    if rates is not None:  # Pa at the true quality
        p = judged(p.for_scope(scope), rates, scope)
    a, r = levels_options(aql, rql, per_unit, need=False)
    ps = outputs.attribute_grid(p, scope, mdl, max_p=max_p, points=points, at=at, rql=r)
    return Reply(body=with_rates(outputs.attribute_oc(p, scope, mdl, ps, aql=a, rql=r), rates))


def compare(q) -> Reply:
    """``lotwise compare --plan A --plan B ... --json``."""
    from lotwise.analysis.compare import compare_plans
    from lotwise.core.types import Scope, Targets
    from lotwise.families.base import parse_plan

    plans, designed, per_unit = q.many("plan"), q.flag("designed"), q.flag("per_unit")
    rates = error_rates(q)
    if rates is not None and designed:
        raise InputError("--miss-rate/--false-alarm/--study apply to the --plan entries of "
                         "compare, not to --designed or plan files (a plan file states its "
                         "rates in its [inspection] table)")
    entries = []
    if plans or designed:
        a, r = levels_options(q.get("aql"), q.get("rql"), per_unit)
        al, be = risk_options(q.get("alpha", "5%"), q.get("beta", "10%"))
        scope = Scope(lot_size=lot_size_option(q.get("lot_size")), per_unit=per_unit)
        mdl = scope.check_model(q.get("model"))
        targets = Targets(aql=a, rql=r, alpha=al, beta=be)
        if designed:
            from lotwise.analysis.tradeoff import asn_tradeoff

            for row in asn_tradeoff(targets, scope, model=mdl).rows:
                if row.plan is not None:
                    entries.append((f"designed {row.scheme}: {row.label}", row.plan, targets,
                                    scope, mdl))
        for i, text in enumerate(plans or [], 1):
            p = parse_plan(text, f"--plan #{i}")
            from lotwise.web.commands import bounded

            bounded(p, text)
            if scope.lot_size and p.max_sample > scope.lot_size:
                raise InputError(f"--plan #{i} ({text}): the plan inspects up to "
                                 f"{p.max_sample} units, more than --lot-size ({scope.lot_size})")
            if rates is not None:
                p = judged(p.for_scope(scope), rates, scope)
            entries.append((p.label, p, targets, scope, mdl))
    if len(entries) < 2:
        raise InputError("compare needs at least two plans: give --plan twice or more, or plan "
                         "files")
    body = {"plans": compare_plans(entries)}
    return Reply(body=with_rates(body, rates) if rates else body)


def tradeoff(q) -> Reply:
    """``lotwise tradeoff --aql LEVELS --rql LEVELS ... --json`` (without lot
    records: the process average is given)."""
    from lotwise.analysis.supplier import parse_levels
    from lotwise.analysis.supplier import tradeoff as grid
    from lotwise.core.types import Scope

    aqls = parse_levels(q.get("aql"), "--aql")
    rqls = parse_levels(q.get("rql"), "--rql")
    al, be = risk_options(q.get("alpha", "5%"), q.get("beta", "10%"))
    N = lot_size_option(q.get("lot_size"))
    mdl = Scope(lot_size=N).check_model(q.get("model"))
    deliveries = q.get("deliveries_per_year")
    L = parse_rate(deliveries, "--deliveries-per-year", minimum=1, whole=True) \
        if deliveries is not None else None
    pavg = q.get("process_average")
    pavg = parse_level(pavg, "--process-average") if pavg is not None else None
    if len(aqls) * len(rqls) > 60:
        raise InputError(f"--aql/--rql give {len(aqls) * len(rqls)} pairs; the web API designs "
                         "at most 60")
    rows = grid(aqls, rqls, alpha=al, beta=be, lot_size=N, model=mdl, process_average=pavg,
                deliveries_per_year=L)
    return Reply(body={
        "alpha": al, "beta": be, "lot_size": N, "model": mdl, "process_average": pavg,
        "posterior": None, "lots_in_records": None, "supplier": None, "part": None,
        "deliveries_per_year": L, "rows": [r.as_dict() for r in rows], "csv": None,
        "plot": None})


def outlook(q) -> Reply:
    """The supplier's outlook under each plan: lots rejected at its process
    average, and per year (the page's own view; see
    :func:`lotwise.analysis.supplier.rejection_at`)."""
    from lotwise.analysis.supplier import rejection_at
    from lotwise.families.base import parse_plan

    per_unit = q.flag("per_unit")
    if q.get("process_average") is None:
        raise InputError("--process-average is required (for example --process-average 0.8%)")
    pbar = parse_level(q.get("process_average"), "--process-average", per_unit=per_unit)
    deliveries = q.get("deliveries_per_year")
    L = parse_rate(deliveries, "--deliveries-per-year", minimum=1, whole=True) \
        if deliveries is not None else None
    rows = []
    for i, text in enumerate(q.many("plan") or [], 1):
        p = parse_plan(text, f"--plan #{i}")
        rows.append(rejection_at(p, pbar, per_unit=per_unit, deliveries_per_year=L))
    if not rows:
        raise InputError("--plan is required (one or more plans in notation, e.g. n=80,c=2)")
    return Reply(body={"process_average": pbar, "per_unit": per_unit, "deliveries_per_year": L,
                       "plans": rows})
