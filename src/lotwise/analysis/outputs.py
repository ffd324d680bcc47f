"""What ``lotwise oc`` and ``check`` print for a plan, as library functions.

The command line (:mod:`lotwise.cli`) and the local web API
(:mod:`lotwise.web`) both build their JSON from these functions, so a
number served on the page is the number ``--json`` prints:

* :func:`json_safe` -- the JSON-safe copy every ``--json`` goes through
  (numpy scalars to Python numbers, NaN and infinities to null);
* :func:`attribute_grid`, :func:`attribute_oc` -- the OC grid and the
  ``oc --json`` object of an attribute plan (single, double, multiple,
  sequential, chain, skip-lot);
* :func:`variables_oc` -- the same for a variables plan;
* :func:`csp_grid`, :func:`csp_oc`, :func:`csp_check` -- the figures of a
  continuous sampling plan (CSP-1, CSP-2, CSP-3).

Examples
--------
>>> from lotwise.core.types import Scope
>>> from lotwise.families.base import parse_plan
>>> plan, scope = parse_plan("n=80,c=2"), Scope()
>>> ps = attribute_grid(plan, scope, "binomial", points="3")
>>> [round(float(p), 3) for p in ps]
[0.0, 0.1, 0.2]
>>> attribute_oc(plan, scope, "binomial", ps)["columns"]
['p', 'binomial', 'poisson', 'poisson_minus_exact']
"""

from __future__ import annotations

import math
from json.encoder import encode_basestring_ascii

import numpy as np

from lotwise.core.numbers import csv_number
from lotwise.core.quantities import parse_count, parse_level

__all__ = ["json_safe", "json_pieces", "nice", "attribute_grid", "attribute_oc", "variables_oc", "csp_grid",
           "csp_oc", "csp_check", "parse_at", "csv_cell", "csv_text"]

#: Largest number of grid points of an OC table (``--points``).
MAX_POINTS = 100_000
#: ... and of a two-limit variables plan's band, whose every point is a quadrature.
MAX_POINTS_BAND = 10_000


#: Values :func:`json_safe` passes through unchanged (checked by exact type, so a
#: long list of plain numbers is copied without a call per element).
_PLAIN = frozenset((int, str, bool, type(None)))


