"""Helpers shared by the command modules: reading options, printing results."""

from __future__ import annotations

import math
import sys

import typer

from lotwise.core.quantities import InputError, Infeasible, parse_count, parse_level, parse_risk

# Option declarations reused by several commands (values are parsed by us so
# that every message names the option, the value and what is allowed).
AQL = typer.Option(None, "--aql", help="Acceptable quality level: 0.01, 1%, 1.5 % or 250ppm.")
RQL = typer.Option(None, "--rql", "--ltpd",
                   help="Rejectable quality level (LTPD), written like --aql.")
ALPHA = typer.Option("5%", "--alpha", help="Producer's risk at the AQL.")
BETA = typer.Option("10%", "--beta", help="Consumer's risk at the RQL.")
LOT = typer.Option(None, "--lot-size", "-N", help="Lot size; the default model becomes hypergeometric.")
MODEL = typer.Option(None, "--model",
                     help="hypergeometric, binomial or poisson (default: the exact one).")
PER_UNIT = typer.Option(False, "--per-unit",
                       help="Quality levels are nonconformities per unit (Poisson is exact).")
JSON = typer.Option(False, "--json", help="Print one JSON object on stdout and nothing else.")


def lot_size(text) -> int | None:
    if text is None:
        return None
    return parse_count(text, "--lot-size", minimum=1, maximum=10**12)


def levels(aql, rql, per_unit: bool, need: bool = True):
    if need:
        if aql is None:
            raise InputError("--aql is required (for example --aql 1%)")
        if rql is None:
            raise InputError("--rql is required (for example --rql 8%)")
    a = parse_level(aql, "--aql", per_unit=per_unit) if aql is not None else None
    r = parse_level(rql, "--rql", per_unit=per_unit) if rql is not None else None
    return a, r


def risks(alpha, beta):
    return parse_risk(alpha, "--alpha"), parse_risk(beta, "--beta")


def _clean(obj):
    """JSON-safe copy: numpy scalars to Python, NaN/inf to None."""
    from lotwise.analysis.outputs import json_safe

    return json_safe(obj)


def emit_json(obj: dict) -> None:
    """Print ``obj`` as indented JSON, written in pieces (a batch of a million
    rows may list a hundred thousand errors: the text is never held whole)."""
    from lotwise.analysis.outputs import json_pieces

    pieces: list = []
    for piece in json_pieces(_clean(obj)):
        pieces.append(piece)
        if len(pieces) >= 4096:
            sys.stdout.write("".join(pieces))
            pieces.clear()
    sys.stdout.write("".join(pieces) + "\n")


def fail(message: str, code: int = 1, payload: dict | None = None, as_json: bool = False):
    """Report a failure in one stderr line (and a JSON object when asked)."""
    if as_json and payload is not None:
        emit_json(payload)
    print(f"lotwise: {message}", file=sys.stderr)
    raise typer.Exit(code)


def infeasible(exc: Infeasible, as_json: bool, base: dict | None = None):
    payload = dict(base or {})
    payload.update({"feasible": False, "reason": str(exc), "reachable": exc.reachable})
    fail(f"no plan: {exc}", 1, payload, as_json)


def table(rows, header, indent: str = "  ") -> str:
    """A compact text table (imported lazily: ``report`` loads scipy)."""
    from lotwise.analysis.report import table as _table

    return _table(rows, header, indent)


def csv_cell(v) -> str:
    """A number as CSV text: whole numbers plainly, floats to full precision."""
    from lotwise.analysis.outputs import csv_cell as cell

    return cell(v)


def outputs(force: bool, *targets) -> None:
    """Check every output path of a command before any work and any write.

    Each target is ``(option, path)`` or ``(option, path, "figure")``; see
    :func:`lotwise.data.files.check_outputs` (None and ``-`` are skipped).
    """
    if all(t[1] is None or str(t[1]) == "-" for t in targets):
        return  # nothing to check (without importing the module)
    from lotwise.data.files import check_outputs

    check_outputs(*targets, force=force)


def plot_path(plot, force: bool, option: str = "--plot"):
    """``plot`` checked as a figure file name (.png, .svg or .pdf) that may be written."""
    outputs(force, (option, plot, "figure"))
    return plot


