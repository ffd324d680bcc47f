"""Two-risk design of single sampling plans by attributes, computed exactly.

Find the plan ``(n, c)`` with the smallest sample size ``n`` such that

* ``Pa(AQL) >= 1 - alpha`` (producer's risk met), and
* ``Pa(RQL) <= beta`` (consumer's risk met),

under the chosen model (hypergeometric for a lot of known size, binomial for a
process, Poisson for nonconformities per unit).

Like ``statsmodels``' ``solve_power``, :func:`design_single` takes the same
keywords as the evaluation of a plan and solves for what is left unknown:
both ``n`` and ``c``, ``n`` for a fixed ``c``, or ``c`` for a fixed ``n``.

Method
------
The search relies on two monotonicities of ``Pa`` (see :mod:`lotwise.core.kernels`):
it falls as ``n`` grows and rises with ``c``. For each acceptance number
``c`` let ``n_min(c)`` be the smallest ``n`` meeting the consumer's risk,
found by integer bisection on ``n``. Because ``Pa`` rises with ``c``,
``n_min`` never decreases in ``c``, so the smallest feasible plan is
``(n_min(c*), c*)`` with ``c*`` the smallest acceptance number whose
``n_min`` also meets the producer's risk. The bisections for a block of
acceptance numbers run together as one vectorised search; blocks are taken
in increasing ``c`` until a feasible one appears. No table, nomograph or
float root is involved. When two acceptance numbers tie on ``n`` the
smaller ``c`` is returned; it is then also the smallest ``c`` meeting the
producer's risk at that ``n``, so ``design_single(n=plan.n, ...)`` gives
the same plan back.

With a lot size, fractions become whole counts of nonconforming items,
rounded conservatively for each risk: up at the AQL (``D1 = ceil(AQL N)``),
down at the RQL (``D2 = floor(RQL N)``).

References
----------
.. [1] E. G. Schilling and D. V. Neubauer, 2nd ed. (CRC Press,
    2009), ch. 5 (two-point single plans).
.. [2] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   section 15.2 (design of single sampling plans with specified OC points).

Examples
--------
A buyer and a connector supplier agree AQL 1 % at 5 % producer's risk and
RQL 6 % at 10 % consumer's risk for a continuous process:

>>> d = design_single(aql=0.01, rql=0.06)
>>> (d.n, d.c)
(110, 3)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.families.base import Scope, SinglePlan
from lotwise.core.quantities import InputError, Infeasible, format_level, format_pct

__all__ = ["Targets", "SingleDesign", "design_single", "lot_targets", "min_sample_size"]

_TOL = 1e-12  # slack for floating-point ties at a risk boundary


@dataclass(frozen=True, kw_only=True)
class Targets:
    """Quality levels and risks agreed between buyer and supplier."""

    aql: float
    rql: float
    alpha: float = 0.05
    beta: float = 0.10

    def as_dict(self) -> dict:
        return {"aql": self.aql, "alpha": self.alpha, "rql": self.rql, "beta": self.beta}


def lot_targets(targets: Targets, lot_size: int) -> tuple[int, int]:
    """Whole counts ``(D1, D2)`` of nonconforming items at the AQL (rounded up)
    and at the RQL (rounded down) for a lot of ``lot_size``."""
    return (oc.lot_count(targets.aql, lot_size, "up"), oc.lot_count(targets.rql, lot_size, "down"))


@dataclass(frozen=True, kw_only=True)
class SingleDesign:
    """Result of :func:`design_single`.

    Attributes
    ----------
    plan : SinglePlan
    model : str
        The model the plan was designed under.
    scope : Scope
    targets : Targets
    full_inspection : bool
        True when no sample smaller than the lot meets both risks, so the
        answer is to inspect every item (``n`` equals the lot size).
    lot_counts : tuple of int or None
        ``(D1, D2)`` used under the hypergeometric model.
    """

    plan: SinglePlan
    model: str
    scope: Scope
    targets: Targets
    full_inspection: bool = False
    lot_counts: tuple[int, int] | None = None

    @property
    def n(self) -> int:
        return self.plan.n

    @property
    def c(self) -> int:
        return self.plan.c

    def audit(self):
        """Risks under every applicable model, plan quality levels, statements."""
        from lotwise.analysis.audit import audit_plan

        return audit_plan(self.plan, self.targets, self.scope, model=self.model)

    def __repr__(self) -> str:
        extra = ", 100 % inspection" if self.full_inspection else ""
        return (f"SingleDesign(n={self.n}, c={self.c}, model={self.model!r}, "
                f"lot_size={self.scope.lot_size}{extra})")


class _Kernel:
    """``Pa`` at the AQL and at the RQL for arrays of ``n`` and ``c``."""

    def __init__(self, model: str, targets: Targets, scope: Scope):
        self.model = model
        self.t = targets
        self.N = scope.lot_size
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


def _initial_upper(kernel: _Kernel, c: np.ndarray, beta: float) -> np.ndarray:
    """A first guess at a sample size meeting the consumer's risk for each
    ``c``, from the Poisson approximation; :func:`_n_min` checks it and
    doubles it (up to the cap) where it falls short."""
    lam = special.gammainccinv(c + 1.0, beta)  # Poisson mean with Pa = beta
    guess = np.ceil(1.05 * lam / kernel.t.rql) + 2
    guess = np.maximum(guess, c + 1)
    if kernel.model == "hypergeometric":
        guess = np.minimum(guess, kernel.N)
    return guess.astype(np.int64)


def _n_min(kernel: _Kernel, c: np.ndarray, beta: float, cap: int | None) -> np.ndarray:
    """Smallest ``n`` with ``Pa(RQL; n, c) <= beta`` for each ``c``; ``-1`` where
    none exists up to ``cap`` (or the lot size).

    Integer bisection: ``Pa`` falls in ``n`` (documented in :mod:`lotwise.core.kernels`).
    """
    c = np.asarray(c, dtype=np.int64)
    hi = _initial_upper(kernel, c, beta)
    limit = cap if cap is not None else None
    if kernel.model == "hypergeometric":
        limit = kernel.N if limit is None else min(limit, kernel.N)
    if limit is not None:
        hi = np.minimum(hi, limit)
    ok = kernel.at_rql(hi, c) <= beta + _TOL
    # Grow the bracket where the guess was too small (binomial/poisson only).
    while True:
        grow = ~ok
        if limit is not None:
            grow &= hi < limit
        if not grow.any():
            break
        new = hi[grow] * 2
        if limit is not None:
            new = np.minimum(new, limit)
        hi[grow] = new
        ok[grow] = kernel.at_rql(hi[grow], c[grow]) <= beta + _TOL
    lo = np.minimum(c, hi - 1)  # n = c accepts every lot, so Pa = 1 > beta
    lo = np.maximum(lo, 0)
    # A tighter lower end where the answer is not far below the bracket's top
    # (checked: only a size whose Pa still exceeds beta may serve as ``lo``).
    near = np.maximum(lo, (0.8 * hi).astype(np.int64))
    try_ = ok & (near > lo) & (near < hi)
    if try_.any():
        above = kernel.at_rql(near[try_], c[try_]) > beta + _TOL
        idx = np.flatnonzero(try_)[above]
        lo[idx] = near[idx]
    act = ok & (hi - lo > 1)
    while act.any():
        mid = (lo[act] + hi[act]) // 2
        good = kernel.at_rql(mid, c[act]) <= beta + _TOL
        h, l_ = hi[act], lo[act]
        hi[act] = np.where(good, mid, h)
        lo[act] = np.where(good, l_, mid)
        act = ok & (hi - lo > 1)
    return np.where(ok, hi, -1)


def _c_min(kernel: _Kernel, n: int, alpha: float) -> int:
    """Smallest ``c`` with ``Pa(AQL; n, c) >= 1 - alpha`` (bisection: Pa rises in c)."""
    lo, hi = -1, n  # c = n accepts every lot
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if float(kernel.at_aql(n, mid)) >= 1.0 - alpha - _TOL:
            hi = mid
        else:
            lo = mid
    return hi


def _check_targets(targets: Targets, per_unit: bool) -> None:
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


def design_single(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                  lot_size: int | None = None, model: str | None = None,
                  defects: bool = False, n: int | None = None, c: int | None = None,
                  max_n: int | None = None) -> SingleDesign:
    """Smallest single sampling plan meeting both risks.

    Parameters
    ----------
    aql, rql : float
        Acceptable and rejectable quality levels (fractions nonconforming, or
        nonconformities per unit with ``defects=True``).
    alpha, beta : float
        Producer's risk at the AQL and consumer's risk at the RQL.
    lot_size : int, optional
        Lot size; the default model becomes hypergeometric.
    model : {'hypergeometric', 'binomial', 'poisson'}, optional
        Override of the default (exact) model.
    defects : bool
        Quality levels are nonconformities per unit (Poisson is exact).
    n, c : int, optional
        Fix the sample size (then the smallest ``c`` meeting ``alpha`` is
        found) or the acceptance number (then the smallest ``n``).
    max_n : int, optional
        Largest affordable sample.

    Returns
    -------
    SingleDesign

    Raises
    ------
    Infeasible
        When no plan meets both risks; ``.reachable`` says what can be had.
    InputError
        For malformed arguments.
    """
    scope = Scope(lot_size=lot_size, defects=defects)
    model = scope.check_model(model)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    _check_targets(targets, defects)
    if lot_size is not None and lot_size < 1:
        raise InputError(f"--lot-size ({lot_size}) must be at least 1")
    if n is not None and c is not None:
        raise InputError("--n and --c cannot both be fixed: that is a plan to check, not design")
    if max_n is not None and max_n < 1:
        raise InputError(f"--max-n ({max_n}) must be at least 1")
    if n is not None and lot_size is not None and n > lot_size:
        raise InputError(f"--n ({n}) must not be greater than the lot size ({lot_size})")
    if n is not None and max_n is not None and n > max_n:
        raise InputError(f"--n ({n}) must not be greater than --max-n ({max_n})")

    kernel = _Kernel(model, targets, scope)
    counts = None
    if model == "hypergeometric":
        counts = (kernel.d1, kernel.d2)
        _check_lot(targets, lot_size, counts)

    def result(nn: int, cc: int) -> SingleDesign:
        full = lot_size is not None and nn >= lot_size
        return SingleDesign(plan=SinglePlan(n=int(nn), c=int(cc)), model=model, scope=scope,
                            targets=targets, full_inspection=bool(full), lot_counts=counts)

    cap = max_n
    if lot_size is not None:
        cap = lot_size if cap is None else min(cap, lot_size)

    if n is not None:
        cc = _c_min(kernel, n, alpha)
        b = float(kernel.at_rql(n, cc))
        if b <= beta + _TOL:
            return result(n, cc)
        raise Infeasible(
            f"no acceptance number works with n = {n}: c = {cc} is the smallest that meets "
            f"alpha ({format_pct(alpha)}), and it leaves beta at {format_pct(b)} "
            f"(target {format_pct(beta)})",
            {"n": n, "c": cc, "alpha": 1.0 - float(kernel.at_aql(n, cc)), "beta": b})

    if c is not None:
        nm = int(_n_min(kernel, np.array([c]), beta, cap)[0])
        if nm < 0:
            raise _cap_infeasible(kernel, targets, cap, lot_size, fixed_c=c)
        a = 1.0 - float(kernel.at_aql(nm, c))
        if a <= alpha + _TOL:
            return result(nm, c)
        raise Infeasible(
            f"no sample size works with c = {c}: meeting beta ({format_pct(beta)}) needs "
            f"n >= {nm}, and there alpha is {format_pct(a)} (target {format_pct(alpha)})",
            {"n": nm, "c": c, "alpha": a, "beta": float(kernel.at_rql(nm, c))})

    start, width = 0, 64
    c_limit = None
    if model == "hypergeometric":
        c_limit = kernel.d2  # c >= D2 accepts every lot at the RQL
    if cap is not None:
        c_limit = cap if c_limit is None else min(c_limit, cap)
    while True:
        stop = start + width if c_limit is None else min(start + width, c_limit)
        if stop <= start:
            raise _cap_infeasible(kernel, targets, cap, lot_size)
        cs = np.arange(start, stop, dtype=np.int64)
        nm = _n_min(kernel, cs, beta, cap)
        have = nm >= 0
        feasible = np.zeros_like(have)
        if have.any():
            feasible[have] = kernel.at_aql(nm[have], cs[have]) >= 1.0 - alpha - _TOL
        if feasible.any():
            i = int(np.argmax(feasible))
            return result(int(nm[i]), int(cs[i]))
        if cap is not None and not have[-1]:
            # n_min never decreases in c: beyond a c without any n under the cap
            # there is none either.
            raise _cap_infeasible(kernel, targets, cap, lot_size)
        start, width = stop, width * 2
        if c_limit is None and start > 10_000_000:
            raise Infeasible("no plan found with an acceptance number below 10,000,000; "
                             "the AQL and RQL are too close together")


def _check_lot(targets: Targets, lot_size: int, counts: tuple[int, int]) -> None:
    d1, d2 = counts
    if d2 < 1 or d1 >= d2:
        raise Infeasible(
            f"the lot of {lot_size} is too small to tell the AQL from the RQL: the AQL "
            f"({format_level(targets.aql)}) rounds up to {d1} nonconforming item(s) and the RQL "
            f"({format_level(targets.rql)}) rounds down to {d2}; any plan that meets alpha "
            f"accepts a lot at the RQL at least {format_pct(1 - targets.alpha)} of the time",
            {"lot_counts": {"aql": d1, "rql": d2}, "beta_min": 1.0 - targets.alpha})


def _cap_infeasible(kernel: _Kernel, targets: Targets, cap: int | None, lot_size: int | None,
                    fixed_c: int | None = None) -> Infeasible:
    """What is reachable when no plan fits under the cap on ``n``."""
    if cap is None:
        return Infeasible(f"no sample size meets beta with c = {fixed_c}")
    cc = _c_min(kernel, cap, targets.alpha) if fixed_c is None else fixed_c
    a = 1.0 - float(kernel.at_aql(cap, cc))
    b = float(kernel.at_rql(cap, cc))
    what = "the lot size" if lot_size is not None and cap == lot_size else "--max-n"
    return Infeasible(
        f"no plan with n <= {cap} ({what}) meets both risks; the best at n = {cap} is "
        f"c = {cc}: alpha {format_pct(a)} (target {format_pct(targets.alpha)}), beta "
        f"{format_pct(b)} (target {format_pct(targets.beta)})",
        {"n": cap, "c": cc, "alpha": a, "beta": b})


def min_sample_size(*, c: int, rql: float, beta: float, lot_size: int | None = None,
                    model: str | None = None, defects: bool = False) -> int:
    """Smallest ``n`` with ``Pa(RQL; n, c) <= beta``: the consumer's side alone.

    This is the sample size that shows, with confidence ``1 - beta``, that the
    fraction nonconforming is below ``rql`` when at most ``c`` nonconforming
    items are found (a "confidence/reliability" sample with
    ``rql = 1 - reliability``).

    Examples
    --------
    Accept-on-zero sample for 95 % confidence that at least 95 % conform:

    >>> min_sample_size(c=0, rql=0.05, beta=0.05)
    59
    """
    scope = Scope(lot_size=lot_size, defects=defects)
    model = scope.check_model(model)
    if c < 0:
        raise InputError(f"c ({c}) must be at least 0")
    t = Targets(aql=rql / 2, rql=rql, alpha=0.5, beta=beta)
    kernel = _Kernel(model, t, scope)
    if model == "hypergeometric" and kernel.d2 <= c:
        raise Infeasible(f"a lot of {lot_size} at the RQL holds only {kernel.d2} nonconforming "
                         f"item(s): c = {c} accepts it whatever the sample")
    nm = int(_n_min(kernel, np.array([c]), beta, lot_size)[0])
    if nm < 0:
        raise Infeasible(f"no sample up to the lot size meets beta with c = {c}")
    return nm
