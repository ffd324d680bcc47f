"""``lotwise design``, ``check`` and ``oc`` for single sampling plans."""

from __future__ import annotations

from typing import List, Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError, Infeasible, parse_count, parse_level


def _scope_and_model(lot, defects, model):
    from lotwise.core.types import Scope

    scope = Scope(lot_size=common.lot_size(lot), defects=defects)
    return scope, scope.check_model(model)


def _plan_from(plan_text, n, c, *, required=True):
    from lotwise.families.single import SinglePlan
    from lotwise.families.base import parse_plan

    if plan_text is not None:
        if n is not None or c is not None:
            raise InputError("--plan cannot be combined with --n/--c; give one or the other")
        return parse_plan(plan_text)
    if n is None and c is None and not required:
        return None
    if n is None or c is None:
        raise InputError("give the plan as --n and --c (for example --n 80 --c 2) "
                         "or as --plan \"n=80,c=2\"")
    nn = parse_count(n, "--n", minimum=1)
    cc = parse_count(c, "--c", minimum=0)
    return SinglePlan(n=nn, c=cc)  # c > n is checked against the scope (items only)


@app.command()
def design(
    aql: Optional[str] = common.AQL,
    rql: Optional[str] = common.RQL,
    alpha: str = common.ALPHA,
    beta: str = common.BETA,
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    defects: bool = common.DEFECTS,
    scheme: str = typer.Option("single", "--scheme", help="Plan family: single, double, sequential, compare-all (the three side by side), chain (ChSP-1) or variables."),
    c: Optional[str] = typer.Option(None, "--c", help="Fix the acceptance number (0 for accept-on-zero)."),
    n: Optional[str] = typer.Option(None, "--n", help="Fix the sample size and find c."),
    max_n: Optional[str] = typer.Option(None, "--max-n", help="Largest affordable sample."),
    minimize: Optional[str] = typer.Option(None, "--minimize", help="single: ati (least average total inspection at --process-average); double: asn-aql (default) or asn-max."),
    process_average: Optional[str] = typer.Option(None, "--process-average", help="Supplier's process average, for --minimize ati."),
    aoql: Optional[str] = typer.Option(None, "--aoql", help="AOQL limit, for --minimize ati (instead of --rql)."),
    aoq_formula: str = typer.Option("screened", "--aoq-formula", help="screened: AOQ = p Pa (N - n)/N; simple: p Pa."),
    sigma: Optional[str] = typer.Option(None, "--sigma", help="variables: known or unknown."),
    sigma_value: Optional[str] = typer.Option(None, "--sigma-value", help="variables: the known sigma."),
    limit: Optional[str] = typer.Option(None, "--limit", help="variables: upper, lower or both."),
    lower: Optional[str] = typer.Option(None, "--lower", help="variables: lower specification limit."),
    upper: Optional[str] = typer.Option(None, "--upper", help="variables: upper specification limit."),
    ratio: Optional[str] = typer.Option(None, "--ratio", help="double: n2 / n1 (default 2)."),
    truncate: Optional[str] = typer.Option(None, "--truncate",
                                           help="sequential: most units to inspect "
                                                "(default 3 x the single plan's n)."),
    plot: Optional[str] = typer.Option(None, "--plot",
                                       help="double, sequential, compare-all: draw the chart "
                                            "to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """Design the plan with the smallest sample meeting both risks."""
    from lotwise.core.types import Targets
    from lotwise.families.single import design_single
    from lotwise.analysis.report import render_single, single_report

    if scheme == "variables":
        from .variables import design_cmd

        return design_cmd(aql=aql, rql=rql, alpha=alpha, beta=beta, sigma=sigma,
                          sigma_value=sigma_value, limit=limit, lower=lower, upper=upper,
                          max_n=max_n, lot=lot, model=model, defects=defects, c=c, n=n,
                          as_json=as_json)
    if scheme in ("double", "sequential", "compare-all"):
        from .multistage import design_other

        return design_other(scheme=scheme, aql=aql, rql=rql, alpha=alpha, beta=beta, lot=lot,
                            model=model, defects=defects, n=n, c=c, max_n=max_n, ratio=ratio,
                            minimize=minimize, truncate=truncate, plot=plot, force=force,
                            as_json=as_json)
    if scheme not in ("single", "chain"):
        raise InputError(f"--scheme ({scheme}) must be one of: single, double, sequential, "
                         "compare-all, chain, variables")
    if minimize is not None or scheme == "chain":
        from . import rectifying as rect_cli

        return rect_cli.design_dispatch(
            scheme=scheme, minimize=minimize, aql=aql, rql=rql, alpha=alpha, beta=beta, lot=lot,
            model=model, defects=defects, c=c, n=n, max_n=max_n,
            process_average=process_average, aoql=aoql, aoq_formula=aoq_formula,
            as_json=as_json)
    for name, val in (("--process-average", process_average), ("--aoql", aoql)):
        if val is not None:
            raise InputError(f"{name} ({val}) needs --minimize ati")
    for opt, val in (("--ratio", ratio), ("--truncate", truncate), ("--plot", plot)):
        if val is not None:
            raise InputError(f"{opt} ({val}) applies to --scheme double, sequential or "
                             "compare-all, not single")
    a, r = common.levels(aql, rql, defects)
    al, be = common.risks(alpha, beta)
    scope, mdl = _scope_and_model(lot, defects, model)
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
    rep = single_report(d.plan, targets, scope, mdl, design=d)
    if as_json:
        common.emit_json(rep)
    else:
        typer.echo(render_single(rep, "Single sampling plan (smallest sample meeting both risks)"))


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
    aoq_formula: Optional[str] = typer.Option(None, "--aoq-formula", help="With --lot-size: screened (AOQ = p Pa (N - n)/N, default) or simple (p Pa)."),
    skip_lot: Optional[str] = typer.Option(None, "--skip-lot", help='Compare with skip-lot SkSP-2 over this plan, e.g. "i=4,f=0.25".'),
    aoq_plot: Optional[str] = typer.Option(None, "--aoq-plot", help="With --lot-size: draw OC, AOQ and ATI curves to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """Audit a plan (or re-verify plan files): the risks it really carries.

    With --lot-size also AOQ/AOQL and ATI of rectifying inspection. Exit 0
    when it meets both targets (and so does the skip-lot plan, if asked), 1
    when it falls short. With plan files or folders, one summary row per
    characteristic.
    """
    from lotwise.core.types import Targets
    from lotwise.analysis.report import render_single, single_report
    from . import rectifying as rect_cli

    if paths:
        if plan is not None or n is not None or c is not None:
            raise InputError("give plan files/folders or --plan/--n/--c, not both")
        from .sheets import check_folder

        raise typer.Exit(check_folder(paths, as_json))
    p = _plan_from(plan, n, c)
    if p.scheme == "variables":
        from .variables import check_cmd

        return check_cmd(p, aql=aql, rql=rql, alpha=alpha, beta=beta, as_json=as_json)
    if p.scheme == "skiplot":  # "skiplot: n=..,c=..,i=..,f=.." = reference plan + --skip-lot
        if skip_lot is not None:
            raise InputError("--skip-lot cannot be combined with a skiplot --plan")
        p, skip_lot = p.reference, (p.i, p.f)
    if p.scheme in ("double", "multiple", "sequential"):
        from .multistage import check_other

        return check_other(p, aql=aql, rql=rql, alpha=alpha, beta=beta, lot=lot, model=model,
                           defects=defects, as_json=as_json)
    a, r = common.levels(aql, rql, defects)
    al, be = common.risks(alpha, beta)
    scope, mdl = _scope_and_model(lot, defects, model)
    if scope.lot_size is not None and p.n > scope.lot_size:
        raise InputError(f"--n ({p.n}) must not be greater than --lot-size ({scope.lot_size})")
    p.check_scope(scope)
    if not r > a:
        _levels_out_of_order(a, r, defects, as_json)
    targets = Targets(aql=a, rql=r, alpha=al, beta=be)
    if p.scheme == "chain":
        return rect_cli.check_chain(p, targets, scope, mdl, aoq_formula=aoq_formula,
                                    skip_lot=skip_lot, aoq_plot=aoq_plot, as_json=as_json)
    rep = single_report(p, targets, scope, mdl)
    rep = rect_cli.check_extras(rep, p, scope, mdl, targets, aoq_formula=aoq_formula,
                                skip_lot=skip_lot, aoq_plot=aoq_plot, force=force)
    meets = rep["meets"] and rep.get("skip_lot", {}).get("meets", True)
    if as_json:
        common.emit_json(rep)
    else:
        verdict = "meets both targets" if rep["meets"] else "FALLS SHORT"
        typer.echo(render_single(rep, f"Audit of {p.label}: {verdict}")
                   + rect_cli.render_extras(rep))
    raise typer.Exit(0 if meets else 1)


def _levels_out_of_order(a, r, defects, as_json):
    from lotwise.core.quantities import format_level

    common.fail(f"the RQL ({format_level(r, defects)}) must be above the AQL "
                f"({format_level(a, defects)})", 1,
                {"feasible": False, "reason": "rql must be above aql"}, as_json)


def _grid(p, scope, mdl, max_p, points, at, rql):
    import numpy as np

    from lotwise.analysis.audit import quality_at

    if at:
        vals = []
        for item in at:
            for part in str(item).split(","):
                if part.strip():
                    vals.append(parse_level(part, "--at", per_unit=scope.defects))
        return np.array(vals, dtype=float)
    k = parse_count(points, "--points", minimum=2, maximum=100_000)
    if max_p is not None:
        top = parse_level(max_p, "--max-p", per_unit=scope.defects)
    else:
        top = quality_at(p, 0.01, mdl, scope, "consumer")
        if rql is not None:
            top = max(top, 1.25 * rql)
        top = _nice(min(top, 1.0) if not scope.defects else top)
    return np.linspace(0.0, top, k)


def _nice(x: float) -> float:
    """Round up to 1, 2, 2.5 or 5 times a power of ten."""
    import math

    if x <= 0:
        return 1.0
    e = math.floor(math.log10(x))
    for m in (1, 2, 2.5, 5, 10):
        if m * 10**e >= x * (1 - 1e-12):
            return min(m * 10**e, 1.0) if x <= 1 else m * 10**e
    return 10 ** (e + 1)


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
    from lotwise.analysis.audit import oc_grid

    p = _plan_from(plan, n, c)
    if p.scheme == "variables":
        from .variables import oc_cmd

        return oc_cmd(p, max_p=max_p, points=points, at=at, aql=aql, rql=rql, csv=csv,
                      plot=plot, force=force, as_json=as_json)
    if p.scheme in ("double", "multiple", "sequential"):
        from .multistage import oc_other

        return oc_other(p, lot=lot, model=model, defects=defects, max_p=max_p, points=points,
                        at=at, aql=aql, rql=rql, csv=csv, plot=plot, force=force,
                        as_json=as_json)
    scope, mdl = _scope_and_model(lot, defects, model)
    if scope.lot_size is not None and p.n > scope.lot_size:
        raise InputError(f"--n ({p.n}) must not be greater than --lot-size ({scope.lot_size})")
    p.check_scope(scope)
    a, r = common.levels(aql, rql, defects, need=False)
    if plot is not None and not plot.lower().endswith((".png", ".svg", ".pdf")):
        raise InputError(f"--plot ({plot}) must end in .png, .svg or .pdf")
    ps = _grid(p, scope, mdl, max_p, points, at, r)
    cols = oc_grid(p, scope, scope.models, ps)
    exact = scope.exact_model
    header = ["p"] + list(scope.models)
    diff = None
    if exact != "poisson":
        diff = cols["poisson"] - cols[exact]
        header.append("poisson_minus_exact")
    if "lot_count" in cols:
        header.append("lot_count")
    rows = []
    for i, pv in enumerate(ps):
        row = [float(pv)] + [float(cols[m][i]) for m in scope.models]
        if diff is not None:
            row.append(float(diff[i]))
        if "lot_count" in cols:
            row.append(int(cols["lot_count"][i]))
        rows.append(row)

    if csv is not None:
        common.write_csv(csv, header, rows, force=force)
    if plot is not None:
        from lotwise.documents.plots.style import oc_figure
        from lotwise.data.files import save_figure

        fig = oc_figure([(p, scope)], models=scope.models, aql=a, rql=r, max_p=float(ps.max()) if len(ps) else None)
        save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        common.emit_json({"scheme": p.scheme, "n": p.n, "c": getattr(p, "c", None),
                          **p.to_dict(), "lot_size": scope.lot_size,
                          "model": mdl, "columns": header, "rows": rows})
    elif csv != "-":
        shown = [[_fmt_level(row[0], defects)] + [f"{v:.5f}" for v in row[1:1 + len(scope.models)]]
                 + ([f"{row[1 + len(scope.models)]:+.5f}"] if diff is not None else [])
                 + ([str(row[-1])] if "lot_count" in cols else []) for row in rows]
        typer.echo(f"OC table for {p.label}"
                   + (f", lot of {scope.lot_size}" if scope.lot_size else "")
                   + f" (exact model: {exact})")
        typer.echo(common.table(shown, header))
        if csv:
            typer.echo(f"  wrote {csv}")
        if plot:
            typer.echo(f"  wrote {plot}")




def _fmt_level(x: float, per_unit: bool) -> str:
    return f"{x:.6g}" if per_unit else f"{100 * x:.4g} %"
