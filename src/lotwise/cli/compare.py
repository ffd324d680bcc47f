"""``lotwise compare``: several plans side by side against the same targets."""

from __future__ import annotations

from typing import List, Optional

import typer

from . import app, common, sheets
from lotwise.core.numbers import probability
from lotwise.core.quantities import InputError


@app.command()
def compare(
    files: Optional[List[str]] = typer.Argument(None, help="Plan files whose plans to include."),
    plan: Optional[List[str]] = typer.Option(None, "--plan", help='Plan notation (repeatable), e.g. "n=80,c=2".'),
    aql: Optional[str] = common.AQL,
    rql: Optional[str] = common.RQL,
    alpha: str = common.ALPHA,
    beta: str = common.BETA,
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    per_unit: bool = common.PER_UNIT,
    designed: bool = typer.Option(False, "--designed", help="Add the single, double and sequential plans designed for --aql/--rql (the trade-off view)."),
    plot: Optional[str] = typer.Option(None, "--plot", help="OC curves of all plans to PATH.png/.svg."),
    force: bool = typer.Option(False, "--force", help="Overwrite files lotwise did not write."),
    miss_rate: Optional[str] = common.MISS_RATE,
    false_alarm: Optional[str] = common.FALSE_ALARM,
    study: Optional[str] = common.STUDY,
    as_json: bool = common.JSON,
):
    """Several plans side by side: risks, quality levels, ASN, one OC plot."""
    from lotwise.core.types import Targets
    from lotwise.core.types import Scope
    from lotwise.families.base import parse_plan
    from lotwise.core.quantities import format_level, format_pct
    rates = common.error_rates(miss_rate, false_alarm, study)
    if rates is not None and (designed or files):
        raise InputError("--miss-rate/--false-alarm/--study apply to the --plan entries of "
                         "compare, not to --designed or plan files (a plan file states its "
                         "rates in its [inspection] table)")
    entries = []  # (label, plan, targets, scope, model)
    notes = []  # designed plans left out, and why
    for pp in sheets.resolve_files(files or []):
        for rep, p in zip(pp.reports, pp.plans):
            entries.append((f"{pp.request.part_id}/{rep['characteristic']['id']}", p,
                            Targets(**rep["targets"]), pp.request.scope, pp.request.model))
    if plan or designed:
        a, r = common.levels(aql, rql, per_unit)
        al, be = common.risks(alpha, beta)
        scope = Scope(lot_size=common.lot_size(lot), per_unit=per_unit)
        mdl = scope.check_model(model)
        if designed:
            from lotwise.analysis.tradeoff import asn_tradeoff

            tr = asn_tradeoff(Targets(aql=a, rql=r, alpha=al, beta=be), scope, model=mdl)
            for row in tr.rows:
                if row.plan is not None:
                    entries.append((f"designed {row.scheme}: {row.label}", row.plan,
                                    Targets(aql=a, rql=r, alpha=al, beta=be), scope, mdl))
                else:
                    notes.append(f"designed {row.scheme}: left out: {row.note or 'no plan'}")
        for i, text in enumerate(plan or [], 1):
            p = parse_plan(text, f"--plan #{i}")
            if scope.lot_size and p.max_sample > scope.lot_size:
                raise InputError(f"--plan #{i} ({text}): the plan inspects up to "
                                 f"{p.max_sample} units, more than --lot-size ({scope.lot_size})")
            if rates is not None:
                p = common.with_errors(p.for_scope(scope), rates, scope)
            entries.append((p.label, p, Targets(aql=a, rql=r, alpha=al, beta=be), scope, mdl))
    if len(entries) < 2:
        raise InputError("compare needs at least two plans: give --plan twice or more, or plan "
                         "files")
    common.plot_path(plot, force)
    rows_, entries = _evaluate(entries, notes)
    if plot is not None:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.style import oc_figure

        t0 = entries[0][2]
        fig = oc_figure([(p, s) for _, p, _, s, _ in entries], models=[rows_[0]["model"]],
                        aql=t0.aql, rql=t0.rql, labels=[e[0] for e in entries],
                        max_p=max(1.3 * e[2].rql for e in entries))
        save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        out = {"plans": rows_} | ({"notes": notes} if notes else {})
        common.emit_json(common.add_rates(out, rates) if rates else out)
        return
    rows = []
    for r in rows_:
        q = r["plan_quality"]
        per = r["per_unit"]
        asn = r.get("asn")
        counts = r.get("plan_quality_counts")

        def level(side):
            if counts is None:
                return format_level(q[side], per)
            return f"D = {counts[side]} (Pa {r['plan_quality_pa'][side]:.3f})"

        rows.append([r["label"], r["model"], probability(r["pa_aql"]), format_pct(r["alpha"]),
                     probability(r["pa_rql"]), format_pct(r["beta"]), level("producer"),
                     level("indifference"), level("consumer"),
                     f"{asn['aql']:.1f} / {asn['rql']:.1f}" if asn else "fixed",
                     "yes" if r["meets"] else "NO"])
    typer.echo(common.table(rows, ["plan", "model", "Pa(AQL)", "alpha", "Pa(RQL)", "beta",
                                   "Pa=1-alpha at", "Pa=0.5 at", "Pa=beta at",
                                   "ASN (AQL/RQL)", "meets"]))
    for note in notes:
        typer.echo(f"  {note}")
    if plot:
        typer.echo(f"  wrote {plot}")


def _evaluate(entries, notes):
    """``(rows, entries kept)``: one comparison row per plan; a designed plan whose
    report is beyond its budget is left out with a note (a plan the user gave is
    refused as usual)."""
    from lotwise.analysis.compare import row_for
    from lotwise.core.quantities import TooCostly

    rows, kept = [], []
    for e in entries:
        try:
            rows.append(row_for(*e))
            kept.append(e)
        except TooCostly as exc:
            if not e[0].startswith("designed "):
                raise
            notes.append(f"{e[0].split(':')[0]}: left out: {exc}")
    if len(kept) < 2:
        raise InputError("compare needs at least two plans it can evaluate: " + "; ".join(notes))
    return rows, kept
