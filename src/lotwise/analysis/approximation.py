"""The Poisson verdict: how far a Poisson-based answer is from the exact one.

Printed sampling tables and nomographs rest on the Poisson approximation to
the binomial (and, for small lots, to the hypergeometric). For any plan and
targets :func:`poisson_verdict` reports

* the usual rule of thumb, ``n >= 50`` and ``n p < 5`` at the AQL and at the
  RQL (common practice, no source);
* the largest absolute difference between the Poisson OC curve and the
  exact one over the range that matters, from ``p = 0`` to the level where
  the exact ``Pa`` has fallen to 0.001, found on a fine grid and refined
  around its maximum;
* the plan a Poisson-based design would have chosen for the same targets,
  and its exact risks: does it still meet them?

For nonconformities per unit the Poisson model is the exact one and the
verdict says so.

Examples
--------
A bracket is sampled from a process with AQL 1 % and RQL 6 %; the exact
binomial plan is n = 110, c = 3, the Poisson-based one n = 112, c = 3:

>>> from lotwise.core.types import Targets
>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> v = poisson_verdict(SinglePlan(n=110, c=3), Targets(aql=0.01, rql=0.06), Scope())
>>> (v.poisson_plan.n, v.poisson_plan.c, v.poisson_plan_meets)
(112, 3, True)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from lotwise.core import search
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import Infeasible, TooCostly

__all__ = ["PoissonVerdict", "poisson_verdict", "verdict_keys", "rule_of_thumb", "max_curve_error"]


@dataclass(frozen=True, kw_only=True)
class PoissonVerdict:
    """Result of :func:`poisson_verdict`.

    Attributes
    ----------
    exact_model : str
        The model the Poisson curve is compared against.
    rule_aql, rule_rql : bool
        Whether ``n >= 50 and n p < 5`` holds at the AQL and the RQL.
    max_error : float
        Largest ``|Pa_poisson - Pa_exact|`` over the range that matters.
    max_error_at : float
        The quality level where it occurs.
    poisson_plan : SinglePlan or None
        The plan a Poisson-based design chooses (None if it finds none).
    poisson_plan_alpha, poisson_plan_beta : float or None
        Its exact risks.
    poisson_plan_meets : bool or None
        Whether it meets both targets under the exact model.
    exact_is_poisson : bool
        True for nonconformities per unit, where there is nothing to compare.
    """

    exact_model: str
    n: int
    rule_aql: bool
    rule_rql: bool
    np_aql: float
    np_rql: float
    max_error: float
    max_error_at: float
    poisson_plan: SinglePlan | None
    poisson_plan_alpha: float | None
    poisson_plan_beta: float | None
    poisson_plan_meets: bool | None
    poisson_plan_note: str = ""
    exact_is_poisson: bool = False

    def as_dict(self) -> dict:
        pd = None
        if self.poisson_plan is not None:
            pd = {**self.poisson_plan.to_dict(),
                  "alpha": self.poisson_plan_alpha, "beta": self.poisson_plan_beta,
                  "meets": self.poisson_plan_meets, "model": self.exact_model}
        return {
            "exact_model": self.exact_model,
            "exact_is_poisson": self.exact_is_poisson,
            "rule_of_thumb": {"aql": self.rule_aql, "rql": self.rule_rql,
                              "n": self.n, "np_aql": self.np_aql, "np_rql": self.np_rql},
            "max_abs_error": self.max_error,
            "max_abs_error_at": self.max_error_at,
            "poisson_design": pd,
            "note": self.poisson_plan_note,
        }

    def summary(self) -> str:
        """One paragraph for the terminal and the sheets."""
        from lotwise.core.quantities import format_level, format_pct

        if self.exact_is_poisson:
            return ("Poisson is the exact model for nonconformities per unit; "
                    "no approximation is involved.")
        rule = lambda ok: "holds" if ok else "fails"  # noqa: E731
        parts = [
            f"Rule of thumb n >= 50 and n*p < 5 (common practice): {rule(self.rule_aql)} at the "
            f"AQL (n*p = {self.np_aql:.3g}), {rule(self.rule_rql)} at the RQL "
            f"(n*p = {self.np_rql:.3g}).",
            f"Largest |Poisson - {self.exact_model}| difference in Pa: {self.max_error:.4f} at "
            f"{format_level(self.max_error_at)}.",
        ]
        if self.poisson_plan is not None:
            verdict = "meets the targets" if self.poisson_plan_meets else "does NOT meet the targets"
            parts.append(
                f"A Poisson-based design picks {self.poisson_plan.label}; under the "
                f"{self.exact_model} model it carries alpha {format_pct(self.poisson_plan_alpha)} "
                f"and beta {format_pct(self.poisson_plan_beta)}: it {verdict}.")
        elif self.poisson_plan_note:
            parts.append(self.poisson_plan_note)
        return " ".join(parts)


def rule_of_thumb(n: int, p: float) -> bool:
    """``n >= 50 and n p < 5`` (common practice, no source)."""
    return bool(n >= 50 and n * p < 5)


def max_curve_error(plan, scope: Scope, exact_model: str, points: int = search.CURVE_POINTS):
    """Largest ``|Pa_poisson - Pa_exact|`` and where, over ``[0, p_end]`` where
    the exact ``Pa`` has dropped to 0.001 (or up to 1): the grid's largest
    difference refined by the vertex of interpolating polynomials through the
    grid values around it (:func:`lotwise.core.search.interpolated_peak`,
    where degrees 4 and 6 agree to 1e-10), else by a finer grid around it
    (and always by that grid over the whole counts of a finite lot)."""
    p_end = search.curve_top(plan, exact_model, scope)  # the largest ASN's grid too

    def diff(ps):
        ps = np.asarray(ps, dtype=float)
        if exact_model == "hypergeometric":
            # Compare at the whole counts the lot can hold.
            d = np.round(ps * scope.lot_size)
            ps = d / scope.lot_size
        e = plan.pa(ps, exact_model, scope)
        a = plan.pa(ps, "poisson", scope)
        return ps, np.abs(np.asarray(a) - np.asarray(e))

    ps, err = diff(np.linspace(0.0, p_end, points))
    i = int(np.argmax(err))
    if exact_model != "hypergeometric":
        # The vertex of interpolating polynomials through the grid values around
        # the maximum, where they agree (more precise than the refined grid below).
        peak = search.interpolated_peak(ps, err, i, rtol=1e-10, at_rtol=1e-7)
        if peak is not None and peak[0] >= err[i]:
            return peak
    # Refine around the grid maximum.
    lo, hi = ps[max(i - 1, 0)], ps[min(i + 1, len(ps) - 1)]
    ps2, err2 = diff(np.linspace(lo, hi, 201))
    j = int(np.argmax(err2))
    if err2[j] > err[i]:
        return float(err2[j]), float(ps2[j])
    return float(err[i]), float(ps[i])


def poisson_verdict(plan, targets, scope: Scope, exact_model: str | None = None, *,
                    options: dict | None = None) -> PoissonVerdict:
    """Compare the Poisson approximation with the exact model for ``plan`` (any family).

    ``exact_model`` defaults to the scope's exact model (hypergeometric when
    the lot size is known, binomial otherwise). The rule of thumb is applied
    to the plan's largest sample; the Poisson-designed plan is shown for
    families whose designer is quick (``Family.poisson_redesign``).
    """
    from lotwise.analysis.audit import risks_under
    from lotwise.families.base import family_of

    exact = exact_model or scope.exact_model
    n = int(plan.max_sample)
    if exact == "poisson":
        return PoissonVerdict(exact_model="poisson", n=n, rule_aql=True, rule_rql=True,
                              np_aql=n * targets.aql, np_rql=n * targets.rql, max_error=0.0,
                              max_error_at=0.0, poisson_plan=plan, poisson_plan_alpha=None,
                              poisson_plan_beta=None, poisson_plan_meets=None,
                              exact_is_poisson=True)
    err, at = max_curve_error(plan, scope, exact)
    pplan = pa_ = pb = pm = None
    note = ""
    fam = family_of(plan)
    if fam.poisson_redesign and fam.design is not None:
        try:
            pd = fam.design(aql=targets.aql, rql=targets.rql, alpha=targets.alpha,
                            beta=targets.beta, model="poisson", **(options or {}))
            pplan = pd.plan
            if scope.lot_size and pplan.max_sample > scope.lot_size:
                note = (f"A Poisson-based design picks {pplan.label}, more than the lot of "
                        f"{scope.lot_size}: it would call for 100 % inspection.")
                pplan = None
            else:
                r = risks_under(pplan, targets, scope, exact)
                pa_, pb, pm = r.alpha, r.beta, r.meets
        except Infeasible as exc:
            note = f"A Poisson-based design finds no plan: {exc}"
        except TooCostly as exc:
            note = f"A Poisson-based design was not attempted: {exc}"
    return PoissonVerdict(exact_model=exact, n=n, rule_aql=rule_of_thumb(n, targets.aql),
                          rule_rql=rule_of_thumb(n, targets.rql), np_aql=n * targets.aql,
                          np_rql=n * targets.rql, max_error=err, max_error_at=at,
                          poisson_plan=pplan, poisson_plan_alpha=pa_, poisson_plan_beta=pb,
                          poisson_plan_meets=pm, poisson_plan_note=note)


def verdict_keys(plan, targets, scope: Scope, model: str, options: dict | None = None) -> dict:
    """The ``poisson_verdict`` and ``poisson_design`` keys of an assessment."""
    v = poisson_verdict(plan, targets, scope, options=options)
    d = v.as_dict()
    d["summary"] = v.summary()
    return {"poisson_verdict": d, "poisson_design": d["poisson_design"]}
