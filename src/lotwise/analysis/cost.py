"""Least-cost single sampling plans under a prior (Hald's cost model).

Cost model
----------
Lots of ``N`` items arrive; the fraction nonconforming of a lot is ``p``,
which varies from lot to lot as the prior ``Beta(a, b)``
(:mod:`lotwise.analysis.prior`). A single plan ``(n, c)`` inspects ``n``
units of every lot and accepts on at most ``c`` nonconforming. Costs:

* ``S`` per inspected unit (``--cost-inspect``);
* a rejected lot's remainder is screened at ``S`` per unit, ``S (N - n)``,
  or, when ``R`` is given (``--cost-reject-lot``), returned at ``R`` per lot;
* ``A`` per nonconforming item passed on in an accepted lot
  (``--cost-escape``).

The expected cost per lot is (Hald's model, [1]_)::

    K(n, c) = S n + sum_{d <= c} P(d) A (N - n) E[p | d] + sum_{d > c} P(d) Q,

with ``P(d)`` the beta-binomial probability of ``d`` nonconforming in the
sample, ``E[p | d] = (a + d) / (a + b + n)`` and ``Q = S (N - n)`` (or
``R``). Nonconforming items found in the sample are replaced. Beside it:
no inspection, ``A N a / (a + b)``; 100 % inspection, ``S N``; and Deming's
break-even fraction ``S / A`` [2]_: with ``p`` known, inspect every item when
``p > S / A`` and none when ``p < S / A``.

Search (exact)
--------------
*The best c for a given n.* ``K(n, c) = S n + Q + sum_{d <= c} P(d) g(d)``
with ``g(d) = A (N - n) (a + d) / (a + b + n) - Q``, which rises with ``d``.
So the sum is least when it takes exactly the terms with ``g(d) < 0``:
``c*(n) = ceil(Q (a + b + n) / (A (N - n)) - a) - 1`` (checked against
``g`` itself, clipped to ``0..n``; a tie ``g = 0`` takes the smaller ``c``).
The cost is then a cumulative sum over ``d`` (computed on the shorter side
of ``c``, the other from ``sum P(d) = 1`` and ``sum d P(d) = n a / (a + b)``).
With ``--rql``/``--beta`` the plan must also hold ``Pa(RQL) <= beta`` (under
the lot's exact model, hypergeometric by default). ``Pa`` rises with ``c``,
so the feasible ``c`` are ``0..c_max(n)`` (``c_max`` by integer bisection),
and since the cost falls up to ``c*`` and rises after it the best feasible
``c`` is ``min(c*, c_max)``.

*Over n = 0..N: branch and bound, proven.* Write the cost with the best
decision for every ``d`` (rejecting on every count allowed) as ``S n +
W(n)``, ``W(n) = E_d[min(A (N - n) E[p | d], Q)]``. ``W`` never rises with
``n``: ``(N - n)`` and ``Q`` do not rise, and ``x -> min(A (N - n) x, Q)`` is
concave, so by Jensen's inequality the finer information of a larger sample
(``E[p | X_n] = E[E[p | X_n'] | X_n]`` for ``n' > n``) cannot raise its
expectation. Every plan's cost is at least ``S n + W(n)`` (a plan restricts
the decisions; the RQL constraint restricts them further). Hence for every
``n'`` strictly between two evaluated sizes ``n0 < n1``::

    K(n', c) >= S (n0 + 1) + W(n1).

(``X_n``, the count in the first ``n`` units, is a sufficient statistic for
``p`` among those units, so the count of a larger sample carries all the
information of a smaller one.) Under ``--rql`` the plain bound stays valid
but loose where the constraint binds; the search then also uses Lagrangian
bounds: for a multiplier ``lambda >= 0`` every feasible plan costs at least
``S n + W_lambda(n) - lambda beta``, where ``W_lambda(n) = Q + sum_d
min(0, P(d) g(d) + lambda h_n(d))`` and ``h_n`` is the law of the sample
count for a lot at the RQL (hypergeometric, binomial or Poisson, as the
constraint's model). ``W_lambda`` is the least expected loss of a decision
problem that adds that lot with weight ``lambda`` and a loss ``lambda`` for
accepting it, so by the same argument it never rises with ``n``. The
multipliers are ``S N`` times 0.001, 0.003, ..., 3; each gap takes the
largest of the bounds.

The search evaluates ``n`` on a starting grid (0, N and 64 points spread
linearly and geometrically), then repeatedly takes the gap with the lowest
bound: a gap whose bound is not below the best cost found (less 1e-12 of
``S N`` for rounding) cannot hold a cheaper plan and is dropped; otherwise
it is split by 16 interior sizes, or evaluated whole when 48 or fewer
remain. The search ends when every gap is dropped, so the plan returned is
the least cost over every ``n`` in ``0..N`` and every ``c`` (ties: the
smaller ``n``; a plan no cheaper than 100 % inspection is reported as 100 %
inspection). When rejected lots are screened, costs are compared as their
difference from ``S N`` (the sum over ``d <= c`` alone), which keeps their
precision however close a plan comes to 100 % inspection.
Each evaluation is vectorised over a block of sizes (log beta-binomial
probabilities from tables of log-gamma values; see
:func:`lotwise.analysis.prior.log_rising_excess`).

References
----------
.. [1] A. Hald, "The compound hypergeometric distribution and a system of
   single sampling inspection plans based on prior distributions and
   costs", *Technometrics* 2 (1960), 275-340 (from memory).
.. [2] W. E. Deming, *Out of the Crisis* (MIT, 1986), ch. 15, the
   all-or-none rule (from memory).

Examples
--------
Lots of 2,000 housings; the records give Beta(2, 98) (mean 2 %); inspecting
a unit costs 1, a nonconforming housing that reaches assembly costs 40:

>>> from lotwise.analysis.prior import BetaPrior
>>> d = least_cost_single(lot_size=2000, prior=BetaPrior(a=2, b=98),
...                       costs=Costs(inspect=1.0, escape=40.0))
>>> d.n, d.c, round(d.expected_cost, 2), d.expected_cost_none, d.expected_cost_all
(162, 4, 1442.4, 1600.0, 2000.0)
"""

