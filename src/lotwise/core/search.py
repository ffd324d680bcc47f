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

__all__ = ["Kernel", "n_min", "n_max", "c_min", "smallest_plan", "count_at", "count_level",
           "invert_level", "invert_levels", "ASN_TOP_PA", "CURVE_POINTS", "curve_top", "check_targets", "check_lot", "initial_upper", "last_true",
           "maximise_over_levels"]


class Kernel:
    """``Pa`` at the AQL and at the RQL for arrays of ``n`` and ``c``.

    ``evaluations`` counts the acceptance probabilities computed (one per
    element of each call), so that benchmarks can show the cost of a search.
    """

    def __init__(self, model: str, targets: Targets, scope: Scope):
        self.model = model
        self.t = targets
        self.N = scope.lot_size
        #: Nonconformities per unit: ``c`` may exceed ``n`` and ``n = c`` does
        #: not accept every lot.
        self.per_unit = scope.per_unit
        self.evaluations = 0
        if model == "hypergeometric":
            self.d1, self.d2 = lot_targets(targets, self.N)

    def at_aql(self, n, c):
        return self._pa(n, c, self.t.aql, "d1")

    def at_rql(self, n, c):
        return self._pa(n, c, self.t.rql, "d2")

    def level(self, which: str) -> float:
        """The quality level at the AQL (``"aql"``) or RQL as a fraction (lot
        counts over the lot size under the hypergeometric model)."""
        if self.model == "hypergeometric":
            return (self.d1 if which == "aql" else self.d2) / self.N
        return self.t.aql if which == "aql" else self.t.rql

    def n_limit(self, cap: int | None) -> int:
        """Largest sample size any search may return: the cap, the lot size
        and :data:`MAX_SAMPLE`, whichever is smallest."""
        limit = MAX_SAMPLE if cap is None else min(int(cap), MAX_SAMPLE)
        if self.model == "hypergeometric":
            limit = min(limit, int(self.N))
        return limit

    def guess_n(self, c, prob: float, which: str) -> np.ndarray:
        """Approximate sample size where ``Pa`` at the AQL or RQL equals
        ``prob`` for each ``c`` (Poisson quantile over ``-log(1 - p)``, with a
        finite-lot correction); only a starting point for exact searches."""
        p = self.level(which)
        lam = special.gammainccinv(np.asarray(c, dtype=float) + 1.0, prob)
        if p <= 0.0:
            return np.full(np.shape(lam), float(MAX_SAMPLE))
        rate = p if self.per_unit or p >= 1.0 else -math.log1p(-p)
        n = lam / rate
        if self.model == "hypergeometric":
            n = n * self.N / (self.N + n)
        return np.minimum(n, float(MAX_SAMPLE))

    def _pa(self, n, c, level, count):
        self.evaluations += int(np.size(np.broadcast(n, c)))
        if self.model == "binomial":
            return np.asarray(oc.pa_binomial(n, c, level))
        if self.model == "poisson":
            return np.asarray(oc.pa_poisson(n, c, level))
        return np.asarray(oc.pa_hypergeometric(n, c, self.N, getattr(self, count)))


def initial_upper(kernel: Kernel, c: np.ndarray, beta: float) -> np.ndarray:
    """A first guess at a sample size meeting the consumer's risk for each
    ``c``, from the Poisson approximation (a starting point only)."""
    guess = np.ceil(1.05 * kernel.guess_n(c, beta, "rql")) + 2
    guess = np.minimum(np.maximum(guess, c + 1), MAX_SAMPLE)  # no int64 overflow
    if kernel.model == "hypergeometric":
        guess = np.minimum(guess, kernel.N)
    return guess.astype(np.int64)


