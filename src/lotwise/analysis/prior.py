"""The supplier's history as a prior: posterior risks of any plan.

Lots from one supplier differ: each lot comes from the process at its own
fraction nonconforming ``p``. A beta distribution ``Beta(a, b)`` describes
how ``p`` varies from lot to lot (the *prior* of the next lot). It is either
stated (``--prior "beta: a=2,b=98"``) or fitted to the supplier's lot
records, and with it a plan's risks can be read the other way round: not
"how often is a lot at the RQL accepted" but "how many accepted lots are
worse than the RQL".

Model
-----
Given its ``p`` a lot is a sample of the process, so the count in a sample
of ``n`` is binomial whatever the lot size (the type B OC curve, ``Pa(p)``).
Over the prior the count ``X`` is beta-binomial::

    P(X = d) = C(n, d) B(a + d, b + n - d) / B(a, b),
    E[p | X = d] = (a + d) / (a + b + n).

Posterior risks of a plan (:func:`posterior_risks`)
---------------------------------------------------
``p_reject``
    the predictive probability of rejecting the next lot, ``1 - E[Pa(p)]``;
``consumer_risk``
    ``P(p > RQL | accepted)``: the share of accepted lots worse than the RQL;
``producer_risk``
    ``P(p <= AQL | rejected)``: the share of rejected lots that were good;
``expected_left``
    with a lot size ``N``: the expected number of nonconforming items left in
    an accepted lot among the units the plan did not inspect,
    ``E[left | accepted]`` (for a single plan ``(N - n) E[p | accepted]``;
    other plans count what each outcome leaves: later stages not inspected,
    skipped lots). Without a lot size: per unit of the remainder,
    ``E[p | accepted]``, the expected fraction nonconforming among the units
    an accepted lot still holds (given ``p`` an uninspected unit is
    nonconforming with probability ``p`` whatever the sample showed).

A conditional risk is ``None`` when its condition has probability 0 (a plan
that never accepts has no accepted lots).

For a single plan ``Pa(p)`` is a binomial tail, so every expectation is a
finite beta-binomial sum computed exactly::

    E[Pa 1{p > r}]        = sum_{d <= c} P(X = d) (1 - I_r(a + d, b + n - d)),
    E[(1 - Pa) 1{p <= q}] = sum_{d > c} P(X = d) I_q(a + d, b + n - d),
    E[p Pa]               = sum_{d <= c} P(X = d) (a + d) / (a + b + n),

with ``I`` the regularised incomplete beta function (terms whose probability
is below 1e-18 of the largest on their side are left out; the dropped mass is
below ``n`` 1e-18 of the sum). Every plan that sentences a lot on the counts
in its own sample (double, multiple, sequential) is summed the same way
through the plan interface (:func:`count_posterior`): it looks at most at
the first ``M`` units, and given ``k`` nonconforming among them it accepts
with ``pa_count(k)`` in a lot of ``M``, so ``Pa(p) = sum_k Bin(M, p)(k)
pa_count(k)``. Chain, skip-lot and variables plans (whose ``Pa`` depends on
other lots or on measurements) go through their ``pa(p)`` (and ``aoq(p)``):
adaptive Gauss-Legendre quadrature on the prior's probability scale
``u = I_p(a, b)`` (so the beta density's end singularities disappear), split
at the AQL and RQL, panels graded towards both ends and halved until the
two-halves sum agrees with the whole-panel one within ``tol`` times the
panel's width, or within ``tol`` 1e-4 where doubles cannot resolve ``u``
any finer (``tol`` = 1e-10 absolute for each expectation by default; the sum
of the accepted estimates is reported). A variables plan whose OC curve is
itself simulated gets the starting panels only, 10 points each, since
halving cannot converge on a simulated curve. Chain and skip-lot plans'
``Pa(p)`` is the long-run acceptance at a steady ``p``: for them the prior
is read as the supplier's steady level.

The prior from records (:func:`fit_prior`)
------------------------------------------
Maximum likelihood of the beta-binomial over every lot's sample size and
count found (weights ``w_i`` multiply each lot's log-likelihood; with a
half-life ``h`` in lots, the lot ``k`` lots older than the newest has weight
``0.5 ** (k / h)``). Newton's method on ``(log a, log b)`` with analytic
derivatives, started from the method of moments. Standard errors of ``a``
and ``b`` come from the observed information of the (weighted)
log-likelihood.

The fit is reported with ``a``, ``b``, the mean ``a / (a + b)``, the 90 %
range of lot quality (the prior's 5 % and 95 % quantiles) and two checks:

* goodness of fit: Pearson's chi-square on the counts found. Each lot's
  predictive distribution is the fitted beta-binomial for its own sample
  size; the expected numbers of lots with 0, 1, 2, ... found are summed over
  the lots and classes are merged from the left until each expects at least
  5 lots (the last class is "or more"; Cochran's rule, common practice).
  Degrees of freedom: classes - 1 - 2 (two fitted parameters); with fewer
  than one degree of freedom the test is not available. The lots count
  unweighted here, so with a half-life a drifting supplier may fail it;
* lot-to-lot variation: the likelihood-ratio statistic ``2 (l_max - l_binom)``
  of the beta-binomial against one binomial for all lots (``a + b`` to
  infinity), with the p-value of its boundary null distribution, half a
  chi-square with one degree of freedom [2]_.

The history is **too short to carry a prior** when

* it holds fewer than 10 lots (with a half-life: when the weights add up to
  less than 10), or
* its likelihood is *flat*: the log-likelihood of one binomial for every lot
  (the limit ``a + b -> infinity``) is within 1.92 -- half the 95 % point of
  chi-square with one degree of freedom -- of the maximum. The 95 %
  likelihood interval of ``a + b`` then reaches infinity: the counts do not
  show how much lot quality varies, and the posterior risks hinge on that
  spread. A history without a single nonconforming item is always flat.

References
----------
.. [1] D. A. Griffiths, "Maximum likelihood estimation for the beta-binomial
   distribution and an application to the household distribution of the
   total number of cases of a disease", *Biometrics* 29 (1973), 637-648.
.. [2] S. G. Self and K.-Y. Liang, "Asymptotic properties of maximum
   likelihood estimators and likelihood ratio tests under nonstandard
   conditions", *JASA* 82 (1987), 605-610.

Examples
--------
A buyer's records put the lot-to-lot fraction nonconforming at Beta(2, 98)
(mean 2 %); the plan is n = 80, c = 2:

>>> from lotwise.families.single import SinglePlan
>>> r = posterior_risks(SinglePlan(n=80, c=2), BetaPrior(a=2, b=98), aql=0.01, rql=0.05)
>>> round(r.p_reject, 4), round(r.consumer_risk, 4), round(r.producer_risk, 4)
(0.2349, 0.0072, 0.0192)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from lotwise.core.quantities import InputError

__all__ = ["BetaPrior", "parse_prior", "log_rising_excess", "beta_binomial_logpmf",
           "PosteriorRisks", "posterior_risks", "half_life_weights", "PriorFit", "fit_prior",
           "MIN_LOTS", "FLAT_DROP", "DEFAULT_TOL"]

#: Fewest lots (or total weight) a history needs to carry a prior.
MIN_LOTS = 10
#: Half the 95 % point of chi-square with one degree of freedom (1.9207...).
FLAT_DROP = float(special.chdtri(1, 0.05)) / 2.0
#: Absolute tolerance of each expectation computed by quadrature.
DEFAULT_TOL = 1e-10
#: Terms below this fraction of the largest on their side are left out of the sums.
_TRIM = 1e-18


@dataclass(frozen=True, kw_only=True)
class BetaPrior:
    """``Beta(a, b)``: how the fraction nonconforming varies from lot to lot.

    ``source`` says where it came from (``"given"`` or ``"records"``).
    """

    a: float
    b: float
    source: str = "given"

    def __post_init__(self):
        for key in ("a", "b"):
            v = getattr(self, key)
            if isinstance(v, bool) or not isinstance(v, (int, float, np.floating, np.integer)) \
                    or not math.isfinite(v) or v <= 0:
                raise InputError(f"prior {key} ({v}) must be a positive finite number")

    @property
    def mean(self) -> float:
        return self.a / (self.a + self.b)

    @property
    def sd(self) -> float:
        s = self.a + self.b
        return math.sqrt(self.a * self.b / (s * s * (s + 1.0)))

    def quantile(self, q):
        return special.betaincinv(self.a, self.b, q)

    def cdf(self, p):
        return special.betainc(self.a, self.b, p)

    def interval(self, prob: float = 0.90) -> tuple[float, float]:
        """Central range holding ``prob`` of the lots."""
        t = (1.0 - prob) / 2.0
        return float(self.quantile(t)), float(self.quantile(1.0 - t))

    def notation(self) -> str:
        return f"beta: a={self.a:.6g},b={self.b:.6g}"

    def to_dict(self) -> dict:
        lo, hi = self.interval(0.90)
        return {"a": float(self.a), "b": float(self.b), "mean": self.mean, "sd": self.sd,
                "range_90": {"lower": lo, "upper": hi}, "source": self.source}


def parse_prior(text, option: str = "--prior") -> BetaPrior:
    """Read ``"beta: a=2,b=98"`` (the ``beta:`` prefix may be left out)."""
    from lotwise.families.base import split_notation

    if not isinstance(text, str) or not text.strip():
        raise InputError(f"{option} ({text!r}) must be written as \"beta: a=2,b=98\"")
    if ":" in text and text.split(":", 1)[0].strip().lower() != "beta":
        raise InputError(f"{option} ({text!r}): the prior must be a beta distribution, "
                         "written as \"beta: a=2,b=98\"")
    pairs = split_notation(text, option)
    unknown = sorted(set(pairs) - {"a", "b"})
    if unknown or set(pairs) != {"a", "b"}:
        what = f"unknown key {unknown[0]!r}" if unknown else "a and b are both needed"
        raise InputError(f"{option} ({text!r}): {what}; write \"beta: a=2,b=98\"")
    vals = {}
    for key in ("a", "b"):
        try:
            v = float(pairs[key].replace("_", ""))
        except ValueError:
            v = float("nan")
        if not (math.isfinite(v) and v > 0):
            raise InputError(f"{option} {key} ({pairs[key]}) must be a positive number")
        vals[key] = v
    return BetaPrior(a=vals["a"], b=vals["b"], source="given")


# --- the beta-binomial --------------------------------------------------------

def log_rising_excess(x: float, kmax: int) -> np.ndarray:
    """``E_x(k) = log((x)_k / x^k) = sum_{j<k} log(1 + j/x)`` for ``k = 0..kmax``.

    With it ``B(a + d, b + n - d) / B(a, b) = mu^d (1 - mu)^(n - d)
    exp(E_a(d) + E_b(n - d) - E_{a+b}(n))``, ``mu = a / (a + b)``: the binomial
    term times a correction, which stays accurate however large ``a + b`` is.
    Log-gamma differences below ``x = 1e5``; a running sum of ``log1p`` above.
    """
    k = np.arange(kmax + 1, dtype=float)
    if x <= 1e5:
        return special.gammaln(x + k) - special.gammaln(x) - k * math.log(x)
    out = np.zeros(kmax + 1)
    if kmax:
        out[1:] = np.cumsum(np.log1p(np.arange(kmax, dtype=float) / x))
    return out


def beta_binomial_logpmf(n: int, a: float, b: float) -> np.ndarray:
    """``log P(X = d)`` for ``d = 0..n``, ``X`` beta-binomial(n, a, b)."""
    n = int(n)
    d = np.arange(n + 1, dtype=float)
    s = a + b
    mu = a / s
    ea, eb, es = log_rising_excess(a, n), log_rising_excess(b, n), log_rising_excess(s, n)
    lc = special.gammaln(n + 1.0) - special.gammaln(d + 1.0) - special.gammaln(n - d + 1.0)
    return (lc + d * math.log(mu) + (n - d) * math.log1p(-mu) + ea + eb[::-1] - es[n])


# --- posterior risks ----------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class PosteriorRisks:
    """A plan's risks over the prior (see the module notes).

    ``left_per`` is ``"lot"`` (a lot size was given) or ``"unit"`` (per unit
    of the remainder); ``method`` says how the expectations were computed and
    ``error_bound`` bounds their absolute error (0 for exact sums, up to
    rounding).
    """

    p_reject: float
    consumer_risk: float | None
    producer_risk: float | None
    expected_left: float
    left_per: str
    method: str
    error_bound: float = 0.0

    def to_json(self) -> dict:
        """The ``posterior`` object of ``check --prior --json``."""
        return {"consumer_risk": self.consumer_risk, "producer_risk": self.producer_risk,
                "p_reject": self.p_reject, "expected_left": self.expected_left}

    def notes(self) -> dict:
        return {"method": self.method, "error_bound": self.error_bound,
                "expected_left_per": self.left_per}


def _trimmed(w):
    """Indices of the terms at least ``_TRIM`` times the largest."""
    if not w.size:
        return np.zeros(0, dtype=np.int64)
    return np.flatnonzero(w >= _TRIM * w.max())


def single_posterior(n: int, c: int, prior: BetaPrior, *, aql=None, rql=None,
                     lot_size=None) -> PosteriorRisks:
    """Exact posterior risks of the single plan ``(n, c)`` (``n = 0``: every lot
    accepted unseen; ``c >= n``: every lot accepted)."""
    a, b = prior.a, prior.b
    n, c = int(n), int(c)
    pmf = np.exp(beta_binomial_logpmf(n, a, b))
    total = pmf.sum()
    d = np.arange(n + 1, dtype=float)
    acc, rej = pmf[:c + 1], pmf[c + 1:]
    p_acc, p_rej = acc.sum() / total, rej.sum() / total
    consumer = producer = None
    if rql is not None and p_acc > 0:
        i = _trimmed(acc)
        tail = special.betaincc(a + d[i], b + n - d[i], rql)
        consumer = float(np.dot(acc[i], tail) / acc.sum())
    if aql is not None and p_rej > 0:
        i = _trimmed(rej) + c + 1
        head = special.betainc(a + d[i], b + n - d[i], aql)
        producer = float(np.dot(pmf[i], head) / rej.sum())
    if p_acc > 0:
        p_mean = float(np.dot(acc, (a + d[:c + 1]) / (a + b + n)) / acc.sum())
    else:
        p_mean = 0.0
    left, per = (p_mean * (lot_size - n), "lot") if lot_size else (p_mean, "unit")
    return PosteriorRisks(p_reject=float(p_rej), consumer_risk=consumer, producer_risk=producer,
                          expected_left=float(left), left_per=per,
                          method="exact beta-binomial sums")


def count_posterior(plan, prior: BetaPrior, *, aql=None, rql=None,
                    lot_size=None) -> PosteriorRisks:
    """Exact posterior risks of a plan that sentences each lot on the counts in
    its own sample (single, double, multiple, sequential).

    Such a plan looks at most at the first ``M`` (``max_sample``) units. Given
    ``k`` nonconforming among those ``M`` the order is exchangeable, so the
    plan accepts with ``pa_count(k)`` in a lot of ``M`` items, and
    ``Pa(p) = sum_k Bin(M, p)(k) pa_count(k)``: every expectation over the
    prior is a beta-binomial sum over ``k``, exactly as for a single plan
    (``E[Pa 1{p > r}] = sum_k P(X_M = k) pa_count(k) (1 - I_r(a + k, b + M - k))``).
    The items left in an accepted lot of ``N`` are those the plan did not
    inspect among the ``M`` (``M aoq_count(k)``, the plan's exact count) plus
    ``(N - M) E[p | k]`` beyond them.
    """
    from lotwise.core.types import Scope

    a, b = prior.a, prior.b
    m = int(plan.max_sample)
    pmf_all = np.exp(beta_binomial_logpmf(m, a, b))
    total = pmf_all.sum()
    k = _trimmed(pmf_all)
    pmf = pmf_all[k] / total
    kf = k.astype(float)
    scope = Scope(lot_size=m)
    pa = np.clip(np.asarray(plan.pa_count(kf, scope), dtype=float), 0.0, 1.0)
    w_acc, w_rej = pmf * pa, pmf * (1.0 - pa)
    p_acc, p_rej = float(w_acc.sum()), float(w_rej.sum())
    consumer = producer = None
    if rql is not None and p_acc > 0:
        consumer = float(np.dot(w_acc, special.betaincc(a + kf, b + m - kf, rql)) / p_acc)
    if aql is not None and p_rej > 0:
        producer = float(np.dot(w_rej, special.betainc(a + kf, b + m - kf, aql)) / p_rej)
    left, per = 0.0, ("lot" if lot_size else "unit")
    if p_acc > 0:
        p_given = (a + kf) / (a + b + m)
        if lot_size:
            inside = m * np.asarray(plan.aoq_count(kf, scope), dtype=float)
            left = float(np.dot(pmf, inside + (lot_size - m) * pa * p_given) / p_acc)
        else:
            left = float(np.dot(w_acc, p_given) / p_acc)
    return PosteriorRisks(p_reject=p_rej / (p_acc + p_rej), consumer_risk=consumer,
                          producer_risk=producer, expected_left=left, left_per=per,
                          method="exact beta-binomial sums over the plan's counts")


_GL_X, _GL_W = np.polynomial.legendre.leggauss(10)
#: A panel whose error estimate is below ``tol * _FLOOR`` is accepted whatever
#: its width (the ends of the probability scale, which doubles cannot resolve).
_FLOOR = 1e-4
#: Initial panel edges on the probability scale, graded towards both ends
#: (where ``p(u)`` turns steep).
_GRADED = (0.0, 1e-12, 1e-8, 1e-5, 1e-3, 0.02, 0.1, 0.3, 0.5, 0.7, 0.9, 0.98,
           1 - 1e-3, 1 - 1e-5, 1 - 1e-8, 1 - 1e-12, 1.0)


def _gl(func, lo, hi, prior):
    """Gauss-Legendre sums of ``func`` over the panels ``[lo, hi]`` on the
    probability scale; returns an array (integrands, panels)."""
    half = (hi - lo) / 2.0
    u = (lo + half)[:, None] + half[:, None] * _GL_X[None, :]
    p = special.betaincinv(prior.a, prior.b, u)
    f = np.asarray(func(p.ravel()), dtype=float).reshape(-1, lo.size, _GL_X.size)
    return (f @ _GL_W) * half[None, :]


def expect(func, prior: BetaPrior, cuts=(), *, tol: float = DEFAULT_TOL,
           max_passes: int = 40, adaptive: bool = True):
    """``E[f(p) 1{p in piece}]`` for each piece between the ``cuts`` (levels).

    ``func(p)`` maps a 1-D array of levels to an array (k, len(p)) of ``k``
    integrands. Adaptive Gauss-Legendre (10 points) on ``u = I_p(a, b)``,
    starting from panels graded towards both ends: each panel's sum is
    compared with the sum over its halves, and a panel is accepted when they
    agree within ``tol`` times its width or within ``tol`` 1e-4 (near
    ``u = 1`` the level ``p(u)`` climbs to 1 within the last few doubles, which
    no halving resolves), so the accepted estimates add up to about ``tol``.
    ``adaptive=False``: the starting panels only (for curves that are
    themselves simulated, where halving cannot converge).

    Returns ``(values, error)``: values has shape (k, len(cuts) + 1); error
    is the sum of the accepted panels' estimates (``nan`` without adaptivity).
    """
    cu = sorted(float(prior.cdf(x)) for x in cuts)
    edges = np.unique(np.concatenate([_GRADED, cu]))
    lo, hi = edges[:-1], edges[1:]
    piece = np.searchsorted(np.asarray(cu), lo, side="right")
    whole = _gl(func, lo, hi, prior)
    out = np.zeros((whole.shape[0], len(cu) + 1))
    if not adaptive:
        for k in range(out.shape[0]):
            np.add.at(out[k], piece, whole[k])
        return out, float("nan")
    err = 0.0
    for pass_no in range(max_passes):
        if not lo.size:
            break
        mid = (lo + hi) / 2.0
        halves = _gl(func, np.concatenate([lo, mid]), np.concatenate([mid, hi]), prior)
        left, right = halves[:, :lo.size], halves[:, lo.size:]
        both = left + right
        e = np.abs(both - whole).max(axis=0)
        done = ((e <= tol * (hi - lo)) | (e <= tol * _FLOOR) | (hi - lo < 1e-15)
                | (pass_no == max_passes - 1))
        for k in range(out.shape[0]):
            np.add.at(out[k], piece[done], both[k, done])
        err += float(e[done].sum())
        keep = ~done
        lo, hi, piece = (np.concatenate([lo[keep], mid[keep]]),
                         np.concatenate([mid[keep], hi[keep]]),
                         np.concatenate([piece[keep], piece[keep]]))
        whole = np.concatenate([left[:, keep], right[:, keep]], axis=1)
    return out, err


def posterior_risks(plan, prior: BetaPrior, *, aql=None, rql=None, lot_size=None,
                    tol: float = DEFAULT_TOL, exact: bool = True) -> PosteriorRisks:
    """Posterior risks of any plan under ``prior`` (see the module notes).

    Parameters
    ----------
    plan : Plan
        Any lot-by-lot plan (single, double, multiple, sequential, chain,
        skip-lot, variables).
    prior : BetaPrior
    aql, rql : float, optional
        Levels for the producer's and consumer's posterior risks (``None``
        leaves that risk out).
    lot_size : int, optional
        For the nonconforming items left in an accepted lot (else per unit).
    tol : float
        Absolute tolerance of each quadrature expectation.
    exact : bool
        Plans sentenced on their own sample's counts by exact sums (False: by
        quadrature of ``pa(p)``, for checking one against the other).
    """
    if exact and plan.attribute_plan and plan.lot_by_lot:
        rule = plan.count_rule()
        if rule is not None:
            return single_posterior(rule[0], rule[1], prior, aql=aql, rql=rql, lot_size=lot_size)
        return count_posterior(plan, prior, aql=aql, rql=rql, lot_size=lot_size)
    return _quadrature_posterior(plan, prior, aql=aql, rql=rql, lot_size=lot_size, tol=tol)


def _quadrature_posterior(plan, prior, *, aql, rql, lot_size, tol) -> PosteriorRisks:
    """Posterior risks by :func:`expect` over the plan's ``pa(p)`` (and, for
    attribute plans with a lot size, its own ``aoq(p)``, which counts what
    each outcome leaves: stages, skipped lots)."""
    from lotwise.core.types import Scope

    scope = Scope(lot_size=lot_size) if lot_size else Scope()
    model = "binomial" if plan.attribute_plan else plan.judging_model(scope)
    use_aoq = bool(plan.attribute_plan and lot_size)

    def func(p):
        pa = np.clip(np.asarray(plan.pa(p, model, scope), dtype=float), 0.0, 1.0)
        rows = [pa, 1.0 - pa, p * pa]
        if use_aoq:
            rows.append(np.asarray(plan.aoq(p, model, scope), dtype=float))
        return np.vstack(rows)

    cuts = [x for x in (aql, rql) if x is not None]
    simulated = str(model).endswith("simulated")
    vals, err = expect(func, prior, cuts, tol=tol, adaptive=not simulated)
    p_acc, p_rej = float(vals[0].sum()), float(vals[1].sum())
    consumer = producer = None
    if rql is not None and p_acc > 0:
        consumer = min(1.0, max(0.0, float(vals[0, -1]) / p_acc))
    if aql is not None and p_rej > 0:
        producer = min(1.0, max(0.0, float(vals[1, 0]) / p_rej))
    left, per = 0.0, ("lot" if lot_size else "unit")
    if p_acc > 0:
        if use_aoq:
            left = float(vals[3].sum()) * lot_size / p_acc
        elif lot_size:
            left = float(vals[2].sum()) / p_acc * (lot_size - plan.max_sample)
        else:
            left = float(vals[2].sum()) / p_acc
    if simulated:
        method = ("Gauss-Legendre rule on the prior's probability scale (the graded starting "
                  "panels, 10 points each, not adaptive: the OC curve itself is simulated, "
                  "which limits the accuracy)")
    else:
        method = (f"adaptive Gauss-Legendre quadrature on the prior's probability scale, "
                  f"tolerance {tol:g}")
    return PosteriorRisks(p_reject=min(1.0, max(0.0, p_rej / (p_acc + p_rej))),
                          consumer_risk=consumer, producer_risk=producer, expected_left=left,
                          left_per=per, method=method, error_bound=err)


# --- the prior from records ---------------------------------------------------

def half_life_weights(lots: int, half_life: float | None) -> np.ndarray:
    """Weights of ``lots`` lots in time order (oldest first): ``0.5 ** (k / h)``
    for the lot ``k`` lots older than the newest (all 1 without a half-life)."""
    if half_life is None:
        return np.ones(lots)
    if not (math.isfinite(half_life) and half_life > 0):
        raise InputError(f"--half-life ({half_life}) must be a positive number of lots")
    age = np.arange(lots - 1, -1, -1, dtype=float)
    return np.exp2(-age / half_life)


@dataclass(frozen=True, kw_only=True)
class PriorFit:
    """A beta prior fitted to lot records (see the module notes).

    ``prior`` is ``None`` when no finite fit exists (a history without a
    nonconforming item); ``usable`` is False when the history is too short
    to carry a prior, with the ``reason``.
    """

    prior: BetaPrior | None
    lots: int
    weight: float
    half_life: float | None
    log_likelihood: float
    log_likelihood_binomial: float
    se_a: float | None
    se_b: float | None
    gof: dict
    usable: bool
    reason: str
    pooled: float

    @property
    def lr_statistic(self) -> float:
        return max(0.0, 2.0 * (self.log_likelihood - self.log_likelihood_binomial))

    @property
    def lr_p_value(self) -> float:
        """Half a chi-square(1) tail (the boundary null of Self and Liang)."""
        return 0.5 * float(special.erfc(math.sqrt(self.lr_statistic / 2.0)))

    def to_dict(self) -> dict:
        out = {"lots": self.lots, "weight": self.weight, "half_life": self.half_life,
               "a": None, "b": None, "se_a": self.se_a, "se_b": self.se_b,
               "mean": self.pooled, "range_90": None,
               "log_likelihood": self.log_likelihood,
               "log_likelihood_binomial": self.log_likelihood_binomial,
               "lot_to_lot": {"test": "likelihood ratio, beta-binomial against one binomial "
                                      "(half chi-square, 1 df)",
                              "statistic": self.lr_statistic, "p_value": self.lr_p_value},
               "goodness_of_fit": self.gof, "usable": self.usable, "reason": self.reason}
        if self.prior is not None:
            d = self.prior.to_dict()
            out.update({"a": d["a"], "b": d["b"], "mean": d["mean"], "range_90": d["range_90"]})
        return out


def _tables(x: float, kmax: int):
    """``E_x(k)``, ``sum_{j<k} 1/(x+j)`` and ``sum_{j<k} 1/(x+j)^2`` for k = 0..kmax."""
    j = np.arange(kmax, dtype=float)
    d1 = np.concatenate([[0.0], np.cumsum(1.0 / (x + j))])
    d2 = np.concatenate([[0.0], np.cumsum(1.0 / (x + j) ** 2)])
    return log_rising_excess(x, kmax), d1, d2


def _loglik(theta, n, x, w, lc, derivs=False):
    """Weighted beta-binomial log-likelihood at ``theta = (log a, log b)``, with
    its gradient and Hessian in ``theta`` when asked."""
    a, b = math.exp(theta[0]), math.exp(theta[1])
    s = a + b
    m = int(n.max())
    ea, da, ta = _tables(a, m)
    eb, db, tb = _tables(b, m)
    es, ds, ts = _tables(s, m)
    mu = a / s
    ll = float(np.dot(w, lc + x * math.log(mu) + (n - x) * math.log1p(-mu)
                      + ea[x] + eb[n - x] - es[n]))
    if not derivs:
        return ll
    ga = float(np.dot(w, da[x] - ds[n]))
    gb = float(np.dot(w, db[n - x] - ds[n]))
    hab = float(np.dot(w, ts[n]))
    haa = float(np.dot(w, ts[n] - ta[x]))
    hbb = float(np.dot(w, ts[n] - tb[n - x]))
    g = np.array([a * ga, b * gb])
    h = np.array([[a * a * haa + a * ga, a * b * hab], [a * b * hab, b * b * hbb + b * gb]])
    return ll, g, h, np.array([[haa, hab], [hab, hbb]])


def _start(n, x, w):
    """Method-of-moments start ``(log a, log b)``."""
    mu = float(np.dot(w, x) / np.dot(w, n))
    p = x / n
    var = float(np.dot(w, (p - mu) ** 2) / w.sum())
    within = mu * (1.0 - mu) * float(np.dot(w, 1.0 / n) / w.sum())
    rho = (var - within) / (mu * (1.0 - mu)) if var > within else 1e-4
    s = min(max(1.0 / max(rho, 1e-12) - 1.0, 0.5), 1e6)
    return np.array([math.log(mu * s), math.log((1.0 - mu) * s)])


def _newton(n, x, w, lc, max_s=1e10):
    """Maximise the log-likelihood: Newton steps (gradient steps where the
    Hessian is not negative definite), halved until the likelihood rises."""
    theta = _start(n, x, w)
    ll, g, h, hab = _loglik(theta, n, x, w, lc, True)
    for _ in range(200):
        try:
            neg_def = np.all(np.linalg.eigvalsh(h) < 0)
            step = -np.linalg.solve(h, g) if neg_def else g / max(1.0, float(np.abs(g).max()))
        except np.linalg.LinAlgError:
            step = g / max(1.0, float(np.abs(g).max()))
        step *= min(1.0, 2.0 / max(float(np.abs(step).max()), 1e-300))
        for _ in range(60):
            trial = theta + step
            new = _loglik(trial, n, x, w, lc)
            if new >= ll - 1e-12 * abs(ll):
                break
            step /= 2.0
        else:
            break
        theta = trial
        ll, g, h, hab = _loglik(theta, n, x, w, lc, True)
        if float(np.abs(step).max()) < 1e-10 or math.exp(theta[0]) + math.exp(theta[1]) > max_s:
            break
    return theta, ll, hab


def fit_prior(sample_sizes, found, *, weights=None, half_life: float | None = None) -> PriorFit:
    """Maximum-likelihood beta prior of the lot fraction nonconforming.

    Parameters
    ----------
    sample_sizes, found : array_like of int
        Each lot's sample size and count found, oldest first.
    weights : array_like, optional
        Each lot's weight (default from ``half_life``, else 1).
    half_life : float, optional
        Half-life in lots (see :func:`half_life_weights`); recorded in the result.
    """
    n_all = np.asarray(sample_sizes, dtype=np.int64)
    x_all = np.asarray(found, dtype=np.int64)
    if n_all.shape != x_all.shape or n_all.ndim != 1:
        raise InputError("sample sizes and counts found must be two lists of equal length")
    if n_all.size and ((n_all < 1).any() or (x_all < 0).any() or (x_all > n_all).any()):
        raise InputError("every lot needs a sample of at least 1 and 0 <= found <= sample")
    lots = int(n_all.size)
    w_all = half_life_weights(lots, half_life) if weights is None else \
        np.asarray(weights, dtype=float)
    weight = float(w_all.sum())
    base = dict(lots=lots, weight=weight, half_life=half_life, se_a=None, se_b=None)
    if lots == 0:
        return PriorFit(prior=None, log_likelihood=0.0, log_likelihood_binomial=0.0, gof={},
                        usable=False, reason="the history holds no lots", pooled=float("nan"),
                        **base)
    # identical lots counted once, with their weights added
    key = n_all * (int(n_all.max()) + 1) + x_all
    uk, inv = np.unique(key, return_inverse=True)
    n = uk // (int(n_all.max()) + 1)
    x = uk % (int(n_all.max()) + 1)
    w = np.bincount(inv, weights=w_all)
    lc = special.gammaln(n + 1.0) - special.gammaln(x + 1.0) - special.gammaln(n - x + 1.0)
    pooled = float(np.dot(w, x) / np.dot(w, n))
    with np.errstate(divide="ignore", invalid="ignore"):
        lb = float(np.dot(w, lc + np.where(x > 0, x * np.log(pooled), 0.0)
                          + np.where(n > x, (n - x) * np.log1p(-pooled), 0.0)))
    if pooled <= 0.0 or pooled >= 1.0:
        what = "no nonconforming item" if pooled <= 0 else "nothing but nonconforming items"
        return PriorFit(prior=None, log_likelihood=lb, log_likelihood_binomial=lb, gof={},
                        usable=False, pooled=pooled,
                        reason=f"the history shows {what}: the likelihood is flat (no "
                               "finite beta fits best)", **base)
    short = _too_few(lots, weight, half_life)
    theta, ll, hab = _newton(n, x, w, lc)
    a, b = math.exp(theta[0]), math.exp(theta[1])
    if a + b > 1e6 and ll - lb <= 1e-6 * max(1.0, abs(ll)):
        # the likelihood rises all the way to the binomial limit: no finite maximum
        return PriorFit(prior=None, log_likelihood=max(ll, lb), log_likelihood_binomial=lb,
                        gof={}, usable=False, pooled=pooled,
                        reason="; ".join(short + [
                            "the likelihood is flat: it is highest for one binomial for every "
                            "lot (a + b without bound), so the records do not show how much "
                            "lot quality varies"]), **base)
    se_a = se_b = None
    try:
        cov = np.linalg.inv(-hab)
        if cov[0, 0] > 0 and cov[1, 1] > 0:
            se_a, se_b = math.sqrt(cov[0, 0]), math.sqrt(cov[1, 1])
    except np.linalg.LinAlgError:
        pass
    prior = BetaPrior(a=a, b=b, source="records")
    gof = goodness_of_fit(n_all, x_all, prior)
    reasons = list(short)
    if ll - lb < FLAT_DROP:
        reasons.append(f"the likelihood is flat: one binomial for every lot is within "
                       f"{max(0.0, ll - lb):.3g} (< {FLAT_DROP:.3g}) of the best fit, so the records do "
                       "not show how much lot quality varies")
    return PriorFit(prior=prior, log_likelihood=ll, log_likelihood_binomial=lb,
                    gof=gof, usable=not reasons, reason="; ".join(reasons), pooled=pooled,
                    **{**base, "se_a": se_a, "se_b": se_b})


def _too_few(lots: int, weight: float, half_life) -> list:
    """The reason a history is too short by its count of lots (or their weight)."""
    if lots >= MIN_LOTS and weight >= MIN_LOTS - 1e-9:
        return []
    counted = f"{lots} lots" if half_life is None else \
        f"{lots} lots weighing {weight:.3g} in all (half-life {half_life:g} lots)"
    return [f"the history holds {counted}; a prior needs at least {MIN_LOTS}"]


def goodness_of_fit(sample_sizes, found, prior: BetaPrior, *, min_expected: float = 5.0) -> dict:
    """Pearson's chi-square of the counts found against the fitted beta-binomial
    (classes merged from the left to at least ``min_expected`` lots; df =
    classes - 3). ``p_value`` is None when fewer than one degree of freedom is left."""
    n = np.asarray(sample_sizes, dtype=np.int64)
    x = np.asarray(found, dtype=np.int64)
    top = int(x.max()) + 1
    expected = np.zeros(top + 1)  # 0..top-1, then "top or more"
    for nn, cnt in zip(*np.unique(n, return_counts=True)):
        pmf = np.exp(beta_binomial_logpmf(int(nn), prior.a, prior.b))
        k = min(top, int(nn) + 1)
        expected[:k] += cnt * pmf[:k]
        expected[top] += cnt * pmf[k:].sum() if k == top else 0.0
    observed = np.bincount(np.minimum(x, top), minlength=top + 1).astype(float)
    exp_c, obs_c, start, labels = [], [], 0, []
    e = o = 0.0
    for k in range(top + 1):
        e += expected[k]
        o += observed[k]
        if e >= min_expected:
            exp_c.append(e); obs_c.append(o); labels.append(start)
            e = o = 0.0
            start = k + 1
    if exp_c:
        exp_c[-1] += e; obs_c[-1] += o
    else:
        exp_c, obs_c, labels = [e], [o], [0]
    exp_c, obs_c = np.array(exp_c), np.array(obs_c)
    stat = float(((obs_c - exp_c) ** 2 / exp_c).sum()) if (exp_c > 0).all() else float("nan")
    df = len(exp_c) - 3
    classes = [{"found_from": int(lo), "found_to": (int(labels[i + 1]) - 1
                                                     if i + 1 < len(labels) else None),
                "observed": int(obs_c[i]), "expected": float(exp_c[i])}
               for i, lo in enumerate(labels)]
    p = float(special.chdtrc(df, stat)) if df >= 1 and math.isfinite(stat) else None
    return {"test": "Pearson chi-square on the counts found (classes of at least "
                    f"{min_expected:g} expected lots, df = classes - 3)",
            "statistic": stat, "df": df, "p_value": p, "classes": classes}
