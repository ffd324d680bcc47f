"""A part's plan: one sample, one acceptance number per characteristic.

Characteristics listed in one plan file are judged on the same sample, each
with its own acceptance number and its own risks. :func:`resolve` turns a
:class:`~lotwise.planfile.PlanRequest` into a :class:`PartPlan`:

* a file that fixes ``sampling.n`` and every ``c`` is audited as it stands;
* otherwise each characteristic is designed on its own (smallest ``n``
  meeting its two risks, honouring a fixed ``c``); the common sample is the
  largest of those ``n``, and every characteristic then gets the smallest
  ``c`` meeting its producer's risk at the common ``n``. If a characteristic's
  consumer's risk is no longer met there (possible for discrete plans, if
  rare), ``n`` is raised one unit at a time until all are met, up to the cap.

Examples
--------
A casting carries a major and a minor characteristic on one sample:

>>> from lotwise.planfile import loads
>>> req = loads('''
... [part]
... id = "K-9"
... [[characteristic]]
... id = "M1"
... class = "major"
... aql = "1%"
... rql = "6%"
... [[characteristic]]
... id = "m1"
... class = "minor"
... aql = "2.5%"
... rql = "15%"
... ''')
>>> pp = resolve(req)
>>> pp.n, [r["c"] for r in pp.reports]
(110, [3, 6])
"""

from __future__ import annotations

from dataclasses import dataclass

from .design.single import design_single
from .plans import SinglePlan
from .quantities import Infeasible
from .report import single_report

__all__ = ["PartPlan", "resolve"]


@dataclass(frozen=True, kw_only=True)
class PartPlan:
    """A resolved plan file.

    Attributes
    ----------
    request : PlanRequest
    n : int or None
        The common sample size (None when no plan could be found).
    reports : list of dict
        One :func:`~lotwise.report.single_report` per characteristic, in file
        order, each with ``"characteristic"`` (id, description, class) added.
    designed : bool
        False when the file fixed the plan (an audit).
    problem : str
        Why no plan could be found, if so.
    """

    request: object
    n: int | None
    reports: list
    designed: bool
    problem: str = ""

    @property
    def meets(self) -> bool:
        return self.n is not None and all(r["meets"] for r in self.reports)

    @property
    def model(self) -> str:
        return self.reports[0]["model"] if self.reports else ""


def _with_char(rep: dict, ch) -> dict:
    rep = dict(rep)
    rep["characteristic"] = {"id": ch.id, "description": ch.description, "class": ch.klass}
    return rep


def resolve(req, *, verdict: bool = True) -> PartPlan:
    """Design (or audit) the plan a plan file asks for."""
    scope, model = req.scope, req.model
    chars = req.characteristics
    if req.fixed:
        plans = [SinglePlan(n=req.n, c=ch.c) for ch in chars]
        reps = [_with_char(single_report(p, ch.targets, scope, model, verdict=verdict), ch)
                for p, ch in zip(plans, chars)]
        _add_rectifying(reps, plans, chars, scope)
        return PartPlan(request=req, n=req.n, reports=reps, designed=False)

    cap = req.max_n
    if scope.lot_size is not None:
        cap = scope.lot_size if cap is None else min(cap, scope.lot_size)
    try:
        if req.n is not None:
            n = req.n
        else:
            n = max(design_single(aql=ch.targets.aql, rql=ch.targets.rql, alpha=ch.targets.alpha,
                                  beta=ch.targets.beta, lot_size=scope.lot_size, model=model,
                                  defects=scope.defects, c=ch.c, max_n=cap).n for ch in chars)
        while True:
            plans, short = [], None
            for ch in chars:
                t = ch.targets
                if ch.c is not None:
                    plan = SinglePlan(n=n, c=ch.c)
                    risk = single_report(plan, t, scope, model, verdict=False)
                    mr = risk["models"][risk["model"]]
                    if not mr["meets_alpha"]:
                        # A larger sample only lowers Pa at the AQL further.
                        raise Infeasible(
                            f"at the common sample n = {n}, characteristic {ch.id} with its fixed "
                            f"c = {ch.c} carries alpha {100 * mr['alpha']:.3g} % (target "
                            f"{100 * t.alpha:.3g} %); relax its AQL or inspect it on a sample "
                            "of its own")
                    if not mr["meets_beta"]:
                        short = ch
                        break
                else:
                    try:
                        plan = design_single(aql=t.aql, rql=t.rql, alpha=t.alpha, beta=t.beta,
                                             lot_size=scope.lot_size, model=model,
                                             defects=scope.defects, n=n).plan
                    except Infeasible:
                        short = ch
                        break
                plans.append(plan)
            if short is None:
                break
            if req.n is not None or (cap is not None and n >= cap):
                raise Infeasible(f"no common sample size up to {n} meets the risks of "
                                 f"characteristic {short.id}")
            n += 1
    except Infeasible as exc:
        return PartPlan(request=req, n=None, reports=[], designed=True, problem=str(exc))
    reps = [_with_char(single_report(p, ch.targets, scope, model, verdict=verdict), ch)
            for p, ch in zip(plans, chars)]
    for rep in reps:
        rep["full_inspection"] = bool(scope.lot_size and n >= scope.lot_size)
    _add_rectifying(reps, plans, chars, scope)
    return PartPlan(request=req, n=n, reports=reps, designed=True)


def _add_rectifying(reps, plans, chars, scope) -> None:
    """AOQL and ATI (rejected lots screened 100 %) when the lot size is known."""
    if not scope.lot_size or scope.defects:
        return
    from .rectifying import rectifying_summary

    for rep, plan, ch in zip(reps, plans, chars):
        if plan.n < scope.lot_size:
            rep.update(rectifying_summary(plan, scope, rep["model"], ch.targets))
