"""Exact probabilities of plans that inspect in stages or unit by unit.

* :func:`stage_pmf` / :func:`stage_cdf` -- the count found in one stage,
  given what earlier stages took from the lot (hypergeometric) or not
  (binomial, Poisson);
* :func:`stage_recursion` -- the distribution of the running count stage by
  stage, with acceptance and rejection numbers (double and multiple plans);
* :func:`unit_walk` -- the same unit by unit (sequential plans, curtailed
  inspection), by dynamic programming over (units inspected, count found).

Every function is vectorised over the quality levels ``x`` (fractions, rates
per unit, or whole counts ``D`` of a lot of ``N`` under the hypergeometric
model).

References
----------
.. [1] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 15.3 (double, multiple and sequential sampling).
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press, 2009), ch. 6-8.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.quantities import InputError
from lotwise.core.types import Scope, lot_counts

__all__ = ["stage_pmf", "stage_cdf", "stage_recursion", "unit_walk", "level_to_x",
           "finish_shape", "StageResult", "WalkResult", "NO_REJECTION", "WALK_EPS"]

NO_REJECTION = 1 << 40  # "no rejection number at this unit"


# --- kernels ---------------------------------------------------------------

def _binom_pmf(k, n, p):
    """Binomial mass ``P(X = k)``, ``X ~ Bin(n, p)``, broadcast; Loader's form."""
    k, n, p = np.broadcast_arrays(np.asarray(k, float), np.asarray(n, float),
                                  np.asarray(p, float))
    with np.errstate(all="ignore"):
        inside = (p > 0) & (p < 1) & (k >= 0) & (k <= n)
        ks = np.where(inside, k, 0.0)
        ns = np.where(inside, n, 1.0)
        ps = np.where(inside, p, 0.5)
        out = np.exp(oc._log_dbinom(ks, ns, ps, 1.0 - ps))
        out = np.where(inside, out, 0.0)
        out = np.where((p <= 0) & (k == 0) & (n >= 0), 1.0, out)
        out = np.where((p >= 1) & (k == n) & (n >= 0), 1.0, out)
    return np.nan_to_num(out, nan=0.0)


def _pois_pmf(k, lam):
    """Poisson mass ``P(X = k)``, ``X ~ Poisson(lam)``, broadcast."""
    k, lam = np.broadcast_arrays(np.asarray(k, float), np.asarray(lam, float))
    with np.errstate(all="ignore"):
        ks = np.maximum(k, 0.0)
        out = np.exp(special.xlogy(ks, lam) - lam - special.gammaln(ks + 1.0))
        out = np.where(k < 0, 0.0, out)
    return np.nan_to_num(out, nan=0.0)


def stage_pmf(j, n, model, x, N=None, m=0, d=0):
    """Probability that a stage of ``n`` units finds exactly ``j`` more.

    ``x`` is the fraction ``p`` (binomial, Poisson) or the lot's whole count
    ``D`` (hypergeometric, with lot size ``N``); under the hypergeometric
    model the stage is drawn from the ``N - m`` items left after ``m`` units
    holding ``d`` nonconforming ones. Broadcast over all arguments.
    """
    j = np.asarray(j, float)
    if model == "binomial":
        return _binom_pmf(j, n, x)
    if model == "poisson":
        return _pois_pmf(j, np.asarray(n, float) * np.asarray(x, float))
    if model == "hypergeometric":
        rem = np.asarray(x, float) - d
        with np.errstate(all="ignore"):
            out = oc.hypergeometric_pmf(np.maximum(j, 0.0), n, N - m, np.maximum(rem, 0.0))
        return np.where((rem < 0) | (j < 0), 0.0, out)
    raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")


