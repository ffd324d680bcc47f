"""Continuous sampling plans CSP-1, CSP-2 and CSP-3 for product that flows
unit by unit (Dodge [1]_; Dodge and Torrey [2]_).

No lots are formed: units come off a line one after another and the plan
switches between inspecting every unit and inspecting a fraction ``f`` of
them.

CSP-1, clearance number ``i``, sampling fraction ``f``:

1. Start by inspecting every unit (100 % inspection).
2. When ``i`` consecutive units have been found conforming, inspect only a
   fraction ``f`` of the units, chosen at random (or every ``m``-th unit
   when ``f = 1/m``).
3. When a unit inspected under sampling is nonconforming, return to 100 %
   inspection.

CSP-2 (``k`` defaults to ``i``): as CSP-1, but a nonconforming unit found
under sampling does not end sampling at once. Sampling continues *on
probation*: if another nonconforming unit is found among the next ``k``
units inspected, return to 100 % inspection; when ``k`` consecutive
inspected units are conforming, sampling goes on as before.

CSP-3 (``burst`` defaults to 4): as CSP-2, but when a nonconforming unit is
found under sampling, the next ``burst`` units are inspected one and all; a
nonconforming unit among them sends the line back to 100 % inspection,
otherwise sampling continues on probation as in CSP-2. (Convention here:
the burst units are not counted among the ``k`` units of the probation.)

Every nonconforming unit found is replaced by (or reworked into) a
conforming one, so as many units leave as arrive; units passed without
inspection carry the process fraction nonconforming ``p``. Units are taken
to be nonconforming independently with probability ``p`` (the binomial
model per unit); the hypergeometric model of a finite lot does not apply to
a process plan and is refused, and so is the Poisson model.

Long-run figures
----------------
The plan is a Markov chain over its states, one step per produced unit:
``full(j)`` (100 % inspection, ``j`` consecutive conforming units so far,
``j = 0..i-1``), ``sampling``, ``probation(j)`` (CSP-2/3, ``j`` conforming
inspected units since the last nonconforming one, ``j = 0..k-1``) and
``burst(j)`` (CSP-3, ``j = 0..burst-1``). Every entry into ``full(0)``
starts a renewal cycle, so long-run fractions are ratios of expected units
per cycle (renewal-reward). With ``q = 1 - p``:

* 100 % phase (Dodge's ``u``): ``u = (1 - q^i) / (p q^i)`` units, the mean
  wait for ``i`` conforming units in a row;
* sampling period (from leaving 100 % inspection until returning to it),
  units inspected at rate ``f``: CSP-1 ``v = 1 / (f p)``; CSP-2
  ``v = (2 - q^k) / (f p (1 - q^k))``; CSP-3
  ``v = (1 + q^b (1 - q^k)) / (f p (1 - q^(b+k)))`` plus
  ``w = (1 - q^b) / (p (1 - q^(b+k)))`` burst units inspected one and all
  (``b`` the burst).

Then ``pa = v / (u + v + w)`` is the long-run fraction of units produced
under sampling (the plan interface's ``pa``: "long-run fraction of units
passed under sampling"), the average fraction inspected is
``AFI = (u + w + f v) / (u + v + w) = 1 - (1 - f) pa`` and the average
outgoing quality is ``AOQ = p (1 - f) pa`` (nonconforming units found are
replaced). For CSP-1 these are Dodge's ``AFI = (u + f v)/(u + v)`` and
``AOQ = p (1 - f) q^i / (f + (1 - f) q^i)``. The code evaluates them in a
form multiplied through by ``f p q^i (1 - q^k)`` so that ``p = 0`` (no
nonconforming units: ``pa = 1``, ``AFI = f``) needs no special case, with
``q^n`` as ``exp(n log1p(-p))``.

The **AOQL** is the largest AOQ over ``0 <= p <= 1``: the AOQ is evaluated
on a geometric grid from ``10^-3 / (i + k + b + 1)`` to 1 (below it
``AOQ ~ (1 - f) p`` only rises), the grid maximum brackets the peak and
Brent's method polishes it (:func:`lotwise.core.optimum.brent_max`). For
CSP-1 the AOQ is unimodal: ``d ln AOQ / dp = 0`` reads
``q (f + (1 - f) q^i) = i f p``, a falling left side against a rising
right side; at the peak ``AOQL = ((i + 1) p - 1) / i``. For CSP-2 and
CSP-3 the tests check the peak against a dense grid.

Short runs
----------
For a run of ``M`` units that starts in 100 % inspection,
:meth:`CspPlan.run_figures` propagates the state distribution through the
chain for ``M`` steps (dynamic programming) and returns the expected
fraction of the ``M`` units inspected, the expected fraction produced under
sampling and the expected outgoing quality (expected nonconforming units
passed divided by ``M``).

Design
------
For fixed ``f``, ``pa`` falls at every ``p`` as ``i`` grows (``q^i``
falls; for CSP-2/3 with ``k`` tied to ``i`` also ``1 - q^k`` rises), so the
AOQ falls pointwise and the AOQL is non-increasing in ``i``: the smallest
``i`` meeting an AOQL limit is found by bisection over whole numbers, in a
bracket widened around a first guess until one end fails and the other
meets the limit. For fixed ``i`` (and ``k``) the AOQL falls as ``f`` grows
(``pa`` and ``1 - f`` both fall), so the smallest ``f`` of a ladder is found by
bisection over the sorted ladder. At a process average ``P`` the AFI
``1 - (1 - f) pa(P)`` rises with ``i``, so for each ``f`` only the
smallest ``i`` meeting the limit can have the least AFI.

Sampling cannot guarantee defect-free output: a CSP plan limits the
long-run average outgoing quality, not the quality of any one unit.
Critical characteristics need 100 % inspection.

References
----------
.. [1] H. F. Dodge, "A sampling inspection plan for continuous production",
   *Annals of Mathematical Statistics* 14(3), 1943, 264-279.
.. [2] H. F. Dodge and M. N. Torrey, "Additional continuous sampling
   inspection plans", *Industrial Quality Control* 7(5), 1951, 7-12.

Examples
--------
A machining line clears after 38 conforming parts in a row and then checks
one part in ten:

>>> from lotwise.families.base import parse_plan
>>> plan = parse_plan("csp1: i=38,f=1/10")
>>> value, at = plan.aoql()
>>> round(100 * value, 2), round(100 * at, 2)
(2.82, 5.31)
>>> round(float(plan.afi(0.01)), 4), round(float(plan.aoq(0.01)), 5)
(0.14, 0.0086)
>>> parse_plan(plan.notation()) == plan
True
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from enum import StrEnum
from typing import ClassVar

import numpy as np

from lotwise.core.optimum import brent_max
from lotwise.core.quantities import Infeasible, InputError, parse_count, parse_fraction
from lotwise.core.types import Scope
from lotwise.families.base import Family, Plan, finish

__all__ = ["Phase", "Mark", "CspPlan", "Csp1Plan", "Csp2Plan", "Csp3Plan", "CspDesign",
           "CspNext", "FRACTIONS", "SAFETY", "make_plan", "transition_matrix", "parse_csp",
           "parse_f", "format_f", "design_csp", "parse_history", "next_units", "FAMILIES"]

#: The customary ladder of sampling fractions (common practice, no source).
FRACTIONS = (1 / 2, 1 / 3, 1 / 4, 1 / 5, 1 / 7, 1 / 10, 1 / 15, 1 / 25, 1 / 50, 1 / 100,
             1 / 200)
#: Largest clearance number a design searches.
MAX_I = 10_000_000
#: Longest run the short-run dynamic programming accepts.
MAX_RUN = 1_000_000
#: Smallest sampling fraction accepted.
F_MIN = 1e-6
#: Default burst of CSP-3 (Dodge and Torrey).
BURST = 4
#: Units the line is told to inspect next, ahead of the history.
SHOWN = 10

_GRID_PER_DECADE = 24

#: Printed with every CSP result.
SAFETY = ("Sampling cannot guarantee defect-free output: a CSP plan limits the long-run "
          "average outgoing quality, not the quality of any one unit. Critical "
          "characteristics need 100 % inspection. Defer to your applicable standards and "
          "qualified quality professionals.")


class Phase(StrEnum):
    """Where a CSP plan is on the line."""

    FULL = "full"            # 100 % inspection until i conforming in a row
    SAMPLING = "sampling"    # a fraction f inspected
    PROBATION = "probation"  # CSP-2/3: sampling, k clean inspected units still to go
    BURST = "burst"          # CSP-3: the units after a finding, inspected one and all


class Mark(StrEnum):
    """One unit of the history: inspected and conforming, inspected and
    nonconforming, or passed without inspection."""

    OK = "ok"
    BAD = "bad"
    PASSED = "-"


def _powers(p, n, xp):
    """``q^n`` and ``1 - q^n`` (``q = 1 - p``) without cancellation."""
    lq = xp.log1p(-p)
    return xp.exp(n * lq), -xp.expm1(n * lq)


def parse_f(text, option: str) -> float:
    """A sampling fraction: ``0.1``, ``1/10`` or ``10%``, above 0 and at most 1."""
    s = str(text).strip()
    if "/" in s:
        a, _, b = s.partition("/")
        try:
            f = float(a) / float(b)
        except (ValueError, ZeroDivisionError):
            raise InputError(f"{option} ({s}) must be a fraction such as 0.1, 1/10 or "
                             "10%") from None
    else:
        f = parse_fraction(s, option)
    if not (math.isfinite(f) and F_MIN <= f <= 1):
        raise InputError(f"{option} ({s}) must be a sampling fraction from 1/1,000,000 to 1")
    return f


def format_f(f: float) -> str:
    """``1/m`` when ``f`` is exactly the float ``1/m``, else the shortest repr."""
    m = round(1.0 / f)
    return f"1/{m}" if m >= 1 and 1.0 / m == f else repr(float(f))


def _whole(value, name: str, minimum: int = 1) -> None:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < minimum:
        raise InputError(f"{name} ({value}) must be a whole number of at least {minimum}")


@dataclass(frozen=True, kw_only=True)
class CspPlan(Plan):
    """A continuous sampling plan: clearance number ``i``, sampling fraction ``f``.

    The engine common to CSP-1, CSP-2 and CSP-3; each subclass says what
    follows a nonconforming unit found under sampling (:meth:`_weights`).
    """

    i: int
    f: float

    scheme: ClassVar[str] = ""
    title: ClassVar[str] = ""
    varying_sample: ClassVar[bool] = True
    evaluation: ClassVar[str] = "flow"
    finite_aoq_text: ClassVar[str] = ("AOQ = p (1 - f) pa per produced unit; nonconforming "
                                      "units found are replaced")

    def __post_init__(self):
        _whole(self.i, "i")
        if isinstance(self.f, bool) or not isinstance(self.f, (int, float)) \
                or not F_MIN <= self.f <= 1:
            raise InputError(f"f ({self.f}) must be a sampling fraction from 1/1,000,000 to 1")
        object.__setattr__(self, "f", float(self.f))

    # -- the chain's layout: clearing states, probation, burst ------------------
    @property
    def probation(self) -> int:
        """Inspected units of the probation after a finding (0: none, CSP-1)."""
        return 0

    @property
    def burst_units(self) -> int:
        """Units inspected one and all after a finding (0: none)."""
        return 0

    def _weights(self, p, xp):
        """Long-run units in 100 % inspection, under sampling and in bursts,
        each multiplied by the same positive factor (see the module notes)."""
        raise NotImplementedError

    def _check(self, model: str) -> None:
        if model != "binomial":
            raise InputError(f"--model ({model}): a {self.title} plan is a process plan judged "
                             "unit by unit; only the binomial model applies (no lot, so no "
                             "hypergeometric model; the Poisson approximation is not offered)")

    def check_scope(self, scope: Scope) -> None:
        if scope.lot_size:
            raise InputError(f"--lot-size ({scope.lot_size}) does not apply to a {self.title} "
                             "plan: product flows unit by unit, no lots are formed")
        if scope.per_unit:
            raise InputError(f"--per-unit does not apply to a {self.title} plan: units are "
                             "conforming or nonconforming")

    # -- long-run figures --------------------------------------------------------
    def _shares(self, p):
        p = np.asarray(p, dtype=float)
        bad = ~((p >= 0) & (p <= 1))  # also NaN
        if np.any(bad):
            raise InputError(f"quality level ({p[bad].flat[0] if p.ndim else p}) must be a "
                             "fraction nonconforming from 0 to 1")
        with np.errstate(divide="ignore", invalid="ignore"):
            U, S, B = self._weights(p, np)
        total = U + S + B
        return p, S / total, (U + B + self.f * S) / total

    def pa(self, p, model: str = "binomial", scope: Scope = Scope(), rounding: str = "nearest"):
        """Long-run fraction of units passed under sampling (produced while the
        plan inspects only a fraction ``f``)."""
        self._check(model)
        return finish(self._shares(p)[1])

    def afi(self, p):
        """Average fraction inspected in the long run at fraction nonconforming ``p``."""
        return finish(self._shares(p)[2])

    def aoq(self, p, model: str = "binomial", scope: Scope = Scope(), *,
            formula: str = "screened", rounding: str = "nearest"):
        """Average outgoing quality ``p (1 - f) pa`` (nonconforming units found
        are replaced; ``formula`` has no bearing on a process plan)."""
        self._check(model)
        p, pa, _ = self._shares(p)
        return finish(p * (1.0 - self.f) * pa)

    def _aoq_scalar(self, p: float) -> float:
        if p <= 0.0 or p >= 1.0:
            return 0.0
        U, S, B = self._weights(p, math)
        return p * (1.0 - self.f) * S / (U + S + B)

    def aoq_function(self, model: str = "binomial", scope: Scope = Scope(), *,
                     formula: str = "screened"):
        self._check(model)
        return self._aoq_scalar

    def aoql(self) -> tuple[float, float]:
        """The AOQL and the fraction nonconforming where it occurs (grid bracket,
        then Brent's method; see the module notes)."""
        return _aoql(self)

    def phase_runs(self, p) -> dict:
        """Average run of units in each phase at ``p``: ``full`` (one spell of
        100 % inspection), ``sampling`` (from leaving 100 % inspection until
        returning; bursts included) and, for CSP-3, ``burst`` (one burst).
        A run that never ends is ``inf``: sampling at ``p = 0``, 100 %
        inspection at ``p = 1`` (where sampling is never reached: 0)."""
        p = float(p)
        i, k, b = self.i, self.probation, self.burst_units
        if p == 0.0:
            out = {"full": float(i), "sampling": math.inf}
            return out | ({"burst": float(b)} if b else {})
        if p == 1.0:
            out = {"full": math.inf, "sampling": 0.0}
            return out | ({"burst": 1.0} if b else {})
        qi, ri = _powers(p, i, math)
        full = ri / (p * qi)
        if not k:
            return {"full": full, "sampling": 1.0 / (self.f * p)}
        qk, rk = _powers(p, k, math)
        if not b:
            return {"full": full, "sampling": (2.0 - qk) / (self.f * p * rk)}
        qb, rb = _powers(p, b, math)
        _, rbk = _powers(p, b + k, math)
        sampled = (1.0 + qb * rk) / (self.f * p * rbk)
        bursts = rb / (p * rbk)
        return {"full": full, "sampling": sampled + bursts, "burst": rb / p}

    # -- short runs --------------------------------------------------------------
    def run_figures(self, p, run_length: int, *, method: str = "auto"):
        """Expected fraction inspected, fraction under sampling and outgoing
        quality over a run of ``run_length`` units starting in 100 % inspection.

        Returns ``(afi, pa, aoq)`` (floats for a scalar ``p``, arrays otherwise),
        exact by dynamic programming over the plan's chain
        (:func:`transition_matrix`): the state distribution after ``t`` units is
        ``e0 P^t``, summed over ``t < run_length`` by binary doubling of ``P``
        or unit by unit, whichever is expected to be faster (``method``
        forces one or the other).
        """
        _whole(run_length, "run length")
        if run_length > MAX_RUN:
            raise InputError(f"--run-length ({run_length}) must be at most {MAX_RUN:,}")
        pv = np.atleast_1d(np.asarray(p, dtype=float))
        self._shares(pv)
        inspected, sampled = _propagate(self, pv, run_length, method)
        afi = inspected / run_length
        pa = sampled / run_length
        aoq = pv * (1.0 - self.f) * pa
        if np.ndim(p) == 0:
            return float(afi[0]), float(pa[0]), float(aoq[0])
        return afi, pa, aoq

    # -- what the plan interface asks of lot plans ------------------------------
    def _no_lots(self, what: str):
        raise InputError(f"--plan ({self.notation()}): a {self.title} plan is a process plan "
                         f"and has no {what}; use its AFI and AOQ per produced unit")

    def pa_count(self, d, scope: Scope):
        self._no_lots("acceptance probability for a lot holding a count of nonconforming "
                      "items (the hypergeometric model does not apply)")

    def asn(self, p, model: str = "binomial", scope: Scope = Scope(), rounding: str = "nearest"):
        self._no_lots("average sample number per lot")

    def asn_count(self, d, scope: Scope):
        self._no_lots("average sample number per lot")

    def ati(self, p, model: str = "binomial", scope: Scope = Scope(), *,
            rounding: str = "nearest"):
        self._no_lots("average total inspection per lot")

    def ati_count(self, d, scope: Scope):
        self._no_lots("average total inspection per lot")

    def aoq_count(self, d, scope: Scope, *, formula: str = "screened"):
        self.pa_count(d, scope)

    def max_asn(self, model: str, scope: Scope):
        self._no_lots("average sample number per lot")

    @property
    def max_sample(self) -> int:
        """Not defined for a flow of units: raises :class:`InputError`."""
        return self._no_lots("sample size")

    def decide(self, inspected: int, found: int, *, per_unit: bool = False):
        raise InputError(f"--plan ({self.notation()}): a {self.title} plan decides unit by "
                         "unit; give the results so far with --history")

    # -- the bench rule in words --------------------------------------------------
    def procedure(self) -> str:
        """The plan's rule as the inspector follows it, in one paragraph."""
        text = (f"Inspect every unit until {self.i} in a row are conforming, then inspect a "
                f"fraction {format_f(self.f)} of the units at random.")
        if self.burst_units:
            text += (f" A nonconforming unit found: inspect the next {self.burst_units} "
                     "units; a nonconforming one among them restores 100 % inspection.")
        if not self.probation:
            return text + " A nonconforming unit found restores 100 % inspection."
        return text + (f" After a finding, another nonconforming unit among the next "
                       f"{self.probation} inspected restores 100 % inspection.")

    # -- names -------------------------------------------------------------------
    def _extra_keys(self) -> dict:
        return {}

    @property
    def label(self) -> str:
        extra = "".join(f", {k}={v}" for k, v in self._extra_keys().items())
        return f"{self.title} i={self.i}, f={format_f(self.f)}{extra}"

    def notation(self) -> str:
        extra = "".join(f",{k}={v}" for k, v in self._extra_keys().items())
        return f"{self.scheme}: i={self.i},f={format_f(self.f)}{extra}"

    def to_dict(self) -> dict:
        return {"scheme": self.scheme, "i": int(self.i), "f": float(self.f),
                **self._extra_keys()}


@dataclass(frozen=True, kw_only=True)
class Csp1Plan(CspPlan):
    """CSP-1: a nonconforming unit found under sampling restores 100 % inspection."""

    scheme: ClassVar[str] = "csp1"
    title: ClassVar[str] = "CSP-1"

    def _weights(self, p, xp):
        qi, ri = _powers(p, self.i, xp)
        return self.f * ri, qi, 0.0 * qi


@dataclass(frozen=True, kw_only=True)
class Csp2Plan(CspPlan):
    """CSP-2: after a finding under sampling, a second one within the next
    ``k`` inspected units restores 100 % inspection (``k`` defaults to ``i``)."""

    k: int | None = None

    scheme: ClassVar[str] = "csp2"
    title: ClassVar[str] = "CSP-2"

    def __post_init__(self):
        super().__post_init__()
        if self.k is None:
            object.__setattr__(self, "k", int(self.i))
        _whole(self.k, "k")

    @property
    def probation(self) -> int:
        return int(self.k)

    def _extra_keys(self) -> dict:
        return {"k": int(self.k)}

    def _weights(self, p, xp):
        qi, ri = _powers(p, self.i, xp)
        qk, rk = _powers(p, self.k, xp)
        return self.f * ri * rk, qi * (2.0 - qk), 0.0 * qi


@dataclass(frozen=True, kw_only=True)
class Csp3Plan(CspPlan):
    """CSP-3: after a finding under sampling the next ``burst`` units are
    inspected one and all (a finding among them restores 100 % inspection),
    then sampling continues on probation as in CSP-2."""

    k: int | None = None
    burst: int = BURST

    scheme: ClassVar[str] = "csp3"
    title: ClassVar[str] = "CSP-3"

    def __post_init__(self):
        super().__post_init__()
        if self.k is None:
            object.__setattr__(self, "k", int(self.i))
        _whole(self.k, "k")
        _whole(self.burst, "burst")

    @property
    def probation(self) -> int:
        return int(self.k)

    @property
    def burst_units(self) -> int:
        return int(self.burst)

    def _extra_keys(self) -> dict:
        return {"k": int(self.k), "burst": int(self.burst)}

    def _weights(self, p, xp):
        qi, ri = _powers(p, self.i, xp)
        qk, rk = _powers(p, self.k, xp)
        qb, rb = _powers(p, self.burst, xp)
        _, rbk = _powers(p, self.burst + self.k, xp)
        return self.f * ri * rbk, qi * (1.0 + qb * rk), self.f * qi * rb


_CLASSES = {"csp1": Csp1Plan, "csp2": Csp2Plan, "csp3": Csp3Plan}


def make_plan(scheme: str, *, i: int, f: float, k: int | None = None,
              burst: int | None = None) -> CspPlan:
    """The plan of ``scheme`` (``csp1``, ``csp2`` or ``csp3``)."""
    if scheme not in _CLASSES:
        raise InputError(f"--scheme ({scheme}) must be one of: csp1, csp2, csp3")
    kw = {"i": i, "f": f}
    if scheme != "csp1":
        kw["k"] = k
    elif k is not None:
        raise InputError(f"k ({k}) applies to csp2 and csp3, not csp1")
    if scheme == "csp3":
        kw["burst"] = BURST if burst is None else burst
    elif burst is not None:
        raise InputError(f"burst ({burst}) applies to csp3 only")
    return _CLASSES[scheme](**kw)


# --- the AOQL ------------------------------------------------------------------

def _aoql(plan: CspPlan) -> tuple[float, float]:
    if plan.f == 1.0:
        return 0.0, 0.0  # every unit inspected: nothing nonconforming goes out
    span = plan.i + plan.probation + plan.burst_units + 1
    lo = 1e-3 / span
    count = int(_GRID_PER_DECADE * math.log10(1.0 / lo)) + 2
    ps = np.exp(np.linspace(math.log(lo), 0.0, count))
    ps[-1] = 1.0
    with np.errstate(divide="ignore", invalid="ignore"):
        U, S, B = plan._weights(ps, np)
    vals = ps * (1.0 - plan.f) * S / (U + S + B)
    j = int(np.argmax(vals))
    a, b = float(ps[max(j - 1, 0)]), float(ps[min(j + 1, len(ps) - 1)])
    x, fx = brent_max(plan._aoq_scalar, a, b)
    if vals[j] > fx:
        x, fx = float(ps[j]), float(vals[j])
    return float(fx), float(x)


# --- the chain, step by step ------------------------------------------------------

#: Chains above this many states are never summed by dense doubling (memory).
_DENSE_STATES = 3000


def _doubling_pays(n: int, steps: int) -> bool:
    """Dense doubling costs about ``2 log2(steps) n^3`` flops (taken at 5e9 a
    second), stepping about 10 microseconds a unit."""
    return n <= _DENSE_STATES and 2.0 * math.log2(steps + 1) * n**3 / 5e9 < 1e-5 * steps


def _layout(plan: CspPlan) -> tuple[int, int, int]:
    """Column of ``sampling``, first probation column, first burst column."""
    s = plan.i
    return s, s + 1, s + 1 + plan.probation


def transition_matrix(plan: CspPlan, p: float):
    """The plan's chain at ``p``, one step per produced unit, as a sparse
    matrix ``P[from, to]``. States: ``full(0..i-1)``, ``sampling``,
    ``probation(0..k-1)``, ``burst(0..b-1)``."""
    from scipy import sparse

    i, k, b, f = plan.i, plan.probation, plan.burst_units, plan.f
    s, pr0, bu0 = _layout(plan)
    n = bu0 + b
    q = 1.0 - p
    hit_to = bu0 if b else (pr0 if k else 0)
    rows, cols, vals = [], [], []

    def add(r, c, v):
        r, c, v = np.broadcast_arrays(np.atleast_1d(r), np.atleast_1d(c),
                                      np.atleast_1d(np.asarray(v, dtype=float)))
        rows.append(r), cols.append(c), vals.append(v)

    j = np.arange(i)
    add(j, np.where(j + 1 < i, j + 1, s), q)
    add(j, 0, p)
    add(s, s, 1.0 - f * p)
    add(s, hit_to, f * p)
    if k:
        j = np.arange(k)
        add(pr0 + j, pr0 + j, 1.0 - f)
        add(pr0 + j, np.where(j + 1 < k, pr0 + j + 1, s), f * q)
        add(pr0 + j, 0, f * p)
    if b:
        j = np.arange(b)
        add(bu0 + j, np.where(j + 1 < b, bu0 + j + 1, pr0), q)
        add(bu0 + j, 0, p)
    return sparse.csr_matrix((np.concatenate(vals), (np.concatenate(rows),
                                                     np.concatenate(cols))), shape=(n, n))


def _sum_doubling(P, steps: int) -> np.ndarray:
    """``sum_{t < steps} e0 P^t`` by binary powers of the dense matrix."""
    n = P.shape[0]
    y = np.zeros(n)
    y[0] = 1.0
    total = np.zeros(n)
    power, partial = P, np.eye(n)  # P^(2^j) and sum_{t < 2^j} P^t
    m = steps
    while m:
        if m & 1:
            total += y @ partial
            y = y @ power
        m >>= 1
        if m:
            partial = partial + partial @ power
            power = power @ power
    return total


def _sum_stepping(mats, steps: int) -> np.ndarray:
    """The same sums for several chains at once, one unit at a time."""
    from scipy import sparse

    n = mats[0].shape[0]
    step = sparse.block_diag([m.T for m in mats], format="csr")
    x = np.zeros(n * len(mats))
    x[::n] = 1.0
    total = np.zeros_like(x)
    for _ in range(steps):
        total += x
        x = step @ x
    return total.reshape(len(mats), n)


def _propagate(plan: CspPlan, p: np.ndarray, steps: int, method: str = "auto"):
    """Expected units inspected and units produced under sampling in the first
    ``steps`` units, starting in ``full(0)``; one entry per level of ``p``.

    ``method``: ``doubling`` (dense binary powers, about ``2 log2(steps)``
    products of ``n x n`` matrices), ``stepping`` (one sparse product per
    unit) or ``auto`` (whichever :func:`_doubling_pays` expects to be faster).
    """
    mats = [transition_matrix(plan, float(x)) for x in p]
    n = mats[0].shape[0]
    if method == "auto":
        method = "doubling" if _doubling_pays(n, steps) else "stepping"
    if method == "doubling":
        totals = np.array([_sum_doubling(m.toarray(), steps) for m in mats])
    elif method == "stepping":
        totals = _sum_stepping(mats, steps)
    else:
        raise InputError(f"method ({method}) must be one of: auto, doubling, stepping")
    s, _, bu0 = _layout(plan)
    weight = np.ones(n)
    weight[s:bu0] = plan.f
    return totals @ weight, totals[:, s:bu0].sum(axis=1)


# --- notation -----------------------------------------------------------------------

_KEYS = {"csp1": ("i", "f"), "csp2": ("i", "f", "k"), "csp3": ("i", "f", "k", "burst")}
_EXAMPLE = {"csp1": "csp1: i=38,f=1/10", "csp2": "csp2: i=38,f=1/10,k=38",
            "csp3": "csp3: i=38,f=1/10,k=38,burst=4"}


def parse_csp(pairs: dict, text: str, option: str, scheme: str) -> CspPlan:
    """A CSP plan from notation pairs (``f`` as 0.1, 1/10 or 10%)."""
    allowed = _KEYS[scheme]
    unknown = sorted(set(pairs) - set(allowed))
    if unknown:
        raise InputError(f"{option} ({text!r}): unknown key {unknown[0]!r} for {scheme}; "
                         f"allowed: {', '.join(allowed)} (for example \"{_EXAMPLE[scheme]}\")")
    for key in ("i", "f"):
        if key not in pairs:
            raise InputError(f"{option} ({text!r}) lacks {key}; write for example "
                             f"\"{_EXAMPLE[scheme]}\"")
    i = parse_count(pairs["i"], f"{option} i", minimum=1, maximum=MAX_I)
    f = parse_f(pairs["f"], f"{option} f")
    k = parse_count(pairs["k"], f"{option} k", minimum=1, maximum=MAX_I) \
        if "k" in pairs else None
    burst = parse_count(pairs["burst"], f"{option} burst", minimum=1, maximum=1000) \
        if "burst" in pairs else None
    return make_plan(scheme, i=i, f=f, k=k, burst=burst)


# --- design ---------------------------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class CspDesign:
    """A designed CSP plan.

    Attributes
    ----------
    plan : CspPlan
    aoql, aoql_p : float
        Its AOQL and where it occurs.
    limit : float
        The AOQL limit asked for.
    process_average, afi_process_average : float or None
        The process average given and the plan's AFI there.
    searched : str
        What was searched (``i``, ``f`` or ``i and f``).
    evaluations : int
        AOQL evaluations the search made.
    candidates : tuple of dict
        With ``minimize='afi'``: the smallest ``i`` of each ``f`` and its AFI.
    """

    plan: CspPlan
    aoql: float
    aoql_p: float
    limit: float
    process_average: float | None = None
    afi_process_average: float | None = None
    searched: str = "i"
    evaluations: int = 0
    candidates: tuple = field(default_factory=tuple)

    def as_dict(self) -> dict:
        out = {**self.plan.to_dict(), "aoql": self.aoql, "aoql_p": self.aoql_p}
        if self.process_average is not None:
            out["afi_process_average"] = self.afi_process_average
        return out


def _smallest_i(scheme, f, limit, k, burst, counter):
    """Smallest ``i`` whose AOQL is at most ``limit``.

    The AOQL is non-increasing in ``i`` (module notes), so a bisection between
    an ``i`` that fails and one that meets the limit is exact. The bracket
    starts from a guess (the AOQL falls roughly like ``1/i``: the guess is
    ``64 AOQL(64) / limit``) and is widened by factors of 5/4 upwards or 2
    downwards until its ends fail and meet.
    """
    def aoql(i):
        counter[0] += 1
        return make_plan(scheme, i=i, f=f, k=k, burst=burst).aoql()[0]

    if aoql(1) <= limit:
        return 1
    guess = min(MAX_I, max(2, math.ceil(64 * aoql(64) / limit)))
    if aoql(guess) <= limit:
        lo, hi = max(1, guess // 2), guess
        while lo > 1 and aoql(lo) <= limit:
            lo, hi = max(1, lo // 2), lo
    else:
        lo, hi = guess, min(MAX_I, math.ceil(1.25 * guess))
        while aoql(hi) > limit:
            if hi == MAX_I:
                raise Infeasible(f"no clearance number up to {MAX_I:,} keeps the AOQL at or "
                                 f"below {limit:.6g} with f = {format_f(f)}", {"i_max": MAX_I})
            lo, hi = hi, min(MAX_I, math.ceil(1.25 * hi))
    while hi - lo > 1:  # aoql(lo) > limit >= aoql(hi)
        mid = (lo + hi) // 2
        if aoql(mid) <= limit:
            hi = mid
        else:
            lo = mid
    return hi


def _smallest_f(scheme, i, limit, fractions, k, burst, counter):
    """Smallest ``f`` of ``fractions`` whose AOQL is at most ``limit`` (AOQL
    non-increasing in ``f``)."""
    fs = sorted(set(fractions))

    def aoql(f):
        counter[0] += 1
        return make_plan(scheme, i=i, f=f, k=k, burst=burst).aoql()[0]

    if aoql(fs[-1]) > limit:
        raise Infeasible(f"even f = {format_f(fs[-1])} gives an AOQL of {aoql(fs[-1]):.6g} "
                         f"with i = {i}, above {limit:.6g}; raise i or inspect every unit",
                         {"f": fs[-1], "aoql": aoql(fs[-1])})
    lo, hi = -1, len(fs) - 1  # fs[hi] meets the limit; fs[lo] does not (or none)
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if aoql(fs[mid]) <= limit:
            hi = mid
        else:
            lo = mid
    return fs[hi]


def design_csp(*, scheme: str, aoql: float, f: float | None = None, i: int | None = None,
               fractions=None, minimize: str | None = None,
               process_average: float | None = None, k: int | None = None,
               burst: int | None = None) -> CspDesign:
    """Design a CSP plan whose AOQL does not exceed ``aoql``.

    * ``f`` given: the smallest clearance number ``i``;
    * ``i`` given: the smallest ``f`` of ``fractions`` (default :data:`FRACTIONS`);
    * ``minimize='afi'``: over ``fractions``, the ``(i, f)`` with the least AFI
      at ``process_average`` (the smallest ``i`` of each ``f``, see the module
      notes).

    ``k`` (CSP-2/3) defaults to ``i``; ``burst`` (CSP-3) to 4.
    """
    if not (isinstance(aoql, float) and 0 < aoql < 1):
        raise InputError(f"--aoql ({aoql}) must be a fraction above 0 and below 1")
    if process_average is not None and not 0 < process_average < 1:
        raise InputError(f"--process-average ({process_average}) must be a fraction above 0 "
                         "and below 1")
    fracs = tuple(FRACTIONS if not fractions else fractions)
    counter = [0]
    if minimize is not None:
        return _least_afi(scheme, aoql, process_average, fracs, k, burst, counter)
    if (f is None) == (i is None):
        raise InputError("give --f (to find the smallest i) or --i (to find the smallest f), "
                         "not both and not neither")
    if f is not None:
        ii = _smallest_i(scheme, f, aoql, k, burst, counter)
        plan, searched = make_plan(scheme, i=ii, f=f, k=k, burst=burst), "i"
    else:
        ff = _smallest_f(scheme, i, aoql, fracs, k, burst, counter)
        plan, searched = make_plan(scheme, i=i, f=ff, k=k, burst=burst), "f"
    value, at = plan.aoql()
    afi = float(plan.afi(process_average)) if process_average is not None else None
    return CspDesign(plan=plan, aoql=value, aoql_p=at, limit=aoql,
                     process_average=process_average, afi_process_average=afi,
                     searched=searched, evaluations=counter[0])


def _least_afi(scheme, limit, process_average, fractions, k, burst, counter):
    if process_average is None:
        raise InputError("--minimize afi needs --process-average (the fraction nonconforming "
                         "the line usually runs at)")
    rows, best = [], None
    for f in sorted(set(fractions)):
        i = _smallest_i(scheme, f, limit, k, burst, counter)
        plan = make_plan(scheme, i=i, f=f, k=k, burst=burst)
        afi = float(plan.afi(process_average))
        rows.append({"i": i, "f": f, "afi": afi})
        if best is None or afi < best[1] - 1e-15:
            best = (plan, afi)
    plan, afi = best
    value, at = plan.aoql()
    return CspDesign(plan=plan, aoql=value, aoql_p=at, limit=limit,
                     process_average=process_average, afi_process_average=afi,
                     searched="i and f", evaluations=counter[0], candidates=tuple(rows))


# --- on the line ------------------------------------------------------------------------

def parse_history(text: str, option: str = "--history") -> tuple[Mark, ...]:
    """Unit results ``ok``, ``bad`` or ``-``, separated by commas, spaces or
    new lines (lines starting with ``#`` are comments)."""
    marks = []
    lines = [ln.split("#", 1)[0] for ln in str(text).splitlines()]
    for token in " ".join(lines).replace(",", " ").split():
        try:
            marks.append(Mark(token.lower()))
        except ValueError:
            raise InputError(f"{option}: unit {len(marks) + 1} ({token!r}) must be ok, bad "
                             "or - (passed without inspection)") from None
    return tuple(marks)


@dataclass(frozen=True, kw_only=True)
class _Line:
    phase: Phase
    count: int        # conforming units so far in the phase's clearing count
    since_full: int   # units since the last unit of a 100 % phase (systematic picks)


def _advance(plan: CspPlan, st: _Line, mark: Mark, unit: int) -> _Line:
    """The state after one unit."""
    full = st.phase in (Phase.FULL, Phase.BURST)
    if full and mark is Mark.PASSED:
        raise InputError(f"--history: unit {unit} ('-') was passed without inspection while "
                         f"the plan required every unit inspected ({st.phase.value} phase)")
    if mark is Mark.PASSED:
        return _Line(phase=st.phase, count=st.count, since_full=st.since_full + 1)
    if mark is Mark.BAD:
        if st.phase is Phase.SAMPLING and plan.burst_units:
            return _Line(phase=Phase.BURST, count=0, since_full=0)
        if st.phase is Phase.SAMPLING and plan.probation:
            return _Line(phase=Phase.PROBATION, count=0, since_full=st.since_full + 1)
        return _Line(phase=Phase.FULL, count=0, since_full=0)
    goal = {Phase.FULL: plan.i, Phase.BURST: plan.burst_units,
            Phase.PROBATION: plan.probation}.get(st.phase)
    if goal is None:
        return _Line(phase=st.phase, count=0, since_full=st.since_full + 1)
    if st.count + 1 < goal:
        return _Line(phase=st.phase, count=st.count + 1,
                     since_full=0 if full else st.since_full + 1)
    after = Phase.PROBATION if st.phase is Phase.BURST else Phase.SAMPLING
    return _Line(phase=after, count=0, since_full=0 if full else st.since_full + 1)


@dataclass(frozen=True, kw_only=True)
class CspNext:
    """Where the line stands and which units to inspect next.

    Attributes
    ----------
    units, inspected, found : int
        Units in the history, units inspected, nonconforming units found.
    phase : Phase
    inspect_every_unit : bool
        The current phase inspects every unit.
    more_to_clear : int or None
        Conforming units still needed to leave the phase (100 % phase: of
        ``i`` in a row; burst: of the burst; probation: inspected units of
        ``k``); None under plain sampling.
    next_units : tuple of int
        Unit numbers (1 = the first unit of the history) of the next
        :data:`SHOWN` units to inspect if every one of them is conforming.
    selection : str
        How units are chosen under sampling: ``random`` or ``systematic``.
    seed : int or None
    reason : str
    """

    units: int
    inspected: int
    found: int
    phase: Phase
    inspect_every_unit: bool
    more_to_clear: int | None
    next_units: tuple
    selection: str
    seed: int | None
    reason: str

    def as_dict(self) -> dict:
        return {"units": self.units, "inspected": self.inspected, "found": self.found,
                "phase": self.phase.value, "inspect_every_unit": self.inspect_every_unit,
                "more_to_clear": self.more_to_clear, "next_units": list(self.next_units),
                "selection": self.selection, "seed": self.seed, "reason": self.reason}


def _draws(seed: int, start: int, count: int) -> np.ndarray:
    """Uniform numbers for units ``start .. start + count - 1``; unit ``u``'s
    number depends only on ``seed`` and ``u`` (blocks of 4096 units)."""
    out = np.empty(count)
    pos = 0
    while pos < count:
        unit = start + pos
        block, off = divmod(unit, 4096)
        take = min(4096 - off, count - pos)
        out[pos:pos + take] = np.random.default_rng([seed, block]).random(4096)[off:off + take]
        pos += take
    return out


def next_units(plan: CspPlan, history, *, seed: int | None = None,
               systematic: bool = False) -> CspNext:
    """Replay ``history`` (marks or text) and say what to inspect next.

    Under sampling a unit is inspected when its uniform number (from ``seed``
    and the unit number) is below ``f``; with ``systematic`` (``f = 1/m``),
    every ``m``-th unit counted from the last unit inspected under a 100 %
    phase.
    """
    marks = parse_history(history) if isinstance(history, str) else \
        tuple(Mark(m) for m in history)
    m = None
    if systematic:
        m = round(1.0 / plan.f)
        if 1.0 / m != plan.f:
            raise InputError(f"--systematic needs f = 1/m for a whole m (f = {plan.f!r})")
        if seed is not None:
            raise InputError(f"--seed ({seed}) does not apply with --systematic")
    elif seed is None:
        raise InputError("--seed is required for a random choice of units (or use "
                         "--systematic when f = 1/m)")
    st = _Line(phase=Phase.FULL, count=0, since_full=0)
    for n, mark in enumerate(marks, start=1):
        st = _advance(plan, st, mark, n)
    inspected = sum(mk is not Mark.PASSED for mk in marks)
    found = sum(mk is Mark.BAD for mk in marks)
    picks = _schedule(plan, st, len(marks) + 1, seed, m)
    every = st.phase in (Phase.FULL, Phase.BURST)
    goal = {Phase.FULL: plan.i, Phase.BURST: plan.burst_units,
            Phase.PROBATION: plan.probation}.get(st.phase)
    more = None if goal is None else goal - st.count
    return CspNext(units=len(marks), inspected=inspected, found=found, phase=st.phase,
                   inspect_every_unit=every, more_to_clear=more, next_units=tuple(picks),
                   selection="systematic" if m else "random",
                   seed=seed, reason=_reason(plan, st, more))


def _schedule(plan, st, first, seed, m):
    """The next :data:`SHOWN` unit numbers to inspect, every one conforming."""
    picks, unit = [], first
    while len(picks) < SHOWN:
        if st.phase in (Phase.FULL, Phase.BURST):
            skip = 0
        elif m is not None:  # the unit with since_full + 1 a multiple of m
            skip = (m - 1 - st.since_full) % m
        else:
            skip = _next_pick(seed, unit, plan.f)
        st = _Line(phase=st.phase, count=st.count, since_full=st.since_full + skip)
        unit += skip
        picks.append(unit)
        st = _advance(plan, st, Mark.OK, unit)
        unit += 1
    return picks


def _next_pick(seed, start, f) -> int:
    """Units from ``start`` before the next one whose uniform number is below ``f``."""
    gap, chunk = 0, 4096
    while True:
        hits = np.flatnonzero(_draws(seed, start + gap, chunk) < f)
        if hits.size:
            return gap + int(hits[0])
        gap += chunk


def _reason(plan, st, more) -> str:
    if st.phase is Phase.FULL:
        return (f"100 % inspection: {st.count} of {plan.i} consecutive conforming units so "
                f"far; {more} more clear it and sampling at f = {format_f(plan.f)} begins")
    if st.phase is Phase.BURST:
        return (f"burst after a nonconforming unit: inspect every unit; {more} more conforming "
                "units and sampling continues on probation; a nonconforming one restores "
                "100 % inspection")
    if st.phase is Phase.PROBATION:
        return (f"sampling on probation: {more} more conforming inspected units and sampling "
                "goes on as before; a nonconforming one restores 100 % inspection")
    then = "100 % inspection" if not plan.probation else (
        "a burst of inspection" if plan.burst_units else "probation")
    return (f"sampling: inspect a fraction {format_f(plan.f)} of the units; a nonconforming "
            f"unit found sends the line to {then}")


# --- the families ------------------------------------------------------------------------

def _parser(scheme):
    return lambda pairs, text, option: parse_csp(pairs, text, option, scheme)


_DESC = {"csp1": "continuous sampling CSP-1 (Dodge 1943)",
         "csp2": "continuous sampling CSP-2 (Dodge and Torrey 1951)",
         "csp3": "continuous sampling CSP-3 (Dodge and Torrey 1951)"}

#: One :class:`Family` record per plan of this module (see :func:`lotwise.families.base.family`).
FAMILIES = {name: Family(name=name, plan_class=cls, parse=_parser(name),
                         cases="lotwise.validation.csp_cases:validation_cases",
                         description=_DESC[name])
            for name, cls in _CLASSES.items()}
