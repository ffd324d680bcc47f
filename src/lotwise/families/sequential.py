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
from dataclasses import dataclass, field

import numpy as np

from lotwise.core.search import check_lot, check_targets
from lotwise.core.stages import (NO_REJECTION, WALK_EPS, WalkResult, finish_shape,
                                  level_to_x, unit_walk, walk_band)
from lotwise.core.types import Scope, Targets, lot_targets
from lotwise.families.base import Decision, Family, Option, OptionKind, Plan, check_record
from lotwise.core import kernels as oc
from lotwise.core.quantities import (InputError, Infeasible, format_pct, parse_count,
                                     parse_fraction, parse_level, parse_risk)
from lotwise.families.single import design_single

__all__ = ['sprt_lines', 'SequentialPlan', 'wald_pa', 'wald_asn', 'wald_theta', 'SequentialDesign', 'design_sequential', 'TRUNCATE_FACTOR', 'clear_cache']


_EPS = 1e-9  # a line value within this of a whole number counts as that number


def sprt_lines(p1: float, alpha: float, p2: float, beta: float, *, per_unit: bool = False):
    """``(h1, h2, s)`` of Wald's SPRT for ``p1 < p2`` and risks ``alpha``, ``beta``.

    ``per_unit=True`` gives the lines for nonconformities per unit (Poisson).
    """
    for name, v in (("alpha", alpha), ("beta", beta)):
        if not 0 < v < 1:
            raise InputError(f"{name} ({v}) must be a probability between 0 and 1, exclusive")
    if not alpha + beta < 1:
        raise InputError(f"alpha + beta ({alpha} + {beta}) must be below 1")
    if not 0 < p1 < p2:
        raise InputError(f"the RQL ({p2}) must be above the AQL ({p1}), both positive")
    if not per_unit and not p2 < 1:
        raise InputError(f"the RQL ({p2}) must be below 1 for a fraction nonconforming")
    if per_unit:
        k = math.log(p2 / p1)
        s = (p2 - p1) / k
    else:
        k = math.log(p2 * (1.0 - p1) / (p1 * (1.0 - p2)))
        s = math.log((1.0 - p1) / (1.0 - p2)) / k
    h1 = math.log((1.0 - alpha) / beta) / k
    h2 = math.log((1.0 - beta) / alpha) / k
    return h1, h2, s


# --- Wald's approximations --------------------------------------------------

def _p_of_theta(theta, s, per_unit):
    t = np.asarray(theta, dtype=float)
    with np.errstate(all="ignore"):
        pos = t > 0
        tp = np.where(pos, t, 1.0)
        tn = np.where(pos, -1.0, np.where(t < 0, t, -1.0))
        if per_unit:
            up = tp * s * np.exp(-tp) / (-np.expm1(-tp))
            dn = tn * s / np.expm1(tn)
        else:
            up = np.exp(-tp * (1.0 - s)) * (-np.expm1(-tp * s)) / (-np.expm1(-tp))
            dn = np.expm1(tn * s) / np.expm1(tn)
        return np.where(pos, up, np.where(t < 0, dn, s))


def wald_theta(p, s: float, per_unit: bool = False):
    """The nonzero root ``theta`` of ``E exp(theta (X - s)) = 1`` at level ``p``
    (``+inf`` at ``p = 0``, ``-inf`` at ``p = 1`` for 0/1 items); bisection on
    the decreasing map ``theta -> p``. The roots at a few levels are
    remembered (a report asks for Wald's OC and ASN at the AQL and RQL of the
    same plan several times)."""
    p = np.atleast_1d(np.asarray(p, dtype=float))
    if p.size > 8:
        return _wald_theta(p, s, per_unit)
    key = (p.tobytes(), p.shape, float(s), bool(per_unit))
    known = _THETAS.get(key)
    if known is None:
        known = _keep(_THETAS, key, _wald_theta(p, s, per_unit))
    return known.copy()


_THETAS: dict = {}


def _wald_theta(p, s: float, per_unit: bool):
    lo = np.full(p.shape, -1.0)
    hi = np.full(p.shape, 1.0)
    for _ in range(80):
        grow = _p_of_theta(hi, s, per_unit) > p
        if not grow.any():
            break
        hi = np.where(grow, hi * 2.0, hi)
    for _ in range(80):
        grow = _p_of_theta(lo, s, per_unit) < p
        if not grow.any():
            break
        lo = np.where(grow, lo * 2.0, lo)
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        big = _p_of_theta(mid, s, per_unit) > p
        lo = np.where(big, mid, lo)
        hi = np.where(big, hi, mid)
        if np.all(hi - lo <= 1e-15 * np.maximum(np.abs(hi), 1e-300)):
            break
    theta = 0.5 * (lo + hi)
    theta = np.where(p <= 0, np.inf, theta)
    if not per_unit:
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


