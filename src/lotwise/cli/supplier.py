"""``lotwise supplier``: one supplier's outlook from its lot records (or counts)."""

from __future__ import annotations

from typing import Optional

import typer

from . import app, common, records
from lotwise.core.quantities import InputError, format_pct, parse_rate, parse_count, parse_risk


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
    L = parse_rate(deliveries, "--deliveries-per-year", minimum=1, whole=True) \
        if deliveries is not None else None
    lots = None
    if records_path is not None:
        if found is not None or inspected is not None:
            raise InputError("--records cannot be combined with --found/--inspected")
        post, lots = records.posterior_from(records_path, supplier_name, part, plans, prior)
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
