"""Helpers shared by the command modules: reading options, printing results."""

from __future__ import annotations

import json
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
DEFECTS = typer.Option(False, "--defects",
                       help="Quality levels are nonconformities per unit (Poisson is exact).")
JSON = typer.Option(False, "--json", help="Print one JSON object on stdout and nothing else.")


def lot_size(text) -> int | None:
    if text is None:
        return None
    return parse_count(text, "--lot-size", minimum=1, maximum=10**12)


def levels(aql, rql, defects: bool, need: bool = True):
    if need:
        if aql is None:
            raise InputError("--aql is required (for example --aql 1%)")
        if rql is None:
            raise InputError("--rql is required (for example --rql 8%)")
    a = parse_level(aql, "--aql", per_unit=defects) if aql is not None else None
    r = parse_level(rql, "--rql", per_unit=defects) if rql is not None else None
    return a, r


def risks(alpha, beta):
    return parse_risk(alpha, "--alpha"), parse_risk(beta, "--beta")


def _clean(obj):
    """JSON-safe copy: numpy scalars to Python, NaN/inf to None."""
    from lotwise.analysis.outputs import json_safe

    return json_safe(obj)


def emit_json(obj: dict) -> None:
    sys.stdout.write(json.dumps(_clean(obj), indent=2) + "\n")


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


def write_csv(dest: str, header, rows, *, force: bool, cell=csv_cell) -> None:
    """Table to ``dest`` (a path, written safely, or ``-`` for stdout)."""
    from lotwise.analysis.outputs import csv_text

    text = csv_text(header, rows, cell)
    if dest == "-":
        typer.echo(text, nl=False)
    else:
        from lotwise.data.files import write_text

        write_text(dest, text, force=force, option="--csv")