def wald_pa(p, h1: float, h2: float, s: float, per_unit: bool = False):
    """Wald's approximate OC of the untruncated SPRT with lines ``h1, h2, s``."""
    shape = np.shape(p)
    out = _pa_of_theta(wald_theta(p, s, per_unit), h1, h2)
    return finish_shape(out, shape)


def wald_asn(p, h1: float, h2: float, s: float, per_unit: bool = False):
    """Wald's approximate ASN of the untruncated SPRT."""
    shape = np.shape(p)
    pp = np.atleast_1d(np.asarray(p, dtype=float))
    pa = _pa_of_theta(wald_theta(pp, s, per_unit), h1, h2)
    var_s = s if per_unit else s * (1.0 - s)
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
    #: How the plan was written when its lines came from the risk points:
    #: ``(p1, alpha, p2, beta, per_unit)``; ``per_unit`` None when the notation
    #: left it to the scope (see :meth:`for_scope`). Not part of equality.
    spec: tuple | None = field(default=None, compare=False, repr=False)

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

    @classmethod
    def from_risks(cls, p1, alpha, p2, beta, *, truncate: int, per_unit: bool | None):
        """The plan with Wald's lines for ``(p1, alpha)`` and ``(p2, beta)``:
        binomial lines for a fraction nonconforming, Poisson lines per unit
        (``per_unit`` None: items until :meth:`for_scope` says otherwise)."""
        h1, h2, s = sprt_lines(p1, alpha, p2, beta, per_unit=bool(per_unit))
        return cls(h1=h1, h2=h2, s=s, truncate=truncate, spec=(p1, alpha, p2, beta, per_unit))

    def for_scope(self, scope: Scope) -> "SequentialPlan":
        """The plan as meant in ``scope``: a plan written with ``p1, p2``
        and no ``per_unit`` key gets the Poisson lines when counting
        nonconformities per unit; a plan that said ``per_unit`` must match
        the scope (:meth:`check_scope`)."""
        self.check_scope(scope)
        if self.spec is None or self.spec[4] is not None or not scope.per_unit:
            return self
        p1, alpha, p2, beta, _ = self.spec
        return SequentialPlan.from_risks(p1, alpha, p2, beta, truncate=self.truncate,
                                         per_unit=True)

    def check_scope(self, scope: Scope) -> None:
        """Refuse a plan whose ``per_unit`` key disagrees with the scope."""
        super().check_scope(scope)
        if self.spec is not None and self.spec[4] is not None and \
                bool(self.spec[4]) != bool(scope.per_unit):
            said = "per_unit=1 (nonconformities per unit)" if self.spec[4] else \
                "per_unit=0 (nonconforming items)"
            want = "add --per-unit" if self.spec[4] else "drop --per-unit"
            raise InputError(f"--plan ({self.notation()}) says {said}: its lines are for that "
                             f"count; {want} or change the key")

    @property
    def never_accepts(self) -> bool:
        """True when no count can ever be accepted: the acceptance number is
        negative at every ``n`` up to the truncation point (the midpoint line
        there is below 0), so every lot is rejected and ``Pa = 0``."""
        return _floor(self.midpoint) < 0

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

    def widest_band(self) -> int:
        """The most counts undecided after any unit (see :func:`walk_band`)."""
        _, a, r = self.numbers()
        return int(walk_band(np.concatenate([[-1], a]),
                             np.concatenate([[NO_REJECTION], r])).max(initial=0))

    def walk_seconds(self, levels: int = 127) -> float:
        """Estimated seconds of one exact walk of this plan over ``levels``
        quality levels on one core.

        A walk costs about 5 microseconds per unit plus 2 nanoseconds per
        undecided count and level (measured on the project machine, binomial
        walks of 127 levels, 2026-12-03). It runs to the truncation point or
        until the undecided probability is below :data:`WALK_EPS` at every
        level, whichever comes first; the slowest level is the one where the
        walk has no drift (near the slope ``s``), where the count moves like a
        random walk of variance ``s(1 - s)`` per unit between lines ``h1 + h2``
        apart, so the undecided probability falls like
        ``exp(-pi^2 s (1 - s) m / (2 (h1 + h2)^2))`` and the walk takes about
        ``2 (h1 + h2)^2 ln(1/eps) / (pi^2 s (1 - s))`` units (taken 1.5 times
        over: the lines are further apart than ``h1 + h2`` by the rounding of
        the numbers).
        """
        width = self.h1 + self.h2
        units = self.walk_units(1.5)
        band = min(width + 2.0, float(self.truncate))
        return units * (5e-6 + 2e-9 * band * max(int(levels), 1))

    def walk_units(self, margin: float = 1.0) -> float:
        """Units an exact walk goes through before every level is decided to
        within :data:`WALK_EPS`: the truncation point, or ``margin`` times the
        drift-free length of :meth:`walk_seconds`, whichever is smaller."""
        width = self.h1 + self.h2
        var = self.s * (1.0 - min(self.s, 0.5)) if self.s > 0 else 1e-12
        drift_free = 2.0 * width * width * math.log(1.0 / WALK_EPS) / (math.pi ** 2 * var)
        return min(float(self.truncate), margin * drift_free + width / max(self.s, 1e-12))

    def check_report_cost(self, what: str = "this sequential plan") -> None:
        """Refuse, before any work, a plan whose report (OC and ASN curves, the
        plan's own quality levels: about :data:`REPORT_WALKS` walks of 127
        levels) would take more than :data:`REPORT_SECONDS` (see
        :meth:`walk_seconds`)."""
        from lotwise.core.quantities import TooCostly

        need = REPORT_WALKS * self.walk_seconds(127)
        if need > REPORT_SECONDS:
            raise TooCostly(
                f"{what} (truncated at {self.truncate:,} units, lines h1 + h2 = "
                f"{self.h1 + self.h2:.3g} apart) needs about {need:.0f} s of computing for its "
                f"exact OC, ASN and quality levels, beyond the budget of {REPORT_SECONDS:.0f} s; "
                "truncate it sooner (--truncate), widen the gap between AQL and RQL, or use a "
                "single or double plan for targets this close")

    def check_cost(self) -> None:
        self.check_report_cost()

    def quality_levels(self, probs, model: str, scope: Scope, sides) -> list[float]:
        """The plan's quality levels (refused first when the plan's report would
        exceed its budget, :meth:`check_report_cost`)."""
        self.check_report_cost()
        return super().quality_levels(probs, model, scope, sides)

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
        if self.spec is not None:
            p1, alpha, p2, beta, per_unit = self.spec
            unit = "" if per_unit is None else f"per_unit={int(bool(per_unit))},"
            return (f"sequential: p1={p1!r},alpha={alpha!r},p2={p2!r},beta={beta!r},{unit}"
                    f"truncate={self.truncate}")
        return (f"sequential: h1={self.h1!r},h2={self.h2!r},s={self.s!r},"
                f"truncate={self.truncate}")

    @property
    def n_max(self) -> int:
        return self.truncate

    def to_dict(self) -> dict:
        return {"scheme": "sequential", "h1": self.h1, "h2": self.h2, "s": self.s,
                "truncate": self.truncate, "never_accepts": self.never_accepts}

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
        """The walk at ``p`` (the same walk is not done twice in a row: a report
        asks for ``Pa`` and the ASN at the same levels, and one walk gives both;
        see :data:`_WALKS`)."""
        x = np.atleast_1d(level_to_x(p, model, scope, rounding, self.truncate))
        early = model != "poisson" and not scope.per_unit
        key = (self, curtailed, early, model, scope.lot_size, x.dtype.str, x.shape, x.tobytes())
        res = _WALKS.get(key)
        if res is None:
            acc, rej = self._bounds(curtailed, early)
            res = _keep(_WALKS, key, unit_walk(acc, rej, model, x, scope.lot_size))
        return res

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Exact acceptance probability of the truncated plan (exactly 0 for a
        plan that never accepts)."""
        if self.never_accepts:
            level_to_x(p, model, scope, rounding, self.truncate)  # the usual checks
            return finish_shape(np.zeros(np.shape(p)), np.shape(p))
        if model in ("binomial", "poisson") and self.walk_units() > BLOCKED_FROM \
                and self.widest_band() <= BLOCKED_BAND:
            # Long plans: block by block (equal to the walk within 1e-12).
            x = np.ravel(level_to_x(p, model, scope, rounding, self.truncate))
            key = (self, model, x.dtype.str, x.tobytes())
            pa = _BLOCKED.get(key)
            if pa is None:
                pa = _keep(_BLOCKED, key, pa_blocked(self, x, model))
            return finish_shape(pa, np.shape(p))
        return finish_shape(self._walk(p, model, scope, rounding).pa, np.shape(p))

    def pa_count(self, d, scope: Scope):
        if self.never_accepts:
            return finish_shape(np.zeros(np.shape(d)), np.shape(d))
        x = np.atleast_1d(np.asarray(d, dtype=float))
        acc, rej = self._bounds()
        res = unit_walk(acc, rej, "hypergeometric", x, scope.lot_size)
        return finish_shape(res.pa, np.shape(d))

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Exact average sample number of the truncated plan."""
        return finish_shape(self._walk(p, model, scope, rounding).asn, np.shape(p))

    def asn_curtailed(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Exact ASN when the truncation decision is also taken as soon as it
        is certain (0 for a plan that never accepts: rejection is certain
        before the first unit)."""
        if self.never_accepts:
            level_to_x(p, model, scope, rounding, self.truncate)
            return finish_shape(np.zeros(np.shape(p)), np.shape(p))
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
    def wald_pa(self, p, per_unit: bool = False):
        """Wald's approximate OC of the untruncated test with these lines."""
        return wald_pa(p, self.h1, self.h2, self.s, per_unit)

    def wald_asn(self, p, per_unit: bool = False):
        """Wald's approximate ASN of the untruncated test with these lines."""
        return wald_asn(p, self.h1, self.h2, self.s, per_unit)

    # on the bench ----------------------------------------------------------
    def decide(self, inspected: int, found: int, *, per_unit: bool = False) -> Decision:
        """Accept, reject or continue after ``inspected`` units with ``found``."""
        check_record(inspected, found, self.truncate, per_unit)
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
        if per_unit:  # one unit may carry any number of nonconformities
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


_YES = {"1": True, "yes": True, "true": True, "0": False, "no": False, "false": False}


#: Allowed intercepts and slope of a plan written as its lines: counts beyond
#: the largest truncation (10^7 units), a slope beyond what a count can follow.
LINE_RANGE = {"h1": (1e-9, 1e7), "h2": (1e-9, 1e7), "s": (1e-15, 1e6)}


def parse_sequential(pairs: dict, text: str, option: str) -> SequentialPlan:
    """``sequential: h1=1.22,h2=1.57,s=0.0281,truncate=300`` or
    ``sequential: p1=1%,alpha=5%,p2=6%,beta=10%,truncate=300``.

    Written with the risk points, the lines depend on what is counted: Wald's
    binomial lines for nonconforming items, the Poisson lines for
    nonconformities per unit. ``per_unit=1`` (or ``0``) says which; without
    it the plan takes the scope it is used in (``--per-unit``: per unit;
    see :meth:`SequentialPlan.for_scope`). Written with ``h1, h2, s``, the
    lines are the plan.
    """
    keys = set(pairs)
    lines = {"h1", "h2", "s"}
    risks = {"p1", "p2", "alpha", "beta", "per_unit"}
    allowed = lines | risks | {"truncate"}
    bad = sorted(keys - allowed)
    example = "\"sequential: h1=1.22,h2=1.57,s=0.0281,truncate=300\""
    if bad:
        raise InputError(f"{option} ({text!r}): unknown key {bad[0]!r}; a sequential plan takes "
                         f"h1, h2, s and truncate (or p1, alpha, p2, beta and optionally "
                         f"per_unit), e.g. {example}")
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
        for key, (low, high) in LINE_RANGE.items():
            v = parse_fraction(pairs[key], f"{option} {key}")
            if not low <= v <= high:
                raise InputError(f"{option} {key} ({pairs[key]}) must be a positive number from "
                                 f"{low:g} to {high:g}")
            vals[key] = v
        return SequentialPlan(h1=vals["h1"], h2=vals["h2"], s=vals["s"], truncate=t)
    for key in ("p1", "p2"):
        if key not in pairs:
            raise InputError(f"{option} ({text!r}) lacks {key}; write for example {example} or "
                             "\"sequential: p1=1%,p2=6%,truncate=300\"")
    per_unit = None
    if "per_unit" in pairs:
        word = pairs["per_unit"].strip().lower()
        if word not in _YES:
            raise InputError(f"{option} per_unit ({pairs['per_unit']!r}) must be 1 "
                             "(nonconformities per unit) or 0 (nonconforming items)")
        per_unit = _YES[word]
    try:
        p1 = parse_level(pairs["p1"], f"{option} p1", per_unit=bool(per_unit))
        p2 = parse_level(pairs["p2"], f"{option} p2", per_unit=bool(per_unit))
    except InputError as exc:
        if per_unit is None:
            raise InputError(f"{exc}; add per_unit=1 for nonconformities per unit") from None
        raise
    al = parse_risk(pairs.get("alpha", "5%"), f"{option} alpha")
    be = parse_risk(pairs.get("beta", "10%"), f"{option} beta")
    if not p2 > p1:
        raise InputError(f"{option} p2 ({pairs['p2']}) must be above p1 ({pairs['p1']})")
    if not al + be < 1:
        raise InputError(f"{option} alpha + beta ({al} + {be}) must be below 1")
    return SequentialPlan.from_risks(p1, al, p2, be, truncate=t, per_unit=per_unit)


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
        Wald's unadjusted lines ``h1, h2, s`` and their approximate
        ``pa_aql, pa_rql, asn_aql, asn_rql``; ``lines_used`` tells whether the
        plan kept them.
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
        per_unit = self.scope.per_unit
        return {"n": [int(v) for v in ns],
                "accept": [int(v) if v >= 0 else None for v in a],
                "reject": [int(rv) if (per_unit or rv <= n) else None for n, rv in zip(ns, r)]}

    def report_extra(self) -> dict:
        return {"feasible": True, "h1": self.plan.h1, "h2": self.plan.h2, "s": self.plan.s,
                "truncate": self.plan.truncate, "truncate_source": self.truncate_source,
                "single_n": self.single_n, "wald": self.wald, "exact": self.exact,
                "numbers": self.numbers()}


#: The last results of :meth:`SequentialPlan._walk` and of :func:`pa_blocked`, by
#: plan and exact inputs (the levels' bytes): an exact walk is the costly part of
#: a report, and the report's pieces ask for the same levels more than once
#: (``Pa``, then the ASN; the OC table, then the curves). A result is returned
#: as computed (its arrays read-only), so a repeat is the same number bit for bit.
_WALKS: dict = {}
_BLOCKED: dict = {}
_KEPT = 16


def clear_cache() -> None:
    """Forget the remembered walks (:data:`_WALKS`, :data:`_BLOCKED`) and Wald
    roots (:data:`_THETAS`): for timing a walk itself, or to free their memory."""
    _WALKS.clear()
    _BLOCKED.clear()
    _THETAS.clear()


def _keep(store: dict, key, result):
    """Remember ``result`` under ``key`` (the oldest of :data:`_KEPT` dropped)."""
    for value in (result.pa, result.asn, result.accepted_units, result.left_in_accepted) \
            if isinstance(result, WalkResult) else (result,):
        if value is not None:
            value.flags.writeable = False
    if len(store) >= _KEPT:
        store.pop(next(iter(store)))
    store[key] = result
    return result


def _matpow(m, k: int):
    """``m^k`` for a stack of square matrices (repeated squaring)."""
    out = np.broadcast_to(np.eye(m.shape[-1]), m.shape).copy()
    while k:
        if k & 1:
            out = out @ m
        k >>= 1
        if k:
            m = m @ m
    return out


#: Walks a sequential plan's report takes (the OC and ASN curves, the plan's own
#: quality levels by inversion: the work of about 120 walks of 127 levels was
#: measured on the project machine for a report) and
#: the seconds it may take in all before it is refused (:meth:`SequentialPlan.check_report_cost`).
REPORT_WALKS = 120
REPORT_SECONDS = 20.0


#: Walk lengths (:meth:`SequentialPlan.walk_units`: the truncation point, or
#: sooner where every level is decided long before it) above which ``Pa`` under
#: the binomial and Poisson models is computed block by block
#: (:func:`pa_blocked`) rather than unit by unit.
BLOCKED_FROM = 4000


#: Widest band of undecided counts :func:`pa_blocked` takes (its block matrices are
#: band x band); wider plans are walked unit by unit.
BLOCKED_BAND = 2000


def pa_blocked(plan: "SequentialPlan", x, model: str, eps: float = WALK_EPS):
    """Exact ``Pa`` of the truncated plan under the binomial or Poisson model,
    block by block instead of unit by unit (same value as :meth:`SequentialPlan.pa`).

    Between two units where the acceptance or rejection number changes the
    numbers are constant, and as counts never fall a lot can be accepted only
    at a block's first unit; after it the undecided counts ``a < d < r`` move
    by the one-unit transition matrix (``d -> d + 1`` with probability ``p``
    for items, ``d -> d + j`` with Poisson(``p``) mass for nonconformities),
    counts reaching ``r`` rejected. The ``L - 1`` further units of a block are
    one matrix power (repeated squaring). Only the band of undecided counts is
    stored, and the walk stops once the undecided probability is at most
    ``eps`` at every level (``Pa`` then low by at most ``eps``, as in
    :func:`lotwise.core.stages.unit_walk`).
    """
    x = np.atleast_1d(np.asarray(x, dtype=float))
    P = x.size
    _, acc, rej = plan.numbers()
    change = np.flatnonzero((np.diff(acc) != 0) | (np.diff(rej) != 0)) + 1
    starts = np.concatenate([[0], change])
    ends = np.concatenate([change, [plan.truncate]]).tolist()
    acc, rej, starts = acc[starts].tolist(), rej[starts].tolist(), starts.tolist()
    lo, band = 0, np.ones((P, 1))  # undecided mass of counts lo .. lo + width - 1
    accepted = np.zeros(P)
    for b0, b1, a, r in zip(starts, ends, acc, rej):
        # First unit of the block: one step, then accept d <= a, reject d >= r.
        top = r - 1 if model == "poisson" else min(r - 1, lo + band.shape[1])
        width = top - lo + 1
        if width <= 0:
            break  # every undecided lot is rejected here
        inc = _unit_increments(x, model, width)
        new = np.zeros((P, width))
        for j in range(min(band.shape[1], width)):
            new[:, j:] += band[:, j:j + 1] * inc[:, :width - j]
        if a >= lo:
            k = min(a - lo + 1, width)
            accepted += new[:, :k].sum(axis=1)
            new, lo = new[:, k:], lo + k
        band = new
        steps = b1 - b0 - 1
        if steps > 0 and band.shape[1] > 0:
            w = r - lo
            full = np.zeros((P, w))
            full[:, :band.shape[1]] = band
            inc = _unit_increments(x, model, w)
            i = np.arange(w)
            jump = i[:, None] - i[None, :]  # row: to, column: from
            m = np.where(jump[None] >= 0, inc[:, np.clip(jump, 0, w - 1)], 0.0)
            band = (_matpow(m, steps) @ full[:, :, None])[:, :, 0]
        if not band.size or band.sum(axis=1).max() <= eps:
            break
    return np.clip(accepted, 0.0, 1.0)


def _unit_increments(x, model: str, width: int):
    """Probability that one unit adds ``k = 0 .. width - 1`` to the count, per level."""
    if model == "poisson":
        from scipy import special as sp

        ks = np.arange(width, dtype=float)
        return np.exp(sp.xlogy(ks[None, :], x[:, None]) - x[:, None] - sp.gammaln(ks + 1.0))
    inc = np.zeros((x.size, width))
    inc[:, 0] = 1.0 - x
    if width > 1:
        inc[:, 1] = x
    return inc


def _smallest_up(ok, lo: float) -> float:
    """Smallest ``v >= lo`` on the grid of 1e-6 with ``ok(v)``, for ``ok``
    false below a point and true above it (bisection; the answer rounded up
    to 6 decimals stays on the true side); ``nan`` when none is found within
    2^50 times the first step."""
    if ok(lo):
        return lo
    step = 0.02
    hi = lo + step
    for _ in range(50):
        if ok(hi):
            break
        lo, step = hi, step * 2.0
        hi = lo + step
    else:
        return math.nan
    while hi - lo > 5e-7:
        mid = 0.5 * (lo + hi)
        if ok(mid):
            hi = mid
        else:
            lo = mid
    return math.ceil(hi * 1e6 - 1e-9) / 1e6 if ok(math.ceil(hi * 1e6 - 1e-9) / 1e6) else hi


def _fit_lines(h1, h2, s, n0, targets, model, scope, levels):
    """Lines meeting both risks exactly at truncation ``n0``, starting from
    Wald's: ``(h1, h2, pa_aql, pa_rql, met)``.

    ``Pa`` rises in ``h2`` and falls in ``h1`` at every quality level (a
    higher rejection line, or a higher acceptance line ``-h1 + s n``, only
    widens the accepted paths; the midpoint at truncation moves the same
    way). So the consumer's risk is met by raising ``h1`` to the smallest
    value meeting it and the producer's by raising ``h2``; each raise can
    spoil the other risk, so the two alternate (both only grow) until both
    hold, or 60 rounds pass.
    """
    tol = 1e-12

    def pa(a, b):
        plan = SequentialPlan(h1=a, h2=b, s=s, truncate=n0)
        if plan.never_accepts:
            return np.zeros(len(levels))
        return np.atleast_1d(plan.pa(levels, model, scope))

    v = pa(h1, h2)
    nearest = None  # the lines tried with the smallest total shortfall
    for _ in range(60):
        ok_a = v[0] >= 1.0 - targets.alpha - tol
        ok_r = v[1] <= targets.beta + tol
        if ok_a and ok_r:
            return h1, h2, float(v[0]), float(v[1]), True
        short = max(0.0, 1.0 - v[0] - targets.alpha) + max(0.0, v[1] - targets.beta)
        if nearest is None or short < nearest[0]:
            nearest = (short, h1, h2, float(v[0]), float(v[1]))
        if not ok_r:
            new = _smallest_up(lambda x: pa(x, h2)[1] <= targets.beta + tol, h1)
            if math.isnan(new):
                break
            h1 = new
        else:
            new = _smallest_up(lambda x: pa(h1, x)[0] >= 1.0 - targets.alpha - tol, h2)
            if math.isnan(new):
                break
            h2 = new
        v = pa(h1, h2)
    return nearest[1:] + (False,)


def _default_truncate(single_n, lot_size):
    if single_n is None:
        if lot_size is None:
            raise Infeasible("no single plan meets the risks, so there is no default "
                             "truncation point; give --truncate")
        return lot_size, "the lot size (no single plan meets the risks)"
    truncate = TRUNCATE_FACTOR * single_n
    source = f"{TRUNCATE_FACTOR} x the single plan's n = {single_n}"
    if lot_size is not None and truncate > lot_size:
        truncate, source = lot_size, source + ", capped at the lot size"
    return truncate, source


def design_sequential(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                      lot_size: int | None = None, model: str | None = None,
                      per_unit: bool = False, truncate: int | None = None) -> SequentialDesign:
    """A sequential plan whose exact truncated OC meets both risks.

    Wald's lines for the two risk points (:func:`sprt_lines`) are the start;
    the exact OC of the plan truncated at ``truncate`` (default three times
    the single plan's ``n``, common practice, no source) is computed by the
    dynamic program, and where it misses a risk the intercepts are raised
    (``h1`` for the consumer's, ``h2`` for the producer's; the slope ``s``
    stays Wald's) until both hold, see :func:`_fit_lines`. When the default
    truncation point cannot be made to work it is raised by half, up to
    four times (and never past the lot). The result keeps its promise: its
    exact truncated ``Pa`` meets ``1 - alpha`` at the AQL and ``beta`` at the
    RQL; ``wald`` reports Wald's unadjusted lines and their approximate OC
    and ASN beside it.

    Raises
    ------
    Infeasible
        When the risk points are out of order, the lot cannot tell them
        apart, or no adjustment meets both risks (``reachable`` names the
        nearest plan tried and the risks it carries).
    InputError
        For a truncation point beyond the lot size or below 1.
    """
    scope = Scope(lot_size=lot_size, per_unit=per_unit)
    model = scope.check_model(model)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    check_targets(targets, per_unit)
    if model == "hypergeometric":
        check_lot(targets, lot_size, lot_targets(targets, lot_size))
    h1w, h2w, s = sprt_lines(aql, alpha, rql, beta, per_unit=per_unit)
    single_n = None
    try:
        single_n = design_single(aql=aql, rql=rql, alpha=alpha, beta=beta, lot_size=lot_size,
                                 model=model, per_unit=per_unit).n
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
        truncate, source = _default_truncate(single_n, lot_size)
    if model == "hypergeometric":
        d1, d2 = (oc.lot_count(aql, lot_size, "up"), oc.lot_count(rql, lot_size, "down"))
        la, lr = d1 / lot_size, d2 / lot_size
    else:
        la, lr = aql, rql
    n0 = int(truncate)
    # The design ends in the plan's report: refuse before the search when that
    # report is beyond its budget (Wald's lines at the first truncation point).
    SequentialPlan(h1=h1w, h2=h2w, s=s, truncate=n0).check_report_cost(
        "the sequential plan for these targets")
    for attempt in range(5):
        h1, h2, pa_a, pa_r, met = _fit_lines(h1w, h2w, s, n0, targets, model, scope, [la, lr])
        if met or source == "given" or (lot_size is not None and n0 >= lot_size):
            break
        grown = int(math.ceil(1.5 * n0))
        if lot_size is not None:
            grown = min(grown, lot_size)
        source += f"; raised to {grown} so that the exact plan meets both risks"
        n0 = grown
    if not met:
        raise Infeasible(
            f"no sequential plan truncated at {n0} units with slope s = {s:.6g} was found that "
            f"meets both risks: the nearest tried (h1 = {h1:.6g}, h2 = {h2:.6g}) carries alpha "
            f"{format_pct(1.0 - pa_a)} (target {format_pct(alpha)}) and beta "
            f"{format_pct(pa_r)} (target {format_pct(beta)}); give a larger --truncate or use "
            "a single or double plan",
            {"h1": h1, "h2": h2, "s": s, "truncate": n0, "alpha": 1.0 - pa_a, "beta": pa_r})
    plan = SequentialPlan(h1=h1, h2=h2, s=s, truncate=n0)
    adjusted = (h1, h2) != (h1w, h2w)
    wald = {"h1": h1w, "h2": h2w, "s": s,
            "pa_aql": float(wald_pa(aql, h1w, h2w, s, per_unit)),
            "pa_rql": float(wald_pa(rql, h1w, h2w, s, per_unit)),
            "asn_aql": float(wald_asn(aql, h1w, h2w, s, per_unit)),
            "asn_rql": float(wald_asn(rql, h1w, h2w, s, per_unit)),
            "lines_used": not adjusted}
    pa, asn = plan.oc_asn([la, lr], model, scope)
    cur = plan.asn_curtailed([la, lr], model, scope)
    exact = {"pa_aql": float(pa[0]), "pa_rql": float(pa[1]),
             "asn_aql": float(asn[0]), "asn_rql": float(asn[1]),
             "asn_curtailed_aql": float(cur[0]), "asn_curtailed_rql": float(cur[1]),
             "alpha": 1.0 - float(pa[0]), "beta": float(pa[1]), "model": model,
             "meets": True}
    if adjusted:
        source += ("; Wald's lines missed a risk in the exact truncated plan, so the "
                   "intercepts were raised until both are met")
    return SequentialDesign(plan=plan, model=model, scope=scope, targets=targets, wald=wald,
                            exact=exact, truncate_source=source, single_n=single_n)


def report_extras(plan, targets, scope: Scope, model: str, report: dict) -> dict:
    """Wald's approximations beside the exact truncated plan, and the truncation rule."""
    per_unit = scope.per_unit
    w = {"pa_aql": float(plan.wald_pa(targets.aql, per_unit)),
         "pa_rql": float(plan.wald_pa(targets.rql, per_unit)),
         "asn_aql": float(plan.wald_asn(targets.aql, per_unit)),
         "asn_rql": float(plan.wald_asn(targets.rql, per_unit))}
    m, a = report["models"][model], report["asn"]
    if plan.never_accepts:
        never = (f"This plan never accepts a lot: the acceptance number is below 0 at every unit "
                 f"up to the truncation point (the midpoint line there is {plan.midpoint:.4g}), "
                 f"so every lot is rejected after {plan.max_sample} units at most and Pa is 0 "
                 "at every quality level. Lower h1 or raise h2 (or the truncation point) "
                 "before using it.")
        return {"wald": w, "statements": [never]}
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


def oc_columns(plan, ps, model: str, scope: Scope, counts=None) -> dict:
    """Wald's approximate OC and ASN beside the exact truncated plan."""
    return {"wald_pa": plan.wald_pa(ps, scope.per_unit), "wald_asn": plan.wald_asn(ps, scope.per_unit)}


FAMILY = Family(
    name="sequential", plan_class=SequentialPlan, parse=parse_sequential, keys_hint=("h1",),
    extras=report_extras, oc_columns=oc_columns,
    design=design_sequential,
    design_options={"truncate": "largest number of units before a forced decision"},
    option_types={"truncate": Option(kind=OptionKind.WHOLE, minimum=1)},
    description="item-by-item sequential sampling (Wald's SPRT), truncated",
)