CSV_SEP = typer.Option(None, "--csv-sep", help="Field separator of CSV output: , ; or tab (default: a comma; a semicolon with --decimal-comma).")
DECIMAL_COMMA = typer.Option(False, "--decimal-comma", help="Write the numbers of CSV output with a decimal comma (0,0912), for spreadsheets set that way; fields are then separated by ; unless --csv-sep says otherwise.")


def csv_output(sep, decimal_comma: bool, dest, option: str = "--csv"):
    """The :class:`~lotwise.data.tables.CsvStyle` of ``--csv-sep`` and
    ``--decimal-comma`` for the output ``dest`` (refused for an ``.xlsx``)."""
    from lotwise.data.tables import check_destination, csv_style

    style = csv_style(sep, decimal_comma)
    check_destination(dest, style, option)
    return style


def write_csv(dest: str, header, rows, *, force: bool, cell=csv_cell, style=None) -> None:
    """Table to ``dest`` (a path, written safely, or ``-`` for stdout): a
    workbook when the name ends in ``.xlsx``, CSV in ``style`` otherwise."""
    from lotwise.data.xlsx import is_xlsx

    if (style is None or style.plain) and not is_xlsx(dest):
        from lotwise.analysis.outputs import csv_text

        text = csv_text(header, rows, cell)
        if dest == "-":
            typer.echo(text, nl=False)
        else:
            from lotwise.data.files import write_text

            write_text(dest, text, force=force, option="--csv")
        return
    from lotwise.data.tables import write_rows

    text = write_rows(dest, header, rows, style=style, force=force, option="--csv", cell=cell)
    if text is not None:
        typer.echo(text, nl=False)


# --- shared by the design/check/oc commands of every plan family -------------------

def scope_and_model(lot, per_unit, model):
    """The :class:`~lotwise.core.types.Scope` of ``--lot-size``/``--per-unit`` and
    the ``--model`` checked against it (default: the exact one)."""
    from lotwise.core.types import Scope

    scope = Scope(lot_size=lot_size(lot), per_unit=per_unit)
    return scope, scope.check_model(model)


def plan_from(plan_text, n, c, *, required=True):
    """The plan of ``--plan`` (any family's notation) or of ``--n``/``--c``;
    None when neither is given and ``required`` is False."""
    from lotwise.families.single import SinglePlan
    from lotwise.families.base import parse_plan

    if plan_text is not None:
        if n is not None or c is not None:
            raise InputError("--plan cannot be combined with --n/--c; give one or the other")
        return parse_plan(plan_text)
    if n is None and c is None and not required:
        return None
    if n is None or c is None:
        raise InputError("give the plan as --n and --c (for example --n 80 --c 2) "
                         "or as --plan \"n=80,c=2\"")
    nn = parse_count(n, "--n", minimum=1)
    cc = parse_count(c, "--c", minimum=0)
    return SinglePlan(n=nn, c=cc)  # c <= n is checked with the scope (items, not per unit)


def levels_out_of_order(a, r, per_unit, as_json):
    """Fail (exit 1) because the RQL is not above the AQL."""
    from lotwise.core.quantities import format_level

    fail(f"the RQL ({format_level(r, per_unit)}) must be above the AQL "
         f"({format_level(a, per_unit)})", 1,
         {"feasible": False, "reason": "rql must be above aql"}, as_json)


def level_grid(p, scope, mdl, max_p, points, at, rql):
    """Quality levels of an OC table (see :func:`lotwise.analysis.outputs.attribute_grid`)."""
    from lotwise.analysis.outputs import attribute_grid

    return attribute_grid(p, scope, mdl, max_p=max_p, points=points, at=at, rql=rql)


def nice(x: float) -> float:
    """Round up to 1, 2, 2.5 or 5 times a power of ten (see :func:`lotwise.analysis.outputs.nice`)."""
    from lotwise.analysis.outputs import nice as _nice

    return _nice(x)


def fmt_level(x: float, per_unit: bool) -> str:
    """A quality level in an OC table: per unit, or a percentage."""
    from lotwise.core.numbers import level, significant

    return significant(x, 6) if per_unit else level(x)


