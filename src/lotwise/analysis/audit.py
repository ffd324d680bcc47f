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

from lotwise.core.types import Scope, lot_counts
from lotwise.families.base import ModelRisk
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import format_level, format_pct

__all__ = ["ModelRisk", "PlanQuality", "Audit", "audit_plan", "quality_at"]

_TOL = 1e-12


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
    """Risks of ``plan`` at the targets under one model (see :meth:`Plan.risks`)."""
    return plan.risks(targets, scope, model)


def quality_at(plan, prob: float, model: str, scope: Scope, side: str = "producer") -> float:
    """Quality level at which ``Pa`` equals ``prob`` under ``model`` (see
    :meth:`lotwise.families.base.Plan.quality_at`)."""
    return plan.quality_at(prob, model, scope, side)


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
    return format_level(x, scope.per_unit)


def _lots(scope: Scope) -> str:
    return "lots averaging" if scope.per_unit else "lots with"


def plain_words(a: Audit) -> list[str]:
    """Sentences such as "accepts lots with 6.5 % nonconforming 10 % of the time"."""
    t, r, q = a.targets, a.risks[a.model], a.quality
    what = "nonconformities per unit" if a.scope.per_unit else "nonconforming"
    unit = "" if a.scope.per_unit else f" {what}"
    if a.scope.per_unit:
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
