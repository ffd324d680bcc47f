"""Any attribute plan judged by an inspection that errs: a plan wrapped with an
error model is a plan.

:class:`MisclassifiedPlan` wraps a plan of any attribute family (single,
double, multiple, sequential, chain, skip-lot) with :class:`ErrorRates`
(miss rate ``e2``, false-alarm rate ``e1``). Every figure is stated at the
**true** quality of the lot or process:

* binomial and Poisson models: the inner plan at the apparent level
  ``p_e = p (1 - e2) + (1 - p) e1`` (per unit: ``u (1 - e2) + e1``); exact,
  because each inspected unit is then an independent trial with probability
  ``p_e`` of being flagged;
* a finite lot holding ``D`` nonconforming items: the inner plan on a lot
  holding ``D'`` flagged items, averaged over ``D' = Bin(D, 1 - e2) +
  Bin(N - D, e1)`` (:func:`lotwise.core.inspection.flagged_counts`); exact for
  every plan that sentences each lot on the verdicts of its own random sample,
  whether drawn at once, in stages or unit by unit. Chain plans (whose
  acceptance also depends on earlier lots, each with its own draw) are refused
  in a finite lot with that reason; a skip-lot plan wraps its reference plan,
  which is exact.

Rectifying inspection with imperfect screening: missed nonconforming items
stay in the sample, in accepted lots (not inspected further) and in screened
rejected lots; flagged items are replaced by conforming ones. The expected
number of nonconforming items leaving with a lot is::

    E[out] = e2 D + (1 - e2) E[(D - T) 1{accept}]

(``T`` the truly nonconforming items inspected), which for a single plan
under the binomial model is the textbook
``AOQ = p [e2 n + Pa (N - n) + (1 - Pa) e2 (N - n)] / N``. In a finite lot
``E[(D - T) 1{accept}]`` is summed exactly over ``D'``: of the flagged items
left in an accepted lot a share ``E[B | D'] / D'`` is truly nonconforming, of
the unflagged ones a share ``(D - E[B | D']) / (N - D')``. ``simple`` AOQ
(large lot, the sample ignored): ``p [Pa + (1 - Pa) e2]``. The ATI counts every
unit inspected, false alarms included (they are inspected and replaced):
``ATI = ASN + (1 - Pa)(N - ASN)`` at the apparent quality.

References
----------
.. [1] N. L. Johnson, S. Kotz and R. N. Rodriguez, "Statistical effects of
   imperfect inspection sampling", Journal of Quality Technology 18 (1986).
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed., CRC Press, 2009
   (the chapter on inspection error).

Examples
--------
"Sample 80, accept on 2" when the inspector misses 20 % of nonconforming items:
a 6 % process is accepted far more often than the sheet says.

>>> from lotwise.core.types import Scope
>>> from lotwise.families.base import parse_plan
>>> plan = parse_plan("n=80,c=2")
>>> wrapped = wrap(plan, ErrorRates(miss_rate=0.2, false_alarm=0.0))
>>> round(plan.pa(0.06, "binomial", Scope()), 4), round(wrapped.pa(0.06, "binomial", Scope()), 4)
(0.1344, 0.2553)
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from lotwise.core.inspection import (ErrorRates, apparent, check_rates, flagged_counts,
                                     observed_cdf)
from lotwise.core.quantities import InputError
from lotwise.core.search import Kernel
from lotwise.core.types import AoqFormula, Scope, lot_counts, parse_choice
from lotwise.families.base import Family, Plan, family, finish, need_lot

__all__ = ["MisclassifiedPlan", "wrap", "ErrorRates", "report_keys", "refuse_options",
           "option_value", "DESIGN_TAKES"]


def wrap(plan: Plan, rates: ErrorRates | None) -> Plan:
    """``plan`` judged with ``rates``: the plan itself when there are no rates or both
    are zero (every figure is then today's), a skip-lot plan over its wrapped
    reference plan, else a :class:`MisclassifiedPlan`."""
    if rates is None or rates.zero:
        return plan
    if isinstance(plan, MisclassifiedPlan):
        plan = plan.inner
    if not plan.attribute_plan or plan.evaluation != "lot":
        raise InputError(f"--miss-rate/--false-alarm apply to attribute plans judged lot by "
                         f"lot, not to a {plan.scheme} plan"
                         + (" (use --measurement-sd for a gauge's error)"
                            if plan.evaluation == "process" else ""))
    ref, layer = plan.audit_parts()
    if layer is not None and ref is not plan:  # skip-lot: exact over the wrapped reference
        return replace(plan, reference=wrap(ref, rates))
    return MisclassifiedPlan(inner=plan, rates=rates)


@dataclass(frozen=True, kw_only=True)
class MisclassifiedPlan(Plan):
    """``inner`` sentenced on the verdicts of an inspection with ``rates``."""

    inner: Plan
    rates: ErrorRates

    #: Screening misses nonconforming items: the AOQ rises again once nearly every
    #: lot is rejected, and the AOQL is the curve's first peak.
    imperfect_screening = True

    def __post_init__(self):
        check_rates(self.rates.miss_rate, self.rates.false_alarm)

    @property
    def error_free(self) -> Plan:
        return self.inner

    # -- what the inner plan is --------------------------------------------------
    @property
    def scheme(self) -> str:  # type: ignore[override]
        return self.inner.scheme

    @property
    def varying_sample(self) -> bool:  # type: ignore[override]
        return self.inner.varying_sample

    @property
    def has_curtailment(self) -> bool:  # type: ignore[override]
        return self.inner.has_curtailment

    @property
    def lot_by_lot(self) -> bool:  # type: ignore[override]
        return self.inner.lot_by_lot

    @property
    def common_sample(self) -> bool:  # type: ignore[override]
        return self.inner.common_sample

    @property
    def finite_aoq_text(self) -> str:  # type: ignore[override]
        return ("e2 D/N + (1 - e2) E[(D - T) 1{accept}]/N, summed exactly over the flagged "
                "count D' of the lot")

    @property
    def max_sample(self) -> int:
        return self.inner.max_sample

    @property
    def label(self) -> str:
        return self.inner.label

    @property
    def short_label(self) -> str:
        return self.inner.short_label

    def notation(self) -> str:
        return self.inner.notation()

    def to_dict(self) -> dict:
        return self.inner.to_dict()

    def describe(self) -> list[str]:
        return self.inner.describe() + [f"judged    with {self.rates.describe()}"]

    def decide(self, inspected: int, found: int, *, per_unit: bool = False):
        """The bench rule counts what the inspector flags: the inner plan's rule."""
        return self.inner.decide(inspected, found, per_unit=per_unit)

    def models_for(self, scope: Scope) -> tuple[str, ...]:
        return self.inner.models_for(scope)

    def judging_model(self, scope: Scope, model: str | None = None) -> str:
        return self.inner.judging_model(scope, model)

    def check_scope(self, scope: Scope) -> None:
        self.inner.check_scope(scope)
        if scope.lot_size and not self.inner.lot_by_lot:
            raise InputError(
                f"--lot-size ({scope.lot_size}): with inspection errors a {self.scheme} plan "
                "has no exact finite-lot OC here (each earlier lot has its own misjudged "
                "count); leave out --lot-size to judge it against the process (binomial)")

    def for_scope(self, scope: Scope) -> "Plan":
        inner = self.inner.for_scope(scope)
        out = self if inner is self.inner else MisclassifiedPlan(inner=inner, rates=self.rates)
        out.check_scope(scope)
        return out

    def family_record(self) -> Family:
        """The inner plan's family, with the report keys of the inspection errors in
        place of the family's own extras (those describe the error-free plan) and
        the error-free OC beside the true one."""
        return replace(family(self.scheme, "plan"), extras=report_keys,
                       oc_columns=error_free_columns, poisson_redesign=False)

    # -- evaluation ----------------------------------------------------------------
    def _seen(self, p, scope: Scope):
        return apparent(p, self.rates.miss_rate, self.rates.false_alarm, scope.per_unit)

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """``Pa`` at true quality level(s) ``p``."""
        if model == "hypergeometric":
            N = need_lot(scope, "hypergeometric model")
            return self.pa_count(lot_counts(p, N, rounding), scope)
        return self.inner.pa(self._seen(p, scope), model, scope, rounding)

    def _mix(self, d, scope: Scope, func):
        """``E[func(D') | D = d]`` for each ``d`` (see the module notes)."""
        N = need_lot(scope, "finite-lot OC with inspection errors")
        self.check_scope(scope)
        d = np.asarray(d, dtype=float)
        flat = d.ravel().astype(np.int64)
        uniq, where = np.unique(flat, return_inverse=True)
        parts = [flagged_counts(int(x), N, self.rates.miss_rate, self.rates.false_alarm)
                 for x in uniq]
        lo = min(p[0] for p in parts)
        hi = min(N, max(p[0] + p[1].size - 1 for p in parts))
        vals = np.atleast_1d(np.asarray(func(np.arange(lo, hi + 1, dtype=float)), dtype=float))
        out = np.empty(uniq.size)
        for i, (start, pmf, _) in enumerate(parts):
            m = min(pmf.size, hi - start + 1)
            out[i] = float(np.dot(pmf[:m], vals[start - lo:start - lo + m]))
        return out[where].reshape(d.shape)

    def pa_count(self, d, scope: Scope):
        """``Pa`` for lots of ``scope.lot_size`` holding ``d`` nonconforming items: the
        inner plan's ``Pa`` averaged over the flagged count ``D'``."""
        return finish(np.clip(self._mix(d, scope, lambda k: self.inner.pa_count(k, scope)),
                              0.0, 1.0))

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        if model == "hypergeometric":
            N = need_lot(scope, "ASN")
            return self.asn_count(lot_counts(p, N, rounding), scope)
        return self.inner.asn(self._seen(p, scope), model, scope, rounding)

    def asn_count(self, d, scope: Scope):
        return finish(self._mix(d, scope, lambda k: self.inner.asn_count(k, scope)))

    def asn_curtailed(self, p, model: str, scope: Scope, rounding: str = "nearest", **kw):
        if model == "hypergeometric":
            N = need_lot(scope, "ASN")
            return finish(self._mix(lot_counts(p, N, rounding), scope,
                                    lambda k: self.inner.asn_curtailed(k / N, model, scope,
                                                                       **kw)))
        return self.inner.asn_curtailed(self._seen(p, scope), model, scope, rounding, **kw)

    def ati_count(self, d, scope: Scope):
        return finish(self._mix(d, scope, lambda k: self.inner.ati_count(k, scope)), clip=False)

    def aoq(self, p, model: str, scope: Scope, *, formula: str = "screened",
            rounding: str = "nearest"):
        """AOQ at true level(s) ``p`` with imperfect screening (module notes)."""
        formula = parse_choice(AoqFormula, formula, "formula").value
        p = np.asarray(p, dtype=float)
        e2 = self.rates.miss_rate
        if model == "hypergeometric":
            N = need_lot(scope, "hypergeometric AOQ")
            return self.aoq_count(lot_counts(p, N, rounding), scope, formula=formula)
        if not scope.lot_size or formula == "simple":
            pa = np.asarray(self.pa(p, model, scope), dtype=float)
            return finish(p * (pa + (1.0 - pa) * e2))
        pe = np.asarray(self._seen(p, scope), dtype=float)
        inner = np.asarray(self.inner.aoq(pe, model, scope, formula=formula), dtype=float)
        with np.errstate(all="ignore"):
            share = np.where(pe > 0, inner / np.where(pe > 0, pe, 1.0), 0.0)
        return finish(e2 * p + (1.0 - e2) * p * share)

    def aoq_function(self, model: str, scope: Scope, *, formula: str = "screened"):
        return lambda x: float(self.aoq(x, model, scope, formula=formula))

    def aoq_count(self, d, scope: Scope, *, formula: str = "screened"):
        """Exact finite-lot AOQ with imperfect screening (module notes)."""
        formula = parse_choice(AoqFormula, formula, "formula").value
        N = need_lot(scope, "hypergeometric AOQ")
        d = np.asarray(d, dtype=float)
        e2 = self.rates.miss_rate
        if formula == "simple":
            pa = np.asarray(self.pa_count(d, scope), dtype=float)
            return finish(d / N * (pa + (1.0 - pa) * e2))
        flat = d.ravel()
        out = np.array([self._outgoing(int(x), N, scope) for x in flat])
        return finish((e2 * flat + (1.0 - e2) * out).reshape(d.shape) / N)

    def _outgoing(self, d: int, N: int, scope: Scope) -> float:
        """``E[(D - T) 1{accept}]`` for a lot holding ``d`` nonconforming items."""
        if d == 0:
            return 0.0
        lo, pmf, bad = flagged_counts(d, N, self.rates.miss_rate, self.rates.false_alarm)
        k = lo + np.arange(pmf.size, dtype=float)
        keep = k <= N
        k, pmf, bad = k[keep], pmf[keep], bad[keep]
        flagged_left = N * np.asarray(self.inner.aoq_count(k, scope), dtype=float)  # E[(D'-X)1acc]
        unseen = N - np.asarray(self.inner.ati_count(k, scope), dtype=float)  # E[(N-n)1acc]
        with np.errstate(all="ignore"):
            share_f = np.where(k > 0, bad / np.where(k > 0, k, 1.0), 0.0)
            share_u = np.where(k < N, (d * pmf - bad) / np.where(k < N, N - k, 1.0), 0.0)
        return float(np.sum(share_f * flagged_left + share_u * (unseen - flagged_left)))


def report_keys(plan: MisclassifiedPlan, targets, scope: Scope, model: str, report: dict) -> dict:
    """The ``inspection_error`` object of a report and its sentences: the rates, the
    risks the same plan would carry with a perfect inspection, and (rates from a
    study) the risks at the upper bounds."""
    from lotwise.core.quantities import format_pct

    rates = plan.rates
    info = rates.as_dict()
    free = plan.inner.risks(targets, scope, model)
    info["error_free"] = {"pa_aql": free.pa_aql, "pa_rql": free.pa_rql,
                          "alpha": free.alpha, "beta": free.beta, "meets": free.meets}
    m = report["models"][model]
    says = [f"Inspection errors: {rates.describe()}. Every figure above is at the true "
            "quality of the lot, with the plan sentencing what the inspection flags.",
            f"With a perfect inspection the same plan would carry alpha "
            f"{format_pct(free.alpha)} and beta {format_pct(free.beta)}; with these errors "
            f"alpha is {format_pct(m['alpha'])} and beta {format_pct(m['beta'])}."]
    if "aoql" in report and rates.miss_rate > 0:
        says.append(f"Screening misses nonconforming items too: the AOQL above is the peak over "
                    "the levels the plan sentences; once nearly every lot is rejected the "
                    f"outgoing quality rises again towards {format_pct(rates.miss_rate)} of the "
                    "incoming level (the miss rate), so a very bad supplier is not cleaned up "
                    "by screening.")
    if rates.has_bounds:
        up = rates.upper()
        if 1.0 - up.miss_rate - up.false_alarm > 0:
            worst = MisclassifiedPlan(inner=plan.inner, rates=up).risks(targets, scope, model)
            info["at_upper"] = {"pa_aql": worst.pa_aql, "pa_rql": worst.pa_rql,
                                "alpha": worst.alpha, "beta": worst.beta,
                                "meets": worst.meets}
            says.append(f"At the study's upper bounds (miss rate {format_pct(up.miss_rate)}, "
                        f"false-alarm rate {format_pct(up.false_alarm)}) alpha would be "
                        f"{format_pct(worst.alpha)} and beta {format_pct(worst.beta)}"
                        + ("" if worst.meets else ": the targets are NOT met there") + ".")
        else:
            info["at_upper"] = None
            says.append("At the study's upper bounds the two rates add up to 1 or more: "
                        "inspection might carry no information; study more items.")
    return {"inspection_error": info, "statements": says}


def error_free_columns(plan: MisclassifiedPlan, ps, model: str, scope: Scope,
                       counts=None) -> dict:
    """The OC of the same plan with a perfect inspection, beside the true one; in a
    finite lot at the table's whole counts (the same lot as the exact column)."""
    if model == "hypergeometric" and counts is not None:
        return {"error_free_pa": plan.inner.pa_count(counts, scope)}
    return {"error_free_pa": plan.inner.pa(ps, model, scope, "nearest")}


# --- design -------------------------------------------------------------------------

class _SeenKernel(Kernel):
    """``Pa`` of single plans ``(n, c)`` at the true AQL and RQL with inspection errors,
    for arrays of ``n`` and ``c`` (the interface of :class:`lotwise.core.search.Kernel`).

    Binomial and Poisson: the plain kernel at the apparent levels. Finite lot: the
    flagged count of the sample in its sample form
    (:func:`lotwise.core.inspection.observed_cdf`), one CDF over every ``c`` per
    sample size and target, kept for the rest of the search.
    Both stay monotone (falling in ``n``, rising in ``c``): in the lot form a mixture of functions
    falling in ``n`` with weights free of ``n`` falls in ``n``.
    """

    def __init__(self, model: str, targets, scope: Scope, rates: ErrorRates):
        from lotwise.core.search import Kernel
        from lotwise.core.types import Targets

        self.rates = rates
        self.model = model
        self.evaluations = 0
        self.N = scope.lot_size
        self.per_unit = scope.per_unit
        seen = Targets(aql=apparent(targets.aql, rates.miss_rate, rates.false_alarm,
                                    scope.per_unit),
                       rql=apparent(targets.rql, rates.miss_rate, rates.false_alarm,
                                    scope.per_unit),
                       alpha=targets.alpha, beta=targets.beta)
        self.t = seen  # initial_upper's guess uses the RQL as inspection sees it
        self.plain = Kernel(model if model != "hypergeometric" else "binomial", seen, scope)
        if model == "hypergeometric":
            from lotwise.core.types import lot_targets

            self.d1, self.d2 = lot_targets(targets, self.N)
            self._cdfs = {}

    def at_aql(self, n, c):
        return self._pa(n, c, "aql")

    def at_rql(self, n, c):
        return self._pa(n, c, "rql")

    def _pa(self, n, c, key):
        if self.model != "hypergeometric":
            return self.plain.at_aql(n, c) if key == "aql" else self.plain.at_rql(n, c)
        n, c = np.broadcast_arrays(np.asarray(n, dtype=np.int64), np.asarray(c, dtype=np.int64))
        flat_n, flat_c = n.ravel(), c.ravel()
        out = np.ones(flat_n.size)  # c >= n accepts every sample of items
        inside = flat_c < flat_n
        if inside.any():
            self._fill(key, flat_n[inside], flat_c[inside])
            out[inside] = [self._cdfs[(key, int(nn))][int(cc)]
                           for nn, cc in zip(flat_n[inside], flat_c[inside])]
        return out.reshape(n.shape)

    def _fill(self, key: str, ns, cs) -> None:
        """Compute (in one batch) the CDFs of the flagged count for every sample size in
        ``ns`` not yet known up to the ``c`` asked for; kept for the rest of the search."""
        need = {}
        for nn, cc in zip(ns.tolist(), cs.tolist()):
            have = self._cdfs.get((key, nn))
            if have is None or have.size <= cc:
                need[nn] = max(need.get(nn, 0), cc)
        if not need:
            return
        sizes = np.array(sorted(need), dtype=np.int64)
        top = min(int(sizes.max()), max(need.values()) + 1)
        rows = observed_cdf(sizes, self.d1 if key == "aql" else self.d2, self.N,
                            self.rates.miss_rate, self.rates.false_alarm, top)
        for nn, row in zip(sizes.tolist(), rows):
            self._cdfs[(key, nn)] = row[:nn]  # c < n only: c >= n accepts every sample


#: Design options that still apply with inspection errors, per scheme.
DESIGN_TAKES = {"single": ("c", "n", "max_n"), "double": ("ratio",), "sequential": ("truncate",),
                "chain": ("max_n",)}
_NOT_ATTRIBUTE = ("variables", "csp1", "csp2", "csp3", "compare-all")


def refuse_options(scheme: str, given) -> None:
    """Refuse a design with inspection errors that cannot be had: a scheme that is not an
    attribute plan, or an option (``given``: ``(name, value)`` pairs, names as the
    design options, e.g. ``max_n``, ``csp_f``) the scheme does not take with errors."""
    if scheme in _NOT_ATTRIBUTE:
        raise InputError(f"--scheme ({scheme}): --miss-rate/--false-alarm/--study design "
                         "attribute plans (single, double, sequential, chain)"
                         + ("; a gauge's error in a variables plan is --measurement-sd"
                            if scheme == "variables" else ""))
    takes = DESIGN_TAKES.get(scheme, ())
    for key, val in given:
        if val and key not in takes:
            opt = "--" + key.replace("_", "-").replace("csp-", "")
            shown = ", ".join(val) if isinstance(val, list) else val
            raise InputError(f"{opt} ({shown}) cannot be combined with --miss-rate/"
                             f"--false-alarm/--study for --scheme {scheme}")


def option_value(key: str, value):
    """A design option's value with inspection errors, checked as the error-free
    designers check it."""
    from lotwise.core.quantities import parse_count, parse_fraction

    if key == "ratio":
        v = parse_fraction(value, "--ratio")
        if not v > 0:
            raise InputError(f"--ratio ({value}) must be a number above 0")
        return v
    minimum = 0 if key == "c" else 1
    return parse_count(value, "--" + key.replace("_", "-"), minimum=minimum)


def design_misclassified(scheme: str, rates: ErrorRates, *, aql: float, rql: float,
                         alpha: float = 0.05, beta: float = 0.10, lot_size: int | None = None,
                         model: str | None = None, per_unit: bool = False, **options):
    """The smallest plan of family ``scheme`` meeting ``alpha`` at the true AQL and
    ``beta`` at the true RQL when inspection errs with ``rates``.

    Single plans: an exact integer search (:func:`design_single_seen`) under every
    model. Other families: under the binomial and Poisson models the family's
    designer at the apparent AQL and RQL (exact: the plan's OC at true ``p`` is its
    OC at ``p_e``, which rises with ``p``); in a finite lot only single plans are
    designed (a clear error names what to do instead).

    Returns the designer's result with ``.plan`` wrapped (``.inner_design`` is the
    family designer's own result).
    """
    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    model = scope.check_model(model)
    if rates.zero:
        return family(scheme).design(aql=aql, rql=rql, alpha=alpha, beta=beta,
                                     lot_size=lot_size, model=model, per_unit=per_unit, **options)
    if scheme == "single":
        return design_single_seen(rates, aql=aql, rql=rql, alpha=alpha, beta=beta,
                                  lot_size=lot_size, model=model, per_unit=per_unit, **options)
    if model == "hypergeometric":
        raise InputError(f"--scheme ({scheme}): with --miss-rate/--false-alarm/--study and a "
                         "lot size only single plans are designed (a finite-lot design of "
                         f"this family has no exact error model yet); design a single plan, or "
                         f"a {scheme} plan with --model binomial (a process) and judge it "
                         "exactly in the lot with check --lot-size and the same rates")
    from lotwise.core.search import check_targets
    from lotwise.core.types import Targets

    check_targets(Targets(aql=aql, rql=rql, alpha=alpha, beta=beta), per_unit)
    e2, e1 = rates.miss_rate, rates.false_alarm
    d = family(scheme).design(aql=apparent(aql, e2, e1, per_unit),
                              rql=apparent(rql, e2, e1, per_unit), alpha=alpha, beta=beta,
                              lot_size=lot_size, model=model, per_unit=per_unit, **options)
    return _Wrapped(plan=wrap(d.plan, rates), model=d.model, inner_design=d)


@dataclass(frozen=True, kw_only=True)
class _Wrapped:
    """A family designer's result with its plan judged under inspection errors."""

    plan: Plan
    model: str
    inner_design: object

    def report_extra(self) -> dict:
        extra = getattr(self.inner_design, "report_extra", None)
        out = dict(extra()) if extra is not None else {}
        out.pop("statements", None)  # they speak of the apparent levels
        return out


def design_single_seen(rates: ErrorRates, *, aql, rql, alpha=0.05, beta=0.10, lot_size=None,
                       model=None, per_unit=False, n=None, c=None, max_n=None):
    """Smallest single plan ``(n, c)`` meeting both risks at the true levels with
    inspection errors (every model; the finite lot exactly).

    The search is :func:`lotwise.families.single.design_single`'s: for each ``c`` the
    smallest ``n`` meeting beta by integer bisection (``Pa`` falls in ``n``), ``c``
    increasing in blocks until one ``n_min(c)`` also meets alpha. Bounds: ``n`` up to
    ``max_n`` and the lot size; ``c`` up to ``n`` (items). Unlike the error-free case,
    ``c >= D2`` does not accept every lot at the RQL (false alarms add to the count),
    so ``c`` is bounded by the sample alone.
    """
    from lotwise.core.quantities import Infeasible, format_pct
    from lotwise.core.search import c_min, check_targets, n_min
    from lotwise.core.types import TOL, Targets
    from lotwise.families.single import SingleDesign, SinglePlan

    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    model = scope.check_model(model)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    check_targets(targets, per_unit)
    if n is not None and c is not None:
        raise InputError("--n and --c cannot both be fixed: that is a plan to check, not design")
    cap = max_n
    if lot_size is not None:
        cap = lot_size if cap is None else min(cap, lot_size)
    if n is not None and cap is not None and n > cap:
        raise InputError(f"--n ({n}) must not be greater than {cap} (the lot size or --max-n)")
    kernel = _SeenKernel(model, targets, scope, rates)

    def result(nn, cc):
        plan = SinglePlan(n=int(nn), c=int(cc))
        d = SingleDesign(plan=plan, model=model, scope=scope, targets=targets,
                         full_inspection=bool(lot_size is not None and nn >= lot_size),
                         lot_counts=(kernel.d1, kernel.d2) if model == "hypergeometric"
                         else None)
        return _Wrapped(plan=wrap(plan, rates), model=model, inner_design=d)

    def best_at(nn, fixed_c=None):
        cc = c_min(kernel, nn, alpha) if fixed_c is None else fixed_c
        a = 1.0 - float(kernel.at_aql(nn, cc))
        b = float(kernel.at_rql(nn, cc))
        return cc, a, b

    def short(nn, what, fixed_c=None):
        cc, a, b = best_at(nn, fixed_c)
        return Infeasible(
            f"with inspection errors ({rates.describe()}) no single plan with {what} meets "
            f"both risks at the true AQL and RQL; the best at n = {nn} is c = {cc}: alpha "
            f"{format_pct(a)} (target {format_pct(alpha)}), beta {format_pct(b)} (target "
            f"{format_pct(beta)}); lower the misclassification (a better gauge or repeated "
            "inspection) or relax the targets",
            {"n": int(nn), "c": int(cc), "alpha": a, "beta": b})

    if n is not None:
        cc, a, b = best_at(n)
        if b <= beta + TOL:
            return result(n, cc)
        raise short(n, f"n = {n}")
    if c is not None:
        nm = int(n_min(kernel, np.array([c]), beta, cap)[0])
        if nm < 0:
            if cap is None:
                raise Infeasible(f"no sample size meets beta with c = {c}")
            raise short(cap, f"c = {c} and n <= {cap}", fixed_c=c)
        a = 1.0 - float(kernel.at_aql(nm, c))
        if a <= alpha + TOL:
            return result(nm, c)
        raise short(nm, f"c = {c}", fixed_c=c)
    nn, cc = _smallest_seen(kernel, alpha, beta, cap, per_unit, short)
    return result(nn, cc)


def _smallest_seen(kernel, alpha, beta, cap, per_unit, short) -> tuple[int, int]:
    """``(n, c)``: the smallest ``c`` whose smallest ``n`` meeting beta also meets alpha,
    in blocks of increasing ``c`` from the first ``c`` not ruled out by
    :func:`_ruled_out`; ``short(n, what)`` builds the error when none fits the cap."""
    from lotwise.core.quantities import Infeasible
    from lotwise.core.search import n_min
    from lotwise.core.types import TOL

    start, width = _ruled_out(kernel, alpha, beta, cap), 8
    while True:
        stop = start + width if cap is None or per_unit else min(start + width, cap + 1)
        if stop <= start:
            raise short(cap, f"n <= {cap}")
        cs = np.arange(start, stop, dtype=np.int64)
        nm = n_min(kernel, cs, beta, cap)
        have = nm >= 0
        ok = np.zeros_like(have)
        if have.any():
            ok[have] = kernel.at_aql(nm[have], cs[have]) >= 1.0 - alpha - TOL
        if ok.any():
            i = int(np.argmax(ok))
            return int(nm[i]), int(cs[i])
        if cap is not None and not have[-1]:
            raise short(cap, f"n <= {cap}")
        start, width = stop, width * 2
        if start > 10_000_000:
            raise Infeasible("no plan found with an acceptance number below 10,000,000")


def _ruled_out(kernel, alpha, beta, cap) -> int:
    """The number of acceptance numbers ``0, 1, ...`` shown not to give the design
    without their own search (finite lot; 0 under the other models).

    The binomial design at the apparent levels brackets the finite-lot one (sampling
    a finite lot varies less). For each ``c`` below its acceptance number, one sample
    size ``L`` (nine tenths of the binomial ``n_min(c)``) is tried: when ``Pa`` at the
    RQL still exceeds beta there, ``n_min(c) > L``, and when ``Pa`` at the AQL is
    already below ``1 - alpha`` there it is lower still at ``n_min(c)`` (``Pa`` falls
    in ``n``), so ``c`` cannot meet both risks. Exact: nothing is assumed of ``c``s
    not so shown.
    """
    from lotwise.core.search import n_min
    from lotwise.core.types import TOL

    if kernel.model != "hypergeometric":
        return 0
    cs = np.arange(0, 64, dtype=np.int64)
    nb = n_min(kernel.plain, cs, beta, cap)
    have = nb >= 0
    good = np.zeros_like(have)
    good[have] = kernel.plain.at_aql(nb[have], cs[have]) >= 1.0 - alpha - TOL
    if not good.any():
        return 0
    cs = cs[:int(np.argmax(good))]
    if cs.size == 0:
        return 0
    trial = np.maximum((0.9 * nb[:cs.size]).astype(np.int64), cs + 1)
    if cap is not None:
        trial = np.minimum(trial, cap)
    shown = ((kernel.at_rql(trial, cs) > beta + TOL)
             & (kernel.at_aql(trial, cs) < 1.0 - alpha - TOL))
    return int(cs.size if shown.all() else np.argmin(shown))