# --- imperfect inspection (design, check, oc, compare) -------------------------------

MISS_RATE = typer.Option(None, "--miss-rate", help="Share of nonconforming items the inspection passes as conforming (0.1 or 10%); figures are then at the true quality.")
FALSE_ALARM = typer.Option(None, "--false-alarm", help="Share of conforming items the inspection flags as nonconforming.")
STUDY = typer.Option(None, "--study", help='The two rates from an agreement study, e.g. "missed 4 of 50 nonconforming; flagged 2 of 50 conforming" (risks also shown at the 95 % upper bounds).')


def error_rates(miss_rate, false_alarm, study):
    """The :class:`~lotwise.core.inspection.ErrorRates` of ``--miss-rate``,
    ``--false-alarm`` or ``--study``; None when none is given."""
    if miss_rate is None and false_alarm is None and study is None:
        return None  # (without importing the module: most commands give none)
    from lotwise.core.inspection import read_rates

    return read_rates(miss_rate, false_alarm, study)


def with_errors(plan, rates, scope):
    """``plan`` (already fitted to ``scope``) judged under ``rates`` (unchanged without)."""
    if rates is None:
        return plan
    from lotwise.families.misclassified import wrap

    return wrap(plan, rates).for_scope(scope)


def add_rates(rep: dict, rates) -> dict:
    """``inspection_error`` in a report whose plan was not wrapped (both rates zero)."""
    if rates is not None and "inspection_error" not in rep:
        rep["inspection_error"] = rates.as_dict()
    return rep


# --- a gauge's error in variables plans (design, check, oc) ----------------------------

MEASUREMENT_SD = typer.Option(None, "--measurement-sd", help="variables: the gauge's standard deviation (units of the limits); figures are then at the true fraction nonconforming.")
SIGMA_IS = typer.Option(None, "--sigma-is", help="variables, sigma known, with --measurement-sd: process (the plan's sigma is the process's own) or observed (the spread of measured values, gauge included).")
PROCESS_SD = typer.Option(None, "--process-sd", help="variables, sigma unknown, with --measurement-sd: the process sigma the true-quality figures are stated at.")


def gauge_args(measurement_sd, sigma_is, process_sd) -> dict | None:
    """``--measurement-sd``, ``--sigma-is`` and ``--process-sd`` read (None without
    ``--measurement-sd``; the other two alone are refused)."""
    def number(text, option):
        if text is None:
            return None
        try:
            v = float(str(text).strip())
        except ValueError:
            raise InputError(f"{option} ({text!r}) must be a number such as 0.02") from None
        if not math.isfinite(v):
            raise InputError(f"{option} ({text!r}) must be a finite number")
        return v

    if measurement_sd is None:
        for opt, val in (("--sigma-is", sigma_is), ("--process-sd", process_sd)):
            if val is not None:
                raise InputError(f"{opt} ({val}) applies with --measurement-sd")
        return None
    sm = number(measurement_sd, "--measurement-sd")
    if not sm >= 0:
        raise InputError(f"--measurement-sd ({measurement_sd}) must be a number of at least 0 "
                         "(the gauge's standard deviation, in the units of the limits)")
    si = sigma_is.strip().lower() if sigma_is is not None else None
    return {"measurement_sd": sm, "sigma_is": si,
            "process_sd": number(process_sd, "--process-sd")}


def with_gauge(plan, gauge: dict | None):
    """A variables ``plan`` judged through the gauge of :func:`gauge_args` (unchanged
    without one, or with a zero standard deviation once the options are checked)."""
    if gauge is None:
        return plan
    if plan.evaluation != "process":
        raise InputError(f"--measurement-sd ({gauge['measurement_sd']:g}) applies to variables "
                         "plans; an attribute inspection that misjudges items is "
                         "--miss-rate/--false-alarm")
    from lotwise.families.measured import gauge_for, measured

    return measured(plan, gauge_for(plan, gauge["measurement_sd"], sigma_is=gauge["sigma_is"],
                                    process_sd=gauge["process_sd"]))