def last_true(test, lo: np.ndarray, guess: np.ndarray, limit: int,
              spread: float = 0.01) -> np.ndarray:
    """For each element, the largest ``n`` in ``[lo, limit]`` with ``test`` true,
    where ``test(n, idx)`` (``idx`` the elements asked) is true up to some size
    and false beyond it, and true at ``lo`` (not evaluated there).

    Galloping from ``guess`` (first step ``spread`` times it, doubling) until the answer
    is bracketed, then integer bisection; a good guess costs two or three
    evaluations plus ``log2`` of 1 % of it. Every integer stays within
    ``[0, limit]``, and ``limit <= MAX_SAMPLE`` keeps it far from int64 overflow.
    """
    lo = np.asarray(lo, dtype=np.int64).copy()
    hi = np.full_like(lo, int(limit) + 1)  # beyond the limit: taken as false, not evaluated
    g = np.nan_to_num(np.asarray(guess, dtype=float), nan=0.0, posinf=float(limit))
    g = np.clip(np.floor(g), 0.0, float(limit)).astype(np.int64)
    step = np.maximum(1, (spread * g).astype(np.int64))
    probe = g.copy()
    way = np.zeros_like(lo)  # 0: first probe; +1: probes true so far; -1: false so far
    open_ = np.ones(lo.shape, dtype=bool)
    while True:
        probe = np.clip(probe, lo + 1, np.maximum(hi - 1, lo + 1))
        open_ &= hi - lo > 1
        if not open_.any():
            break
        idx = np.flatnonzero(open_)
        p = probe[idx]
        ok = np.asarray(test(p, idx), dtype=bool)
        lo[idx] = np.where(ok, p, lo[idx])
        hi[idx] = np.where(ok, hi[idx], p)
        w = way[idx]
        # A probe on the other side from the previous ones closes the bracket.
        open_[idx] = (w == 0) | ((w > 0) & ok) | ((w < 0) & ~ok)
        way[idx] = np.where(ok, 1, -1)
        s = step[idx]
        probe[idx] = np.where(ok, p + s, p - s)
        step[idx] = s * 2
    act = hi - lo > 1
    while act.any():
        idx = np.flatnonzero(act)
        mid = (lo[idx] + hi[idx]) // 2
        ok = np.asarray(test(mid, idx), dtype=bool)
        lo[idx] = np.where(ok, mid, lo[idx])
        hi[idx] = np.where(ok, hi[idx], mid)
        act = hi - lo > 1
    return lo


def _lowest_n(kernel: Kernel, c: np.ndarray) -> np.ndarray:
    """A sample size at which ``Pa = 1`` for each ``c``: ``n = c`` for items
    (a sample of ``c`` cannot hold ``c + 1``), ``n = 0`` per unit."""
    return np.zeros_like(c) if kernel.per_unit else c.copy()


def n_min(kernel: Kernel, c: np.ndarray, beta: float, cap: int | None, *,
          guess=None, spread: float = 0.01) -> np.ndarray:
    """Smallest ``n`` with ``Pa(RQL; n, c) <= beta`` for each ``c``; ``-1`` where
    none exists up to ``cap`` (or the lot size, or :data:`MAX_SAMPLE`).

    Integer search (:func:`last_true` on ``Pa > beta``): ``Pa`` falls in ``n``
    (documented in :mod:`lotwise.core.kernels`).
    """
    c = np.atleast_1d(np.asarray(c, dtype=np.int64))
    limit = kernel.n_limit(cap)
    lo = np.minimum(_lowest_n(kernel, c), limit)
    if guess is None:
        guess = kernel.guess_n(c, beta, "rql") - 1.0
    last = last_true(lambda n, i: kernel.at_rql(n, c[i]) > beta + TOL, lo, guess, limit, spread)
    return np.where(last >= limit, -1, last + 1)


def n_max(kernel: Kernel, c: np.ndarray, alpha: float, cap: int | None) -> np.ndarray:
    """Largest ``n`` (up to the cap, lot size or :data:`MAX_SAMPLE`) with
    ``Pa(AQL; n, c) >= 1 - alpha`` for each ``c`` (``Pa`` falls in ``n``); ``0``
    per unit where even ``n = 1`` misses the producer's risk."""
    c = np.atleast_1d(np.asarray(c, dtype=np.int64))
    limit = kernel.n_limit(cap)
    lo = np.minimum(_lowest_n(kernel, c), limit)
    if kernel.level("aql") <= 0.0:
        return np.full_like(c, limit)  # Pa = 1 at a perfect AQL
    guess = kernel.guess_n(c, 1.0 - alpha, "aql")
    return last_true(lambda n, i: kernel.at_aql(n, c[i]) >= 1.0 - alpha - TOL, lo, guess, limit)


