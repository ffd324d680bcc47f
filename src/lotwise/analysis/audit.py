"""What a plan really guarantees: risks at the targets, its own quality
levels, and the same said in plain words.

:func:`audit_plan` evaluates a plan at the agreed AQL and RQL under every
model that applies to the scope (hypergeometric when the lot size is known,
binomial, Poisson) and finds the plan's own quality levels under the model
it is judged by:

* the *producer's quality level*, where ``Pa = 1 - alpha`` (the AQL the plan
  really protects),
* the *indifference quality*, where ``Pa = 0.50``,
* the *consumer's quality level*, where ``Pa = beta`` (the RQL it really
  gives).

Under the binomial and Poisson models these are exact inversions of the
incomplete beta and gamma functions. Under the hypergeometric model ``Pa``
is a step function of the whole count ``D`` of nonconforming items, and the
levels are reported conservatively: the largest ``D/N`` still accepted with
at least ``1 - alpha`` (producer), the smallest ``D/N`` accepted at most half
the time (indifference) and at most ``beta`` of the time (consumer).

Examples
--------
A supplier quotes "sample 80, accept on 2" against AQL 1 % and RQL 5 %:

>>> from lotwise.core.types import Targets
>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> a = audit_plan(SinglePlan(n=80, c=2), Targets(aql=0.01, rql=0.05), Scope())
>>> a.meets, round(a.risks["binomial"].beta, 3)
(False, 0.231)
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.types import Scope, lot_counts
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import format_level, format_pct

__all__ = ["ModelRisk", "PlanQuality", "Audit", "audit_plan", "quality_at"]

_TOL = 1e-12


@dataclass(frozen=True, kw_only=True)
class ModelRisk:
    """Acceptance probabilities and risks of one plan under one model."""

    model: str
    pa_aql: float
    pa_rql: float
    alpha: float
    beta: float
    meets_alpha: bool
    meets_beta: bool
    count_aql: int | None = None
    count_rql: int | None = None

    @property
    def meets(self) -> bool:
        return self.meets_alpha and self.meets_beta

    def as_dict(self) -> dict:
        d = {"pa_aql": self.pa_aql, "pa_rql": self.pa_rql, "alpha": self.alpha,
             "beta": self.beta, "meets": self.meets, "meets_alpha": self.meets_alpha,
             "meets_beta": self.meets_beta}
        if self.count_aql is not None:
            d["lot_counts"] = {"aql": self.count_aql, "rql": self.count_rql}
        return d


@dataclass(frozen=True, kw_only=True)
class PlanQuality:
    """The plan's own quality levels (fractions, or per unit), under ``model``."""

    model: str
    producer: float
    indifference: float
    consumer: float
    probabilities: tuple[float, float, float]

    def as_dict(self) -> dict:
        return {"producer": self.producer, "indifference": self.indifference,
                "consumer": self.consumer}


@dataclass(frozen=True, kw_only=True)
class Audit:
    """Everything an auditor asks of a plan against agreed targets.

    Attributes
    ----------
    plan, targets, scope, model
        What was judged, against what, in which scope, under which model.
    risks : dict of str to ModelRisk
        One entry per applicable model, exact model first.
    meets : bool
        The plan meets both risks under ``model``.
    quality : PlanQuality
        The plan's own quality levels under ``model``.
    """

    plan: SinglePlan
    targets: object
    scope: Scope
    model: str
    risks: dict = field(default_factory=dict)
    quality: PlanQuality | None = None

    @property
    def meets(self) -> bool:
        return self.risks[self.model].meets

    def statements(self) -> list[str]:
        """Plain-words sentences for reports and sheets."""
        return plain_words(self)