def stage_cdf(c, n, model, x, N=None, m=0, d=0):
    """Probability that a stage of ``n`` units finds at most ``c`` more
    (0 for ``c < 0``); arguments as in :func:`stage_pmf`."""
    c = np.asarray(c, float)
    n_arr = np.asarray(n, float)
    cs = np.maximum(c, 0.0)
    with np.errstate(all="ignore"):
        if model == "binomial":
            out = oc.pa_binomial(np.maximum(n_arr, 1.0), cs, x)
        elif model == "poisson":
            out = oc.pa_poisson(1.0, cs, n_arr * np.asarray(x, float))
        elif model == "hypergeometric":
            rem = np.asarray(x, float) - d
            out = oc.pa_hypergeometric(np.maximum(n_arr, 1.0), cs, N - m, np.maximum(rem, 0.0))
            out = np.where(rem < 0, 0.0, out)
        else:
            raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")
    out = np.asarray(out, float)
    out = np.where(n_arr <= 0, 1.0, out)  # an empty stage finds nothing
    return np.where(c < 0, 0.0, out)


def level_to_x(p, model: str, scope: Scope, rounding: str, need: int):
    """Model argument for quality level(s) ``p``: ``p`` itself, or the whole
    count ``D`` in the lot under the hypergeometric model."""
    p = np.asarray(p, dtype=float)
    if model == "hypergeometric":
        if not scope.lot_size:
            raise InputError("the hypergeometric model needs a lot size (--lot-size)")
        if need > scope.lot_size:
            raise InputError(f"the plan inspects up to {need} units, more than the lot size "
                             f"({scope.lot_size})")
        return lot_counts(p, scope.lot_size, rounding)
    if model not in oc.MODELS:
        raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")
    return p


def finish_shape(out, shape):
    out = np.clip(np.asarray(out, dtype=float), 0.0, None).reshape(shape)
    return float(out) if out.ndim == 0 else out


# --- stage-wise recursion --------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class StageResult:
    """Outcome probabilities of a staged plan, one array entry per quality level.

    ``accept[i]`` is the probability of accepting at stage ``i`` (0-based),
    ``reach[i]`` of reaching stage ``i``, and ``accept_found[i]`` (lot size
    known) the expectation of the count found times the indicator of
    accepting at stage ``i``.
    """

    accept: tuple
    reach: tuple
    accept_found: tuple | None = None


def stage_recursion(sizes, acc, rej, model, x, N=None, track_found=False) -> StageResult:
    """Exact OC of a ``k``-stage plan by recursion over the cumulative count.

    Parameters
    ----------
    sizes : sequence of int
        Units per stage.
    acc, rej : sequence of int
        Cumulative acceptance numbers (``-1`` for none) and rejection
        numbers per stage; the last stage must decide (``rej = acc + 1``).
    model : str
    x : ndarray
        Fractions (binomial, Poisson) or whole lot counts (hypergeometric).
    N : int, optional
        Lot size (hypergeometric).
    track_found : bool
        Also return ``E[count found; accepted at stage i]`` (for AOQ).
    """
    x = np.asarray(x, dtype=float).ravel()
    P = x.size
    band = np.ones((P, 1))
    lo = 0
    m_prev = 0
    accept, reach, found = [], [], []
    xc = x[:, None]
    for n, a, r in zip(sizes, acc, rej):
        reach.append(band.sum(axis=1))
        new_lo = max(a + 1, 0)
        new_w = max(0, r - new_lo)
        new = np.zeros((P, new_w))
        acc_i = np.zeros(P)
        fnd_i = np.zeros(P)
        for u in range(band.shape[1]):
            mass = band[:, u]
            if not mass.any():
                continue
            d = lo + u
            cdf = stage_cdf(a - d, n, model, x, N, m_prev, d)
            acc_i += mass * cdf
            if track_found and model == "hypergeometric":
                # E[J; J <= c] = n D'/N' P(J' <= c - 1), J' from one unit fewer.
                rem = x - d
                left = N - m_prev
                with np.errstate(all="ignore"):
                    ej = np.where((rem > 0) & (n > 0),
                                  n * rem / left * stage_cdf(a - d - 1, n - 1, model,
                                                             x - 1, N - 1, m_prev, d),
                                  0.0)
                fnd_i += mass * (d * cdf + ej)
            if new_w:
                js = np.arange(new_lo - d, r - d, dtype=float)[None, :]
                new += mass[:, None] * stage_pmf(js, n, model, xc, N, m_prev, d)
        accept.append(acc_i)
        found.append(fnd_i)
        band, lo = new, new_lo
        m_prev += n
    return StageResult(accept=tuple(accept), reach=tuple(reach),
                       accept_found=tuple(found) if track_found else None)


