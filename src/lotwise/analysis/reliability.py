"""Confidence/reliability demonstrations: "C % confidence that at least R %
conform", sized for ``k`` failures allowed, and the reverse bound from a test
already run.

**Sizing.** The smallest number ``n`` of units to test, allowing at most
``k`` failures, such that a product *not* meeting the claim passes the test
with probability at most ``1 - C``:

* process (binomial, no lot size): the smallest ``n`` with
  ``P(X <= k | n, p = 1 - R) <= 1 - C``; every worse ``p`` passes even less
  often (``Pa`` falls in ``p``). With ``k = 0`` this is the familiar
  ``n >= ln(1 - C) / ln(R)``.
* finite lot of ``N`` (hypergeometric): the claim is about the ``N`` items
  of the lot. The convention here: every lot holding ``D >= D* =
  ceil((1 - R) N)`` nonconforming items, i.e. a nonconforming fraction of
  ``1 - R`` or worse, passes with probability at most ``1 - C``, so a pass
  demonstrates with confidence ``C`` that the lot holds fewer than
  ``(1 - R) N`` nonconforming items. (The boundary lot, exactly ``(1 - R) N``
  nonconforming, counts as one to catch, as ``p = 1 - R`` does for the
  process.) ``n = N`` is 100 % inspection; when ``D* <= k`` no test can
  tell, and the request is infeasible.

Searches are integer bisections on ``n`` (``Pa`` falls in ``n``).

**Reverse.** ``n`` tested, ``k`` failures found:

* process: the exact one-sided upper confidence bound of Clopper and
  Pearson [1]_, ``p_U = B^-1(C; k + 1, n - k)`` (the ``C`` quantile of a beta
  law), the largest ``p`` with ``P(X <= k | p) >= 1 - C``; closed forms at
  the edges: ``p_U = 1 - (1 - C)^(1/n)`` for ``k = 0`` and ``p_U = 1`` for
  ``k = n``. The reliability demonstrated at confidence ``C`` is ``1 - p_U``.
* finite lot: the exact hypergeometric bound on the count, ``D_U`` = the
  largest ``D`` with ``P(X <= k | N, n, D) > 1 - C`` (the lots not ruled out;
  the same inequality as the sizing, so a test sized above always
  demonstrates its claim when it passes). Reported as the fraction
  ``D_U / N`` and the count.

References
----------
.. [1] C. J. Clopper and E. S. Pearson, "The use of confidence or fiducial
   limits illustrated in the case of the binomial", *Biometrika* 26 (1934)
   404-413.
.. [2] G. J. Hahn and W. Q. Meeker, *Statistical Intervals*, Wiley, 1991,
   ch. 6 (binomial bounds and demonstration tests).

Examples
--------
A catheter maker must show 95 % confidence that at least 90 % of units meet
the burst-pressure requirement, allowing no failure; then one failure:

>>> demonstration_size(confidence=0.95, reliability=0.90).n
29
>>> demonstration_size(confidence=0.95, reliability=0.90, failures=1).n
46

After testing 59 units without a failure, the 95 % upper bound on the
nonconforming fraction:

>>> round(upper_bound(tested=59, failures=0, confidence=0.95).upper_bound, 4)
0.0495
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.quantities import InputError, Infeasible, format_pct

__all__ = ["Demonstration", "Bound", "demonstration_size", "upper_bound",
           "clopper_pearson_upper", "hypergeometric_upper_count", "SAFETY"]

_TOL = 1e-12

SAFETY = ("A passed test demonstrates the claim at the stated confidence only; it cannot "
          "guarantee that no nonconforming unit exists. Safety-critical characteristics need "
          "100 % inspection or stricter plans as contracts and regulations require; defer to "
          "your applicable standards and qualified quality professionals.")


def _check(confidence, reliability=None):
    if not 0 < confidence < 1:
        raise InputError(f"--confidence ({confidence}) must be a probability between 0 and 1, "
                         "exclusive")
    if reliability is not None and not 0 < reliability < 1:
        raise InputError(f"--reliability ({reliability}) must be a fraction between 0 and 1, "
                         "exclusive")


def clopper_pearson_upper(n: int, k: int, confidence: float) -> float:
    """Exact one-sided upper confidence bound on a binomial proportion.

    ``k`` failures in ``n`` trials; the bound ``p_U`` solves
    ``P(X <= k | n, p_U) = 1 - confidence``.
    """
    if n < 1:
        raise InputError(f"--tested ({n}) must be at least 1")
    if not 0 <= k <= n:
        raise InputError(f"--failures ({k}) must not be greater than --tested ({n})")
    _check(confidence)
    if k == n:
        return 1.0
    if k == 0:
        # 1 - (1 - C)^(1/n), without cancellation.
        return float(-math.expm1(math.log1p(-confidence) / n))
    return float(special.betaincinv(k + 1.0, n - k, confidence))


def hypergeometric_upper_count(n: int, k: int, N: int, confidence: float) -> int:
    """Exact upper confidence bound on the number of nonconforming items in a
    lot of ``N`` after ``k`` failures in a sample of ``n``: the largest ``D``
    with ``P(X <= k | N, n, D) > 1 - confidence``."""
    if not 1 <= n <= N:
        raise InputError(f"--tested ({n}) must be between 1 and the lot size ({N})")
    if not 0 <= k <= n:
        raise InputError(f"--failures ({k}) must not be greater than --tested ({n})")
    _check(confidence)
    level = 1.0 - confidence

    def kept(d):
        return float(oc.pa_hypergeometric(n, k, N, d)) > level + _TOL

    lo, hi = k, N - (n - k)  # D = k always passes (Pa = 1); the lot holds n - k good ones
    if kept(hi):
        return hi
    while hi - lo > 1:  # Pa falls in D: kept(lo) and not kept(hi)
        mid = (lo + hi) // 2
        if kept(mid):
            lo = mid
        else:
            hi = mid
    return lo


@dataclass(frozen=True, kw_only=True)
class Demonstration:
    """Result of :func:`demonstration_size`."""

    n: int
    failures: int
    confidence: float
    reliability: float
    lot_size: int | None
    model: str
    pass_probability: float
    worst_count: int | None = None
    full_inspection: bool = False

    def report(self) -> dict:
        out = {"n": self.n, "failures": self.failures, "confidence": self.confidence,
               "reliability": self.reliability, "lot_size": self.lot_size,
               "model": self.model,
               "pass_probability_at_limit": self.pass_probability,
               "full_inspection": self.full_inspection,
               "statements": self.statements()}
        if self.worst_count is not None:
            out["limit_count"] = self.worst_count
        return out

    def statements(self) -> list[str]:
        C, R, k = format_pct(self.confidence), format_pct(self.reliability), self.failures
        allowed = "no failure" if k == 0 else f"at most {k} failure{'s' if k > 1 else ''}"
        if self.lot_size is None:
            out = [f"Test {self.n} units, {allowed} allowed: a pass demonstrates with {C} "
                   f"confidence that at least {R} of the product conforms.",
                   f"A product only {R} conforming passes such a test "
                   f"{format_pct(self.pass_probability)} of the time (at most "
                   f"{format_pct(1 - self.confidence)})."]
        else:
            out = [f"Test {self.n} of the {self.lot_size} units, {allowed} allowed: a pass "
                   f"demonstrates with {C} confidence that fewer than {self.worst_count} units "
                   f"of the lot (1 - {R} of it) are nonconforming.",
                   f"A lot with {self.worst_count} nonconforming units passes "
                   f"{format_pct(self.pass_probability)} of the time (at most "
                   f"{format_pct(1 - self.confidence)}); lots with more pass less often."]
            if self.full_inspection:
                out.append("This is 100 % inspection: every unit of the lot is tested.")
        out.append(SAFETY)
        return out


def demonstration_size(*, confidence: float, reliability: float, failures: int = 0,
                       lot_size: int | None = None) -> Demonstration:
    """Smallest test demonstrating "confidence C that at least R conform".

    See the module notes for the finite-lot convention.

    Raises
    ------
    Infeasible
        For a lot so small that ``ceil((1 - R) N) <= failures``.
    """
    _check(confidence, reliability)
    if failures < 0:
        raise InputError(f"--failures ({failures}) must be at least 0")
    level = 1.0 - confidence
    q = 1.0 - reliability
    k = int(failures)
    if lot_size is None:
        def passes(n):
            return float(oc.pa_binomial(n, k, q))
        hi = max(k + 1, 1)
        while passes(hi) > level + _TOL:
            hi *= 2
            if hi > 10**15:
                raise Infeasible("no test up to 10^15 units demonstrates the claim", {})
        n = _smallest(passes, k, hi, level)
        return Demonstration(n=n, failures=k, confidence=confidence, reliability=reliability,
                             lot_size=None, model="binomial", pass_probability=passes(n))
    N = int(lot_size)
    if N < 1:
        raise InputError(f"--lot-size ({lot_size}) must be at least 1")
    dstar = oc.lot_count(q, N, "up")
    dstar = max(dstar, 1)
    if dstar <= k:
        raise Infeasible(
            f"in a lot of {N} the claim fails from {dstar} nonconforming unit(s) on, and with "
            f"{k} failure(s) allowed such a lot can always pass: allow fewer failures",
            {"limit_count": dstar, "failures_max": dstar - 1})

    def passes(n):
        return float(oc.pa_hypergeometric(n, k, N, dstar))

    n = _smallest(passes, k, N, level)  # n = N passes no lot with D* > k
    return Demonstration(n=n, failures=k, confidence=confidence, reliability=reliability,
                         lot_size=N, model="hypergeometric", pass_probability=passes(n),
                         worst_count=dstar, full_inspection=n >= N)


def _smallest(passes, lo, hi, level) -> int:
    """Smallest ``n`` in ``(lo, hi]`` with ``passes(n) <= level``; ``passes(hi)``
    must hold and ``n = lo`` (no more units than failures allowed) always
    passes."""
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if passes(mid) <= level + _TOL:
            hi = mid
        else:
            lo = mid
    return int(hi)


@dataclass(frozen=True, kw_only=True)
class Bound:
    """Result of :func:`upper_bound`."""

    tested: int
    failures: int
    confidence: float
    lot_size: int | None
    upper_bound: float
    upper_count: int | None = None
    reliability: float | None = None

    @property
    def reliability_demonstrated(self) -> float:
        return 1.0 - self.upper_bound

    @property
    def demonstrated(self) -> bool | None:
        """Whether the claimed reliability (if given) is demonstrated."""
        if self.reliability is None:
            return None
        if self.lot_size is None:
            return bool(self.upper_bound <= 1.0 - self.reliability + _TOL)
        return bool(self.upper_count < oc.lot_count(1.0 - self.reliability, self.lot_size,
                                                    "up"))

    def report(self) -> dict:
        out = {"upper_bound": self.upper_bound,
               "reliability_demonstrated": self.reliability_demonstrated,
               "confidence": self.confidence, "tested": self.tested,
               "failures": self.failures, "lot_size": self.lot_size,
               "model": "binomial" if self.lot_size is None else "hypergeometric",
               "method": ("Clopper-Pearson exact one-sided bound" if self.lot_size is None
                          else "exact hypergeometric bound on the count")}
        if self.upper_count is not None:
            out["upper_bound_count"] = self.upper_count
        if self.reliability is not None:
            out["reliability"] = self.reliability
            out["demonstrated"] = self.demonstrated
        out["statements"] = self.statements()
        return out

    def statements(self) -> list[str]:
        C = format_pct(self.confidence)
        k, n = self.failures, self.tested
        found = f"{k} failure{'s' if k != 1 else ''} in {n} units tested"
        if self.lot_size is None:
            out = [f"{found}: with {C} confidence the nonconforming fraction is at most "
                   f"{format_pct(self.upper_bound, 4)}, i.e. at least "
                   f"{format_pct(self.reliability_demonstrated, 4)} conform "
                   "(Clopper-Pearson, exact)."]
        else:
            out = [f"{found} of a lot of {self.lot_size}: with {C} confidence the lot holds at "
                   f"most {self.upper_count} nonconforming units ({format_pct(self.upper_bound, 4)}), "
                   f"i.e. at least {format_pct(self.reliability_demonstrated, 4)} conform "
                   "(exact hypergeometric bound)."]
        if self.reliability is not None:
            out.append(f"The claim of {format_pct(self.reliability)} reliability at {C} "
                       f"confidence is {'demonstrated' if self.demonstrated else 'NOT demonstrated'}.")
        out.append(SAFETY)
        return out


def upper_bound(*, tested: int, failures: int = 0, confidence: float,
                lot_size: int | None = None, reliability: float | None = None) -> Bound:
    """Exact one-sided upper bound on the nonconforming fraction after a test.

    With ``reliability`` the result also says whether that claim is
    demonstrated at ``confidence``.
    """
    _check(confidence, reliability)
    if lot_size is None:
        u = clopper_pearson_upper(tested, failures, confidence)
        return Bound(tested=tested, failures=failures, confidence=confidence, lot_size=None,
                     upper_bound=u, reliability=reliability)
    N = int(lot_size)
    if tested > N:
        raise InputError(f"--tested ({tested}) must not be greater than --lot-size ({N})")
    d = hypergeometric_upper_count(tested, failures, N, confidence)
    return Bound(tested=tested, failures=failures, confidence=confidence, lot_size=N,
                 upper_bound=d / N, upper_count=d, reliability=reliability)