from __future__ import annotations

import heapq
import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.analysis.prior import BetaPrior, log_rising_excess, single_posterior
from lotwise.core.quantities import InputError, Infeasible

__all__ = ["Costs", "CostDesign", "least_cost_single", "expected_cost"]

_TOL = 1e-12  # the slack a risk may exceed its target by (as in design_single)
_CHUNK = 1 << 21  # elements per block of beta-binomial terms
_GRID = 64  # sizes in the starting grid
_SPLIT = 16  # interior sizes evaluated when a gap is split
_WHOLE = 48  # gaps this small are evaluated whole


@dataclass(frozen=True, kw_only=True)
class Costs:
    """Hald's costs: ``inspect`` (S) per unit, ``escape`` (A) per nonconforming
    item passed on, ``reject_lot`` (R) per returned lot (None: screened)."""

    inspect: float
    escape: float
    reject_lot: float | None = None

    def __post_init__(self):
        for key, opt, low in (("inspect", "--cost-inspect", "positive"),
                              ("escape", "--cost-escape", "positive"),
                              ("reject_lot", "--cost-reject-lot", "zero or positive")):
            v = getattr(self, key)
            if v is None and key == "reject_lot":
                continue
            ok = isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)
            if not ok or v < 0 or (v == 0 and key != "reject_lot"):
                raise InputError(f"{opt} ({v}) must be a {low} finite number")

    @property
    def breakeven(self) -> float:
        """Deming's break-even fraction nonconforming ``S / A``."""
        return self.inspect / self.escape

    def to_dict(self) -> dict:
        return {"inspect": self.inspect, "escape": self.escape, "reject_lot": self.reject_lot}


