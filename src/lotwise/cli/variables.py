"""Command-line glue for variables plans: ``lotwise design --scheme variables``,
``check``/``oc`` of a variables plan (dispatched from :mod:`lotwise.cli.single`)
and ``lotwise judge`` (the verdict for a measured sample).

Measurements file (``lotwise judge ... FILE``): plain text or CSV with one
column of numbers, one per line, decimal point ``.``; an optional header on
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
from typing import Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError, Infeasible

from lotwise.analysis.judge import NORMALITY_LEVEL, judge_sample, normality  # noqa: F401

_MISSING = {"", "na", "n/a", "nan", "null", "none", "-", "?"}


def number(text, option: str) -> float | None:
    """A finite real number such as ``25.4`` or ``-1e-3``, or None."""
    if text is None:
        return None
    try:
        v = float(str(text).strip())
    except ValueError:
        raise InputError(f"{option} ({text!r}) must be a number such as 25.4") from None
    if not math.isfinite(v):
        raise InputError(f"{option} ({text!r}) must be a finite number")
    return v


# --- design --------------------------------------------------------------------

def design_cmd(*, aql, rql, alpha, beta, sigma, sigma_value, limit, lower, upper, max_n,
               lot, model, defects, c, n, as_json):
    """``lotwise design --scheme variables``."""
    from lotwise.families.variables import design_variables
    from lotwise.core.quantities import parse_count

    for opt, val in (("--model", model), ("--c", c), ("--n", n)):
        if val is not None:
            raise InputError(f"{opt} ({val}) does not apply to --scheme variables")
    if defects:
        raise InputError("--defects does not apply to --scheme variables: a variables plan "
                         "judges a fraction nonconforming from measurements")
    if sigma is None:
        raise InputError("--sigma is required with --scheme variables: known or unknown")
    sigma = sigma.strip().lower()
    if sigma not in ("known", "unknown"):
        raise InputError(f"--sigma ({sigma}) must be 'known' or 'unknown'")
    limit = (limit or "").strip().lower() or None
    lo, up = number(lower, "--lower"), number(upper, "--upper")
    if limit is None:
        limit = "both" if (lo is not None and up is not None) else (
            "lower" if lo is not None else "upper")
    if limit not in ("upper", "lower", "both"):
        raise InputError(f"--limit ({limit}) must be one of: upper, lower, both")
    sv = number(sigma_value, "--sigma-value")
    if sv is not None and not sv > 0:
        raise InputError(f"--sigma-value ({sigma_value}) must be a positive number")
    if lo is not None and up is not None and not lo < up:
        raise InputError(f"--lower ({lo:g}) must be below --upper ({up:g})")
    a, r = common.levels(aql, rql, False)
    al, be = common.risks(alpha, beta)
    cap = parse_count(max_n, "--max-n", minimum=1) if max_n is not None else None
    nlot = common.lot_size(lot)
    base = {"scheme": "variables", "sigma": sigma, "limit": limit,
            "targets": {"aql": a, "alpha": al, "rql": r, "beta": be}}
    try:
        d = design_variables(aql=a, rql=r, alpha=al, beta=be, sigma=sigma, limit=limit,
                             sigma_value=sv, lower=lo, upper=up, max_n=cap)
    except Infeasible as exc:
        common.infeasible(exc, as_json, base)
    from lotwise.analysis.assess import assess
    from lotwise.core.types import Scope

    rep = assess(d.plan, d.targets, Scope(lot_size=nlot), design=d).to_json()
    if nlot is not None and d.n >= nlot:
        rep["full_inspection"] = True
        rep["statements"].insert(0, f"The sample ({d.n}) is not smaller than the lot of {nlot}: "
                                    "measure every item.")
    if as_json:
        common.emit_json(rep)
    else:
        typer.echo(render_design(rep))


def _pct(x):
    from lotwise.core.quantities import format_pct

    return format_pct(x)


def render_design(rep: dict) -> str:
    from lotwise.core.quantities import format_level

    t = rep["targets"]
    lines = [f"Variables plan, {rep['method']} (smallest sample meeting both risks)"]
    kr = rep["k_range"]
    plan = f"  plan      n = {rep['n']}, k = {rep['k']:g}"
    if rep.get("m") is not None:
        plan += f", M = {rep['m']:.5f} (maximum estimated fraction nonconforming)"
    lines.append(plan)
    lines.append(f"  notation  {rep['notation']}")
    lines.append(f"  targets   AQL {format_level(t['aql'])} at alpha {_pct(t['alpha'])}, "
                 f"RQL {format_level(t['rql'])} at beta {_pct(t['beta'])}")
    rows = [["exact plan", str(rep["n"]), f"{rep['k']:.4f}", f"{rep['pa_aql']:.5f}",
             _pct(rep["alpha"]), f"{rep['pa_rql']:.5f}", _pct(rep["beta"]),
             "yes" if rep["meets"] else "NO"]]
    ap = rep["approximation"]
    if rep["sigma"] == "unknown":
        rows.append(["Wallis", str(ap["n"]), f"{ap['k']:.4f}", f"{1 - ap['alpha']:.5f}",
                     _pct(ap["alpha"]), f"{ap['beta']:.5f}", _pct(ap["beta"]),
                     "yes" if ap["meets"] else "NO"])
    else:
        rows.append(["closed form", f"{ap['n']} ({ap['n_unrounded']:.2f})", f"{ap['k']:.4f}",
                     "", "", "", "", ""])
    if rep.get("attributes"):
        at = rep["attributes"]
        rows.append([f"attributes c = {at['c']}", str(at["n"]), "", "", "", "", "", "binomial"])
    lines.append("")
    lines.append(common.table(rows, ["", "n", "k", "Pa(AQL)", "alpha", "Pa(RQL)", "beta",
                                     "meets"]))
    lines.append(f"  k window at n = {rep['n']}: {kr['low']:.5f} .. {kr['high']:.5f} "
                 f"(slack {kr['slack']:.5f}; k = {rep['k']:g} is the {kr['rule']}, "
                 f"kept to {kr['decimals']} decimals)")
    if rep.get("saved"):
        s = rep["saved"]
        lines.append(f"  sample saved against attributes: {s['n']} units ({_pct(s['fraction'])})")
    lines.append("")
    for s in rep["statements"]:
        lines.append(f"  - {s}")
    return "\n".join(lines)


# --- check and oc of a given plan -------------------------------------------------

def _risks(plan, a, r):
    """Exact Pa at the AQL and RQL, the worst case for two-limit plans."""
    return float(plan.pa(a, envelope="lower")), float(plan.pa(r, envelope="upper"))


def oc_cmd(plan, *, max_p, points, at, aql, rql, csv, plot, force, as_json):
    """``lotwise oc --plan "variables: ..."``: the exact OC table (and plot)."""
    import numpy as np

    if plot is not None and not plot.lower().endswith((".png", ".svg", ".pdf")):
        raise InputError(f"--plot ({plot}) must end in .png, .svg or .pdf")
    a, r = common.levels(aql, rql, False, need=False)
    from lotwise.analysis.outputs import variables_oc

    out = variables_oc(plan, max_p=max_p, points=points, at=at, rql=r)
    header, rows = out["columns"], out["rows"]
    ps = np.array([row[0] for row in rows])
    band = "pa_lower" in header
    if csv is not None:
        common.write_csv(csv, header, rows, force=force)
    if plot is not None:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.variables import variables_oc_figure

        fig = variables_oc_figure(plan, aql=a, rql=r, max_p=float(ps.max()) if len(ps) else None)
        save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        common.emit_json(out)
    elif csv != "-":
        typer.echo(f"OC table for variables plan {plan.label} (model: {plan.exact_model})")
        if band:
            typer.echo("  pa = largest Pa over where the mean sits (consumer's worst case), "
                       "pa_lower = smallest (producer's)")
        if plan.exact_model == "estimate-exact":
            typer.echo("  exact: quadrature over the law of s at the worst split of each level")
        shown = [[f"{100 * row[0]:.4g} %"] + [f"{v:.5f}" for v in row[1:]] for row in rows]
        typer.echo(common.table(shown, header))
        for path in (csv, plot):
            if path:
                typer.echo(f"  wrote {path}")


# --- judge -----------------------------------------------------------------------

def read_measurements(path: str) -> list[float]:
    """Numbers from a one-column file (see the module notes); refuses a bad
    row naming it."""
    try:
        with open(path, encoding="utf-8-sig") as fh:
            text = fh.read()
    except FileNotFoundError:
        raise InputError(f"measurements ({path}) does not exist") from None
    except IsADirectoryError:
        raise InputError(f"measurements ({path}) is a folder; give a file") from None
    except UnicodeDecodeError:
        raise InputError(f"measurements ({path}) is not a text file (UTF-8)") from None
    except OSError as exc:
        raise InputError(f"measurements ({path}) cannot be read: {exc.strerror}") from None
    lines = text.splitlines()
    while lines and not lines[-1].strip():
        lines.pop()
    out: list[float] = []
    for i, raw in enumerate(lines, start=1):
        cell = raw.strip()
        fields = [f.strip() for f in cell.replace(";", ",").replace("\t", ",").split(",")]
        if len(fields) > 1:
            if all(f == "" for f in fields[1:]):
                fields = fields[:1]  # a trailing separator
            else:
                raise InputError(f"measurements ({path}) row {i} ({raw.strip()!r}) holds "
                                 f"{len(fields)} fields; the file must be one column of numbers")
        cell = fields[0].strip().strip('"').strip("'").strip()
        if cell.lower() in _MISSING:
            raise InputError(f"measurements ({path}) row {i} is a missing value "
                             f"({raw.strip()!r}); every measurement must be there")
        try:
            v = float(cell)
        except ValueError:
            if i == 1 and not out:
                continue  # header
            raise InputError(f"measurements ({path}) row {i} ({cell!r}) is not a number") \
                from None
        if not math.isfinite(v):
            raise InputError(f"measurements ({path}) row {i} ({cell!r}) is not a finite number")
        out.append(v)
    if not out:
        raise InputError(f"measurements ({path}) holds no numbers")
    return out


def parse_values(text: str) -> list[float]:
    """``--values 1.2,1.3,...`` (commas or spaces between values)."""
    items = [s.strip() for s in str(text).replace(";", ",").split(",")]
    if len(items) == 1:
        items = str(text).split()
    out = []
    for i, item in enumerate(items, start=1):
        if item.lower() in _MISSING:
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
        xs, source = read_measurements(measurements), measurements
    if len(xs) != p.n:
        where = "--values" if values is not None else f"measurements ({measurements})"
        raise InputError(f"{where} holds {len(xs)} values; the plan needs n = {p.n}")
    if p.sigma == "unknown" and len(set(xs)) == 1:
        raise InputError(f"{source}: all {len(xs)} values are equal ({xs[0]:g}), so s = 0 and "
                         "the plan cannot judge the sample; check the gauge's resolution")
    rep = judge_sample(p, xs)
    rep["source"] = source
    if plot is not None:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.variables import normal_probability_figure

        nm = rep["normality"]
        note = None if nm["w"] is None else (f"Shapiro-Wilk W = {nm['w']:.3f}, p = "
                                              f"{nm['p_value']:.3f}")
        fig = normal_probability_figure(xs, lower=p.lower, upper=p.upper, note=note,
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
             f"  std dev   s = {rep['s']:.6g}" + (f"; judged with the known sigma = "
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


def design_options(*, aql, rql, alpha, beta, sigma, sigma_value, limit, lower, upper, max_n,
                   lot, model, defects, c, n, as_json, **_others):
    """:func:`design_cmd` called with every design option."""
    return design_cmd(aql=aql, rql=rql, alpha=alpha, beta=beta, sigma=sigma,
                      sigma_value=sigma_value, limit=limit, lower=lower, upper=upper,
                      max_n=max_n, lot=lot, model=model, defects=defects, c=c, n=n,
                      as_json=as_json)
