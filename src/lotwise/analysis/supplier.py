"""The supplier's side: how often its lots will be rejected, and what tighter
targets cost.

A supplier negotiating an AQL and an RQL wants to know how many of its lots a
plan will reject at its real process average. That average is known only
from the inspection counts, so it is uncertain. :class:`Posterior` holds a
beta posterior for the process fraction nonconforming: with ``x``
nonconforming items in ``m`` inspected and the Jeffreys prior
``Beta(1/2, 1/2)`` [1]_ (the default; ``Beta(1, 1)``, the uniform prior, on
request) it is ``Beta(x + 1/2, m - x + 1/2)``.

:func:`rejection_outlook` gives, for a plan:

* the predictive probability that a lot is rejected, ``E[1 - Pa(p)]`` over
  the posterior. Lots come from the process, so the sample count is
  binomial whatever the lot size (the type B OC curve). For a single plan
  the predictive count is beta-binomial and the probability is a finite
  sum; for other plan types it is a composite Gauss-Legendre quadrature
  (288 points) on the posterior's probability scale (``p = B^{-1}(u; a, b)``),
  within about 1e-10 of the exact sum on single plans;
* the same at the point estimate (the plug-in answer), for comparison;
* the expected number of rejected lots per year for a delivery rate, with
  a predictive interval (the number rejected is binomial given ``p``,
  mixed over the posterior).

The run rules (:func:`side_runs`, :func:`monotone_runs`) look for a shift or a
trend in a supplier's lot history, as ``lotwise records`` applies them; with
:func:`run_p_value` and :func:`trend_p_value` they say how often a stable
process would show as much.

:func:`tradeoff` designs a grid of candidate AQL/RQL pairs and shows both
sides the price of tighter targets: the sample size (the buyer's cost), the
consumer's risk the plan really gives (the buyer's protection) and the
supplier's expected rejection rate at its process average. Tightening the
RQL at a fixed AQL never shrinks the sample: every plan meeting the tighter
RQL also meets the looser one, so the smallest sample can only grow.

JSON
----
``lotwise supplier --json``: ``{"plan", "posterior": {"prior", "a", "b",
"nonconforming", "inspected", "estimate", "mean", "interval": {"lower",
"upper", "probability"}}, "p_reject_predictive", "p_reject_at_estimate",
"method", "deliveries_per_year", "rejected_per_year": {"expected", "lower",
"upper", "probability"} or null, "supplier", "part", "lots_in_records"}``.
``lotwise tradeoff --json``: ``{"alpha", "beta", "lot_size", "model",
"process_average", "posterior", "lots_in_records", "supplier", "part",
"deliveries_per_year", "rows": [{"aql", "rql", "ratio", "n", "c",
"alpha_actual", "beta_actual", "supplier_p_reject",
"supplier_p_reject_predictive", "rejected_per_year", "full_inspection",
"reason"}], "csv", "plot"}``.

References
----------
.. [1] L. D. Brown, T. T. Cai and A. DasGupta, "Interval estimation for a
   binomial proportion", *Statistical Science* 16 (2001), 101-133 (the
   Jeffreys prior and interval).

Examples
--------
A fastener supplier's last 40 lots showed 14 nonconforming in 3,200 units
inspected; the buyer proposes n = 80, c = 2 and receives 52 lots a year:

>>> from lotwise.families.single import SinglePlan
>>> post = Posterior.from_counts(14, 3200)
>>> out = rejection_outlook(SinglePlan(n=80, c=2), post, deliveries_per_year=52)
>>> round(out.p_reject, 4), round(out.p_reject_at_estimate, 4)
(0.0068, 0.0054)
>>> round(out.rejected_per_year, 2), out.rejected_interval
(0.35, (0, 2))
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core import kernels as oc
from lotwise.core.types import Scope
from lotwise.core.quantities import InputError, Infeasible, parse_level

__all__ = ["PRIORS", "Posterior", "Outlook", "rejection_outlook", "rejection_at",
           "parse_levels", "TradeoffRow", "tradeoff", "RUN_LENGTH", "TREND_LENGTH", "RUN_RULES",
           "side_runs", "monotone_runs", "side_probabilities", "run_p_value", "run_p_values",
           "trend_p_value"]

#: Priors by name: ``name -> (a0, b0, description)``.
PRIORS = {
    "jeffreys": (0.5, 0.5, "Jeffreys prior Beta(1/2, 1/2)"),
    "uniform": (1.0, 1.0, "uniform prior Beta(1, 1)"),
}



def _nodes():
    """Composite Gauss-Legendre rule on the probability scale ``u`` in (0, 1):
    24 points on each of 12 panels that shrink geometrically towards both
    ends, where the beta quantile ``p(u)`` turns steep."""
    edges = [0.0, 1e-8, 1e-6, 1e-4, 1e-2, 0.1, 0.5, 0.9, 0.99, 1 - 1e-4, 1 - 1e-6, 1 - 1e-8,
             1.0]
    x, w = np.polynomial.legendre.leggauss(24)
    us, ws = [], []
    for lo, hi in zip(edges[:-1], edges[1:]):
        us.append(lo + (hi - lo) * (x + 1.0) / 2.0)
        ws.append(w * (hi - lo) / 2.0)
    return np.concatenate(us), np.concatenate(ws)


_U, _W = _nodes()


@dataclass(frozen=True, kw_only=True)
class Posterior:
    """Beta posterior ``Beta(a, b)`` of a process fraction nonconforming."""

    a: float
    b: float
    nonconforming: int
    inspected: int
    prior: str = "jeffreys"

    @classmethod
    def from_counts(cls, nonconforming: int, inspected: int, prior: str = "jeffreys"):
        if prior not in PRIORS:
            raise InputError(f"--prior ({prior}) must be one of: {', '.join(PRIORS)}")
        if inspected < 1:
            raise InputError(f"inspected ({inspected}) must be at least 1")
        if not 0 <= nonconforming <= inspected:
            raise InputError(f"nonconforming ({nonconforming}) must be between 0 and the "
                             f"number inspected ({inspected})")
        a0, b0, _ = PRIORS[prior]
        return cls(a=nonconforming + a0, b=inspected - nonconforming + b0,
                   nonconforming=nonconforming, inspected=inspected, prior=prior)

    @property
    def prior_text(self) -> str:
        return PRIORS[self.prior][2]

    @property
    def estimate(self) -> float:
        """The observed fraction ``x / m`` (the plug-in process average)."""
        return self.nonconforming / self.inspected

    @property
    def mean(self) -> float:
        return self.a / (self.a + self.b)

    def quantile(self, q):
        return special.betaincinv(self.a, self.b, q)

    def interval(self, probability: float = 0.95) -> tuple[float, float]:
        """Equal-tailed credible interval."""
        t = (1.0 - probability) / 2.0
        return float(self.quantile(t)), float(self.quantile(1.0 - t))

    def expect(self, func):
        """``E[func(p)]`` by Gauss-Legendre quadrature on the probability scale."""
        p = self.quantile(_U)
        return float(np.sum(_W * np.asarray(func(p), dtype=float)))

    def as_dict(self, probability: float = 0.95) -> dict:
        lo, hi = self.interval(probability)
        return {"prior": self.prior_text, "a": self.a, "b": self.b,
                "nonconforming": self.nonconforming, "inspected": self.inspected,
                "estimate": self.estimate, "mean": self.mean,
                "interval": {"lower": lo, "upper": hi, "probability": probability}}


def _beta_binomial_cdf(c: int, n: int, a: float, b: float) -> float:
    """``P(X <= c)`` for ``X ~ BetaBinomial(n, a, b)`` (a finite sum in logs)."""
    if c >= n:
        return 1.0
    k = np.arange(0, c + 1, dtype=float)
    logp = (special.gammaln(n + 1.0) - special.gammaln(k + 1.0) - special.gammaln(n - k + 1.0)
            + special.betaln(k + a, n - k + b) - special.betaln(a, b))
    top = float(np.max(logp))
    return float(min(1.0, math.exp(top) * np.sum(np.exp(logp - top))))


@dataclass(frozen=True, kw_only=True)
class Outlook:
    """Result of :func:`rejection_outlook`."""

    plan: object
    posterior: Posterior
    p_reject: float
    p_reject_at_estimate: float
    method: str
    deliveries_per_year: int | None = None
    rejected_per_year: float | None = None
    rejected_interval: tuple | None = None
    interval_probability: float = 0.90

    def as_dict(self) -> dict:
        d = {"plan": self.plan.to_dict() | {"label": self.plan.label},
             "posterior": self.posterior.as_dict(),
             "p_reject_predictive": self.p_reject,
             "p_reject_at_estimate": self.p_reject_at_estimate,
             "method": self.method,
             "deliveries_per_year": self.deliveries_per_year,
             "rejected_per_year": None}
        if self.deliveries_per_year is not None:
            d["rejected_per_year"] = {
                "expected": self.rejected_per_year,
                "lower": self.rejected_interval[0], "upper": self.rejected_interval[1],
                "probability": self.interval_probability}
        return d


def rejection_outlook(plan, posterior: Posterior, *, deliveries_per_year: int | None = None,
                      interval: float = 0.90) -> Outlook:
    """Predictive rejection probability of ``plan`` for lots of the process
    described by ``posterior``, and rejected lots per year.

    The count of rejected lots in a year is ``Binomial(L, 1 - Pa(p))`` given
    ``p``; its predictive interval is equal-tailed at ``interval`` (whole
    lots, so it covers at least that probability).
    """
    scope = Scope()
    pa = lambda p: plan.pa(p, "binomial", scope)  # noqa: E731
    rule = plan.count_rule()
    if rule is not None:
        p_acc = _beta_binomial_cdf(rule[1], rule[0], posterior.a, posterior.b)
        method = "beta-binomial (exact finite sum)"
    else:
        p_acc = posterior.expect(pa)
        method = "Gauss-Legendre quadrature over the posterior (288 points)"
    p_rej = min(1.0, max(0.0, 1.0 - p_acc))
    plug = 1.0 - float(pa(posterior.estimate))
    out = dict(plan=plan, posterior=posterior, p_reject=p_rej, p_reject_at_estimate=plug,
               method=method, interval_probability=interval)
    if deliveries_per_year is not None:
        L = int(deliveries_per_year)
        q = 1.0 - np.asarray(pa(posterior.quantile(_U)), dtype=float)  # rejection at the nodes

        def cdf(r):
            r = np.asarray(r, dtype=float)
            vals = np.where(r[..., None] >= L, 1.0,
                            oc.pa_binomial(L, np.minimum(r[..., None], L), q))
            return np.sum(_W * vals, axis=-1)

        def quant(target):
            lo, hi = -1, L
            while hi - lo > 1:
                mid = (lo + hi) // 2
                if float(cdf(mid)) >= target - 1e-12:
                    hi = mid
                else:
                    lo = mid
            return hi

        t = (1.0 - interval) / 2.0
        out.update(deliveries_per_year=L, rejected_per_year=L * p_rej,
                   rejected_interval=(quant(t), quant(1.0 - t)))
    return Outlook(**out)


def rejection_at(plan, process_average: float, *, per_unit: bool = False,
                 deliveries_per_year: int | None = None) -> dict:
    """Share of a supplier's lots ``plan`` rejects at a known process average.

    Lots come from the process, so the sample count is binomial whatever the
    lot size (the type B OC curve; Poisson for nonconformities per unit); a
    variables plan uses its own exact OC. This is the plug-in figure of
    :func:`rejection_outlook` (``p_reject_at_estimate``) and the
    ``supplier_p_reject`` of :func:`tradeoff`. A continuous sampling plan
    has no lots to reject: :class:`InputError`.

    Returns
    -------
    dict
        ``label``, ``notation``, ``scheme``, ``pa``, ``p_reject`` and
        ``rejected_per_year`` (``deliveries_per_year * p_reject``, or None).
    """
    if plan.evaluation == "flow":
        raise InputError(f"--plan ({plan.label}) is a continuous sampling plan: it passes "
                         "units, not lots, so no lot is rejected")
    if plan.attribute_plan:
        model = "poisson" if per_unit else "binomial"
        pa = float(plan.pa(process_average, model, Scope(per_unit=per_unit)))
    else:
        if per_unit:
            raise InputError(f"--plan ({plan.label}) judges a fraction nonconforming; "
                             "nonconformities per unit do not apply")
        model = plan.exact_model
        pa = float(plan.pa(process_average))
    p_rej = min(1.0, max(0.0, 1.0 - pa))
    return {"label": plan.label, "notation": plan.notation(), "scheme": plan.scheme,
            "model": model, "pa": pa, "p_reject": p_rej,
            "rejected_per_year": (None if deliveries_per_year is None
                                  else deliveries_per_year * p_rej)}


# --- ranges and lists of levels -----------------------------------------------

_RANGE = re.compile(r"^\s*(?P<start>[^.:]+(?:\.[^.:]+)?)\s*\.\.\s*(?P<stop>[^:]+?)\s*"
                    r"(?::\s*(?P<step>.+?))?\s*$")


def parse_levels(text: str, option: str, *, limit: int = 200) -> list[float]:
    """Quality levels from a list ``1%,2%,3%``, a range ``1%..3%:0.5%`` (start,
    stop and step, both ends included) or a mix ``0.65%,1%..2%:0.5%``.

    Each level is written as for ``--aql`` (``0.01``, ``1%``, ``250ppm``).
    The result is sorted, without repeats.

    >>> parse_levels("1%..3%:0.5%", "--aql")
    [0.01, 0.015, 0.02, 0.025, 0.03]
    """
    if text is None or not str(text).strip():
        raise InputError(f"{option} is required: a level, a list such as 1%,2%,3% or a range "
                         "such as 1%..3%:0.5%")
    out: list[float] = []
    for item in str(text).split(","):
        item = item.strip()
        if not item:
            continue
        if ".." in item:
            m = _RANGE.match(item)
            if not m or m.group("step") is None:
                raise InputError(f"{option} ({item!r}) must be a range written start..stop:step, "
                                 "for example 1%..3%:0.5%")
            a = parse_level(m.group("start"), f"{option} start")
            b = parse_level(m.group("stop"), f"{option} stop")
            s = parse_level(m.group("step"), f"{option} step")
            if b < a:
                raise InputError(f"{option} ({item!r}): the stop ({m.group('stop')}) must not be "
                                 f"below the start ({m.group('start')})")
            count = int(math.floor((b - a) / s + 1e-9)) + 1
            if count > limit:
                raise InputError(f"{option} ({item!r}) gives {count} levels; at most {limit}")
            # Round to 12 significant figures so 0.01 + 2 * 0.005 prints as 0.02.
            out.extend(float(f"{a + k * s:.12g}") for k in range(count))
        else:
            out.append(parse_level(item, option))
        if len(out) > limit:
            raise InputError(f"{option} ({text!r}) gives more than {limit} levels")
    if not out:
        raise InputError(f"{option} ({text!r}) holds no level")
    return sorted(set(out))


# --- the trade-off grid -----------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class TradeoffRow:
    """One candidate pair of targets and its plan (``plan`` None when no plan
    meets them; ``reason`` says why)."""

    aql: float
    rql: float
    plan: object = None
    alpha_actual: float | None = None
    beta_actual: float | None = None
    p_reject: float | None = None
    p_reject_predictive: float | None = None
    rejected_per_year: float | None = None
    full_inspection: bool = False
    reason: str = ""

    @property
    def ratio(self) -> float:
        return self.rql / self.aql

    @property
    def n(self):
        return None if self.plan is None else self.plan.n

    @property
    def c(self):
        return None if self.plan is None else self.plan.c

    def as_dict(self) -> dict:
        return {"aql": self.aql, "rql": self.rql, "ratio": self.ratio, "n": self.n,
                "c": self.c, "alpha_actual": self.alpha_actual,
                "beta_actual": self.beta_actual, "supplier_p_reject": self.p_reject,
                "supplier_p_reject_predictive": self.p_reject_predictive,
                "rejected_per_year": self.rejected_per_year,
                "full_inspection": self.full_inspection, "reason": self.reason}


def tradeoff(aqls, rqls, *, alpha: float = 0.05, beta: float = 0.10,
             lot_size: int | None = None, model: str | None = None,
             process_average: float | None = None, posterior: Posterior | None = None,
             deliveries_per_year: int | None = None, max_pairs: int = 2000) -> list:
    """Design every pair ``aql < rql`` of the grid and price it for both sides.

    The plan is the smallest single plan meeting both risks
    (:func:`lotwise.families.single.design_single`, exact model by default).
    The supplier's rejection rate is ``1 - Pa(process average)`` on the type
    B curve (lots from the process); with a ``posterior`` also the
    predictive rate. Pairs with ``rql <= aql`` are left out.
    """
    from lotwise.analysis.audit import risks_under
    from lotwise.families.single import design_single

    pairs = [(a, r) for a in aqls for r in rqls if r > a]
    if not pairs:
        raise InputError("--rql: no level of the grid is above any --aql level; nothing to "
                         "design")
    if len(pairs) > max_pairs:
        raise InputError(f"--aql/--rql give {len(pairs)} pairs; at most {max_pairs}")
    if process_average is None and posterior is not None:
        process_average = posterior.estimate
    rows = []
    cache: dict = {}
    for a, r in pairs:
        try:
            d = design_single(aql=a, rql=r, alpha=alpha, beta=beta, lot_size=lot_size,
                              model=model)
        except Infeasible as exc:
            rows.append(TradeoffRow(aql=a, rql=r, reason=str(exc)))
            continue
        risk = risks_under(d.plan, d.targets, d.scope, d.model)
        key = (d.n, d.c)
        if key not in cache:
            pr = pp = per_year = None
            if process_average is not None:
                pr = 1.0 - float(d.plan.pa(process_average, "binomial", Scope()))
            if posterior is not None:
                o = rejection_outlook(d.plan, posterior)
                pp = o.p_reject
            if deliveries_per_year is not None:
                base = pp if pp is not None else pr
                per_year = None if base is None else deliveries_per_year * base
            cache[key] = (pr, pp, per_year)
        pr, pp, per_year = cache[key]
        rows.append(TradeoffRow(aql=a, rql=r, plan=d.plan, alpha_actual=risk.alpha,
                                beta_actual=risk.beta, p_reject=pr, p_reject_predictive=pp,
                                rejected_per_year=per_year, full_inspection=d.full_inspection))
    return rows


# --- run rules: shifts and trends in a lot history ------------------------------------

#: Lots in a row on one side of the centre line that make a run signal.
RUN_LENGTH = 8
#: Lots in a row each above (or each below) the one before that make a trend signal.
TREND_LENGTH = 6
#: The run rules by key (common practice, no source).
RUN_RULES = {
    "run": f"{RUN_LENGTH} or more lots in a row on one side of the centre line",
    "trend": f"{TREND_LENGTH} or more lots in a row each rising, or each falling",
}


def _stretches(code, group, minimum: int):
    """Maximal stretches of equal non-zero ``code`` within a ``group`` (both
    arrays in the order of the lots, each group contiguous): ``(start, length,
    sign)`` of those at least ``minimum`` long."""
    code = np.asarray(code, dtype=np.int8)
    group = np.asarray(group)
    m = code.size
    if m == 0:
        empty = np.zeros(0, dtype=np.int64)
        return empty, empty, empty.astype(np.int8)
    new = np.ones(m, dtype=bool)
    new[1:] = (code[1:] != code[:-1]) | (group[1:] != group[:-1])
    starts = np.flatnonzero(new)
    lengths = np.diff(np.r_[starts, m])
    keep = (code[starts] != 0) & (lengths >= minimum)
    return starts[keep], lengths[keep], code[starts[keep]]


def side_runs(found, sample, centre, group, minimum: int = RUN_LENGTH):
    """Runs of lots on one side of the centre line.

    Lot ``i`` lies above the line when its fraction ``found / sample`` exceeds
    ``centre`` (the group's process average), below when it falls short; a
    lot on the line ends a run. Returns ``(start, length, side)`` of every run
    of at least ``minimum`` lots (``side`` +1 above, -1 below), indices into
    the lots.

    >>> s, n, side = side_runs([0, 3, 4, 5, 6, 5, 4, 3, 3, 0], [80] * 10, 0.03, [0] * 10,
    ...                        minimum=8)
    >>> s.tolist(), n.tolist(), side.tolist()
    ([1], [8], [1])
    """
    found = np.asarray(found, dtype=float)
    sample = np.asarray(sample, dtype=float)
    expected = np.asarray(centre, dtype=float) * sample
    tol = 1e-9 * np.maximum(expected, 1.0)
    side = np.where(found > expected + tol, 1, np.where(found < expected - tol, -1, 0))
    return _stretches(side, group, minimum)


def monotone_runs(values, group, minimum: int = TREND_LENGTH):
    """Lots in a row each strictly above (or below) the one before: ``(start,
    length, direction)`` of every such stretch of at least ``minimum`` lots
    (``direction`` +1 rising, -1 falling); a tie ends a stretch.

    >>> s, n, d = monotone_runs([0.01, 0.0, 0.01, 0.02, 0.03, 0.04, 0.05, 0.0], [0] * 8)
    >>> s.tolist(), n.tolist(), d.tolist()
    ([1], [6], [1])
    """
    values = np.asarray(values, dtype=float)
    group = np.asarray(group)
    if values.size < 2:
        empty = np.zeros(0, dtype=np.int64)
        return empty, empty, empty.astype(np.int8)
    step = np.sign(np.diff(values)).astype(np.int8)
    step[group[1:] != group[:-1]] = 0  # no step across groups
    starts, lengths, direction = _stretches(step, group[1:], max(minimum - 1, 1))
    return starts, lengths + 1, direction  # k steps join k + 1 lots


def side_probabilities(sample, centre):
    """``(below, above)``: the probability that a lot of ``sample`` units from a
    stable process at ``centre`` lies below (above) the centre line, its count
    being binomial."""
    n_all = np.asarray(sample, dtype=float)
    n, inv = np.unique(n_all, return_inverse=True)  # once per distinct sample size
    p = float(centre)
    mean = p * n
    tol = 1e-9 * np.maximum(mean, 1.0)
    below_max = np.ceil(mean - tol) - 1.0  # largest count below the line
    at_most = np.floor(mean + tol)          # largest count not above it
    below = np.where(below_max < 0, 0.0, oc.pa_binomial(n, np.maximum(below_max, 0.0), p))
    above = 1.0 - np.asarray(oc.pa_binomial(n, np.minimum(at_most, n), p), dtype=float)
    return np.clip(below, 0.0, 1.0)[inv], np.clip(above, 0.0, 1.0)[inv]


def run_p_value(below, above, length: int) -> float:
    """An upper bound on the probability that a stable process shows a run of
    ``length`` or more lots on one side of its centre line anywhere in a
    history whose lots lie below (above) the line with probabilities
    ``below`` (``above``): the expected number of such runs, summed over
    both sides -- for each lot, the probability that a run starts there (the
    lot before is not on that side, or there is none) and its first
    ``length`` lots all lie on that side. The chance of at least one run is at
    most that expectation (Markov's inequality), and close to it when small.

    >>> round(run_p_value([0.5] * 8, [0.5] * 8, 8), 9)  # 2 * 0.5**8: one window
    0.0078125
    >>> round(run_p_value([0.5] * 9, [0.5] * 9, 8), 9)  # 2 * (0.5**8 + 0.5 * 0.5**8)
    0.01171875
    """
    return run_p_values(below, above, [length])[0]


def run_p_values(below, above, lengths) -> list:
    """:func:`run_p_value` for each of ``lengths`` (the logarithms summed once)."""
    sides = []
    for q in (np.asarray(below, dtype=float), np.asarray(above, dtype=float)):
        with np.errstate(divide="ignore"):
            sides.append((np.r_[0.0, np.cumsum(np.log(q))], np.r_[1.0, 1.0 - q[:-1]]))
    out = []
    for length in lengths:
        total = 0.0
        for s, start in sides:
            if s.size - 1 < length:
                continue
            w = np.exp(s[length:] - s[:-length])  # all `length` lots on the side
            total += float(np.sum(w * start[:w.size]))
        out.append(min(1.0, total))
    return out


def trend_p_value(lots: int, length: int) -> float:
    """An upper bound on the probability that ``lots`` lots of a stable process
    hold ``length`` or more in a row each rising, or each falling: each of the
    ``lots - length + 1`` windows is strictly rising with probability at most
    ``1 / length!`` when the lots' fractions are exchangeable (lots of one
    sample size; ties only lower it), either way twice that (Boole's inequality).

    >>> round(trend_p_value(60, 6), 4)  # 2 * 55 / 720
    0.1528
    """
    if lots < length:
        return 0.0
    return min(1.0, 2.0 * (lots - length + 1) / math.factorial(length))
