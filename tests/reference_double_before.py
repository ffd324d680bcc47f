# Verbatim copy of lotwise.families.double before the best-first r1 search, kept as the
# reference for tests/test_double_speed_equivalence.py. Do not edit.
"""Two-risk design of double sampling plans, by exact search.

Find the double plan ``(n1, c1, r1, n2 = round(ratio n1), c2)`` meeting
``Pa(AQL) >= 1 - alpha`` and ``Pa(RQL) <= beta`` under the chosen model that
has the smallest average sample number: at the AQL (``minimize="asn-aql"``,
the default: the quality the supplier is expected to ship) or the largest
over the whole OC curve (``"asn-max"``). Every rejection number
``c1 < r1 <= c2 + 1`` is searched. The model is exact by default
(hypergeometric with a lot size, binomial otherwise, Poisson for
nonconformities per unit); no Poisson table is involved.

Search and why it is exhaustive
-------------------------------
Bounds: ``0 <= c1 < c2 <= 2,000``; ``n1 >= 1`` with ``n1 + n2`` at most the
lot size (and ``--max-n``); ``n2 = round(ratio n1)`` (halves up). The search
runs in two passes: first the plans with ``r1 = c2 + 1`` (the family most
tables use), then every ``r1 <= c2`` below the best ASN found. Within the
bounds no plan is skipped, because every pruning step rests on one of these
facts:

1. **Pa falls in n1** for fixed ``(c1, r1, c2)`` (``n2`` does not decrease
   as ``n1`` grows). Coupling: the plan accepts exactly when
   ``S(n1) <= c1``, or ``S(n1) < r1`` and ``S(n1 + n2) <= c2``, ``S(m)`` the
   count in the first ``m`` units inspected; ``S`` does not decrease in
   ``m``, so a larger plan accepts only lots the smaller one accepts. (The
   same coupling holds without replacement and for a Poisson process.)
   Hence the consumer's risk holds exactly for ``n1 >= n_lo`` and the
   producer's for ``n1 <= n_hi``; both ends are found by integer bisection.
2. **Pa rises in c1, in r1 and in c2** (the acceptance event grows), so
   ``n_lo`` does not decrease in ``c1``.
3. **ASN >= n1** (every plan inspects the first sample), and the largest ASN
   is at least the ASN at the AQL. So once a plan with objective ``A`` is
   known, only ``n1 <= A`` can do better.
4. **A lower bound for each c2 (or r1).** The plan accepts whenever the
   whole sample holds at most ``min(c2, r1 - 1)``, so its ``Pa`` is at least
   that of the single plan ``(n1 + n2, r1 - 1)`` (``(n1 + n2, c2)`` when
   ``r1 = c2 + 1``). Meeting the consumer's risk therefore needs
   ``n1 + n2 >= n_single(r1 - 1)``, the smallest single sample with that
   acceptance number meeting it, which gives ``n1 >= L(r1 - 1)``.
   ``n_single`` does not decrease in its acceptance number (fact 2 for
   single plans), nor does ``L``. The first pass takes ``c2 = 1, 2, ...``
   and stops at the first ``c2`` with ``L(c2) > A``; the second takes
   ``r1 = 1, 2, ...`` and stops at the first with ``L(r1 - 1) > A``.
5. **The ASN does not depend on c2.** Both objectives depend on the second
   sample only through ``P(c1 < S(n1) < r1)``. So for given
   ``(n1, c1, r1)`` a plan exists exactly when the smallest ``c2`` meeting
   the producer's risk also meets the consumer's (fact 2), and that ``c2``
   is the one the second pass takes.

First pass: for each ``c2`` every ``c1 < c2`` and every ``n1`` in
``[n_lo, min(n_hi, A)]`` is evaluated (vectorised). Second pass: for each
``r1`` every ``c1 < r1`` and every ``n1`` from ``L(r1 - 1)`` to ``A``, with
``c2`` from fact 5. Ties in the objective (within 1e-9 relative) go to the
smaller ``n1``, then ``c2``, then ``c1``, then ``r1``. What each pass searched
is reported under ``search`` (``searched`` for the second).

References
----------
.. [1] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 15.3.
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 6 (double sampling plans matched to two points).

Examples
--------
A buyer of brake-hose fittings (destructive burst test) agrees AQL 1 % and
RQL 5 % with the supplier and wants the fewest tests on average at the AQL,
second sample twice the first:

>>> d = design_double(aql=0.01, rql=0.05, ratio=2)
>>> d.plan.label
'n1=80, c1=1, r1=3, n2=160, c2=6'
>>> round(d.asn["aql"], 1), round(d.asn["rql"], 1), round(d.asn["max"], 1)
(103.1, 103.1, 123.9)

against 132 units every time for the single plan (n = 132, c = 3). With
``r1 = c2 + 1`` the best would be ``n1=79, c1=1, r1=6, n2=158, c2=5`` at
108.6 units at the AQL and up to 195.1 elsewhere: rejecting on the first
sample at 3 already saves units on both sides.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.quantities import InputError, Infeasible, format_level, format_pct
from lotwise.core.search import Kernel, check_lot, check_targets, n_min
from lotwise.core.stages import finish_shape, stage_cdf, stage_pmf
from lotwise.core.types import Scope, Targets, lot_targets
from lotwise.families.base import Family, Option, OptionKind
from lotwise.families.staged import StagedPlan, build_staged, whole

__all__ = ["DoublePlan", "DoubleDesign", "design_double", "double_max_asn", "MINIMIZE",
           "C2_CAP", "FAMILY"]


@dataclass(frozen=True, kw_only=True)
class DoublePlan(StagedPlan):
    """Double sampling by attributes.

    Inspect ``n1`` units; accept if ``d1 <= c1``, reject if ``d1 >= r1``,
    otherwise inspect ``n2`` more and accept if ``d1 + d2 <= c2``.
    ``r1`` defaults to ``c2 + 1``. ``n2 = 0`` is allowed (the plan is then
    the single plan ``(n1, c2)`` when ``r1 = c2 + 1``).

    Examples
    --------
    >>> p = DoublePlan(n1=50, c1=1, n2=100, c2=3)
    >>> p.r1, p.label
    (4, 'n1=50, c1=1, r1=4, n2=100, c2=3')
    """

    n1: int
    c1: int
    n2: int
    c2: int
    r1: int | None = None

    scheme = "double"

    def __post_init__(self):
        whole(self.n1, "n1", 1)
        whole(self.c1, "c1", 0)
        whole(self.n2, "n2", 0)
        whole(self.c2, "c2", 0)
        if self.r1 is None:
            object.__setattr__(self, "r1", int(self.c2) + 1)
        whole(self.r1, "r1", 1)
        if self.c2 < self.c1:
            raise InputError(f"c2 ({self.c2}) must not be smaller than c1 ({self.c1})")
        if self.r1 <= self.c1:
            raise InputError(f"r1 ({self.r1}) must be greater than c1 ({self.c1})")
        if self.r1 > self.c2 + 1:
            raise InputError(f"r1 ({self.r1}) must not be greater than c2 + 1 "
                             f"({self.c2 + 1}): a first-sample count above c2 can never be "
                             "accepted")
        if self.c1 > self.n1:
            raise InputError(f"c1 ({self.c1}) must not be greater than n1 ({self.n1})")

    @property
    def sizes(self):
        return (int(self.n1), int(self.n2))

    @property
    def acc(self):
        return (int(self.c1), int(self.c2))

    @property
    def rej(self):
        return (int(self.r1), int(self.c2) + 1)

    @property
    def label(self) -> str:
        return f"n1={self.n1}, c1={self.c1}, r1={self.r1}, n2={self.n2}, c2={self.c2}"

    def notation(self) -> str:
        return f"n1={self.n1},c1={self.c1},r1={self.r1},n2={self.n2},c2={self.c2}"

    def _parts(self, x, model, scope):
        """First-stage acceptance, second-stage acceptance and the
        probability of a second sample (the textbook formula)."""
        N = scope.lot_size
        acc1 = stage_cdf(self.c1, self.n1, model, x, N)
        acc2 = np.zeros_like(acc1)
        second = np.zeros_like(acc1)
        for d1 in range(self.c1 + 1, self.r1):
            f = stage_pmf(d1, self.n1, model, x, N)
            second = second + f
            acc2 = acc2 + f * stage_cdf(self.c2 - d1, self.n2, model, x, N, self.n1, d1)
        return acc1, acc2, second

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        x = self._x(p, model, scope, rounding)
        a1, a2, _ = self._parts(x, model, scope)
        return finish_shape(a1 + a2, np.shape(p))

    def pa_stages(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """``(Pa on the first sample, Pa on the second)``."""
        x = self._x(p, model, scope, rounding)
        a1, a2, _ = self._parts(x, model, scope)
        return finish_shape(a1, np.shape(p)), finish_shape(a2, np.shape(p))

    def pa_count(self, d, scope: Scope):
        a1, a2, _ = self._parts(np.asarray(d, dtype=float), "hypergeometric", scope)
        return finish_shape(a1 + a2, np.shape(d))

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        x = self._x(p, model, scope, rounding)
        _, _, second = self._parts(x, model, scope)
        return finish_shape(self.n1 + self.n2 * second, np.shape(p))

    def to_dict(self) -> dict:
        return {"scheme": "double", "n1": int(self.n1), "c1": int(self.c1),
                "r1": int(self.r1), "n2": int(self.n2), "c2": int(self.c2)}

    def describe(self) -> list[str]:
        return [f"plan      first sample n1 = {self.n1}: accept on {self.c1} or fewer, "
                f"reject on {self.r1} or more;",
                f"          otherwise second sample n2 = {self.n2}: accept on a total of "
                f"{self.c2} or fewer, reject on {self.c2 + 1} or more"]

    def max_asn(self, model: str, scope: Scope) -> tuple[float, float]:
        """Closed form of the largest ASN (see :func:`double_max_asn`)."""
        return double_max_asn(self.n1, self.c1, self.r1, self.n2, model, scope.lot_size)


def double_max_asn(n1, c1, r1, n2, model: str, N=None):
    """Largest full-inspection ASN of double plans over the OC curve, closed form.

    ``ASN = n1 + n2 G`` with ``G = P(c1 < d1 <= r1 - 1)``. Under the binomial
    model ``dG/dp = n1 [b(c1; n1-1, p) - b(r1-1; n1-1, p)]`` (``b`` the
    binomial mass), and the ratio of the two masses rises in ``p``, so ``G``
    has one maximum, where ``(p/(1-p))^(r1-1-c1) = C(n1-1, c1) / C(n1-1, r1-1)``.
    Under the Poisson model ``lambda^(r1-1-c1) = (r1-1)! / c1!``. Under the
    hypergeometric model ``G(D+1) - G(D)`` has the sign of
    ``P_D(c1) (n1 - c1) - P_D(r1-1) (n1 - r1 + 1)`` (turning one conforming
    item nonconforming), which changes sign once because the hypergeometric
    family has a monotone likelihood ratio in ``D``; the maximum is at the
    first ``D`` where it is not positive, found by bisection.

    Vectorised over the plan arguments. Returns ``(max ASN, level)`` where
    the level is ``p`` (or ``D / N``).
    """
    n1, c1, r1, n2 = (np.asarray(v, dtype=float) for v in np.broadcast_arrays(n1, c1, r1, n2))
    top = r1 - 1.0
    with np.errstate(all="ignore"):
        if model == "binomial":
            lc = (special.gammaln(n1) - special.gammaln(c1 + 1) - special.gammaln(n1 - c1))
            lt = (special.gammaln(n1) - special.gammaln(top + 1) - special.gammaln(n1 - top))
            odds = np.exp((lc - lt) / np.maximum(top - c1, 1.0))
            p = odds / (1.0 + odds)
            p = np.where(top >= n1, 1.0, p)
            x = p
            level = p
        elif model == "poisson":
            lam = np.exp((special.gammaln(top + 1) - special.gammaln(c1 + 1))
                         / np.maximum(top - c1, 1.0))
            x = lam / n1
            level = x
        elif model == "hypergeometric":
            def delta_nonpos(D):
                a = oc.hypergeometric_pmf(c1, n1, N, D) * (n1 - c1)
                b = oc.hypergeometric_pmf(top, n1, N, D) * (n1 - top)
                # Both masses vanish below c1 (G flat at 0: not yet past the
                # maximum) and a alone vanishes for D so large that more than
                # c1 are certain (past it).
                return np.where(a > 0, a <= b, D >= c1)
            lo = np.full(n1.shape, -1.0)   # delta > 0 below (or D = -1)
            hi = np.full(n1.shape, float(N))  # G(N) side: treat as non-positive
            while np.any(hi - lo > 1):
                mid = np.floor((lo + hi) / 2)
                ok = delta_nonpos(np.maximum(mid, 0.0)) | (mid >= N)
                hi = np.where(ok & (hi - lo > 1), mid, hi)
                lo = np.where(~ok & (hi - lo > 1), mid, lo)
            x = np.clip(hi, 0.0, float(N))
            level = x / N
        else:
            raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")
        g = np.zeros(n1.shape)
        jmax = int(np.max(top - c1)) if n1.size else 0
        for j in range(1, jmax + 1):
            d1 = c1 + j
            g = g + np.where(d1 <= top, stage_pmf(d1, n1, model, x, N), 0.0)
    out = n1 + n2 * g
    if out.ndim == 0:
        return float(out), float(level)
    return out, level



MINIMIZE = ("asn-aql", "asn-max")
C2_CAP = 2000
_TOL = 1e-12


@dataclass(frozen=True, kw_only=True)
class DoubleDesign:
    """Result of :func:`design_double`.

    Attributes
    ----------
    plan : DoublePlan
    model, scope, targets
    ratio : float
    minimize : str
    objective : float
        The minimised ASN.
    asn : dict
        ``{"aql", "rql", "max", "max_at"}`` under the design model.
    search : dict
        Bounds used, plans evaluated and why the search stopped.
    lot_counts : tuple or None
    """

    plan: DoublePlan
    model: str
    scope: Scope
    targets: Targets
    ratio: float
    minimize: str
    objective: float
    asn: dict
    search: dict = field(default_factory=dict)
    lot_counts: tuple | None = None

    def report_extra(self) -> dict:
        return {"feasible": True, "ratio": self.ratio, "minimize": self.minimize,
                "objective": self.objective, "search": self.search}


def _n2(n1, ratio):
    return np.floor(np.asarray(n1, dtype=float) * ratio + 0.5).astype(np.int64)


class _Eval:
    """Pa at both risk points and the objective for arrays of plans."""

    def __init__(self, model, targets, scope):
        self.model = model
        self.N = scope.lot_size
        self.t = targets
        if model == "hypergeometric":
            self.x_aql, self.x_rql = (float(v) for v in lot_targets(targets, self.N))
        else:
            self.x_aql, self.x_rql = targets.aql, targets.rql
        self.evaluated = 0

    def parts(self, n1, c1, c2, n2, x, r1=None):
        """``(Pa, P(second sample))`` for arrays of plans; every first-sample
        count ``c1 < d1 < r1`` (``r1`` defaults to ``c2 + 1``) is taken in one
        broadcast kernel call."""
        if r1 is None:
            r1 = np.asarray(c2) + 1
        n1, c1, c2, n2, r1 = (np.asarray(v, dtype=float)
                              for v in np.broadcast_arrays(n1, c1, c2, n2, r1))
        self.evaluated += n1.size
        N = self.N
        acc = stage_cdf(c1, n1, self.model, x, N)
        jmax = int(np.max(r1 - 1 - c1)) if n1.size else 0
        if jmax <= 0:
            return acc, np.zeros(n1.shape)
        j = np.arange(1, jmax + 1, dtype=float).reshape((-1,) + (1,) * n1.ndim)
        d1 = c1 + j
        valid = d1 < r1
        f = np.where(valid, stage_pmf(d1, n1, self.model, x, N), 0.0)
        g = stage_cdf(np.where(valid, c2 - d1, -1.0), n2, self.model, x, N, n1,
                      np.where(valid, d1, 0.0))
        return acc + (f * g).sum(axis=0), f.sum(axis=0)

    def pa_rql(self, n1, c1, c2, n2, r1=None):
        return self.parts(n1, c1, c2, n2, self.x_rql, r1)[0]

    def at_aql(self, n1, c1, c2, n2, r1=None):
        return self.parts(n1, c1, c2, n2, self.x_aql, r1)


def design_double(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                  lot_size: int | None = None, model: str | None = None,
                  per_unit: bool = False, ratio: float = 2.0, minimize: str = "asn-aql",
                  max_n: int | None = None) -> DoubleDesign:
    """Double plan with the smallest ASN meeting both risks (see module notes).

    Parameters
    ----------
    aql, rql, alpha, beta, lot_size, model, per_unit
        As for :func:`lotwise.families.single.design_single`.
    ratio : float
        ``n2 / n1`` (``n2`` is rounded to a whole number), between 0.1 and 10.
    minimize : {'asn-aql', 'asn-max'}
        ASN at the AQL, or the largest ASN over the OC curve.
    max_n : int, optional
        Largest affordable ``n1 + n2``.

    Raises
    ------
    Infeasible
        No double plan within the bounds meets both risks.
    """
    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    model = scope.check_model(model)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    check_targets(targets, per_unit)
    if isinstance(ratio, bool) or not isinstance(ratio, (int, float)) or not math.isfinite(ratio) \
            or not 0.1 <= ratio <= 10:
        raise InputError(f"--ratio ({ratio}) must be a number from 0.1 to 10 (n2 / n1)")
    if minimize not in MINIMIZE:
        raise InputError(f"--minimize ({minimize}) must be one of: {', '.join(MINIMIZE)}")
    if max_n is not None and max_n < 2:
        raise InputError(f"--max-n ({max_n}) must be at least 2 for a double plan")
    ev = _Eval(model, targets, scope)
    counts = None
    if model == "hypergeometric":
        counts = lot_targets(targets, lot_size)
        check_lot(targets, lot_size, counts)
    kernel = Kernel(model, targets, scope)

    # Largest n1 the bounds allow (n1 + n2 within the lot and --max-n).
    cap_total = max_n
    if lot_size is not None:
        cap_total = lot_size if cap_total is None else min(cap_total, lot_size)
    n1_cap = _n1_cap(cap_total, ratio)

    def lower_bound(c2: int) -> int | None:
        """Smallest n1 with n1 + n2 >= n_single(c2); None if no single n fits."""
        ns = int(n_min(kernel, np.array([c2]), beta, cap_total)[0])
        if ns < 0:
            return None
        n1 = max(1, int(math.floor((ns - 0.5) / (1 + ratio))) - 1)
        while n1 + int(_n2(n1, ratio)) < ns:
            n1 += 1
        return n1

    best = None  # (objective, n1, c2, c1)
    stopped = f"c2 reached the cap of {C2_CAP}"
    c2_last = 0
    for c2 in range(1, C2_CAP + 1):
        lb = lower_bound(c2)
        if lb is None:
            stopped = (f"no sample within {cap_total} units meets the consumer's risk with "
                       f"c2 = {c2}, nor with any larger c2")
            break
        if best is not None and lb > best[0] * (1 + 1e-9):
            stopped = (f"for c2 = {c2} every plan meeting beta has n1 >= {lb}, above the best "
                       f"ASN {best[0]:.4f}; larger c2 only raise this bound")
            break
        if n1_cap is not None and lb > n1_cap:
            stopped = f"for c2 = {c2} meeting beta needs n1 >= {lb}, beyond the cap of {n1_cap}"
            break
        c2_last = c2
        found = _search_c2(ev, c2, lb, ratio, n1_cap, beta, alpha, minimize, best)
        if found is not None and (best is None or _better(found, best)):
            best = found
    if best is None:
        raise Infeasible(
            f"no double plan with ratio {ratio} meets both risks (AQL "
            f"{format_level(aql, per_unit)} at alpha {format_pct(alpha)}, RQL "
            f"{format_level(rql, per_unit)} at beta {format_pct(beta)}): {stopped}",
            {"ratio": ratio, "c2_searched": c2_last})
    best = best + (best[2] + 1,)  # (objective, n1, c2, c1, r1)
    best, r1_search = _search_r1(ev, best, lower_bound, ratio, n1_cap, alpha, beta, minimize)
    obj, n1, c2, c1, r1 = best
    plan = DoublePlan(n1=int(n1), c1=int(c1), n2=int(_n2(n1, ratio)), c2=int(c2), r1=int(r1))
    asn_aql = float(plan.asn(ev.x_aql / lot_size if lot_size and model == "hypergeometric"
                             else ev.x_aql, model, scope))
    asn_rql = float(plan.asn(ev.x_rql / lot_size if lot_size and model == "hypergeometric"
                             else ev.x_rql, model, scope))
    amax, at = double_max_asn(plan.n1, plan.c1, plan.r1, plan.n2, model, lot_size)
    search = {"c1": [0, "c2 - 1"], "c2_searched": [1, c2_last], "c2_cap": C2_CAP,
              "n1_cap": n1_cap, "ratio": ratio,
              "r1": "c2 + 1 in this pass; every c1 < r1 <= c2 in the second (searched)",
              "plans_evaluated": ev.evaluated, "stopped": stopped,
              "searched": r1_search}
    return DoubleDesign(plan=plan, model=model, scope=scope, targets=targets, ratio=ratio,
                        minimize=minimize, objective=float(obj),
                        asn={"aql": asn_aql, "rql": asn_rql, "max": amax, "max_at": at},
                        search=search, lot_counts=counts)


def _smallest_c2(ev, n1, n2, f, first, r1, alpha, todo):
    """``c2[i, c1]``: for plans ``n1[i]`` and ``c1 < r1`` marked in ``todo``,
    the smallest ``c2 >= r1 - 1`` meeting the producer's risk (``Pa`` rises
    in ``c2``), or -1 where none does.

    ``f`` are the first-sample masses ``f(d1)``, ``d1 < r1``, at the AQL and
    ``first`` their cumulative sums ``F(c1)``. With the second-sample
    distribution functions ``G(k | d1)``,
    ``Pa(c1, c2) = F(c1) + sum_{c1 < d1 < r1} f(d1) G(c2 - d1 | d1)`` for every
    ``c1`` and a block of ``c2`` at once; the block doubles until every plan
    has its answer or the bound is reached. Counting items, ``c2 = r1 - 1 +
    n2`` accepts every lot that reaches the second sample; per unit the bound
    is where the second sample's count exceeds the block with probability
    below 1e-30 (a Poisson tail bound), beyond which ``Pa`` does not move.
    """
    x = ev.x_aql
    if ev.model == "poisson":
        lam = float(np.max(n2)) * x
        k_top = int(math.ceil(lam + 12.0 * math.sqrt(lam) + 70.0))
    else:
        k_top = int(np.max(n2))
    d1 = np.arange(r1, dtype=float)[None, :]
    out = np.full((n1.size, r1), -1, dtype=np.int64)
    todo = todo.copy()
    width = 16
    while True:
        width = min(width, k_top + 1)
        c2 = (r1 - 1 + np.arange(width, dtype=float))[None, None, :]          # (1, 1, W)
        g = stage_cdf(c2 - d1[:, :, None], n2[:, None, None].astype(float), ev.model, x,
                      ev.N, n1[:, None, None].astype(float), d1[:, :, None])   # (P, r1, W)
        ev.evaluated += n1.size * r1 * width
        t = f[:, :, None] * g
        # Second-sample acceptance summed over d1 > c1 (a reversed cumulative sum).
        tail = np.concatenate([np.cumsum(t[:, ::-1], axis=1)[:, ::-1][:, 1:],
                               np.zeros((n1.size, 1, width))], axis=1)
        meets = first[:, :, None] + tail >= 1 - alpha - _TOL
        hit = meets.any(axis=2) & todo
        out[hit] = (r1 - 1 + np.argmax(meets, axis=2))[hit]
        todo &= ~hit
        if not todo.any() or width > k_top:
            return out
        width *= 2


def _search_r1(ev, best, lower_bound, ratio, n1_cap, alpha, beta, minimize):
    """Improve ``best`` (objective, n1, c2, c1, r1) over rejection numbers
    ``c1 < r1 <= c2 + 1``; returns the best plan and what was searched.

    Neither the objective (ASN at the AQL, or the largest ASN: both depend on
    the first sample only through ``P(c1 < d1 < r1)``) nor the first sample
    depends on ``c2``, while ``Pa`` rises in ``c2`` at both points. So for
    given ``(n1, c1, r1)`` a plan exists exactly when the smallest ``c2``
    meeting the producer's risk also meets the consumer's, and that ``c2`` is
    the one to take. Every plan with ``r1`` accepts whenever the whole sample
    ``n1 + n2`` holds at most ``r1 - 1``, so meeting beta needs
    ``n1 >= L(r1 - 1)`` (the single-plan bound of fact 4, with ``r1 - 1`` for
    ``c2``); ``L`` does not fall in ``r1`` and ``ASN >= n1`` (fact 3), so
    ``r1`` runs from 1 until ``L(r1 - 1)`` exceeds the best objective, and
    for each ``r1`` every ``c1 < r1`` and every ``n1`` from ``L(r1 - 1)`` to
    the best objective is tried.
    """
    evaluated0 = ev.evaluated
    r1 = 0
    stop = ""
    while True:
        r1 += 1
        lb = lower_bound(r1 - 1)
        top = math.floor(best[0] * (1 + 1e-9))
        if n1_cap is not None:
            top = min(top, n1_cap)
        if lb is None or lb > top:
            stop = (f"for r1 = {r1} every plan meeting beta has n1 >= "
                    f"{'(none within the cap)' if lb is None else lb}, above the best ASN "
                    f"{best[0]:.4f} (or the cap)")
            break
        n1s = np.arange(max(lb, 1), top + 1, dtype=np.int64)
        n2s = _n2(n1s, ratio)
        # The first sample alone fixes the ASN at the AQL for every c1 (and
        # the largest a plan can reach: however large c2, Pa < P(d1 < r1)).
        f = stage_pmf(np.arange(r1, dtype=float)[None, :], n1s[:, None].astype(float),
                      ev.model, ev.x_aql, ev.N)
        first = np.cumsum(f, axis=1)
        asn_aql = n1s[:, None] + n2s[:, None] * (first[:, -1:] - first)
        todo = (asn_aql <= best[0] * (1 + 1e-9)) & (first[:, -1:] >= 1 - alpha - _TOL)
        todo &= np.arange(r1)[None, :] <= n1s[:, None]
        rows = np.flatnonzero(todo.any(axis=1))
        if not rows.size:
            continue
        table = _smallest_c2(ev, n1s[rows], n2s[rows], f[rows], first[rows], r1, alpha,
                             todo[rows])
        n1 = np.repeat(n1s[rows], r1)
        c1 = np.tile(np.arange(r1, dtype=np.int64), rows.size)
        c2 = table.ravel()
        have = c2 >= 0
        n1, c1, c2 = n1[have], c1[have], c2[have]
        if not n1.size:
            continue
        n2 = _n2(n1, ratio)
        good = ev.pa_rql(n1, c1, c2, n2, r1) <= beta + _TOL
        n1, c1, c2, n2 = n1[good], c1[good], c2[good], n2[good]
        if not n1.size:
            continue
        obj = _objective(ev, n1, c1, c2, n2, minimize, r1)
        for i in np.lexsort((c1, c2, n1, obj))[:8]:
            cand = (float(obj[i]), int(n1[i]), int(c2[i]), int(c1[i]), r1)
            if _better(cand, best):
                best = cand
    return best, {"r1": [1, r1 - 1], "c1": [0, "r1 - 1"],
                  "c2": "the smallest meeting alpha for each n1, c1, r1",
                  "n1": "L(r1 - 1) to the best ASN", "plans_evaluated": ev.evaluated - evaluated0,
                  "stopped": stop}


def _n1_cap(cap_total, ratio):
    """Largest n1 with n1 + n2 within ``cap_total`` (None: no cap)."""
    if cap_total is None:
        return None
    n1_cap = int(max(0, math.floor(cap_total / (1 + ratio))) + 2)
    while n1_cap > 0 and n1_cap + int(_n2(n1_cap, ratio)) > cap_total:
        n1_cap -= 1
    if n1_cap < 1:
        raise Infeasible(f"no double plan fits in {cap_total} units with ratio {ratio}")
    return n1_cap


def _better(a, b) -> bool:
    """Order on (objective, n1, c2, c1[, r1]) with a relative tie tolerance."""
    if a[0] < b[0] * (1 - 1e-9):
        return True
    if a[0] > b[0] * (1 + 1e-9):
        return False
    return a[1:] < b[1:]


def _bisect_lo(ev, c1, c2, lo, hi, ratio, beta):
    """Smallest n1 in (lo, hi] with Pa(RQL) <= beta, given it fails at lo and
    holds at hi (Pa falls in n1)."""
    lo = lo.copy()
    hi = hi.copy()
    act = hi - lo > 1
    while act.any():
        mid = (lo + hi) // 2
        good = ev.pa_rql(mid[act], c1[act], c2, _n2(mid[act], ratio)) <= beta + _TOL
        h, l_ = hi[act], lo[act]
        hi[act] = np.where(good, mid[act], h)
        lo[act] = np.where(good, l_, mid[act])
        act = hi - lo > 1
    return hi


def _bisect_hi(ev, c1, c2, lo, hi, ratio, alpha):
    """Largest n1 in [lo, hi) with Pa(AQL) >= 1 - alpha, given it holds at lo
    and fails at hi."""
    lo = lo.copy()
    hi = hi.copy()
    act = hi - lo > 1
    while act.any():
        mid = (lo + hi) // 2
        good = ev.at_aql(mid[act], c1[act], c2, _n2(mid[act], ratio))[0] >= 1 - alpha - _TOL
        h, l_ = hi[act], lo[act]
        lo[act] = np.where(good, mid[act], l_)
        hi[act] = np.where(good, h, mid[act])
        act = hi - lo > 1
    return lo


def _objective(ev, n1, c1, c2, n2, minimize, r1=None):
    _, second = ev.at_aql(n1, c1, c2, n2, r1)
    asn_aql = n1 + n2 * second
    if minimize == "asn-aql":
        return asn_aql
    mx, _ = double_max_asn(n1, c1, np.asarray(c2) + 1 if r1 is None else r1, n2, ev.model, ev.N)
    return np.maximum(mx, asn_aql)


def _search_c2(ev, c2, lb, ratio, n1_cap, beta, alpha, minimize, best):
    """Best plan with this c2 (or None), scanning every c1 < c2 and every
    feasible n1 not above the best objective so far."""
    c1 = np.arange(0, c2, dtype=np.int64)
    # Upper bracket for beta: the single plan (n_single(c2), c2) meets it and
    # the double plan accepts less often; start from a sample that size.
    hi0 = max(lb, 1)
    hi = np.full(c1.shape, hi0, dtype=np.int64)
    limit = n1_cap if n1_cap is not None else None
    ok = ev.pa_rql(hi, c1, c2, _n2(hi, ratio)) <= beta + _TOL
    while not ok.all():
        grow = ~ok
        if limit is not None:
            grow &= hi < limit
        if best is not None:
            grow &= hi <= best[0]
        if not grow.any():
            break
        new = hi[grow] * 2
        if limit is not None:
            new = np.minimum(new, limit)
        hi[grow] = new
        ok[grow] = ev.pa_rql(new, c1[grow], c2, _n2(new, ratio)) <= beta + _TOL
    if not ok.any():
        return None
    c1, hi = c1[ok], hi[ok]
    # Fact 4: every n1 below the bound fails beta, so lb - 1 is a failing end.
    lo = np.full(c1.shape, max(lb - 1, 0), dtype=np.int64)
    n_lo = _bisect_lo(ev, c1, c2, lo, hi, ratio, beta)
    if best is not None:
        keep = n_lo <= best[0] * (1 + 1e-9)
        c1, n_lo = c1[keep], n_lo[keep]
        if not c1.size:
            return None
    # Producer's risk at n_lo; where it fails no n1 works for that c1.
    a_ok = ev.at_aql(n_lo, c1, c2, _n2(n_lo, ratio))[0] >= 1 - alpha - _TOL
    c1, n_lo = c1[a_ok], n_lo[a_ok]
    if not c1.size:
        return None
    # A first answer from the smallest n1 of each c1, to bound the scan.
    obj0 = _objective(ev, n_lo, c1, c2, _n2(n_lo, ratio), minimize)
    i0 = int(np.argmin(obj0))
    cand = (float(obj0[i0]), int(n_lo[i0]), c2, int(c1[i0]))
    bound = cand[0] if best is None or _better(cand, best) else best[0]
    top = math.floor(bound * (1 + 1e-9))
    if n1_cap is not None:
        top = min(top, n1_cap)
    # n_hi: largest n1 meeting alpha, searched only up to the bound.
    upper = np.full(c1.shape, top + 1, dtype=np.int64)
    if n1_cap is not None and top + 1 > n1_cap:
        fails = np.ones(c1.shape, dtype=bool)  # beyond the cap: treated as failing
    else:
        fails = ev.at_aql(upper, c1, c2, _n2(upper, ratio))[0] < 1 - alpha - _TOL
    n_hi = np.where(fails, _bisect_hi(ev, c1, c2, n_lo, upper, ratio, alpha), top)
    n_hi = np.minimum(n_hi, top)
    start = cand if best is None or _better(cand, best) else best
    return _branch_and_bound(ev, c1, c2, n_lo, n_hi, ratio, minimize, start)


def _interval_bound(ev, c1, c2, a, b, ratio):
    """Lower bound of the ASN at the AQL over ``a <= n1 <= b``.

    ``ASN = n1 + n2 (P(d1 > c1) - P(d1 > c2))``; both tail probabilities rise
    with ``n1`` (the coupling of fact 1), ``n2`` does not fall, so over the
    interval ``ASN >= a + n2(a) max(0, P_a(d1 > c1) - P_b(d1 > c2))``.
    """
    x = ev.x_aql
    t1 = 1.0 - stage_cdf(c1, a, ev.model, x, ev.N)
    t2 = 1.0 - stage_cdf(c2, b, ev.model, x, ev.N)
    return a + _n2(a, ratio) * np.maximum(0.0, t1 - t2)


def _branch_and_bound(ev, c1, c2, n_lo, n_hi, ratio, minimize, cand):
    """Best (objective, n1, c2, c1) over ``n_lo <= n1 <= n_hi`` for each c1,
    or ``cand`` (the best so far) if none beats it.

    Intervals whose lower bound (:func:`_interval_bound`; the largest ASN is
    at least the ASN at the AQL, so the bound serves both objectives) exceeds
    the best objective found are dropped; the others are halved until they
    are short enough to evaluate point by point. Nothing is skipped that
    could beat or tie the answer.
    """
    best = cand
    keep = n_hi >= n_lo
    ci, a, b = c1[keep], n_lo[keep], n_hi[keep]
    while ci.size:
        lb = _interval_bound(ev, ci, c2, a, b, ratio)
        live = lb <= best[0] * (1 + 1e-9)
        ci, a, b = ci[live], a[live], b[live]
        if not ci.size:
            break
        short = b - a < 16
        if short.any():
            sc, sa, sb = ci[short], a[short], b[short]
            spans = sb - sa + 1
            rep_c1 = np.repeat(sc, spans)
            offs = np.arange(spans.sum()) - np.repeat(np.cumsum(spans) - spans, spans)
            n1s = np.repeat(sa, spans) + offs
            obj = _objective(ev, n1s, rep_c1, c2, _n2(n1s, ratio), minimize)
            order = np.lexsort((rep_c1, n1s, obj))
            for i in order[:64]:
                c = (float(obj[i]), int(n1s[i]), c2, int(rep_c1[i]))
                if _better(c, best):
                    best = c
        long_ = ~short
        ci, a, b = ci[long_], a[long_], b[long_]
        if not ci.size:
            break
        mid = (a + b) // 2
        # Evaluate each midpoint: a cheap way to tighten the best so far.
        obj = _objective(ev, mid, ci, c2, _n2(mid, ratio), minimize)
        i = int(np.argmin(obj))
        c = (float(obj[i]), int(mid[i]), c2, int(ci[i]))
        if _better(c, best):
            best = c
        ci = np.concatenate([ci, ci])
        a, b = np.concatenate([a, mid + 1]), np.concatenate([mid, b])
    return best


def parse_double(pairs: dict, text: str, option: str):
    """Double-plan notation (more indexed stages make a multiple plan)."""
    return build_staged(pairs, text, option)


FAMILY = Family(
    name="double", plan_class=DoublePlan, parse=parse_double, keys_hint=("n1",),
    poisson_redesign=True,
    design=design_double,
    design_options={"ratio": "second sample as a multiple of the first (default 2)",
                    "minimize": "asn-aql (default) or asn-max",
                    "max_n": "largest affordable n1 + n2"},
    option_types={"ratio": Option(kind=OptionKind.NUMBER, minimum=0.1, maximum=10),
                  "minimize": Option(kind=OptionKind.CHOICE, choices=MINIMIZE),
                  "max_n": Option(kind=OptionKind.WHOLE, minimum=2)},
    description="double sampling: a second sample when the first is inconclusive",
)