# --- unit-by-unit dynamic program -------------------------------------------

@dataclass(frozen=True, kw_only=True)
class WalkResult:
    """Result of :func:`unit_walk` (arrays over quality levels)."""

    pa: np.ndarray
    asn: np.ndarray
    accepted_units: np.ndarray  # E[units inspected; accepted]
    left_in_accepted: np.ndarray | None  # E[nonconforming left in accepted lots] (lot known)


#: Undecided probability below which :func:`unit_walk` stops walking a level.
WALK_EPS = 1e-15


#: Most cell updates (undecided counts x quality levels, summed over the units) one
#: exact walk may take: about a minute on one core. Beyond it the walk is refused
#: before it starts (:func:`check_walk`).
WALK_BUDGET = 2 * 10**10


def walk_band(acc, rej) -> np.ndarray:
    """How many counts may be undecided after each unit ``m = 1 .. M`` (the band
    between the acceptance and rejection numbers, at most ``m + 1`` counts)."""
    acc = np.asarray(acc, dtype=np.int64)
    rej = np.asarray(rej, dtype=np.int64)
    m = np.arange(acc.size, dtype=np.int64)
    hi = np.minimum(rej - 1, m)
    lo = np.maximum(acc + 1, 0)
    return np.clip(hi - lo + 1, 0, None)[1:]


def check_walk(acc, rej, levels: int, *, what: str = "this plan") -> None:
    """Refuse, before any work, a walk whose cost (:func:`walk_band` summed over
    the units, times the quality levels) exceeds :data:`WALK_BUDGET`, saying what
    it would need. The estimate is an upper bound: a walk stops early once every
    level is decided."""
    band = walk_band(acc, rej)
    cost = int(band.sum()) * int(max(levels, 1))
    if cost > WALK_BUDGET:
        raise InputError(
            f"{what}: its exact OC needs about {cost:.2g} updates ({band.size:,} units x up "
            f"to {int(band.max()):,} undecided counts x {levels:,} quality level(s)), beyond "
            f"the budget of {WALK_BUDGET:.0e} (about a minute); ask for fewer levels, or a plan "
            "whose acceptance and rejection lines are further apart or truncated sooner")


def unit_walk(acc, rej, model, x, N=None, *, lot_size=None, eps: float = WALK_EPS) -> WalkResult:
    """Exact OC and ASN of an item-by-item decision rule.

    After the ``m``-th unit (``m = 1 .. M``) the lot is accepted if the
    count found is at most ``acc[m]`` and rejected if it is at least
    ``rej[m]`` (index 0 unused); where both apply the rejection wins. At
    ``m = M`` every lot must be decided (``rej[M] <= acc[M] + 1``). The
    dynamic program carries the probability of each count among undecided
    lots, unit by unit, for every quality level at once; only the band of
    counts between the two numbers is stored, and the probabilities of
    stopping are added into running sums (``Pa``, units inspected), so the
    memory is the band times the number of levels, whatever ``M``.

    A unit is nonconforming with probability ``p`` (binomial), with
    probability ``(D - d) / (N - m)`` given ``d`` found among the first
    ``m`` (hypergeometric), or carries a Poisson(``p``) number of
    nonconformities (Poisson).

    Error bound: a level stops being walked at the first unit ``m`` (checked
    every 16 units) where the probability ``U`` that the lot is still
    undecided is at most ``eps`` (1e-15 by default); its ``Pa`` is then low by
    at most ``U <= eps`` and its ASN, which counts ``m`` units for those lots,
    low by at most ``(M - m) U <= M eps`` (1e-10 units at ``M = 10^5``).
    Levels still undecided at ``M`` are decided there exactly by the rule.
    ``eps = 0`` walks every level to ``M``.

    ``lot_size`` (or ``N``) adds the expected number of nonconforming items
    left in accepted lots, for AOQ.
    """
    x = np.asarray(x, dtype=float).ravel()
    acc = np.asarray(acc, dtype=np.int64)
    rej = np.asarray(rej, dtype=np.int64)
    M = len(acc) - 1
    if M < 1:
        raise ValueError("unit_walk needs at least one unit")
    if rej[M] > acc[M] + 1:
        raise ValueError("the last unit must decide every lot")
    if model not in oc.MODELS:
        raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")
    check_walk(acc, rej, x.size)
    walk = _Walk(acc, rej, model, x, N, lot_size if lot_size is not None else N)
    walk.run(eps)
    return WalkResult(pa=walk.out[0], asn=walk.out[1] + walk.out[2], accepted_units=walk.out[1],
                      left_in_accepted=walk.out[3] if walk.lot is not None else None)


