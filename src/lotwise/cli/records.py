"""``lotwise records``, ``supplier`` and ``tradeoff``: lot history, the
supplier's rejection outlook and the price of tighter targets."""

from __future__ import annotations

import sys
from typing import Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError, format_level, format_pct, parse_count, parse_risk


def _bad_rows(records) -> None:
    for b in records.bad_rows:
        print(f"lotwise: {b.message(records.source)}", file=sys.stderr)


def _load(path, plans_dir, option="RECORDS"):
    from lotwise.data.records import read_records

    if plans_dir is not None:
        from pathlib import Path

        if not Path(plans_dir).is_dir():
            raise InputError(f"--plans ({plans_dir}) is not a folder")
    recs = read_records(path, plans_dir=plans_dir, option=option)
    if not len(recs.frame):  # one line: the first bad row says why
        bad = recs.bad_rows
        why = (f": line {bad[0].line}: {bad[0].reason}"
               + (f" (and {len(bad) - 1} more bad row(s))" if len(bad) > 1 else "")) if bad else ""
        raise InputError(f"{option} ({recs.source}) has no usable rows{why}")
    _bad_rows(recs)
    return recs


def _select(recs, supplier, part, option="--supplier"):
    df = recs.frame
    if supplier is not None:
        known = sorted(df["supplier"].unique())
        if supplier not in set(known):
            raise InputError(f"--supplier ({supplier}) is not in {recs.source}; suppliers there: "
                             + _some(known))
        df = df[df["supplier"] == supplier]
    if part is not None:
        known = sorted(df["part"].unique())
        if part not in set(known):
            raise InputError(f"--part ({part}) is not in {recs.source}"
                             + (f" for supplier {supplier}" if supplier else "")
                             + "; parts there: " + _some(known))
        df = df[df["part"] == part]
    return df


def _some(items, k=10):
    items = list(items)
    return ", ".join(items[:k]) + (f" and {len(items) - k} more" if len(items) > k else "")


def _pct(x: float) -> str:
    """A rate in percent; tiny ones in scientific notation."""
    if x is not None and 0 < x < 1e-6:
        return f"{100 * x:.2g} %"
    return format_pct(x)


def _prob(p: float) -> str:
    if p < 1e-4:
        return f"{p:.2g}"
    return f"{p:.4f}"


def _plot_path(plot):
    if plot is not None and not plot.lower().endswith((".png", ".svg", ".pdf")):
        raise InputError(f"--plot ({plot}) must end in .png, .svg or .pdf")
    return plot