def risks_under(plan, targets, scope: Scope, model: str) -> ModelRisk:
    """Risks of ``plan`` at the targets under one model (conservative lot counts)."""
    ca = cr = None
    if model == "hypergeometric":
        ca = oc.lot_count(targets.aql, scope.lot_size, "up")
        cr = oc.lot_count(targets.rql, scope.lot_size, "down")
        pa_aql = float(plan.pa_count(ca, scope))
        pa_rql = float(plan.pa_count(cr, scope))
    else:
        pa_aql = float(plan.pa(targets.aql, model, scope))
        pa_rql = float(plan.pa(targets.rql, model, scope))
    alpha = 1.0 - pa_aql
    return ModelRisk(model=model, pa_aql=pa_aql, pa_rql=pa_rql, alpha=alpha, beta=pa_rql,
                     meets_alpha=bool(alpha <= targets.alpha + _TOL),
                     meets_beta=bool(pa_rql <= targets.beta + _TOL),
                     count_aql=ca, count_rql=cr)


def quality_at(plan: SinglePlan, prob: float, model: str, scope: Scope,
               side: str = "producer") -> float:
    """Quality level at which ``Pa`` equals ``prob`` under ``model``.

    For the hypergeometric model, ``side='producer'`` gives the largest
    ``D/N`` with ``Pa >= prob``; any other side the smallest ``D/N`` with
    ``Pa <= prob``.
    """
    single = isinstance(plan, SinglePlan)
    if single and plan.c >= plan.n and model != "poisson":
        return 1.0  # accepts every lot
    if model != "hypergeometric":
        if not single:
            return _invert(plan, prob, model, scope)
        n, c = plan.n, plan.c
        if model == "binomial":
            return float(special.betainccinv(c + 1.0, n - c, prob))
        return float(special.gammainccinv(c + 1.0, prob)) / n
    return _count_search(plan, prob, scope, side)


def _count_search(plan, prob: float, scope: Scope, side: str) -> float:
    """Whole-count search under the hypergeometric model (Pa falls in ``D``):
    ``side='producer'`` gives the largest ``D/N`` with ``Pa >= prob``, any other
    side the smallest ``D/N`` with ``Pa <= prob``. Each pass evaluates up to 127
    counts inside the bracket in one vectorised call and keeps the
    sub-interval where ``Pa`` crosses ``prob`` (a 128-fold narrowing)."""
    N = scope.lot_size
    if side == "producer":
        good = lambda pa: pa >= prob - _TOL  # noqa: E731  (true for small D)
    else:
        good = lambda pa: pa > prob + _TOL  # noqa: E731
    if good(float(plan.pa_count(N, scope))):
        return 1.0
    if not good(float(plan.pa_count(0, scope))):
        return 0.0
    lo, hi = 0, N  # good(lo) holds, good(hi) does not
    while hi - lo > 1:
        ds = np.unique(np.linspace(lo, hi, 129).round().astype(np.int64)[1:-1])
        ds = ds[(ds > lo) & (ds < hi)]
        if not ds.size:
            break
        ok = good(np.atleast_1d(np.asarray(plan.pa_count(ds, scope), dtype=float)))
        if ok.any():
            lo = int(ds[np.flatnonzero(ok)[-1]])
        if (~ok).any():
            hi = int(ds[np.flatnonzero(~ok)[0]])
    return (lo if side == "producer" else hi) / N


def _invert(plan, prob: float, model: str, scope: Scope) -> float:
    """Quality level where ``plan.pa`` equals ``prob`` under a continuous model,
    for plan types without a closed-form inverse: ``Pa`` falls in ``p``, so each
    pass evaluates 127 levels inside the bracket in one vectorised call and
    keeps the sub-interval where ``Pa`` crosses ``prob``."""
    lo, hi = 0.0, 1.0
    if scope.defects:  # nonconformities per unit have no upper bound
        while float(plan.pa(hi, model, scope)) > prob and hi < 1e6:
            hi *= 2.0
    for _ in range(40):
        xs = np.linspace(lo, hi, 129)[1:-1]
        above = np.atleast_1d(np.asarray(plan.pa(xs, model, scope), dtype=float)) > prob
        if above.any():
            lo = float(xs[np.flatnonzero(above)[-1]])
        if (~above).any():
            hi = float(xs[np.flatnonzero(~above)[0]])
        if hi - lo <= 1e-13 * max(hi, 1e-300):
            break
    return 0.5 * (lo + hi)