def smallest_plan(kernel: Kernel, alpha: float, beta: float, cap: int | None,
                  c_limit: int | None) -> tuple[int, int] | None:
    """The plan ``(n, c)`` with the smallest ``n`` meeting both risks, the
    smaller ``c`` on a tie; ``None`` when no ``c < c_limit`` has one with
    ``n`` up to the cap (lot size, :data:`MAX_SAMPLE`).

    Method. With ``n_min(c)`` the smallest ``n`` meeting beta and ``n_max(c)``
    the largest meeting alpha (both never decrease in ``c``, as ``Pa`` rises
    with ``c`` and falls with ``n``), ``c`` has a plan exactly when
    ``n_min(c) <= n_max(c)``, and the answer is ``(n_min(c*), c*)`` for the
    smallest such ``c*``; as ``n_min`` never decreases, no smaller ``n`` has a
    plan and no smaller ``c`` ties. A whole block ``a <= c < b`` holds no plan
    when some ``m`` has ``Pa(RQL; m, a) > beta`` and ``Pa(AQL; m, b - 1) <
    1 - alpha``: then ``n_max(c) <= n_max(b - 1) < m < n_min(a) <= n_min(c)``
    for every ``c`` in it (two evaluations). Acceptance numbers are taken in
    segments from 0 up to the Poisson approximation's ``c`` (then beyond),
    cut into blocks sized to half the approximate gap between the curves;
    blocks not ruled out are halved, single values not ruled out are decided
    exactly (``n_min`` by integer search, then ``Pa`` at the AQL). Every ``c``
    below the answer is thus proven infeasible by the exact model; the
    approximations only set the cost. Cost: about two evaluations per block
    (a few thousand blocks at RQL/AQL = 1.01) plus an integer search for each
    single value near the answer.
    """
    top = c_limit if c_limit is not None else C_SEARCH_LIMIT + 1
    c_hat = min(_approx_c(kernel, alpha, beta), max(top - 1, 0))
    if c_limit is None and c_hat >= C_SEARCH_LIMIT:
        raise Infeasible(
            f"the AQL and RQL are too close together: a plan would need an acceptance number "
            f"above {C_SEARCH_LIMIT:,} (the Poisson approximation gives about {c_hat:,})",
            {"aql": kernel.t.aql, "rql": kernel.t.rql, "c_approx": int(c_hat)})
    curves = _Curves(kernel, alpha, beta, cap, c_hat)
    start, end, width = 0, c_hat + 1, 8
    while start < top:
        end = min(end, top)
        found = _segment(curves, start, end)
        if found is not None:
            return found
        if int(curves.n_min(np.array([end - 1]))[0]) < 0:
            return None  # n_min passes the cap here and never falls in c
        start, end, width = end, end + width, 2 * width
    return None


def _segment(curves: "_Curves", start: int, end: int) -> tuple[int, int] | None:
    """The plan of the smallest feasible ``c`` in ``start <= c < end`` (see
    :func:`smallest_plan`), or None."""
    kernel = curves.kernel
    found = None
    blocks = _blocks(curves, start, end)
    while blocks:
        a = np.array([x for x, _ in blocks if found is None or x < found[1]], dtype=np.int64)
        b = np.array([y for x, y in blocks if found is None or x < found[1]], dtype=np.int64)
        if not a.size:
            break
        alive = ~_separated(curves, a, b)
        single = alive & (b - a == 1)
        if single.any():
            cs = a[single]
            nm = curves.n_min(cs)
            ok = nm >= 0
            ok[ok] = kernel.at_aql(nm[ok], cs[ok]) >= 1.0 - curves.alpha - TOL
            if ok.any():
                i = int(np.argmax(ok))
                if found is None or cs[i] < found[1]:
                    found = (int(nm[i]), int(cs[i]))
        blocks = []
        for lo_, hi_ in zip(a[alive & ~single].tolist(), b[alive & ~single].tolist()):
            mid = (lo_ + hi_) // 2
            blocks += [(lo_, mid), (mid, hi_)]
    return found


#: Acceptance numbers searched when nothing else bounds them.
C_SEARCH_LIMIT = 10_000_000