#: Lagrange multipliers (in units of ``S N``) of the bounds under the RQL constraint.
_LAMBDAS = (0.001, 0.003, 0.01, 0.03, 0.1, 0.3, 1.0, 3.0)


class _Lots:
    """Beta-binomial tables for lots of ``N`` and the cost of any ``(n, c)``.

    Costs are handled as *keys*: ``cost - S N`` when rejected lots are
    screened (then ``S n + S (N - n) = S N`` for every ``n`` and the key is
    the sum over ``d <= c`` alone, which keeps its precision however close a
    plan comes to 100 % inspection), the cost itself when they are returned.
    """

    def __init__(self, N: int, prior: BetaPrior, costs: Costs, rql=None, beta=0.10,
                 model: str = "hypergeometric"):
        a, b = prior.a, prior.b
        self.N, self.a, self.s = N, a, a + b
        self.mu = a / (a + b)
        self.S, self.A, self.R = costs.inspect, costs.escape, costs.reject_lot
        k = np.arange(N + 1, dtype=float)
        self.lgf = special.gammaln(k + 1.0)
        self.ea = log_rising_excess(a, N)
        self.eb = log_rising_excess(b, N)
        self.es = log_rising_excess(self.s, N)
        self.lmu, self.l1mu = math.log(self.mu), math.log1p(-self.mu)
        self.rql, self.beta, self.model = rql, beta, model
        if rql is not None and model == "hypergeometric":
            from lotwise.core.kernels import lot_count

            self.d2 = lot_count(rql, N, "down")
        self.lambdas = np.array(_LAMBDAS) * self.S * N if rql is not None else np.zeros(0)
        self.examined = 0
        self._cm = (np.zeros(0, dtype=np.int64),) * 3  # sizes, c_max >= lo, c_max < hi

    # -- pieces ----------------------------------------------------------------
    def q(self, ns):
        """What a rejected lot costs: its remainder screened, or returned."""
        return self.S * (self.N - ns) if self.R is None else np.full(ns.shape, float(self.R))

    def base(self, ns):
        """``S n + q(n)`` as a key (0 when screened)."""
        return np.zeros(ns.shape) if self.R is None else self.S * ns + float(self.R)

    def _chunks(self, ns, start, width):
        """Blocks ``(rows, mask, n, d)`` covering ``d = start .. start + width - 1``."""
        order = np.argsort(width, kind="stable")
        i = 0
        while i < order.size:
            j = i + 1
            while j < order.size and int(width[order[j]]) * (j + 1 - i) <= _CHUNK:
                j += 1
            idx = order[i:j]
            W = int(width[idx].max())
            if W > 0:
                jj = np.arange(W)
                mask = jj[None, :] < width[idx][:, None]
                yield idx, mask, ns[idx][:, None], np.where(mask, start[idx][:, None] + jj, 0)
            i = j

    def _logp(self, n, d):
        """Beta-binomial log probabilities (see :func:`log_rising_excess`)."""
        m = n - d
        return (self.lgf[n] - self.lgf[d] - self.lgf[m] + d * self.lmu + m * self.l1mu
                + self.ea[d] + self.eb[m] - self.es[n])

    def _logh(self, n, d):
        """Log probability of ``d`` in a sample of ``n`` from a lot at the RQL."""
        lgf = self.lgf
        if self.model == "hypergeometric":
            D, N = self.d2, self.N
            ok = (d <= D) & (n - d <= N - D)
            dd, rr = np.minimum(d, D), np.clip(n - d, 0, N - D)
            out = (lgf[D] - lgf[dd] - lgf[D - dd] + lgf[N - D] - lgf[rr] - lgf[N - D - rr]
                   - lgf[N] + lgf[n] + lgf[N - n])
            return np.where(ok, out, -np.inf)
        r = self.rql
        if self.model == "poisson":
            with np.errstate(divide="ignore"):
                return np.where(d > 0, d * np.log(n * r), 0.0) - n * r - lgf[d]
        return lgf[n] - lgf[d] - lgf[n - d] + d * math.log(r) + (n - d) * math.log1p(-r)

    def sums(self, ns, cs):
        """``F = sum_{d <= c} P_n(d)`` and ``D = sum_{d <= c} d P_n(d)`` (c in -1..n),
        summed over the shorter side of ``c``."""
        ns = np.asarray(ns, dtype=np.int64)
        cs = np.asarray(cs, dtype=np.int64)
        low = cs + 1 <= ns - cs
        start = np.where(low, 0, cs + 1)
        width = np.where(low, cs + 1, ns - cs)
        f, dsum = np.zeros(ns.size), np.zeros(ns.size)
        for idx, mask, n, d in self._chunks(ns, start, width):
            p = np.where(mask, np.exp(self._logp(n, d)), 0.0)
            f[idx] = p.sum(axis=1)
            dsum[idx] = (p * d).sum(axis=1)
        return np.where(low, f, 1.0 - f), np.where(low, dsum, ns * self.mu - dsum)

    def key(self, ns, cs):
        """Cost keys of the plans ``(n, c)`` (see the class notes)."""
        ns = np.asarray(ns, dtype=np.int64)
        F, D = self.sums(ns, cs)
        rest = (self.N - ns).astype(float)
        return self.base(ns) + self.A * rest * (self.a * F + D) / (self.s + ns) - self.q(ns) * F

    def to_cost(self, key):
        return key + self.S * self.N if self.R is None else key

    def lagrange(self, ns, cs):
        """``sum_{d <= c*} min(0, P(d) g(d) + lambda h(d))`` for each multiplier:
        the best any accept/reject rule does when accepting a lot at the RQL
        costs ``lambda`` (``h``: the sample count's law for such a lot)."""
        out = np.zeros((ns.size, self.lambdas.size))
        rest = (self.N - ns).astype(float)
        q = self.q(ns)
        for idx, mask, n, d in self._chunks(ns, np.zeros_like(cs), cs + 1):
            g = self.A * rest[idx][:, None] * (self.a + d) / (self.s + n) - q[idx][:, None]
            pg = np.where(mask, np.exp(self._logp(n, d)) * g, 0.0)
            h = np.where(mask, np.exp(self._logh(n, d)), 0.0)
            for k, lam in enumerate(self.lambdas):
                out[idx, k] = np.minimum(pg + lam * h, 0.0).sum(axis=1)
        return out

    def c_star(self, ns, q):
        """Best acceptance number with every decision allowed (``-1``: reject
        on every count), from the sign of ``g(d)``."""
        rest = (self.N - ns).astype(float)
        with np.errstate(divide="ignore", invalid="ignore"):
            t = q * (self.s + ns) / (self.A * rest) - self.a
            c = np.where(rest > 0, np.ceil(np.minimum(t, 2.0 * self.N + 2)) - 1,
                         np.where(q > 0, ns, -1))
        c = np.clip(c, -1, ns).astype(np.int64)

        def g(d):
            return self.A * rest * (self.a + d) / (self.s + ns) - q

        inner = rest > 0
        c = np.where(inner & (c >= 0) & (g(c) >= 0), c - 1, c)       # rounding: g(c*) < 0
        c = np.where(inner & (c + 1 <= ns) & (g(c + 1) < 0), c + 1, c)  # and g(c* + 1) >= 0
        return c

    # -- the RQL constraint ----------------------------------------------------
    def _pa_rql(self, n, c):
        """``Pa`` at the RQL under the constraint's model."""
        from lotwise.core import kernels as oc

        n, c = np.asarray(n, dtype=float), np.asarray(c, dtype=float)
        if self.model == "hypergeometric":
            return np.asarray(oc.pa_hypergeometric(n, c, self.N, self.d2), dtype=float)
        if self.model == "poisson":
            return np.asarray(oc.pa_poisson(n, c, self.rql), dtype=float)
        return np.asarray(oc.pa_binomial(n, c, self.rql), dtype=float)

    def c_allowed(self, ns, want):
        """``min(want, c_max(n))``, ``c_max`` the largest ``c`` holding ``Pa(RQL) <=
        beta`` (``-1`` where no ``c >= 0`` does), for ``n >= 1``.

        ``c_max`` never falls as ``n`` grows (``Pa`` falls in ``n``), so what is
        known at other sizes brackets it; inside the bracket, ``want`` is
        tried first and then integer bisection (``Pa`` rises with ``c``)."""
        kn, klo, khi = self._cm
        i_lo = np.searchsorted(kn, ns, side="right") - 1
        i_hi = np.searchsorted(kn, ns, side="left")
        lo = np.where(i_lo >= 0, np.maximum.accumulate(klo)[np.maximum(i_lo, 0)]
                      if kn.size else -1, -1)
        top = np.minimum(ns, self.d2) if self.model == "hypergeometric" else ns
        if kn.size:
            suffix = np.minimum.accumulate(khi[::-1])[::-1]
            top = np.minimum(top, np.where(i_hi < kn.size, suffix[np.minimum(i_hi, kn.size - 1)],
                                           top))
        out = np.minimum(want, np.maximum(lo, -1))
        hi = np.minimum(top, want + 1)  # c_max < hi (or: want is the answer when reached)
        lo = np.maximum(lo, -1)
        need = np.flatnonzero(lo < np.minimum(want, top - 1))
        if need.size:
            try_w = need[np.minimum(want[need], top[need] - 1) == want[need]]
            if try_w.size:
                ok = self._pa_rql(ns[try_w], want[try_w]) <= self.beta + _TOL
                lo[try_w[ok]] = want[try_w[ok]]
                hi[try_w[ok]] = want[try_w[ok]] + 1
                hi[try_w[~ok]] = want[try_w[~ok]]
            act = need[hi[need] - lo[need] > 1]
            while act.size:
                mid = (lo[act] + hi[act]) // 2
                ok = self._pa_rql(ns[act], mid) <= self.beta + _TOL
                lo[act] = np.where(ok, mid, lo[act])
                hi[act] = np.where(ok, hi[act], mid)
                act = act[hi[act] - lo[act] > 1]
            out = np.minimum(want, lo)
        upper = np.where(lo < want, hi, np.iinfo(np.int64).max)
        order = np.argsort(np.concatenate([kn, ns]), kind="stable")
        self._cm = tuple(np.concatenate(v)[order] for v in ((kn, ns), (klo, lo), (khi, upper)))
        return out

    # -- one block of sample sizes ------------------------------------------------
    def evaluate(self, ns):
        """For each ``n``: the least cost key over the allowed ``c`` (``inf``
        where none is allowed), that ``c``, and the bound keys ``S n + W(n)``
        (one column per Lagrange multiplier under the constraint; see
        :func:`least_cost_single`)."""
        ns = np.asarray(ns, dtype=np.int64)
        self.examined += int(ns.size)
        cs = self.c_star(ns, self.q(ns))
        free = self.key(ns, cs)
        bounds = free[:, None]
        use = np.maximum(cs, 0)  # a plan accepts on at least 0 (n = 0: accepts unseen)
        feasible = np.ones(ns.shape, dtype=bool)
        if self.rql is not None:
            lag = self.lagrange(ns, cs) + self.base(ns)[:, None] - self.lambdas * self.beta
            bounds = np.concatenate([bounds, lag], axis=1)
            inner = np.flatnonzero(ns > 0)
            allowed = np.full(ns.shape, -1, dtype=np.int64)
            allowed[inner] = self.c_allowed(ns[inner], use[inner])
            feasible = allowed >= 0  # n = 0 accepts every lot: Pa = 1
            use = np.maximum(allowed, 0)
        key = free.copy()
        other = np.flatnonzero((use != cs) & feasible)
        if other.size:
            key[other] = self.key(ns[other], use[other])
        return np.where(feasible, key, np.inf), use, bounds


