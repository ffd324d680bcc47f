"""A CSV of a user's plan table, audited row by row (``lotwise batch --audit``).

Columns (names matched without regard to case; spaces and hyphens count as
``_``): ``lot_min``, ``lot_max``, ``n``, ``c``, ``aql`` (required), ``rql``
and ``label`` (optional). Each row is one single plan for lots of
``lot_min`` to ``lot_max`` items; the audit is
:func:`lotwise.analysis.table_audit.audit_row`. A row that cannot be read
gets its reason and the verdict ``error``; the others are still audited.

Examples
--------
>>> import io
>>> rows = read_audit_csv(io.StringIO("lot_min,lot_max,n,c,aql\\n501,1200,80,2,1%\\n"))
>>> rows[0]["row"].plans["normal"].notation(), rows[0]["error"]
('n=80,c=2', '')
"""

from __future__ import annotations

from lotwise.core.numbers import csv_number
from lotwise.core.quantities import InputError, parse_count, parse_level

__all__ = ["AUDIT_REQUIRED", "AUDIT_COLUMNS", "read_audit_csv", "audit_csv_text"]

AUDIT_REQUIRED = ("lot_min", "lot_max", "n", "c", "aql")

#: Columns the audit adds, in order (``*`` is ``lot_min`` and ``lot_max``).
AUDIT_COLUMNS = ("plan", "model", "alpha_at_lot_min", "alpha_at_lot_max", "ltpd_at_lot_min",
                 "ltpd_at_lot_max", "aoql_at_lot_min", "aoql_at_lot_max", "beta_at_lot_min",
                 "beta_at_lot_max", "verdict", "reason")


def _row(get, index: int):
    from lotwise.analysis.table_audit import TableRow
    from lotwise.families.single import SinglePlan

    lo = parse_count(get("lot_min"), "lot_min", minimum=1)
    hi = parse_count(get("lot_max"), "lot_max", minimum=1)
    n = parse_count(get("n"), "n", minimum=1)
    c = parse_count(get("c"), "c", minimum=0)
    if c > n:
        raise InputError(f"c ({c}) must not be greater than n ({n})")
    if n > lo:
        raise InputError(f"n ({n}) must not be greater than lot_min ({lo})")
    aql = parse_level(get("aql"), "aql")
    rql = parse_level(get("rql"), "rql") if get("rql") else None
    if rql is not None and not rql > aql:
        raise InputError(f"rql ({get('rql')}) must be above aql ({get('aql')})")
    return TableRow(index=index, lot_min=lo, lot_max=hi, plans={"normal": SinglePlan(n=n, c=c)},
                    aql=aql, rql=rql, label=get("label"))


def read_audit_csv(path, option: str = "PLANS") -> list:
    """Rows of a plan-table CSV: ``[{"line", "values", "row" (TableRow or None),
    "error"}]``; a missing required column raises :class:`InputError`."""
    from lotwise.data.csvio import read_table

    t = read_table(path, option)
    missing = [c for c in AUDIT_REQUIRED if c not in t.header]
    if missing:
        raise InputError(f"{option} ({t.source}) lacks the column(s) {', '.join(missing)}; "
                         f"required: {', '.join(AUDIT_REQUIRED)} (optional: rql, label)")
    where = {h: i for i, h in enumerate(t.header)}
    out = []
    for k, (line, fields) in enumerate(zip(t.lines, t.fields)):
        values = [str(v).strip() for v in fields]

        def get(name, values=values):
            return values[where[name]] if name in where else ""

        row, error = None, t.problems.get(k, "")
        if error:
            error = f"the line {error}"
        else:
            try:
                missing = [c for c in AUDIT_REQUIRED if not get(c)]
                if missing:
                    raise InputError("missing " + ", ".join(missing))
                row = _row(get, k + 1)
            except InputError as exc:
                error = str(exc)
        out.append({"line": line, "values": values, "header": list(t.raw_header), "row": row,
                    "error": error})
    return out


def audit_csv_text(items: list, header: list) -> str:
    """The input columns followed by :data:`AUDIT_COLUMNS`, one line per row."""
    import csv
    import io

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(list(header) + list(AUDIT_COLUMNS))
    for it in items:
        w.writerow(list(it["values"]) + [_cell(it.get(c)) for c in AUDIT_COLUMNS])
    return buf.getvalue()


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        return csv_number(v)
    return str(v)
