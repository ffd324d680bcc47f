"""``lotwise judge``: sentence one lot of a variables plan from its measurements.

Measurements file (``lotwise judge ... FILE``): plain text or CSV with one
column of numbers, one per line, decimal point ``.`` (or a decimal comma ``,``
throughout, see :func:`lotwise.data.csvio.measurement_file`); an optional header on
the first line (any text that is not a number); blank lines at the end are
ignored. Rows are counted as lines of the file, the header being row 1. A
blank line or ``NA``/``nan`` before the end is a missing value and is
refused, as is any row that is not a number or holds more than one field.

Examples
--------
Receiving inspection of shafts (upper limit 25.00 mm, sigma not known)
designs the plan once and judges each lot's 42 measurements with it::

    $ lotwise design --scheme variables --sigma unknown --upper 25.00 --aql 1% --rql 6%
    $ lotwise judge --plan "variables: n=42,k=1.901,upper=25.0" shafts.csv --plot shafts.png

``judge`` exits 0 when the lot is accepted, 1 when it is rejected and 2 on
malformed input (one line on stderr naming the file row or the option).
"""

from __future__ import annotations

import math
import sys
from typing import Optional

import typer

from . import app, common
from lotwise.analysis.judge import judge_sample
from lotwise.data.csvio import MISSING
from lotwise.core.quantities import InputError, format_pct

def _pct(x):
    return format_pct(x)


def parse_values(text: str) -> list[float]:
    """``--values 1.2,1.3,...`` (commas or spaces between values)."""
    items = [s.strip() for s in str(text).replace(";", ",").split(",")]
    if len(items) == 1:
        items = str(text).split()
    out = []
    for i, item in enumerate(items, start=1):
        if item.lower() in MISSING:
            raise InputError(f"--values value {i} is missing ({text!r}); every measurement "
                             "must be there")
        try:
            v = float(item)
        except ValueError:
            raise InputError(f"--values value {i} ({item!r}) is not a number") from None
        if not math.isfinite(v):
            raise InputError(f"--values value {i} ({item!r}) is not a finite number")
        out.append(v)
    return out