class _Curves:
    """Approximate ``n_min(c)`` and ``n_max(c)`` (:meth:`Kernel.guess_n`)
    scaled by their exact ratios at a dozen acceptance numbers spread over
    ``0 .. end`` (interpolated in ``c``): they place block edges and
    separating sample sizes only, so their error costs time, never a wrong
    answer."""

    def __init__(self, kernel: Kernel, alpha: float, beta: float, cap: int | None, end: int):
        self.kernel, self.alpha, self.beta, self.cap = kernel, alpha, beta, cap
        self.cs = np.array([0], dtype=np.int64)
        self.fr = self.fa = np.ones(1)
        if end > 16:  # calibration pays only when there are blocks to place
            cs = np.unique(np.geomspace(1, end, 6).astype(np.int64))
            self.fr = self._ratio(n_min(kernel, cs, beta, cap), self.raw_rql(cs))
            self.fa = self._ratio(n_max(kernel, cs, alpha, cap), self.raw_aql(cs))
            self.cs = cs

    def n_min(self, cs):
        """Exact :func:`n_min`, started from the calibrated guess."""
        return n_min(self.kernel, cs, self.beta, self.cap, guess=self.rql(cs) - 1.0,
                     spread=0.002 if self.cs.size > 1 else 0.01)

    @staticmethod
    def _ratio(exact, guess):
        ok = (exact > 0) & (guess > 0) & np.isfinite(guess)
        return np.where(ok, exact / np.where(ok, guess, 1.0), 1.0)

    def raw_rql(self, c):
        return self.kernel.guess_n(c, self.beta, "rql")

    def raw_aql(self, c):
        return self.kernel.guess_n(c, 1.0 - self.alpha, "aql")

    def rql(self, c):
        return self.raw_rql(c) * np.interp(c, self.cs, self.fr)

    def aql(self, c):
        return self.raw_aql(c) * np.interp(c, self.cs, self.fa)


def _separated(curves: _Curves, a, b):
    """True for the blocks ``a <= c < b`` shown to hold no plan by a sample
    size ``m`` between the curves: ``Pa(RQL; m, a) > beta`` gives
    ``n_min(c) >= n_min(a) > m`` and ``Pa(AQL; m, b - 1) < 1 - alpha`` gives
    ``n_max(c) <= n_max(b - 1) < m`` for every ``c`` in the block (two
    evaluations, whichever ``m``; the approximations only choose it)."""
    kernel = curves.kernel
    limit = kernel.n_limit(curves.cap)
    lo_n = np.minimum(_lowest_n(kernel, b - 1), limit)
    m = np.clip(np.floor(0.5 * (curves.rql(a) + curves.aql(b - 1))), 1, limit).astype(np.int64)
    out = m > lo_n  # at or below n = c (items) every lot is accepted
    if kernel.level("aql") <= 0.0 or not out.any():
        return np.zeros(a.shape, dtype=bool)
    i = np.flatnonzero(out)
    out[i] = kernel.at_aql(m[i], b[i] - 1) < 1.0 - curves.alpha - TOL
    i = np.flatnonzero(out)
    if i.size:
        out[i] = kernel.at_rql(m[i], a[i]) > curves.beta + TOL
    return out


def _approx_c(kernel: Kernel, alpha: float, beta: float) -> int:
    """Smallest ``c`` whose approximate sample sizes at beta and alpha cross
    (:meth:`Kernel.guess_n`), by doubling and bisection over ``c``: a starting
    point for :func:`smallest_plan`, never its answer."""
    def crosses(c):
        return float(kernel.guess_n(c, beta, "rql")) <= float(kernel.guess_n(c, 1.0 - alpha, "aql"))

    if kernel.level("aql") <= 0.0 or crosses(0):
        return 0
    lo, hi = 0, 1
    while not crosses(hi):
        lo, hi = hi, hi * 2
        if hi > 4 * C_SEARCH_LIMIT:
            return hi
    while hi - lo > 1:
        mid = (lo + hi) // 2
        lo, hi = (lo, mid) if crosses(mid) else (mid, hi)
    return hi


