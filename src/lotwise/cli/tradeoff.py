"""``lotwise tradeoff``: single, double and sequential plans for the same targets, side by
side, with the expected inspection per lot and per year."""

from __future__ import annotations

from typing import Optional

import typer

from . import app, common, records
from lotwise.core.numbers import csv_number
from lotwise.core.quantities import InputError, format_level, format_pct, parse_rate


@app.command()
def tradeoff(
    aql: Optional[str] = typer.Option(None, "--aql", help="AQL levels: 1%,2%,3% or a range 1%..3%:0.5%."),
    rql: Optional[str] = typer.Option(None, "--rql", "--ltpd", help="RQL levels, written like --aql."),
    alpha: str = common.ALPHA,
    beta: str = common.BETA,
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    process_average: Optional[str] = typer.Option(None, "--process-average", help="The supplier's process average (e.g. 0.8%)."),
    records_path: Optional[str] = typer.Option(None, "--records", help="Take the process average from lot records."),
    supplier_name: Optional[str] = typer.Option(None, "--supplier", help="Supplier in the records."),
    part: Optional[str] = typer.Option(None, "--part", help="Part in the records."),
    plans: Optional[str] = typer.Option(None, "--plans", help="Folder of plan files for the records."),
    prior: str = typer.Option("jeffreys", "--prior", help="Prior for the records' posterior: jeffreys or uniform."),
    deliveries: Optional[str] = typer.Option(None, "--deliveries-per-year", help="Lots delivered per year."),
    csv: Optional[str] = typer.Option(None, "--csv", help="Write the table as CSV to PATH, or - for stdout."),
    plot: Optional[str] = typer.Option(None, "--plot", help="Sample size against RQL/AQL to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """Price of tighter targets: a plan per AQL/RQL pair, its sample, both sides' risks.

    Levels: a list 1%,2%,3%, a range start..stop:step (1%..3%:0.5%, both
    ends included) or a mix of both.
    """
    from lotwise.core.quantities import parse_level
    from lotwise.analysis.supplier import parse_levels
    from lotwise.analysis.supplier import tradeoff as grid

    aqls = parse_levels(aql, "--aql")
    rqls = parse_levels(rql, "--rql")
    al, be = common.risks(alpha, beta)
    N = common.lot_size(lot)
    from lotwise.core.types import Scope

    mdl = Scope(lot_size=N).check_model(model)
    common.outputs(force, ("--csv", csv), ("--plot", plot, "figure"))
    L = parse_rate(deliveries, "--deliveries-per-year", minimum=1, whole=True) \
        if deliveries is not None else None
    post = None
    lots = None
    pavg = None
    if process_average is not None and records_path is not None:
        raise InputError("--process-average cannot be combined with --records; give one")
    if process_average is not None:
        pavg = parse_level(process_average, "--process-average")
    elif records_path is not None:
        post, lots = records.posterior_from(records_path, supplier_name, part, plans, prior)
        pavg = post.estimate
    rows = grid(aqls, rqls, alpha=al, beta=be, lot_size=N, model=mdl, process_average=pavg,
                posterior=post, deliveries_per_year=L)
    header = ["aql", "rql", "ratio", "n", "c", "alpha_actual", "beta_actual",
              "supplier_p_reject", "supplier_p_reject_predictive", "rejected_per_year",
              "full_inspection", "reason"]
    from lotwise.data.files import all_or_nothing

    with all_or_nothing():  # the table and the figure, or neither
        if csv is not None:
            common.write_csv(csv, header, [[r.as_dict()[h] for h in header] for r in rows],
                             force=force, cell=_cell)
        if plot is not None:
            from lotwise.documents.plots.charts import tradeoff_figure
            from lotwise.data.files import save_figure

            if not any(r.plan is not None for r in rows):
                raise InputError("--plot: no pair of the grid has a plan; nothing to draw")
            save_figure(tradeoff_figure(rows), plot, force=force, option="--plot")
    if as_json:
        common.emit_json({
            "alpha": al, "beta": be, "lot_size": N, "model": mdl, "process_average": pavg,
            "posterior": post.as_dict() if post else None, "lots_in_records": lots,
            "supplier": supplier_name, "part": part, "deliveries_per_year": L,
            "rows": [r.as_dict() for r in rows], "csv": csv, "plot": plot})
        return
    if csv == "-":
        return
    _render_tradeoff(rows, al=al, be=be, mdl=mdl, N=N, pavg=pavg, post=post, lots=lots,
                     supplier_name=supplier_name, part=part, csv=csv, plot=plot)


def _render_tradeoff(rows, *, al, be, mdl, N, pavg, post, lots, supplier_name, part, csv,
                     plot) -> None:
    """The trade-off table and its notes on the terminal."""
    typer.echo(f"Trade-off: smallest single plans for alpha {format_pct(al)}, beta "
               f"{format_pct(be)}, {mdl} model" + (f", lot of {N}" if N else ""))
    if pavg is not None:
        src = (f" (from {lots} lots of {supplier_name}"
               + (f" / {part}" if part else "") + f", {post.prior_text} posterior)") \
            if post else ""
        typer.echo(f"  supplier's process average {format_level(pavg)}{src}")
    shown = []
    for r in rows:
        if r.plan is None:
            shown.append([format_level(r.aql), format_level(r.rql), f"{r.ratio:.3g}",
                          "no plan", "-", "-", "-", "-", "-"])
            continue
        rej = r.p_reject_predictive if r.p_reject_predictive is not None else r.p_reject
        cells = [format_level(r.aql), format_level(r.rql), f"{r.ratio:.3g}", str(r.n),
                 str(r.c), format_pct(r.alpha_actual), format_pct(r.beta_actual),
                 "-" if rej is None else records.pct(rej),
                 "-" if r.rejected_per_year is None else f"{r.rejected_per_year:.3g}"]
        if r.full_inspection:
            cells[3] += " (100 %)"
        shown.append(cells)
    typer.echo(common.table(shown, ["AQL", "RQL", "RQL/AQL", "n", "c", "alpha", "beta (buyer)",
                                    "supplier rejects", "rejected/year"]))
    for r in rows:
        if r.plan is None:
            typer.echo(f"  no plan for AQL {format_level(r.aql)}, RQL {format_level(r.rql)}: "
                       f"{r.reason}")
    typer.echo("  beta (buyer): the plan's real consumer's risk at the RQL; supplier rejects: "
               "share of the supplier's lots rejected at its process average"
               + (" (predictive, over the posterior)" if post else "") + ".")
    from lotwise.data.batch import SAFETY_NOTE

    typer.echo(f"  {SAFETY_NOTE}")
    for f, what in ((csv, "--csv"), (plot, "--plot")):
        if f:
            typer.echo(f"  wrote {f}")


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        return csv_number(v)
    s = str(v)
    if any(ch in s for ch in ',"\n'):
        s = '"' + s.replace('"', '""') + '"'
    return s
