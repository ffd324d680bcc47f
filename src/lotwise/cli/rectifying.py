"""Command-line glue for rectifying inspection, least-inspection designs,
chain and skip-lot plans (called from ``design`` and ``check`` in
:mod:`lotwise.cli.design`), and the ``zero`` and ``demonstrate`` commands."""

from __future__ import annotations


import typer

from . import common
from lotwise.core.quantities import InputError, Infeasible, parse_count, parse_level, parse_risk
from lotwise.core.numbers import probability

MINIMIZE = ("ati",)


# --- design --minimize ati / --scheme chain ----------------------------------------

def least_ati_cmd(*, minimize, aql, rql, alpha, beta, lot, model, per_unit, c, n, max_n,
                  process_average, aoql, aoq_formula, as_json, **_others):
    """``lotwise design --minimize ati``: the single plan of least average total inspection."""
    if minimize not in MINIMIZE:
        raise InputError(f"--minimize ({minimize}) must be one of: {', '.join(MINIMIZE)}")
    for name, val in (("--c", c), ("--n", n), ("--max-n", max_n)):
        if val is not None:
            raise InputError(f"{name} ({val}) cannot be combined with --minimize ati")
    return _least_ati(aql, rql, alpha, beta, lot, model, per_unit, process_average, aoql,
                      aoq_formula, as_json)


def chain_cmd(*, minimize, aql, rql, alpha, beta, lot, model, per_unit, c, n, max_n,
              process_average, aoql, as_json, **_others):
    """``lotwise design --scheme chain``: the ChSP-1 plan with the smallest sample."""
    if minimize is not None:
        raise InputError(f"--minimize ({minimize}) does not apply to --scheme chain (it "
                         "designs the smallest sample)")
    for name, val in (("--process-average", process_average), ("--aoql", aoql)):
        if val is not None:
            raise InputError(f"{name} ({val}) needs --minimize ati")
    for name, val in (("--c", c), ("--n", n)):
        if val is not None:
            raise InputError(f"{name} ({val}) does not apply to --scheme chain (its plan is "
                             "n and i)")
    return _chain(aql, rql, alpha, beta, lot, model, per_unit, max_n, as_json)


def _least_ati(aql, rql, alpha, beta, lot, model, per_unit, process_average, aoql, formula,
               as_json):
    from lotwise.analysis.least_ati import design_least_ati
    from lotwise.core.types import Scope
    from lotwise.analysis.rectifying import check_formula

    if lot is None:
        raise InputError("--minimize ati needs --lot-size (the ATI is counted per lot)")
    if process_average is None:
        raise InputError("--minimize ati needs --process-average (for example "
                         "--process-average 0.5%)")
    N = parse_count(lot, "--lot-size", minimum=2, maximum=10**12)
    pbar = parse_level(process_average, "--process-average", per_unit=per_unit)
    if (rql is None) == (aoql is None):
        raise InputError("--minimize ati needs either --rql (with --beta) or --aoql")
    r = parse_level(rql, "--rql", per_unit=per_unit) if rql is not None else None
    lim = parse_level(aoql, "--aoql", per_unit=per_unit) if aoql is not None else None
    be = parse_risk(beta, "--beta")
    al = parse_risk(alpha, "--alpha")
    a = parse_level(aql, "--aql", per_unit=per_unit) if aql is not None else None
    check_formula(formula)
    mdl = Scope(lot_size=N, per_unit=per_unit).check_model(model)
    base = {"scheme": "single", "minimize": "ati", "model": mdl, "lot_size": N,
            "process_average": pbar}
    try:
        d = design_least_ati(lot_size=N, process_average=pbar, rql=r, beta=be, aoql=lim,
                             model=mdl, per_unit=per_unit, formula=formula, aql=a, alpha=al)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    rep = d.report()
    if as_json:
        common.emit_json(rep)
        return
    typer.echo(render_least_ati(rep))


def render_least_ati(rep: dict) -> str:
    from lotwise.core.quantities import format_level, format_pct
    from lotwise.analysis.report import table

    pu = rep["per_unit"]
    lv = lambda x: format_level(x, pu)  # noqa: E731
    t = rep["targets"]
    what = (f"RQL {lv(t['rql'])} at beta {format_pct(t['beta'])}" if rep["constraint"] == "rql"
            else f"AOQL at most {format_pct(t['aoql'], 4)}")
    lines = ["Least-inspection single plan (smallest ATI at the process average)",
             f"  plan      n = {rep['n']}, accept on c = {rep['c']}, reject on {rep['r']}",
             f"  lot of {rep['lot_size']:,}; process average {lv(rep['process_average'])}; "
             f"protection: {what}; designed under {rep['model']}",
             f"  {rep['ati_process_average']:,.1f} items inspected per lot on average at the "
             f"process average; AOQL {format_pct(rep['aoql'], 4)} at {lv(rep['aoql_p'])}", ""]
    rows = []
    for m, e in rep["models"].items():
        row = [m + (" *" if m == rep["model"] else ""), probability(e['pa_process_average'], 5),
               f"{e['ati_process_average']:,.1f}", format_pct(e["aoql"], 4)]
        if rep["constraint"] == "rql":
            row.append(probability(e['pa_rql'], 5))
        row.append("yes" if e["meets"] else "NO")
        rows.append(row)
    header = ["model", "Pa(avg)", "ATI(avg)", "AOQL"]
    if rep["constraint"] == "rql":
        header.append("Pa(RQL)")
    header.append("meets")
    lines.append(table(rows, header))
    lines.append("  (* the model the plan is designed under; avg: the process average)")
    lines.append("")
    lines += [f"  - {s}" for s in rep["statements"]]
    return "\n".join(lines)


