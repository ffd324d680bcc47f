"""Two-risk design of single sampling plans by attributes, computed exactly.

Find the plan ``(n, c)`` with the smallest sample size ``n`` such that

* ``Pa(AQL) >= 1 - alpha`` (producer's risk met), and
* ``Pa(RQL) <= beta`` (consumer's risk met),

under the chosen model (hypergeometric for a lot of known size, binomial for a
process, Poisson for nonconformities per unit).

Like ``statsmodels``' ``solve_power``, :func:`design_single` takes the same
keywords as the evaluation of a plan and solves for what is left unknown:
both ``n`` and ``c``, ``n`` for a fixed ``c``, or ``c`` for a fixed ``n``.

Method
------
The search relies on two monotonicities of ``Pa`` (see :mod:`lotwise.core.kernels`):
it falls as ``n`` grows and rises with ``c``. For each acceptance number
``c`` let ``n_min(c)`` be the smallest ``n`` meeting the consumer's risk,
found by integer bisection on ``n``. Because ``Pa`` rises with ``c``,
``n_min`` never decreases in ``c``, so the smallest feasible plan is
``(n_min(c*), c*)`` with ``c*`` the smallest acceptance number whose
``n_min`` also meets the producer's risk. The bisections for a block of
acceptance numbers run together as one vectorised search; blocks are taken
in increasing ``c`` until a feasible one appears. No table, nomograph or
float root is involved. When two acceptance numbers tie on ``n`` the
smaller ``c`` is returned; it is then also the smallest ``c`` meeting the
producer's risk at that ``n``, so ``design_single(n=plan.n, ...)`` gives
the same plan back.

With a lot size, fractions become whole counts of nonconforming items,
rounded conservatively for each risk: up at the AQL (``D1 = ceil(AQL N)``),
down at the RQL (``D2 = floor(RQL N)``).

References
----------
.. [1] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 5 (two-point single plans).
.. [2] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 15.2 (design of single sampling plans with specified OC points).

Examples
--------
A buyer and a connector supplier agree AQL 1 % at 5 % producer's risk and
RQL 6 % at 10 % consumer's risk for a continuous process:

>>> d = design_single(aql=0.01, rql=0.06)
>>> (d.n, d.c)
(110, 3)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.quantities import InputError, Infeasible, format_pct, parse_count
from lotwise.core.search import (MAX_SAMPLE, Kernel, c_min, check_lot, check_targets, n_min,
                                 smallest_plan)
from lotwise.core.types import TOL, Scope, Targets, lot_counts, lot_targets
from lotwise.families.base import Decision, Family, Option, OptionKind, Plan

__all__ = ["SinglePlan", "SingleDesign", "design_single", "min_sample_size", "FAMILY",
           "Targets", "lot_targets"]

@dataclass(frozen=True, kw_only=True)
class SinglePlan(Plan):
    """Single sampling by attributes: inspect ``n`` units, accept the lot when
    at most ``c`` are nonconforming, reject it on ``c + 1`` or more."""

    n: int
    c: int

    finite_aoq_text = "(D/N)((N - n)/N) Pa(n, c | N - 1, D - 1)"

    def __post_init__(self):
        if not isinstance(self.n, (int, np.integer)) or self.n < 1:
            raise InputError(f"n ({self.n}) must be a whole number of at least 1")
        if not isinstance(self.c, (int, np.integer)) or self.c < 0:
            raise InputError(f"c ({self.c}) must be a whole number of at least 0")
        for key in ("n", "c"):
            if getattr(self, key) > MAX_SAMPLE:
                raise InputError(f"{key} ({getattr(self, key)}) must be at most {MAX_SAMPLE:,} "
                                 "(10^12): larger samples are beyond what the kernels compute "
                                 "exactly and beyond any inspection")
        # c > n is a real plan for nonconformities per unit (a unit may carry
        # several); for items it is refused by check_scope, which knows the scope.

    scheme = "single"
    common_sample = True

    @property
    def sole_acceptance_number(self) -> int:
        return int(self.c)

    def check_scope(self, scope: Scope) -> None:
        """Refuse ``c > n`` when counting nonconforming items (a sample of ``n``
        cannot hold more than ``n``) and a sample larger than the lot; counting
        nonconformities per unit, any ``c`` is a plan."""
        if not scope.per_unit and self.c > self.n:
            raise InputError(f"c ({self.c}) must not be greater than n ({self.n}) when counting "
                             "nonconforming items (with --per-unit, nonconformities per unit, "
                             "it may be)")
        super().check_scope(scope)

    @property
    def r(self) -> int:
        """Rejection number."""
        return self.c + 1

    @property
    def label(self) -> str:
        return f"n={self.n}, c={self.c}"

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Acceptance probability at quality level(s) ``p`` under ``model``.

        Under the hypergeometric model ``p`` is turned into a whole count of
        nonconforming items in the lot with ``rounding`` (see
        :func:`lot_counts`).
        """
        if model == "hypergeometric":
            if not scope.lot_size:
                raise InputError("the hypergeometric model needs a lot size")
            if self.n > scope.lot_size:
                raise InputError(f"n ({self.n}) must not be greater than the lot size "
                                 f"({scope.lot_size})")
            d = lot_counts(p, scope.lot_size, rounding)
            return oc.pa_hypergeometric(self.n, self.c, scope.lot_size, d)
        if model == "binomial":
            return oc.pa_binomial(self.n, self.c, p)
        if model == "poisson":
            return oc.pa_poisson(self.n, self.c, p)
        raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")

    def pa_count(self, d, scope: Scope):
        """Acceptance probability for a lot holding ``d`` nonconforming items."""
        return oc.pa_hypergeometric(self.n, self.c, scope.lot_size, d)

    @property
    def max_sample(self) -> int:
        return int(self.n)

    def notation(self) -> str:
        return f"n={self.n},c={self.c}"

    def quality_at(self, prob: float, model: str, scope: Scope, side: str = "producer") -> float:
        """Closed forms under the binomial (beta quantile) and Poisson (gamma
        quantile) models; whole counts under the hypergeometric one."""
        if self.c >= self.n and model != "poisson":
            return 1.0  # accepts every lot
        if model == "binomial":
            return float(special.betainccinv(self.c + 1.0, self.n - self.c, prob))
        if model == "poisson":
            return float(special.gammainccinv(self.c + 1.0, prob)) / self.n
        return super().quality_at(prob, model, scope, side)

    def aoq_count(self, d, scope: Scope, *, formula: str = "screened"):
        """Exact finite-lot AOQ ``(D/N)((N - n)/N) Pa(n, c | N - 1, D - 1)``
        (see :mod:`lotwise.analysis.rectifying`)."""
        if formula != "screened":
            return super().aoq_count(d, scope, formula=formula)
        out = aoq_hyper_single(self.n, self.c, float(scope.lot_size), d)
        return float(out) if np.ndim(out) == 0 else out

    def aoq_function(self, model: str, scope: Scope, *, formula: str = "screened"):
        """``p -> AOQ(p)`` on floats: the incomplete beta/gamma expressions of
        :mod:`lotwise.core.kernels` without array overhead."""
        if model == "hypergeometric":
            return super().aoq_function(model, scope, formula=formula)
        n, c = float(self.n), float(self.c)
        N = scope.lot_size
        k = 1.0 if (not N or formula == "simple") else (N - n) / N
        if model == "poisson":
            return lambda p: p * float(special.gammaincc(c + 1.0, n * p)) * k if p > 0 else 0.0
        if c >= n:
            return lambda p: p * k
        return lambda p: (p * float(special.betaincc(c + 1.0, n - c, p)) * k) if 0 < p < 1 else 0.0

    def decide(self, inspected: int, found: int, *, per_unit: bool = False) -> Decision:
        """Continue to ``n`` units unless the decision is already certain."""
        from lotwise.families.staged import StagedPlan

        return StagedPlan.single(self).decide(inspected, found, per_unit=per_unit)

    def describe(self) -> list[str]:
        return [f"plan      n = {self.n}, accept on c = {self.c}, reject on {self.r}"]

    def count_rule(self) -> tuple[int, int]:
        return int(self.n), int(self.c)

    def to_dict(self) -> dict:
        return {"scheme": "single", "n": int(self.n), "c": int(self.c), "r": int(self.c) + 1}



