"""The switching-scheme and plan-table parts of a plan file.

A plan file (see :mod:`lotwise.documents.planfile`) may carry, beside or
instead of its characteristics, a switching scheme and a table of plans by
lot size, typed by the user (lotwise ships no published table)::

    aql = "1%"                  # file level: the AQL the normal plans must hold
    rql = "8%"                  # optional: beta is reported (and judged) there
    max_alpha = "10%"           # flag a normal plan whose alpha at the AQL is above
    max_beta = "10%"            # flag a normal plan whose beta at the RQL is above

    [switching]
    normal = "n=80,c=2"         # plan notation, any family judged lot by lot
    tightened = "n=80,c=1"      # optional: without it the scheme never tightens
    reduced = "n=32,c=1"        # optional: without it the scheme never reduces

    [switching.rules]           # every key optional (defaults: common practice)
    tighten_rejects = 2         # to tightened when 2 lots are rejected ...
    tighten_window = 5          # ... within 5 consecutive lots on normal
    relax_accepts = 5           # back to normal after 5 consecutive accepted
    reduce_accepts = 10         # to reduced after 10 consecutive accepted on normal
    reduce_limit = 3            # ... finding at most 3 nonconforming in all (optional)
    restore_rejects = 1         # back to normal on 1 rejected lot on reduced
    stop_rejects = 5            # discontinue at 5 rejected in one tightened period

    [[table]]                   # one row per range of lot sizes
    lot_min = 501
    lot_max = 1200
    normal = "n=80,c=2"
    tightened = "n=80,c=1"
    reduced = "n=32,c=1"
    # aql = "0.65%"             # a row's own levels override the file's

A count of 0 switches its rule off. A file with ``[switching]`` or
``[[table]]`` needs ``[part]`` and may omit ``[[characteristic]]``.

Examples
--------
>>> from lotwise.documents.planfile import loads
>>> req = loads('''
... [part]
... id = "P-2"
... [switching]
... normal = "n=80,c=2"
... tightened = "n=80,c=1"
... [switching.rules]
... relax_accepts = 4
... ''', "p2.toml")
>>> req.switching.tightened.notation(), req.switching.rules.relax_accepts
('n=80,c=1', 4)
"""

from __future__ import annotations

from lotwise.core.quantities import InputError, parse_level, parse_risk

__all__ = ["SWITCHING_KEYS", "ROW_KEYS", "FILE_KEYS", "parse_extras", "pick_plan", "table_row",
           "scheme_for_lot"]

SWITCHING_KEYS = {"normal", "tightened", "reduced", "rules"}
ROW_KEYS = {"lot_min", "lot_max", "normal", "tightened", "reduced", "aql", "rql", "label"}
#: Top-level keys that belong to [switching] and [[table]].
FILE_KEYS = ("aql", "rql", "max_alpha", "max_beta")


def _plan(table: dict, key: str, where: str, path: str, scope):
    from lotwise.families.base import parse_plan

    text = table[key]
    if not isinstance(text, str):
        raise InputError(f"{path}: {where}{key} ({text!r}) must be plan notation in quotes, "
                         "e.g. \"n=80,c=2\"")
    plan = parse_plan(text, f"{path}: {where}{key}")
    if scope.lot_size and plan.max_sample > scope.lot_size:
        raise InputError(f"{path}: {where}{key} ({text}) inspects up to {plan.max_sample} "
                         f"units, more than lot.size ({scope.lot_size})")
    return plan


def _whole(table: dict, key: str, where: str, path: str, minimum: int) -> int:
    v = table[key]
    if isinstance(v, bool) or not isinstance(v, int) or v < minimum:
        raise InputError(f"{path}: {where}{key} ({v!r}) must be a whole number of at least "
                         f"{minimum}, written without quotes")
    return v


def _refuse(message: str):
    raise InputError(message)


