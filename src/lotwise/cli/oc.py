"""``lotwise oc``: the OC table (and curve) of a plan, exact and Poisson side by side."""

from __future__ import annotations

from typing import List, Optional

import typer

from . import app, common
from lotwise.core.numbers import probability


@app.command("oc")
def oc_table(
    plan: Optional[str] = typer.Option(None, "--plan", help='Plan notation, e.g. "n=80,c=2".'),
    n: Optional[str] = typer.Option(None, "--n", help="Sample size."),
    c: Optional[str] = typer.Option(None, "--c", help="Acceptance number."),
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    per_unit: bool = common.PER_UNIT,
    max_p: Optional[str] = typer.Option(None, "--max-p", help="Largest quality level of the grid."),
    points: str = typer.Option("21", "--points", help="Number of grid points."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="Evaluate at these levels instead of a grid (repeatable, or comma-separated)."),
    aql: Optional[str] = typer.Option(None, "--aql", help="Mark the AQL on the plot."),
    rql: Optional[str] = typer.Option(None, "--rql", help="Mark the RQL on the plot."),
    csv: Optional[str] = typer.Option(None, "--csv", help="Write the table as CSV to PATH (a workbook when PATH ends in .xlsx), or - for stdout."),
    csv_sep: Optional[str] = common.CSV_SEP,
    decimal_comma: bool = common.DECIMAL_COMMA,
    plot: Optional[str] = typer.Option(None, "--plot", help="Draw the OC curve to PATH.png or PATH.svg."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    miss_rate: Optional[str] = common.MISS_RATE,
    false_alarm: Optional[str] = common.FALSE_ALARM,
    study: Optional[str] = common.STUDY,
    measurement_sd: Optional[str] = common.MEASUREMENT_SD,
    sigma_is: Optional[str] = common.SIGMA_IS,
    process_sd: Optional[str] = common.PROCESS_SD,
    as_json: bool = common.JSON,
):
    """OC table: exact and Poisson acceptance probabilities side by side."""
    from lotwise.analysis.outputs import attribute_oc

    p = common.plan_from(plan, n, c)
    style = common.csv_output(csv_sep, decimal_comma, csv)
    rates = common.error_rates(miss_rate, false_alarm, study)
    gauge = common.gauge_args(measurement_sd, sigma_is, process_sd)
    if p.evaluation == "flow":  # continuous sampling: AFI, AOQ and pa per produced unit
        from .csp import oc_cmd as flow_oc

        return flow_oc(p, max_p=max_p, points=points, at=at, csv=csv, plot=plot, model=model,
                       force=force, as_json=as_json, style=style,
                       unused={"--lot-size": lot, "--per-unit": per_unit, "--aql": aql,
                               "--rql": rql, "--miss-rate": miss_rate,
                               "--false-alarm": false_alarm, "--study": study})
    if p.evaluation == "process" and rates is not None:
        common.with_errors(p, rates, None)  # refused: a gauge's error is --measurement-sd
    if p.evaluation == "process":  # a measured process: the plan's own normal-theory OC
        from .variables import oc_cmd as process_oc

        return process_oc(common.with_gauge(p, gauge), max_p=max_p, points=points, at=at, aql=aql, rql=rql, csv=csv,
                          plot=plot, force=force, as_json=as_json, style=style)
    common.with_gauge(p, gauge)  # refused: a gauge's error is for variables plans
    scope, mdl = common.scope_and_model(lot, per_unit, model)
    p = p.for_scope(scope)  # checks the scope; a plan may be meant per the scope
    p = common.with_errors(p, rates, scope)  # Pa at the true quality
    a, r = common.levels(aql, rql, per_unit, need=False)
    common.outputs(force, ("--csv", csv), ("--plot", plot, "figure"))
    ps = common.level_grid(p, scope, mdl, max_p, points, at, r)
    out = common.add_rates(attribute_oc(p, scope, mdl, ps, aql=a, rql=r), rates)
    header, rows = out["columns"], out["rows"]
    from lotwise.data.files import all_or_nothing

    with all_or_nothing():  # the table and the figure, or neither
        if csv is not None:
            common.write_csv(csv, header, rows, force=force, style=style)
        if plot is not None:
            _plot(p, scope, mdl, a, r, ps, plot, force)
    if as_json:
        common.emit_json(out)
    elif csv != "-":
        nm = len(scope.models)
        shown = [[common.fmt_level(row[0], per_unit)] + [probability(v, 5) for v in row[1:1 + nm]]
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


def _plot(p, scope, mdl, a, r, ps, plot, force) -> None:
    from lotwise.data.files import save_figure

    top = float(ps.max()) if len(ps) and ps.max() > 0 else None
    if p.varying_sample:
        from lotwise.documents.plots.multistage import oc_asn_figure

        fig = oc_asn_figure(p, scope, model=mdl, aql=a, rql=r, max_p=top)
    else:
        from lotwise.documents.plots.style import oc_figure

        fig = oc_figure([(p, scope)], models=scope.models, aql=a, rql=r, max_p=top)
    save_figure(fig, plot, force=force, option="--plot")


def _cell(key: str, v) -> str:
    if key == "poisson_minus_exact":
        return f"{v:+.5f}"
    if key == "lot_count":
        return str(v)
    if key in ("aoq", "wald_pa", "error_free_pa"):
        return probability(v, 5)
    return f"{v:.1f}"
