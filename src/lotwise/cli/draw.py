"""``lotwise draw``: which units to pull, as a seeded pick list."""

from __future__ import annotations

import shlex
from typing import Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError, parse_count

CAUTION = ("Pull exactly these units: swapping one for a unit that is easier to reach\n"
           "undoes the random selection the plan's risks rely on.")


def rows_of(numbers, per_row: int = 10, indent: str = "  ") -> str:
    """Numbers right-aligned in rows of ``per_row``."""
    numbers = list(numbers)
    if not numbers:
        return indent + "(none)"
    w = max(len(str(v)) for v in numbers)
    return "\n".join(indent + " ".join(str(v).rjust(w) for v in numbers[i:i + per_row])
                     for i in range(0, len(numbers), per_row))


def recreate_command(d) -> str:
    """The command line that re-creates the pick list ``d``."""
    args = ["lotwise", "draw", "--lot-size", str(d.lot_size), "--n", str(d.n),
            "--seed", str(d.seed)]
    if d.strata_spec is not None:
        args += ["--strata", d.strata_spec]
    return " ".join(shlex.quote(a) for a in args)


def render_draw(d) -> str:
    """The pick list as the terminal shows it."""
    lines = []
    if d.strata is None:
        lines.append(f"Pick list: {d.n:,} of {d.lot_size:,} units, simple random without "
                     "replacement")
    else:
        lines.append(f"Pick list: {d.n:,} of {d.lot_size:,} units, stratified across "
                     f"{len(d.strata):,} strata in proportion to their size")
    lines.append(f"Seed: {d.seed} (numpy {d.numpy_version}, PCG64 Generator)")
    if d.strata is not None:
        by = {}
        for p in d.picks:
            by.setdefault(p.stratum, []).append(p.position)
        rows = [[s.label, f"{s.first_unit:,}-{s.last_unit:,}", f"{s.size:,}", str(s.allocated),
                 " ".join(map(str, by[s.label]))]
                for s in d.strata if s.allocated > 0]
        lines.append("")
        lines.append(common.table(rows, ["stratum", "units", "size", "pull",
                                         "positions within the stratum"]))
        empty = sum(1 for s in d.strata if s.allocated == 0)
        if empty:
            lines.append(f"  {empty:,} of {len(d.strata):,} strata get no unit this time (quota "
                         "below one); which ones is decided\n  by the seed. With fewer units to "
                         "pull than strata, consider fewer, larger strata\n  or a simple random "
                         "draw.")
    lines.append("")
    lines.append("Unit numbers in the lot:" if d.strata is not None else "Unit numbers:")
    lines.append(rows_of(d.units))
    lines.append("")
    lines.append(f"Re-create this list with: {recreate_command(d)}")
    lines.append(CAUTION)
    return "\n".join(lines)


def _from_plan(text, lot, n, seed, strata):
    """``--lot-size``, ``--n``, ``--seed`` and ``--strata`` from ``--plan``: the
    plan's largest sample; from a plan file also its lot size, the seed of its
    sheet's pick list and its strata (each unless given on the command line)."""
    from lotwise.documents.partplan import plan_from_reference

    if n is not None:
        raise InputError(f"--n ({n}) cannot be combined with --plan; the plan gives the number "
                         "of units")
    ref = plan_from_reference(text)
    if lot is None and ref.lot_size is None:
        where = "the plan file gives no lot.size" if ref.path else "plan notation has none"
        raise InputError(f"--lot-size is required with --plan ({text}): {where}")
    lot = lot if lot is not None else str(ref.lot_size)
    seed = seed if seed is not None else (None if ref.seed is None else str(ref.seed))
    strata = strata if strata is not None else ref.strata
    return lot, str(ref.plan.max_sample), seed, strata


@app.command()
def draw(
    lot: Optional[str] = typer.Option(None, "--lot-size", "-N",
                                      help="Units in the lot, numbered 1 to N."),
    n: Optional[str] = typer.Option(None, "--n", help="Units to pull."),
    seed: Optional[str] = typer.Option(
        None, "--seed", help="Whole number 0 to 2**128-1; omitted: a fresh seed of at most 10 digits, recorded."),
    strata: Optional[str] = typer.Option(
        None, "--strata",
        help='"cartons=40" (40 equal consecutive strata) or "cartons=120,120,80" (sizes).'),
    csv: Optional[str] = typer.Option(
        None, "--csv", help="Write the pick list as CSV to PATH (a workbook when PATH ends in .xlsx), or - for stdout."),
    csv_sep: Optional[str] = common.CSV_SEP,
    decimal_comma: bool = common.DECIMAL_COMMA,
    plan: Optional[str] = typer.Option(
        None, "--plan", help='Pull the most units this plan may inspect: notation ("n=80,c=2", '
                             'with --lot-size) or plans/part.toml#M1 (lot size, seed and strata '
                             'from the file unless given).'),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """Which units to pull: a reproducible random pick list, seed recorded."""
    from lotwise.data.draw import MAX_LOT, MAX_N, draw_units

    if plan is not None:
        lot, n, seed, strata = _from_plan(plan, lot, n, seed, strata)
    if lot is None:
        raise InputError("--lot-size is required (for example --lot-size 1000)")
    if n is None:
        raise InputError("--n is required (for example --n 80)")
    N = parse_count(lot, "--lot-size", minimum=1, maximum=MAX_LOT)
    nn = parse_count(n, "--n", minimum=1)
    if nn > N:
        raise InputError(f"--n ({nn}) must not be greater than --lot-size ({N})")
    if nn > MAX_N:
        raise InputError(f"--n ({nn}) must be at most {MAX_N:,} (a pick list is pulled by hand)")
    if csv == "-" and as_json:
        raise InputError("--csv (-) cannot be combined with --json: both would write to "
                         "stdout; give --csv a file name")
    style = common.csv_output(csv_sep, decimal_comma, csv)
    common.outputs(force, ("--csv", csv))  # refuse before drawing
    d = draw_units(lot_size=N, n=nn, seed=seed, strata=strata)
    if csv is not None:
        from lotwise.data.tables import write_rows

        header, rows = d.table()
        text = write_rows(csv, header, rows, style=style, force=force, option="--csv", cell=str)
        if text is not None:
            typer.echo(text, nl=False)
    if as_json:
        common.emit_json(d.as_dict())
    elif csv != "-":
        typer.echo(render_draw(d))
        if csv:
            typer.echo(f"  wrote {csv}")