@app.command()
def records(
    path: str = typer.Argument(..., metavar="RECORDS", help="CSV of inspected lots."),
    plans: Optional[str] = typer.Option(None, "--plans", help="Folder of plan files named in a plan_file column."),
    supplier: Optional[str] = typer.Option(None, "--supplier", help="Only this supplier."),
    part: Optional[str] = typer.Option(None, "--part", help="Only this part."),
    confidence: str = typer.Option("95%", "--confidence", help="Confidence of the process-average interval."),
    significance: str = typer.Option("5%", "--significance", help="Two-sided probability below which the acceptance rate is called inconsistent with the OC."),
    plot: Optional[str] = typer.Option(None, "--plot", help="Run charts to PATH.png, .svg or .pdf."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """Lot records: dispositions checked, process average, run chart, OC cross-check.

    Columns: date, supplier, part, lot_size, sample_size, found, plan (e.g.
    "n=80,c=2") or plan_file, disposition (accept/reject); lot_id optional.
    Bad rows are reported by line on stderr and skipped.
    """
    from lotwise.data.records import LIMIT_TAIL, summarise

    conf = float(f"{parse_risk(confidence, '--confidence'):.12g}")
    sig = float(f"{parse_risk(significance, '--significance'):.12g}")
    _plot_path(plot)
    recs = _load(path, plans)
    _select(recs, supplier, part)
    s = summarise(recs, confidence=conf, significance=sig, supplier=supplier, part=part,
                  charts=plot is not None)
    if plot is not None:
        from lotwise.documents.plots.charts import run_charts_figure
        from lotwise.data.files import save_figure

        order = sorted(s.groups, key=lambda g: -g.lots)
        fig = run_charts_figure(order, limit=8)
        save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        out = s.as_dict()
        out["plot"] = plot
        common.emit_json(out)
        return
    typer.echo(f"Lot records {s.source}: {s.rows_read} row(s) read, {s.rows_used} used, "
               f"{len(s.bad_rows)} skipped")
    rows = []
    for g in s.groups:
        lo, hi = g.interval
        rows.append([g.supplier, g.part, str(g.lots), format_pct(g.acceptance_rate),
                     format_pct(g.process_average), f"{format_pct(lo)} .. {format_pct(hi)}",
                     format_pct(g.expected_acceptance_rate), _prob(g.two_sided),
                     "yes" if g.consistent else "NO", str(g.out_of_limits),
                     str(g.disposition_mismatches)])
    typer.echo(common.table(rows, ["supplier", "part", "lots", "accepted",
                                   "process avg", f"{conf:.0%} interval (exact)",
                                   "OC expects", "two-sided P", "consistent",
                                   "beyond limits", "wrong disposition"]))
    typer.echo(f"  process average: nonconforming found / units inspected, with its "
               f"Clopper-Pearson interval; OC expects: the plans' type B acceptance "
               f"probability at that average; run-chart limits: exact binomial, "
               f"{100 * LIMIT_TAIL:.3g} % each side.")
    odd = [g for g in s.groups if not g.consistent]
    if odd:
        typer.echo("")
        for g in odd[:20]:
            typer.echo(f"  - {g.sentence()}")
        if len(odd) > 20:
            typer.echo(f"  ... and {len(odd) - 20} more groups (see --json)")
    if s.findings:
        typer.echo("")
        typer.echo(f"  Findings ({len(s.findings)}):")
        for f in s.findings[:20]:
            lot = f" lot {f['lot_id']}" if f["lot_id"] else ""
            typer.echo(f"  - line {f['line']}: {f['supplier']} / {f['part']}{lot}, "
                       f"{f['date']}: {f['finding']}")
        if len(s.findings) > 20:
            typer.echo(f"  ... and {len(s.findings) - 20} more (see --json)")
    if plot:
        shown = min(len(s.groups), 8)
        more = f" (the {shown} groups with most lots; choose with --supplier/--part)" \
            if len(s.groups) > 8 else ""
        typer.echo(f"  wrote {plot}{more}")


def _posterior_from(records_path, supplier, part, plans, prior):
    from lotwise.analysis.supplier import Posterior

    recs = _load(records_path, plans, option="--records")
    if supplier is None:
        raise InputError("--supplier is required with --records (the process average is "
                         "a supplier's)")
    df = _select(recs, supplier, part)
    x, m = int(df["found"].sum()), int(df["sample_size"].sum())
    return Posterior.from_counts(x, m, prior), len(df)


@app.command()
def supplier(
    plan: Optional[str] = typer.Option(None, "--plan", help='The plan, e.g. "n=80,c=2".'),
    records_path: Optional[str] = typer.Option(None, "--records", help="Lot records CSV to take the counts from."),
    supplier_name: Optional[str] = typer.Option(None, "--supplier", help="Supplier in the records."),
    part: Optional[str] = typer.Option(None, "--part", help="Part in the records (default: all the supplier's parts)."),
    plans: Optional[str] = typer.Option(None, "--plans", help="Folder of plan files for the records."),
    found: Optional[str] = typer.Option(None, "--found", help="Nonconforming items found (instead of --records)."),
    inspected: Optional[str] = typer.Option(None, "--inspected", help="Units inspected (with --found)."),
    deliveries: Optional[str] = typer.Option(None, "--deliveries-per-year", help="Lots delivered per year."),
    prior: str = typer.Option("jeffreys", "--prior", help="jeffreys (Beta(1/2, 1/2)) or uniform (Beta(1, 1))."),
    interval: str = typer.Option("90%", "--interval", help="Probability of the predictive interval of rejected lots."),
    as_json: bool = common.JSON,
):
    """The supplier's outlook: how often its lots will be rejected under a plan.

    The process average comes from the counts with its uncertainty (a beta
    posterior); lots come from the process, so the OC is type B (binomial).
    """
    from lotwise.families.base import parse_plan
    from lotwise.analysis.supplier import Posterior, rejection_outlook

    if plan is None:
        raise InputError('--plan is required (for example --plan "n=80,c=2")')
    p = parse_plan(plan)
    prob = parse_risk(interval, "--interval")
    L = parse_count(deliveries, "--deliveries-per-year", minimum=1, maximum=10**7) \
        if deliveries is not None else None
    lots = None
    if records_path is not None:
        if found is not None or inspected is not None:
            raise InputError("--records cannot be combined with --found/--inspected")
        post, lots = _posterior_from(records_path, supplier_name, part, plans, prior)
    else:
        if found is None or inspected is None:
            raise InputError("give --records lots.csv --supplier NAME, or the counts as "
                             "--found X --inspected M")
        m = parse_count(inspected, "--inspected", minimum=1)
        x = parse_count(found, "--found", minimum=0)
        if x > m:
            raise InputError(f"--found ({x}) must not be greater than --inspected ({m})")
        if prior not in ("jeffreys", "uniform"):
            raise InputError(f"--prior ({prior}) must be one of: jeffreys, uniform")
        post = Posterior.from_counts(x, m, prior)
    out = rejection_outlook(p, post, deliveries_per_year=L, interval=prob)
    if as_json:
        d = out.as_dict()
        d.update({"supplier": supplier_name, "part": part, "lots_in_records": lots})
        common.emit_json(d)
        return
    who = supplier_name or "the supplier"
    if part:
        who += f" / {part}"
    lo, hi = post.interval(0.95)
    typer.echo(f"Rejection outlook for {who} under {p.label}")
    src = f" from {lots} lots in {records_path}" if lots is not None else ""
    typer.echo(f"  counts     {post.nonconforming} nonconforming in {post.inspected} inspected"
               f"{src}: process average {format_pct(post.estimate)}")
    typer.echo(f"  posterior  Beta({post.a:g}, {post.b:g}) ({post.prior_text}); mean "
               f"{format_pct(post.mean)}, 95 % credible interval {format_pct(lo)} .. "
               f"{format_pct(hi)}")
    typer.echo(f"  a lot is rejected with probability {format_pct(out.p_reject)} "
               f"(predictive, {out.method}); at the point estimate alone "
               f"{format_pct(out.p_reject_at_estimate)}")
    if L is not None:
        a, b = out.rejected_interval
        typer.echo(f"  of {L} lots a year, {out.rejected_per_year:.3g} are expected to be "
                   f"rejected ({prob:.0%} predictive interval {a} to {b})")


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
    _plot_path(plot)
    L = parse_count(deliveries, "--deliveries-per-year", minimum=1, maximum=10**7) \
        if deliveries is not None else None
    post = None
    lots = None
    pavg = None
    if process_average is not None and records_path is not None:
        raise InputError("--process-average cannot be combined with --records; give one")
    if process_average is not None:
        pavg = parse_level(process_average, "--process-average")
    elif records_path is not None:
        post, lots = _posterior_from(records_path, supplier_name, part, plans, prior)
        pavg = post.estimate
    rows = grid(aqls, rqls, alpha=al, beta=be, lot_size=N, model=mdl, process_average=pavg,
                posterior=post, deliveries_per_year=L)
    header = ["aql", "rql", "ratio", "n", "c", "alpha_actual", "beta_actual",
              "supplier_p_reject", "supplier_p_reject_predictive", "rejected_per_year",
              "full_inspection", "reason"]
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
                 "-" if rej is None else _pct(rej),
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
        return repr(v)
    s = str(v)
    if any(ch in s for ch in ',"\n'):
        s = '"' + s.replace('"', '""') + '"'
    return s
