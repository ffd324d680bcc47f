"""Double and multiple sampling plans by attributes: exact OC, ASN, AOQ, ATI.

A *double* plan ``(n1, c1, r1, n2, c2)`` inspects a first sample of ``n1``
units and accepts the lot if it holds ``d1 <= c1`` nonconforming items,
rejects it if ``d1 >= r1`` (by default ``r1 = c2 + 1``) and otherwise
inspects a second sample of ``n2`` units, accepting if ``d1 + d2 <= c2``.
A *multiple* plan does the same over ``k`` stages with cumulative acceptance
numbers ``a_i`` (``None`` where the stage cannot accept) and rejection
numbers ``r_i``, the last stage deciding for certain (``r_k = a_k + 1``).

Everything is exact under three models:

* **hypergeometric** -- a lot of ``N`` items holding ``D`` nonconforming;
  each stage is drawn without replacement from what the earlier stages left
  (``N - m`` items holding ``D - d`` nonconforming after ``m`` units with
  ``d`` found);
* **binomial** -- a process (or very large lot) with fraction nonconforming
  ``p``; the stage counts are independent binomials;
* **poisson** -- a Poisson count with mean ``n p`` per stage (exact for
  nonconformities per unit, an approximation otherwise).

Methods
-------
*Double plans* use the textbook formula [1]_

``Pa = P(d1 <= c1) + sum_{d1=c1+1}^{r1-1} P(d1) P(d2 <= c2 - d1 | d1)``,
``ASN = n1 + n2 P(c1 < d1 < r1)``.

*Multiple plans* use a stage-wise recursion over the cumulative count: the
distribution of the count among lots still undecided after stage ``i`` is
carried to stage ``i + 1`` by the stage's count distribution (conditional on
the count so far under the hypergeometric model); the mass at or below
``a_i`` is accepted, at or above ``r_i`` rejected. With ``k = 2`` it gives the
double-plan formula (a property test checks it).

*Curtailed ASN* (:meth:`DoublePlan.asn_curtailed`): inspection stops as soon
as the decision is certain. It is computed exactly by a dynamic program over
(units inspected, count found), unit by unit, with these stopping rules
inside stage ``i`` after ``m`` units (``m_i`` the stage's last unit):

* reject once the count reaches ``r_i``: the count can only grow (and
  since ``r_i <= a_k + 1`` no other count is certain to be rejected);
* accept once ``count + (m_i - m) <= a_i``: even if every remaining unit of
  the stage were nonconforming the stage would accept. Under the Poisson
  model a unit may carry several nonconformities, so acceptance is never
  certain early and only rejection is curtailed.

``stages="all"`` (default) curtails every stage; ``stages="last"`` only the
last (the first samples are inspected in full, as many contracts require);
``accept=False`` curtails on rejection only ("semi-curtailed", the usual
textbook case [1]_). Curtailment never changes the decision, so ``Pa`` is the
same; only the number of units inspected falls.

*AOQ and ATI* (lot size known) assume rectifying inspection: a rejected lot
is inspected 100 % and every nonconforming item found is replaced. ATI is
``sum_i m_i P(accept at stage i) + N (1 - Pa)`` with full stages; AOQ is the
expected number of nonconforming items left in accepted lots, divided by
``N``: ``p sum_i (N - m_i) P(accept at i) / N`` under the binomial and
Poisson models and ``E[(D - X) 1{accepted}] / N`` (``X`` the count found)
under the hypergeometric.

References
----------
.. [1] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 15.3 (double, multiple and sequential sampling).
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 6-8.

Examples
--------
A receiving inspector works a double plan on castings: 50 first, accept on
1, second sample 100, accept on a total of 3. At 5 % nonconforming the lot
passes 29 % of the time and takes 98 units on average:

>>> plan = DoublePlan(n1=50, c1=1, n2=100, c2=3)
>>> from lotwise.families.base import Scope
>>> round(plan.pa(0.05, "binomial", Scope()), 4), round(plan.asn(0.05, "binomial", Scope()), 2)
(0.2904, 98.1)
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.families.base import Scope, lot_counts
from lotwise.core.quantities import InputError, parse_count

__all__ = [
    "DoublePlan",
    "MultiplePlan",
    "Decision",
    "stage_pmf",
    "stage_cdf",
    "unit_walk",
    "stage_recursion",
]

_BIG = 1 << 40  # "no rejection number at this unit"


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


def _level_to_x(p, model: str, scope: Scope, rounding: str, need: int):
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


def _finish(out, shape):
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


def unit_walk(acc, rej, model, x, N=None, *, lot_size=None) -> WalkResult:
    """Exact OC and ASN of an item-by-item decision rule.

    After the ``m``-th unit (``m = 1 .. M``) the lot is accepted if the
    count found is at most ``acc[m]`` and rejected if it is at least
    ``rej[m]`` (index 0 unused); where both apply the rejection wins. At
    ``m = M`` every lot must be decided (``rej[M] <= acc[M] + 1``). The dynamic program carries the probability
    of each count among undecided lots, unit by unit; only the band of
    counts between the two numbers is stored, so the cost is ``M`` times the
    band width times the number of quality levels.

    A unit is nonconforming with probability ``p`` (binomial), with
    probability ``(D - d) / (N - m)`` given ``d`` found among the first
    ``m`` (hypergeometric), or carries a Poisson(``p``) number of
    nonconformities (Poisson).

    ``lot_size`` (or ``N``) adds the expected number of nonconforming items
    left in accepted lots, for AOQ.
    """
    x = np.asarray(x, dtype=float).ravel()
    P = x.size
    acc = np.asarray(acc, dtype=np.int64)
    rej = np.asarray(rej, dtype=np.int64)
    M = len(acc) - 1
    if M < 1:
        raise ValueError("unit_walk needs at least one unit")
    if rej[M] > acc[M] + 1:
        raise ValueError("the last unit must decide every lot")
    finite = rej[1:][rej[1:] < _BIG]
    R = int(finite.max())
    lot = lot_size if lot_size is not None else N
    if model not in oc.MODELS:
        raise InputError(f"model ({model}) must be one of: {', '.join(oc.MODELS)}")
    # S[d] (one row per count, one column per quality level) is the
    # probability that the lot is undecided with count d; only rows lo..hi
    # are non-zero and hi <= R - 1 (counts >= R can never be accepted: they
    # are rejected, or carried in ``over`` until the next unit that has a
    # rejection number). The probabilities of stopping at each unit are
    # written to ``acc_at`` and ``rej_at`` and reduced at the end.
    S = np.zeros((R + 1, P))
    S[0] = 1.0
    lo = hi = 0
    over = np.zeros(P)
    has_over = False
    acc_at = np.zeros((M + 1, P))
    rej_at = np.zeros((M + 1, P))
    left = np.zeros(P) if lot is not None else None
    xr = x[None, :]
    if model == "poisson":
        pois = _pois_pmf(np.arange(R + 2, dtype=float)[:, None], xr)
    elif model == "binomial":
        pnc = np.clip(xr, 0.0, 1.0)
        qnc = 1.0 - pnc
    accl = acc.tolist()
    rejl = rej.tolist()
    last = M
    for m in range(1, M + 1):
        r = rejl[m]
        top = (r if r < R else R) - 1  # highest count still undecided or acceptable
        beyond = None
        if lo <= hi:
            if model == "poisson":
                width = top - lo + 1
                band = S[lo:hi + 1].copy()
                mass = band.sum(axis=0)
                S[lo:hi + 1] = 0.0
                if width > 0:
                    new = np.zeros((width, P))
                    for u in range(min(band.shape[0], width)):
                        new[u:] += band[u:u + 1] * pois[:width - u]
                    S[lo:top + 1] = new
                    beyond = np.maximum(mass - new.sum(axis=0), 0.0)
                    hi = top
                else:
                    beyond = mass
                    hi = lo - 1
            else:
                if model == "binomial":
                    q, keep = pnc, qnc
                else:
                    d = np.arange(lo, hi + 1, dtype=float)[:, None]
                    q = np.clip((xr - d) / (N - (m - 1)), 0.0, 1.0)
                    keep = 1.0 - q
                moved = S[lo:hi + 1] * q
                S[lo:hi + 1] *= keep
                S[lo + 1:hi + 2] += moved
                hi += 1
                if hi > top:
                    beyond = S[top + 1:hi + 1].sum(axis=0)
                    S[top + 1:hi + 1] = 0.0
                    hi = top
        if r <= R:
            if beyond is not None:
                rej_at[m] = beyond
            if has_over:
                rej_at[m] += over
                over = np.zeros(P)
                has_over = False
        elif beyond is not None:
            over = over + beyond
            has_over = True
        a = accl[m]
        if a >= lo and lo <= hi:
            k = a if a < hi else hi
            took = S[lo:k + 1]
            got = acc_at[m]
            took.sum(axis=0, out=got)
            if left is not None:
                if model == "hypergeometric":
                    dd = np.arange(lo, k + 1, dtype=float)[:, None]
                    left += (took * (xr - dd)).sum(axis=0)
                else:
                    left += got * x * (lot - m)
            S[lo:k + 1] = 0.0
            lo = k + 1
        if lo > hi and not has_over:
            last = m
            break
    ms = np.arange(last + 1, dtype=float)
    acc_at, rej_at = acc_at[:last + 1], rej_at[:last + 1]
    pa = acc_at.sum(axis=0)
    acc_units = ms @ acc_at
    asn = acc_units + ms @ rej_at
    return WalkResult(pa=pa, asn=asn, accepted_units=acc_units, left_in_accepted=left)


# --- decisions on the bench -------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class Decision:
    """What to do after ``inspected`` units with ``found`` nonconforming.

    Attributes
    ----------
    action : {'accept', 'reject', 'continue'}
    inspected, found : int
    stage : int or None
        The stage the inspection is in (1-based; None for item-by-item).
    next_decision_at : int or None
        Units inspected in all at the next point where the plan can decide.
    more_to_next : int or None
        Units still to inspect before that point.
    more_at_most : int
        Units at most still to inspect before the plan has decided.
    accept_number, reject_number : int or None
        The numbers that apply at the next decision point.
    reason : str
        The rule that applied, in plain words.
    """

    action: str
    inspected: int
    found: int
    stage: int | None
    next_decision_at: int | None
    more_to_next: int | None
    more_at_most: int
    accept_number: int | None
    reject_number: int | None
    reason: str
    certain_early: bool = False

    def as_dict(self) -> dict:
        return {"action": self.action, "inspected": self.inspected, "found": self.found,
                "stage": self.stage, "next_decision_at": self.next_decision_at,
                "more_to_next": self.more_to_next, "more_at_most": self.more_at_most,
                "accept_number": self.accept_number, "reject_number": self.reject_number,
                "certain_early": self.certain_early, "reason": self.reason}


def _check_record(inspected, found, total, defects, option_n="--inspected",
                  option_d="--found"):
    if not isinstance(inspected, (int, np.integer)) or inspected < 0:
        raise InputError(f"{option_n} ({inspected}) must be a whole number of at least 0")
    if not isinstance(found, (int, np.integer)) or found < 0:
        raise InputError(f"{option_d} ({found}) must be a whole number of at least 0")
    if inspected > total:
        raise InputError(f"{option_n} ({inspected}) must not be greater than the plan's "
                         f"largest sample ({total})")
    if not defects and found > inspected:
        raise InputError(f"{option_d} ({found}) must not be greater than {option_n} "
                         f"({inspected}) when counting nonconforming items")


# --- staged plans -----------------------------------------------------------

class _Staged:
    """Shared machinery of double and multiple plans (``sizes``, ``acc``,
    ``rej`` as tuples; ``acc`` uses -1 for "no acceptance at this stage")."""

    sizes: tuple
    acc: tuple
    rej: tuple

    @property
    def k(self) -> int:
        return len(self.sizes)

    @property
    def cumulative(self) -> tuple:
        out, t = [], 0
        for n in self.sizes:
            t += n
            out.append(t)
        return tuple(out)

    @property
    def n_max(self) -> int:
        """Largest number of units the plan can inspect."""
        return int(sum(self.sizes))

    # public evaluation -----------------------------------------------------
    def _x(self, p, model, scope, rounding):
        return _level_to_x(p, model, scope, rounding, self.n_max)

    def _stages(self, x, model, scope, track_found=False) -> StageResult:
        return stage_recursion(self.sizes, self.acc, self.rej, model, x,
                               scope.lot_size, track_found=track_found)

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Acceptance probability at quality level(s) ``p`` under ``model``."""
        x = self._x(p, model, scope, rounding)
        res = self._stages(x, model, scope)
        return _finish(np.sum(res.accept, axis=0), np.shape(p))

    def pa_count(self, d, scope: Scope):
        """Acceptance probability for a lot holding ``d`` nonconforming items."""
        x = np.asarray(d, dtype=float)
        res = self._stages(x, "hypergeometric", scope)
        return _finish(np.sum(res.accept, axis=0), np.shape(d))

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Average sample number with every stage inspected in full."""
        x = self._x(p, model, scope, rounding)
        res = self._stages(x, model, scope)
        out = sum(n * r for n, r in zip(self.sizes, res.reach))
        return _finish(out, np.shape(p))

    def _curtail_bounds(self, model: str, stages: str, accept: bool, defects: bool):
        if stages not in ("all", "last"):
            raise InputError(f"stages ({stages!r}) must be 'all' or 'last'")
        M = self.n_max
        accn = np.full(M + 1, -1, dtype=np.int64)
        rejn = np.full(M + 1, _BIG, dtype=np.int64)
        early_accept = accept and model != "poisson" and not defects
        start = 0
        for i, (n, a, r) in enumerate(zip(self.sizes, self.acc, self.rej)):
            end = start + n
            if n == 0:  # an empty stage (n2 = 0) decides with the stage before
                accn[end] = max(accn[end], a)
                rejn[end] = min(rejn[end], r)
                continue
            curtail = stages == "all" or i == self.k - 1
            for m in range(start + 1, end + 1):
                if curtail:
                    rejn[m] = r
                    if early_accept:
                        accn[m] = a - (end - m) if a >= 0 else -1
                if m == end:
                    rejn[m] = min(rejn[m], r)
                    accn[m] = max(accn[m], a)
            start = end
        return accn, rejn

    def asn_curtailed(self, p, model: str, scope: Scope, rounding: str = "nearest", *,
                      stages: str = "all", accept: bool = True):
        """Average sample number when inspection stops as soon as the
        decision is certain (see the module notes for the rules)."""
        x = self._x(p, model, scope, rounding)
        accn, rejn = self._curtail_bounds(model, stages, accept, scope.defects)
        res = unit_walk(accn, rejn, model, x, scope.lot_size)
        return _finish(res.asn, np.shape(p))

    def pa_curtailed(self, p, model: str, scope: Scope, rounding: str = "nearest", *,
                     stages: str = "all", accept: bool = True):
        """``Pa`` from the curtailed dynamic program (equal to :meth:`pa`;
        kept as an independent check)."""
        x = self._x(p, model, scope, rounding)
        accn, rejn = self._curtail_bounds(model, stages, accept, scope.defects)
        res = unit_walk(accn, rejn, model, x, scope.lot_size)
        return _finish(res.pa, np.shape(p))

    def _lot(self, scope: Scope) -> int:
        if not scope.lot_size:
            raise InputError("AOQ and ATI need a lot size (--lot-size)")
        return int(scope.lot_size)

    def aoq(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Average outgoing quality under rectifying inspection (fraction)."""
        N = self._lot(scope)
        x = self._x(p, model, scope, rounding)
        res = self._stages(x, model, scope, track_found=model == "hypergeometric")
        if model == "hypergeometric":
            left = sum(a * x - f for a, f in zip(res.accept, res.accept_found))
        else:
            left = sum(a * x * (N - m) for a, m in zip(res.accept, self.cumulative))
        return _finish(left / N, np.shape(p))

    def ati(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Average total inspection per lot (rejected lots inspected in full)."""
        N = self._lot(scope)
        x = self._x(p, model, scope, rounding)
        res = self._stages(x, model, scope)
        pa = np.sum(res.accept, axis=0)
        out = sum(a * m for a, m in zip(res.accept, self.cumulative)) + N * (1.0 - pa)
        return _finish(out, np.shape(p))

    def decide(self, inspected: int, found: int, *, defects: bool = False) -> Decision:
        """Accept, reject or continue after ``inspected`` units (cumulative)
        holding ``found`` nonconforming (cumulative)."""
        _check_record(inspected, found, self.n_max, defects)
        cum = self.cumulative
        stage = next(i for i, m in enumerate(cum) if inspected <= m) if inspected > 0 else 0
        if inspected == 0:
            stage = 0
        end = cum[stage]
        a, r = self.acc[stage], self.rej[stage]
        total_left = self.n_max - inspected
        an = a if a >= 0 else None
        # A count at or below an earlier stage's acceptance number was accepted there.
        for j in range(stage):
            if self.acc[j] >= 0 and found <= self.acc[j]:
                return Decision(action="accept", inspected=inspected, found=found,
                                stage=j + 1, next_decision_at=None, more_to_next=0,
                                more_at_most=0, accept_number=self.acc[j],
                                reject_number=self.rej[j],
                                reason=(f"the count after stage {j + 1} ({cum[j]} units) could "
                                        f"not have exceeded {found}, which is within its "
                                        f"acceptance number {self.acc[j]}: the lot was "
                                        "accepted there"))
        if inspected == end:
            if a >= 0 and found <= a:
                return Decision(action="accept", inspected=inspected, found=found,
                                stage=stage + 1, next_decision_at=None, more_to_next=0,
                                more_at_most=0, accept_number=an, reject_number=r,
                                reason=f"stage {stage + 1} complete: {found} <= acceptance "
                                       f"number {a}")
            if found >= r:
                return Decision(action="reject", inspected=inspected, found=found,
                                stage=stage + 1, next_decision_at=None, more_to_next=0,
                                more_at_most=0, accept_number=an, reject_number=r,
                                reason=f"stage {stage + 1} complete: {found} >= rejection "
                                       f"number {r}")
            nxt = stage + 1
            na = self.acc[nxt]
            if self.sizes[nxt] == 0:  # an empty last stage (n2 = 0) decides now
                act = "accept" if found <= na else "reject"
                return Decision(action=act, inspected=inspected, found=found, stage=nxt + 1,
                                next_decision_at=None, more_to_next=0, more_at_most=0,
                                accept_number=na, reject_number=self.rej[nxt],
                                reason=f"the second sample is empty (n2 = 0): {found} "
                                       f"{'<=' if act == 'accept' else '>'} {na}")
            return Decision(action="continue", inspected=inspected, found=found,
                            stage=nxt + 1, next_decision_at=cum[nxt],
                            more_to_next=self.sizes[nxt], more_at_most=total_left,
                            accept_number=na if na >= 0 else None, reject_number=self.rej[nxt],
                            reason=f"stage {stage + 1} complete: {found} lies between the "
                                   f"acceptance number "
                                   f"{a if a >= 0 else '(none)'} and the rejection number {r}; "
                                   f"take stage {nxt + 1} ({self.sizes[nxt]} units)")
        # Inside a stage: the decision waits for the stage's end unless it is certain.
        if found >= r:
            why = f"{found} has reached the rejection number {r} of stage {stage + 1}"
            return Decision(action="reject", inspected=inspected, found=found, stage=stage + 1,
                            next_decision_at=end, more_to_next=end - inspected, more_at_most=0,
                            accept_number=an, reject_number=r, certain_early=True,
                            reason=why + "; the count can only grow, so the lot is rejected "
                                         f"now (curtailed: the other {end - inspected} units "
                                         "of the stage cannot change it)")
        if not defects and a >= 0 and found + (end - inspected) <= a:
            return Decision(action="accept", inspected=inspected, found=found, stage=stage + 1,
                            next_decision_at=end, more_to_next=end - inspected, more_at_most=0,
                            accept_number=an, reject_number=r, certain_early=True,
                            reason=f"even if all {end - inspected} remaining units of stage "
                                   f"{stage + 1} were nonconforming the count would stay "
                                   f"within {a}: the lot is accepted (curtailed)")
        return Decision(action="continue", inspected=inspected, found=found, stage=stage + 1,
                        next_decision_at=end, more_to_next=end - inspected,
                        more_at_most=total_left, accept_number=an, reject_number=r,
                        reason=f"finish stage {stage + 1}: {end - inspected} more unit(s) to "
                               f"{end} in all, then accept on at most "
                               f"{a if a >= 0 else '(no acceptance at this stage)'}"
                               f", reject on {r} or more")


def _whole(v, name, minimum):
    if isinstance(v, bool) or not isinstance(v, (int, np.integer)):
        raise InputError(f"{name} ({v!r}) must be a whole number of at least {minimum}")
    if v < minimum:
        raise InputError(f"{name} ({v}) must be at least {minimum}")
    return int(v)


@dataclass(frozen=True, kw_only=True)
class DoublePlan(_Staged):
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
        _whole(self.n1, "n1", 1)
        _whole(self.c1, "c1", 0)
        _whole(self.n2, "n2", 0)
        _whole(self.c2, "c2", 0)
        if self.r1 is None:
            object.__setattr__(self, "r1", int(self.c2) + 1)
        _whole(self.r1, "r1", 1)
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

    @property
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
        return _finish(a1 + a2, np.shape(p))

    def pa_stages(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """``(Pa on the first sample, Pa on the second)``."""
        x = self._x(p, model, scope, rounding)
        a1, a2, _ = self._parts(x, model, scope)
        return _finish(a1, np.shape(p)), _finish(a2, np.shape(p))

    def pa_count(self, d, scope: Scope):
        a1, a2, _ = self._parts(np.asarray(d, dtype=float), "hypergeometric", scope)
        return _finish(a1 + a2, np.shape(d))

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        x = self._x(p, model, scope, rounding)
        _, _, second = self._parts(x, model, scope)
        return _finish(self.n1 + self.n2 * second, np.shape(p))

    def to_dict(self) -> dict:
        return {"scheme": "double", "n1": int(self.n1), "c1": int(self.c1),
                "r1": int(self.r1), "n2": int(self.n2), "c2": int(self.c2)}


@dataclass(frozen=True, kw_only=True)
class MultiplePlan(_Staged):
    """Multiple sampling by attributes over ``k >= 2`` stages.

    ``n`` are the stage sample sizes, ``c`` the cumulative acceptance
    numbers (``None`` where the stage cannot accept) and ``r`` the
    cumulative rejection numbers; the last stage decides, so
    ``r[-1] = c[-1] + 1`` (given or filled in).

    Examples
    --------
    Three stages of 20 on a bearing lot; stage 1 cannot accept:

    >>> p = MultiplePlan(n=(20, 20, 20), c=(None, 1, 3), r=(2, 3, 4))
    >>> p.notation
    'multiple: n=20/20/20; c=-/1/3; r=2/3/4'
    """

    n: tuple
    c: tuple
    r: tuple | None = None

    scheme = "multiple"

    def __post_init__(self):
        n = tuple(self.n)
        c = tuple(self.c)
        k = len(n)
        if k < 2:
            raise InputError(f"a multiple plan needs at least 2 stages ({k} given); "
                             "a single stage is a single plan")
        if len(c) != k:
            raise InputError(f"c has {len(c)} acceptance numbers for {k} stages")
        for i, v in enumerate(n):
            _whole(v, f"n{i + 1}", 1)
        for i, v in enumerate(c):
            if v is not None:
                _whole(v, f"c{i + 1}", 0)
        if c[-1] is None:
            raise InputError(f"c{k} (the last stage's acceptance number) must be given: the "
                             "last stage decides")
        r = self.r
        if r is None:
            r = tuple([None] * (k - 1) + [c[-1] + 1])
        r = tuple(r)
        if len(r) != k:
            raise InputError(f"r has {len(r)} rejection numbers for {k} stages")
        r = r[:-1] + ((c[-1] + 1) if r[-1] is None else r[-1],)
        for i, v in enumerate(r):
            if v is None:
                raise InputError(f"r{i + 1} (the rejection number of stage {i + 1}) must be "
                                 "given")
            _whole(v, f"r{i + 1}", 1)
        if r[-1] != c[-1] + 1:
            raise InputError(f"r{k} ({r[-1]}) must be c{k} + 1 ({c[-1] + 1}): the last stage "
                             "decides")
        prev_a, prev_r = -1, 0
        for i in range(k):
            a = -1 if c[i] is None else c[i]
            if a < prev_a:
                raise InputError(f"c{i + 1} ({a}) must not be smaller than an earlier "
                                 f"acceptance number ({prev_a})")
            if r[i] < prev_r:
                raise InputError(f"r{i + 1} ({r[i]}) must not be smaller than r{i} ({prev_r})")
            if i < k - 1 and r[i] < a + 2:
                raise InputError(f"r{i + 1} ({r[i]}) must be at least c{i + 1} + 2 ({a + 2}): "
                                 "otherwise no lot ever reaches the later stages")
            if r[i] > c[-1] + 1:
                raise InputError(f"r{i + 1} ({r[i]}) must not be greater than c{k} + 1 "
                                 f"({c[-1] + 1})")
            prev_a, prev_r = a, r[i]
        object.__setattr__(self, "n", tuple(int(v) for v in n))
        object.__setattr__(self, "c", tuple(None if v is None else int(v) for v in c))
        object.__setattr__(self, "r", tuple(int(v) for v in r))

    @property
    def sizes(self):
        return self.n

    @property
    def acc(self):
        return tuple(-1 if v is None else v for v in self.c)

    @property
    def rej(self):
        return self.r

    @property
    def label(self) -> str:
        return self.notation.split(": ", 1)[1].replace("; ", ", ")

    @property
    def notation(self) -> str:
        cs = "/".join("-" if v is None else str(v) for v in self.c)
        return (f"multiple: n={'/'.join(map(str, self.n))}; c={cs}; "
                f"r={'/'.join(map(str, self.r))}")

    def to_dict(self) -> dict:
        return {"scheme": "multiple", "n": list(self.n), "c": list(self.c), "r": list(self.r)}


# --- notation ---------------------------------------------------------------

_INDEXED = re.compile(r"^([ncr])(\d+)$")
_NONE = {"-", "#", "*", "none", "x"}


def _split_list(value: str, key: str, option: str, text: str) -> list:
    parts = [s for s in re.split(r"[/\s]+", value.strip()) if s]
    if not parts:
        raise InputError(f"{option} ({text!r}): {key} is empty; write for example "
                         f"{key}=20/20/20")
    return parts


def _count_or_none(v: str, name: str, allow_none: bool):
    if allow_none and v.strip().lower() in _NONE:
        return None
    return parse_count(v, name, minimum=0)


def _parse_staged(pairs: dict, text: str, option: str):
    """Double or multiple plan notation, indexed or as lists.

    Indexed: ``n1=50,c1=1,r1=4,n2=100,c2=3`` (``r1`` optional, default
    ``c2 + 1``; more stages ``n3, c3, r3`` ... make a multiple plan; ``ci=-``
    for a stage that cannot accept). Lists: ``multiple: n=20/20/20;
    c=-/1/3; r=2/3/4`` (slashes or spaces between the stages).
    """
    head = text.split(":", 1)[0].strip().lower() if ":" in text else None
    keys = set(pairs)
    if keys & {"n", "c", "r"}:
        bad = sorted(keys - {"n", "c", "r"})
        if bad:
            raise InputError(f"{option} ({text!r}): unknown key {bad[0]!r}; the list form takes "
                             "n, c and r, for example \"multiple: n=20/20/20; c=-/1/3; "
                             "r=2/3/4\"")
        for key in ("n", "c"):
            if key not in pairs:
                raise InputError(f"{option} ({text!r}) lacks {key}; write for example "
                                 "\"multiple: n=20/20/20; c=-/1/3; r=2/3/4\"")
        ns = [parse_count(v, f"{option} n (stage {i + 1})", minimum=1)
              for i, v in enumerate(_split_list(pairs["n"], "n", option, text))]
        k = len(ns)
        cs_t = _split_list(pairs["c"], "c", option, text)
        if len(cs_t) != k:
            raise InputError(f"{option} ({text!r}): c gives {len(cs_t)} acceptance numbers "
                             f"for {k} stages")
        cs = [_count_or_none(v, f"{option} c (stage {i + 1})", i < k - 1)
              for i, v in enumerate(cs_t)]
        rs = None
        if "r" in pairs:
            rs_t = _split_list(pairs["r"], "r", option, text)
            if len(rs_t) not in (k, k - 1):
                raise InputError(f"{option} ({text!r}): r gives {len(rs_t)} rejection numbers "
                                 f"for {k} stages")
            rs = [parse_count(v, f"{option} r (stage {i + 1})", minimum=1)
                  for i, v in enumerate(rs_t)]
            if len(rs) == k - 1:
                rs.append(None)
    else:
        stages: dict[int, dict[str, str]] = {}
        for key, value in pairs.items():
            m = _INDEXED.match(key)
            if not m:
                raise InputError(f"{option} ({text!r}): unknown key {key!r}; a double plan "
                                 "takes n1, c1, r1, n2, c2 (for example "
                                 "\"n1=50,c1=1,r1=4,n2=100,c2=3\")")
            stages.setdefault(int(m.group(2)), {})[m.group(1)] = value
        k = max(stages) if stages else 0
        if sorted(stages) != list(range(1, k + 1)):
            missing = next(i for i in range(1, k + 1) if i not in stages)
            raise InputError(f"{option} ({text!r}) lacks stage {missing} (n{missing}, "
                             f"c{missing})")
        ns, cs, rs = [], [], []
        for i in range(1, k + 1):
            st = stages[i]
            for key in ("n", "c"):
                if key not in st:
                    raise InputError(f"{option} ({text!r}) lacks {key}{i}; write for example "
                                     "\"n1=50,c1=1,r1=4,n2=100,c2=3\"")
            ns.append(parse_count(st["n"], f"{option} n{i}", minimum=0 if i == 2 and k == 2
                                  else 1))
            cs.append(_count_or_none(st["c"], f"{option} c{i}", i < k))
            rs.append(parse_count(st["r"], f"{option} r{i}", minimum=1) if "r" in st else None)
    k = len(ns)
    if k < 2:
        raise InputError(f"{option} ({text!r}) gives one stage; a single plan is written "
                         "\"n=80,c=2\"")
    if head == "double" and k != 2:
        raise InputError(f"{option} ({text!r}): a double plan has 2 stages, not {k}; write "
                         "\"multiple: ...\" for more")
    if k == 2 and head != "multiple":
        if cs[0] is None:
            raise InputError(f"{option} c1 ({pairs.get('c1', '-')!r}) must be a whole number "
                             "for a double plan; write \"multiple: ...\" for a first stage "
                             "that cannot accept")
        if rs[1] is not None and rs[1] != cs[1] + 1:
            raise InputError(f"{option} r2 ({rs[1]}) must be c2 + 1 ({cs[1] + 1}): the second "
                             "sample decides")
        return DoublePlan(n1=ns[0], c1=cs[0], r1=rs[0], n2=ns[1], c2=cs[1])
    if rs is None:
        rs = [None] * k
    if any(v is None for v in rs[:-1]):
        i = next(j for j, v in enumerate(rs[:-1]) if v is None)
        raise InputError(f"{option} ({text!r}) lacks r{i + 1}, the rejection number of stage "
                         f"{i + 1}")
    return MultiplePlan(n=tuple(ns), c=tuple(cs), r=tuple(rs))


def _parse_double(pairs: dict, text: str, option: str):
    return _parse_staged(pairs, text, option)


def _parse_multiple(pairs: dict, text: str, option: str):
    return _parse_staged(pairs, text, option)


def max_asn(plan, model: str, scope: Scope, points: int = 201):
    """Largest ASN over the OC curve and the quality level where it occurs.

    A grid over the range where ``Pa`` falls from 1 to 0.001, refined by
    repeated finer grids around the grid maximum (whole lot counts under the
    hypergeometric model). For double plans under the binomial and
    Poisson models :func:`lotwise.families.double.double_max_asn` gives the
    closed form; this generic search agrees with it to the refinement
    tolerance.
    """
    from lotwise.analysis.plan_report import quality_level

    if isinstance(plan, DoublePlan):
        return double_max_asn(plan.n1, plan.c1, plan.r1, plan.n2, model, scope.lot_size)
    hi = quality_level(plan, 0.001, model, scope, "consumer")
    if not scope.defects:
        hi = min(1.0, 1.2 * hi + 1e-9)
    else:
        hi = 1.2 * hi + 1e-9
    if model == "hypergeometric":
        N = scope.lot_size
        dmax = int(min(N, math.ceil(hi * N)))
        ds = np.unique(np.linspace(0, dmax, min(points, dmax + 1)).round())
        vals = np.asarray(plan.asn(ds / N, model, scope))
        i = int(np.argmax(vals))
        lo_d = int(ds[max(i - 1, 0)])
        hi_d = int(ds[min(i + 1, len(ds) - 1)])
        fine = np.arange(lo_d, hi_d + 1, dtype=float)
        fv = np.asarray(plan.asn(fine / N, model, scope))
        j = int(np.argmax(fv))
        return float(fv[j]), float(fine[j] / N)
    ps = np.linspace(0.0, hi, points)
    vals = np.asarray(plan.asn(ps, model, scope))
    i = int(np.argmax(vals))
    best = (float(vals[i]), float(ps[i]))
    # Zoom: a fresh 101-point grid over the two cells around the maximum,
    # five times (each pass narrows the bracket 50-fold).
    a, b = ps[max(i - 1, 0)], ps[min(i + 1, points - 1)]
    for _ in range(6):
        xs = np.linspace(a, b, 101)
        v = np.asarray(plan.asn(xs, model, scope))
        j = int(np.argmax(v))
        if v[j] > best[0]:
            best = (float(v[j]), float(xs[j]))
        a, b = xs[max(j - 1, 0)], xs[min(j + 1, 100)]
        if b - a < 1e-12 * max(b, 1e-12):
            break
    return best


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


class _SingleStages(_Staged):
    def __init__(self, plan):
        self.sizes, self.acc, self.rej = (int(plan.n),), (int(plan.c),), (int(plan.c) + 1,)


def decide_single(plan, inspected: int, found: int, *, defects: bool = False) -> Decision:
    """:meth:`DoublePlan.decide` for a single plan ``(n, c)``: continue to
    ``n`` units unless the decision is already certain."""
    return _SingleStages(plan).decide(inspected, found, defects=defects)