@dataclass(frozen=True, kw_only=True)
class CostDesign:
    """Result of :func:`least_cost_single` (see the module notes).

    ``posterior`` holds the plan's posterior risks
    (:class:`lotwise.analysis.prior.PosteriorRisks`); ``examined`` is how
    many sample sizes the search evaluated.
    """

    n: int
    c: int
    lot_size: int
    prior: BetaPrior
    costs: Costs
    expected_cost: float
    expected_cost_none: float
    expected_cost_all: float
    posterior: object
    rql: float | None = None
    beta: float | None = None
    model: str | None = None
    examined: int = 0

    @property
    def breakeven_p(self) -> float:
        return self.costs.breakeven

    @property
    def full_inspection(self) -> bool:
        return self.n >= self.lot_size

    @property
    def no_inspection(self) -> bool:
        return self.n == 0

    @property
    def plan(self):
        """The :class:`SinglePlan` (None for no inspection, ``n = 0``)."""
        from lotwise.families.single import SinglePlan

        return SinglePlan(n=self.n, c=self.c) if self.n > 0 else None

    def to_json(self) -> dict:
        """The keys of ``design --minimize cost --json`` (the contract keys first)."""
        return {
            "scheme": "single", "n": int(self.n), "c": int(self.c),
            "expected_cost": float(self.expected_cost),
            "expected_cost_none": float(self.expected_cost_none),
            "expected_cost_all": float(self.expected_cost_all),
            "breakeven_p": float(self.breakeven_p),
            "prior": {"a": float(self.prior.a), "b": float(self.prior.b)},
            "posterior_consumer_risk": self.posterior.consumer_risk if self.rql is not None
            else None,
            "lot_size": int(self.lot_size), "costs": self.costs.to_dict(),
            "full_inspection": self.full_inspection, "no_inspection": self.no_inspection,
            "constraint": None if self.rql is None else
            {"rql": self.rql, "beta": self.beta, "model": self.model},
            "posterior": self.posterior.to_json(), "sizes_examined": int(self.examined),
        }