def _chain(aql, rql, alpha, beta, lot, model, per_unit, max_n, as_json):
    from lotwise.families.chain import design_chain
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from lotwise.core.types import Scope

    a, r = common.levels(aql, rql, per_unit)
    al, be = common.risks(alpha, beta)
    N = common.lot_size(lot)
    mdl = Scope(lot_size=N, per_unit=per_unit).check_model(model)
    cap = parse_count(max_n, "--max-n", minimum=1) if max_n is not None else None
    base = {"scheme": "chain", "model": mdl, "lot_size": N,
            "targets": Targets(aql=a, rql=r, alpha=al, beta=be).as_dict()}
    try:
        d = design_chain(aql=a, rql=r, alpha=al, beta=be, lot_size=N, model=mdl,
                         per_unit=per_unit, max_n=cap)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    a = assess(d.plan, d.targets, d.scope, d.model, design=d)
    if as_json:
        common.emit_json(a.to_json())
    else:
        typer.echo(a.render("Chain sampling plan ChSP-1 (smallest n meeting both risks)"))


# --- check: rectifying, skip-lot, chain plans -------------------------------------

def check_extras(rep: dict, plan, scope, model, targets, *, aoq_formula, skip_lot, aoq_plot,
                 force) -> dict:
    """Add the rectifying keys (with a lot size) and the skip-lot comparison to a
    single-plan check report; draw the OC/AOQ/ATI figure if asked."""
    if skip_lot is not None:
        if not (plan.lot_by_lot and plan.attribute_plan):
            raise InputError(f"--skip-lot ({skip_lot}) applies to a plan that sentences each "
                             f"lot on its own sample, not to a {plan.scheme} plan")
        from lotwise.families.skiplot import SkipLotPlan, parse_skip
        from lotwise.analysis.skiplot_report import skiplot_report

        i, f = parse_skip(skip_lot) if isinstance(skip_lot, str) else skip_lot
        sk = SkipLotPlan(reference=plan, i=i, f=f)
        rep["skip_lot"] = skiplot_report(sk, targets, scope, model)
        if scope.lot_size:
            from lotwise.analysis.rectifying import aoql

            a = aoql(sk, scope, model, aoq_formula or "screened")
            rep["skip_lot"]["aoql"] = a.value
            rep["skip_lot"]["aoql_p"] = a.at
    if aoq_plot is not None:
        if plan.count_rule() is None:
            raise InputError(f"--aoq-plot ({aoq_plot}) is drawn for single plans only")
        if not scope.lot_size:
            raise InputError(f"--aoq-plot ({aoq_plot}) needs --lot-size")
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.rectifying import rectifying_figure

        common.plot_path(aoq_plot, force, "--aoq-plot")
        fig = rectifying_figure(plan, scope, formula=aoq_formula or "screened",
                                aql=targets.aql, rql=targets.rql)
        save_figure(fig, aoq_plot, force=force, option="--aoq-plot")
        rep["aoq_plot"] = aoq_plot
    return rep


def render_extras(rep: dict) -> str:
    from lotwise.analysis.rectifying import render_rectifying
    from lotwise.analysis.skiplot_report import render_skiplot

    parts = []
    if "rectifying" in rep:
        parts.append(render_rectifying(rep, rep.get("per_unit", False)))
    if "skip_lot" in rep:
        sk = render_skiplot(rep["skip_lot"], rep.get("per_unit", False))
        if "aoql" in rep["skip_lot"]:
            from lotwise.core.quantities import format_level, format_pct

            sk += (f"\n    - With rejected lots screened, its AOQL is "
                   f"{format_pct(rep['skip_lot']['aoql'], 4)} at "
                   f"{format_level(rep['skip_lot']['aoql_p'], rep.get('per_unit', False))}.")
        parts.append(sk)
    if "aoq_plot" in rep:
        parts.append(f"  wrote {rep['aoq_plot']}")
    return ("\n\n" + "\n\n".join(parts)) if parts else ""
