"""Rectifying inspection: average outgoing quality (AOQ), its limit (AOQL) and
the average total inspection (ATI) of a plan, exact under each model.

Rectifying inspection means that every rejected lot is screened 100 % and
its nonconforming items are replaced by conforming ones; accepted lots go
on as they are, less the nonconforming items found in their sample (also
replaced). For a lot of ``N`` items inspected with a sample of ``n``:

``screened`` (the default formula)
    ``AOQ(p) = p Pa(p) (N - n) / N``. Exact under the binomial and Poisson
    models: the ``N - n`` items left unsampled in an accepted lot hold on
    average ``p (N - n)`` nonconforming ones, whatever the sample showed.
    Under the hypergeometric model the unsampled remainder is *not*
    independent of the sample, and the exact expectation of the outgoing
    fraction for a lot holding ``D`` nonconforming items is

        ``AOQ(D) = E[(D - X) 1{X <= c}] / N = (D/N) ((N - n)/N) Pa(n, c | N - 1, D - 1)``

    (from ``(D - x) C(D, x) = D C(D - 1, x)``), with ``Pa(n, c | N - 1, D - 1)``
    the acceptance probability for a lot of ``N - 1`` items holding ``D - 1``.
    It is never below the plug-in ``(D/N) Pa(D) (N - n)/N`` and can be far
    above it when the sample is a large part of the lot: an accepted lot's
    sample holds few nonconforming items, so its unsampled remainder holds
    more than the average ``D (N - n)/N``. For ``c = 0`` the ratio is exactly
    ``N/(N - n)`` (``C(N, n)/C(N - 1, n)``): 1.25 for ``n = 20`` of ``N = 100``,
    about 7.1 for ``n = 129`` of ``N = 150``.
``simple``
    ``AOQ(p) = p Pa(p)``, the form some texts use: nonconforming items found
    in the sample of an accepted lot are not replaced (or the lot is so
    large that ``(N - n)/N`` is taken as 1). Exact under every model for that
    convention (``(D/N) Pa(D)`` for the finite lot).

Without a lot size both formulas reduce to ``p Pa(p)``, the large-lot limit.

The **AOQL** is the largest AOQ over all quality levels. On the continuous
binomial and Poisson curves it is found by a proper maximisation: the AOQ is
evaluated on a grid reaching the level where ``Pa`` has fallen to 1e-9, the
grid maximum brackets the peak, and Brent's method (golden section with
parabolic steps, [1]_) polishes it. ``p Pa(p)`` is unimodal there: ``Pa`` is
the survival function of a beta (binomial) or gamma (Poisson) law with
log-concave density, hence log-concave, and so is ``p Pa(p)``. Under the
hypergeometric model the AOQL is the maximum over whole counts ``D``:
a window of counts around the binomial peak is evaluated at once and moved
(and widened) until its maximum is interior, which is exact because the
finite-lot AOQ is unimodal in ``D`` (the tests check this exhaustively for
small lots and against a full scan for large ones); lots up to 160 items
are simply evaluated at every count.

The **ATI** is ``ATI(p) = n + (1 - Pa(p)) (N - n)``: the sample of every lot
plus the remainder of every rejected lot.

Plans whose sample size varies (double, multiple, sequential, skip-lot)
plug in through hooks, looked up on the plan object in this order:

* ``plan.ati(p, model, scope)`` / ``plan.aoq(p, model, scope, formula)`` /
  ``plan.aoq_count(d, scope, formula)`` / ``plan.ati_count(d, scope)``: the
  plan's own exact expressions, used as they are;
* otherwise, if the plan has ``asn(p, model, scope)``, the usual expressions
  with the average sample number in place of ``n``:
  ``ATI = ASN + (1 - Pa)(N - ASN)`` and ``AOQ = p Pa (N - ASN)/N`` (an
  approximation where the sample size and the decision are dependent);
* otherwise the plan's fixed sample size ``plan.n``.

References
----------
.. [1] R. P. Brent, *Algorithms for Minimization without Derivatives*,
   Prentice-Hall, 1973, ch. 5.
.. [2] H. F. Dodge and H. G. Romig, *Sampling Inspection Tables*, 2nd ed.,
   Wiley, 1959 (AOQ, AOQL and ATI of rectifying inspection).
.. [3] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 10 (rectifying inspection; AOQL factors).

Examples
--------
Receiving screens every rejected lot of 4000 printed boards and samples 20
boards per lot, accepting on one nonconforming. The worst average outgoing
quality it lets through, reached when lots arrive near 7.7 % nonconforming:

>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> r = aoql(SinglePlan(n=20, c=1), Scope(lot_size=4000), "binomial", formula="simple")
>>> round(r.value, 4), round(r.at, 3)
(0.0414, 0.077)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.optimum import brent_max
from lotwise.core.types import Scope, lot_counts
from lotwise.families.base import need_lot
from lotwise.families.single import aoq_hyper_single
from lotwise.core.numbers import level
from lotwise.core.quantities import InputError, format_level, format_pct

__all__ = [
    "FORMULAS",
    "FORMULA_TEXT",
    "AOQL",
    "aoq",
    "aoq_count",
    "ati",
    "ati_count",
    "aoql",
    "rectifying_summary",
    "render_rectifying",
    "check_formula",
    "curve_grid",
    "format_outgoing",
]

#: AOQ conventions: rejected lots screened and the sample's nonconforming
#: items replaced (``screened``), or the form without ``(N - n)/N``.
FORMULAS = ("screened", "simple")

FORMULA_TEXT = {
    "screened": "AOQ = p Pa (N - n)/N under the binomial and Poisson models (rejected lots "
                "screened, nonconforming items found replaced; finite lot: (D/N)((N - n)/N) "
                "Pa(n, c | N - 1, D - 1))",
    "simple": "AOQ = p Pa (the form without (N - n)/N: nonconforming items found in an "
              "accepted lot's sample are not replaced)",
}

_PA_FLOOR = 1e-9    # the AOQ grid reaches the level where Pa has fallen to this
_GRID = 48          # grid points bracketing the peak on continuous curves
_WINDOW = 64        # whole counts evaluated at once on the finite-lot curve
_ALL_COUNTS = 160   # lots up to this size are evaluated at every count


def check_formula(formula: str, option: str = "--aoq-formula") -> str:
    if formula not in FORMULAS:
        raise InputError(f"{option} ({formula}) must be one of: {', '.join(FORMULAS)}")
    return formula


def _need_lot(scope: Scope, what: str) -> int:
    return need_lot(scope, what)


# --- AOQ and ATI at given quality levels: the plan's own methods ----------------

def aoq_count(plan, d, scope: Scope, formula: str = "screened"):
    """Exact AOQ (a fraction) for lots of ``scope.lot_size`` holding ``d``
    nonconforming items (hypergeometric model); see :meth:`Plan.aoq_count`."""
    check_formula(formula, "formula")
    _need_lot(scope, "hypergeometric AOQ")
    return plan.aoq_count(d, scope, formula=formula)


def aoq(plan, p, model: str, scope: Scope, formula: str = "screened",
        rounding: str = "nearest"):
    """AOQ of ``plan`` at quality level(s) ``p`` under ``model``; see :meth:`Plan.aoq`."""
    check_formula(formula, "formula")
    return plan.aoq(p, model, scope, formula=formula, rounding=rounding)


def ati_count(plan, d, scope: Scope):
    """ATI (items inspected per lot) for lots holding ``d`` nonconforming items."""
    _need_lot(scope, "ATI")
    return plan.ati_count(d, scope)


def ati(plan, p, model: str, scope: Scope, rounding: str = "nearest"):
    """ATI ``ASN + (1 - Pa)(N - ASN)`` at quality level(s) ``p`` under ``model``."""
    _need_lot(scope, "ATI")
    return plan.ati(p, model, scope, rounding=rounding)


def _finish(x, clip: bool = True):
    x = np.asarray(x, dtype=float)
    if clip:
        x = np.clip(x, 0.0, None)
    return float(x) if x.ndim == 0 else x


# --- AOQL --------------------------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class AOQL:
    """The average outgoing quality limit of a plan under one model.

    Attributes
    ----------
    value : float
        The AOQL (fraction nonconforming, or nonconformities per unit).
    at : float
        The quality level where it occurs (``count / N`` under the
        hypergeometric model).
    count : int or None
        The whole number of nonconforming items in the lot there
        (hypergeometric model only).
    model, formula : str
    lot_size : int or None
    """

    value: float
    at: float
    model: str
    formula: str
    lot_size: int | None
    count: int | None = None

    def as_dict(self) -> dict:
        d = {"aoql": self.value, "aoql_p": self.at, "model": self.model,
             "formula": self.formula}
        if self.count is not None:
            d["aoql_count"] = self.count
        return d


def _top_level(plan, model: str, scope: Scope) -> float:
    """A quality level beyond the AOQ peak: where ``Pa`` has fallen to 1e-9."""
    q = plan.quality_at(_PA_FLOOR, "poisson" if model == "poisson" else "binomial", scope,
                        "consumer")
    return q if scope.per_unit or model == "poisson" else min(1.0, q)


def _aoql_continuous(plan, model, scope, formula) -> AOQL:
    top = _top_level(plan, model, scope)
    f = plan.aoq_function(model, scope, formula=formula)
    grid = np.linspace(0.0, top, _GRID + 1)
    vals = np.asarray(aoq(plan, grid, model, scope, formula), dtype=float)
    while int(np.argmax(vals)) == len(grid) - 1 and (scope.per_unit or model == "poisson"
                                                     or grid[-1] < 1.0):
        # The curve still rises at the end: extend the range.
        hi = grid[-1] * 2.0
        if not (scope.per_unit or model == "poisson"):
            hi = min(hi, 1.0)
        grid = np.linspace(0.0, hi, _GRID + 1)
        vals = np.asarray(aoq(plan, grid, model, scope, formula), dtype=float)
    i = int(np.argmax(vals))
    if i == len(grid) - 1:  # every lot accepted (c >= n): the peak is at p = 1
        return AOQL(value=float(vals[i]), at=float(grid[i]), model=model, formula=formula,
                    lot_size=scope.lot_size)
    lo, hi = grid[max(i - 1, 0)], grid[i + 1]
    x, fx = brent_max(f, float(lo), float(hi))
    if fx < vals[i]:  # cannot happen for a unimodal curve; keep the better point
        x, fx = float(grid[i]), float(vals[i])
    return AOQL(value=float(fx), at=float(x), model=model, formula=formula,
                lot_size=scope.lot_size)


def _aoql_counts(plan, scope, formula) -> AOQL:
    N = int(scope.lot_size)
    g = lambda d: np.asarray(aoq_count(plan, d, scope, formula), dtype=float)  # noqa: E731
    if N + 1 <= _ALL_COUNTS:
        d = np.arange(0, N + 1, dtype=float)
        vals = g(d)
        i = int(np.argmax(vals))
        return AOQL(value=float(vals[i]), at=float(d[i] / N), count=int(d[i]),
                    model="hypergeometric", formula=formula, lot_size=N)
    # Start from the binomial peak, then walk a window of whole counts until
    # its maximum is interior: exact for a unimodal AOQ (see the module notes).
    start = _aoql_continuous(plan, "binomial", scope, formula).at
    centre = int(round(start * N))
    half = _WINDOW // 2
    for _ in range(10_000):
        lo = max(0, centre - half)
        hi = min(N, lo + 2 * half)
        lo = max(0, hi - 2 * half)
        d = np.arange(lo, hi + 1, dtype=float)
        vals = g(d)
        i = int(np.argmax(vals))
        at_low_edge = i == 0 and lo > 0
        at_high_edge = i == len(d) - 1 and hi < N
        if not (at_low_edge or at_high_edge):
            break
        # The maximum sits on an edge: move the window that way, widening it.
        half = min(2 * half, N)
        centre = int(d[i]) + (-half if at_low_edge else half)
    return AOQL(value=float(vals[i]), at=float(d[i] / N), count=int(d[i]),
                model="hypergeometric", formula=formula, lot_size=N)


def aoql(plan, scope: Scope, model: str | None = None, formula: str = "screened") -> AOQL:
    """Average outgoing quality limit of ``plan`` and where it occurs.

    Parameters
    ----------
    plan
        Any plan object with ``pa`` (and ``pa_count`` for a finite lot).
    scope : Scope
        With ``lot_size`` for the ``(N - n)/N`` factor and the
        hypergeometric model; without, the large-lot limit ``max p Pa(p)``.
    model : str, optional
        Default the scope's exact model.
    formula : {'screened', 'simple'}

    Returns
    -------
    AOQL
    """
    check_formula(formula, "formula")
    model = scope.check_model(model)
    if plan.imperfect_screening:
        return aoq_peak(plan, scope, model, formula)
    if model == "hypergeometric":
        return _aoql_counts(plan, scope, formula)
    return _aoql_continuous(plan, model, scope, formula)


def _first_peak(vals) -> int:
    """Index of the first local maximum of a sequence."""
    vals = np.asarray(vals, dtype=float)
    down = np.flatnonzero(np.diff(vals) < 0)
    return int(down[0]) if down.size else len(vals) - 1


def aoq_peak(plan, scope: Scope, model: str, formula: str = "screened") -> AOQL:
    """The AOQL of a plan whose screening misses nonconforming items: the first peak
    of the AOQ curve over the levels the plan sentences (up to where ``Pa`` has
    fallen to 1e-9). Beyond them nearly every lot is screened and the AOQ rises
    again towards ``e2 p`` (the miss rate times the incoming quality), which the
    report states separately."""
    top = _top_level(plan, model, scope)
    if model == "hypergeometric":
        N = int(scope.lot_size)
        dmax = int(min(N, math.ceil(top * N)))
        d = np.unique(np.linspace(0, dmax, min(dmax + 1, _GRID + 1)).round())
        vals = np.asarray(aoq_count(plan, d, scope, formula), dtype=float)
        i = _first_peak(vals)
        fine = np.arange(d[max(i - 1, 0)], d[min(i + 1, len(d) - 1)] + 1, dtype=float)
        fv = np.asarray(aoq_count(plan, fine, scope, formula), dtype=float)
        j = _first_peak(fv)
        return AOQL(value=float(fv[j]), at=float(fine[j] / N), count=int(fine[j]),
                    model=model, formula=formula, lot_size=N)
    grid = np.linspace(0.0, top, _GRID + 1)
    vals = np.asarray(aoq(plan, grid, model, scope, formula), dtype=float)
    i = _first_peak(vals)
    if i == len(grid) - 1:
        return AOQL(value=float(vals[i]), at=float(grid[i]), model=model, formula=formula,
                    lot_size=scope.lot_size)
    f = plan.aoq_function(model, scope, formula=formula)
    x, fx = brent_max(f, float(grid[max(i - 1, 0)]), float(grid[i + 1]))
    if fx < vals[i]:
        x, fx = float(grid[i]), float(vals[i])
    return AOQL(value=float(fx), at=float(x), model=model, formula=formula,
                lot_size=scope.lot_size)


# --- vectorised AOQL of many single plans (used by the least-inspection designer) -

def aoql_single_many(n, c, model: str, lot_size: int, formula: str = "screened",
                     rounds: int = 9, points: int = 33):
    """AOQL of the single plans ``(n[k], c[k])`` at once, for a lot of ``lot_size``.

    Continuous models: successive grids of ``points`` levels, each spanning
    two steps of the previous one around its maximum (valid because the AOQ
    curve is unimodal), ``rounds`` times: the bracket shrinks 16-fold per
    round. Hypergeometric: a window of whole counts around the binomial
    peak, moved until its maximum is interior. Returns ``(aoql, level)``
    arrays.
    """
    n = np.atleast_1d(np.asarray(n, dtype=float))
    c = np.atleast_1d(np.asarray(c, dtype=float))
    n, c = np.broadcast_arrays(n, c)
    N = float(lot_size)
    per_unit_model = model == "poisson"
    if model == "hypergeometric":
        return _aoql_many_counts(n, c, int(lot_size), formula)
    if per_unit_model:
        top = special.gammainccinv(c + 1.0, _PA_FLOOR) / n
    else:
        top = np.where(c >= n, 1.0, special.betainccinv(c + 1.0, np.maximum(n - c, 1.0),
                                                         _PA_FLOOR))
    factor = np.ones_like(n) if formula == "simple" else (N - n) / N
    kern = oc.pa_poisson if per_unit_model else oc.pa_binomial

    def f(ps):
        pa = np.asarray(kern(n[:, None], c[:, None], ps), dtype=float)
        return ps * pa * factor[:, None]

    lo = np.zeros_like(n)
    hi = top.copy()
    t = np.linspace(0.0, 1.0, points)
    best_p = np.zeros_like(n)
    best_v = np.zeros_like(n)
    for _ in range(rounds):
        ps = lo[:, None] + (hi - lo)[:, None] * t[None, :]
        vals = f(ps)
        i = np.argmax(vals, axis=1)
        rows = np.arange(len(n))
        v = vals[rows, i]
        better = v >= best_v
        best_v = np.where(better, v, best_v)
        best_p = np.where(better, ps[rows, i], best_p)
        step = (hi - lo) / (points - 1)
        lo, hi = (np.maximum(ps[rows, i] - step, 0.0),
                  np.minimum(ps[rows, i] + step, top if per_unit_model else
                             np.minimum(top, 1.0)))
    return best_v, best_p


def _aoql_many_counts(n, c, N, formula):
    cont_v, cont_p = aoql_single_many(n, c, "binomial", N, formula)
    rows = np.arange(len(n))
    if N + 1 <= _ALL_COUNTS:
        d = np.arange(0, N + 1, dtype=float)[None, :]
        vals = _hyper_aoq_grid(n, c, N, d, formula)
        i = np.argmax(vals, axis=1)
        return vals[rows, i], d[0, i] / N
    centre = np.round(cont_p * N)
    half = _WINDOW // 2
    best_v = np.zeros(len(n))
    best_d = np.zeros(len(n))
    todo = rows.copy()
    while todo.size:
        lo = np.clip(centre[todo] - half, 0, max(N - _WINDOW, 0))
        d = lo[:, None] + np.arange(_WINDOW + 1)[None, :]
        d = np.minimum(d, N)
        vals = _hyper_aoq_grid(n[todo], c[todo], N, d, formula)
        i = np.argmax(vals, axis=1)
        r = np.arange(todo.size)
        best_v[todo] = vals[r, i]
        best_d[todo] = d[r, i]
        low_edge = (i == 0) & (lo > 0)
        high_edge = (i == _WINDOW) & (d[:, -1] < N)
        move = low_edge | high_edge
        centre[todo] = np.where(low_edge, d[r, i] - half + 1,
                                np.where(high_edge, d[r, i] + half - 1, centre[todo]))
        todo = todo[move]
    return best_v, best_d / N


def _hyper_aoq_grid(n, c, N, d, formula):
    nn = n[:, None]
    cc = c[:, None]
    if formula == "simple":
        return d / N * np.asarray(oc.pa_hypergeometric(nn, cc, N, d), dtype=float)
    return aoq_hyper_single(nn, cc, N, d)


# --- report -----------------------------------------------------------------------

def rectifying_summary(plan, scope: Scope, model: str, targets=None,
                       formula: str = "screened") -> dict:
    """The rectifying-inspection part of a check report (JSON-ready).

    Top-level keys, under ``model`` (the model the plan is judged by):
    ``aoql``, ``aoql_p`` (the level where it occurs) and ``ati`` with the ATI
    at the AQL and at the RQL (``{"aql", "rql"}``, at the same conservative
    whole counts as the risks under the hypergeometric model). ``rectifying``
    holds the formula, the AOQL count and the same figures under every model
    that applies.
    """
    check_formula(formula, "formula")
    N = _need_lot(scope, "rectifying inspection")
    per_model = {}
    for m in scope.models:
        a = aoql(plan, scope, m, formula)
        entry = a.as_dict()
        del entry["model"], entry["formula"]
        if targets is not None:
            entry["ati"] = _ati_at_targets(plan, scope, m, targets)
        per_model[m] = entry
    main = per_model[model]
    expression = FORMULA_TEXT[formula]
    if formula == "screened":
        expression = (expression.split("; finite lot:")[0]
                      + f"; finite lot: {plan.finite_aoq_text})")
    out = {
        "aoql": main["aoql"],
        "aoql_p": main["aoql_p"],
        "rectifying": {
            "lot_size": N,
            "formula": formula,
            "aoq_expression": expression,
            "ati_expression": "ATI = n + (1 - Pa)(N - n)",
            "model": model,
            "models": per_model,
        },
    }
    if "aoql_count" in main:
        out["rectifying"]["aoql_count"] = main["aoql_count"]
    if targets is not None:
        out["ati"] = main["ati"]
    return out


def _ati_at_targets(plan, scope: Scope, model: str, targets) -> dict:
    N = scope.lot_size
    if model == "hypergeometric":
        d1 = oc.lot_count(targets.aql, N, "up")
        d2 = oc.lot_count(targets.rql, N, "down")
        return {"aql": float(ati_count(plan, d1, scope)), "rql": float(ati_count(plan, d2, scope))}
    return {"aql": float(ati(plan, targets.aql, model, scope)),
            "rql": float(ati(plan, targets.rql, model, scope))}


def render_rectifying(rep: dict, per_unit: bool = False) -> str:
    """Terminal lines for the keys added by :func:`rectifying_summary`."""
    r = rep["rectifying"]
    N = r["lot_size"]
    lines = [f"  Rectifying inspection (rejected lots of {N} screened 100 %):"]
    text = r["aoq_expression"]
    if "; finite lot:" in text:
        head, _, tail = text.partition("; finite lot:")
        lines += [f"    {head})", f"    finite lot, exact: {tail.strip()[:-1]}"]
    else:
        lines.append(f"    {text}")
    lines.append("    ATI = n + (1 - Pa)(N - n)")
    rows = []
    for m, e in r["models"].items():
        mark = " *" if m == r["model"] else ""
        where = format_level(e["aoql_p"], per_unit)
        if "aoql_count" in e:
            where += f" ({e['aoql_count']} in the lot)"
        row = [m + mark, format_outgoing(e["aoql"], per_unit), where]
        if "ati" in e:
            row += [f"{e['ati']['aql']:,.1f}", f"{e['ati']['rql']:,.1f}"]
        rows.append(row)
    from lotwise.analysis.report import table

    header = ["model", "AOQL", "at quality"]
    if "ati" in rep:
        header += ["ATI at AQL", "ATI at RQL"]
    lines.append(table(rows, header, indent="    "))
    miss = (rep.get("inspection_error") or {}).get("miss_rate", 0.0)
    if miss > 0:  # imperfect screening: the AOQ rises again beyond its first peak
        lines.append(f"    - Over the levels the plan sentences the outgoing quality averages "
                     f"at most {format_outgoing(rep['aoql'], per_unit)} (the AOQL), reached "
                     f"when lots arrive at {format_level(rep['aoql_p'], per_unit)}; screening "
                     f"that misses {format_pct(miss)} of nonconforming items lets worse "
                     "incoming quality out in proportion.")
    else:
        lines.append(f"    - Whatever the incoming quality, the outgoing quality averages no "
                     f"worse than {format_outgoing(rep['aoql'], per_unit)} (the AOQL), reached "
                     f"when lots arrive at {format_level(rep['aoql_p'], per_unit)}.")
    if "ati" in rep:
        lines.append(f"    - Items inspected per lot of {N}: {rep['ati']['aql']:,.1f} on average "
                     f"at the AQL, {rep['ati']['rql']:,.1f} at the RQL.")
    lines.append("    - The AOQL is an average over many lots: any single accepted lot may be "
                 "worse. Critical characteristics need 100 % inspection or stricter plans as "
                 "contracts and regulations require.")
    return "\n".join(lines)


def format_outgoing(x: float, per_unit: bool) -> str:
    """An outgoing quality (AOQ, AOQL) as printed: per unit, or a percentage."""
    return level(x, True, 4) if per_unit else format_pct(x, 4)


# --- the quality grid figures are drawn on ---------------------------------------

def curve_grid(plan, scope: Scope, max_p=None, points: int = 401):
    """``points`` quality levels from 0 to ``max_p`` for AOQ and ATI curves.

    Without ``max_p`` the grid ends at the smaller of the level where ``Pa``
    has fallen to 1e-9 (beyond the AOQ peak) and 1.1 times the level where
    ``Pa`` is 0.002 (Poisson for nonconformities, else binomial); at most 1
    for fractions.

    The figures in :mod:`lotwise.documents.plots.rectifying` are drawn on it.
    """
    if max_p is None:
        top = _top_level(plan, scope.exact_model if scope.exact_model != "hypergeometric"
                         else "binomial", scope)
        from lotwise.analysis.audit import quality_at

        q = quality_at(plan, 0.002, "poisson" if scope.per_unit else "binomial", scope,
                       "consumer")
        max_p = min(top, q * 1.1) if q > 0 else top
        if not scope.per_unit:
            max_p = min(max_p, 1.0)
    return np.linspace(0.0, max_p, points)