@app.command()
def judge(
    measurements: Optional[str] = typer.Argument(
        None, help="File of measurements: one column of numbers, optional header."),
    plan: Optional[str] = typer.Option(
        None, "--plan", help='Variables plan, e.g. "variables: n=42,k=1.901,upper=25.0" '
                             '(lower=, both limits, sigma= for a known sigma), or a plan '
                             'file\'s characteristic, plans/part.toml#M1.'),
    values: Optional[str] = typer.Option(None, "--values",
                                         help="Measurements on the command line: 1.2,1.3,..."),
    plot: Optional[str] = typer.Option(None, "--plot",
                                       help="Draw a normal probability plot to PATH.png."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """Judge a measured sample with a variables plan: accept (exit 0) or reject (exit 1)."""
    from lotwise.documents.partplan import plan_from_reference

    if plan is None:
        raise InputError('--plan is required, e.g. --plan "variables: n=42,k=1.901,upper=25.0"')
    p = plan_from_reference(plan).plan
    if p.evaluation != "process":
        raise InputError(f"--plan ({plan!r}) must be a variables plan, e.g. "
                         "\"variables: n=42,k=1.901,upper=25.0\"")
    for side in ("upper", "lower"):
        if p.limit in (side, "both") and getattr(p, side) is None:
            raise InputError(f"--plan ({plan!r}) lacks {side}=...: judging a sample needs the "
                             "specification limit's value")
    if p.sigma == "known" and p.sigma_value is None:
        raise InputError(f"--plan ({plan!r}) lacks sigma=...: a known-sigma plan needs the "
                         "value of sigma to judge a sample")
    if plot is not None and not plot.lower().endswith(".png"):
        raise InputError(f"--plot ({plot}) must end in .png")
    if (measurements is None) == (values is None):
        raise InputError("give the measurements either as a FILE or as --values 1.2,1.3,... "
                         "(one of them)")
    if values is not None:
        xs, source = parse_values(values), "--values"
    else:
        from lotwise.data.csvio import measurement_file

        xs, note = measurement_file(measurements)
        source = measurements
        if note:
            print(f"lotwise: note: {note}", file=sys.stderr)
    if len(xs) != p.n:
        where = "--values" if values is not None else f"measurements ({measurements})"
        raise InputError(f"{where} holds {len(xs)} values; the plan needs n = {p.n}")
    if p.sigma == "unknown" and len(set(xs)) == 1:
        raise InputError(f"{source}: all {len(xs)} values are equal ({xs[0]:g}), so s = 0 and "
                         "the plan cannot judge the sample; check the gauge's resolution")
    rep = judge_sample(p, xs, source if values is not None else f"measurements ({source})")
    rep["source"] = source
    if plot is not None:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.variables import normal_probability_figure

        nm = rep["normality"]
        note = None if nm["w"] is None else (f"Shapiro-Wilk W = {nm['w']:.3f}, p = "
                                              f"{nm['p_value']:.3f}")
        fig = normal_probability_figure(xs, lower=p.lower, upper=p.upper, note=note,
                                        mean=rep["xbar"], sd=rep["s"] or 0.0,
                                        title=f"Normal probability plot, {len(xs)} measurements")
        save_figure(fig, plot, force=force, option="--plot")
        rep["plot"] = plot
    if as_json:
        common.emit_json(rep)
    else:
        typer.echo(render_judge(rep, p))
    raise typer.Exit(0 if rep["accept"] else 1)


def render_judge(rep: dict, plan) -> str:
    from lotwise.families.variables import SAFETY

    verdict = "ACCEPT" if rep["accept"] else "REJECT"
    lines = [f"Verdict: {verdict} the lot  (plan {plan.label}; {plan.method})",
             f"  sample    n = {rep['n']} from {rep['source']}",
             f"  mean      xbar = {rep['xbar']:.6g}",
             "  std dev   s = " + ("- (one value)" if rep["s"] is None else f"{rep['s']:.6g}") + (f"; judged with the known sigma = "
                                                 f"{plan.sigma_value:g}" if plan.sigma == "known"
                                                 else "")]
    st = rep["statistic"]
    for side, qv in st["q"].items():
        lim = plan.upper if side == "upper" else plan.lower
        dev = "sigma" if plan.sigma == "known" else "s"
        expr = (f"({lim:g} - xbar)/{dev}" if side == "upper" else f"(xbar - {lim:g})/{dev}")
        tail = ""
        if "k" in st:
            tail = f"  {'>=' if qv >= st['k'] else '<'} k = {st['k']:g}"
        lines.append(f"  {side:<9} {expr} = {qv:.4f}{tail}")
    ph = rep["p_hat"]
    if "estimate_total" in st:
        lines.append(f"  estimate  p_hat = {st['estimate_total']:.5f} "
                     f"{'<=' if rep['accept'] else '>'} M = {st['m']:.5f}")
    if ph["total"] is not None:
        parts = ", ".join(f"{k} {_pct(v)}" for k, v in ph["by_limit"].items())
        lines.append(f"  estimated fraction nonconforming {_pct(ph['total'])}"
                     + (f" ({parts})" if len(ph["by_limit"]) > 1 else "")
                     + " (minimum-variance unbiased estimate)")
    else:
        lines.append("  estimated fraction nonconforming: needs at least 3 values with s")
    nm = rep["normality"]
    lines.append("  normality " + (nm.get("warning") and "WARNING: " + nm["warning"]
                                   or nm.get("note", "")))
    if rep.get("plot"):
        lines.append(f"  wrote {rep['plot']}")
    lines.append(f"  - {SAFETY}")
    return "\n".join(lines)