def aoq_hyper_single(n, c, N, d):
    """Exact finite-lot AOQ of single plans ``(D/N)((N - n)/N) Pa(n, c | N - 1, D - 1)``,
    zero at ``D = 0`` or ``n = N`` (vectorised over ``n``, ``c`` and ``d``)."""
    d = np.asarray(d, dtype=float)
    n = np.asarray(n, dtype=float)
    inside = (d >= 1) & (n < N)
    nn = np.where(inside, n, 1.0)
    dd = np.where(inside, d - 1.0, 0.0)
    pa = np.asarray(oc.pa_hypergeometric(nn, c, N - 1.0, dd), dtype=float)
    return np.where(inside, d / N * (N - n) / N * pa, 0.0)


def parse_single(pairs: dict, text: str, option: str) -> SinglePlan:
    allowed = {"n", "c", "r"}
    unknown = sorted(set(pairs) - allowed)
    if unknown:
        raise InputError(f"{option} ({text!r}): unknown key {unknown[0]!r}; "
                         "a single plan takes n, c and optionally r = c + 1")
    for key in ("n", "c"):
        if key not in pairs:
            raise InputError(f"{option} ({text!r}) lacks {key}; write for example \"n=80,c=2\"")
    n = parse_count(pairs["n"], f"{option} n", minimum=1)
    c = parse_count(pairs["c"], f"{option} c", minimum=0)
    if "r" in pairs:
        r = parse_count(pairs["r"], f"{option} r", minimum=1)
        if r != c + 1:
            raise InputError(f"{option} r ({r}) must be c + 1 ({c + 1}) for a single plan")
    return SinglePlan(n=n, c=c)



