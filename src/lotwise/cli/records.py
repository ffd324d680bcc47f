"""``lotwise records``: the lot history read back (dispositions, rates, limits), and the
record reading ``supplier`` and ``tradeoff`` share."""

from __future__ import annotations

import sys
from typing import Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError, format_pct, parse_risk


def bad_rows(records) -> None:
    for b in records.bad_rows:
        print(f"lotwise: {b.message(records.source)}", file=sys.stderr)


def load(path, plans_dir, option="RECORDS"):
    from lotwise.data.records import read_records

    if plans_dir is not None:
        from pathlib import Path

        if not Path(plans_dir).is_dir():
            raise InputError(f"--plans ({plans_dir}) is not a folder")
    recs = read_records(path, plans_dir=plans_dir, option=option)
    if recs.note:
        print(f"lotwise: note: {recs.note}", file=sys.stderr)
    if not len(recs.frame):  # one line: the first bad row says why
        bad = recs.bad_rows
        why = (f": line {bad[0].line}: {bad[0].reason}"
               + (f" (and {len(bad) - 1} more bad row(s))" if len(bad) > 1 else "")) if bad else ""
        raise InputError(f"{option} ({recs.source}) has no usable rows{why}")
    bad_rows(recs)
    return recs


def select(recs, supplier, part, option="--supplier"):
    df = recs.frame
    if supplier is not None:
        known = sorted(df["supplier"].unique())
        if supplier not in set(known):
            raise InputError(f"--supplier ({supplier}) is not in {recs.source}; suppliers there: "
                             + some(known))
        df = df[df["supplier"] == supplier]
    if part is not None:
        known = sorted(df["part"].unique())
        if part not in set(known):
            raise InputError(f"--part ({part}) is not in {recs.source}"
                             + (f" for supplier {supplier}" if supplier else "")
                             + "; parts there: " + some(known))
        df = df[df["part"] == part]
    return df


def some(items, k=10):
    items = list(items)
    return ", ".join(items[:k]) + (f" and {len(items) - k} more" if len(items) > k else "")


def pct(x: float) -> str:
    """A rate in percent, ppm below 0.1 % (:func:`lotwise.core.numbers.percent`)."""
    return format_pct(x)


def prob(p: float) -> str:
    """A probability as a decimal (:func:`lotwise.core.numbers.probability`)."""
    from lotwise.core.numbers import probability

    return probability(p)


@app.command()
def records(
    path: str = typer.Argument(..., metavar="RECORDS", help="CSV (or .xlsx workbook) of inspected lots."),
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
    Bad rows are reported by line on stderr and skipped. Exit 0 when every
    recorded disposition agrees with its plan, 1 when one disagrees (the
    summary, and any plot, are still written), 2 bad input.
    """
    from lotwise.analysis.supplier import RUN_RULES
    from lotwise.data.records import LIMIT_TAIL, summarise

    conf = float(f"{parse_risk(confidence, '--confidence'):.12g}")
    sig = float(f"{parse_risk(significance, '--significance'):.12g}")
    common.plot_path(plot, force)
    recs = load(path, plans)
    select(recs, supplier, part)
    s = summarise(recs, confidence=conf, significance=sig, supplier=supplier, part=part,
                  charts=plot is not None)
    if plot is not None:
        from lotwise.documents.plots.charts import run_charts_figure
        from lotwise.data.files import save_figure

        order = sorted(s.groups, key=lambda g: -g.lots)
        fig = run_charts_figure(order, limit=8)
        save_figure(fig, plot, force=force, option="--plot")
    wrong = sum(g.disposition_mismatches for g in s.groups)
    if as_json:
        out = s.as_dict()
        out["plot"] = plot
        common.emit_json(out)
        raise typer.Exit(1 if wrong else 0)
    typer.echo(f"Lot records {s.source}: {s.rows_read} row(s) read, {s.rows_used} used, "
               f"{len(s.bad_rows)} skipped")
    rows = []
    for g in s.groups:
        lo, hi = g.interval
        rows.append([g.supplier, g.part, str(g.lots), format_pct(g.acceptance_rate),
                     format_pct(g.process_average), f"{format_pct(lo)} .. {format_pct(hi)}",
                     format_pct(g.expected_acceptance_rate), prob(g.two_sided),
                     "yes" if g.consistent else "NO", str(g.out_of_limits),
                     str(g.disposition_mismatches)])
    typer.echo(common.table(rows, ["supplier", "part", "lots", "accepted",
                                   "process avg", f"{conf:.0%} interval (exact)",
                                   "OC expects", "two-sided P", "consistent",
                                   "beyond limits", "wrong disposition"]))
    typer.echo(f"  process average: nonconforming found / units inspected, with its "
               f"Clopper-Pearson interval; OC expects: the plans' type B acceptance "
               f"probability at that average; run-chart limits: exact binomial, "
               f"{format_pct(LIMIT_TAIL)} each side.")
    typer.echo(f"  run rules (common practice, no source): {RUN_RULES['run']}; "
               f"{RUN_RULES['trend']}. A signal counts against consistency when a stable "
               f"process at the process average shows as much with probability below "
               f"{sig:.3g} (a bound; a long history shows short runs by chance).")
    _lot_lists(s.groups)
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
    if wrong:
        typer.echo(f"\n  {wrong} lot(s) with a recorded disposition that disagrees with the "
                   "plan (exit 1).")
    raise typer.Exit(1 if wrong else 0)


def _lot_lists(groups, shown: int = 20) -> None:
    """The lots beyond the limits and the run-rule signals, by line, lot id and date."""
    from lotwise.data.records import signal_text

    beyond = [(g, b) for g in groups for b in g.beyond_limits]
    if beyond:
        typer.echo("")
        typer.echo(f"  Lots beyond the limits ({len(beyond)}):")
        for g, b in beyond[:shown]:
            lot = f" lot {b['lot_id']}" if b["lot_id"] else ""
            typer.echo(f"  - line {b['line']}: {g.supplier} / {g.part}{lot}, {b['date']}: "
                       f"{b['found']} found in {b['sample_size']} (limits {b['lower']} to "
                       f"{b['upper']})")
        if len(beyond) > shown:
            typer.echo(f"  ... and {len(beyond) - shown} more (see --json)")
    signals = [(g, x) for g in groups for x in g.signals]
    if signals:
        typer.echo("")
        typer.echo(f"  Run-rule signals ({len(signals)}; * counts against consistency):")
        for g, x in signals[:shown]:
            mark = "*" if x["counts"] else " "
            typer.echo(f"  {mark} {g.supplier} / {g.part}: {signal_text(x)}")
        if len(signals) > shown:
            typer.echo(f"  ... and {len(signals) - shown} more (see --json)")


def posterior_from(records_path, supplier, part, plans, prior):
    from lotwise.analysis.supplier import Posterior

    recs = load(records_path, plans, option="--records")
    if supplier is None:
        raise InputError("--supplier is required with --records (the process average is "
                         "a supplier's)")
    df = select(recs, supplier, part)
    x, m = int(df["found"].sum()), int(df["sample_size"].sum())
    return Posterior.from_counts(x, m, prior), len(df)