#: ``ndarray.sum`` without its Python wrapper (the same reduction: numpy's
#: ``sum`` method calls ``np.add.reduce``); the walk sums a few rows per unit.
_add_rows = np.add.reduce


class _Walk:
    """State of :func:`unit_walk`: ``S[d]`` (one row per count, one column per
    quality level still walked) is the probability that the lot is undecided
    with count ``d``; only rows ``lo..hi`` are non-zero and ``hi <= R - 1``
    (counts ``>= R`` can never be accepted: they are rejected, or carried in
    ``over`` until the next unit that has a rejection number). ``sums`` holds
    the running ``Pa``, units in accepted lots, units in rejected lots and
    nonconforming items left in accepted lots for the walked columns
    ``cols``; finished columns are copied to ``out``."""

    def __init__(self, acc, rej, model, x, N, lot):
        # Kept as arrays (a walk that stops early reads a few of a long plan's numbers).
        self.acc, self.rej, self.model, self.N, self.lot = acc, rej, model, N, lot
        finite = rej[1:][rej[1:] < NO_REJECTION]
        self.R = R = int(finite.max())
        # Widest band of undecided counts (a Poisson unit adds at most this much).
        self.band = int(min(R + 2, (np.minimum(rej[1:], R) - np.maximum(acc[:-1], -1)).max() + 3))
        P = x.size
        self.x = x
        self.cols = np.arange(P)
        self.S = np.zeros((R + 1, P))
        self.S[0] = 1.0
        self.lo = self.hi = 0
        self.over = np.zeros(P)
        self.has_over = False
        self.sums = np.zeros((4, P))
        self.out = np.zeros((4, P))
        self._levels()

    def _levels(self):
        xr = self.x[None, :]
        if self.model == "poisson":
            self.pois = _pois_pmf(np.arange(self.band, dtype=float)[:, None], xr)
            # toeplitz[v, u] = pois[v - u] (0 above the diagonal): one unit's
            # convolution as one product instead of one per row, where the
            # matrices are small (band^2 x levels <= TOEPLITZ_CELLS).
            self.toeplitz = None
            if self.band * self.band * self.x.size <= TOEPLITZ_CELLS:
                i = np.arange(self.band)
                lag = i[:, None] - i[None, :]
                self.toeplitz = np.where((lag >= 0)[:, :, None],
                                         self.pois[np.maximum(lag, 0)], 0.0)
        elif self.model == "binomial":
            self.pnc = np.clip(xr, 0.0, 1.0)
            self.qnc = 1.0 - self.pnc

    def run(self, eps: float):
        M = len(self.acc) - 1
        for m in range(1, M + 1):
            self._unit(m)
            if self.lo > self.hi and not self.has_over:
                break
            if m % 16 == 0 and m < M:
                left = _add_rows(self.S[self.lo:self.hi + 1], axis=0) + self.over
                done = left <= eps
                if done.sum() * 8 >= done.size or done.all():  # compress in batches
                    self.sums[2] += m * left * done  # counted as stopping here (see bound)
                    self._finish(done)
                    if not self.cols.size:
                        return
        self._finish(np.ones(self.cols.size, dtype=bool))

    def _finish(self, done):
        self.out[:, self.cols[done]] = self.sums[:, done]
        keep = ~done
        if not keep.any():
            self.cols = self.cols[keep]
            return
        self.cols, self.x = self.cols[keep], self.x[keep]
        S = np.zeros((self.S.shape[0], self.cols.size))  # only the band is copied
        S[self.lo:self.hi + 2] = self.S[self.lo:self.hi + 2][:, keep]
        self.S, self.over, self.sums = S, self.over[keep], self.sums[:, keep]
        self._levels()

    def _unit(self, m: int):
        S, lo, hi = self.S, self.lo, self.hi
        r = int(self.rej[m])
        top = (r if r < self.R else self.R) - 1  # highest count still undecided or acceptable
        beyond = None
        if lo <= hi:
            if self.model == "poisson":
                beyond, hi = _poisson_unit(S, lo, hi, top, self.pois, self.toeplitz)
            else:  # each row lo..hi moves up one with probability q
                if self.model == "binomial":
                    q, keep = self.pnc, self.qnc
                else:
                    d = np.arange(lo, hi + 1, dtype=float)[:, None]
                    q = np.clip((self.x[None, :] - d) / (self.N - (m - 1)), 0.0, 1.0)
                    keep = 1.0 - q
                band = S[lo:hi + 1]
                moved = band * q
                band *= keep
                if hi < top:
                    S[lo + 1:hi + 2] += moved
                    hi += 1
                elif hi == top:  # the usual case at the top: row hi's move is rejected
                    if hi > lo:
                        S[lo + 1:hi + 1] += moved[:-1]
                    beyond = moved[-1]
                else:  # the rejection number fell below the band: every row above goes
                    S[lo + 1:hi + 2] += moved
                    gone = S[top + 1:hi + 2]
                    beyond = _add_rows(gone, axis=0)
                    gone[...] = 0.0
                    hi = top
        if r <= self.R:
            if beyond is not None:
                self.sums[2] += m * beyond
            if self.has_over:
                self.sums[2] += m * self.over
                self.over = np.zeros(self.cols.size)
                self.has_over = False
        elif beyond is not None:
            self.over = self.over + beyond
            self.has_over = True
        self.hi = hi
        a = int(self.acc[m])
        if a >= lo and lo <= hi:
            self.lo = self._accept(a, m)

    def _accept(self, a: int, m: int) -> int:
        """Accept the undecided lots with counts ``lo..a`` at unit ``m``;
        returns the new lowest undecided count."""
        lo, hi, sums = self.lo, self.hi, self.sums
        k = a if a < hi else hi
        taken = self.S[lo:k + 1]
        got = _add_rows(taken, axis=0)
        sums[0] += got
        sums[1] += m * got
        if self.lot is not None:
            if self.model == "hypergeometric":
                dd = np.arange(lo, k + 1, dtype=float)[:, None]
                sums[3] += _add_rows(taken * (self.x[None, :] - dd), axis=0)
            else:
                sums[3] += got * self.x * (self.lot - m)
        taken[...] = 0.0
        return k + 1


#: Largest ``band^2 x levels`` for which a Poisson walk keeps its one-unit
#: convolution as matrices (16 MB); wider walks convolve row by row.
TOEPLITZ_CELLS = 2_000_000


def _poisson_unit(S, lo: int, hi: int, top: int, pois, toeplitz=None):
    """One more unit under the Poisson model: the undecided counts ``lo..hi``
    convolved with the unit's count (``pois[j]``: the mass of ``j``
    nonconformities per level; ``toeplitz[v, u] = pois[v - u]`` when given),
    kept up to ``top``; returns the mass that went beyond ``top`` and the new
    ``hi``."""
    width = top - lo + 1
    band = S[lo:hi + 1]
    mass = _add_rows(band, axis=0)
    if width <= 0:
        band[...] = 0.0
        return mass, lo - 1
    rows = min(band.shape[0], width)
    if toeplitz is not None:
        new = np.einsum("vuc,uc->vc", toeplitz[:width, :rows], band[:rows])
    else:
        new = np.zeros((width, S.shape[1]))
        for u in range(rows):
            new[u:] += band[u:u + 1] * pois[:width - u]
    band[...] = 0.0
    S[lo:top + 1] = new
    return np.maximum(mass - _add_rows(new, axis=0), 0.0), top
