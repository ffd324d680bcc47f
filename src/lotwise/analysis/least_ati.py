"""Least-inspection single plans for rectifying inspection (the Dodge-Romig
approach [1]_, computed exactly instead of read from tables).

Rejected lots are screened 100 %, so every plan costs on average
``ATI(p) = n + (1 - Pa(p)) (N - n)`` items per lot of ``N``. Knowing the
supplier's process average ``p_bar``, choose among the plans that give the
protection asked for the one with the smallest ``ATI(p_bar)``:

* ``constraint='rql'``: ``Pa(RQL) <= beta`` (lot-by-lot protection, the
  LTPD plans);
* ``constraint='aoql'``: ``AOQL <= L`` (average protection, the AOQL plans;
  see :mod:`lotwise.analysis.rectifying` for the AOQ formulas).

Method (exact search)
---------------------
For a fixed acceptance number ``c``:

1. The feasible sample sizes form a ray ``n >= n_min(c)``: ``Pa(RQL)``
   falls in ``n`` (see :mod:`lotwise.core.kernels`), and so does the AOQL, because
   ``AOQ(p) = p Pa(p) (N - n)/N`` falls in ``n`` at every ``p`` (both
   ``Pa`` and ``N - n`` fall; the same holds for the exact finite-lot form
   and the ``simple`` form). ``n_min(c)`` is found by integer bisection
   on ``n`` in ``[max(c, 1), N]``.
2. ``ATI = N - Pa(p_bar) (N - n)`` rises in ``n`` (``Pa`` and ``N - n``
   both fall), so the best plan with this ``c`` is ``(n_min(c), c)``.

Over ``c``: ``Pa`` rises with ``c`` at every quality level, so the
constraint gets harder and ``n_min(c)`` never decreases in ``c``. As
``ATI >= n``, once ``n_min(c)`` reaches the smallest ATI found so far no
larger ``c`` can do better, and the search stops there. Under the
hypergeometric model ``c`` also stays below the RQL count ``D2`` (with
``c >= D2`` every lot at the RQL is accepted). The search therefore visits
every acceptance number that could hold the optimum, and the plan returned
is the exact minimiser; ties on the ATI (to 1e-9 items) go to the smaller
``n``. When no sample smaller than the lot meets the constraint the answer
is 100 % inspection (``n = N``, ATI ``= N``).

Quality levels become whole counts under the hypergeometric model: the RQL
rounded down (``floor(RQL N)``, as in :func:`lotwise.families.single.design_single`)
and the process average rounded to the nearest count. Lots formed from a
process running at ``p_bar`` hold a binomial number of nonconforming
items, and a sample from such a lot is binomial: ``--model binomial`` gives
the ATI averaged over such lots.

There is no AQL among these targets. The result's ``targets`` hold
``process_average`` and ``rql``/``beta`` (or ``aoql``); its ``models``
hold, under every model that applies, ``Pa`` and the ATI at the process
average, the AOQL and where it occurs, and ``Pa`` at the RQL with the
consumer's risk.

References
----------
.. [1] H. F. Dodge and H. G. Romig, *Sampling Inspection Tables*, 2nd ed.,
   Wiley, 1959.
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 10.

Examples
--------
A plant receives lots of 100,000 fasteners from a supplier whose process
averages 0.5 % nonconforming, screens rejected lots, and wants lots at 2 %
accepted at most 10 % of the time, for the least inspection:

>>> d = design_least_ati(lot_size=100_000, process_average=0.005, rql=0.02)
>>> (d.n, d.c)
(826, 11)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from lotwise.core import kernels as oc
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import InputError, Infeasible, format_level, format_pct
from lotwise.core.types import Targets
from lotwise.core import search
from lotwise.core.search import Kernel

__all__ = ["LeastATIDesign", "design_least_ati"]

_TOL = 1e-12


@dataclass(frozen=True, kw_only=True)
class LeastATIDesign:
    """Result of :func:`design_least_ati`.

    Attributes
    ----------
    plan : SinglePlan
    model : str
        The model the plan was designed under.
    scope : Scope
    process_average : float
    constraint : {'rql', 'aoql'}
    rql, beta : float or None
        The lot-by-lot protection asked for (``constraint='rql'``).
    aoql_limit : float or None
        The AOQL asked for (``constraint='aoql'``).
    formula : str
        AOQ formula (see :mod:`lotwise.analysis.rectifying`).
    ati_process_average : float
        ATI of the plan at the process average.
    aoql : lotwise.analysis.rectifying.AOQL
        The plan's AOQL under ``model``.
    full_inspection : bool
        No sample smaller than the lot meets the constraint.
    searched : tuple of (c, n_min, ATI)
        Every acceptance number visited, with its smallest feasible ``n``
        and that plan's ATI (``n_min = -1``: none up to the lot size).
    """

    plan: SinglePlan
    model: str
    scope: Scope
    process_average: float
    constraint: str
    rql: float | None = None
    beta: float | None = None
    aoql_limit: float | None = None
    formula: str = "screened"
    ati_process_average: float
    aoql: object
    full_inspection: bool = False
    searched: tuple = ()
    aql: float | None = None
    alpha: float = 0.05

    @property
    def n(self) -> int:
        return self.plan.n

    @property
    def c(self) -> int:
        return self.plan.c

    def targets(self) -> dict:
        t = {"process_average": self.process_average}
        if self.constraint == "rql":
            t.update({"rql": self.rql, "beta": self.beta})
        else:
            t["aoql"] = self.aoql_limit
        if self.aql is not None:
            t.update({"aql": self.aql, "alpha": self.alpha})
        return t

    def report(self) -> dict:
        """JSON-ready result (see the module notes for ``targets``/``models``)."""
        return least_ati_report(self)


def _pa_at(model: str, n, c, level: float, N: int, rounding: str):
    n = np.asarray(n, dtype=float)
    if model == "hypergeometric":
        d = oc.lot_count(level, N, rounding)
        return np.asarray(oc.pa_hypergeometric(n, c, N, d), dtype=float)
    if model == "binomial":
        return np.asarray(oc.pa_binomial(n, c, level), dtype=float)
    return np.asarray(oc.pa_poisson(n, c, level), dtype=float)


def design_least_ati(*, lot_size: int, process_average: float, rql: float | None = None,
                     beta: float = 0.10, aoql: float | None = None, model: str | None = None,
                     per_unit: bool = False, formula: str = "screened",
                     aql: float | None = None, alpha: float = 0.05) -> LeastATIDesign:
    """Single plan with the smallest ATI at the process average.

    Parameters
    ----------
    lot_size : int
        Lot size ``N``.
    process_average : float
        The supplier's process average (fraction, or per unit with ``per_unit``).
    rql, beta : float
        Give these for lot-by-lot protection: ``Pa(RQL) <= beta``.
    aoql : float
        Or this for average protection: ``AOQL <= aoql``.
    model : str, optional
        Default the exact model for the scope (hypergeometric).
    per_unit : bool
        Nonconformities per unit (Poisson model).
    formula : {'screened', 'simple'}
        AOQ formula for the AOQL constraint and the report.
    aql, alpha : float, optional
        Report the producer's risk at this AQL (not imposed: the search
        minimises the ATI under the constraint alone).

    Raises
    ------
    InputError
        Malformed arguments (neither or both constraints, bad values).
    Infeasible
        The RQL rounds to no nonconforming item in the lot.
    """
    from lotwise.analysis.rectifying import aoql as plan_aoql, check_formula

    check_formula(formula, "--aoq-formula")
    if lot_size is None or lot_size < 2:
        raise InputError(f"--lot-size ({lot_size}) must be at least 2 for a least-inspection "
                         "design")
    if (rql is None) == (aoql is None):
        raise InputError("give either --rql (with --beta) or --aoql for --minimize ati")
    if not process_average > 0 or (not per_unit and not process_average < 1):
        raise InputError(f"--process-average ({process_average}) must be a fraction between "
                         "0 and 1, exclusive")
    scope = Scope(lot_size=int(lot_size), per_unit=per_unit)
    model = scope.check_model(model)
    N = int(lot_size)
    constraint = "rql" if rql is not None else "aoql"
    if aoql is not None and not aoql > 0:
        raise InputError(f"--aoql ({aoql}) must be above 0")

    n_min, c_limit = _constraint_search(constraint, model=model, scope=scope,
                                        process_average=process_average, rql=rql, beta=beta,
                                        aoql=aoql, formula=formula)
    best, searched = _scan_acceptance_numbers(n_min, c_limit, model, process_average, N)
    full = best is None
    if full:
        plan = SinglePlan(n=N, c=0)
        ati_pa = float(N)
    else:
        plan = SinglePlan(n=best[1], c=best[2])
        ati_pa = best[0]
        full = plan.n >= N
    return LeastATIDesign(plan=plan, model=model, scope=scope, process_average=process_average,
                          constraint=constraint, rql=rql,
                          beta=beta if constraint == "rql" else None, aoql_limit=aoql,
                          formula=formula, ati_process_average=ati_pa,
                          aoql=plan_aoql(plan, scope, model, formula), full_inspection=full,
                          searched=tuple(searched), aql=aql, alpha=alpha)


def _constraint_search(constraint: str, *, model: str, scope: Scope, process_average: float,
                       rql, beta, aoql, formula: str):
    """``(n_min, c_limit)``: the smallest ``n`` meeting the constraint for each
    acceptance number (``-1`` where none up to the lot size), and the first
    acceptance number that cannot work (None when unbounded)."""
    from lotwise.analysis.rectifying import aoql_single_many

    N = int(scope.lot_size)
    if constraint == "aoql":
        def n_min_aoql(cs):
            return _n_min_aoql(cs, aoql, model, N, formula, aoql_single_many)

        return n_min_aoql, None
    kernel = Kernel(model, Targets(aql=process_average, rql=rql, beta=beta), scope)
    if model == "hypergeometric" and kernel.d2 < 1:
        raise Infeasible(
            f"the RQL ({format_level(rql, scope.per_unit)}) rounds down to no nonconforming "
            f"item in a lot of {N}: every lot at the RQL is free of them and is always accepted",
            {"lot_counts": {"rql": kernel.d2}})
    c_limit = kernel.d2 if model == "hypergeometric" else None

    def n_min_rql(cs):
        return search.n_min(kernel, cs, beta, N)

    return n_min_rql, c_limit


def _scan_acceptance_numbers(n_min, c_limit, model: str, process_average: float, N: int):
    """Scan ``c = 0, 1, ...`` in growing blocks; ``(best, searched)`` with
    ``best = (ati, n, c)`` (None when no plan short of the whole lot exists)
    and ``searched`` the ``(c, n_min, ati)`` triples looked at. The scan
    stops once ``n_min(c)`` reaches the best ATI found (ATI >= n)."""
    best = None          # (ati, n, c)
    searched = []
    start, width = 0, 16
    reason = ""
    while not reason:
        stop = start + width if c_limit is None else min(start + width, c_limit)
        if stop <= start:
            reason = "c limit"
            break
        cs = np.arange(start, stop, dtype=np.int64)
        nm = np.asarray(n_min(cs), dtype=np.int64)
        have = nm >= 0
        atis = np.full(cs.shape, np.nan)
        if have.any():
            pa = _pa_at(model, nm[have], cs[have], process_average, N, "nearest")
            atis[have] = N - pa * (N - nm[have])
        for cc, nn, aa in zip(cs, nm, atis):
            if nn < 0:
                reason = "no n up to the lot size"
                break
            if best is not None and nn >= best[0] - 1e-9:
                reason = "n_min reached the best ATI"
                break
            searched.append((int(cc), int(nn), float(aa)))
            if best is None or aa < best[0] - 1e-9:
                best = (float(aa), int(nn), int(cc))
        start, width = stop, width * 2
        if c_limit is None and start > 1_000_000:
            break
    return best, searched


def _n_min_aoql(cs, limit, model, N, formula, aoql_many):
    """Smallest ``n`` with ``AOQL(n, c) <= limit`` for each ``c`` (``-1`` if none
    up to ``N``), by integer bisection: the AOQL falls in ``n``."""
    cs = np.asarray(cs, dtype=np.int64)
    hi = np.full(cs.shape, N, dtype=np.int64)
    ok = aoql_many(hi, cs, model, N, formula)[0] <= limit + _TOL
    lo = np.maximum(cs, 1) - 1  # below the smallest plan: taken as infeasible
    act = ok & (hi - lo > 1)
    while act.any():
        mid = (lo[act] + hi[act]) // 2
        good = aoql_many(mid, cs[act], model, N, formula)[0] <= limit + _TOL
        h, l_ = hi[act], lo[act]
        hi[act] = np.where(good, mid, h)
        lo[act] = np.where(good, l_, mid)
        act = ok & (hi - lo > 1)
    return np.where(ok, hi, -1)


def least_ati_report(d: LeastATIDesign) -> dict:
    """The result dictionary for ``--json``, the terminal and the sheets."""
    from lotwise.analysis.rectifying import aoql as plan_aoql, ati as plan_ati, ati_count

    scope, plan, N = d.scope, d.plan, d.scope.lot_size
    models = {}
    for m in scope.models:
        a = plan_aoql(plan, scope, m, d.formula)
        if m == "hypergeometric":
            dbar = oc.lot_count(d.process_average, N, "nearest")
            pa_bar = float(plan.pa_count(dbar, scope))
            ati_bar = float(ati_count(plan, dbar, scope))
        else:
            pa_bar = float(plan.pa(d.process_average, m, scope))
            ati_bar = float(plan_ati(plan, d.process_average, m, scope))
        e = {"pa_process_average": pa_bar, "ati_process_average": ati_bar,
             "aoql": a.value, "aoql_p": a.at}
        if a.count is not None:
            e["aoql_count"] = a.count
            e["lot_counts"] = {"process_average": oc.lot_count(d.process_average, N, "nearest")}
        if d.constraint == "rql":
            if m == "hypergeometric":
                d2 = oc.lot_count(d.rql, N, "down")
                pa_r = float(plan.pa_count(d2, scope))
                e["lot_counts"]["rql"] = d2
            else:
                pa_r = float(plan.pa(d.rql, m, scope))
            e.update({"pa_rql": pa_r, "beta": pa_r, "meets": bool(pa_r <= d.beta + _TOL)})
        else:
            e["meets"] = bool(a.value <= d.aoql_limit + _TOL)
        if d.aql is not None:
            if m == "hypergeometric":
                d1 = oc.lot_count(d.aql, N, "up")
                pa_q = float(plan.pa_count(d1, scope))
                e["lot_counts"]["aql"] = d1
            else:
                pa_q = float(plan.pa(d.aql, m, scope))
            e.update({"pa_aql": pa_q, "alpha": 1.0 - pa_q,
                      "meets_alpha": bool(1.0 - pa_q <= d.alpha + _TOL)})
        models[m] = e
    main = models[d.model]
    out = {
        "scheme": "single",
        "n": plan.n,
        "c": plan.c,
        "r": plan.r,
        "model": d.model,
        "lot_size": N,
        "per_unit": scope.per_unit,
        "minimize": "ati",
        "constraint": d.constraint,
        "process_average": d.process_average,
        "targets": d.targets(),
        "models": models,
        "meets": main["meets"],
        "feasible": True,
        "full_inspection": d.full_inspection,
        "ati_process_average": d.ati_process_average,
        "pa_process_average": main["pa_process_average"],
        "aoql": d.aoql.value,
        "aoql_p": d.aoql.at,
        "aoq_formula": d.formula,
        "searched": [{"c": c, "n": n, "ati_process_average": a} for c, n, a in d.searched],
        "statements": _statements(d, main),
    }
    return out


def _statements(d: LeastATIDesign, main: dict) -> list[str]:
    pu = d.scope.per_unit
    N = d.scope.lot_size
    lv = lambda x: format_level(x, pu)  # noqa: E731
    out = []
    if d.full_inspection:
        out.append(f"No sample smaller than the lot of {N} gives the protection asked for: "
                   "inspect every item.")
    out.append(f"At the process average {lv(d.process_average)} the plan accepts "
               f"{format_pct(main['pa_process_average'])} of lots and inspects "
               f"{d.ati_process_average:,.1f} items per lot of {N} on average (the least of "
               "all plans giving this protection).")
    if d.constraint == "rql":
        out.append(f"Lots at the RQL {lv(d.rql)} are accepted {format_pct(main['pa_rql'])} of "
                   f"the time (consumer's risk at most {format_pct(d.beta)}).")
    else:
        out.append(f"The AOQL is {format_pct(d.aoql.value, 4)} (limit {format_pct(d.aoql_limit, 4)}), "
                   f"reached when lots arrive at {lv(d.aoql.at)}.")
    if d.aql is not None:
        out.append(f"Lots at the AQL {lv(d.aql)} are rejected {format_pct(main['alpha'])} of the "
                   f"time (producer's risk; {format_pct(d.alpha)} asked, not imposed by this "
                   "design).")
    out.append("The saving rests on the supplier's process average: re-estimate it from recent "
               "lots, since a worse process means more lots screened.")
    out.append("Sampling cannot guarantee a lot free of nonconforming items; critical "
               "characteristics need 100 % inspection or stricter plans as contracts and "
               "regulations require.")
    return out