def _scheme(doc: dict, scope, path: str, unknown, take):
    """The ``[switching]`` table as a Scheme; every error goes to ``take`` (None
    is returned when any was found)."""
    from lotwise.analysis.switching import RULE_KEYS, Scheme, SwitchRules

    sw = doc["switching"]
    if not isinstance(sw, dict):
        take(_refuse, f"{path}: switching ({sw!r}) must be a table, written [switching]")
        return None
    ok = take(unknown, sw, SWITCHING_KEYS, "switching.", path, default=False) is not False
    if "normal" not in sw:
        take(_refuse, f"{path}: switching.normal is missing; it is required")
        ok = False
    plans = {}
    for k in ("normal", "tightened", "reduced"):
        if k in sw:
            plan = take(_plan, sw, k, "switching.", path, scope)
            ok = ok and plan is not None
            plans[k] = plan
    rules_raw = sw.get("rules", {})
    if not isinstance(rules_raw, dict):
        take(_refuse, f"{path}: switching.rules ({rules_raw!r}) must be a table, written "
                      "[switching.rules]")
        return None
    ok = (take(unknown, rules_raw, set(RULE_KEYS), "switching.rules.", path, default=False)
          is not False) and ok
    rules = {}
    for k in rules_raw:
        if k in RULE_KEYS:
            v = take(_whole, rules_raw, k, "switching.rules.", path,
                     1 if k == "tighten_window" else 0)
            ok = ok and v is not None
            rules[k] = v
    if not ok:
        return None
    try:
        return Scheme(**plans, rules=SwitchRules(**rules))
    except InputError as exc:
        take(_refuse, f"{path}: switching.rules.{exc}" if str(exc).split(" ")[0] in RULE_KEYS
             else f"{path}: switching: {exc}")
        return None


def _row(r: dict, i: int, scope, lotless, path: str, unknown, take):
    """One ``[[table]]`` row as a TableRow; its errors go to ``take`` (None when any)."""
    from lotwise.analysis.table_audit import TableRow

    w = f"table[{i}]."
    ok = take(unknown, r, ROW_KEYS, w, path, default=False) is not False
    for key in ("lot_min", "lot_max", "normal"):
        if key not in r:
            take(_refuse, f"{path}: {w}{key} is missing; it is required")
            ok = False
    lo = take(_whole, r, "lot_min", w, path, 1) if "lot_min" in r else None
    hi = take(_whole, r, "lot_max", w, path, 1) if "lot_max" in r else None
    if lo is not None and hi is not None and lo > hi:
        take(_refuse, f"{path}: {w}lot_min ({lo}) must not be greater than {w}lot_max ({hi})")
        ok = False
    plans = {k: take(_plan, r, k, w, path, lotless) for k in ("normal", "tightened", "reduced")
             if k in r}
    levels = {k: take(parse_level, r[k], f"{path}: {w}{k}", per_unit=scope.per_unit)
              for k in ("aql", "rql") if k in r}
    label = r.get("label", "")
    if not isinstance(label, str):
        take(_refuse, f"{path}: {w}label ({label!r}) must be text in quotes")
        ok = False
    if (not ok or lo is None or hi is None or None in plans.values()
            or None in levels.values()):
        return None
    return TableRow(index=i, lot_min=lo, lot_max=hi, plans=plans, label=label, **levels)


def _rows(doc: dict, scope, path: str, unknown, take) -> tuple:
    from lotwise.analysis.table_audit import check_ranges

    raw = doc["table"]
    if not isinstance(raw, list) or not all(isinstance(r, dict) for r in raw):
        take(_refuse, f"{path}: table must be an array of tables, written [[table]]")
        return ()
    lotless = type(scope)(per_unit=scope.per_unit)  # each row gives its own lot sizes
    rows = [_row(r, i, scope, lotless, path, unknown, take) for i, r in enumerate(raw, 1)]
    if None in rows:  # (the ranges are checked once every row reads)
        return ()
    try:
        check_ranges(rows)
    except InputError as exc:
        take(_refuse, f"{path}: {exc}")
        return ()
    return tuple(rows)


