"""``lotwise batch``: one design per catalogue row."""

from __future__ import annotations

import sys
from typing import Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError


#: Failed rows listed on screen (the rest are in the output's error column).
SHOWN = 100


@app.command()
def batch(
    path: str = typer.Argument(..., metavar="CATALOGUE", help="CSV (or .xlsx workbook) with part, lot_size, aql, rql (optional alpha, beta, scheme, model, fixed_c, max_n, per_unit, deliveries_per_year; ratio, minimize, truncate, sigma, sigma_value, limit, upper, lower for the other schemes)."),
    out: Optional[str] = typer.Option(None, "--out", "-o", help="Where to write the plans (CSV; a workbook when the name ends in .xlsx), or - for stdout."),
    csv_sep: Optional[str] = common.CSV_SEP,
    decimal_comma: bool = common.DECIMAL_COMMA,
    deliveries: Optional[str] = typer.Option(None, "--deliveries-per-year", help="Lots per year for rows without a deliveries_per_year value."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    audit: bool = typer.Option(False, "--audit", help="Audit a plan table instead: CSV with lot_min, lot_max, n, c, aql (optional rql, label); one verdict per row."),
    max_alpha: str = typer.Option("10%", "--max-alpha", help="With --audit: flag a plan whose alpha at the AQL is above this."),
    max_beta: str = typer.Option("10%", "--max-beta", help="With --audit: flag a plan whose beta at the RQL is above this."),
    as_json: bool = common.JSON,
):
    """Design a plan for every row of a part catalogue.

    The scheme column picks the plan family (single, double, sequential,
    chain, variables), each designed by its own designer. The output holds
    the input columns, then n, c, plan, model_used,
    alpha_actual, beta_actual, full_inspection, units_per_year and error
    (empty when the row was designed). A row that cannot be designed gets its
    reason in error; the batch goes on. Exit 0 when every row is designed, 1
    when a row is not (the output is still written), 2 bad input.
    """
    from lotwise.core.quantities import parse_rate
    from lotwise.data.batch import SAFETY_NOTE, design_catalogue, progress_bar, read_catalogue
    from lotwise.data.files import write_bytes
    from lotwise.data.xlsx import frame_xlsx, is_xlsx

    if audit:
        from .scheme import batch_audit

        raise typer.Exit(batch_audit(path, out, force, as_json, max_alpha, max_beta))
    if out is None:
        raise InputError("--out is required (for example --out plans.csv, or - for stdout)")
    if out == "-" and as_json:
        raise InputError("--out - (the plans on stdout) cannot be combined with --json")
    rate = parse_rate(deliveries, "--deliveries-per-year") if deliveries is not None else None
    style = common.csv_output(csv_sep, decimal_comma, out, "--out")
    common.outputs(force, ("--out", out))
    df = read_catalogue(path, "CATALOGUE")
    if df.attrs.get("note"):
        print(f"lotwise: note: {df.attrs['note']}", file=sys.stderr)
    cb, close = progress_bar(len(df)) if len(df) >= 2000 else (None, lambda: None)
    try:
        res = design_catalogue(df, deliveries_per_year=rate, progress=cb)
    finally:
        close()
    table = res.table
    for col in ("units_per_year",):
        vals = table[col]
        if vals.notna().any() and (vals.dropna() % 1 == 0).all():
            table[col] = vals.round().astype("Int64")
    if out == "-":
        sys.stdout.writelines(res.csv_chunks(table, style))
    elif is_xlsx(out):
        write_bytes(out, frame_xlsx(table, option="--out"), force=force, option="--out")
    else:
        write_bytes(out, (p.encode("utf-8") for p in res.csv_chunks(table, style)), force=force,
                    option="--out")
    failed = res.errors(df["_line"].to_numpy())
    if as_json:
        d = res.summary()
        d.update({"out": out, "errors": failed, "dropped_columns": list(res.dropped_columns)})
        common.emit_json(d)
        raise typer.Exit(1 if res.failed else 0)
    say = (lambda s: print(s, file=sys.stderr)) if out == "-" else typer.echo
    if res.dropped_columns:
        say(f"  note: input column(s) {', '.join(res.dropped_columns)} replaced by the "
            "batch's own")
    say(f"Batch {path}: {res.rows} row(s), {res.designed} designed, {res.failed} not "
        f"designed; {res.distinct} distinct design(s) computed")
    load = f"  inspection load: {res.units_per_lot:,} units for one lot of every designed part"
    say(load)
    if res.units_per_year is not None:
        extra = (f" ({res.rows_without_deliveries} designed row(s) without a delivery rate "
                 "left out)") if res.rows_without_deliveries else ""
        say(f"  per year: {res.units_per_year:,} units{extra}")
    for f in failed[:SHOWN]:  # every failure with its part and reason (up to SHOWN)
        say(f"  - line {f['line']} ({f['part']}): NOT DESIGNED: {f['error']}")
    if len(failed) > SHOWN:
        say(f"  ... and {len(failed) - SHOWN} more (see the error column)")
    if out != "-":
        say(f"  wrote {out}")
    say(f"  {SAFETY_NOTE}")
    raise typer.Exit(1 if res.failed else 0)
