"""Skip-lot plans, Perry's SkSP-2 [1]_: inspect only a fraction of the
lots once a supplier has a clean record.

Rule, with a *reference plan* (any lot-by-lot plan, e.g. single sampling),
a *clearance number* ``i`` and a *sampling fraction* ``f``:

1. Start with normal inspection: every lot is inspected with the
   reference plan.
2. When ``i`` consecutive lots have been accepted, switch to skipping
   inspection: each lot is inspected with probability ``f`` (chosen at
   random); lots not inspected are accepted.
3. When an inspected lot is rejected, return to normal inspection.

With ``P`` the reference plan's acceptance probability, the long-run
fraction of lots accepted and the average fraction of lots inspected are

    ``Pa = (f P + (1 - f) P^i) / (f + (1 - f) P^i)``,
    ``F = f / (f + (1 - f) P^i)``.

Rectifying inspection (rejected lots screened) follows from these: lots not
inspected leave as they came, the others as under the reference plan, so
``AOQ = (1 - F) p + F AOQ_ref`` and ``ATI = F ATI_ref``;
:mod:`lotwise.analysis.rectifying` uses these through the plan's hooks. The average
sample per lot is ``F n_ref``.

The skip-lot rule assumes a supplier with a proven record, lots of the same
product produced under the same conditions, and the reference plan
inspecting every characteristic the contract calls for.

References
----------
.. [1] R. L. Perry, *Journal of Quality Technology* 5(3) (1973) 123-130
   (the paper that introduced SkSP-2).
.. [2] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 13.

Examples
--------
A supplier of machined brackets has passed "sample 80, accept on 2" for
months; receiving proposes to inspect one lot in four after 4 clean lots.
At 1 % nonconforming:

>>> from lotwise.core.types import Scope
>>> from lotwise.families.single import SinglePlan
>>> s = SkipLotPlan(reference=SinglePlan(n=80, c=2), i=4, f=0.25)
>>> round(s.pa(0.01, "binomial", Scope()), 4), round(s.fraction_inspected(0.01, "binomial", Scope()), 3)
(0.9866, 0.287)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from lotwise.core.types import Scope, lot_counts
from lotwise.core.quantities import InputError, format_level, format_pct
from lotwise.families.base import Family, Plan

__all__ = ["SkipLotPlan", "parse_skip", "FAMILY"]

_TOL = 1e-12


def _combine(P, i, f):
    P = np.clip(np.asarray(P, dtype=float), 0.0, 1.0)
    Pi = np.power(P, i)
    den = f + (1.0 - f) * Pi
    pa = (f * P + (1.0 - f) * Pi) / den
    F = f / den
    return np.clip(pa, 0.0, 1.0), np.clip(F, 0.0, 1.0)


def _out(x):
    x = np.asarray(x, dtype=float)
    return float(x) if x.ndim == 0 else x


@dataclass(frozen=True, kw_only=True)
class SkipLotPlan(Plan):
    """SkSP-2 over a reference plan: clearance number ``i``, sampling fraction ``f``."""

    reference: object
    i: int
    f: float

    scheme = "skiplot"
    lot_by_lot = False

    def __post_init__(self):
        if not isinstance(self.i, (int, np.integer)) or self.i < 1:
            raise InputError(f"i ({self.i}) must be a whole number of at least 1")
        if not (isinstance(self.f, (int, float)) and 0 < self.f <= 1):
            raise InputError(f"f ({self.f}) must be a fraction of lots above 0 and at most 1")

    @property
    def n(self) -> int:
        """Sample size of an inspected lot (the reference plan's)."""
        return self.reference.max_sample

    varying_sample = True

    @property
    def max_sample(self) -> int:
        return int(self.reference.max_sample)

    def audit_parts(self):
        return self.reference, (self.i, self.f)

    def notation(self) -> str:
        ref = self.reference.notation().split(": ", 1)[-1]
        return f"skiplot: {ref},i={self.i},f={self.f!r}"

    @property
    def label(self) -> str:
        return f"SkSP-2 i={self.i}, f={self.f:g} over {self.reference.label}"

    def _ref(self, p, model, scope, rounding):
        if model == "hypergeometric":
            return self.reference.pa_count(lot_counts(p, scope.lot_size, rounding), scope)
        return self.reference.pa(p, model, scope)

    def pa(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Long-run fraction of lots accepted at quality level(s) ``p``."""
        return _out(_combine(self._ref(p, model, scope, rounding), self.i, self.f)[0])

    def pa_count(self, d, scope: Scope):
        return _out(_combine(self.reference.pa_count(d, scope), self.i, self.f)[0])

    def fraction_inspected(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Average fraction ``F`` of lots inspected at quality level(s) ``p``."""
        return _out(_combine(self._ref(p, model, scope, rounding), self.i, self.f)[1])

    def fraction_inspected_count(self, d, scope: Scope):
        return _out(_combine(self.reference.pa_count(d, scope), self.i, self.f)[1])

    def asn(self, p, model: str, scope: Scope, rounding: str = "nearest"):
        """Average units sampled per lot: ``F`` times the reference plan's ASN."""
        F = self.fraction_inspected(p, model, scope, rounding)
        return _out(np.asarray(F) * np.asarray(self.reference.asn(p, model, scope, rounding)))

    def asn_count(self, d, scope: Scope):
        F = self.fraction_inspected_count(d, scope)
        return _out(np.asarray(F) * np.asarray(self.reference.asn_count(d, scope)))

    # Rectifying inspection: a skipped lot goes on as it is; an inspected one
    # is treated as the reference plan treats it.
    def ati(self, p, model: str, scope: Scope, *, rounding: str = "nearest"):
        return _out(np.asarray(self.fraction_inspected(p, model, scope, rounding))
                    * np.asarray(self.reference.ati(p, model, scope, rounding=rounding)))

    def ati_count(self, d, scope: Scope):
        return _out(np.asarray(self.fraction_inspected_count(d, scope))
                    * np.asarray(self.reference.ati_count(d, scope)))

    def aoq(self, p, model: str, scope: Scope, *, formula: str = "screened",
            rounding: str = "nearest"):
        if model == "hypergeometric":
            return self.aoq_count(lot_counts(p, scope.lot_size, rounding), scope,
                                  formula=formula)
        p = np.asarray(p, dtype=float)
        F = np.asarray(self.fraction_inspected(p, model, scope))
        ref = np.asarray(self.reference.aoq(p, model, scope, formula=formula))
        return _out((1.0 - F) * p + F * ref)

    def aoq_count(self, d, scope: Scope, *, formula: str = "screened"):
        d = np.asarray(d, dtype=float)
        F = np.asarray(self.fraction_inspected_count(d, scope))
        ref = np.asarray(self.reference.aoq_count(d, scope, formula=formula))
        return _out((1.0 - F) * d / scope.lot_size + F * ref)

    def to_dict(self) -> dict:
        return {"scheme": "skiplot", "i": int(self.i), "f": float(self.f),
                "reference": self.reference.to_dict()}


def parse_skip(text: str, option: str = "--skip-lot") -> tuple[int, float]:
    """Read ``"i=4,f=0.25"`` (``f`` may be written ``1/4`` or ``25%``)."""
    from lotwise.families.base import split_notation
    from lotwise.core.quantities import parse_count, parse_fraction

    pairs = split_notation(text, option)
    unknown = sorted(set(pairs) - {"i", "f"})
    if unknown:
        raise InputError(f"{option} ({text!r}): unknown key {unknown[0]!r}; write for example "
                         "\"i=4,f=0.25\"")
    for key in ("i", "f"):
        if key not in pairs:
            raise InputError(f"{option} ({text!r}) lacks {key}; write for example \"i=4,f=0.25\"")
    i = parse_count(pairs["i"], f"{option} i", minimum=1)
    ftext = pairs["f"].strip()
    if "/" in ftext:
        a, _, b = ftext.partition("/")
        try:
            f = float(a) / float(b)
        except (ValueError, ZeroDivisionError):
            raise InputError(f"{option} f ({ftext}) must be a fraction such as 0.25, 1/4 or "
                             "25%") from None
    else:
        f = parse_fraction(ftext, f"{option} f")
    if not 0 < f <= 1:
        raise InputError(f"{option} f ({ftext}) must be a fraction of lots above 0 and at most 1")
    return i, f


def parse_skiplot(pairs: dict, text: str, option: str) -> SkipLotPlan:
    from lotwise.families.single import parse_single

    ref = {k: v for k, v in pairs.items() if k not in ("i", "f")}
    skip = {k: v for k, v in pairs.items() if k in ("i", "f")}
    if set(skip) != {"i", "f"}:
        raise InputError(f"{option} ({text!r}) needs i and f, for example "
                         "\"skiplot: n=80, c=2, i=4, f=0.25\"")
    i, f = parse_skip(",".join(f"{k}={v}" for k, v in skip.items()), option)
    return SkipLotPlan(reference=parse_single(ref, text, option), i=i, f=f)


FAMILY = Family(
    name="skiplot", plan_class=SkipLotPlan, parse=parse_skiplot, keys_hint=("f",),
    description="SkSP-2 skip-lot inspection over a reference plan",
)