#: The tie rule of the single designer, in words for its output.
TIE_RULE = ("Tie rule: when several acceptance numbers reach the smallest sample size, the "
            "smallest is taken; c = {c} is the smallest acceptance number meeting the "
            "producer's risk at n = {n}.")


@dataclass(frozen=True, kw_only=True)
class SingleDesign:
    """Result of :func:`design_single`.

    Attributes
    ----------
    plan : SinglePlan
    model : str
        The model the plan was designed under.
    scope : Scope
    targets : Targets
    full_inspection : bool
        True when no sample smaller than the lot meets both risks, so the
        answer is to inspect every item (``n`` equals the lot size).
    lot_counts : tuple of int or None
        ``(D1, D2)`` used under the hypergeometric model.
    """

    plan: SinglePlan
    model: str
    scope: Scope
    targets: Targets
    full_inspection: bool = False
    lot_counts: tuple[int, int] | None = None
    #: True when the designer chose ``c`` (it was not fixed with ``--c``).
    c_chosen: bool = True

    def report_extra(self) -> dict:
        out = {"full_inspection": bool(self.full_inspection)}
        if self.c_chosen and not self.full_inspection:
            out["statements"] = [TIE_RULE.format(n=self.plan.n, c=self.plan.c)]
        return out

    @property
    def n(self) -> int:
        return self.plan.n

    @property
    def c(self) -> int:
        return self.plan.c

    def __repr__(self) -> str:
        extra = ", 100 % inspection" if self.full_inspection else ""
        return (f"SingleDesign(n={self.n}, c={self.c}, model={self.model!r}, "
                f"lot_size={self.scope.lot_size}{extra})")


def design_single(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                  lot_size: int | None = None, model: str | None = None,
                  per_unit: bool = False, n: int | None = None, c: int | None = None,
                  max_n: int | None = None) -> SingleDesign:
    """Smallest single sampling plan meeting both risks.

    Parameters
    ----------
    aql, rql : float
        Acceptable and rejectable quality levels (fractions nonconforming, or
        nonconformities per unit with ``per_unit=True``).
    alpha, beta : float
        Producer's risk at the AQL and consumer's risk at the RQL.
    lot_size : int, optional
        Lot size; the default model becomes hypergeometric.
    model : {'hypergeometric', 'binomial', 'poisson'}, optional
        Override of the default (exact) model.
    per_unit : bool
        Quality levels are nonconformities per unit (Poisson is exact).
    n, c : int, optional
        Fix the sample size (then the smallest ``c`` meeting ``alpha`` is
        found) or the acceptance number (then the smallest ``n``).
    max_n : int, optional
        Largest affordable sample.

    Returns
    -------
    SingleDesign

    Raises
    ------
    Infeasible
        When no plan meets both risks; ``.reachable`` says what can be had.
    InputError
        For malformed arguments.
    """
    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    model = scope.check_model(model)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    check_targets(targets, per_unit)
    if lot_size is not None and lot_size < 1:
        raise InputError(f"--lot-size ({lot_size}) must be at least 1")
    if n is not None and c is not None:
        raise InputError("--n and --c cannot both be fixed: that is a plan to check, not design")
    if max_n is not None and max_n < 1:
        raise InputError(f"--max-n ({max_n}) must be at least 1")
    for key, value in (("--n", n), ("--c", c), ("--lot-size", lot_size)):
        if value is not None and value > MAX_SAMPLE:
            raise InputError(f"{key} ({value}) must be at most {MAX_SAMPLE:,} (10^12)")
    if n is not None and lot_size is not None and n > lot_size:
        raise InputError(f"--n ({n}) must not be greater than the lot size ({lot_size})")
    if n is not None and max_n is not None and n > max_n:
        raise InputError(f"--n ({n}) must not be greater than --max-n ({max_n})")

    kernel = Kernel(model, targets, scope)
    counts = None
    if model == "hypergeometric":
        counts = (kernel.d1, kernel.d2)
        check_lot(targets, lot_size, counts)

    def result(nn: int, cc: int) -> SingleDesign:
        full = lot_size is not None and nn >= lot_size
        return SingleDesign(plan=SinglePlan(n=int(nn), c=int(cc)), model=model, scope=scope,
                            targets=targets, full_inspection=bool(full), lot_counts=counts,
                            c_chosen=c is None)

    cap = max_n
    if lot_size is not None:
        cap = lot_size if cap is None else min(cap, lot_size)

    if n is not None:
        return result(*_with_fixed_n(kernel, n, alpha, beta))
    if c is not None:
        return result(*_with_fixed_c(kernel, targets, c, cap, lot_size))
    return result(*_smallest_plan(kernel, targets, cap, lot_size, model, per_unit))


