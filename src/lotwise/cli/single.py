"""``lotwise design``, ``check`` and ``oc`` for single sampling plans."""

from __future__ import annotations

from typing import List, Optional

import typer

from . import app, common
from . import prior as prior_cli
from lotwise.core.quantities import InputError, Infeasible, parse_count


#: ``--scheme`` -> ``"module:function"`` in this package taking every design option as
#: keywords; the single plan is designed here.
DESIGN_HANDLERS = {
    "double": "multistage:design_options", "sequential": "multistage:design_options",
    "compare-all": "multistage:design_options", "chain": "rectifying:design_options",
    "single-minimize": "rectifying:design_options", "variables": "variables:design_options",
    "csp1": "csp:design_options", "csp2": "csp:design_options", "csp3": "csp:design_options",
}


@app.command()
def design(
    aql: Optional[str] = common.AQL,
    rql: Optional[str] = common.RQL,
    alpha: str = common.ALPHA,
    beta: str = common.BETA,
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    defects: bool = common.DEFECTS,
    scheme: str = typer.Option("single", "--scheme", help="Plan family: single, double, sequential, compare-all (the three side by side), chain (ChSP-1), variables, or csp1, csp2, csp3 (continuous sampling)."),
    c: Optional[str] = typer.Option(None, "--c", help="Fix the acceptance number (0 for accept-on-zero)."),
    n: Optional[str] = typer.Option(None, "--n", help="Fix the sample size and find c."),
    max_n: Optional[str] = typer.Option(None, "--max-n", help="Largest affordable sample."),
    minimize: Optional[str] = typer.Option(None, "--minimize", help="single: ati (least average total inspection at --process-average) or cost (least expected cost per lot under --prior); double: asn-aql (default) or asn-max."),
    process_average: Optional[str] = typer.Option(None, "--process-average", help="Supplier's process average, for --minimize ati."),
    aoql: Optional[str] = typer.Option(None, "--aoql", help="AOQL limit, for --minimize ati (instead of --rql)."),
    aoq_formula: str = typer.Option("screened", "--aoq-formula", help="screened (rejected lots screened, nonconforming items found replaced): in a finite lot the exact AOQ E[(D - X) 1{accept}]/N, for a single plan (D/N)((N - n)/N) Pa(n, c | N - 1, D - 1), never below p Pa (N - n)/N and N/(N - n) times it for c = 0; p Pa (N - n)/N under the binomial and Poisson models. simple: p Pa."),
    sigma: Optional[str] = typer.Option(None, "--sigma", help="variables: known or unknown."),
    sigma_value: Optional[str] = typer.Option(None, "--sigma-value", help="variables: the known sigma."),
    limit: Optional[str] = typer.Option(None, "--limit", help="variables: upper, lower or both."),
    lower: Optional[str] = typer.Option(None, "--lower", help="variables: lower specification limit."),
    upper: Optional[str] = typer.Option(None, "--upper", help="variables: upper specification limit."),
    ratio: Optional[str] = typer.Option(None, "--ratio", help="double: n2 / n1 (default 2)."),
    truncate: Optional[str] = typer.Option(None, "--truncate", help="sequential: most units to inspect (default 3 x the single plan's n)."),
    plot: Optional[str] = typer.Option(None, "--plot", help="double, sequential, compare-all: draw the chart to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    csp_f: Optional[List[str]] = typer.Option(None, "--f", help="csp1/2/3: sampling fraction (0.1, 1/10 or 10%); repeat for the list --minimize afi searches."),
    csp_i: Optional[str] = typer.Option(None, "--i", help="csp1/2/3: clearance number; find the smallest f instead."),
    prior: Optional[str] = prior_cli.PRIOR, prior_from: Optional[str] = prior_cli.PRIOR_FROM,
    part: Optional[str] = prior_cli.PART, supplier: Optional[str] = prior_cli.SUPPLIER,
    half_life: Optional[str] = prior_cli.HALF_LIFE, cost_inspect: Optional[str] = prior_cli.COST_INSPECT,
    cost_escape: Optional[str] = prior_cli.COST_ESCAPE, cost_reject_lot: Optional[str] = prior_cli.COST_REJECT,
    sheet: Optional[str] = prior_cli.SHEET, deliveries: Optional[str] = prior_cli.DELIVERIES,
    as_json: bool = common.JSON,
):
    """Design the plan with the smallest sample meeting both risks (or, --minimize cost, the cheapest)."""
    if minimize == "cost" or prior_cli.given(locals()):
        return prior_cli.design_cost(**locals())
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from lotwise.families.single import design_single

    key = scheme.strip().lower()
    if key == "single" and (csp_f or csp_i is not None):
        key = "csp1"  # --f/--i are the continuous plans' options
    if key == "single" and minimize is not None:
        key = "single-minimize"
    if key in DESIGN_HANDLERS:
        import importlib

        module, func = DESIGN_HANDLERS[key].split(":")
        handler = getattr(importlib.import_module(f"{__package__}.{module}"), func)
        return handler(scheme=scheme.strip().lower(), aql=aql, rql=rql,
                       alpha=alpha, beta=beta, lot=lot, model=model, defects=defects, c=c, n=n,
                       max_n=max_n, minimize=minimize, process_average=process_average,
                       aoql=aoql, aoq_formula=aoq_formula, sigma=sigma,
                       sigma_value=sigma_value, limit=limit, lower=lower, upper=upper,
                       ratio=ratio, truncate=truncate, plot=plot, force=force, csp_f=csp_f,
                       csp_i=csp_i, as_json=as_json)
    if key != "single":
        raise InputError(f"--scheme ({scheme}) must be one of: single, "
                         + ", ".join(k for k in DESIGN_HANDLERS if k != "single-minimize"))
    for name, val in (("--process-average", process_average), ("--aoql", aoql)):
        if val is not None:
            raise InputError(f"{name} ({val}) needs --minimize ati")
    for opt, val in (("--ratio", ratio), ("--truncate", truncate), ("--plot", plot)):
        if val is not None:
            raise InputError(f"{opt} ({val}) applies to --scheme double, sequential or "
                             "compare-all, not single")
    a, r = common.levels(aql, rql, defects)
    al, be = common.risks(alpha, beta)
    scope, mdl = common.scope_and_model(lot, defects, model)
    cc = parse_count(c, "--c", minimum=0) if c is not None else None
    nn = parse_count(n, "--n", minimum=1) if n is not None else None
    cap = parse_count(max_n, "--max-n", minimum=1) if max_n is not None else None
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    base = {"scheme": "single", "model": mdl, "lot_size": scope.lot_size,
            "targets": targets.as_dict()}
    try:
        d = design_single(aql=a, rql=r, alpha=al, beta=be, lot_size=scope.lot_size, model=mdl,
                          defects=defects, n=nn, c=cc, max_n=cap)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    a = assess(d.plan, targets, scope, mdl, design=d)
    if as_json:
        common.emit_json(a.to_json())
    else:
        typer.echo(a.render("Single sampling plan (smallest sample meeting both risks)"))


@app.command()
def check(
    paths: Optional[List[str]] = typer.Argument(None, help="Plan files or folders to re-verify."),
    plan: Optional[str] = typer.Option(None, "--plan", help='Plan notation, e.g. "n=80,c=2".'),
    n: Optional[str] = typer.Option(None, "--n", help="Sample size."),
    c: Optional[str] = typer.Option(None, "--c", help="Acceptance number."),
    aql: Optional[str] = common.AQL,
    rql: Optional[str] = common.RQL,
    alpha: str = common.ALPHA,
    beta: str = common.BETA,
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    defects: bool = common.DEFECTS,
    aoq_formula: Optional[str] = typer.Option(None, "--aoq-formula", help="With --lot-size: screened (default; rejected lots screened, nonconforming items found replaced): the exact finite-lot AOQ E[(D - X) 1{accept}]/N, for a single plan (D/N)((N - n)/N) Pa(n, c | N - 1, D - 1), never below p Pa (N - n)/N and N/(N - n) times it for c = 0 (p Pa (N - n)/N under --model binomial or poisson); or simple (p Pa)."),
    skip_lot: Optional[str] = typer.Option(None, "--skip-lot", help='Compare with skip-lot SkSP-2 over this plan, e.g. "i=4,f=0.25".'),
    aoq_plot: Optional[str] = typer.Option(None, "--aoq-plot", help="With --lot-size: draw OC, AOQ and ATI curves to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="csp1/2/3 plans: fractions nonconforming to evaluate (repeatable or comma-separated)."),
    run_length: Optional[str] = typer.Option(None, "--run-length", help="csp1/2/3 plans: also the exact figures for a run of this many units starting in 100 % inspection."),
    prior: Optional[str] = prior_cli.PRIOR, prior_from: Optional[str] = prior_cli.PRIOR_FROM,
    part: Optional[str] = prior_cli.PART, supplier: Optional[str] = prior_cli.SUPPLIER,
    half_life: Optional[str] = prior_cli.HALF_LIFE,
    as_json: bool = common.JSON,
):
    """Audit a plan (or re-verify plan files): the risks it really carries.

    With --lot-size also AOQ/AOQL and ATI of rectifying inspection. Exit 0
    when it meets both targets (and so does the skip-lot plan, if asked), 1
    when it falls short. With plan files or folders, one summary row per
    characteristic.
    """
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Targets
    from . import rectifying as rect_cli

    if paths:
        if plan is not None or n is not None or c is not None:
            raise InputError("give plan files/folders or --plan/--n/--c, not both")
        from .sheets import check_folder

        raise typer.Exit(check_folder(paths, as_json))
    p = common.plan_from(plan, n, c)
    if p.evaluation == "flow":  # continuous sampling: long-run figures at --at levels
        from .csp import check_cmd as flow_check

        return flow_check(p, at=at, run_length=run_length, model=model, as_json=as_json,
                          unused={"--aql": aql, "--rql": rql, "--lot-size": lot,
                                  "--defects": defects, "--aoq-formula": aoq_formula,
                                  "--skip-lot": skip_lot, "--aoq-plot": aoq_plot,
                                  "--prior": prior, "--prior-from": prior_from})
    for opt, val in (("--at", at), ("--run-length", run_length)):
        if val:
            raise InputError(f"{opt} ({val if opt == '--run-length' else ', '.join(val)}) "
                             "applies to continuous sampling plans (csp1, csp2, csp3)")
    pri, info = prior_cli.load_prior(prior=prior, prior_from=prior_from, part=part,
                                     supplier=supplier, half_life=half_life, as_json=as_json)
    p, layer = p.audit_parts()  # a skip-lot plan: its reference plan with --skip-lot
    if layer is not None:
        if skip_lot is not None:
            raise InputError(f"--skip-lot ({skip_lot}) cannot be combined with a skip-lot "
                             "--plan")
        skip_lot = layer
    a, r = common.levels(aql, rql, defects)
    al, be = common.risks(alpha, beta)
    scope, mdl = common.scope_and_model(lot, defects, model)
    p = p.for_scope(scope)  # checks the scope; a plan may be meant per the scope
    if not r > a:
        common.levels_out_of_order(a, r, defects, as_json)
    if aoq_formula is not None and not scope.lot_size:
        raise InputError(f"--aoq-formula ({aoq_formula}) needs --lot-size (AOQ and ATI are "
                         "computed for lots of a known size)")
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    rep = assess(p, targets, scope, mdl, aoq_formula=aoq_formula).to_json()
    rep = rect_cli.check_extras(rep, p, scope, mdl, targets, aoq_formula=aoq_formula,
                                skip_lot=skip_lot, aoq_plot=aoq_plot, force=force)
    rep = prior_cli.add_posterior(rep, p, pri, info, targets, scope, skip_lot)
    meets = rep["meets"] and rep.get("skip_lot", {}).get("meets", True)
    if as_json:
        common.emit_json(rep)
    else:
        from lotwise.analysis.report import render_assessment

        verdict = "meets both targets" if rep["meets"] else "FALLS SHORT"
        typer.echo(render_assessment(rep, f"Audit of the {p.scheme} plan {p.label}: {verdict}")
                   + rect_cli.render_extras(rep) + prior_cli.render(rep))
    raise typer.Exit(0 if meets else 1)


@app.command("oc")
def oc_table(
    plan: Optional[str] = typer.Option(None, "--plan", help='Plan notation, e.g. "n=80,c=2".'),
    n: Optional[str] = typer.Option(None, "--n", help="Sample size."),
    c: Optional[str] = typer.Option(None, "--c", help="Acceptance number."),
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    defects: bool = common.DEFECTS,
    max_p: Optional[str] = typer.Option(None, "--max-p", help="Largest quality level of the grid."),
    points: str = typer.Option("21", "--points", help="Number of grid points."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="Evaluate at these levels instead of a grid (repeatable, or comma-separated)."),
    aql: Optional[str] = typer.Option(None, "--aql", help="Mark the AQL on the plot."),
    rql: Optional[str] = typer.Option(None, "--rql", help="Mark the RQL on the plot."),
    csv: Optional[str] = typer.Option(None, "--csv", help="Write the table as CSV to PATH, or - for stdout."),
    plot: Optional[str] = typer.Option(None, "--plot", help="Draw the OC curve to PATH.png or PATH.svg."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """OC table: exact and Poisson acceptance probabilities side by side."""
    from lotwise.analysis.outputs import attribute_oc

    p = common.plan_from(plan, n, c)
    if p.evaluation == "flow":  # continuous sampling: AFI, AOQ and pa per produced unit
        from .csp import oc_cmd as flow_oc

        return flow_oc(p, max_p=max_p, points=points, at=at, csv=csv, plot=plot, model=model,
                       force=force, as_json=as_json,
                       unused={"--lot-size": lot, "--defects": defects, "--aql": aql,
                               "--rql": rql})
    if p.evaluation == "process":  # a measured process: the plan's own normal-theory OC
        from .variables import oc_cmd as process_oc

        return process_oc(p, max_p=max_p, points=points, at=at, aql=aql, rql=rql, csv=csv,
                          plot=plot, force=force, as_json=as_json)
    scope, mdl = common.scope_and_model(lot, defects, model)
    p = p.for_scope(scope)  # checks the scope; a plan may be meant per the scope
    a, r = common.levels(aql, rql, defects, need=False)
    if plot is not None and not plot.lower().endswith((".png", ".svg", ".pdf")):
        raise InputError(f"--plot ({plot}) must end in .png, .svg or .pdf")
    ps = common.level_grid(p, scope, mdl, max_p, points, at, r)
    out = attribute_oc(p, scope, mdl, ps, aql=a, rql=r)
    header, rows = out["columns"], out["rows"]
    if csv is not None:
        common.write_csv(csv, header, rows, force=force)
    if plot is not None:
        from lotwise.data.files import save_figure

        top = float(ps.max()) if len(ps) and ps.max() > 0 else None
        if p.varying_sample:
            from lotwise.documents.plots.multistage import oc_asn_figure

            fig = oc_asn_figure(p, scope, model=mdl, aql=a, rql=r, max_p=top)
        else:
            from lotwise.documents.plots.style import oc_figure

            fig = oc_figure([(p, scope)], models=scope.models, aql=a, rql=r, max_p=top)
        save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        common.emit_json(out)
    elif csv != "-":
        nm = len(scope.models)
        shown = [[common.fmt_level(row[0], defects)] + [f"{v:.5f}" for v in row[1:1 + nm]]
                 + [_cell(k, v) for k, v in zip(header[1 + nm:], row[1 + nm:])] for row in rows]
        what = "OC and ASN table" if p.varying_sample else "OC table"
        typer.echo(f"{what} for the {p.scheme} plan {p.label}"
                   + (f", lot of {scope.lot_size}" if scope.lot_size else "")
                   + f" (exact model: {scope.exact_model})")
        if "lot_count_rule" in out:
            typer.echo("  " + out["lot_count_rule"])
        typer.echo(common.table(shown, header))
        if csv:
            typer.echo(f"  wrote {csv}")
        if plot:
            typer.echo(f"  wrote {plot}")


def _cell(key: str, v) -> str:
    if key == "poisson_minus_exact":
        return f"{v:+.5f}"
    if key == "lot_count":
        return str(v)
    if key in ("aoq", "wald_pa"):
        return f"{v:.5f}"
    return f"{v:.1f}"