def plan_quality(plan, targets, scope: Scope, model: str) -> PlanQuality:
    probs = (1.0 - targets.alpha, 0.5, targets.beta)
    return PlanQuality(
        model=model,
        producer=quality_at(plan, probs[0], model, scope, "producer"),
        indifference=quality_at(plan, probs[1], model, scope, "indifference"),
        consumer=quality_at(plan, probs[2], model, scope, "consumer"),
        probabilities=probs,
    )


def audit_plan(plan, targets, scope: Scope, model: str | None = None) -> Audit:
    """Judge ``plan`` against ``targets`` in ``scope``.

    Parameters
    ----------
    plan : SinglePlan
    targets : Targets
    scope : Scope
    model : str, optional
        The model the plan is judged by; default the exact one for the scope.
    """
    model = scope.check_model(model)
    risks = {m: risks_under(plan, targets, scope, m) for m in scope.models}
    return Audit(plan=plan, targets=targets, scope=scope, model=model, risks=risks,
                 quality=plan_quality(plan, targets, scope, model))


def _level(x: float, scope: Scope) -> str:
    return format_level(x, scope.defects)


def _lots(scope: Scope) -> str:
    return "lots averaging" if scope.defects else "lots with"


def plain_words(a: Audit) -> list[str]:
    """Sentences such as "accepts lots with 6.5 % nonconforming 10 % of the time"."""
    t, r, q = a.targets, a.risks[a.model], a.quality
    what = "nonconformities per unit" if a.scope.defects else "nonconforming"
    unit = "" if a.scope.defects else f" {what}"
    if a.scope.defects:
        lvl = lambda x: f"{x:.4g} nonconformities per unit"  # noqa: E731
    else:
        lvl = lambda x: f"{_level(x, a.scope)}{unit}"  # noqa: E731
    ok = lambda b: "met" if b else "NOT met"  # noqa: E731
    out = [
        f"Accepts {_lots(a.scope)} {lvl(t.aql)} (the AQL) {format_pct(r.pa_aql)} of the time: "
        f"producer's risk {format_pct(r.alpha)} against a target of {format_pct(t.alpha)}, "
        f"{ok(r.meets_alpha)}.",
        f"Accepts {_lots(a.scope)} {lvl(t.rql)} (the RQL) {format_pct(r.pa_rql)} of the time: "
        f"consumer's risk {format_pct(r.beta)} against a target of {format_pct(t.beta)}, "
        f"{ok(r.meets_beta)}.",
        f"The AQL it really protects: {_lots(a.scope)} {lvl(q.producer)} are accepted "
        f"{format_pct(q.probabilities[0])} of the time.",
        f"Indifference quality: {_lots(a.scope)} {lvl(q.indifference)} are accepted half "
        "the time.",
        f"The RQL it really gives: {_lots(a.scope)} {lvl(q.consumer)} are accepted "
        f"{format_pct(q.probabilities[2])} of the time.",
    ]
    if a.model == "hypergeometric":
        out.append(
            f"Lot of {a.scope.lot_size}: the AQL is taken as {r.count_aql} and the RQL as "
            f"{r.count_rql} nonconforming item(s) (rounded up and down, the conservative way "
            "for each risk).")
    return out


def oc_grid(plan, scope: Scope, models, ps) -> dict:
    """``Pa`` of ``plan`` on the grid ``ps`` under each model (for tables and
    plots). Under the hypergeometric model the grid levels are rounded to the
    nearest whole count, returned as ``'lot_count'``."""
    ps = np.asarray(ps, dtype=float)
    out = {}
    for m in models:
        out[m] = np.asarray(plan.pa(ps, m, scope, rounding="nearest"), dtype=float)
    if "hypergeometric" in models:
        out["lot_count"] = lot_counts(ps, scope.lot_size, "nearest").astype(int)
    return out