def _with_fixed_n(kernel: Kernel, n: int, alpha: float, beta: float) -> tuple[int, int]:
    """``(n, c)`` with the smallest ``c`` meeting alpha at the given ``n``, if it meets beta."""
    cc = c_min(kernel, n, alpha)
    b = float(kernel.at_rql(n, cc))
    if b <= beta + TOL:
        return n, cc
    raise Infeasible(
        f"no acceptance number works with n = {n}: c = {cc} is the smallest that meets "
        f"alpha ({format_pct(alpha)}), and it leaves beta at {format_pct(b)} "
        f"(target {format_pct(beta)})",
        {"n": n, "c": cc, "alpha": 1.0 - float(kernel.at_aql(n, cc)), "beta": b})


def _with_fixed_c(kernel: Kernel, targets: Targets, c: int, cap, lot_size) -> tuple[int, int]:
    """``(n, c)`` with the smallest ``n`` meeting beta at the given ``c``, if it meets alpha."""
    alpha, beta = targets.alpha, targets.beta
    nm = int(n_min(kernel, np.array([c]), beta, cap)[0])
    if nm < 0:
        raise _cap_infeasible(kernel, targets, cap, lot_size, fixed_c=c)
    a = 1.0 - float(kernel.at_aql(nm, c))
    if a <= alpha + TOL:
        return nm, c
    rounded = rounding_note(kernel, targets, lot_size, nm, c)
    raise Infeasible(
        f"no sample size works with c = {c}: "
        + (rounded if rounded else
           f"meeting beta ({format_pct(beta)}) needs n >= {nm}, and there alpha is "
           f"{format_pct(a)} (target {format_pct(alpha)})"),
        {"n": nm, "c": c, "alpha": a, "beta": float(kernel.at_rql(nm, c))}
        | ({"lot_counts": {"aql": int(kernel.d1), "rql": int(kernel.d2)}} if rounded else {}))


def rounding_note(kernel: Kernel, targets: Targets, lot_size, n: int, c: int) -> str:
    """Why a finite lot's rounding of the AQL to a whole count makes alpha miss its
    target at ``n``, ``c`` ('' when the AQL is no fraction of an item to round).

    With the AQL's count D1 rounded up (the conservative way for the producer's
    risk) and c = 0, Pa(D1 = 1) = 1 - n/N exactly (hypergeometric: the sample
    misses the one nonconforming item), so alpha is n/N whatever the plan.
    """
    if lot_size is None or kernel.model != "hypergeometric":
        return ""
    exact = targets.aql * lot_size
    d1 = int(kernel.d1)
    if not d1 > exact + 1e-9 * max(1.0, exact):  # not rounded up: the plan, not the count
        return ""
    a = 1.0 - float(kernel.at_aql(n, c))
    head = (f"AQL {100 * targets.aql:.4g} % of a lot of {lot_size:,} rounds up to {d1} "
            f"nonconforming item{'s' if d1 != 1 else ''} ({exact:.3g} of an item is no whole "
            "count)")
    if c == 0 and d1 == 1:
        why = (f"; with c = 0 any sample rejects such a lot with probability n/N, and meeting "
               f"beta ({format_pct(targets.beta)}) needs n >= {n}, so alpha is {n:,}/"
               f"{lot_size:,} = {format_pct(a)} (target {format_pct(targets.alpha)})")
    else:
        why = (f"; meeting beta ({format_pct(targets.beta)}) needs n >= {n}, where a lot "
               f"holding {d1} is rejected {format_pct(a)} of the time (target alpha "
               f"{format_pct(targets.alpha)})")
    return (head + why + ". The rounding, not the plan, sets this risk: state the AQL as a "
            "whole count of the lot, give only the RQL and beta (c = 0), or inspect 100 %")