def _blocks(curves: _Curves, start: int, stop: int) -> list:
    """Blocks ``[a, b)`` covering ``start <= c < stop``, each about half as wide
    as the approximate gap (in acceptance numbers) between the sample size
    meeting beta and the one meeting alpha at its first ``c``."""
    out = []
    c = start
    p1 = curves.kernel.level("aql")
    while c < stop:
        gap = float(curves.rql(c) - curves.aql(c))
        w = max(1, int(min(0.5 * gap * p1, stop - c))) if gap > 0 else 1
        out.append((c, c + w))
        c += w
    return out


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
    pass evaluates a grid of levels inside the bracket in one vectorised call
    and keeps the cell where ``Pa`` crosses ``prob`` (see :func:`invert_levels`)."""
    return invert_levels(plan, (prob,), model, scope)[0]


def invert_levels(plan, probs, model: str, scope: Scope) -> list[float]:
    """:func:`invert_level` for several probabilities at once.

    Each pass evaluates :data:`INVERT_POINTS` levels of every bracket still
    open in one call of ``plan.pa`` (a plan evaluated by a walk over its units
    walks once per pass for all of them) and keeps the grid cell where ``Pa``
    crosses the probability: the first pass over twelve decades below the top
    (one grid for all the probabilities), the next ones evenly over the cell
    kept (a 256-fold narrowing). From the second pass on, the crossing is
    also sought on the interpolating polynomials of degrees 5 and 7 through
    the grid values around the cell (:func:`_interpolated_crossing`): where
    the two agree to :data:`LEVEL_RTOL` the higher degree's crossing is the
    answer, which saves the passes that would narrow the cell that far
    (``Pa`` is a smooth function of the level for every plan inverted here:
    a polynomial, or a ratio of polynomials, in ``p``, or a smooth function of
    a Poisson mean or of a normal or noncentral t quantile). Otherwise the
    passes go on until the cell is :data:`LEVEL_RTOL` wide and its midpoint
    is the answer, as for a ``Pa`` that is not smooth. Either way the level
    is found to a relative ``1e-13``, up to the evaluation's own error (a
    walk stops a level at an undecided probability of 1e-15, at a unit that
    depends on the other levels).
    """
    k = len(probs)
    lo, hi = [0.0] * k, [1.0] * k
    while scope.per_unit:  # nonconformities per unit have no upper bound: double it
        grow = [j for j in range(k) if hi[j] < 1e6]
        if grow:
            at = np.atleast_1d(np.asarray(plan.pa(np.array([hi[j] for j in grow]), model,
                                                  scope), dtype=float))
            grow = [j for j, v in zip(grow, at) if v > probs[j]]
        if not grow:
            break
        for j in grow:
            hi[j] *= 2.0
    found: list = [None] * k
    open_ = list(range(k))
    for step in range(40):
        if not open_:
            break
        if step:  # the cell kept, widened by 4 of the new steps each side so that the
            # interpolation's 8 values fit around a crossing next to its edge
            grids = [_padded_grid(lo[j], hi[j], 1.0 if not scope.per_unit else math.inf)
                     for j in open_]
        else:  # levels spread over twelve decades first (one grid shared by all)
            grids = [np.geomspace(1e-12 * hi[j], hi[j], INVERT_POINTS + 1)[:-1] for j in open_]
        xs, where = np.unique(np.concatenate(grids), return_inverse=True)
        pas = np.atleast_1d(np.asarray(plan.pa(xs, model, scope), dtype=float))
        pas = pas[where.ravel()].reshape(len(open_), -1)
        still = []
        for j, xs, pa in zip(open_, grids, pas):
            above = pa > probs[j]
            if above.any():
                lo[j] = float(xs[np.flatnonzero(above)[-1]])
            if (~above).any():
                hi[j] = float(xs[np.flatnonzero(~above)[0]])
            if hi[j] - lo[j] <= LEVEL_RTOL * max(hi[j], 1e-300):
                continue
            if step and above.any() and (~above).any():
                found[j] = _interpolated_crossing(xs, pa, probs[j], above)
                if found[j] is not None:
                    continue
            still.append(j)
        open_ = still
    return [f if f is not None else 0.5 * (a + b) for f, a, b in zip(found, lo, hi)]


def _padded_grid(lo: float, hi: float, top: float):
    """:data:`INVERT_POINTS` even levels over ``[lo, hi]`` widened by 4 steps
    each side (within ``[0, top]``), ends excluded."""
    pad = 4.0 * (hi - lo) / (INVERT_POINTS - 7)
    a, b = max(lo - pad, 0.0), min(hi + pad, top)
    return np.linspace(a, b, INVERT_POINTS + 2)[1:-1]


#: Relative accuracy of the quality levels of :func:`invert_levels`.
LEVEL_RTOL = 1e-13

#: Levels per bracket and pass of :func:`invert_levels`.
INVERT_POINTS = 255


def _interpolated_crossing(xs, pa, prob: float, above) -> float | None:
    """Where ``Pa`` crosses ``prob`` between two neighbours of the even grid
    ``xs`` (``pa`` above ``prob`` at the first, not at the second), on the
    interpolating polynomials of degrees 5 and 7 through the 6 and 8 grid
    values around that cell; the degree-7 crossing when the two crossings lie
    in the cell and within :data:`LEVEL_RTOL` of each other (the difference
    bounds the degree-5 error, and the degree-7 error is smaller by about the
    square of the cell's width over ``Pa``'s scale), else ``None``."""
    i = int(np.flatnonzero(above)[-1])
    if i < 3 or i + 5 > xs.size or above[i + 1]:
        return None
    x0, h = float(xs[i]), float(xs[i + 1] - xs[i])
    roots = []
    for first, last in ((i - 2, i + 4), (i - 3, i + 5)):
        t = (xs[first:last] - x0) / h
        coef = np.linalg.solve(np.vander(t), pa[first:last] - prob)
        root = _falling_root(coef.tolist())
        if root is None:
            return None
        roots.append(x0 + h * root)
    if abs(roots[1] - roots[0]) > LEVEL_RTOL * max(abs(roots[1]), 1e-300):
        return None
    return roots[1]


def _falling_root(coef, start: float = 0.0) -> float | None:
    """Root in ``[start, 1]`` of the polynomial ``coef`` (highest power first),
    positive at ``start`` and not positive at 1, by Newton steps kept inside a
    shrinking bracket (bisection where a step would leave it); ``None`` when
    the signs at the ends do not bracket a root."""
    def value(t):
        v = d = 0.0
        for c in coef:
            d = d * t + v
            v = v * t + c
        return v, d

    a, b = start, 1.0
    fa, fb = value(a)[0], value(b)[0]
    if not (fa > 0.0 >= fb):
        return None
    t = a + (b - a) * fa / (fa - fb)
    for _ in range(100):
        v, d = value(t)
        if v > 0.0:
            a = t
        else:
            b = t
        if v == 0.0 or b - a <= 2e-15:
            break
        nxt = t - v / d if d != 0.0 else a
        if not a < nxt < b:
            nxt = 0.5 * (a + b)
        if abs(nxt - t) <= 1e-15:
            t = nxt
            break
        t = nxt
    return t


#: ``Pa`` at the top of the range a report scans (:func:`curve_top`); a report
#: inverts it with the plan's quality levels.
ASN_TOP_PA = 0.001

#: Points of the even grid over ``[0, curve_top]`` on which a report scans a
#: plan's curves for their largest values (the ASN here, the Poisson-exact
#: difference in :mod:`lotwise.analysis.approximation`): one grid, so a plan
#: evaluated by a walk over its units walks it once for both.
CURVE_POINTS = 801


def curve_top(plan, model: str, scope: Scope) -> float:
    """Top of the range a report scans: 1.2 times the level where ``Pa`` has
    fallen to :data:`ASN_TOP_PA` (at most 1 for a fraction nonconforming, at
    least 1e-12)."""
    q = plan.quality_at(ASN_TOP_PA, model, scope, "consumer")
    top = 1.2 * q if scope.per_unit else min(1.0, 1.2 * q)
    return max(top, 1e-12)


def maximise_over_levels(func, plan, model: str, scope: Scope, points: int = 201):
    """Largest value of ``func(p, model, scope)`` (an ASN) over the OC curve of
    ``plan`` and the quality level where it occurs.

    Under the binomial and Poisson models: the :data:`CURVE_POINTS` grid over
    ``[0, curve_top]`` (where ``Pa`` falls from 1 to below 0.001), then
    101-point grids over the two cells around the best point, until the
    vertex of interpolating polynomials through the values around it is
    settled (:func:`interpolated_peak`). Under the hypergeometric model, whole
    lot counts: grids of at most ``points`` counts until the bracket holds
    that few, then every count in it, so a lot of 10^9 costs a few grids. For
    double plans under the binomial and Poisson models
    :func:`lotwise.families.double.double_max_asn` gives the closed form; this
    generic search agrees with it to 1e-12 (tests/test_multistage.py).
    """
    hi = curve_top(plan, model, scope)
    if model == "hypergeometric":
        N = scope.lot_size
        dmax = int(min(N, math.ceil(hi * N)))
        ds = np.unique(np.linspace(0, dmax, min(points, dmax + 1)).round())
        vals = np.asarray(func(ds / N, model, scope))
        i = int(np.argmax(vals))
        lo_d = int(ds[max(i - 1, 0)])
        hi_d = int(ds[min(i + 1, len(ds) - 1)])
        while hi_d - lo_d > points:  # zoom on whole counts until every count can be tried
            ds = np.unique(np.linspace(lo_d, hi_d, points).round())
            vals = np.asarray(func(ds / N, model, scope))
            i = int(np.argmax(vals))
            lo_d, hi_d = int(ds[max(i - 1, 0)]), int(ds[min(i + 1, len(ds) - 1)])
        fine = np.arange(lo_d, hi_d + 1, dtype=float)
        fv = np.asarray(func(fine / N, model, scope))
        j = int(np.argmax(fv))
        return float(fv[j]), float(fine[j] / N)
    ps = np.linspace(0.0, hi, CURVE_POINTS)
    vals = np.asarray(func(ps, model, scope), dtype=float)
    i = int(np.argmax(vals))
    best = (float(vals[i]), float(ps[i]))
    peak = interpolated_peak(ps, vals, i, halves=(3, 4))  # degrees 6 and 8 on this grid
    if peak is not None and peak[0] >= best[0]:
        return peak
    # Zoom: a fresh 101-point grid over the two cells around the maximum (each
    # pass narrows the bracket 50-fold), until the vertex of the interpolating
    # polynomials through the grid values around the maximum is settled
    # (:func:`interpolated_peak`), or the bracket is 1e-12 wide, or six passes.
    a, b = ps[max(i - 1, 0)], ps[min(i + 1, ps.size - 1)]
    for _ in range(6):
        xs = np.linspace(a, b, 101)
        v = np.asarray(func(xs, model, scope), dtype=float)
        j = int(np.argmax(v))
        if v[j] > best[0]:
            best = (float(v[j]), float(xs[j]))
        peak = interpolated_peak(xs, v, j)
        if peak is not None:
            return peak if peak[0] >= best[0] else best
        a, b = xs[max(j - 1, 0)], xs[min(j + 1, 100)]
        if b - a < 1e-12 * max(b, 1e-12):
            break
    return best


#: Relative agreement of the two vertices :func:`interpolated_peak` compares:
#: the value (the location of a maximum is set by the value only to about the
#: square root of the value's relative error, some 1e-7 of the curve's scale).
PEAK_RTOL = 1e-13


def interpolated_peak(xs, v, j: int, rtol: float = PEAK_RTOL, at_rtol: float = 1e-9,
                      halves: tuple[int, int] = (2, 3)):
    """The maximum of the values ``v`` on the even grid ``xs`` (largest at
    ``j``) as the vertex of the interpolating polynomials of degrees
    ``2 halves[0]`` and ``2 halves[1]`` (4 and 6 by default) through the
    values within that many points of ``j``: ``(value, level)`` of the
    higher degree's vertex when both vertices lie within a cell of ``xs[j]`` and
    their values agree to ``rtol`` and their levels to ``at_rtol`` of the
    level, else ``None`` (for a maximum at the grid's edge, or a curve not
    smooth around it)."""
    if j < halves[1] or j + halves[1] + 1 > xs.size:
        return None
    x0, h = float(xs[j]), float(xs[1] - xs[0])
    found = []
    for half in halves:
        t = (xs[j - half:j + half + 1] - x0) / h
        coef = np.linalg.solve(np.vander(t), v[j - half:j + half + 1])
        slope = np.polyder(coef)
        s_lo, s_hi = np.polyval(slope, -1.0), np.polyval(slope, 1.0)
        if not s_lo > 0.0 > s_hi:
            return None
        root = _falling_root((slope / (s_lo - s_hi)).tolist(), -1.0)
        if root is None:
            return None
        found.append((float(np.polyval(coef, root)), x0 + h * root))
    (v_low, x_low), (v_high, x_high) = found  # the lower and the higher degree's vertex
    if abs(v_high - v_low) > rtol * abs(v_high) \
            or abs(x_high - x_low) > at_rtol * max(abs(x_high), 1e-300):
        return None
    return v_high, x_high