def _check(lot_size, prior, costs):
    if isinstance(lot_size, bool) or not isinstance(lot_size, (int, np.integer)) or lot_size < 1:
        raise InputError(f"--lot-size ({lot_size}) must be a whole number of at least 1")
    if not isinstance(prior, BetaPrior):
        raise InputError("the prior must be a BetaPrior (for example BetaPrior(a=2, b=98))")
    if not isinstance(costs, Costs):
        raise InputError("the costs must be a Costs record (for example Costs(inspect=1, "
                         "escape=40))")


def expected_cost(n: int, c: int, *, lot_size: int, prior: BetaPrior, costs: Costs) -> float:
    """Expected cost per lot of the single plan ``(n, c)`` under Hald's model
    (``n = 0``: accept unseen; ``c = -1``: reject every lot)."""
    _check(lot_size, prior, costs)
    if not (0 <= n <= lot_size and -1 <= c <= n):
        raise InputError(f"the plan (n = {n}, c = {c}) must have 0 <= n <= the lot size "
                         f"({lot_size}) and -1 <= c <= n")
    lots = _Lots(int(lot_size), prior, costs)
    return float(lots.to_cost(lots.key(np.array([n]), np.array([c])))[0])


def _grid(N: int) -> np.ndarray:
    lin = np.linspace(0, N, _GRID // 2 + 1)
    geo = np.geomspace(1, max(N, 1), _GRID // 2)
    return np.unique(np.concatenate([[0, N], np.round(lin), np.round(geo)]).astype(np.int64))


def _branch_and_bound(lots: _Lots, N: int):
    """The least-cost ``(n, c)`` over ``n = 0..N`` as ``(key, n, c)`` (see the
    module notes)."""
    S = lots.S
    ns = _grid(N)
    key, cs, bounds = lots.evaluate(ns)
    # W(n) per multiplier: the bound at n less S n
    known = dict(zip(ns.tolist(), bounds - S * ns[:, None]))
    i = int(np.argmin(key))
    best = (float(key[i]), int(ns[i]), int(cs[i]))
    last = (float(key[-1]), int(ns[-1]), int(cs[-1]))  # n = N

    def gap(n0, n1):
        return (float(np.max(S * (n0 + 1) + known[n1])), n0, n1)

    heap = [gap(a, b) for a, b in zip(ns[:-1].tolist(), ns[1:].tolist()) if b - a >= 2]
    heapq.heapify(heap)
    while heap:
        lb, n0, n1 = heapq.heappop(heap)
        if math.isfinite(best[0]) and lb >= best[0] - 1e-12 * max(abs(best[0]), S * N):
            break  # the lowest bound left cannot beat the best: neither can any other
        inner = n1 - n0 - 1
        if inner <= _WHOLE:
            pts = np.arange(n0 + 1, n1, dtype=np.int64)
        else:
            pts = np.unique(np.round(np.linspace(n0, n1, _SPLIT + 2)[1:-1]).astype(np.int64))
        key, cs, bounds = lots.evaluate(pts)
        j = int(np.argmin(key))
        if (float(key[j]), int(pts[j])) < best[:2]:
            best = (float(key[j]), int(pts[j]), int(cs[j]))
        if inner > _WHOLE:
            known.update(zip(pts.tolist(), bounds - S * pts[:, None]))
            edges = [n0] + pts.tolist() + [n1]
            for a, b in zip(edges[:-1], edges[1:]):
                if b - a >= 2:
                    heapq.heappush(heap, gap(a, b))
    if best[1] != N and best[0] >= last[0]:
        best = last  # no cheaper than 100 % inspection: say so plainly
    return best


def least_cost_single(*, lot_size: int, prior: BetaPrior, costs: Costs, rql: float | None = None,
                      beta: float = 0.10, model: str | None = None,
                      aql: float | None = None) -> CostDesign:
    """The single plan with the least expected cost per lot (Hald's model).

    Parameters
    ----------
    lot_size : int
        Lot size ``N``.
    prior : BetaPrior
        How the fraction nonconforming varies from lot to lot.
    costs : Costs
        ``S``, ``A`` and optionally ``R`` (see the module notes).
    rql, beta : float, optional
        Also hold the consumer's risk ``Pa(RQL) <= beta``.
    model : {'hypergeometric', 'binomial', 'poisson'}, optional
        Model of that constraint (default hypergeometric, the lot's exact one).
    aql : float, optional
        For the plan's posterior producer's risk.

    Returns
    -------
    CostDesign

    Raises
    ------
    Infeasible
        When no plan up to 100 % inspection holds the consumer's risk.
    """
    _check(lot_size, prior, costs)
    N = int(lot_size)
    model = model or "hypergeometric"
    if rql is not None and model == "hypergeometric":
        from lotwise.core.kernels import lot_count

        if lot_count(rql, N, "down") < 1:
            raise Infeasible(f"a lot of {N} at the RQL ({rql:g}) holds no nonconforming item "
                             "(rounded down); no plan can hold the consumer's risk",
                             {"lot_size": N})
    lots = _Lots(N, prior, costs, rql=rql, beta=beta, model=model)
    key, n, c = _branch_and_bound(lots, N)
    cost = float(lots.to_cost(key))
    if not math.isfinite(cost):
        raise Infeasible(f"no single plan with n <= {N} holds beta ({beta:g}) at the RQL "
                         f"({rql:g})", {"lot_size": N})
    post = single_posterior(n, c, prior, aql=aql, rql=rql, lot_size=N)
    return CostDesign(n=n, c=c, lot_size=N, prior=prior, costs=costs, expected_cost=cost,
                      expected_cost_none=costs.escape * N * prior.mean,
                      expected_cost_all=costs.inspect * N, posterior=post, rql=rql,
                      beta=beta if rql is not None else None,
                      model=model if rql is not None else None, examined=lots.examined)
