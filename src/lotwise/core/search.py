"""Monotone integer searches and quality-level inversion, shared by every
plan family's designer and by the analyses.

Every search here relies on a documented monotonicity of the acceptance
probability (see :mod:`lotwise.core.kernels`): ``Pa`` falls as the sample
size ``n``, the quality level ``p`` or the lot count ``D`` grows, and rises
with the acceptance number ``c``. Searches are over integers (bisection or
vectorised bracketing); no float root is rounded to an integer.

* :class:`Kernel` -- ``Pa`` at the AQL and at the RQL for arrays of ``(n, c)``;
* :func:`n_min` -- the smallest ``n`` meeting the consumer's risk, for each ``c``;
* :func:`c_min` -- the smallest ``c`` meeting the producer's risk at a given ``n``;
* :func:`count_at` / :func:`count_level` / :func:`invert_level` -- the quality
  level where any plan's ``Pa`` crosses a probability (whole counts in a
  finite lot, or a continuous level);
* :func:`check_targets` / :func:`check_lot` -- the targets can be told apart at all.

Examples
--------
The smallest sample with ``c = 2`` that accepts a 6 % lot at most 10 % of the
time (binomial):

>>> import numpy as np
>>> k = Kernel("binomial", Targets(aql=0.01, rql=0.06), Scope())
>>> int(n_min(k, np.array([2]), 0.10, None)[0])
88
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.quantities import Infeasible, format_level, format_pct
from lotwise.core.types import TOL, Scope, Targets, lot_targets

__all__ = ["Kernel", "n_min", "c_min", "count_at", "count_level", "invert_level", "check_targets",
           "check_lot", "initial_upper", "maximise_over_levels"]


class Kernel:
    """``Pa`` at the AQL and at the RQL for arrays of ``n`` and ``c``."""

    def __init__(self, model: str, targets: Targets, scope: Scope):
        self.model = model
        self.t = targets
        self.N = scope.lot_size
        #: Nonconformities per unit: ``c`` may exceed ``n`` and ``n = c`` does
        #: not accept every lot.
        self.per_unit = scope.defects
        if model == "hypergeometric":
            self.d1, self.d2 = lot_targets(targets, self.N)

    def at_aql(self, n, c):
        return self._pa(n, c, self.t.aql, "d1")

    def at_rql(self, n, c):
        return self._pa(n, c, self.t.rql, "d2")

    def _pa(self, n, c, level, count):
        if self.model == "binomial":
            return np.asarray(oc.pa_binomial(n, c, level))
        if self.model == "poisson":
            return np.asarray(oc.pa_poisson(n, c, level))
        return np.asarray(oc.pa_hypergeometric(n, c, self.N, getattr(self, count)))


def initial_upper(kernel: Kernel, c: np.ndarray, beta: float) -> np.ndarray:
    """A first guess at a sample size meeting the consumer's risk for each
    ``c``, from the Poisson approximation; :func:`n_min` checks it and
    doubles it (up to the cap) where it falls short."""
    lam = special.gammainccinv(c + 1.0, beta)  # Poisson mean with Pa = beta
    guess = np.ceil(1.05 * lam / kernel.t.rql) + 2
    guess = np.minimum(np.maximum(guess, c + 1), MAX_SAMPLE)  # no int64 overflow
    if kernel.model == "hypergeometric":
        guess = np.minimum(guess, kernel.N)
    return guess.astype(np.int64)


def n_min(kernel: Kernel, c: np.ndarray, beta: float, cap: int | None) -> np.ndarray:
    """Smallest ``n`` with ``Pa(RQL; n, c) <= beta`` for each ``c``; ``-1`` where
    none exists up to ``cap`` (or the lot size).

    Integer bisection: ``Pa`` falls in ``n`` (documented in :mod:`lotwise.core.kernels`).
    """
    c = np.asarray(c, dtype=np.int64)
    hi = initial_upper(kernel, c, beta)
    limit = cap if cap is not None else None
    if kernel.model == "hypergeometric":
        limit = kernel.N if limit is None else min(limit, kernel.N)
    if limit is not None:
        hi = np.minimum(hi, limit)
    ok = kernel.at_rql(hi, c) <= beta + TOL
    # Grow the bracket where the guess was too small (binomial/poisson only).
    while True:
        grow = ~ok & (hi < MAX_SAMPLE)
        if limit is not None:
            grow &= hi < limit
        if not grow.any():
            break
        new = np.minimum(hi[grow] * 2, MAX_SAMPLE)
        if limit is not None:
            new = np.minimum(new, limit)
        hi[grow] = new
        ok[grow] = kernel.at_rql(hi[grow], c[grow]) <= beta + TOL
    if kernel.per_unit:
        lo = np.zeros_like(hi)  # n = 0 inspects nothing: Pa = 1 > beta
    else:
        lo = np.minimum(c, hi - 1)  # n = c accepts every lot of items, so Pa = 1 > beta
    lo = np.maximum(lo, 0)
    # A tighter lower end where the answer is not far below the bracket's top
    # (checked: only a size whose Pa still exceeds beta may serve as ``lo``).
    near = np.maximum(lo, (0.8 * hi).astype(np.int64))
    try_ = ok & (near > lo) & (near < hi)
    if try_.any():
        above = kernel.at_rql(near[try_], c[try_]) > beta + TOL
        idx = np.flatnonzero(try_)[above]
        lo[idx] = near[idx]
    act = ok & (hi - lo > 1)
    while act.any():
        mid = (lo[act] + hi[act]) // 2
        good = kernel.at_rql(mid, c[act]) <= beta + TOL
        h, l_ = hi[act], lo[act]
        hi[act] = np.where(good, mid, h)
        lo[act] = np.where(good, l_, mid)
        act = ok & (hi - lo > 1)
    return np.where(ok, hi, -1)


def c_min(kernel: Kernel, n: int, alpha: float) -> int:
    """Smallest ``c`` with ``Pa(AQL; n, c) >= 1 - alpha`` (bisection: Pa rises in c).

    Counting items, ``c = n`` accepts every lot and bounds the search; counting
    nonconformities per unit the upper end is found by doubling from ``n``.
    """
    lo, hi = -1, n  # c = n accepts every lot of items
    if kernel.per_unit:
        hi = max(n, 1)
        while float(kernel.at_aql(n, hi)) < 1.0 - alpha - TOL:
            lo, hi = hi, 2 * hi
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if float(kernel.at_aql(n, mid)) >= 1.0 - alpha - TOL:
            hi = mid
        else:
            lo = mid
    return hi


def check_targets(targets: Targets, per_unit: bool) -> None:
    if not targets.rql > targets.aql:
        raise Infeasible(
            f"the RQL ({format_level(targets.rql, per_unit)}) must be above the AQL "
            f"({format_level(targets.aql, per_unit)}): no plan can accept the worse quality "
            "less often than the better",
            {"aql": targets.aql, "rql": targets.rql})
    if not targets.alpha + targets.beta < 1:
        raise Infeasible(
            f"alpha + beta ({format_pct(targets.alpha)} + {format_pct(targets.beta)}) must be "
            "below 100 %: otherwise the two risks do not constrain any plan",
            {"alpha": targets.alpha, "beta": targets.beta})
    if targets.aql > 0 and targets.aql < MIN_LEVEL:
        raise Infeasible(
            f"the AQL ({targets.aql:g}) is below {MIN_LEVEL:g}: a sample able to tell it from "
            f"the RQL would need more than {MAX_SAMPLE:.0e} units; state the levels in a "
            "coarser unit (for example per million) or inspect every item",
            {"aql": targets.aql, "minimum": MIN_LEVEL})
    if targets.aql > 0 and targets.rql / targets.aql < MIN_RATIO:
        raise Infeasible(
            f"the RQL ({format_level(targets.rql, per_unit)}) is within a factor "
            f"{MIN_RATIO:.7g} of the AQL ({format_level(targets.aql, per_unit)}): no sample of "
            f"up to {MAX_SAMPLE:.0e} units tells them apart",
            {"aql": targets.aql, "rql": targets.rql, "min_ratio": MIN_RATIO})


#: Levels and ratios beyond what a sample can resolve (samples above
#: ``MAX_SAMPLE`` units are refused rather than searched for).
MIN_LEVEL = 1e-15
MIN_RATIO = 1.0 + 1e-6
MAX_SAMPLE = 10**12


def check_lot(targets: Targets, lot_size: int, counts: tuple[int, int]) -> None:
    d1, d2 = counts
    if d2 < 1 or d1 >= d2:
        raise Infeasible(
            f"the lot of {lot_size} is too small to tell the AQL from the RQL: the AQL "
            f"({format_level(targets.aql)}) rounds up to {d1} nonconforming item(s) and the RQL "
            f"({format_level(targets.rql)}) rounds down to {d2}; any plan that meets alpha "
            f"accepts a lot at the RQL at least {format_pct(1 - targets.alpha)} of the time",
            {"lot_counts": {"aql": d1, "rql": d2}, "beta_min": 1.0 - targets.alpha})


def count_at(plan, prob: float, scope: Scope, side: str) -> int:
    """A plan's own quality level as a whole count ``D`` of a lot of
    ``scope.lot_size`` (hypergeometric model; ``Pa`` falls in ``D``).

    ``side='producer'``: the largest ``D`` with ``Pa(D) >= prob`` (0 when even
    ``Pa(0)`` is below ``prob``); ``side='indifference'``: of the two counts
    either side of the crossing, the one whose ``Pa`` is nearest ``prob`` (the
    smaller count on a tie); any other side (``'consumer'``): the smallest
    ``D`` with ``Pa(D) <= prob`` (the lot size when no count gets there).
    Each pass evaluates up to 127 counts inside the bracket in one vectorised
    call and keeps the sub-interval where ``Pa`` crosses ``prob`` (a 128-fold
    narrowing).
    """
    N = int(scope.lot_size)
    producer = side in ("producer", "indifference")
    if producer:
        good = lambda pa: pa >= prob - TOL  # noqa: E731  (true for small D)
    else:
        good = lambda pa: pa > prob + TOL  # noqa: E731
    if good(float(plan.pa_count(N, scope))):
        lo, hi = N, N + 1
    elif not good(float(plan.pa_count(0, scope))):
        lo, hi = -1, 0
    else:
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
    if side == "producer":
        return max(lo, 0)
    if side != "indifference":
        return min(hi, N)
    pair = [d for d in (lo, hi) if 0 <= d <= N]
    gaps = [abs(float(plan.pa_count(d, scope)) - prob) for d in pair]
    return pair[int(np.argmin(gaps))]  # argmin keeps the first (smaller) on a tie


def count_level(plan, prob: float, scope: Scope, side: str) -> float:
    """:func:`count_at` as a fraction of the lot, ``D/N``."""
    return count_at(plan, prob, scope, side) / scope.lot_size


def invert_level(plan, prob: float, model: str, scope: Scope) -> float:
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


def maximise_over_levels(func, plan, model: str, scope: Scope, points: int = 201):
    """Largest value of ``func(p, model, scope)`` (an ASN) over the OC curve of
    ``plan`` and the quality level where it occurs.

    A grid over the range where ``Pa`` falls from 1 to 0.001, refined by
    repeated finer grids around the grid maximum (whole lot counts under the
    hypergeometric model). For double plans under the binomial and
    Poisson models :func:`lotwise.families.double.double_max_asn` gives the
    closed form; this generic search agrees with it to the refinement
    tolerance.
    """
    hi = plan.quality_at(0.001, model, scope, "consumer")
    if not scope.defects:
        hi = min(1.0, 1.2 * hi + 1e-9)
    else:
        hi = 1.2 * hi + 1e-9
    if model == "hypergeometric":
        N = scope.lot_size
        dmax = int(min(N, math.ceil(hi * N)))
        ds = np.unique(np.linspace(0, dmax, min(points, dmax + 1)).round())
        vals = np.asarray(func(ds / N, model, scope))
        i = int(np.argmax(vals))
        lo_d = int(ds[max(i - 1, 0)])
        hi_d = int(ds[min(i + 1, len(ds) - 1)])
        fine = np.arange(lo_d, hi_d + 1, dtype=float)
        fv = np.asarray(func(fine / N, model, scope))
        j = int(np.argmax(fv))
        return float(fv[j]), float(fine[j] / N)
    ps = np.linspace(0.0, hi, points)
    vals = np.asarray(func(ps, model, scope))
    i = int(np.argmax(vals))
    best = (float(vals[i]), float(ps[i]))
    # Zoom: a fresh 101-point grid over the two cells around the maximum,
    # five times (each pass narrows the bracket 50-fold).
    a, b = ps[max(i - 1, 0)], ps[min(i + 1, points - 1)]
    for _ in range(6):
        xs = np.linspace(a, b, 101)
        v = np.asarray(func(xs, model, scope))
        j = int(np.argmax(v))
        if v[j] > best[0]:
            best = (float(v[j]), float(xs[j]))
        a, b = xs[max(j - 1, 0)], xs[min(j + 1, 100)]
        if b - a < 1e-12 * max(b, 1e-12):
            break
    return best