def _smallest_plan(kernel: Kernel, targets: Targets, cap, lot_size, model, per_unit):
    """``(n, c)`` by :func:`lotwise.core.search.smallest_plan` (see the module notes)."""
    found = smallest_plan(kernel, targets.alpha, targets.beta, cap,
                          _c_limit(kernel, cap, model, per_unit))
    if found is not None:
        return found
    if cap is None:
        raise Infeasible(f"no plan with n <= {MAX_SAMPLE:.0e} meets both risks; the AQL and "
                         "RQL are too close together", {"max_sample": MAX_SAMPLE})
    raise _cap_infeasible(kernel, targets, cap, lot_size)


def _c_limit(kernel: Kernel, cap: int | None, model: str, per_unit: bool) -> int | None:
    """Bound on the acceptance numbers worth trying (None: none)."""
    c_limit = kernel.d2 if model == "hypergeometric" else None  # c >= D2 accepts all at the RQL
    if cap is not None and not per_unit:
        # Items: c <= n <= cap. Nonconformities per unit have no such bound on
        # c; the search ends where n_min passes the cap (it never falls in c).
        c_limit = cap if c_limit is None else min(c_limit, cap)
    return c_limit


def _cap_infeasible(kernel: Kernel, targets: Targets, cap: int | None, lot_size: int | None,
                    fixed_c: int | None = None) -> Infeasible:
    """What is reachable when no plan fits under the cap on ``n``."""
    if cap is None:
        return Infeasible(f"no sample size meets beta with c = {fixed_c}")
    cc = c_min(kernel, cap, targets.alpha) if fixed_c is None else fixed_c
    a = 1.0 - float(kernel.at_aql(cap, cc))
    b = float(kernel.at_rql(cap, cc))
    what = "the lot size" if lot_size is not None and cap == lot_size else "--max-n"
    return Infeasible(
        f"no plan with n <= {cap} ({what}) meets both risks; the best at n = {cap} is "
        f"c = {cc}: alpha {format_pct(a)} (target {format_pct(targets.alpha)}), beta "
        f"{format_pct(b)} (target {format_pct(targets.beta)})",
        {"n": cap, "c": cc, "alpha": a, "beta": b})


def min_sample_size(*, c: int, rql: float, beta: float, lot_size: int | None = None,
                    model: str | None = None, per_unit: bool = False) -> int:
    """Smallest ``n`` with ``Pa(RQL; n, c) <= beta``: the consumer's side alone.

    This is the sample size that shows, with confidence ``1 - beta``, that the
    fraction nonconforming is below ``rql`` when at most ``c`` nonconforming
    items are found (a "confidence/reliability" sample with
    ``rql = 1 - reliability``).

    Examples
    --------
    Accept-on-zero sample for 95 % confidence that at least 95 % conform:

    >>> min_sample_size(c=0, rql=0.05, beta=0.05)
    59
    """
    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    model = scope.check_model(model)
    if c < 0:
        raise InputError(f"c ({c}) must be at least 0")
    t = Targets(aql=rql / 2, rql=rql, alpha=0.5, beta=beta)
    kernel = Kernel(model, t, scope)
    if model == "hypergeometric" and kernel.d2 <= c:
        raise Infeasible(f"a lot of {lot_size} at the RQL holds only {kernel.d2} nonconforming "
                         f"item(s): c = {c} accepts it whatever the sample")
    nm = int(n_min(kernel, np.array([c]), beta, lot_size)[0])
    if nm < 0:
        raise Infeasible(f"no sample up to the lot size meets beta with c = {c}")
    return nm


FAMILY = Family(
    name="single", plan_class=SinglePlan, parse=parse_single,
    design=design_single, poisson_redesign=True,
    design_many="lotwise.families.single_many:design_many",
    design_options={"n": "fixed sample size", "c": "fixed acceptance number",
                    "max_n": "largest affordable sample"},
    option_types={"n": Option(kind=OptionKind.WHOLE, minimum=1),
                  "c": Option(kind=OptionKind.WHOLE, minimum=0),
                  "max_n": Option(kind=OptionKind.WHOLE, minimum=1)},
    description="single sampling by attributes: inspect n, accept on c or fewer",
)