def parse_extras(doc: dict, scope, path: str, unknown, *, err) -> dict:
    """``{"switching": Scheme | None, "table": (TableRow, ...), "limits": AuditLimits | None}``
    from a parsed plan file; ``unknown(keys, allowed, where, path)`` refuses unknown keys.

    Every error of ``[switching]`` and ``[[table]]`` goes to ``err`` (the plan
    file reader's collector: ``err.take(fn, *args, default=None, **kw)`` calls
    ``fn`` and records its :class:`InputError` instead of raising it), and the
    parts that read are returned."""
    take = err.take
    has = "switching" in doc or "table" in doc
    if not has:
        for key in FILE_KEYS:
            if key in doc:
                take(_refuse, f"{path}: {key} at the top of the file applies to [switching] "
                              "and [[table]], which the file lacks; a characteristic takes "
                              "its own levels")
        return {"switching": None, "table": (), "limits": None}
    from lotwise.analysis.table_audit import AuditLimits

    levels = {k: take(parse_level, doc[k], f"{path}: {k}", per_unit=scope.per_unit)
              for k in ("aql", "rql") if k in doc}
    levels = {k: v for k, v in levels.items() if v is not None}
    if "aql" in levels and "rql" in levels and not levels["rql"] > levels["aql"]:
        take(_refuse, f"{path}: rql ({doc['rql']}) must be above aql ({doc['aql']})")
    risks = {k: take(parse_risk, doc[k], f"{path}: {k}") for k in ("max_alpha", "max_beta")
             if k in doc}
    risks = {k: v for k, v in risks.items() if v is not None}
    return {"switching": _scheme(doc, scope, path, unknown, take) if "switching" in doc
            else None,
            "table": _rows(doc, scope, path, unknown, take) if "table" in doc else (),
            "limits": AuditLimits(**levels, **risks)}


SEVERITY_NAMES = ("normal", "tightened", "reduced")


def table_row(req, lot_size: int, option: str = "--lot-size"):
    """The ``[[table]]`` row whose range holds ``lot_size``."""
    for row in req.table:
        if row.lot_min <= lot_size <= row.lot_max:
            return row
    spans = ", ".join(f"{r.lot_min}-{r.lot_max}" for r in req.table)
    raise InputError(f"{option} ({lot_size}) falls in no row of {req.path}'s [[table]] "
                     f"(rows: {spans})")


def pick_plan(req, lot_size: int | None, severity: str = "normal"):
    """The plan of ``severity`` for a lot of ``lot_size``: from the table row
    that holds it, or from ``[switching]`` when the file has no table.

    Raises :class:`InputError` naming what is missing."""
    if severity not in SEVERITY_NAMES:
        raise InputError(f"--severity ({severity}) must be one of: "
                         + ", ".join(SEVERITY_NAMES))
    if req.table:
        if lot_size is None:
            raise InputError(f"{req.path} holds a plan table: give --lot-size to pick its row")
        row = table_row(req, lot_size)
        if severity not in row.plans:
            raise InputError(f"--severity ({severity}): table[{row.index}] of {req.path} "
                             f"(lots {row.lot_min}-{row.lot_max}) has no {severity} plan")
        return row.plans[severity]
    if req.switching is None:
        raise InputError(f"{req.path} has neither [[table]] nor [switching] to pick a plan from")
    plan = req.switching.plan_for(severity)
    if plan is None:
        raise InputError(f"--severity ({severity}): [switching] of {req.path} has no "
                         f"{severity} plan")
    return plan


def scheme_for_lot(req, lot_size: int):
    """The request as a switching scheme for one lot size: the table row's plans
    (with the file's rules) and that lot size (for ``sheet --lot-size``)."""
    from dataclasses import replace

    from lotwise.analysis.switching import Scheme, SwitchRules
    from lotwise.core.types import Scope

    rules = req.switching.rules if req.switching is not None else SwitchRules()
    if req.table:
        row = table_row(req, lot_size)
        plans = row.plans
    elif req.switching is not None:
        plans = req.switching.plans()
    else:
        raise InputError(f"--lot-size ({lot_size}): {req.path} has neither [[table]] nor "
                         "[switching]")
    for sev, plan in plans.items():
        if plan.max_sample > lot_size:
            raise InputError(f"--lot-size ({lot_size}) is smaller than the {sev} plan's "
                             f"sample ({plan.notation()})")
    if rules.reduce_limit is not None and "reduced" not in plans:
        rules = replace(rules, reduce_limit=None)
    return replace(req, switching=Scheme(**plans, rules=rules), table=(),
                   scope=Scope(lot_size=lot_size, per_unit=req.scope.per_unit))
