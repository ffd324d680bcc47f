"""Item-by-item sequential plans: Wald's SPRT for a fraction nonconforming.

Units are inspected one at a time. After ``n`` units holding ``d``
nonconforming items the lot is

* accepted when ``d <= -h1 + s n`` (on or below the acceptance line),
* rejected when ``d >= h2 + s n`` (on or above the rejection line),
* otherwise one more unit is inspected.

From the producer's point ``(p1, alpha)`` and the consumer's point
``(p2, beta)`` Wald's sequential probability ratio test [1]_ gives, with
``k = ln(p2 (1 - p1) / (p1 (1 - p2)))``,

``h1 = ln((1 - alpha) / beta) / k``, ``h2 = ln((1 - beta) / alpha) / k``,
``s = ln((1 - p1) / (1 - p2)) / k``.

For nonconformities per unit (Poisson counts) ``k = ln(l2 / l1)`` and
``s = (l2 - l1) / k``. The base of the logarithm cancels.

Acceptance and rejection numbers
--------------------------------
After ``n`` units the acceptance number is ``a_n = floor(s n - h1)`` and the
rejection number ``r_n = ceil(h2 + s n)``. Acceptance is impossible while
``a_n < 0``, i.e. before the acceptance line reaches 0 at ``n = h1 / s``;
rejection of items counted 0/1 is impossible while ``r_n > n``.

Truncation
----------
A plan on the bench must end. The plan truncated at ``n0`` follows the
lines up to ``n0 - 1`` units; a lot still undecided after the ``n0``-th unit
is **accepted if its count is at most the midpoint line**
``s n0 + (h2 - h1) / 2`` (halfway between the two lines) and rejected
otherwise. So at ``n0`` the acceptance number is
``floor(s n0 + (h2 - h1) / 2)`` and the rejection number one more. (The
midpoint rule treats the two risks alike; any count that has left the band
earlier was decided earlier.)

Exact OC and ASN
----------------
The exact acceptance probability and average sample number of the
truncated plan come from a dynamic program over (units inspected, count
found), :func:`lotwise.core.stages.unit_walk`: the probability of every count
among still-undecided lots is carried unit by unit, the mass at or below the
acceptance number accepted and at or above the rejection number rejected.
Only the band between the lines is stored (width about ``h1 + h2``), so a
plan truncated at 2,000 over 200 quality levels costs 2,000 small vector
steps. Units are Bernoulli(``p``) (binomial), drawn without replacement from
the lot (hypergeometric: the next unit is nonconforming with probability
``(D - d) / (N - m)``), or carry a Poisson(``p``) count (Poisson).

*Curtailed* ASN stops also when the truncation decision is already certain:
a count above the midpoint number can never be accepted, and a count that
stays within it even if every remaining unit is nonconforming will be.

Wald's approximations
---------------------
Neglecting the overshoot of the lines [1]_, with ``theta`` the nonzero root
of ``E exp(theta (X - s)) = 1`` (``p = (e^{theta s} - 1)/(e^theta - 1)`` for
items counted 0/1, ``p = theta s / (e^theta - 1)`` for Poisson counts)

``Pa(p) = (e^{theta h2} - 1) / (e^{theta h2} - e^{-theta h1})`` and
``ASN(p) = (h2 - (h1 + h2) Pa) / (p - s)``,

with ``Pa(s) = h2 / (h1 + h2)`` and ``ASN(s) = h1 h2 / (s (1 - s))`` (``h1 h2
/ s`` for Poisson counts). These equal ``1 - alpha`` and ``beta`` at ``p1``
and ``p2``; the exact plan's risks differ because a count is whole and the
lines are crossed with overshoot, and because of truncation.

References
----------
.. [1] A. Wald, *Sequential Analysis*, Wiley, 1947, ch. 3 and 5.
.. [2] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 15.4 (item-by-item sequential sampling).

Examples
--------
A buyer of relays wants AQL 1 % at alpha 5 % and RQL 6 % at beta 10 %:

>>> h1, h2, s = sprt_lines(0.01, 0.05, 0.06, 0.10)
>>> round(h1, 2), round(h2, 2), round(s, 4)
(1.22, 1.57, 0.0281)
>>> plan = SequentialPlan(h1=h1, h2=h2, s=s, truncate=300)
>>> plan.acceptance_number(44), plan.acceptance_number(43)
(0, -1)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from lotwise.core.search import check_lot, check_targets
from lotwise.core.stages import finish_shape, level_to_x, unit_walk
from lotwise.core.types import Scope, Targets, lot_targets
from lotwise.families.base import Decision, Family, Option, OptionKind, Plan, check_record
from lotwise.core import kernels as oc
from lotwise.core.quantities import (InputError, Infeasible, parse_count, parse_fraction, parse_level,
                                     parse_risk)
from lotwise.families.single import design_single

__all__ = ['sprt_lines', 'SequentialPlan', 'wald_pa', 'wald_asn', 'wald_theta', 'SequentialDesign', 'design_sequential', 'TRUNCATE_FACTOR']


_EPS = 1e-9  # a line value within this of a whole number counts as that number


def sprt_lines(p1: float, alpha: float, p2: float, beta: float, *, defects: bool = False):
    """``(h1, h2, s)`` of Wald's SPRT for ``p1 < p2`` and risks ``alpha``, ``beta``.

    ``defects=True`` gives the lines for nonconformities per unit (Poisson).
    """
    for name, v in (("alpha", alpha), ("beta", beta)):
        if not 0 < v < 1:
            raise InputError(f"{name} ({v}) must be a probability between 0 and 1, exclusive")
    if not alpha + beta < 1:
        raise InputError(f"alpha + beta ({alpha} + {beta}) must be below 1")
    if not 0 < p1 < p2:
        raise InputError(f"the RQL ({p2}) must be above the AQL ({p1}), both positive")
    if not defects and not p2 < 1:
        raise InputError(f"the RQL ({p2}) must be below 1 for a fraction nonconforming")
    if defects:
        k = math.log(p2 / p1)
        s = (p2 - p1) / k
    else:
        k = math.log(p2 * (1.0 - p1) / (p1 * (1.0 - p2)))
        s = math.log((1.0 - p1) / (1.0 - p2)) / k
    h1 = math.log((1.0 - alpha) / beta) / k
    h2 = math.log((1.0 - beta) / alpha) / k
    return h1, h2, s


# --- Wald's approximations --------------------------------------------------

def _p_of_theta(theta, s, defects):
    t = np.asarray(theta, dtype=float)
    with np.errstate(all="ignore"):
        pos = t > 0
        tp = np.where(pos, t, 1.0)
        tn = np.where(pos, -1.0, np.where(t < 0, t, -1.0))
        if defects:
            up = tp * s * np.exp(-tp) / (-np.expm1(-tp))
            dn = tn * s / np.expm1(tn)
        else:
            up = np.exp(-tp * (1.0 - s)) * (-np.expm1(-tp * s)) / (-np.expm1(-tp))
            dn = np.expm1(tn * s) / np.expm1(tn)
        return np.where(pos, up, np.where(t < 0, dn, s))


def wald_theta(p, s: float, defects: bool = False):
    """The nonzero root ``theta`` of ``E exp(theta (X - s)) = 1`` at level ``p``
    (``+inf`` at ``p = 0``, ``-inf`` at ``p = 1`` for 0/1 items); bisection on
    the decreasing map ``theta -> p``."""
    p = np.atleast_1d(np.asarray(p, dtype=float))
    lo = np.full(p.shape, -1.0)
    hi = np.full(p.shape, 1.0)
    for _ in range(80):
        grow = _p_of_theta(hi, s, defects) > p
        if not grow.any():
            break
        hi = np.where(grow, hi * 2.0, hi)
    for _ in range(80):
        grow = _p_of_theta(lo, s, defects) < p
        if not grow.any():
            break
        lo = np.where(grow, lo * 2.0, lo)
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        big = _p_of_theta(mid, s, defects) > p
        lo = np.where(big, mid, lo)
        hi = np.where(big, hi, mid)
        if np.all(hi - lo <= 1e-15 * np.maximum(np.abs(hi), 1e-300)):
            break
    theta = 0.5 * (lo + hi)
    theta = np.where(p <= 0, np.inf, theta)
    if not defects:
        theta = np.where(p >= 1, -np.inf, theta)
    theta = np.where(p == s, 0.0, theta)
    return theta


def _pa_of_theta(theta, h1, h2):
    t = np.asarray(theta, dtype=float)
    with np.errstate(all="ignore"):
        pos = t > 0
        tp = np.where(pos, t, 1.0)
        tn = np.where(t < 0, t, -1.0)
        up = -np.expm1(-tp * h2) / (-np.expm1(-tp * (h1 + h2)))
        dn = np.exp(tn * h1) * (-np.expm1(tn * h2)) / (-np.expm1(tn * (h1 + h2)))
        out = np.where(pos, up, np.where(t < 0, dn, h2 / (h1 + h2)))
        out = np.where(np.isposinf(t), 1.0, out)
        out = np.where(np.isneginf(t), 0.0, out)
    return np.clip(out, 0.0, 1.0)


def wald_pa(p, h1: float, h2: float, s: float, defects: bool = False):
    """Wald's approximate OC of the untruncated SPRT with lines ``h1, h2, s``."""
    shape = np.shape(p)
    out = _pa_of_theta(wald_theta(p, s, defects), h1, h2)
    return finish_shape(out, shape)


