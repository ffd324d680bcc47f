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
Bounds: ``0 <= c1 < r1 <= c2 + 1`` (``c1 <= n1``); ``n1 >= 1`` with
``n1 + n2`` at most the lot size (and ``--max-n``); ``n2 = round(ratio n1)``
(halves up). Within the bounds no plan is skipped, because every pruning
step rests on one of these facts:

1. **Pa falls in n1** for fixed ``(c1, r1, c2)`` (``n2`` does not decrease
   as ``n1`` grows). Coupling: the plan accepts exactly when
   ``S(n1) <= c1``, or ``S(n1) < r1`` and ``S(n1 + n2) <= c2``, ``S(m)`` the
   count in the first ``m`` units inspected; ``S`` does not decrease in
   ``m``, so a larger plan accepts only lots the smaller one accepts. (The
   same coupling holds without replacement and for a Poisson process.)
2. **Pa rises in c1, in r1 and in c2** (the acceptance event grows).
3. **ASN >= n1** (every plan inspects the first sample), and the largest ASN
   is at least the ASN at any level, the AQL and the RQL among them. The
   single plan ``(n, c)`` of the same targets is the double plan
   ``n1 = n, c1 = c, r1 = c + 1`` (no second sample, ASN ``n``), so when it
   fits the cap the answer has an objective of at most ``n``, and only
   ``n1 <= n`` need be searched; once a plan with objective ``A`` is known,
   only ``n1 <= A``.
4. **Necessary conditions from one sample.** The plan accepts whenever the
   whole sample holds at most ``r1 - 1`` (then ``S(n1) < r1`` and the total
   is at most ``c2``), so ``Pa(RQL) >= P_RQL(S(n1 + n2) <= r1 - 1)``: beta
   bounds ``r1`` from above for each ``n1``, and the smallest n1 of all is
   the one whose whole sample meets beta with ``r1 = 1``. The plan accepts
   whenever ``S(n1) <= c1``, so ``F_RQL(c1) <= beta`` bounds ``c1``; it
   accepts only when ``S(n1) < r1``, so ``F_AQL(r1 - 1) >= 1 - alpha``
   bounds ``r1`` from below (``F`` the first sample's distribution
   function).
5. **The ASN does not depend on c2.** Both objectives depend on the second
   sample only through ``P(c1 < S(n1) < r1)``. So for given
   ``(n1, c1, r1)`` a plan exists exactly when the smallest ``c2`` meeting
   the producer's risk also meets the consumer's (fact 2), and that ``c2``
   is the one taken.
6. **A bracket for c2.** With ``f`` the first sample's masses, ``G(k | d)``
   the second sample's distribution function given ``d`` in the first
   (rising in ``k``, and in ``d`` under the hypergeometric model, where the
   remaining lot holds fewer nonconforming items) and ``P2 = F(r1 - 1) -
   F(c1)``: ``F(c1) + P2 G(c - r1 + 1 | c1 + 1) <= Pa(c2 = c) <= F(c1) +
   P2 G(c - c1 - 1 | r1 - 1)``. Inverting both sides at ``1 - alpha``
   gives a bracket of width ``r1 - c1 - 2`` holding the smallest ``c2``; the
   lower bound of ``Pa(RQL)`` at the bracket's lower end drops plans that
   cannot meet beta (fact 2).

Method: first a probe of 24 values of n1 spread over the range (a good
objective early, and the cost estimate, see the budget below) when the range
holds more than 128 values, then every n1 from the smallest (fact 4) up to
the best objective (fact 3), in blocks of up to 64 (the first block's best
bounding the next ones). For a block, exact tables: the first sample's
masses at the AQL and RQL, the second sample's distribution functions (under
the hypergeometric model one row per first-sample count, each row from the
previous by moving one conforming item of the remaining lot to
nonconforming, an exact convex recursion), and for the plans left by facts
3-6 the cumulative tables ``W(r, c) = sum_{d < r} f(d) G(c - d | d)``, so
that ``Pa(c1, r1, c2) = F(c1) + W(r1, c2) - W(c1 + 1, c2)``; the smallest
``c2`` is found by bisection inside its bracket (by direct evaluation where
the bracket leaves the tables). Bounds used only to discard plans carry a
rounding slack of 1e-9. Under ``asn-max`` the closed form of the largest ASN
is taken for the plans meeting both risks in rising order of the larger of
the ASN at the AQL and at the RQL, stopping at the first above the best.
Ties in the objective (within 1e-9 relative) go to the smaller ``n1``, then
``c2``, then ``c1``, then ``r1``. The search record (``search``) names the
n1 range, the single plan, the plans evaluated, the work done and estimated,
and why it stopped.

