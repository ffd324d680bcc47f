"""``lotwise zero`` (accept-on-zero plans and equivalents) and ``lotwise
demonstrate`` (confidence/reliability tests)."""

from __future__ import annotations

from typing import Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError, Infeasible, parse_count, parse_level, parse_risk
from lotwise.core.numbers import probability


@app.command()
def zero(
    rql: Optional[str] = common.RQL,
    beta: str = common.BETA,
    aql: Optional[str] = typer.Option(None, "--aql", help="Show the producer's risk at this AQL."),
    alpha: str = common.ALPHA,
    plan: Optional[str] = typer.Option(None, "--plan", help='Find the c = 0 plan equivalent to this plan, e.g. "n=125,c=3".'),
    n: Optional[str] = typer.Option(None, "--n", help="Sample size of the plan to match."),
    c: Optional[str] = typer.Option(None, "--c", help="Acceptance number of the plan to match."),
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    per_unit: bool = common.PER_UNIT,
    max_n: Optional[str] = typer.Option(None, "--max-n", help="Largest affordable sample."),
    plot: Optional[str] = typer.Option(None, "--plot", help="Draw the OC curve(s) to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """Accept-on-zero plans: design one for an RQL, or find the c = 0 plan
    equivalent to a given plan (same RQL point), with its producer's risk.

    Exit 0 when the c = 0 plan meets its targets (the consumer's risk, and the
    producer's risk at --aql when given), 1 when it does not or no c = 0 plan
    fits --max-n, 2 bad input; an equivalent (--plan) exits 0.
    """
    from lotwise.core.types import Scope

    scope = Scope(lot_size=common.lot_size(lot), per_unit=per_unit)
    mdl = scope.check_model(model)
    be = parse_risk(beta, "--beta")
    al = parse_risk(alpha, "--alpha")
    a = parse_level(aql, "--aql", per_unit=per_unit) if aql is not None else None
    common.plot_path(plot, force)
    given = common.plan_from(plan, n, c, required=False)
    if given is not None:
        if rql is not None:
            raise InputError(f"--rql ({rql}) cannot be combined with --plan: the equivalent "
                             "uses the plan's own RQL point (where its Pa equals --beta)")
        if max_n is not None:
            raise InputError(f"--max-n ({max_n}) does not apply to --plan")
        return _equivalent(given, scope, mdl, be, a, al, plot, force, as_json)
    if rql is None:
        raise InputError("--rql is required (for example --rql 5%), or give --plan to find "
                         "the c = 0 plan equivalent to it")
    r = parse_level(rql, "--rql", per_unit=per_unit)
    cap = parse_count(max_n, "--max-n", minimum=1) if max_n is not None else None
    from lotwise.analysis.zero import design_zero

    base = {"scheme": "single", "c": 0, "model": mdl, "lot_size": scope.lot_size}
    try:
        z = design_zero(rql=r, beta=be, lot_size=scope.lot_size, model=mdl, per_unit=per_unit,
                        aql=a, alpha=al, max_n=cap)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    rep = z.report()
    if plot is not None:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.style import oc_figure

        fig = oc_figure([(z.plan, scope)], aql=a, rql=r,
                        title=f"Accept on zero: {z.plan.label}")
        save_figure(fig, plot, force=force, option="--plot")
        rep["plot"] = plot
    if as_json:
        common.emit_json(rep)
    else:
        typer.echo(_render_zero(rep))
    raise typer.Exit(0 if rep["meets"] else 1)  # 1: the producer's risk at --aql is not met


def _render_zero(rep: dict) -> str:
    from lotwise.core.quantities import format_level, format_pct
    from lotwise.analysis.report import table

    pu = rep["per_unit"]
    t = rep["targets"]
    lot = f"lot of {rep['lot_size']}" if rep["lot_size"] else "no lot size (process)"
    lines = ["Accept-on-zero plan (c = 0, smallest sample meeting the consumer's risk)"]
    if rep["full_inspection"]:
        lines.append(f"  100 % inspection: no sample smaller than the lot of {rep['lot_size']} "
                     "meets the consumer's risk with c = 0.")
    lines += [f"  plan      n = {rep['n']}, accept on 0, reject on 1",
              f"  judged by {rep['model']}; {lot}",
              f"  target    RQL {format_level(t['rql'], pu)} at beta {format_pct(t['beta'])}"]
    if rep["producers_risk"] is not None:
        lines += ["", f"  PRODUCER'S RISK at the AQL {format_level(t['aql'], pu)}: "
                      f"{format_pct(rep['producers_risk'])} of lots rejected "
                      f"(target {format_pct(t['alpha'])})"]
    else:
        lines += ["", f"  PRODUCER'S SIDE: a lot must be at {format_level(rep['producer_quality'], pu)} "
                      "or better to be accepted 95 % of the time (give --aql for the risk at "
                      "your AQL)"]
    rows = []
    for m, e in rep["models"].items():
        row = [m + (" *" if m == rep["model"] else ""), probability(e['pa_rql'], 5),
               format_pct(e["beta"])]
        if "pa_aql" in e:
            row += [probability(e['pa_aql'], 5), format_pct(e["alpha"])]
        rows.append(row)
    header = ["model", "Pa(RQL)", "beta"] + (["Pa(AQL)", "alpha"] if "aql" in t else [])
    lines += ["", table(rows, header), "  (* the model the plan is judged by)", ""]
    lines += [f"  - {s}" for s in rep["statements"]]
    if rep.get("plot"):
        lines.append(f"  wrote {rep['plot']}")
    return "\n".join(lines)


def _equivalent(given, scope, mdl, be, a, al, plot, force, as_json):
    from lotwise.core.quantities import format_level, format_pct
    from lotwise.analysis.report import table
    from lotwise.analysis.zero import zero_equivalent
    from lotwise.documents.plots.zero import equivalent_figure

    if scope.lot_size is not None and given.max_sample > scope.lot_size:
        raise InputError(f"--n ({given.max_sample}) must not be greater than --lot-size "
                         f"({scope.lot_size})")
    try:
        eq = zero_equivalent(given, scope, mdl, beta=be, aql=a, alpha=al)
    except Infeasible as exc:
        common.infeasible(exc, as_json, {"model": mdl, "lot_size": scope.lot_size})
    rep = eq.report()
    if plot is not None:
        from lotwise.data.files import save_figure

        save_figure(equivalent_figure(eq), plot, force=force, option="--plot")
        rep["plot"] = plot
    if as_json:
        common.emit_json(rep)
        return
    pu = scope.per_unit
    lab = given.label
    where = "AQL" if eq.level_kind == "aql" else "plan's 95 % point"
    rows = [[lab, str(rep["sample_sizes"]["plan"]), probability(eq.pa_point['plan'], 5),
             probability(eq.pa_level['plan'], 5), format_pct(1 - eq.pa_level["plan"])],
            [eq.zero_plan.label, str(eq.zero_plan.n), probability(eq.pa_point['zero_plan'], 5),
             probability(eq.pa_level['zero_plan'], 5), format_pct(1 - eq.pa_level["zero_plan"])]]
    lines = [f"Accept-on-zero equivalent of {lab} ({mdl}"
             + (f", lot of {scope.lot_size})" if scope.lot_size else ")"),
             f"  shared RQL point {format_level(eq.point, pu)} (Pa = {format_pct(be)} for {lab}); "
             f"compared at the {where} {format_level(eq.level, pu)}", "",
             table(rows, ["plan", "n", "Pa(RQL point)", f"Pa({where})", "producer's risk"]), ""]
    lines += [f"  - {s}" for s in rep["statements"]]
    if plot:
        lines.append(f"  wrote {plot}")
    typer.echo("\n".join(lines))