def json_safe(obj):
    """JSON-safe copy: numpy scalars to Python, NaN/inf to None."""
    t = type(obj)
    if t in _PLAIN:
        return obj
    if t is float:
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {str(k): json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        if _PLAIN.issuperset(map(type, obj)):
            return list(obj)
        return [json_safe(v) for v in obj]
    if hasattr(obj, "item") and not isinstance(obj, (str, bytes)):
        obj = obj.item()
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj


def _float_text(o: float) -> str:
    if o != o:
        return "NaN"
    if o in (math.inf, -math.inf):
        return "Infinity" if o > 0 else "-Infinity"
    return float.__repr__(o)


def _scalar_text(o):
    """JSON text of a scalar as :mod:`json` writes it; None for a container."""
    if isinstance(o, str):
        return encode_basestring_ascii(o)
    if o is None:
        return "null"
    if o is True:
        return "true"
    if o is False:
        return "false"
    if isinstance(o, int):
        return int.__repr__(o)
    if isinstance(o, float):
        return _float_text(o)
    return None


#: Elements of a flat list joined into one piece of :func:`json_pieces`.
_CHUNK = 4096
_NUMBERS = frozenset((int, float, type(None)))


def _flat_text(items, types, sep: str) -> str:
    """``items`` (plain scalars of ``types``) as JSON text joined by ``sep``."""
    if types <= _NUMBERS:  # str() of an int or float is its JSON text
        text = sep.join(map(str, items))
        if type(None) in types:
            text = text.replace("None", "null")
        if float not in types or ("nan" not in text and "inf" not in text):
            return text
    return sep.join(map(_scalar_text, items))


def json_pieces(obj, indent: int = 2, _level: int = 0):
    """The text of ``json.dumps(obj, indent=indent)`` in pieces, for printing
    as they come (a result listing a hundred thousand rows is never held whole).

    The same bytes as :mod:`json`'s encoder (``ensure_ascii``, keys as given,
    ``", "`` and ``": "`` separators, NaN and infinities spelled as :mod:`json`
    spells them), but a flat list of numbers or strings is written with one
    join per few thousand elements instead of one generator step each: the
    acceptance and rejection numbers of a sequential plan truncated at 100,000
    units are 200,000 numbers.

    >>> import json
    >>> obj = {"a": [1, 2.5, None, True, "x\u00e9"], "b": {}, "c": [[], {"d": -0.0}],
    ...        "e": [3, None, float("nan"), 1e300 * 10, -1e-7], "f": (None, 2), 1.5: "g"}
    >>> "".join(json_pieces(obj)) == json.dumps(obj, indent=2)
    True
    """
    text = _scalar_text(obj)
    if text is not None:
        yield text
        return
    inner = "\n" + " " * (indent * (_level + 1))
    outer = "\n" + " " * (indent * _level)
    sep = "," + inner
    if isinstance(obj, dict):
        if not obj:
            yield "{}"
            return
        first = True
        for k, v in obj.items():
            if isinstance(k, str):
                key = k
            elif isinstance(k, float):
                key = _float_text(k)
            elif k is True or k is False or k is None:
                key = _scalar_text(k)
            elif isinstance(k, int):
                key = int.__repr__(k)
            else:
                raise TypeError(f"keys must be str, int, float, bool or None, not "
                                f"{k.__class__.__name__}")
            yield ("{" + inner if first else sep) + encode_basestring_ascii(key) + ": "
            first = False
            yield from json_pieces(v, indent, _level + 1)
        yield outer + "}"
        return
    if isinstance(obj, (list, tuple)):
        if not obj:
            yield "[]"
            return
        types = set(map(type, obj))
        if types <= _PLAIN | {float}:  # flat: joined in chunks
            for i in range(0, len(obj), _CHUNK):
                yield ("[" + inner if i == 0 else sep) + _flat_text(obj[i:i + _CHUNK], types,
                                                                     sep)
            yield outer + "]"
            return
        for i, v in enumerate(obj):
            yield "[" + inner if i == 0 else sep
            yield from json_pieces(v, indent, _level + 1)
        yield outer + "]"
        return
    raise TypeError(f"Object of type {obj.__class__.__name__} is not JSON serializable")


def csv_cell(v) -> str:
    """A number as CSV text: whole numbers plainly, floats to at most ten
    significant digits (:func:`lotwise.core.numbers.csv_number`)."""
    if isinstance(v, int):
        return str(v)
    return csv_number(float(v))


def csv_text(header, rows, cell=csv_cell) -> str:
    """A table as the CSV text ``--csv`` writes."""
    return ",".join(header) + "\n" + "".join(
        ",".join(cell(v) for v in row) + "\n" for row in rows)


def nice(x: float) -> float:
    """Round up to 1, 2, 2.5 or 5 times a power of ten (at most 1 when x <= 1)."""
    if x <= 0:
        return 1.0
    e = math.floor(math.log10(x))
    for m in (1, 2, 2.5, 5, 10):
        if m * 10**e >= x * (1 - 1e-12):
            return min(m * 10**e, 1.0) if x <= 1 else m * 10**e
    return 10 ** (e + 1)


def parse_at(at, *, per_unit: bool = False) -> list[float]:
    """``--at`` levels: repeatable, each possibly comma-separated."""
    vals = []
    for item in at or []:
        for part in str(item).split(","):
            if part.strip():
                vals.append(parse_level(part, "--at", per_unit=per_unit))
    return vals


def attribute_grid(plan, scope, model, *, max_p=None, points="21", at=None, rql=None):
    """The quality levels of ``oc``: the ``--at`` levels, or ``--points`` levels
    from 0 to ``--max-p`` (default: where the exact Pa has fallen to 1 %, at
    least 1.25 RQL, rounded up to a round number)."""
    from lotwise.analysis.audit import quality_at

    if at:
        return np.array(parse_at(at, per_unit=scope.per_unit), dtype=float)
    k = parse_count(points, "--points", minimum=2, maximum=MAX_POINTS)
    if max_p is not None:
        top = parse_level(max_p, "--max-p", per_unit=scope.per_unit)
    else:
        top = quality_at(plan, 0.01, model, scope, "consumer")
        if rql is not None:
            top = max(top, 1.25 * rql)
        top = nice(min(top, 1.0) if not scope.per_unit else top)
    return np.linspace(0.0, top, k)


def attribute_oc(plan, scope, model, ps, *, aql=None, rql=None) -> dict:
    """``oc --json`` of an attribute plan at the levels ``ps``; in a finite lot
    with ``lot_count_rule``, the rounding of each level to a whole count
    (up at and below ``aql``, down at and above ``rql``, see
    :func:`lotwise.analysis.assess.count_rule`)."""
    from lotwise.analysis.assess import count_rule, oc_table

    header, rows = oc_table(plan, scope, model, ps, aql=aql, rql=rql)
    out = {"scheme": plan.scheme, "n": None, "c": None, **plan.to_dict(),
           "lot_size": scope.lot_size, "model": model, "columns": header, "rows": rows}
    if "lot_count" in header:
        out["lot_count_rule"] = count_rule(plan, scope, aql=aql, rql=rql)[1]
    return out


def _variables_top(plan, rql):
    """Right end of the default grid: where Pa has fallen to 1 %, or 1.25 RQL."""
    from lotwise.families.variables import TWO_LIMIT_EXACT

    lo, hi = 0.0, 1.0
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        if float(plan.pa(mid) if plan.exact_model not in TWO_LIMIT_EXACT
                 else plan.pa(mid, "noncentral-t")) > 0.01:
            lo = mid
        else:
            hi = mid
    top = max(1.1 * hi, 1.25 * rql if rql else 0.0)
    return nice(min(top, 1.0))


def variables_oc(plan, *, max_p=None, points="21", at=None, rql=None) -> dict:
    """``oc --json`` of a variables plan: ``p``, ``pa`` (and ``pa_lower`` for
    a two-limit band, the one-tail noncentral t beside a simulated OC)."""
    if at:
        ps = np.array(parse_at(at), dtype=float)
    else:
        two = plan.limit == "both" and (plan.sigma == "unknown" or plan.width is None)
        # A two-limit band costs a quadrature per point (about 0.1 ms): fewer points.
        k = parse_count(points, "--points", minimum=2,
                        maximum=MAX_POINTS_BAND if two else MAX_POINTS)
        top = parse_level(max_p, "--max-p") if max_p is not None else _variables_top(plan, rql)
        ps = np.linspace(0.0, top, k)
    from lotwise.families.variables import TWO_LIMIT_EXACT

    band = plan.limit == "both" and (plan.sigma == "unknown" or plan.width is None)
    header = ["p", "pa"]
    cols = [np.asarray(plan.pa(ps), dtype=float)]
    if band:
        header.append("pa_lower")
        cols.append(np.asarray(plan.pa(ps, envelope="lower"), dtype=float))
    if plan.exact_model in TWO_LIMIT_EXACT:
        header.append("pa_one_tail_noncentral_t")
        cols.append(np.asarray(plan.pa(ps, "noncentral-t"), dtype=float))
    perfect = plan.error_free  # judged through a gauge: the perfect gauge beside
    if perfect is not None:
        header.append("error_free_pa")
        cols.append(np.asarray(perfect.pa(ps), dtype=float))
    rows = [[float(pv)] + [float(c[i]) for c in cols] for i, pv in enumerate(ps)]
    out = {"scheme": "variables", **plan.to_dict(), "columns": header, "rows": rows}
    if perfect is not None:
        out["measurement_error"] = plan.gauge.as_dict()
    return out


def _csp_nice(x: float) -> float:
    """Round up to 1, 2, 2.5 or 5 times a power of ten (at most 1)."""
    return min(nice(x), 1.0)


def csp_grid(plan, *, max_p=None, points="21", at=None):
    """The levels of ``oc`` for a CSP plan (default: up to where the fraction
    passed under sampling has fallen to 1 %)."""
    from lotwise.core.types import Scope

    ps = parse_at(at)
    if ps:
        return np.array(ps)
    k = parse_count(points, "--points", minimum=2, maximum=MAX_POINTS)
    top = parse_level(max_p, "--max-p") if max_p is not None else \
        _csp_nice(plan.quality_at(0.01, "binomial", Scope(), "consumer"))
    return np.linspace(0.0, top, k)


def csp_oc(plan, grid) -> dict:
    """``oc --json`` of a CSP plan: columns ``p``, ``afi``, ``aoq``, ``pa``."""
    header = ["p", "afi", "aoq", "pa"]
    afi, aoq, pa = (np.atleast_1d(plan.afi(grid)), np.atleast_1d(plan.aoq(grid)),
                    np.atleast_1d(plan.pa(grid)))
    rows = [[float(p), float(a), float(o), float(s)] for p, a, o, s in zip(grid, afi, aoq, pa)]
    value, where = plan.aoql()
    return {**plan.to_dict(), "model": "binomial", "aoql": value, "aoql_p": where,
            "columns": header, "rows": rows}


def _level_row(plan, p: float) -> dict:
    runs = plan.phase_runs(p)
    return {"p": p, "afi": float(plan.afi(p)), "aoq": float(plan.aoq(p)),
            "pa": float(plan.pa(p)),
            "runs": {k: (None if math.isinf(v) else v) for k, v in runs.items()}}


def csp_check(plan, *, at=None, run_length=None) -> dict:
    """``check --json`` of a CSP plan: the long-run figures at each ``--at``
    level (default: where the AOQL occurs), the AOQL, and with ``run_length``
    the short-run figures of that many units beside them."""
    from lotwise.families.csp import MAX_RUN

    ps = parse_at(at)
    M = parse_count(run_length, "--run-length", minimum=1, maximum=MAX_RUN) \
        if run_length is not None else None
    value, where = plan.aoql()
    if not ps:
        ps = [where] if where > 0 else []
    levels = [_level_row(plan, p) for p in ps]
    if M is not None and ps:
        afi, pa, aoq = plan.run_figures(ps, M)
        for row, a, s, o in zip(levels, afi, pa, aoq):
            row.update({"run_afi": float(a), "run_aoq": float(o), "run_pa": float(s)})
    out = {**plan.to_dict(), "aoql": value, "aoql_p": where, "levels": levels}
    if M is not None:
        out["run_length"] = M
    return out