Budget: the work (table cells, about 0.1 microsecond each) is estimated from
the probe before the full search: the probe's cost per n1 under the best
objective it reached, times the n1 left (for a range of at most 128 values,
three times the size of every n1's tables, an upper bound). Above
:data:`SEARCH_BUDGET` the design is refused at once (:class:`TooCostly`, one
line, exit 2) with the estimate and what to change; close targets with a
small AQL are the costly ones (the number of n1 grows as 1/AQL, the tables
per n1 as the square of the acceptance numbers, which grow as the RQL/AQL
ratio nears 1).

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
from lotwise.core.quantities import (InputError, Infeasible, TooCostly, format_level,
                                     format_pct)
from lotwise.core.search import (Kernel, check_lot, check_targets, last_true, n_min,
                                 smallest_plan)
from lotwise.core.stages import finish_shape, stage_cdf, stage_pmf
from lotwise.core.types import Scope, Targets, lot_targets
from lotwise.families.base import Family, Option, OptionKind
from lotwise.families.staged import StagedPlan, build_staged, whole

__all__ = ["DoublePlan", "DoubleDesign", "design_double", "double_max_asn", "MINIMIZE",
           "SEARCH_BUDGET", "FAMILY"]


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
#: Work a double-plan search may take, in units of about 0.1 microsecond (one
#: cell of a cumulative table; a probability mass counts 3, a hypergeometric
#: one 10), estimated before the search: about 20 s on the project machine
#: (2 cores; 10-20 million units a second). The estimate runs high by up to
#: 2.3 times for the binomial model.
SEARCH_BUDGET = 2 * 10**8
_TOL = 1e-12     # the slack a risk may exceed its target by (as in design_single)
_SLACK = 1e-9    # rounding room of bounds used only to discard plans
_TIE = 1e-9      # relative tolerance of the objective within which ties go to the order
_PROBE = 24      # n1 values of the first probe
_BLOCK = 64      # n1 values per block (at most)
_CELLS = 4_000_000  # table cells per block (at most, about; 32 MB a table)


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
        self.rows: dict = {}  # the last mass row of each level (see _mass_rows)

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
    TooCostly
        The search would take more than :data:`SEARCH_BUDGET` units of work
        (estimated before it starts; the message says how much and what to
        change).
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

    best, single = _single_start(ev, kernel, alpha, beta, ratio, n1_cap)
    if best is None and n1_cap is None:
        raise Infeasible(f"no double plan with ratio {ratio} meets both risks: not even the "
                         "single plan it contains", {"ratio": ratio})
    n1_from = _lowest_n1(kernel, beta, cap_total, ratio)
    n1_to = n1_cap if best is None else min(best[1], n1_cap or best[1])
    what = (f"AQL {format_level(aql, per_unit)} at alpha {format_pct(alpha)}, RQL "
            f"{format_level(rql, per_unit)} at beta {format_pct(beta)}")
    if n1_from is None or n1_from > n1_to:
        raise Infeasible(
            f"no double plan with ratio {ratio} meets both risks ({what}): no sample within "
            f"{cap_total} units meets the consumer's risk", {"ratio": ratio})
    sweep = _Sweep(ev, ratio, alpha, beta, minimize, best)
    sweep.run(n1_from, n1_to, what)
    if not sweep.pool:
        raise Infeasible(
            f"no double plan with ratio {ratio} meets both risks ({what}) with n1 + n2 within "
            f"{cap_total} units (every n1 from {n1_from} to {n1_to} searched)",
            {"ratio": ratio, "n1_searched": [n1_from, n1_to]})
    _, n1, c2, c1, r1 = sweep.answer()
    plan = DoublePlan(n1=int(n1), c1=int(c1), n2=int(_n2(n1, ratio)), c2=int(c2), r1=int(r1))
    # The objective as the plan computes it (the search summed the same
    # masses in another order: they agree to rounding).
    _, second = ev.at_aql(plan.n1, plan.c1, plan.c2, plan.n2, plan.r1)
    obj = float(plan.n1 + plan.n2 * second)
    if minimize == "asn-max":
        obj = max(obj, double_max_asn(plan.n1, plan.c1, plan.r1, plan.n2, model, lot_size)[0])
    asn_aql = float(plan.asn(ev.x_aql / lot_size if lot_size and model == "hypergeometric"
                             else ev.x_aql, model, scope))
    asn_rql = float(plan.asn(ev.x_rql / lot_size if lot_size and model == "hypergeometric"
                             else ev.x_rql, model, scope))
    amax, at = double_max_asn(plan.n1, plan.c1, plan.r1, plan.n2, model, lot_size)
    search = {"n1": [n1_from, sweep.n1_last], "n1_cap": n1_cap, "ratio": ratio,
              "c1": [0, "r1 - 1"], "r1": "every r1 > c1 meeting the necessary conditions",
              "c2": "the smallest meeting alpha for each n1, c1, r1",
              "single_plan": single, "plans_evaluated": sweep.evals,
              "work": sweep.work, "work_estimate": sweep.estimate,
              "budget": SEARCH_BUDGET, "stopped": sweep.stopped}
    return DoubleDesign(plan=plan, model=model, scope=scope, targets=targets, ratio=ratio,
                        minimize=minimize, objective=float(obj),
                        asn={"aql": asn_aql, "rql": asn_rql, "max": amax, "max_at": at},
                        search=search, lot_counts=counts)


def _single_start(ev, kernel, alpha, beta, ratio, n1_cap):
    """Fact 3: the single plan ``(n, c)`` of the targets is the double plan
    ``n1 = n, c1 = c, r1 = c + 1`` (no second sample, objective ``n``), the
    search's first answer when it fits the cap. Returns ``(best or None,
    {"n", "c"} or None)``."""
    found = smallest_plan(kernel, alpha, beta, None, None)
    if found is None:
        return None, None
    n, c = (int(v) for v in found)
    single = {"n": n, "c": c}
    if n1_cap is not None and n > n1_cap:
        return None, single
    n2 = int(_n2(n, ratio))
    if (ev.at_aql(n, c, c, n2, c + 1)[0] >= 1 - alpha - _TOL
            and ev.pa_rql(n, c, c, n2, c + 1) <= beta + _TOL):
        return (float(n), n, c, c, c + 1), single
    return None, single


def _lowest_n1(kernel, beta, cap_total, ratio):
    """Smallest n1 whose whole sample ``n1 + n2`` can meet beta at all (fact 4
    with ``r1 = 1``: ``n1 + n2 >= n_single(0)``); None if none within the cap."""
    ns = int(n_min(kernel, np.array([0]), beta, cap_total)[0])
    if ns < 0:
        return None
    n1 = max(1, int(math.floor((ns - 0.5) / (1 + ratio))) - 1)
    while n1 + int(_n2(n1, ratio)) < ns:
        n1 += 1
    return n1


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


# --- the search ------------------------------------------------------------------------

class _Sweep:
    """The search over n1 (see the module notes): a probe of spread-out n1
    values, the cost estimate, then every n1 in blocks, each block keeping the
    plans within the tie tolerance of the best objective."""

    def __init__(self, ev, ratio, alpha, beta, minimize, best):
        self.ev, self.ratio, self.alpha, self.beta = ev, ratio, alpha, beta
        self.minimize = minimize
        self.pool = [] if best is None else [best]
        self.evals = 0
        self.work = 0
        self.estimate = 0
        self.n1_last = 0
        self.stopped = ""

    def bound(self):
        return min(p[0] for p in self.pool) if self.pool else None

    def top(self, n1_to):
        b = self.bound()
        return n1_to if b is None else min(n1_to, math.floor(b * (1 + _TIE)))

    def block(self, n1b):
        blk = _Block(self.ev, n1b, self.ratio, self.beta, self.minimize == "asn-max")
        got = blk.plans(self.alpha, self.beta, self.bound())
        self.work += blk.work
        self.evals += blk.evals
        if got is None:
            return blk
        asn, low, n1, c2, c1, r1 = got
        if self.minimize == "asn-aql":
            self._add(asn, n1, c2, c1, r1)
            return blk
        # The largest ASN is at least the ASN at the AQL and at the RQL
        # (``low``): take the plans in rising order of that and stop at the
        # first above the best.
        order = np.lexsort((r1, c1, c2, n1, low))
        start, chunk = 0, 32
        while start < order.size:
            b = self.bound()
            i = order[start:start + chunk]
            if b is not None:
                i = i[low[i] <= b * (1 + _TIE) + _SLACK]
                if not i.size:
                    break
            start, chunk = start + chunk, min(2 * chunk, 4096)
            mx, _ = double_max_asn(n1[i], c1[i], r1[i], blk.n2_of(n1[i]), self.ev.model,
                                   self.ev.N)
            steps = 2 * math.log2(self.ev.N) if self.ev.N else 2.0
            self.work += int(i.size * (int((r1[i] - c1[i]).max()) + steps)
                             * _kernel_weight(self.ev.model))
            self._add(np.maximum(mx, asn[i]), n1[i], c2[i], c1[i], r1[i])
        return blk

    def _add(self, obj, n1, c2, c1, r1):
        b = self.bound()
        m = float(obj.min()) if b is None else min(b, float(obj.min()))
        for i in np.flatnonzero(obj <= m * (1 + _TIE)):
            self.pool.append((float(obj[i]), int(n1[i]), int(c2[i]), int(c1[i]), int(r1[i])))
        m = self.bound()
        self.pool = [p for p in self.pool if p[0] <= m * (1 + _TIE)]

    def run(self, n1_from, n1_to, what):
        top = self.top(n1_to)
        if top - n1_from + 1 <= 2 * _BLOCK:
            # A short range: its tables' size is the estimate (no probe; the
            # blocks below find the same plans, the first block's best bounding
            # the rest).
            self.estimate = int(_table_work(self.ev, np.arange(n1_from, top + 1), self.ratio)
                                * 3)
            self._check(self.estimate, what, f"every n1 from {n1_from} to {top}")
        else:
            probe = np.unique(np.linspace(n1_from, top, _PROBE).round().astype(np.int64))
            self._check(_table_work(self.ev, probe, self.ratio) * 3, what, "the first probe")
            blocks = []
            for n1 in probe:  # one at a time: their tables differ in size
                blocks.append(self.block(np.array([n1])))
            top = self.top(n1_to)
            # The estimate: what the probed n1 would cost under the bound reached,
            # per n1, times the n1 left.
            per_n1 = sum(b.cost(self.alpha, self.beta, self.bound()) for b in blocks) / probe.size
            self.estimate = int(self.work + per_n1 * max(top - n1_from + 1, 0))
            self._check(self.estimate, what, f"every n1 from {n1_from} to {top}")
        # Blocks of at most _BLOCK n1, fewer where one n1's tables are large
        # (memory: about _CELLS cells per table).
        cells = max(_table_work(self.ev, np.array([top]), self.ratio), 1)
        size = int(max(1, min(_BLOCK, _CELLS // cells)))
        n1 = n1_from
        while n1 <= self.top(n1_to):
            last = min(n1 + size, self.top(n1_to) + 1)
            self.block(np.arange(n1, last, dtype=np.int64))
            # (the n1 of the block above the bound it reached hold no plan to keep:
            # every plan has ASN >= n1)
            self.n1_last = min(last - 1, self.top(n1_to))
            n1 = last
        b = self.bound()
        self.stopped = (f"n1 reached {self.n1_last + 1}, above the best objective {b:.4f} "
                        "(every plan has ASN >= n1)" if b is not None and
                        self.n1_last + 1 > b * (1 + _TIE)
                        else f"n1 reached the cap of {n1_to}")

    def _check(self, work, what, span):
        if work > SEARCH_BUDGET:
            raise TooCostly(
                f"double-plan design for {what}: the search ({span}) would need about "
                f"{_sci(work)} units of work, above the budget of {_sci(SEARCH_BUDGET)} (about "
                f"{SEARCH_BUDGET / 1e7:.0f} s at 0.1 microsecond a unit); widen the gap between the AQL and RQL, raise "
                "the AQL, or cap the sample with --max-n or a lot size")

    def answer(self):
        m = self.bound()
        return min((p for p in self.pool if p[0] <= m * (1 + _TIE)), key=lambda p: p[1:])


def _sci(x) -> str:
    """``1.2e9`` style (two figures)."""
    m, e = f"{float(x):.1e}".split("e")
    return f"{m.rstrip('0').rstrip('.')}e{int(e)}"


def _table_work(ev, n1b, ratio):
    """Size of the tables of one block (an estimate made before building them)."""
    n2 = _n2(n1b, ratio)
    hyper = ev.model == "hypergeometric"
    pr = ev.x_rql / ev.N if hyper else ev.x_rql
    pa = ev.x_aql / ev.N if hyper else ev.x_aql
    dt = float((n1b + n2).max()) * pr + 3
    mean = float(n2.max()) * pa
    kt = dt + mean + 8 * math.sqrt(mean) + 12
    w = _kernel_weight(ev.model)
    rows = 2 * dt if hyper else w
    return int(n1b.size * (3 * w * dt + 2 * rows * kt + 2 * dt * kt))


def _kernel_weight(model):
    """Work units of one probability mass (a unit is one cell of a
    cumulative table, about 0.1 microseconds)."""
    return 10 if model == "hypergeometric" else 3


class _Block:
    """Exact tables of one block of first-sample sizes ``n1`` and the plans
    of the block that meet both risks.

    ``fa``, ``fr``: first-sample masses ``f(d)`` at the AQL and RQL, ``d <
    dt``; ``Fa``, ``Fr`` their cumulative sums; ``Ga``, ``Gr``: second-sample
    distribution functions ``G(k | d)`` (not depending on ``d`` except under
    the hypergeometric model), ``k < kt``.
    """

    def __init__(self, ev, n1b, ratio, beta, largest=False):
        self.ev = ev
        self.largest = largest  # the objective is the largest ASN
        self.n1 = n1b
        self.ratio = ratio
        self.n2 = _n2(n1b, ratio)
        self.evals = 0
        model, N = ev.model, ev.N
        hyper = model == "hypergeometric"
        pr = ev.x_rql / N if hyper else ev.x_rql
        nt = (self.n1 + self.n2).astype(float)
        # Counts up to the consumer's quantile of the whole sample (r1 - 1 is
        # at most that: fact 4), found below the mean when beta < 1/2.
        mean = float(nt.max()) * pr
        dt = int(math.ceil(mean + (0.0 if beta < 0.5 else 10 * math.sqrt(mean) + 10))) + 3
        if hyper:
            dt = min(dt, int(ev.x_rql) + 2)
        while True:
            d = np.arange(dt, dtype=float)[None, :]
            tot = np.cumsum(_mass_rows(model, nt, ev.x_rql, N, dt, ev.rows), axis=1)
            if hyper or np.all(tot[:, -1] > beta + _TOL + _SLACK):
                break
            dt *= 2
        self.dt = dt
        self.fa = _mass_rows(model, self.n1, ev.x_aql, N, dt, ev.rows)
        self.fr = _mass_rows(model, self.n1, ev.x_rql, N, dt, ev.rows)
        self.Fa = np.cumsum(self.fa, axis=1)
        self.Fr = np.cumsum(self.fr, axis=1)
        # Fact 4: r1 - 1 is at most the largest count c with P_RQL(whole
        # sample <= c) <= beta.
        self.r1max = (tot <= beta + _TOL + _SLACK).sum(axis=1)
        self.work = 3 * self.n1.size * dt * _kernel_weight(model)

    def n2_of(self, n1):
        return _n2(n1, self.ratio)

    def _second(self, dlo, dhi):
        """``Ga``, ``Gr`` for ``dlo <= d < dhi`` (rows) and ``k < kt``; ``kq``
        bounds the excess ``c2 - (r1 - 1)`` looked up in the bracket."""
        ev = self.ev
        model, N = ev.model, ev.N
        hyper = model == "hypergeometric"
        pa = ev.x_aql / N if hyper else ev.x_aql
        mean = float(self.n2.max()) * pa
        kq = int(math.ceil(mean + 8 * math.sqrt(mean) + 12))
        if model != "poisson":
            kq = min(kq, int(self.n2.max()) + 1)
        self.kq = kq
        self.kt = kt = self.dt + kq
        n2 = self.n2.astype(float)
        if not hyper:
            self.d0 = 0
            self.Ga, self.Gr = (np.minimum(np.cumsum(_mass_rows(model, self.n2, x, N, kt,
                                                                ev.rows), axis=1), 1.0)
                                for x in (ev.x_aql, ev.x_rql))
            self.work += 2 * n2.size * kt * _kernel_weight(model)
            return
        self.d0 = dlo
        self.Ga = _hyper_rows(self.n1, self.n2, N, int(ev.x_aql), dlo, dhi, kt)
        self.Gr = _hyper_rows(self.n1, self.n2, N, int(ev.x_rql), dlo, dhi, kt)
        self.work += 2 * n2.size * kt * (_kernel_weight(model) + 2 * (dhi - dlo))

    def g(self, G, bi, d, k):
        """``G(k | d)`` for arrays (0 where ``k < 0``)."""
        kk = np.minimum(np.maximum(k, 0), self.kt - 1)
        if G.ndim == 2:
            out = G[bi, kk]
        else:
            out = G[bi, np.minimum(np.maximum(d - self.d0, 0), G.shape[1] - 1), kk]
        return np.where(k < 0, 0.0, out)

    def candidates(self, alpha, beta, bound):
        """``(bi, c1, r1)``: the plans of the block that pass the necessary
        conditions: ``F_r(c1) <= beta`` (the first sample alone accepts that
        often), ``F_a(r1 - 1) >= 1 - alpha`` (the plan accepts at most
        that often), ``r1 - 1`` within fact 4's bound, and the ASN at the AQL
        within the tie tolerance of ``bound``."""
        thr = 1 - alpha - _TOL
        c1max = np.minimum((self.Fr <= beta + _TOL + _SLACK).sum(axis=1) - 1, self.n1)
        r1min = (self.Fa < thr - _SLACK).sum(axis=1) + 1
        live = (c1max >= 0) & (r1min <= self.r1max)
        if bound is not None:
            live &= self.n1 <= bound * (1 + _TIE)
        if not live.any():
            return None
        rlo = max(int(r1min[live].min()), 1)
        c1 = np.arange(int(c1max[live].max()) + 1)[None, :, None]
        r1 = np.arange(rlo, int(self.r1max[live].max()) + 1)[None, None, :]
        b = np.arange(self.n1.size)[:, None, None]
        ok = (live[:, None, None] & (c1 <= c1max[:, None, None])
              & (r1 >= r1min[:, None, None]) & (r1 <= self.r1max[:, None, None]) & (r1 > c1))
        if bound is not None:
            sec = self.Fa[b, r1 - 1] - self.Fa[b, c1]
            if self.largest:
                sec = np.maximum(sec, self.Fr[b, r1 - 1] - self.Fr[b, c1])
            asn = self.n1[:, None, None] + self.n2[:, None, None] * sec
            ok &= asn <= bound * (1 + _TIE) + _SLACK
        bi, ci, ri = np.nonzero(ok)
        if not bi.size:
            return None
        return bi, ci.astype(np.int64), (ri + rlo).astype(np.int64)

    def cost(self, alpha, beta, bound):
        """Work of this block under ``bound``: its tables and the cumulative
        tables of its candidates (an estimate: the bracket is taken as wide
        as the second sample's range)."""
        cand = self.candidates(alpha, beta, bound)
        if cand is None:
            return self.work / 2
        bi, c1, r1 = cand
        rows = int(r1.max() - c1.min())
        cols = int(r1.max() - r1.min()) + getattr(self, "kq", self.dt)
        return self.work + 2 * self.n1.size * rows * cols

    def plans(self, alpha, beta, bound):
        """Plans of the block meeting both risks with ASN at the AQL within
        the tie tolerance of ``bound``: arrays ``(asn_aql, n1, c2, c1, r1)``,
        or None."""
        cand = self.candidates(alpha, beta, bound)
        if cand is None:
            return None
        bi, c1, r1 = cand
        thr = 1 - alpha - _TOL
        self._second(int(c1.min()) + 1, max(int(r1.max()), int(c1.min()) + 2))
        Fc = self.Fa[bi, c1]
        direct = Fc >= thr  # c2 = r1 - 1 already meets alpha
        p2 = np.where(direct, 1.0, self.Fa[bi, r1 - 1] - Fc)
        q = np.where(direct, 0.0, (thr - Fc) / p2)
        # Bracket of c2 (fact 6): G rises in k (and in d), so
        # F(c1) + P2 G(c - r1 + 1 | c1 + 1) <= Pa(c) <= F(c1) + P2 G(c - c1 - 1 | r1 - 1).
        klo = _smallest_k(self, self.Ga, bi, r1 - 1, q - _SLACK, self.kt)
        c2lo = np.where(direct, r1 - 1, np.maximum(r1 - 1, c1 + 1 + klo))
        khi = _smallest_k(self, self.Ga, bi, c1 + 1, q + _SLACK, self.kq)
        c2hi = np.where(direct, r1 - 1, r1 - 1 + khi)
        # The consumer's risk at the bracket's lower end, from below: Pa(RQL)
        # rises in c2 (fact 2), so a plan failing there fails at its c2.
        Frc = self.Fr[bi, c1]
        low = Frc + (self.Fr[bi, r1 - 1] - Frc) * self.g(self.Gr, bi, c1 + 1, c2lo - r1 + 1)
        keep = low <= beta + _TOL + _SLACK
        bi, c1, r1, c2lo, c2hi, khi = (a[keep] for a in (bi, c1, r1, c2lo, c2hi, khi))
        if not bi.size:
            return None
        n1, n2 = self.n1[bi], self.n2[bi]
        asn = n1 + n2 * (self.Fa[bi, r1 - 1] - self.Fa[bi, c1])
        low = asn  # a lower bound of the objective
        if self.largest:
            low = np.maximum(asn, n1 + n2 * (self.Fr[bi, r1 - 1] - self.Fr[bi, c1]))
        if bound is not None:
            keep = low <= bound * (1 + _TIE) + _SLACK
            bi, c1, r1, c2lo, c2hi, khi, n1, n2, asn, low = (
                a[keep] for a in (bi, c1, r1, c2lo, c2hi, khi, n1, n2, asn, low))
            if not bi.size:
                return None
        c2, pr = self._c2_and_beta(bi, c1, r1, c2lo, c2hi, khi, n1, n2, thr, alpha)
        good = (c2 >= 0) & (pr <= beta + _TOL)
        if not good.any():
            return None
        return asn[good], low[good], n1[good], c2[good], c1[good], r1[good]

    def _c2_and_beta(self, bi, c1, r1, c2lo, c2hi, khi, n1, n2, thr, alpha):
        """The smallest ``c2`` meeting alpha (bisection inside the bracket on
        cumulative tables, or direct evaluation where the bracket leaves the
        tables) and ``Pa(RQL)`` there."""
        inside = khi < self.kq
        hi = np.where(inside, c2hi, c2lo)
        lo = c2lo - 1
        ok_top = np.zeros(bi.size, dtype=bool)
        pr = np.full(bi.size, np.inf)
        c2 = np.full(bi.size, -1, dtype=np.int64)
        if inside.any():
            ub, row = np.unique(bi[inside], return_inverse=True)
            rows = np.zeros(bi.size, dtype=np.int64)
            rows[inside] = row
            d0, d1 = int(c1[inside].min()) + 1, int(r1[inside].max())
            cmin, cmax = int(c2lo[inside].min()), int(c2hi[inside].max())
            wa = _wtable(self, self.fa, self.Ga, ub, d0, d1, cmin, cmax)
            wr = _wtable(self, self.fr, self.Gr, ub, d0, d1, cmin, cmax)
            self.work += 2 * wa.size

            def pa(w, F, m, c):
                return (F[bi[m], c1[m]] + w[rows[m], r1[m] - d0, c - cmin]
                        - w[rows[m], c1[m] + 1 - d0, c - cmin])

            ok_top[inside] = pa(wa, self.Fa, inside, hi[inside]) >= thr
            self.evals += int(inside.sum())
            act = inside & ok_top & (hi - lo > 1)
            while act.any():
                mid = (lo + hi) // 2
                ok = pa(wa, self.Fa, act, mid[act]) >= thr
                self.evals += int(act.sum())
                h, l_ = hi[act], lo[act]
                hi[act] = np.where(ok, mid[act], h)
                lo[act] = np.where(ok, l_, mid[act])
                act = inside & ok_top & (hi - lo > 1)
            tab = inside & ok_top
            c2[tab] = hi[tab]
            pr[tab] = pa(wr, self.Fr, tab, c2[tab])
        slow = ~(inside & ok_top)
        if slow.any():
            ev = self.ev
            before = ev.evaluated
            c2[slow] = _direct_c2(ev, n1[slow], c1[slow], r1[slow], n2[slow], c2lo[slow], thr)
            have = slow & (c2 >= 0)
            if have.any():
                pr[have] = ev.pa_rql(n1[have], c1[have], c2[have], n2[have], r1[have])
            self.evals += ev.evaluated - before
            self.work += 64 * (ev.evaluated - before) * int((r1[slow] - c1[slow]).max())
        return c2, pr


def _smallest_k(blk, G, bi, d, q, limit):
    """Smallest ``k`` in ``[0, limit)`` with ``G(k | d) >= q`` (``limit``
    where none), by bisection (``G`` rises in ``k``)."""
    lo = np.full(bi.shape, -1, dtype=np.int64)
    hi = np.full(bi.shape, limit, dtype=np.int64)
    act = hi - lo > 1
    while act.any():
        mid = (lo + hi) // 2
        ok = blk.g(G, bi, d, mid) >= q
        hi = np.where(act & ok, mid, hi)
        lo = np.where(act & ~ok, mid, lo)
        act = hi - lo > 1
    return hi


def _wtable(blk, f, G, ub, d0, d1, cmin, cmax):
    """``W[i, r - d0, c - cmin] = sum_{d0 <= d < r} f(d) G(c - d | d)`` for the
    block rows ``ub``, ``d0 <= r <= d1`` and ``cmin <= c <= cmax``, so that
    ``Pa(c1, r1, c) = F(c1) + W[r1] - W[c1 + 1]``."""
    d = np.arange(d0, d1, dtype=np.int64)[None, :, None]
    c = np.arange(cmin, cmax + 1, dtype=np.int64)[None, None, :]
    b = ub[:, None, None]
    w = np.zeros((ub.size, d1 - d0 + 1, cmax - cmin + 1))
    np.cumsum(f[b, d] * blk.g(G, b, d, c - d), axis=1, out=w[:, 1:, :])
    return w


def _mass_rows(model, n, x, N, width, memo: dict):
    """``out[i, d]``: probability that a sample of ``n[i]`` (rising) finds
    ``d < width``. Under the binomial and hypergeometric models each row
    comes from the previous one by adding one unit to the sample at a time
    (exact, every step a convex combination: the unit is nonconforming with
    probability ``p``, or ``(D - d) / (N - m)`` after ``m`` units holding
    ``d``); a row more than 16 units from the previous one, and every
    Poisson row, is computed directly.

    ``memo`` (a dict kept by the evaluator) remembers the last rows computed at
    each level, 64 counts wider than asked, so that a later call's first row
    also comes from one of them by a few units (the entries ``d < width`` of
    a row depend only on the entries ``d < width`` before it)."""
    n = np.asarray(n, dtype=np.int64)
    if model == "poisson":
        d = np.arange(width, dtype=float)
        return stage_pmf(d[None, :], n[:, None].astype(float), model, x, N)
    wide = width + 64
    row, last = None, None
    known = memo.setdefault((model, float(x)), {})
    if n.size:
        m = int(n[0])
        near = [m0 for m0, r0 in known.items() if 0 <= m - m0 <= 16 and r0.size >= width]
        if near:
            last = max(near)
            row = known[last][:wide].copy()
            wide = row.size
    d = np.arange(wide, dtype=float)
    out = np.empty((n.size, wide))
    left = x - d  # (hypergeometric) nonconforming items not yet in the sample, per count
    for i, m in enumerate(n):
        if i:
            last = int(n[i - 1])
        gap = int(m) - last if last is not None else -1
        if row is None or gap > 16 or gap < 0:
            row = stage_pmf(d, float(m), model, x, N)
        else:
            for u in range(last, int(m)):  # u units already in the sample
                if model == "binomial":
                    moved = row * float(x)
                else:  # (the ufuncs themselves: np.clip's wrapper costs more than the work)
                    moved = row * np.minimum(np.maximum(left / (N - u), 0.0), 1.0)
                row = row - moved
                row[1:] += moved[:-1]
        out[i] = row
    if n.size:
        known.pop(int(n[-1]), None)
        if len(known) >= 8:  # forget the oldest (several series of n share a level)
            known.pop(next(iter(known)))
        known[int(n[-1])] = out[-1].copy()
    return out[:, :width]


def _hyper_rows(n1, n2, N, D, dlo, dhi, kt):
    """``G[b, d - dlo, k]``: distribution function of the second sample
    (``n2[b]`` units from the ``N - n1[b]`` left, holding ``D - d``
    nonconforming) for ``dlo <= d < dhi``, ``k < kt``; 1 where ``d > D``.

    The masses of the row with the fewest nonconforming items left are
    computed directly, the others by turning one conforming item of the
    remaining lot nonconforming at a time (exact, every step a convex
    combination): ``P'(k) = P(k) (1 - (n2 - k) / R) + P(k - 1) (n2 - k + 1) / R``
    with ``R`` the conforming items left.
    """
    B = n1.size
    out = np.ones((B, dhi - dlo, kt))
    k = np.arange(kt, dtype=float)[None, :]
    rest = (N - n1).astype(float)[:, None]
    m2 = n2.astype(float)[:, None]
    d_top = min(dhi - 1, D)
    if d_top < dlo:
        return out
    left = D - d_top
    p = oc.hypergeometric_pmf(k, m2, rest, float(left))
    for d in range(d_top, dlo - 1, -1):
        out[:, d - dlo, :] = np.minimum(np.cumsum(p, axis=1), 1.0)
        if d == dlo:
            break
        r = rest - left  # conforming items left
        with np.errstate(all="ignore"):
            up = np.where(r > 0, (m2 - k) / r, 0.0)
        shifted = np.concatenate([np.zeros((B, 1)), p[:, :-1] * up[:, :-1]], axis=1)
        p = p * (1.0 - up) + shifted
        left += 1
    return out


def _direct_c2(ev, n1, c1, r1, n2, start, thr):
    """Smallest ``c2 >= start`` meeting alpha by direct evaluation
    (:func:`lotwise.core.search.last_true` on "misses alpha": ``Pa`` rises in
    ``c2``), or -1 where none does before the second sample is accepted
    whatever it finds (``r1 - 1 + n2``; per unit a Poisson tail bound of
    1e-30). ``start - 1`` misses alpha (the bracket's lower bound)."""
    if ev.model == "poisson":
        lam = n2.astype(float) * ev.x_aql
        top = r1 - 1 + np.ceil(lam + 12.0 * np.sqrt(lam) + 70.0).astype(np.int64)
    else:
        top = r1 - 1 + n2
    last = last_true(lambda c, i: ev.at_aql(n1[i], c1[i], c, n2[i], r1[i])[0] < thr,
                     start - 1, start, int(top.max()))
    return np.where(last + 1 <= top, last + 1, -1)


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
