"""Chain sampling, Dodge's ChSP-1 [1]_: accept on zero, forgiving one
nonconforming item after a clean record.

Rule: inspect ``n`` units of every lot. Accept the lot when none is
nonconforming; accept it when exactly one is, provided the samples of the
``i`` preceding lots held none; reject it otherwise. With ``P0`` and ``P1``
the probabilities of zero and of exactly one nonconforming item in a sample,
the OC function is

    ``Pa = P0 + P1 P0^i``

(``i = 0`` gives the c = 1 plan, ``i -> infinity`` the c = 0 plan). It
assumes a continuing series of lots of the same product from a steady
process, inspected in the order produced, and a supplier the consumer has
reason to trust.

Monotonicity used by the designer: ``Pa`` falls as ``i`` grows (``P0^i``
falls) and as ``n`` grows. The latter is not obvious, because ``P1`` rises
with ``n`` while ``n p < 1``; for the binomial model the derivative in a
continuous ``n`` is ``p (1-p)^n [(1-p)^(n i) (1 - n (i+1) p) - 1]``
(to first order in ``p``), negative; the tests check the discrete
statement under all three models on wide random grids.

Design of ``(n, i)`` for the two risk points (:func:`design_chain`): for
every ``i`` the smallest ``n`` meeting the consumer's risk is found by
integer bisection between the c = 0 and c = 1 sample sizes (the chain OC lies
between those two curves); it never increases with ``i``. The plan is the
smallest ``n`` whose ``Pa(AQL)`` also meets the producer's risk; ties go to
the smallest ``i``. The search over ``i`` stops when ``n`` has come down to
the c = 0 sample size: for larger ``i``, ``n`` stays there and ``Pa(AQL)``
only falls.

References
----------
.. [1] H. F. Dodge, "Chain sampling inspection plan", *Industrial Quality
   Control* 11(4) (1955) 10-13.
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 13 (chain sampling).

Examples
--------
Incoming lots of an expensive sensor are tested destructively, so samples
are small; the buyer wants lots at 1 % accepted 95 % of the time and lots at
15 % at most 10 % of the time. ChSP-1 needs no more units than accept-on-zero
(15) and forgives one nonconforming item after two clean lots:

>>> d = design_chain(aql=0.01, rql=0.15)
>>> (d.plan.n, d.plan.i)
(15, 2)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from lotwise.core import kernels as oc
from lotwise.core.types import Scope, lot_counts
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import InputError, Infeasible, format_level, format_pct
from lotwise.families.base import Family, Option, OptionKind, Plan

__all__ = ["ChainPlan", "ChainDesign", "design_chain", "FAMILY"]

_TOL = 1e-12


def _p01(model: str, n, level, lot_size=None):
    """``(P0, P1)``: zero and exactly one nonconforming in a sample of ``n``;
    ``level`` is a fraction (per unit for Poisson) or, for the
    hypergeometric model, a whole count in the lot."""
    n = np.asarray(n, dtype=float)
    x = np.asarray(level, dtype=float)
    with np.errstate(all="ignore"):
        if model == "hypergeometric":
            p0 = oc.hypergeometric_pmf(0, n, lot_size, x)
            p1 = oc.hypergeometric_pmf(1, n, lot_size, x)
        elif model == "binomial":
            lq = np.log1p(-np.minimum(x, 1.0))
            p0 = np.where(x >= 1.0, 0.0, np.exp(n * lq))
            p1 = np.where(x >= 1.0, np.where(n == 1, 1.0, 0.0),
                          np.where(x <= 0, 0.0, n * x * np.exp((n - 1) * lq)))
        elif model == "poisson":
            lam = n * x
            p0 = np.exp(-lam)
            p1 = lam * p0
        else:
            raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")
    return np.asarray(p0, dtype=float), np.asarray(p1, dtype=float)


def _pa_chain(model, n, i, level, lot_size=None):
    p0, p1 = _p01(model, n, level, lot_size)
    i = np.asarray(i, dtype=float)
    with np.errstate(all="ignore"):
        pa = p0 + p1 * np.power(p0, i)
    return np.clip(pa, 0.0, 1.0)


def _out(x):
    x = np.asarray(x, dtype=float)
    return float(x) if x.ndim == 0 else x


@dataclass(frozen=True, kw_only=True)
class ChainPlan(Plan):
    """ChSP-1: sample ``n``; accept on 0 nonconforming, or on 1 when the ``i``
    preceding samples held none."""

    n: int
    i: int

    scheme = "chain"
    lot_by_lot = False

    def __post_init__(self):
        if not isinstance(self.n, (int, np.integer)) or self.n < 1:
            raise InputError(f"n ({self.n}) must be a whole number of at least 1")
        if not isinstance(self.i, (int, np.integer)) or self.i < 1:
            raise InputError(f"i ({self.i}) must be a whole number of at least 1")

    @property
    def label(self) -> str:
        return f"ChSP-1 n={self.n}, i={self.i}"

    @property
    def max_sample(self) -> int:
        return int(self.n)

    def notation(self) -> str:
        return f"chain: n={self.n},i={self.i}"

    bench_state = "clean_lots"

    def decide(self, inspected: int, found: int, *, per_unit: bool = False,
               clean_lots: int | None = None):
        """Accept, reject or continue on the bench, given ``clean_lots``: the
        lots in a row just before this one whose samples held no nonconforming
        item (ChSP-1 needs the last ``i``). With ``i`` or more clean lots the
        lot is judged as the single plan ``(n, c = 1)``, otherwise as
        ``(n, c = 0)``; decisions certain before the sample's end are taken
        as a single plan takes them."""
        from dataclasses import replace

        from lotwise.core.quantities import parse_count
        from lotwise.families.staged import StagedPlan

        if clean_lots is None:
            raise InputError(f"--clean-lots is required for a chain plan ({self.notation()}): "
                             f"the lots in a row just before this one whose samples held no "
                             f"nonconforming item (the rule needs the last {self.i})")
        clean = parse_count(clean_lots, "--clean-lots", minimum=0)
        c = 1 if clean >= self.i else 0
        dec = StagedPlan.single(SinglePlan(n=int(self.n), c=c)).decide(
            inspected, found, per_unit=per_unit)
        why = (f"{clean} clean lot(s) in a row before this one "
               + (f"(at least i = {self.i}): one nonconforming item is forgiven, acceptance "
                  "number 1" if c else f"(fewer than i = {self.i}): acceptance number 0"))
        return replace(dec, reason=f"ChSP-1 with {why}; {dec.reason}")

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """``Pa = P0 + P1 P0^i`` at quality level(s) ``p`` under ``model``."""
        if model == "hypergeometric":
            if not scope.lot_size:
                raise InputError("the hypergeometric model needs a lot size")
            if self.n > scope.lot_size:
                raise InputError(f"n ({self.n}) must not be greater than the lot size "
                                 f"({scope.lot_size})")
            return self.pa_count(lot_counts(p, scope.lot_size, rounding), scope)
        return _out(_pa_chain(model, self.n, self.i, p))

    def pa_count(self, d, scope: Scope):
        """``Pa`` for lots of ``scope.lot_size`` holding ``d`` nonconforming items."""
        return _out(_pa_chain("hypergeometric", self.n, self.i, d, scope.lot_size))

    def aoq_count(self, d, scope: Scope, *, formula: str = "screened"):
        """Exact finite-lot AOQ: ``E[(D - X) 1{accept}] / N``.

        With ``(D - x) h(x | N, D) = D ((N - n)/N) h(x | N - 1, D - 1)`` the
        current lot's terms move to a lot of ``N - 1`` holding ``D - 1``, while
        the ``i`` preceding samples keep ``P0`` of the lot itself.
        """
        N = scope.lot_size
        d = np.asarray(d, dtype=float)
        if formula == "simple":
            return _out(d / N * np.asarray(self.pa_count(d, scope)))
        p0 = oc.hypergeometric_pmf(0, self.n, N, d)
        inside = (d >= 1) & (self.n < N)
        dd = np.where(inside, d - 1.0, 0.0)
        q0 = oc.hypergeometric_pmf(0, self.n, N - 1.0, dd)
        q1 = oc.hypergeometric_pmf(1, self.n, N - 1.0, dd)
        val = d / N * (N - self.n) / N * (q0 + q1 * np.power(p0, self.i))
        return _out(np.where(inside, val, 0.0))

    def to_dict(self) -> dict:
        return {"scheme": "chain", "n": int(self.n), "i": int(self.i)}


def parse_chain(pairs: dict, text: str, option: str) -> ChainPlan:
    from lotwise.core.quantities import parse_count

    allowed = {"n", "i"}
    unknown = sorted(set(pairs) - allowed)
    if unknown:
        raise InputError(f"{option} ({text!r}): unknown key {unknown[0]!r}; a chain plan "
                         "takes n and i, for example \"chain: n=20, i=3\"")
    for key in ("n", "i"):
        if key not in pairs:
            raise InputError(f"{option} ({text!r}) lacks {key}; write for example "
                             "\"chain: n=20, i=3\"")
    return ChainPlan(n=parse_count(pairs["n"], f"{option} n", minimum=1),
                     i=parse_count(pairs["i"], f"{option} i", minimum=1))


@dataclass(frozen=True, kw_only=True)
class ChainDesign:
    """Result of :func:`design_chain`."""

    plan: ChainPlan
    model: str
    scope: Scope
    targets: object
    zero_n: int
    one_n: int | None
    searched: tuple = ()

    def report_extra(self) -> dict:
        return {"zero_acceptance_n": self.zero_n,
                "searched": [{"i": i, "n": n, "alpha": a} for i, n, a in self.searched]}


def design_chain(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                 lot_size: int | None = None, model: str | None = None,
                 per_unit: bool = False, max_n: int | None = None,
                 max_i: int = 10_000) -> ChainDesign:
    """Smallest ChSP-1 plan ``(n, i)`` meeting both risks.

    Raises
    ------
    Infeasible
        When no ``(n, i)`` meets both risks (then a plan with ``c >= 1``, see
        :func:`lotwise.families.single.design_single`, is needed); ``reachable``
        holds the best producer's risk found.
    """
    from lotwise.core.types import Targets
    from lotwise.core.search import check_lot, check_targets, Kernel, n_min

    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    model = scope.check_model(model)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    check_targets(targets, per_unit)
    kernel = Kernel(model, targets, scope)
    N = lot_size
    if model == "hypergeometric":
        check_lot(targets, lot_size, (kernel.d1, kernel.d2))
        at_aql, at_rql = kernel.d1, kernel.d2
    else:
        at_aql, at_rql = aql, rql
    cap = max_n
    if N is not None:
        cap = N if cap is None else min(cap, N)
    nz, n1 = (int(v) for v in n_min(kernel, np.array([0, 1]), beta, cap))
    if nz < 0:
        raise Infeasible(f"no sample up to {cap} meets the consumer's risk even with c = 0",
                         {"n": cap})
    hi_all = n1 if n1 >= 0 else cap  # the chain OC lies below the c = 1 curve

    def pa_rql(n, i):
        return _pa_chain(model, n, i, at_rql, N)

    def pa_aql(n, i):
        return _pa_chain(model, n, i, at_aql, N)

    searched = []
    best = None
    start, width = 1, 32
    done = False
    while not done and start <= max_i:
        i = np.arange(start, min(start + width, max_i + 1), dtype=np.int64)
        hi = np.full(i.shape, hi_all, dtype=np.int64)
        ok = pa_rql(hi, i) <= beta + _TOL
        lo = np.full(i.shape, nz - 1, dtype=np.int64)  # Pa >= P0 > beta below n_c0
        act = ok & (hi - lo > 1)
        while act.any():
            mid = (lo[act] + hi[act]) // 2
            good = pa_rql(mid, i[act]) <= beta + _TOL
            h, l_ = hi[act], lo[act]
            hi[act] = np.where(good, mid, h)
            lo[act] = np.where(good, l_, mid)
            act = ok & (hi - lo > 1)
        for ii, nn, okk in zip(i, hi, ok):
            if not okk:
                continue
            a = float(pa_aql(nn, ii))
            searched.append((int(ii), int(nn), 1.0 - a))
            if a >= 1.0 - alpha - _TOL and (best is None or nn < best[0]):
                best = (int(nn), int(ii))
            if nn <= nz:
                done = True
                break
        start += width
        width *= 2
    if best is None:
        top = max(searched, key=lambda t: -t[2]) if searched else None
        reach = {"n": top[1], "i": top[0], "alpha": top[2]} if top else {}
        raise Infeasible(
            "no ChSP-1 plan meets both risks"
            + (f": the smallest producer's risk reached is {format_pct(top[2])} "
               f"(n = {top[1]}, i = {top[0]}; target {format_pct(alpha)})" if top else "")
            + "; a plan with c >= 1 is needed", reach)
    return ChainDesign(plan=ChainPlan(n=best[0], i=best[1]), model=model, scope=scope,
                       targets=targets, zero_n=nz, one_n=n1 if n1 >= 0 else None,
                       searched=tuple(searched))


def report_extras(plan, targets, scope: Scope, model: str, report: dict) -> dict:
    """The plain c = 0 plan of the same n beside the chain plan, and the chain's rule."""
    from lotwise.families.single import SinglePlan

    z = SinglePlan(n=plan.n, c=0).risks(targets, scope, model).as_dict()
    return {
        "zero_acceptance_same_n": {"n": plan.n, "c": 0, **z},
        "statements": [
            f"Inspect {plan.n} units of every lot; accept on 0 nonconforming, or on 1 if the "
            f"samples of the {plan.i} preceding lots held none; otherwise reject.",
            f"The plain c = 0 plan with the same n = {plan.n} accepts lots at the AQL only "
            f"{format_pct(z['pa_aql'])} of the time (producer's risk {format_pct(z['alpha'])}) "
            f"and lots at the RQL {format_pct(z['pa_rql'])} of the time.",
            "Chain sampling assumes a continuing series of lots of the same product from a "
            "steady process, inspected in the order produced; for isolated lots or a new "
            "supplier use a single plan."],
    }


FAMILY = Family(
    name="chain", plan_class=ChainPlan, parse=parse_chain, extras=report_extras,
    design=design_chain, poisson_redesign=True,
    design_options={"max_n": "largest affordable sample"},
    option_types={"max_n": Option(kind=OptionKind.WHOLE, minimum=1)},
    description="chain sampling ChSP-1: accept on one nonconforming after i clean samples",
)
