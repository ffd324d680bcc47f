"""Accept-on-zero (c = 0) plans: their design, their producer's risk, and the
c = 0 plan equivalent to a given plan.

A c = 0 plan rejects a lot on the first nonconforming item found. For a given
RQL and consumer's risk it needs the fewest samples of all single plans, but
its OC curve falls from the very start: lots of good quality are rejected far
more often than under a plan with ``c > 0``. Customers who demand "accept on
zero" and suppliers who carry that risk should both see it, so
:func:`design_zero` always reports the producer's risk (at the AQL when one
is given, and the quality a lot must have to be accepted 95 % of the time).

:func:`zero_equivalent` answers the auditor's question "which c = 0 plan
protects like this one?": it takes the given plan's consumer's quality level
``p_beta`` (where its ``Pa`` equals ``beta``; under the hypergeometric model
the smallest whole count accepted at most ``beta`` of the time) and returns
the smallest c = 0 plan with ``Pa(p_beta) <= beta``: the same RQL point.
What is gained (fewer samples) and lost (producer's risk) is reported side
by side and drawn with
:func:`lotwise.documents.plots.zero.equivalent_figure`.

The design reuses the integer search of
:func:`lotwise.families.single.design_single` with ``c`` fixed at 0, without
its producer's-risk requirement.

References
----------
.. [1] N. L. Squeglia, *Zero Acceptance Number Sampling Plans*, 5th ed., ASQ
   Quality Press, 2008 (the case for and against c = 0 plans).
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 5.

Examples
--------
A medical-device maker's customer asks for accept-on-zero at an RQL of 5 %
with 10 % consumer's risk; the supplier's AQL is 1 %:

>>> z = design_zero(rql=0.05, beta=0.10, aql=0.01)
>>> z.n, round(z.producers_risk, 3)
(45, 0.364)

The c = 0 plan that protects like "sample 125, accept on 3":

>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> e = zero_equivalent(SinglePlan(n=125, c=3), Scope())
>>> e.zero_plan.n
43
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import InputError, Infeasible, format_level, format_pct

__all__ = ["ZeroDesign", "ZeroEquivalent", "design_zero", "zero_equivalent",
           "quality_level", "SAFETY"]

SAFETY = ("Sampling cannot guarantee a lot free of nonconforming items, even with c = 0; "
          "critical characteristics need 100 % inspection or stricter plans as contracts and "
          "regulations require. Defer to your applicable standards and qualified quality "
          "professionals.")

_TOL = 1e-12


def quality_level(plan, prob: float, model: str, scope: Scope, side: str = "consumer") -> float:
    """Quality level where ``Pa`` of any plan equals ``prob`` under ``model``:
    :func:`lotwise.analysis.audit.quality_at` (kept under this name for callers)."""
    from lotwise.analysis.audit import quality_at

    return quality_at(plan, prob, model, scope, side)


def _pa(plan, level, model, scope, rounding):
    if model == "hypergeometric":
        from lotwise.core import kernels as oc

        d = oc.lot_count(level, scope.lot_size, rounding)
        return float(plan.pa_count(d, scope)), d
    return float(plan.pa(level, model, scope)), None


@dataclass(frozen=True, kw_only=True)
class ZeroDesign:
    """Result of :func:`design_zero`.

    Attributes
    ----------
    plan : SinglePlan
        The c = 0 plan (``n = N`` means 100 % inspection).
    model, scope
    rql, beta : float
    aql, alpha : float or None
        The AQL against which the producer's risk is shown (optional).
    producers_risk : float or None
        ``1 - Pa(AQL)`` under ``model``.
    producer_quality : float
        The quality level accepted ``1 - alpha`` of the time.
    full_inspection : bool
    models : dict
        ``Pa`` and risks under every model that applies.
    """

    plan: SinglePlan
    model: str
    scope: Scope
    rql: float
    beta: float
    aql: float | None = None
    alpha: float = 0.05
    producers_risk: float | None = None
    producer_quality: float
    full_inspection: bool = False
    models: dict = field(default_factory=dict)

    @property
    def n(self) -> int:
        return self.plan.n

    def report(self) -> dict:
        t = {"rql": self.rql, "beta": self.beta}
        if self.aql is not None:
            t.update({"aql": self.aql, "alpha": self.alpha})
        return {
            "scheme": "single", "n": self.plan.n, "c": 0, "r": 1, "model": self.model,
            "lot_size": self.scope.lot_size, "per_unit": self.scope.per_unit,
            "targets": t, "models": self.models,
            "producers_risk": self.producers_risk,
            "producer_quality": self.producer_quality,
            "full_inspection": self.full_inspection, "feasible": True,
            "meets": bool(self.models[self.model]["meets"]),
            "statements": self.statements(),
        }

    def statements(self) -> list[str]:
        pu = self.scope.per_unit
        lv = lambda x: format_level(x, pu)  # noqa: E731
        m = self.models[self.model]
        out = []
        if self.full_inspection:
            out.append(f"No sample smaller than the lot of {self.scope.lot_size} meets the "
                       "consumer's risk with c = 0: inspect every item.")
        out.append(f"Accept on zero: inspect {self.plan.n}, reject the lot on the first "
                   "nonconforming item found.")
        out.append(f"Lots at the RQL {lv(self.rql)} are accepted {format_pct(m['pa_rql'])} of "
                   f"the time (consumer's risk target {format_pct(self.beta)}).")
        if self.producers_risk is not None:
            out.append(f"PRODUCER'S RISK: lots at the AQL {lv(self.aql)} are rejected "
                       f"{format_pct(self.producers_risk)} of the time "
                       f"(target {format_pct(self.alpha)}"
                       f"{', NOT met' if self.producers_risk > self.alpha + _TOL else ', met'}).")
        out.append(f"To be accepted {format_pct(1 - self.alpha)} of the time a lot must be at "
                   f"{lv(self.producer_quality)} or better.")
        out.append(SAFETY)
        return out


def design_zero(*, rql: float, beta: float = 0.10, lot_size: int | None = None,
                model: str | None = None, per_unit: bool = False, aql: float | None = None,
                alpha: float = 0.05, max_n: int | None = None) -> ZeroDesign:
    """The smallest c = 0 plan with ``Pa(RQL) <= beta``.

    Parameters
    ----------
    rql, beta : float
        Rejectable quality level and consumer's risk.
    lot_size : int, optional
        With a lot size the model defaults to hypergeometric (the RQL rounded
        down to a whole count) and ``n`` never exceeds the lot: ``n = N`` is
        100 % inspection.
    model : str, optional
    per_unit : bool
    aql, alpha : float, optional
        Show the producer's risk at this AQL (it is reported, not imposed).
    max_n : int, optional
        Largest affordable sample.
    """
    from lotwise.analysis import audit
    from lotwise.core.types import Targets
    from lotwise.core.search import MAX_SAMPLE, MIN_LEVEL, Kernel, n_min

    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    model = scope.check_model(model)
    if rql < MIN_LEVEL and lot_size is None:
        raise Infeasible(f"the RQL ({format_level(rql, per_unit)}) is below {MIN_LEVEL:g}: a c = 0 "
                         f"sample meeting the consumer's risk would need more than "
                         f"{MAX_SAMPLE:.0e} units; state the level in a coarser unit (for "
                         "example per million) or inspect every item",
                         {"rql": rql, "min_level": MIN_LEVEL})
    if aql is not None and not aql < rql:
        raise Infeasible(f"the RQL ({format_level(rql, per_unit)}) must be above the AQL "
                         f"({format_level(aql, per_unit)})", {"aql": aql, "rql": rql})
    if max_n is not None and max_n < 1:
        raise InputError(f"--max-n ({max_n}) must be at least 1")
    kernel = Kernel(model, Targets(aql=aql or 0.0, rql=rql, alpha=alpha, beta=beta), scope)
    if model == "hypergeometric" and kernel.d2 < 1:
        raise Infeasible(f"the RQL ({format_level(rql)}) rounds down to no nonconforming item "
                         f"in a lot of {lot_size}: such a lot is always accepted",
                         {"lot_counts": {"rql": kernel.d2}})
    cap = max_n
    if lot_size is not None:
        cap = lot_size if cap is None else min(cap, lot_size)
    nm = int(n_min(kernel, np.array([0]), beta, cap)[0])
    full = False
    if nm < 0:
        if lot_size is not None and (max_n is None or max_n >= lot_size):
            nm, full = int(lot_size), True
        else:
            raise Infeasible(f"no c = 0 plan with n <= {cap or MAX_SAMPLE:,}"
                             + (" (--max-n)" if max_n is not None else "")
                             + " meets the consumer's "
                             f"risk {format_pct(beta)} at the RQL {format_level(rql, per_unit)}",
                             {"n": cap, "c": 0})
    plan = SinglePlan(n=nm, c=0)
    full = full or (lot_size is not None and nm >= lot_size)
    models = {}
    for m in scope.models:
        pr, dr = _pa(plan, rql, m, scope, "down")
        e = {"pa_rql": pr, "beta": pr, "meets_beta": bool(pr <= beta + _TOL)}
        if aql is not None:
            pq, dq = _pa(plan, aql, m, scope, "up")
            e.update({"pa_aql": pq, "alpha": 1.0 - pq,
                      "meets_alpha": bool(1.0 - pq <= alpha + _TOL)})
            if dq is not None:
                e["lot_counts"] = {"aql": dq, "rql": dr}
        elif dr is not None:
            e["lot_counts"] = {"rql": dr}
        e["meets"] = e["meets_beta"] and e.get("meets_alpha", True)
        models[m] = e
    risk = models[model]["alpha"] if aql is not None else None
    pq = audit.quality_at(plan, 1.0 - alpha, model, scope, "producer")
    return ZeroDesign(plan=plan, model=model, scope=scope, rql=rql, beta=beta, aql=aql,
                      alpha=alpha, producers_risk=risk, producer_quality=pq,
                      full_inspection=full, models=models)


@dataclass(frozen=True, kw_only=True)
class ZeroEquivalent:
    """Result of :func:`zero_equivalent`.

    Attributes
    ----------
    plan
        The plan given.
    zero_plan : SinglePlan
        The smallest c = 0 plan accepting lots at ``point`` at most ``beta``
        of the time.
    model, scope, beta
    point : float
        The given plan's consumer's quality level (``Pa = beta``).
    point_count : int or None
        The same as a whole count in the lot (hypergeometric model).
    pa_point : dict
        ``{"plan", "zero_plan"}``: ``Pa`` of both at ``point``.
    level : float
        Where the producer's side is compared: the AQL if given, else the
        given plan's producer's quality level (``Pa = 1 - alpha``).
    level_kind : {'aql', 'plan_producer_quality'}
    pa_level : dict
        ``{"plan", "zero_plan"}``: ``Pa`` of both at ``level``.
    """

    plan: object
    zero_plan: SinglePlan
    model: str
    scope: Scope
    beta: float
    alpha: float
    point: float
    point_count: int | None
    pa_point: dict
    level: float
    level_kind: str
    level_count: int | None
    pa_level: dict

    def sample_sizes(self) -> dict:
        n = self.plan.max_sample
        return {"plan": n, "zero_plan": self.zero_plan.n}

    def report(self) -> dict:
        sizes = self.sample_sizes()
        out = {
            "plan": self.plan.to_dict(),
            "zero_plan": self.zero_plan.to_dict(),
            "model": self.model, "lot_size": self.scope.lot_size,
            "per_unit": self.scope.per_unit, "beta": self.beta,
            "rql_point": self.point,
            "pa_at_rql_point": self.pa_point,
            "comparison_level": self.level,
            "comparison_level_kind": self.level_kind,
            "pa_at_comparison_level": self.pa_level,
            "producers_risk": {k: 1.0 - v for k, v in self.pa_level.items()},
            "sample_sizes": sizes,
            "sample_saving": (sizes["plan"] - sizes["zero_plan"]
                              if sizes["plan"] is not None else None),
            "statements": self.statements(),
        }
        if self.point_count is not None:
            out["lot_counts"] = {"rql_point": self.point_count,
                                 "comparison_level": self.level_count}
        return out

    def statements(self) -> list[str]:
        pu = self.scope.per_unit
        lv = lambda x: format_level(x, pu)  # noqa: E731
        z, p = self.zero_plan, self.plan
        sizes = self.sample_sizes()
        lab = p.label
        what = "the AQL" if self.level_kind == "aql" else \
            f"the quality {lab} accepts {format_pct(1 - self.alpha)} of the time"
        out = [f"{lab} accepts lots at {lv(self.point)} {format_pct(self.pa_point['plan'])} of "
               f"the time; the c = 0 plan n = {z.n} gives the same protection there "
               f"({format_pct(self.pa_point['zero_plan'])})."]
        if sizes["plan"] is not None:
            diff = sizes["plan"] - z.n
            out.append(f"Gain: {abs(diff)} {'fewer' if diff >= 0 else 'more'} items to inspect "
                       f"per lot ({z.n} instead of {sizes['plan']}).")
        out.append(f"Loss: at {what} ({lv(self.level)}) the c = 0 plan rejects "
                   f"{format_pct(1 - self.pa_level['zero_plan'])} of lots instead of "
                   f"{format_pct(1 - self.pa_level['plan'])}.")
        out.append(SAFETY)
        return out


def zero_equivalent(plan, scope: Scope, model: str | None = None, *, beta: float = 0.10,
                    aql: float | None = None, alpha: float = 0.05) -> ZeroEquivalent:
    """The c = 0 plan with the same RQL point as ``plan``.

    Parameters
    ----------
    plan
        Any plan object (single, chain, ...; see :mod:`lotwise.families.base`).
    scope : Scope
    model : str, optional
        Default the scope's exact model.
    beta : float
        The consumer's risk defining the RQL point.
    aql : float, optional
        Compare the producer's side here; default the given plan's own
        producer's quality level (``Pa = 1 - alpha``).
    alpha : float
    """
    from lotwise.core.types import Targets
    from lotwise.core.search import Kernel, n_min

    model = scope.check_model(model)
    point = quality_level(plan, beta, model, scope, "consumer")
    if not point > 0:
        raise Infeasible(f"{plan.label} accepts no lot even at 0 nonconforming "
                         f"more often than {format_pct(beta)}", {})
    kernel = Kernel(model, Targets(aql=0.0, rql=point, alpha=alpha, beta=beta), scope)
    cap = scope.lot_size
    nm = int(n_min(kernel, np.array([0]), beta, cap)[0])
    if nm < 0:
        nm = int(scope.lot_size)
    zplan = SinglePlan(n=nm, c=0)
    pp, dp = _pa(plan, point, model, scope, "down")
    zp, _ = _pa(zplan, point, model, scope, "down")
    if aql is not None:
        level, kind = aql, "aql"
        rounding = "up"
    else:
        level = quality_level(plan, 1.0 - alpha, model, scope, "producer")
        kind, rounding = "plan_producer_quality", "down"
    pl, dl = _pa(plan, level, model, scope, rounding)
    zl, _ = _pa(zplan, level, model, scope, rounding)
    return ZeroEquivalent(plan=plan, zero_plan=zplan, model=model, scope=scope, beta=beta,
                          alpha=alpha, point=point, point_count=dp,
                          pa_point={"plan": pp, "zero_plan": zp}, level=level,
                          level_kind=kind, level_count=dl,
                          pa_level={"plan": pl, "zero_plan": zl})
