"""Audit of a user's plan table: one plan (per severity) for each range of lot sizes.

Inspection departments keep tables of their own that say which plan applies
to a lot of a given size, often with a normal, a tightened and a reduced plan
per row. lotwise ships no such table (the published ones are copyrighted):
users type their own, in a plan file's ``[[table]]`` rows or a CSV, and this
module says what each row really gives. For every plan of a row, at the
smallest and at the largest lot of its range, under the exact model
(hypergeometric for the lot; Poisson for nonconformities per unit):

* ``alpha``: the producer's risk at the AQL, ``1 - Pa(AQL)``, the AQL turned
  into a whole count of the lot rounded up (the producer's conservative side);
* ``ltpd``: the quality level accepted 10 % of the time (the smallest
  ``D/N`` with ``Pa <= 0.10``);
* ``aoql``: the average outgoing quality limit with rejected lots screened;
* ``beta``: ``Pa(RQL)`` when the row or file gives an RQL (rounded down).

The normal plan carries the AQL: a row is flagged when the normal plan's
alpha exceeds ``max_alpha`` (default 10 %, common practice, no source) at
either end of the range, or, with an RQL, its beta exceeds ``max_beta``
(default 10 %). Tightened and reduced plans are reported, not judged: their
role in a scheme is judged by the scheme's OC (see
:mod:`lotwise.analysis.switching`).

Examples
--------
>>> from lotwise.families.single import SinglePlan
>>> row = TableRow(index=1, lot_min=501, lot_max=1200, plans={"normal": SinglePlan(n=80, c=2)},
...                aql=0.01)
>>> a = audit_row(row, AuditLimits())
>>> a["meets"], [round(x["alpha"], 4) for x in a["plans"]["normal"]["lots"]]
(True, [0.0547, 0.0405])
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from lotwise.core.quantities import InputError, format_pct
from lotwise.core.types import Scope

__all__ = ["AuditLimits", "TableRow", "audit_row", "audit_rows", "LTPD_PA"]

#: The acceptance probability that defines the LTPD here.
LTPD_PA = 0.10


@dataclass(frozen=True, kw_only=True)
class AuditLimits:
    """File-level targets of a plan table (each row may override aql/rql)."""

    aql: float | None = None
    rql: float | None = None
    max_alpha: float = 0.10
    max_beta: float = 0.10


@dataclass(frozen=True, kw_only=True)
class TableRow:
    """One row: lots from ``lot_min`` to ``lot_max`` items (both None: a process
    or a lot size given elsewhere), a plan per severity, optional levels."""

    index: int | None
    lot_min: int | None
    lot_max: int | None
    plans: dict = field(default_factory=dict)
    aql: float | None = None
    rql: float | None = None
    label: str = ""

    def __post_init__(self):
        if (self.lot_min is None) != (self.lot_max is None):
            raise InputError(f"lot_min ({self.lot_min}) and lot_max ({self.lot_max}) go together")
        if self.lot_min is not None and self.lot_min > self.lot_max:
            raise InputError(f"lot_min ({self.lot_min}) must not be greater than lot_max "
                             f"({self.lot_max})")
        if "normal" not in self.plans:
            raise InputError("a table row needs a normal plan")


def _lot_audit(plan, lot: int | None, aql, rql, per_unit: bool) -> dict:
    from lotwise.analysis.rectifying import aoql

    scope = Scope(lot_size=lot, per_unit=per_unit)
    model = scope.exact_model
    out = {"lot_size": lot, "model": model}
    if aql is not None:
        pa = float(plan.pa(aql, model, scope, rounding="up"))
        out.update({"pa_aql": pa, "alpha": 1.0 - pa})
    out["ltpd"] = float(plan.quality_at(LTPD_PA, model, scope, side="consumer"))
    if rql is not None:
        out["beta"] = float(plan.pa(rql, model, scope, rounding="down"))
    if lot is None or plan.max_sample < lot:
        a = aoql(plan, scope, model)
        out.update({"aoql": a.value, "aoql_p": a.at})
    else:
        out.update({"aoql": 0.0, "aoql_p": None})  # the whole lot is inspected
    return out


def audit_row(row: TableRow, limits: AuditLimits, *, per_unit: bool = False) -> dict:
    """Risks, LTPD and AOQL of every plan of ``row`` at both ends of its range,
    and the verdict on the normal plan (see the module docstring)."""
    aql = row.aql if row.aql is not None else limits.aql
    rql = row.rql if row.rql is not None else limits.rql
    if aql is not None and rql is not None and not rql > aql:
        raise InputError(f"rql ({rql:g}) must be above aql ({aql:g})")
    lots = [None] if row.lot_min is None else sorted({row.lot_min, row.lot_max})
    plans = {}
    for sev, plan in row.plans.items():
        plans[sev] = {"plan": plan.notation(), "lots": [_lot_audit(plan, n, aql, rql, per_unit)
                                                        for n in lots]}
    flags = []
    for lot in plans["normal"]["lots"]:
        where = "" if lot["lot_size"] is None else f" for a lot of {lot['lot_size']}"
        if aql is None:
            continue
        if lot["alpha"] > limits.max_alpha + 1e-12:
            flags.append(f"normal plan {plans['normal']['plan']}: alpha at the AQL "
                         f"{format_pct(lot['alpha'])}{where} is above max_alpha "
                         f"{format_pct(limits.max_alpha)}")
        if rql is not None and lot["beta"] > limits.max_beta + 1e-12:
            flags.append(f"normal plan {plans['normal']['plan']}: beta at the RQL "
                         f"{format_pct(lot['beta'])}{where} is above max_beta "
                         f"{format_pct(limits.max_beta)}")
    notes = [] if aql is not None else ["no AQL given: alpha is not judged"]
    return {"row": row.index, "label": row.label, "lot_min": row.lot_min,
            "lot_max": row.lot_max, "aql": aql, "rql": rql, "max_alpha": limits.max_alpha,
            "max_beta": limits.max_beta, "plans": plans, "meets": not flags and aql is not None,
            "flags": flags, "notes": notes}


def audit_rows(rows, limits: AuditLimits, *, per_unit: bool = False) -> list:
    """:func:`audit_row` for each row."""
    return [audit_row(r, limits, per_unit=per_unit) for r in rows]


def check_ranges(rows, where: str = "table") -> None:
    """Refuse overlapping lot ranges and plans larger than the smallest lot."""
    spans = sorted((r.lot_min, r.lot_max, r.index) for r in rows if r.lot_min is not None)
    for (a0, a1, i), (b0, b1, j) in zip(spans, spans[1:]):
        if b0 <= a1:
            raise InputError(f"{where}[{j}] (lots {b0}-{b1}) overlaps {where}[{i}] "
                             f"(lots {a0}-{a1}); each lot size must fall in one row")
    for r in rows:
        for sev, plan in r.plans.items():
            if r.lot_min is not None and plan.max_sample > r.lot_min:
                raise InputError(f"{where}[{r.index}].{sev} ({plan.notation()}) inspects up to "
                                 f"{plan.max_sample} units, more than lot_min ({r.lot_min}); "
                                 "give smaller lots a row of their own (100 % inspection is "
                                 f"n = lot size)")


def worst(values) -> float:
    """The largest of the finite values (NaN when none)."""
    v = [x for x in values if x is not None and np.isfinite(x)]
    return max(v) if v else float("nan")