def wald_asn(p, h1: float, h2: float, s: float, defects: bool = False):
    """Wald's approximate ASN of the untruncated SPRT."""
    shape = np.shape(p)
    pp = np.atleast_1d(np.asarray(p, dtype=float))
    pa = _pa_of_theta(wald_theta(pp, s, defects), h1, h2)
    var_s = s if defects else s * (1.0 - s)
    with np.errstate(all="ignore"):
        out = (h2 - (h1 + h2) * pa) / (pp - s)
        near = np.abs(pp - s) <= 1e-7 * s
        out = np.where(near, h1 * h2 / var_s, out)
    return finish_shape(out, shape)


# --- the plan ---------------------------------------------------------------

def _floor(x: float) -> int:
    return int(math.floor(x + _EPS))


def _ceil(x: float) -> int:
    return int(math.ceil(x - _EPS))


@dataclass(frozen=True, kw_only=True)
class SequentialPlan(Plan):
    """Wald's item-by-item sequential plan truncated at ``truncate`` units.

    Parameters
    ----------
    h1, h2 : float
        Intercepts of the acceptance line ``d = -h1 + s n`` and the
        rejection line ``d = h2 + s n`` (both positive).
    s : float
        Common slope (``0 < s < 1`` for a fraction nonconforming).
    truncate : int
        Largest number of units inspected; see the module notes for how the
        last unit decides.
    """

    h1: float
    h2: float
    s: float
    truncate: int

    scheme = "sequential"

    def __post_init__(self):
        for name in ("h1", "h2", "s"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, (int, float, np.floating, np.integer)) \
                    or not math.isfinite(v) or not v > 0:
                raise InputError(f"{name} ({v!r}) must be a positive number")
            object.__setattr__(self, name, float(v))
        t = self.truncate
        if isinstance(t, bool) or not isinstance(t, (int, np.integer)) or t < 1:
            raise InputError(f"truncate ({t!r}) must be a whole number of at least 1")
        object.__setattr__(self, "truncate", int(t))

    # numbers ----------------------------------------------------------------
    @property
    def midpoint(self) -> float:
        """The midpoint line at the truncation point, ``s n0 + (h2 - h1)/2``."""
        return self.s * self.truncate + 0.5 * (self.h2 - self.h1)

    def acceptance_number(self, n: int) -> int:
        """Accept after ``n`` units on a count at most this (negative: impossible)."""
        if n == self.truncate:
            return _floor(self.midpoint)
        return _floor(self.s * n - self.h1)

    def rejection_number(self, n: int) -> int:
        """Reject after ``n`` units on a count at least this."""
        if n == self.truncate:
            return _floor(self.midpoint) + 1
        return _ceil(self.s * n + self.h2)

    def numbers(self):
        """``(n, acceptance, rejection)`` arrays for ``n = 1 .. truncate``."""
        n0 = self.truncate
        ns = np.arange(1, n0 + 1)
        a = np.floor(self.s * ns - self.h1 + _EPS).astype(np.int64)
        r = np.ceil(self.s * ns + self.h2 - _EPS).astype(np.int64)
        a[-1] = _floor(self.midpoint)
        r[-1] = a[-1] + 1
        return ns, a, r

    @property
    def first_acceptance(self) -> int:
        """Fewest units after which a lot can be accepted (all conforming)."""
        return next((n for n in range(1, self.truncate + 1) if self.acceptance_number(n) >= 0),
                    self.truncate)

    @property
    def label(self) -> str:
        return (f"h1={self.h1:.4g}, h2={self.h2:.4g}, s={self.s:.4g}, "
                f"truncate={self.truncate}")

    varying_sample = True
    has_curtailment = True

    @property
    def max_sample(self) -> int:
        return int(self.truncate)

    def describe(self) -> list[str]:
        return [f"plan      item by item: accept when d <= -{self.h1:.4g} + {self.s:.4g} n, "
                f"reject when d >= {self.h2:.4g} + {self.s:.4g} n;",
                f"          truncated at n = {self.truncate} (a lot still undecided then is "
                "accepted if its count is at most the midpoint line s*n0 + (h2 - h1)/2 = "
                f"{self.midpoint:.4g}, rejected otherwise)"]

    def notation(self) -> str:
        return (f"sequential: h1={self.h1!r},h2={self.h2!r},s={self.s!r},"
                f"truncate={self.truncate}")

    @property
    def n_max(self) -> int:
        return self.truncate

    def to_dict(self) -> dict:
        return {"scheme": "sequential", "h1": self.h1, "h2": self.h2, "s": self.s,
                "truncate": self.truncate}

    # exact evaluation -------------------------------------------------------
    def _bounds(self, curtailed: bool = False, early_accept: bool = True):
        _, a, r = self.numbers()
        acc = np.concatenate([[-1], a])
        rej = np.concatenate([[1 << 40], r])
        if curtailed:
            top = int(a[-1])
            ms = np.arange(0, self.truncate + 1)
            rej = np.minimum(rej, top + 1)
            if early_accept:
                acc = np.maximum(acc, top - (self.truncate - ms))
            acc[0] = -1
        return acc, rej

    def _walk(self, p, model, scope, rounding, curtailed=False):
        x = level_to_x(p, model, scope, rounding, self.truncate)
        early = model != "poisson" and not scope.defects
        acc, rej = self._bounds(curtailed, early)
        return unit_walk(acc, rej, model, np.atleast_1d(x), scope.lot_size)

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Exact acceptance probability of the truncated plan."""
        return finish_shape(self._walk(p, model, scope, rounding).pa, np.shape(p))

    def pa_count(self, d, scope: Scope):
        x = np.atleast_1d(np.asarray(d, dtype=float))
        acc, rej = self._bounds()
        res = unit_walk(acc, rej, "hypergeometric", x, scope.lot_size)
        return finish_shape(res.pa, np.shape(d))

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Exact average sample number of the truncated plan."""
        return finish_shape(self._walk(p, model, scope, rounding).asn, np.shape(p))

    def asn_curtailed(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Exact ASN when the truncation decision is also taken as soon as it
        is certain."""
        return finish_shape(self._walk(p, model, scope, rounding, curtailed=True).asn, np.shape(p))

    def oc_asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """``(Pa, ASN)`` from one pass of the dynamic program."""
        res = self._walk(p, model, scope, rounding)
        return finish_shape(res.pa, np.shape(p)), finish_shape(res.asn, np.shape(p))

    def aoq(self, p, model: str, scope: Scope, *, formula: str = "screened",
            rounding: str = "nearest"):
        """Average outgoing quality under rectifying inspection (lot size known):
        exact, from the walk's expected nonconforming items left in accepted
        lots (``formula='simple'``: ``p Pa``)."""
        if formula != "screened" or not scope.lot_size:
            return super().aoq(p, model, scope, formula=formula, rounding=rounding)
        res = self._walk(p, model, scope, rounding)
        return finish_shape(res.left_in_accepted / scope.lot_size, np.shape(p))

    def aoq_count(self, d, scope: Scope, *, formula: str = "screened"):
        if formula != "screened":
            return super().aoq_count(d, scope, formula=formula)
        d = np.asarray(d, dtype=float)
        if formula != "screened":  # p Pa: the generic form (no walk of the lot needed)
            return super().aoq_count(d, scope, formula=formula)
        return self.aoq(d / float(scope.lot_size), "hypergeometric", scope, formula=formula)

    def ati_count(self, d, scope: Scope):
        d = np.asarray(d, dtype=float)
        return self.ati(d / float(scope.lot_size), "hypergeometric", scope)

    def ati(self, p, model: str, scope: Scope, *, rounding: str = "nearest"):
        """Average total inspection per lot (rejected lots inspected in full)."""
        if not scope.lot_size:
            raise InputError("AOQ and ATI need a lot size (--lot-size)")
        res = self._walk(p, model, scope, rounding)
        return finish_shape(res.accepted_units + scope.lot_size * (1.0 - res.pa), np.shape(p))

    # Wald ------------------------------------------------------------------
    def wald_pa(self, p, defects: bool = False):
        """Wald's approximate OC of the untruncated test with these lines."""
        return wald_pa(p, self.h1, self.h2, self.s, defects)

    def wald_asn(self, p, defects: bool = False):
        """Wald's approximate ASN of the untruncated test with these lines."""
        return wald_asn(p, self.h1, self.h2, self.s, defects)

    # on the bench ----------------------------------------------------------
    def decide(self, inspected: int, found: int, *, defects: bool = False) -> Decision:
        """Accept, reject or continue after ``inspected`` units with ``found``."""
        check_record(inspected, found, self.truncate, defects)
        n0 = self.truncate
        n, d = inspected, found
        if n >= 1:
            a, r = self.acceptance_number(n), self.rejection_number(n)
            where = "the truncation point" if n == n0 else f"n = {n}"
            if d <= a:
                rule = (f"at {where} a count of at most {a} accepts"
                        + (" (the midpoint line " f"{self.midpoint:.4g})" if n == n0 else
                           f" (acceptance line {self.s * n - self.h1:.4g})"))
                return Decision(action="accept", inspected=n, found=d, stage=None,
                                next_decision_at=None, more_to_next=0, more_at_most=0,
                                accept_number=a, reject_number=r, reason=rule)
            if d >= r:
                rule = (f"at {where} a count of {r} or more rejects"
                        + (f" (above the midpoint line {self.midpoint:.4g})" if n == n0 else
                           f" (rejection line {self.s * n + self.h2:.4g})"))
                return Decision(action="reject", inspected=n, found=d, stage=None,
                                next_decision_at=None, more_to_next=0, more_at_most=0,
                                accept_number=a, reject_number=r, reason=rule)
        # Continue: when could the next decision come at the earliest?
        m_acc = next((m for m in range(n + 1, n0 + 1) if self.acceptance_number(m) >= d), None)
        if defects:  # one unit may carry any number of nonconformities
            m_rej = n + 1
        else:
            m_rej = next((m for m in range(n + 1, n0 + 1)
                          if d + (m - n) >= self.rejection_number(m)), None)
        nxt = min(v for v in (m_acc, m_rej, n0) if v is not None)
        a1, r1 = self.acceptance_number(n + 1), self.rejection_number(n + 1)
        acc_txt = ("acceptance is possible after " f"{m_acc - n} more conforming unit(s)"
                   if m_acc is not None else "acceptance is no longer possible")
        then = (f"accept then on at most {a1}, reject on {r1}" if a1 >= 0 else
                f"no acceptance yet at n = {n + 1}, reject on {r1}")
        return Decision(action="continue", inspected=n, found=d, stage=None,
                        next_decision_at=n + 1, more_to_next=1, more_at_most=n0 - n,
                        accept_number=a1 if a1 >= 0 else None, reject_number=r1,
                        reason=(f"{d} lies between the lines at n = {n}: inspect the next unit "
                                f"({then}); {acc_txt}; at most {n0 - n} more "
                                f"unit(s) to the truncation point {n0}; the earliest "
                                f"decision comes after {nxt - n} unit(s)"))


def parse_sequential(pairs: dict, text: str, option: str) -> SequentialPlan:
    """``sequential: h1=1.22,h2=1.57,s=0.0281,truncate=300`` or
    ``sequential: p1=1%,alpha=5%,p2=6%,beta=10%,truncate=300`` (lines for a
    fraction nonconforming)."""
    keys = set(pairs)
    lines = {"h1", "h2", "s"}
    risks = {"p1", "p2", "alpha", "beta"}
    allowed = lines | risks | {"truncate"}
    bad = sorted(keys - allowed)
    example = "\"sequential: h1=1.22,h2=1.57,s=0.0281,truncate=300\""
    if bad:
        raise InputError(f"{option} ({text!r}): unknown key {bad[0]!r}; a sequential plan takes "
                         f"h1, h2, s and truncate (or p1, alpha, p2, beta), e.g. {example}")
    if "truncate" not in pairs:
        raise InputError(f"{option} ({text!r}) lacks truncate, the largest number of units to "
                         f"inspect; write for example {example}")
    t = parse_count(pairs["truncate"], f"{option} truncate", minimum=1, maximum=10_000_000)
    if keys & lines:
        if keys & risks:
            raise InputError(f"{option} ({text!r}): give either h1, h2, s or p1, alpha, p2, "
                             "beta, not both")
        for key in ("h1", "h2", "s"):
            if key not in pairs:
                raise InputError(f"{option} ({text!r}) lacks {key}; write for example {example}")
        vals = {}
        for key in ("h1", "h2", "s"):
            v = parse_fraction(pairs[key], f"{option} {key}")
            if not v > 0:
                raise InputError(f"{option} {key} ({pairs[key]}) must be a positive number")
            vals[key] = v
        return SequentialPlan(h1=vals["h1"], h2=vals["h2"], s=vals["s"], truncate=t)
    for key in ("p1", "p2"):
        if key not in pairs:
            raise InputError(f"{option} ({text!r}) lacks {key}; write for example {example} or "
                             "\"sequential: p1=1%,p2=6%,truncate=300\"")
    p1 = parse_level(pairs["p1"], f"{option} p1")
    p2 = parse_level(pairs["p2"], f"{option} p2")
    al = parse_risk(pairs.get("alpha", "5%"), f"{option} alpha")
    be = parse_risk(pairs.get("beta", "10%"), f"{option} beta")
    if not p2 > p1:
        raise InputError(f"{option} p2 ({pairs['p2']}) must be above p1 ({pairs['p1']})")
    if not al + be < 1:
        raise InputError(f"{option} alpha + beta ({al} + {be}) must be below 1")
    h1, h2, s = sprt_lines(p1, al, p2, be)
    return SequentialPlan(h1=h1, h2=h2, s=s, truncate=t)


# --- design ------------------------------------------------------------

TRUNCATE_FACTOR = 3


@dataclass(frozen=True, kw_only=True)
class SequentialDesign:
    """Result of :func:`design_sequential`.

    Attributes
    ----------
    plan : SequentialPlan
    model, scope, targets
    wald : dict
        ``pa_aql, pa_rql, asn_aql, asn_rql`` from Wald's approximations.
    exact : dict
        The same for the truncated plan, exactly, plus ``alpha``, ``beta``,
        ``meets`` and the curtailed ASN.
    truncate_source : str
        ``"given"`` or how the default was found.
    single_n : int or None
        Sample size of the single plan for the same risks.
    """

    plan: SequentialPlan
    model: str
    scope: Scope
    targets: Targets
    wald: dict
    exact: dict
    truncate_source: str
    single_n: int | None = None

    def numbers(self) -> dict:
        """Acceptance and rejection numbers for each n (``None`` where impossible)."""
        ns, a, r = self.plan.numbers()
        per_unit = self.scope.defects
        return {"n": [int(v) for v in ns],
                "accept": [int(v) if v >= 0 else None for v in a],
                "reject": [int(rv) if (per_unit or rv <= n) else None for n, rv in zip(ns, r)]}

    def report_extra(self) -> dict:
        return {"feasible": True, "h1": self.plan.h1, "h2": self.plan.h2, "s": self.plan.s,
                "truncate": self.plan.truncate, "truncate_source": self.truncate_source,
                "single_n": self.single_n, "wald": self.wald, "exact": self.exact,
                "numbers": self.numbers()}


def design_sequential(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                      lot_size: int | None = None, model: str | None = None,
                      defects: bool = False, truncate: int | None = None) -> SequentialDesign:
    """Wald's sequential plan for the two risk points, truncated and evaluated exactly.

    Raises
    ------
    Infeasible
        When the risk points are out of order or the lot cannot tell them apart.
    InputError
        For a truncation point beyond the lot size or below 1.
    """
    scope = Scope(lot_size=lot_size, defects=defects)
    model = scope.check_model(model)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    check_targets(targets, defects)
    if model == "hypergeometric":
        check_lot(targets, lot_size, lot_targets(targets, lot_size))
    h1, h2, s = sprt_lines(aql, alpha, rql, beta, defects=defects)
    single_n = None
    try:
        single_n = design_single(aql=aql, rql=rql, alpha=alpha, beta=beta, lot_size=lot_size,
                                 model=model, defects=defects).n
    except Infeasible:
        single_n = None
    if truncate is not None:
        if isinstance(truncate, bool) or not isinstance(truncate, int) or truncate < 1:
            raise InputError(f"--truncate ({truncate}) must be a whole number of at least 1")
        if lot_size is not None and truncate > lot_size:
            raise InputError(f"--truncate ({truncate}) must not be greater than the lot size "
                             f"({lot_size})")
        source = "given"
    else:
        if single_n is None:
            if lot_size is None:
                raise Infeasible("no single plan meets the risks, so there is no default "
                                 "truncation point; give --truncate")
            truncate, source = lot_size, "the lot size (no single plan meets the risks)"
        else:
            truncate = TRUNCATE_FACTOR * single_n
            source = f"{TRUNCATE_FACTOR} x the single plan's n = {single_n}"
            if lot_size is not None and truncate > lot_size:
                truncate, source = lot_size, source + ", capped at the lot size"
    plan = SequentialPlan(h1=h1, h2=h2, s=s, truncate=int(truncate))
    wald = {"pa_aql": float(plan.wald_pa(aql, defects)),
            "pa_rql": float(plan.wald_pa(rql, defects)),
            "asn_aql": float(plan.wald_asn(aql, defects)),
            "asn_rql": float(plan.wald_asn(rql, defects))}
    if model == "hypergeometric":
        d1, d2 = (oc.lot_count(aql, lot_size, "up"), oc.lot_count(rql, lot_size, "down"))
        la, lr = d1 / lot_size, d2 / lot_size
    else:
        la, lr = aql, rql
    pa, asn = plan.oc_asn([la, lr], model, scope)
    cur = plan.asn_curtailed([la, lr], model, scope)
    tol = 1e-12
    exact = {"pa_aql": float(pa[0]), "pa_rql": float(pa[1]),
             "asn_aql": float(asn[0]), "asn_rql": float(asn[1]),
             "asn_curtailed_aql": float(cur[0]), "asn_curtailed_rql": float(cur[1]),
             "alpha": 1.0 - float(pa[0]), "beta": float(pa[1]), "model": model,
             "meets": bool(1.0 - pa[0] <= alpha + tol and pa[1] <= beta + tol)}
    return SequentialDesign(plan=plan, model=model, scope=scope, targets=targets, wald=wald,
                            exact=exact, truncate_source=source, single_n=single_n)


def report_extras(plan, targets, scope: Scope, model: str, report: dict) -> dict:
    """Wald's approximations beside the exact truncated plan, and the truncation rule."""
    per_unit = scope.defects
    w = {"pa_aql": float(plan.wald_pa(targets.aql, per_unit)),
         "pa_rql": float(plan.wald_pa(targets.rql, per_unit)),
         "asn_aql": float(plan.wald_asn(targets.aql, per_unit)),
         "asn_rql": float(plan.wald_asn(targets.rql, per_unit))}
    m, a = report["models"][model], report["asn"]
    return {
        "wald": w,
        "truncation_rule": ("a lot still undecided after the last unit is accepted if its "
                            "count is at most the midpoint line s*n0 + (h2 - h1)/2 "
                            f"= {plan.midpoint:.4g}, rejected otherwise"),
        "statements": [
            f"Wald's approximations (untruncated test, no overshoot) say Pa {w['pa_aql']:.4f} "
            f"at the AQL and {w['pa_rql']:.4f} at the RQL, ASN {w['asn_aql']:.1f} and "
            f"{w['asn_rql']:.1f}; the exact truncated plan gives {m['pa_aql']:.4f}, "
            f"{m['pa_rql']:.4f}, {a['aql']:.1f} and {a['rql']:.1f}."],
    }


def oc_columns(plan, ps, model: str, scope: Scope) -> dict:
    """Wald's approximate OC and ASN beside the exact truncated plan."""
    return {"wald_pa": plan.wald_pa(ps, scope.defects), "wald_asn": plan.wald_asn(ps, scope.defects)}


FAMILY = Family(
    name="sequential", plan_class=SequentialPlan, parse=parse_sequential, keys_hint=("h1",),
    extras=report_extras, oc_columns=oc_columns,
    design=design_sequential,
    design_options={"truncate": "largest number of units before a forced decision"},
    option_types={"truncate": Option(kind=OptionKind.WHOLE, minimum=1)},
    description="item-by-item sequential sampling (Wald's SPRT), truncated",
)
