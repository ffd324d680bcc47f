"""Variables sampling plans: accept or reject a lot from measurements.

When the characteristic is measured (a diameter, a force, a resistance) and
is normally distributed, the sample mean ``xbar`` and, if the process
standard deviation is not known, the sample standard deviation ``s`` say
more about the fraction beyond a specification limit than a count of
nonconforming items does; the same protection needs a much smaller sample.

Plans and their exact OC curves
-------------------------------
Write ``z_p`` for the standard normal quantile of ``1 - p`` (the distance of
the limit from the process mean, in standard deviations, when a fraction
``p`` lies beyond it) and ``Phi`` for the standard normal distribution
function.

*k-method, sigma known, one limit* (upper limit ``U``; a lower limit is the
mirror image): accept when ``(U - xbar)/sigma >= k``. Since ``xbar`` is
normal with standard deviation ``sigma/sqrt(n)``,

    ``Pa(p) = Phi(sqrt(n) (z_p - k))``  [1]_, [3]_.

*s-method, sigma unknown, one limit*: accept when ``(U - xbar)/s >= k``.
The statistic ``T = sqrt(n) (U - xbar)/s`` follows a noncentral t
distribution with ``n - 1`` degrees of freedom and noncentrality
``sqrt(n) z_p`` [2]_, [4]_, so

    ``Pa(p) = P(T >= k sqrt(n))``,

computed as ``nctdtr(n - 1, -sqrt(n) z_p, -k sqrt(n))`` (the upper tail of
``T`` is the lower tail of ``-T``, which keeps small ``Pa`` accurate).
:mod:`scipy.special` provides ``nctdtr``; ``scipy.stats`` is not imported.

*k-method, sigma known, two limits* ``L < U``: accept when both
``(U - xbar)/sigma >= k`` and ``(xbar - L)/sigma >= k``. With ``z_U`` and
``z_L`` the distances of the two limits from the mean (in sigma), the
probability is exact from both tails:

    ``Pa = max(0, Phi(sqrt(n)(z_U - k)) + Phi(sqrt(n)(z_L - k)) - 1)``.

A total fraction nonconforming ``p = Phi(-z_U) + Phi(-z_L)`` can be made of
many splits between the tails, so ``Pa`` at a given total ``p`` depends on
where the mean sits (see :func:`pa_known_two`). Convention used here:

* when the tolerance width in sigma, ``d = (U - L)/sigma``, is known (sigma
  and both limits given), the split is fixed by ``p``: the mean sits
  ``delta`` from the middle of the tolerance, with ``delta`` solving
  ``Phi(-(d/2 - delta)) + Phi(-(d/2 + delta)) = p``; the mirror position
  ``-delta`` gives the same ``Pa``, so ``Pa(p)`` is exact and unique. Below
  ``p_min = 2 Phi(-d/2)`` (the centred process) no process state exists;
  the curve is held at its value at ``p_min`` there;
* when it is not known, the *worst case over every position of the mean
  and every tolerance width*: the OC curve is a band whose lower edge is
  the smallest ``Pa`` over all splits of ``p`` (the producer's worst case)
  and whose upper edge the largest (the consumer's worst case). ``pa``
  returns the upper edge unless asked for ``envelope="lower"``; the
  designer meets ``alpha`` on the lower edge and ``beta`` on the upper one.

*Estimate method, sigma unknown, two limits*: the minimum-variance unbiased
estimates of the fractions beyond each limit [2]_,

    ``p_U = I_x(n/2 - 1, n/2 - 1)``, ``x = max(0, 1/2 - Q_U sqrt(n)/(2(n - 1)))``,
    ``Q_U = (U - xbar)/s``

(``I`` the regularised incomplete beta function; likewise ``p_L`` from
``Q_L = (xbar - L)/s``), and the lot is accepted when ``p_U + p_L <= M``,
the maximum allowable estimate. With one limit and ``M`` the estimate at
``Q = k`` this is exactly the s-method (the estimate falls as ``Q``
grows). Its two-limit OC depends on how ``p`` splits between the tails; at
a given split it is exact, a one-dimensional integral over the law of ``s``
(``xbar`` and ``s`` are independent; for each ``s`` the accepted means form
one interval), computed by Gauss-Legendre quadrature with a stated error
bound in :mod:`lotwise.core.twolimit`. The OC at a total ``p`` is the band
over every split, its edges found by a bounded maximisation over the share
of ``p`` beyond the lower limit; ``pa`` returns the upper edge (the
consumer's worst case) unless asked for ``envelope="lower"``, and the
designer meets ``alpha`` on the lower edge and ``beta`` on the upper one.
Model name: ``estimate-exact``.

With sigma known the estimate from one tail is
``Phi(-Q_U sqrt(n/(n - 1)))``, ``Q_U = (U - xbar)/sigma`` (also unbiased).

Every curve assumes a normal distribution of the characteristic and a
process (type B) view: the lot size does not enter. Sampling cannot
guarantee a lot free of nonconforming items; critical characteristics
need 100 % inspection or stricter plans per contract and regulation.

References
----------
.. [1] W. A. Wallis, "Use of variables in acceptance inspection for percent
   defective", in C. Eisenhart, M. W. Hastay and W. A. Wallis (eds.),
   *Selected Techniques of Statistical Analysis*, McGraw-Hill, 1947, ch. 1.
.. [2] G. J. Lieberman and G. J. Resnikoff, "Sampling plans for inspection
   by variables", *Journal of the American Statistical Association* 50
   (1955), 457-516.
.. [3] D. C. Montgomery, *Introduction to Statistical Quality Control*,
   chapter on variables sampling plans.
.. [4] D. B. Owen, "A survey of properties and applications of the
   noncentral t-distribution", *Technometrics* 10 (1968), 445-478.

Examples
--------
Shaft diameters must stay below 25.00 mm. Incoming inspection measures 42
shafts and accepts when ``(25.00 - xbar)/s >= 1.901``. A supplier running
1 % oversize is accepted about 95 % of the time, one running 6 % about
10 % of the time:

>>> plan = VariablesPlan(n=42, k=1.901, sigma="unknown", limit="upper", upper=25.0)
>>> round(float(plan.pa(0.01)), 3), round(float(plan.pa(0.06)), 3)
(0.952, 0.098)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import special

from lotwise.core.quantities import InputError, Infeasible, format_level, format_pct
from lotwise.core.search import check_targets
from lotwise.core.types import Targets
from lotwise.families.base import Family, Option, OptionKind, Plan

__all__ = ['VARIABLES_MODELS', 'VariablesPlan', 'z_upper', 'pa_known', 'pa_unknown',
           'nct_sf_quadrature', 'pa_known_two', 'tail_split', 'estimate_known',
           'estimate_unknown', 'max_estimate_for_k', 'k_for_estimate', 'pa_estimate_two', 'pa_k_two_unknown',
           'VariablesDesign', 'design_variables', 'closed_form_known', 'wallis', 'k_window']


VARIABLES_MODELS = ("normal-known-sigma", "noncentral-t", "estimate-exact", "k-two-limit-exact")
#: The exact band models of two-limit plans with sigma unknown.
TWO_LIMIT_EXACT = ("estimate-exact", "k-two-limit-exact")

_LIMITS = ("upper", "lower", "both")


def z_upper(p):
    """``z_p``: the standard normal quantile of ``1 - p`` (``+inf`` at ``p = 0``)."""
    p = np.clip(np.asarray(p, dtype=float), 0.0, 1.0)
    return -special.ndtri(p)


def _finish(x):
    x = np.clip(x, 0.0, 1.0)
    return float(x) if np.ndim(x) == 0 else x


def pa_known(n, k, p):
    """``Pa`` of the k-method with sigma known, one limit: ``Phi(sqrt(n)(z_p - k))``.

    Vectorised over every argument; ``Pa(0) = 1`` and ``Pa(1) = 0``.
    """
    n, k, p = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (n, k, p)))
    with np.errstate(all="ignore"):
        pa = special.ndtr(np.sqrt(n) * (z_upper(p) - k))
    pa = np.where(p <= 0.0, 1.0, np.where(p >= 1.0, 0.0, pa))
    return _finish(pa)


def pa_unknown(n, k, p):
    """``Pa`` of the s-method with sigma unknown, one limit, from the noncentral t.

    ``P(T >= k sqrt(n))`` with ``T`` noncentral t, ``n - 1`` degrees of
    freedom, noncentrality ``sqrt(n) z_p``; evaluated as the lower tail of
    ``-T`` so that small values keep their relative accuracy, else as one
    minus the lower tail of ``T``. Where ``scipy.special.nctdtr`` gives up
    (NaN, far in a tail), :func:`nct_sf_quadrature` is used. ``n >= 2``.
    """
    n, k, p = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (n, k, p)))
    rn = np.sqrt(n)
    inner = (p > 0.0) & (p < 1.0)
    ps = np.where(inner, p, 0.5)
    nc = rn * z_upper(ps)
    t = k * rn
    with np.errstate(all="ignore"):
        pa = special.nctdtr(n - 1.0, -nc, -t)
        bad = np.isnan(pa)
        if bad.any():
            pa = np.where(bad, 1.0 - special.nctdtr(n - 1.0, nc, t), pa)
            bad = np.isnan(pa)
            if bad.any():
                pa = np.array(pa, dtype=float)
                pa[bad] = nct_sf_quadrature(n[bad] - 1.0, nc[bad], t[bad])
    pa = np.where(p <= 0.0, 1.0, np.where(p >= 1.0, 0.0, pa))
    return _finish(pa)


def nct_sf_quadrature(df, nc, t):
    """``P(T >= t)`` for the noncentral t by quadrature over ``W = sqrt(chi2/df)``:
    ``int Phi(nc - t w) f_W(w) dw`` (400-point Gauss-Legendre over the bulk of
    ``W``, +-14 of its approximate standard deviations ``1/sqrt(2 df)``).
    A fallback for the far tails where :func:`scipy.special.nctdtr` fails."""
    from lotwise.core.twolimit import gauss_legendre

    gx, gw = gauss_legendre(400)  # on [0, 1], computed on first use and cached
    df, nc, t = (np.atleast_1d(np.asarray(a, dtype=float)) for a in (df, nc, t))
    sd = 1.0 / np.sqrt(2.0 * df)
    mode = np.sqrt(np.maximum(df - 1.0, 0.0) / df)
    lo = np.maximum(mode - 14.0 * sd, 0.0)
    hi = mode + 14.0 * sd
    span = hi - lo
    w = lo[:, None] + span[:, None] * gx[None, :]
    with np.errstate(all="ignore"):
        logf = (math.log(2.0) + 0.5 * df[:, None] * np.log(0.5 * df[:, None])
                - special.gammaln(0.5 * df[:, None]) + (df[:, None] - 1.0) * np.log(w)
                - 0.5 * df[:, None] * w * w)
        f = np.where(w > 0, np.exp(logf), 0.0)
    vals = special.ndtr(nc[:, None] - t[:, None] * w) * f
    return np.clip((vals * gw[None, :]).sum(axis=1) * span, 0.0, 1.0)


# --- two limits, sigma known --------------------------------------------------

def _g_known(n, k, z):
    """One-tail acceptance ``Phi(sqrt(n)(z - k))`` for a limit ``z`` sigma from the mean."""
    with np.errstate(all="ignore"):
        return special.ndtr(np.sqrt(n) * (z - k))


def _two_from_z(n, k, zu, zl):
    return np.maximum(_g_known(n, k, zu) + _g_known(n, k, zl) - 1.0, 0.0)


def tail_split(p, width):
    """Distances ``(z_U, z_L)`` of the limits from the mean, in sigma, for a
    total fraction ``p`` when the tolerance is ``width`` sigma wide.

    The mean sits ``delta >= 0`` above the middle of the tolerance, with
    ``Phi(-(d/2 - delta)) + Phi(-(d/2 + delta)) = p``; the total rises in
    ``delta``, so ``delta`` is found by bisection (vectorised, 200 steps at
    most, to full double precision). Levels below the centred process's
    ``p_min = 2 Phi(-d/2)`` are taken at ``p_min`` (``delta = 0``).
    """
    p = np.asarray(p, dtype=float)
    half = 0.5 * float(width)
    total = lambda dl: special.ndtr(-(half - dl)) + special.ndtr(-(half + dl))  # noqa: E731
    lo = np.zeros(p.shape)
    hi = np.full(p.shape, half + 40.0)  # total(hi) = 1 to double precision
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        up = total(mid) > p
        hi = np.where(up, mid, hi)
        lo = np.where(up, lo, mid)
        if np.all(hi - lo <= 1e-15 * np.maximum(1.0, hi)):
            break
    delta = 0.5 * (lo + hi)
    return half - delta, half + delta


def _band_known(n, k, p, which="both"):
    """Lower and upper edges of ``Pa`` over every split of the total ``p``
    between two tails (sigma known), by the bounded search over the share of
    ``p`` beyond the lower limit of :func:`lotwise.core.twolimit.band_of`.
    ``which`` is 'lower', 'upper' or 'both' (then a pair is returned)."""
    from lotwise.core.twolimit import band_of

    def pa_at(pp, share):
        zl = np.where(share > 0, z_upper(np.maximum(share * pp, 1e-300)), np.inf)
        return _two_from_z(n, k, z_upper((1.0 - share) * pp), zl)

    return band_of(pa_at, p, which)


def pa_two_from_split(n, k, zu, zl):
    """Two-limit k-method ``Pa`` (sigma known) for limits ``zu`` and ``zl``
    sigma from the mean (see :func:`tail_split`)."""
    return _finish(_two_from_z(n, k, np.asarray(zu, dtype=float), np.asarray(zl, dtype=float)))


def pa_known_two(n, k, p, width=None, envelope="upper"):
    """``Pa`` of the two-limit k-method with sigma known at total fraction ``p``.

    Parameters
    ----------
    n : int
    k : float
    p : float or array_like
        Total fraction nonconforming beyond both limits.
    width : float, optional
        ``(U - L)/sigma``. Known: the exact ``Pa`` (the split is fixed by
        ``p``, see :func:`tail_split`). ``None``: the band over every split.
    envelope : {'upper', 'lower'}
        Which edge of the band to return when ``width`` is ``None``: the
        largest ``Pa`` over the splits (the consumer's worst case) or the
        smallest (the producer's worst case).
    """
    scalar = np.ndim(p) == 0
    p = np.clip(np.atleast_1d(np.asarray(p, dtype=float)), 0.0, 1.0)
    if width is not None:
        zu, zl = tail_split(p, width)
        pa = _two_from_z(n, k, zu, zl)
    else:
        if envelope not in ("upper", "lower"):
            raise InputError(f"envelope ({envelope!r}) must be 'upper' or 'lower'")
        inner = (p > 0) & (p < 1)
        pa = _band_known(n, k, np.where(inner, p, 0.5), envelope)
        pa = np.where(p <= 0, 1.0, np.where(p >= 1, 0.0, pa))
    pa = np.clip(pa, 0.0, 1.0)
    return float(pa[0]) if scalar else pa


# --- estimates of the fraction nonconforming ---------------------------------

def estimate_known(q, n):
    """Minimum-variance unbiased estimate of the fraction beyond one limit,
    sigma known: ``Phi(-q sqrt(n/(n - 1)))`` with ``q = (U - xbar)/sigma`` [2]_.
    For ``n = 1`` the unbiased estimate is the indicator ``q < 0``."""
    q = np.asarray(q, dtype=float)
    if n < 2:
        return _finish(np.where(q < 0, 1.0, 0.0))
    return _finish(special.ndtr(-q * math.sqrt(n / (n - 1.0))))


def estimate_unknown(q, n):
    """Minimum-variance unbiased estimate of the fraction beyond one limit,
    sigma unknown, ``q = (U - xbar)/s`` [2]_:
    ``I_x(n/2 - 1, n/2 - 1)``, ``x = max(0, 1/2 - q sqrt(n)/(2(n - 1)))``. ``n >= 3``."""
    if n < 3:
        raise InputError(f"n ({n}) must be at least 3 for the estimate of the fraction "
                         "nonconforming with sigma unknown")
    q = np.asarray(q, dtype=float)
    x = np.clip(0.5 - q * math.sqrt(n) / (2.0 * (n - 1.0)), 0.0, 1.0)
    b = 0.5 * n - 1.0
    return _finish(special.betainc(b, b, x))


def max_estimate_for_k(n, k):
    """The maximum allowable estimate ``M`` equivalent to the s-method's ``k``
    with one limit: the estimate at ``Q = k``. Zero when ``k >= (n - 1)/sqrt(n)``
    (then no ``M`` reproduces ``k``)."""
    return float(estimate_unknown(k, n))


def k_for_estimate(n, m):
    """Inverse of :func:`max_estimate_for_k`: the ``k`` at which the one-limit
    estimate equals ``m`` (the estimate falls in ``Q``; bisection)."""
    top = (n - 1) / math.sqrt(n)
    lo, hi = -top, top
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        if float(estimate_unknown(mid, n)) > m:
            lo = mid
        else:
            hi = mid
        if hi - lo < 1e-14:
            break
    return 0.5 * (lo + hi)


def pa_k_two_unknown(n, k, p, envelope="upper"):
    """Exact ``Pa`` of the two-limit k-method with sigma unknown (accept when
    ``(U - xbar)/s >= k`` and ``(xbar - L)/s >= k``) at total fraction(s) ``p``:
    the upper or lower edge of the band over every split of ``p`` between the
    tails (quadrature over the law of ``s``, :mod:`lotwise.core.twolimit`)."""
    from lotwise.core.twolimit import band

    if envelope not in ("upper", "lower"):
        raise InputError(f"envelope ({envelope!r}) must be 'upper' or 'lower'")
    return band(int(n), p, k=float(k), which=envelope)


def pa_estimate_two(n, m, p, envelope="upper"):
    """Exact two-limit ``Pa`` of the estimate method (sigma unknown) at total
    fraction(s) ``p``: the upper (``envelope='upper'``) or lower edge of the
    band over every split of ``p`` between the tails (see
    :mod:`lotwise.core.twolimit` for the quadrature and its error)."""
    from lotwise.core.twolimit import band

    if envelope not in ("upper", "lower"):
        raise InputError(f"envelope ({envelope!r}) must be 'upper' or 'lower'")
    return band(int(n), p, m=float(m), which=envelope)


# --- the plan -----------------------------------------------------------------

def _num(x) -> str:
    return f"{x:.6g}"


@dataclass(frozen=True, kw_only=True)
class VariablesPlan(Plan):
    """A variables sampling plan.

    Attributes
    ----------
    n : int
        Sample size.
    k : float or None
        Acceptability constant: accept when the distance of ``xbar`` from the
        limit is at least ``k`` standard deviations (``sigma`` or ``s``).
        Two limits with sigma unknown may give ``m`` instead.
    sigma : {'known', 'unknown'}
    limit : {'upper', 'lower', 'both'}
    sigma_value : float, optional
        The known process standard deviation (needed to judge a sample, and
        with both limits to fix the tolerance width).
    lower, upper : float, optional
        Specification limits in measurement units (needed to judge a sample).
    m : float, optional
        Maximum allowable estimate of the total fraction nonconforming (two
        limits, sigma unknown); derived from ``k`` when not given.
    width : float, optional
        Tolerance width in sigma, ``(U - L)/sigma`` (two limits, sigma known);
        derived from ``lower``, ``upper`` and ``sigma_value`` when all are given.
    rule : {'estimate', 'k'}
        Two limits with sigma unknown: the estimate method (``'estimate'``, the
        default: accept when the estimated total fraction is at most ``M``) or
        the two-limit k-method (``'k'``, notation ``method=k``: accept when
        ``(U - xbar)/s >= k`` and ``(xbar - L)/s >= k``; exact OC band by
        quadrature, :mod:`lotwise.core.twolimit`, model ``k-two-limit-exact``).
    """

    n: int
    k: float | None = None
    sigma: str = "unknown"
    limit: str = "upper"
    sigma_value: float | None = None
    lower: float | None = None
    upper: float | None = None
    m: float | None = None
    width: float | None = None
    rule: str = "estimate"

    scheme = "variables"

    def __post_init__(self):
        if not isinstance(self.n, (int, np.integer)) or isinstance(self.n, bool) or self.n < 1:
            raise InputError(f"n ({self.n}) must be a whole number of at least 1")
        if self.sigma not in ("known", "unknown"):
            raise InputError(f"sigma ({self.sigma!r}) must be 'known' or 'unknown'")
        if self.limit not in _LIMITS:
            raise InputError(f"limit ({self.limit!r}) must be one of: {', '.join(_LIMITS)}")
        if self.sigma == "unknown" and self.n < 2:
            raise InputError(f"n ({self.n}) must be at least 2 with sigma unknown "
                             "(s needs two measurements)")
        if self.k is not None and not math.isfinite(self.k):
            raise InputError(f"k ({self.k}) must be a finite number")
        if self.sigma_value is not None and not (math.isfinite(self.sigma_value)
                                                 and self.sigma_value > 0):
            raise InputError(f"sigma ({self.sigma_value}) must be a positive number")
        if self.sigma == "unknown" and self.sigma_value is not None:
            raise InputError(f"sigma ({self.sigma_value}) is given for a plan with sigma "
                             "unknown; drop it or make the plan a known-sigma one")
        for name in ("lower", "upper"):
            v = getattr(self, name)
            if v is not None and not math.isfinite(v):
                raise InputError(f"{name} ({v}) must be a finite number")
        if self.lower is not None and self.upper is not None and not self.lower < self.upper:
            raise InputError(f"lower ({_num(self.lower)}) must be below upper "
                             f"({_num(self.upper)})")
        if self.limit == "upper" and self.lower is not None:
            raise InputError(f"lower ({_num(self.lower)}) is given for an upper-limit plan; "
                             "give both limits for a two-limit plan")
        if self.limit == "lower" and self.upper is not None:
            raise InputError(f"upper ({_num(self.upper)}) is given for a lower-limit plan; "
                             "give both limits for a two-limit plan")
        if self.rule not in ("estimate", "k"):
            raise InputError(f"method ({self.rule!r}) must be 'estimate' or 'k'")
        if self.rule == "k" and not (self.limit == "both" and self.sigma == "unknown"):
            raise InputError("method=k applies only to two limits with sigma unknown (the "
                             "other plans are k-methods already)")
        if self.rule == "k" and (self.k is None or self.m is not None):
            raise InputError("method=k needs k (and no m)")
        if self.rule == "k" and not self.k > 0:
            raise InputError(f"k ({self.k:g}) must be above 0 for the two-limit k-method")
        estimate_method = (self.limit == "both" and self.sigma == "unknown"
                           and self.rule == "estimate")
        if self.m is not None:
            if not estimate_method:
                raise InputError(f"m ({self.m}) applies only to two limits with sigma unknown; "
                                 "give k instead")
            if not 0 < self.m < 1:
                raise InputError(f"m ({self.m}) must be a fraction between 0 and 1, exclusive")
            if self.k is not None:
                raise InputError("give either k or m for a two-limit plan with sigma unknown, "
                                 "not both")
        elif self.k is None:
            raise InputError("a variables plan needs k (for two limits with sigma unknown "
                             "also m)")
        if estimate_method:
            if self.n < 3:
                raise InputError(f"n ({self.n}) must be at least 3 for the estimate method "
                                 "(two limits, sigma unknown)")
            if self.m is None:
                mm = max_estimate_for_k(self.n, self.k)
                if not mm > 0:
                    raise InputError(
                        f"k ({self.k:g}) is too large for n = {self.n}: the estimate method "
                        f"needs k below (n - 1)/sqrt(n) = {(self.n - 1) / math.sqrt(self.n):.4g}")
                object.__setattr__(self, "m", mm)
        if self.limit == "both" and self.sigma == "known":
            w = None
            if None not in (self.lower, self.upper, self.sigma_value):
                w = (self.upper - self.lower) / self.sigma_value
            if self.width is not None:
                if not (math.isfinite(self.width) and self.width > 0):
                    raise InputError(f"width ({self.width}) must be a positive number of sigmas")
                if w is not None and abs(w - self.width) > 1e-9 * w:
                    raise InputError(f"width ({self.width:g}) disagrees with (upper - lower)/sigma "
                                     f"({w:g})")
            elif w is not None:
                object.__setattr__(self, "width", w)
        elif self.width is not None:
            raise InputError(f"width ({self.width}) applies only to two limits with sigma known")

    # -- description ---------------------------------------------------------
    @property
    def method(self) -> str:
        if self.rule == "k":
            return "k-method (sigma unknown, two limits)"
        if self.limit == "both" and self.sigma == "unknown":
            return "estimate method (sigma unknown, two limits)"
        return ("k-method (sigma known)" if self.sigma == "known"
                else "s-method (sigma unknown)") + (
            ", two limits" if self.limit == "both" else f", {self.limit} limit")

    @property
    def exact_model(self) -> str:
        if self.sigma == "known":
            return "normal-known-sigma"
        if self.limit != "both":
            return "noncentral-t"
        return "k-two-limit-exact" if self.rule == "k" else "estimate-exact"

    @property
    def models(self) -> tuple[str, ...]:
        if self.exact_model in TWO_LIMIT_EXACT:
            return (self.exact_model, "noncentral-t")
        return (self.exact_model,)

    @property
    def label(self) -> str:
        if self.rule == "k":
            return f"n={self.n}, k={self.k:g}, two limits, sigma unknown, k-method"
        if self.limit == "both" and self.sigma == "unknown":
            kk = f"M={self.m:.4g}" if self.k is None else f"k={self.k:g} (M={self.m:.4g})"
            return f"n={self.n}, {kk}, two limits, sigma unknown"
        lim = "two limits" if self.limit == "both" else f"{self.limit} limit"
        sig = ("sigma known" if self.sigma_value is None
               else f"sigma={_num(self.sigma_value)}") if self.sigma == "known" else "sigma unknown"
        return f"n={self.n}, k={self.k:g}, {lim}, {sig}"

    @property
    def short_label(self) -> str:
        return self.label if self.k is None else f"variables n={self.n}, k={self.k:g}"

    @property
    def max_sample(self) -> int:
        return int(self.n)

    def notation(self) -> str:
        """The plan as typed for ``--plan`` (round-trips through :func:`lotwise.families.base.parse_plan`)."""
        parts = [f"n={self.n}"]
        if self.k is not None:
            parts.append(f"k={self.k!r}")
        else:
            parts.append(f"m={self.m!r}")
        if self.lower is not None:
            parts.append(f"lower={self.lower!r}")
        if self.upper is not None:
            parts.append(f"upper={self.upper!r}")
        if self.limit == "both" and (self.lower is None or self.upper is None):
            parts.append("limit=both")
        elif self.lower is None and self.upper is None:
            parts.append(f"limit={self.limit}")
        if self.rule == "k":
            parts.append("method=k")
        if self.sigma_value is not None:
            parts.append(f"sigma={self.sigma_value!r}")
        elif self.sigma == "known":
            parts.append("sigma=known")
            if self.width is not None:
                parts.append(f"width={self.width!r}")
        return "variables: " + ",".join(parts)

    # -- acceptance probabilities -------------------------------------------
    def _model(self, model):
        if model is None or model in ("hypergeometric", "binomial", "poisson"):
            return self.exact_model
        if model == "noncentral-t" and self.exact_model in TWO_LIMIT_EXACT:
            return model
        if model != self.exact_model:
            raise InputError(f"model ({model}) does not apply to this plan ({self.method}); "
                             f"its model is {self.exact_model}")
        return model

    def pa(self, p, model: str | None = None, scope=None, rounding: str = "nearest",
           envelope: str = "upper"):
        """Probability of acceptance at fraction(s) nonconforming ``p`` (total
        beyond both limits for a two-limit plan), vectorised over ``p``.

        ``model`` may be the plan's own model (:attr:`exact_model`), ``None``
        or any attribute model name (the scope's default call): variables OC
        curves are process (type B) curves, the same under every scope.
        ``scope`` and ``rounding`` are accepted for the common interface and
        do not change the result. For two-limit plans whose split of ``p``
        between the tails is not fixed, ``envelope`` picks the edge of the
        band ('upper': the consumer's worst case, the default; 'lower': the
        producer's worst case). ``model='noncentral-t'`` on an estimate-method
        plan gives its exact one-tail curve (the mean near one limit).
        """
        model = self._model(model)
        if self.sigma == "known":
            if self.limit == "both":
                return pa_known_two(self.n, self.k, p, self.width, envelope)
            return pa_known(self.n, self.k, p)
        if self.limit != "both":
            return pa_unknown(self.n, self.k, p)
        k_eq = self.k_equivalent
        if model == "noncentral-t":
            return pa_unknown(self.n, k_eq, p)
        scalar = np.ndim(p) == 0
        pc = np.clip(np.atleast_1d(np.asarray(p, dtype=float)), 0.0, 1.0)
        if self.rule == "k":
            pa = pa_k_two_unknown(self.n, self.k, pc, envelope)
        else:
            pa = pa_estimate_two(self.n, self.m, pc, envelope)
        return float(pa[0]) if scalar else pa

    # -- the plan interface: a process curve under the plan's own models --------
    attribute_plan = False
    evaluation = "process"

    def models_for(self, scope) -> tuple[str, ...]:
        return self.models

    def judging_model(self, scope, model: str | None = None) -> str:
        return self.exact_model

    def check_scope(self, scope) -> None:
        """Variables plans sample a normal process; the lot size does not enter."""
        if scope is not None and scope.per_unit:
            raise InputError("--per-unit does not apply to a variables plan: it judges a "
                             "fraction nonconforming from measurements")

    def risks(self, targets, scope, model: str):
        """Risks at the targets; a two-limit band is judged at its worst edge
        for each side (the producer's at the AQL, the consumer's at the RQL)."""
        from lotwise.core.types import TOL
        from lotwise.families.base import ModelRisk

        pa_aql = float(self.pa(targets.aql, model, envelope="lower"))
        pa_rql = float(self.pa(targets.rql, model, envelope="upper"))
        alpha = 1.0 - pa_aql
        return ModelRisk(model=model, pa_aql=pa_aql, pa_rql=pa_rql, alpha=alpha, beta=pa_rql,
                         meets_alpha=bool(alpha <= targets.alpha + TOL),
                         meets_beta=bool(pa_rql <= targets.beta + TOL))

    def quality_at(self, prob: float, model: str, scope, side: str = "producer") -> float:
        """Quality level where ``Pa`` equals ``prob``, on the band edge that
        matters for ``side`` (lower edge for the producer's)."""
        from lotwise.core.search import invert_level

        env = "lower" if side == "producer" else "upper"
        return invert_level(_Edge(self, env), prob, model, scope)

    def quality_levels(self, probs, model: str, scope, sides) -> list[float]:
        """:meth:`quality_at` at several ``(prob, side)`` pairs, the levels on
        one band edge sharing each pass of the inversion (a one-limit plan has
        one edge: all of them; :func:`lotwise.core.search.invert_levels`)."""
        from lotwise.core.search import invert_levels

        band = self.limit == "both" and (self.sigma == "unknown" or self.width is None)
        envs = [("lower" if s == "producer" else "upper") if band else "lower" for s in sides]
        out = [0.0] * len(probs)
        for env in sorted(set(envs)):
            idx = [i for i, e in enumerate(envs) if e == env]
            found = invert_levels(_Edge(self, env), [probs[i] for i in idx], model, scope)
            for i, q in zip(idx, found):
                out[i] = float(q)
        return out

    @property
    def k_equivalent(self) -> float:
        """For the estimate method: the ``k`` whose one-limit s-method accepts
        exactly when the estimate from that limit is at most ``M``."""
        if self.k is not None:
            return float(self.k)
        return k_for_estimate(self.n, self.m)

    def pa_count(self, d, scope):
        """``Pa`` for a lot of ``scope.lot_size`` holding ``d`` nonconforming
        items, taken as the process curve at ``p = d/N`` (variables plans
        assume sampling from a normal process; the lot size does not enter)."""
        if not scope or not scope.lot_size:
            raise InputError("pa_count needs a lot size")
        return self.pa(np.asarray(d, dtype=float) / float(scope.lot_size))

    def to_dict(self) -> dict:
        d = {"scheme": "variables", "n": int(self.n), "k": None if self.k is None else float(self.k),
             "sigma": self.sigma, "limit": self.limit, "method": self.method,
             "model": self.exact_model}
        for key in ("sigma_value", "lower", "upper", "m", "width"):
            v = getattr(self, key)
            if v is not None:
                d[key] = float(v)
        if self.rule == "k":
            d["two_limit_rule"] = "k"
        return d


# --- notation -------------------------------------------------------------------

#: Largest acceptability constant of a written plan (|k|): far beyond the
#: z at which the normal tail leaves the floats (about 38).
MAX_K = 1000.0


def _float(text, option, key):
    try:
        v = float(str(text).strip())
    except ValueError:
        raise InputError(f"{option} {key} ({text!r}) must be a number") from None
    if not math.isfinite(v):
        raise InputError(f"{option} {key} ({text!r}) must be a finite number")
    return v


class _Edge:
    """One edge of a two-limit plan's OC band, as an object with ``pa``."""

    def __init__(self, plan, envelope: str):
        self.plan, self.envelope = plan, envelope

    def pa(self, p, model=None, scope=None, rounding: str = "nearest"):
        return self.plan.pa(p, model, scope, envelope=self.envelope)


def parse_variables(pairs: dict, text: str, option: str) -> VariablesPlan:
    """``variables: n=42,k=1.9,upper=25`` and friends (see :class:`VariablesPlan`).

    Keys: ``n``; ``k`` (or ``m`` for two limits with sigma unknown);
    ``upper`` and/or ``lower`` (or ``limit=upper|lower|both`` when the limits
    are not needed); ``sigma`` = the known standard deviation, or
    ``sigma=known``/``sigma=unknown``; ``width`` = tolerance width in sigma
    (two limits, sigma known, limits not given); ``method=k`` for the two-limit
    k-method with sigma unknown (default ``method=estimate``, the estimate method).
    """
    from lotwise.core.quantities import parse_count

    allowed = {"n", "k", "m", "upper", "lower", "sigma", "limit", "width", "method"}
    unknown = sorted(set(pairs) - allowed)
    if unknown:
        raise InputError(f"{option} ({text!r}): unknown key {unknown[0]!r}; a variables plan "
                         "takes n, k (or m), upper and/or lower, sigma, limit, width, method")
    if "n" not in pairs:
        raise InputError(f"{option} ({text!r}) lacks n; write for example "
                         "\"variables: n=42,k=1.9,upper=25\"")
    n = parse_count(pairs["n"], f"{option} n", minimum=1)
    k = _float(pairs["k"], option, "k") if "k" in pairs else None
    if k is not None and not abs(k) <= MAX_K:
        raise InputError(f"{option} k ({pairs['k']}) must be a number from -{MAX_K:g} to "
                         f"{MAX_K:g} (beyond, the normal tail is below the smallest float)")
    m = None
    if "m" in pairs:
        from lotwise.core.quantities import parse_fraction

        m = parse_fraction(pairs["m"], f"{option} m")
    upper = _float(pairs["upper"], option, "upper") if "upper" in pairs else None
    lower = _float(pairs["lower"], option, "lower") if "lower" in pairs else None
    if upper is not None and lower is not None:
        limit = "both"
    elif upper is not None:
        limit = "upper"
    elif lower is not None:
        limit = "lower"
    else:
        limit = None
    if "limit" in pairs:
        lv = pairs["limit"].strip().lower()
        if lv not in _LIMITS:
            raise InputError(f"{option} limit ({pairs['limit']!r}) must be one of: "
                             + ", ".join(_LIMITS))
        if limit is not None and lv != limit and lv != "both":
            raise InputError(f"{option} limit ({lv}) disagrees with the limits given ({limit})")
        limit = lv
    if limit is None:
        raise InputError(f"{option} ({text!r}) needs a specification limit: upper=..., "
                         "lower=... or both (or limit=upper|lower|both)")
    sigma, sigma_value = "unknown", None
    if "sigma" in pairs:
        sv = pairs["sigma"].strip().lower()
        if sv in ("known", "unknown"):
            sigma = sv
        else:
            sigma_value = _float(pairs["sigma"], option, "sigma")
            if not sigma_value > 0:
                raise InputError(f"{option} sigma ({pairs['sigma']}) must be a positive number "
                                 "(the known process standard deviation)")
            sigma = "known"
    width = _float(pairs["width"], option, "width") if "width" in pairs else None
    rule = pairs.get("method", "estimate").strip().lower()
    if rule not in ("estimate", "k"):
        raise InputError(f"{option} method ({pairs['method']!r}) must be one of: estimate, k "
                         "(two limits with sigma unknown)")
    if k is None and m is None:
        raise InputError(f"{option} ({text!r}) lacks k; write for example "
                         "\"variables: n=42,k=1.9,upper=25\"")
    try:
        return VariablesPlan(n=n, k=k, sigma=sigma, limit=limit, sigma_value=sigma_value,
                             lower=lower, upper=upper, m=m, width=width, rule=rule)
    except InputError as exc:
        raise InputError(f"{option} ({text!r}): {exc}") from None


# --- design ------------------------------------------------------------

_TOL = 1e-12
_N_CAP = 10_000_000
K_RULES = ("midpoint", "low", "high")


def closed_form_known(z_alpha: float, z_beta: float, z_p1: float, z_p2: float):
    """Textbook closed forms for the k-method with sigma known [1]_, [3]_:
    ``(n, k)`` with ``n = ((z_a + z_b)/(z_p1 - z_p2))^2`` unrounded and
    ``k = (z_p1 z_b + z_p2 z_a)/(z_a + z_b)``."""
    n = ((z_alpha + z_beta) / (z_p1 - z_p2)) ** 2
    k = (z_p1 * z_beta + z_p2 * z_alpha) / (z_alpha + z_beta)
    return n, k


def _ceil(x: float) -> int:
    r = round(x)
    return int(r) if abs(x - r) <= 1e-9 * max(1.0, x) else int(math.ceil(x))


def _z(targets: Targets):
    za = float(z_upper(targets.alpha))
    zb = float(z_upper(targets.beta))
    z1 = float(z_upper(targets.aql))
    z2 = float(z_upper(targets.rql))
    return za, zb, z1, z2


def wallis(targets: Targets) -> dict:
    """Wallis's approximation [1]_ for the s-method: ``n_sigma (1 + k^2/2)``."""
    n0, k0 = closed_form_known(*_z(targets))
    nw = n0 * (1.0 + 0.5 * k0 * k0)
    return {"method": "Wallis (1947): n = n_sigma (1 + k^2/2), k from the closed form",
            "n_unrounded": nw, "n": max(_ceil(nw), 2), "k": k0, "n_sigma_unrounded": n0}


# --- the window of k at a given n -----------------------------------------------

def _bisect_k(pa_of_k, target, lo, hi, want_high):
    """Edge of ``{k: pa(k) >= target}`` (``want_high``: the largest such k) or of
    ``{k: pa(k) <= target}`` (the smallest); ``pa`` falls in ``k``."""
    for _ in range(100):
        mid = 0.5 * (lo + hi)
        v = float(pa_of_k(mid))
        if want_high:
            if v >= target:
                lo = mid
            else:
                hi = mid
        else:
            if v <= target:
                hi = mid
            else:
                lo = mid
        if hi - lo <= 1e-12 * max(1.0, abs(mid)):
            break
    return lo if want_high else hi


def k_window(n: int, targets: Targets, sigma: str, limit: str, width: float | None = None):
    """``(k_low, k_high)`` at sample size ``n``: every ``k`` in between meets
    both risks (none does when ``k_low > k_high``)."""
    za, zb, z1, z2 = _z(targets)
    rn = math.sqrt(n)
    if limit != "both" or sigma == "unknown":
        if sigma == "known":
            return z2 + zb / rn, z1 - za / rn
        k_lo = float(special.nctdtrit(n - 1.0, rn * z2, 1.0 - targets.beta)) / rn
        k_hi = float(special.nctdtrit(n - 1.0, rn * z1, targets.alpha)) / rn
        # nctdtrit returns NaN in some far tails: fall back on bisection of the
        # exact curve (Pa falls in k), bracketed around the known-sigma window.
        if not math.isfinite(k_lo):
            k_lo = _bisect_k(lambda k: pa_unknown(n, k, targets.rql), targets.beta,
                             z2 + zb / rn - 40.0, z2 + zb / rn + 40.0, False)
        if not math.isfinite(k_hi):
            k_hi = _bisect_k(lambda k: pa_unknown(n, k, targets.aql), 1.0 - targets.alpha,
                             z1 - za / rn - 40.0, z1 - za / rn + 40.0, True)
        return k_lo, k_hi
    # two limits, sigma known: Pa falls in k, bisection on the exact two-tail Pa.
    one_lo, one_hi = z2 + zb / rn, z1 - za / rn
    if width is not None:
        def at(p):
            zu, zl = tail_split(p, width)  # fixed by p and the width alone
            return lambda k: pa_two_from_split(n, k, zu, zl)
        top = 0.5 * width  # k >= d/2 leaves no acceptable xbar: Pa = 0
        k_hi = _bisect_k(at(targets.aql), 1.0 - targets.alpha, -40.0, top, True)
        k_lo = _bisect_k(at(targets.rql), targets.beta, -40.0, top, False)
        return k_lo, k_hi
    # Width unknown: the band's lower edge never exceeds the one-tail curve
    # and its upper edge is never below it, so the window is inside the
    # one-limit window.
    k_hi = _bisect_k(lambda k: pa_known_two(n, k, targets.aql, None, "lower"),
                     1.0 - targets.alpha, one_hi - 40.0, one_hi, True)
    k_lo = _bisect_k(lambda k: pa_known_two(n, k, targets.rql, None, "upper"),
                     targets.beta, one_lo, one_lo + 40.0, False)
    return k_lo, k_hi


def _min_n(sigma: str, limit: str) -> int:
    if sigma == "known":
        return 1
    return 3 if limit == "both" else 2


def _smallest_n(feasible, start: int, cap: int):
    """Smallest ``n >= start`` with ``feasible(n)``, up to ``cap``: doubling,
    then bisection (the window widens in ``n``). ``None`` if there is none."""
    if feasible(start):
        return start
    lo, hi = start, start
    while True:
        lo, hi = hi, min(hi * 2, cap)
        if feasible(hi):
            break
        if hi >= cap:
            return None
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if feasible(mid):
            hi = mid
        else:
            lo = mid
    return hi


# --- the result --------------------------------------------------------------------

@dataclass(frozen=True, kw_only=True)
class VariablesDesign:
    """Result of :func:`design_variables`.

    Attributes
    ----------
    plan : VariablesPlan
    targets : Targets
    k_low, k_high : float
        The window of ``k`` that meets both risks at ``plan.n`` (the slack).
    k_rule : str
        How ``k`` was chosen from the window (``'midpoint'``, ``'low'``,
        ``'high'``), and :attr:`k_decimals` the decimals it was rounded to.
    pa_aql, pa_rql : float
        Exact ``Pa`` of the returned plan at the AQL and the RQL (two limits:
        the worst case, see :attr:`two_limit`).
    approximation : dict
        Closed form (sigma known) or Wallis (sigma unknown): ``n``, ``k``.
    known_sigma_n : int
        The exact sigma-known ``n`` for the same targets (for comparison).
    attributes : SingleDesign or None
        The attributes single plan for the same two points (binomial).
    two_limit : dict or None
        Convention and band details for two limits.
    """

    plan: VariablesPlan
    targets: Targets
    k_low: float
    k_high: float
    k_rule: str
    k_decimals: int
    pa_aql: float
    pa_rql: float
    approximation: dict
    known_sigma_n: int
    attributes: object = None
    attributes_note: str = ""
    previous_window: tuple | None = None
    two_limit: dict | None = None
    notes: list = field(default_factory=list)

    @property
    def n(self) -> int:
        return self.plan.n

    @property
    def k(self) -> float:
        """``k`` (for the estimate method: the one-limit equivalent of ``M``)."""
        return float(self.plan.k_equivalent)

    @property
    def alpha(self) -> float:
        return 1.0 - self.pa_aql

    @property
    def beta(self) -> float:
        return self.pa_rql

    @property
    def saved(self) -> dict | None:
        """Sample saved against the attributes plan: units and fraction."""
        if self.attributes is None:
            return None
        a = self.attributes.n
        return {"n": int(a - self.n), "fraction": (a - self.n) / a}

    def statements(self) -> list[str]:
        """Plain-words sentences for reports and sheets."""
        t, p = self.targets, self.plan
        what = "beyond the limits" if p.limit == "both" else f"beyond the {p.limit} limit"
        dev = "sigma" if p.sigma == "known" else "s"
        if p.limit == "both" and p.sigma == "unknown":
            rule = (f"accept when the estimated fraction nonconforming (both tails) is at most "
                    f"M = {format_pct(p.m, 4)}")
        elif p.limit == "both":
            rule = (f"accept when the mean is at least k = {self.k:g} {dev} inside each limit")
        else:
            side = "below the upper" if p.limit == "upper" else "above the lower"
            rule = f"accept when the mean is at least k = {self.k:g} {dev} {side} limit"
        out = [
            f"Measure {p.n} units; {rule}.",
            f"Accepts lots from a process with {format_level(t.aql)} {what} (the AQL) "
            f"{format_pct(self.pa_aql)} of the time: producer's risk {format_pct(self.alpha)} "
            f"against a target of {format_pct(t.alpha)}.",
            f"Accepts lots from a process with {format_level(t.rql)} {what} (the RQL) "
            f"{format_pct(self.pa_rql)} of the time: consumer's risk {format_pct(self.beta)} "
            f"against a target of {format_pct(t.beta)}.",
            f"Any k from {self.k_low:.5f} to {self.k_high:.5f} meets both risks with n = {p.n} "
            f"(k = {self.k:g} is the {_RULE_WORDS[self.k_rule]}); with n = {p.n - 1} no k does.",
        ]
        ap = self.approximation
        if p.sigma == "known":
            out.append(f"Closed form: n = {ap['n_unrounded']:.2f}, rounded up to {ap['n']}, "
                       f"k = {ap['k']:.4f}.")
        else:
            off = p.n - ap["n"]
            rel = "the same as" if off == 0 else (f"{abs(off)} below" if off > 0 else
                                                 f"{abs(off)} above")
            out.append(f"Wallis's approximation n = n_sigma (1 + k^2/2) = {ap['n_unrounded']:.2f} "
                       f"-> {ap['n']}, k = {ap['k']:.4f}: {rel} the exact n; that plan "
                       f"carries alpha {format_pct(ap['alpha'])} and beta "
                       f"{format_pct(ap['beta'])}.")
            out.append(f"With sigma known the same risks need n = {self.known_sigma_n}.")
        if self.attributes is not None:
            s = self.saved
            out.append(f"The attributes plan for the same two points is n = {self.attributes.n}, "
                       f"c = {self.attributes.c}: the variables plan saves {s['n']} units "
                       f"({format_pct(s['fraction'])} of the sample).")
        elif self.attributes_note:
            out.append(self.attributes_note)
        out.extend(self.notes)
        out.append("The risks hold only if the characteristic is normally distributed: check "
                   "each sample (lotwise judge runs a Shapiro-Wilk test) and fall back to the "
                   "attributes plan when normality is doubtful.")
        out.append(SAFETY)
        return out

    @property
    def model(self) -> None:
        """No attributes model: the plan judges measurements (designs of counted
        plans name the model they were judged by)."""
        return None

    def report_extra(self) -> dict:
        """What the design adds to the plan's assessment (see :meth:`as_dict`)."""
        return self.as_dict()

    def as_dict(self) -> dict:
        """The JSON contract: ``scheme``, ``sigma``, ``n``, ``k``, ``pa_aql``,
        ``pa_rql``, ``approximation`` {``n``, ``k``}, ``attributes`` {``n``,
        ``c``}, and more."""
        p = self.plan
        ap = {k: v for k, v in self.approximation.items()}
        out = {
            "scheme": "variables",
            "sigma": p.sigma,
            "limit": p.limit,
            "method": p.method,
            "model": p.exact_model,
            "n": int(p.n),
            "k": self.k,
            "pa_aql": self.pa_aql,
            "pa_rql": self.pa_rql,
            "alpha": self.alpha,
            "beta": self.beta,
            "meets": bool(self.alpha <= self.targets.alpha + _TOL
                          and self.beta <= self.targets.beta + _TOL),
            "targets": self.targets.as_dict(),
            "k_range": {"low": self.k_low, "high": self.k_high,
                        "slack": self.k_high - self.k_low, "rule": self.k_rule,
                        "decimals": self.k_decimals},
            "previous_n": None if self.previous_window is None else {
                "n": int(p.n - 1), "k_low": self.previous_window[0],
                "k_high": self.previous_window[1]},
            "approximation": ap,
            "known_sigma_n": int(self.known_sigma_n),
            "attributes": None if self.attributes is None else {
                "n": int(self.attributes.n), "c": int(self.attributes.c), "model": "binomial"},
            "saved": self.saved,
            "plan": p.to_dict(),
            "notation": p.notation(),
            "two_limit": self.two_limit,
            "statements": self.statements(),
        }
        if p.m is not None:
            out["m"] = float(p.m)
        if self.attributes is None:
            out["attributes_note"] = self.attributes_note
        return out


_RULE_WORDS = {"midpoint": "midpoint of that window, equal margin to both risks",
               "low": "low end of that window, the most lenient k protecting the consumer",
               "high": "high end of that window, the strictest k protecting the producer"}

SAFETY = ("Sampling cannot guarantee a lot free of nonconforming items; critical "
          "characteristics need 100 % inspection or stricter plans per contract and "
          "regulation. Defer to your applicable standards and qualified quality professionals.")


def _choose_k(k_lo: float, k_hi: float, rule: str, ok) -> tuple[float, int]:
    """The ``k`` picked by ``rule``, rounded to the fewest decimals (>= 3) that
    stay inside ``[k_lo, k_hi]`` and pass ``ok(k)`` (the exact risk check)."""
    target = {"midpoint": 0.5 * (k_lo + k_hi), "low": k_lo, "high": k_hi}[rule]
    for d in range(3, 16):
        f = 10.0 ** d
        if rule == "midpoint":
            kr = round(target, d)
        elif rule == "low":
            kr = math.ceil(target * f - 1e-9) / f
        else:
            kr = math.floor(target * f + 1e-9) / f
        if k_lo - _TOL <= kr <= k_hi + _TOL and ok(kr):
            return kr, d
    return target, 17


def design_variables(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                     sigma: str = "unknown", limit: str = "upper",
                     sigma_value: float | None = None, lower: float | None = None,
                     upper: float | None = None, width: float | None = None,
                     k_rule: str = "midpoint", max_n: int | None = None,
                     attributes: bool = True) -> VariablesDesign:
    """Smallest variables plan meeting both risks.

    Parameters
    ----------
    aql, rql : float
        Acceptable and rejectable fractions nonconforming (two limits: the
        total beyond both).
    alpha, beta : float
        Producer's risk at the AQL, consumer's risk at the RQL.
    sigma : {'known', 'unknown'}
    limit : {'upper', 'lower', 'both'}
    sigma_value : float, optional
        The known process standard deviation (with both limits it fixes the
        tolerance width ``(upper - lower)/sigma_value``).
    lower, upper : float, optional
        Specification limits, carried into the plan so that it can judge a
        sample.
    width : float, optional
        Tolerance width in sigma (two limits, sigma known), instead of the
        limits and ``sigma_value``.
    k_rule : {'midpoint', 'low', 'high'}
        Which ``k`` of the feasible window to return.
    max_n : int, optional
        Largest affordable sample.
    attributes : bool
        Also design the attributes single plan for the same points.

    Raises
    ------
    Infeasible
        No plan meets both risks (within ``max_n``), or the process cannot
        reach the AQL with the given sigma and limits.
    InputError
        Malformed arguments.
    """
    width = _checked_width(sigma=sigma, limit=limit, k_rule=k_rule, sigma_value=sigma_value,
                           lower=lower, upper=upper, max_n=max_n, width=width)
    targets = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    check_targets(targets, False)
    notes: list[str] = []
    two: dict | None = None
    if limit == "both" and sigma == "known" and width is not None:
        _check_reachable(aql, width)

    if limit == "both" and sigma == "unknown":
        return _design_estimate_method(targets, lower=lower, upper=upper, k_rule=k_rule,
                                       max_n=max_n, attributes=attributes)
    w = width if (limit == "both" and sigma == "known") else None
    start = _min_n(sigma, limit)
    cap = _N_CAP if max_n is None else max_n
    if cap < start:
        raise InputError(f"--max-n ({cap}) must be at least {start} for this method")
    eff_limit = "upper" if (limit == "both" and sigma == "unknown") else limit

    def risks(n, k):
        """Exact Pa at the AQL and RQL (two limits: the worst case)."""
        if limit == "both" and sigma == "known" and w is None:
            return (pa_known_two(n, k, aql, None, "lower"),
                    pa_known_two(n, k, rql, None, "upper"))
        if limit == "both" and sigma == "known":
            return pa_known_two(n, k, aql, w), pa_known_two(n, k, rql, w)
        f = pa_known if sigma == "known" else pa_unknown
        return float(f(n, k, aql)), float(f(n, k, rql))

    def meets(n, k):
        a, r = risks(n, k)
        return a >= 1.0 - alpha - _TOL and r <= beta + _TOL

    def feasible(n):
        lo, hi = k_window(n, targets, sigma, eff_limit, w)
        return lo <= hi and meets(n, 0.5 * (lo + hi))

    n = _smallest_n(feasible, start, cap)
    if n is None:
        lo, hi = k_window(cap, targets, sigma, eff_limit, w)
        raise _no_plan_under(cap, max_n, lo, hi)
    k_lo, k_hi = k_window(n, targets, sigma, eff_limit, w)
    prev = k_window(n - 1, targets, sigma, eff_limit, w) if n - 1 >= start else None
    k, dec = _choose_k(k_lo, k_hi, k_rule, lambda kk: meets(n, kk))
    plan = VariablesPlan(n=n, k=k, sigma=sigma, limit=limit, sigma_value=sigma_value,
                         lower=lower, upper=upper, width=w)
    pa_aql, pa_rql = risks(n, k)

    approx, known_n = _approximation(targets, sigma, limit, n)
    if limit == "both" and sigma == "known":
        two = _known_two_limits(targets, n, k, w, pa_aql, pa_rql, notes)

    att, note = _attributes(targets, attributes)
    return VariablesDesign(plan=plan, targets=targets, k_low=k_lo, k_high=k_hi, k_rule=k_rule,
                           k_decimals=dec, pa_aql=float(pa_aql), pa_rql=float(pa_rql),
                           approximation=approx, known_sigma_n=known_n, attributes=att,
                           attributes_note=note, previous_window=prev, two_limit=two,
                           notes=notes)





def _check_reachable(aql: float, width: float) -> None:
    """A centred process must be able to run at the AQL within the tolerance."""
    p_min = 2.0 * float(special.ndtr(-0.5 * width))
    if aql < p_min:
        raise Infeasible(
            f"the process cannot run as well as the AQL ({format_level(aql)}): with a "
            f"tolerance {width:.4g} sigma wide even a centred process has "
            f"{format_level(p_min)} beyond the limits; a smaller sigma is needed",
            {"p_min": p_min, "width_sigma": width})


def _no_plan_under(cap: int, max_n, lo: float, hi: float) -> Infeasible:
    what = "--max-n" if max_n is not None else "10,000,000"
    return Infeasible(
        f"no plan with n <= {cap} ({what}) meets both risks: at n = {cap} the consumer's "
        f"risk needs k >= {lo:.4f} and the producer's k <= {hi:.4f}",
        {"n": cap, "k_low": lo, "k_high": hi})

def _checked_width(*, sigma, limit, k_rule, sigma_value, lower, upper, max_n, width):
    """Validate the design's arguments; the tolerance width in sigmas (two limits,
    sigma known, both limits given) or the width given, else None."""
    if sigma not in ("known", "unknown"):
        raise InputError(f"--sigma ({sigma}) must be 'known' or 'unknown'")
    if limit not in ("upper", "lower", "both"):
        raise InputError(f"--limit ({limit}) must be one of: upper, lower, both")
    if k_rule not in K_RULES:
        raise InputError(f"k rule ({k_rule}) must be one of: {', '.join(K_RULES)}")
    if sigma == "unknown" and sigma_value is not None:
        raise InputError(f"--sigma-value ({sigma_value:g}) is given with --sigma unknown; "
                         "use --sigma known")
    if limit == "upper" and lower is not None:
        raise InputError(f"--lower ({lower:g}) is given with --limit upper; use --limit both")
    if limit == "lower" and upper is not None:
        raise InputError(f"--upper ({upper:g}) is given with --limit lower; use --limit both")
    if max_n is not None and max_n < 1:
        raise InputError(f"--max-n ({max_n}) must be at least 1")
    if limit == "both" and sigma == "known" and width is None and None not in (
            lower, upper, sigma_value):
        if not lower < upper:
            raise InputError(f"--lower ({lower:g}) must be below --upper ({upper:g})")
        width = (upper - lower) / sigma_value
    if width is not None and not (limit == "both" and sigma == "known"):
        raise InputError("a tolerance width applies only to --limit both with --sigma known")
    return width

def _approximation(targets: Targets, sigma: str, limit: str, n: int) -> tuple[dict, int]:
    """The textbook approximation beside the exact design (closed form for sigma
    known, Wallis's for sigma unknown) and the closed form's sample size."""
    aql, rql, alpha, beta = targets.aql, targets.rql, targets.alpha, targets.beta
    za, zb, z1, z2 = _z(targets)
    n0, k0 = closed_form_known(za, zb, z1, z2)
    known_n = _ceil(n0)
    if sigma == "known":
        approx = {"method": "closed form (sigma known), z at full precision, n rounded up",
                  "n_unrounded": n0, "n": known_n, "k": k0}
        if limit == "both":
            approx["method"] += "; one-limit formula applied to the total fraction"
        return approx, known_n
    approx = wallis(targets)
    approx["alpha"] = 1.0 - float(pa_unknown(approx["n"], approx["k"], aql))
    approx["beta"] = float(pa_unknown(approx["n"], approx["k"], rql))
    approx["exact_minus_approximation"] = int(n - approx["n"])
    approx["meets"] = bool(approx["alpha"] <= alpha + _TOL and approx["beta"] <= beta + _TOL)
    if limit == "both":
        approx["method"] += "; for the total fraction"
    return approx, known_n


def _known_two_limits(targets: Targets, n: int, k: float, w, pa_aql, pa_rql,
                      notes: list) -> dict:
    """The convention of a two-limit plan with sigma known (a sentence goes to ``notes``)."""
    aql, rql = targets.aql, targets.rql
    if w is not None:
        p_min = 2.0 * float(special.ndtr(-0.5 * w))
        notes.append(f"Two limits {w:.4g} sigma apart: a centred process has "
                     f"{format_level(p_min)} beyond them; Pa depends only on the total "
                     "fraction (the mean's two mirror positions give the same Pa).")
        return {"convention": "tolerance width known: the mean's distance from the middle "
                              "of the tolerance is fixed by the total fraction (two mirror "
                              "positions, same Pa), so Pa is exact",
                "width_sigma": w, "p_min": p_min}
    one = (float(pa_known(n, k, aql)), float(pa_known(n, k, rql)))
    notes.append("Two limits, tolerance width not given: the risks are met wherever the "
                 "mean sits and however wide the tolerance (worst case); give "
                 "--sigma-value with --lower and --upper for the exact curve.")
    return {"convention": "worst case over where the mean sits and how wide the "
                          "tolerance is: alpha on the lower edge of the band at the AQL, "
                          "beta on its upper edge at the RQL",
            "aql": {"lower": pa_aql, "upper": pa_known_two(n, k, aql, None, "upper"),
                    "one_tail": one[0]},
            "rql": {"lower": pa_known_two(n, k, rql, None, "lower"), "upper": pa_rql,
                    "one_tail": one[1]}}

def _attributes(targets: Targets, wanted: bool):
    """The attributes single plan (binomial) for the same two points."""
    if not wanted:
        return None, ""
    from lotwise.families.single import design_single

    try:
        return design_single(aql=targets.aql, rql=targets.rql, alpha=targets.alpha,
                             beta=targets.beta), ""
    except Infeasible as exc:
        return None, f"No attributes single plan for the same points: {exc}"


def _edge(n, m, level, which):
    """Lower or upper edge of the exact band at one level (see
    :func:`pa_estimate_two`)."""
    return float(pa_estimate_two(n, m, np.array([level]), which)[0])


def _m_root(f, start, up: bool = True):
    """Where the increasing ``f(M)`` changes sign near ``start``.

    A bracket is grown from ``start`` (0.5 % first, secant-guided and at
    least doubling), then narrowed by regula falsi with the Illinois
    modification (both ends move; superlinear) to 1e-11 relative. Returns
    ``(below, above)`` with ``f(below) < 0 <= f(above)`` (``below`` None when
    ``f >= 0`` down to 1e-300), or None when ``f < 0`` up to ``M = 1``.
    ``up`` is kept for the callers' reading: the search goes where the sign
    says.
    """
    x0, f0 = start, f(start)
    step = 0.005
    while True:  # grow a bracket
        x1 = x0 * (1 + step) if f0 < 0 else x0 / (1 + step)
        if x1 >= 1.0:
            x1 = 0.5 * (x0 + 1.0)
            if x1 - x0 <= 1e-12:
                return None
        if x1 <= 1e-300:
            return None, x0
        f1 = f(x1)
        if (f0 < 0) != (f1 < 0):
            break
        if f1 != f0:  # aim past the secant's root, but at least double the step
            guess = abs((x1 - x0) * f1 / (f1 - f0)) / x1
            step = max(2.0 * step, min(1.5 * guess, 1.0))
        else:
            step *= 4.0
        x0, f0 = x1, f1
    (a, fa), (b, fb) = ((x0, f0), (x1, f1)) if x0 < x1 else ((x1, f1), (x0, f0))
    side = 0
    while b - a > 1e-11 * b:
        c = b - fb * (b - a) / (fb - fa)
        if not a < c < b:
            c = 0.5 * (a + b)
        fc = f(c)
        if fc < 0:
            a, fa = c, fc
            if side == -1:
                fb *= 0.5
            side = -1
        else:
            b, fb = c, fc
            if side == 1:
                fa *= 0.5
            side = 1
    return a, b


def _m_low(n, targets: Targets, guess: float):
    """Smallest ``M`` whose lower edge at the AQL meets the producer's risk
    (the edge rises in ``M``); None when none below 1 does."""
    got = _m_root(lambda m: _edge(n, m, targets.aql, "lower") - (1.0 - targets.alpha),
                  guess, True)
    return None if got is None else got[1]


def _m_high(n, targets: Targets, guess: float):
    """Largest ``M`` (to 1e-11) whose upper edge at the RQL meets the
    consumer's risk (the edge rises in ``M``)."""
    got = _m_root(lambda m: _edge(n, m, targets.rql, "upper") - targets.beta - _TOL,
                  guess, True)
    return None if got is None else got[0]


def _one_tail_m(n, targets: Targets):
    """The one-limit window in ``M`` at ``n`` (noncentral t, exact)."""
    k_lo, k_hi = k_window(n, targets, "unknown", "upper")
    return float(estimate_unknown(k_hi, n)), float(estimate_unknown(k_lo, n))


def _design_estimate_method(targets: Targets, *, lower, upper, k_rule, max_n,
                            attributes) -> VariablesDesign:
    """Two limits, sigma unknown: the smallest ``n`` and an ``M`` meeting both
    risks exactly for every split of the nonconforming between the tails.

    The band over the splits contains the one-tail curve (the split with
    nothing beyond the lower limit), so no ``n`` below the one-tail answer
    ``n1`` (noncentral t) works; from ``n1`` up, ``n`` is feasible exactly
    when the smallest ``M`` meeting alpha on the lower edge at the AQL also
    meets beta on the upper edge at the RQL (both edges rise in ``M``).
    """
    cap = _N_CAP if max_n is None else max_n
    if cap < 3:
        raise InputError(f"--max-n ({cap}) must be at least 3 for this method")

    def one_tail(n):
        lo, hi = k_window(n, targets, "unknown", "upper")
        return lo <= hi

    n1 = _smallest_n(one_tail, 3, cap)
    if n1 is None:
        lo, hi = k_window(cap, targets, "unknown", "upper")
        raise Infeasible(f"no plan with n <= {cap} meets both risks even with the mean near "
                         f"one limit: at n = {cap} the consumer's risk needs k >= {lo:.4f} and "
                         f"the producer's k <= {hi:.4f}", {"n": cap, "k_low": lo, "k_high": hi})
    lows: dict = {}

    def m_low(n):
        if n not in lows:
            lows[n] = _m_low(n, targets, _one_tail_m(n, targets)[0])
        return lows[n]

    def ok(n):
        m = m_low(n)
        return m is not None and _edge(n, m, targets.rql, "upper") <= targets.beta + _TOL

    last_bad, n, step = n1 - 1, n1, 1
    while not ok(n):
        if n >= cap:
            raise Infeasible(f"no plan with n <= {cap} meets both risks for every split of the "
                             f"nonconforming between the tails (exact): at n = {cap} meeting "
                             f"alpha needs M >= {m_low(n) or 1.0:.6g}, and there beta is "
                             "missed", {"n": cap, "m_low": m_low(n)})
        last_bad, n, step = n, min(n + step, cap), step * 2
    lo_n, hi_n = last_bad, n
    while hi_n - lo_n > 1:
        mid = (lo_n + hi_n) // 2
        if ok(mid):
            hi_n = mid
        else:
            lo_n = mid
    n = hi_n
    m_lo = m_low(n)
    m_hi = _m_high(n, targets, _one_tail_m(n, targets)[1])
    m, dec = _choose_m(m_lo, max(m_hi, m_lo), k_rule)
    plan = VariablesPlan(n=n, m=m, sigma="unknown", limit="both", lower=lower, upper=upper)
    two = _exact_report(plan, targets)
    two["m_range"] = {"low": m_lo, "high": m_hi, "strict_high": False}
    two["one_tail_n"] = n1
    pa_aql, pa_rql = two["worst_aql"]["pa"], two["worst_rql"]["pa"]
    approx = wallis(targets)
    approx["alpha"] = 1.0 - float(pa_unknown(approx["n"], approx["k"], targets.aql))
    approx["beta"] = float(pa_unknown(approx["n"], approx["k"], targets.rql))
    approx["exact_minus_approximation"] = int(n - approx["n"])
    approx["meets"] = bool(approx["alpha"] <= targets.alpha + _TOL
                           and approx["beta"] <= targets.beta + _TOL)
    approx["method"] += "; one-limit s-method for the total fraction"
    za, zb, z1, z2 = _z(targets)
    known_n = _ceil(closed_form_known(za, zb, z1, z2)[0])
    notes = [
        f"Estimate method: accept when the estimated fraction beyond both limits is at most "
        f"M = {m:.5g}, equivalent with one limit to k = {plan.k_equivalent:.4f}. The two-limit "
        f"risks are exact for every split of the nonconforming between the tails (quadrature "
        f"over the law of s, error about 1e-10 or less; the worst split found by a bounded "
        f"search); "
        f"any M from {m_lo:.6g} to {m_hi:.6g} meets both risks in every split with n = {n}.",
        f"With the mean near one limit the risks are those of the noncentral t: alpha "
        f"{format_pct(1 - two['one_tail_exact']['pa_aql'])}, beta "
        f"{format_pct(two['one_tail_exact']['pa_rql'])}; that case alone needs n = {n1}.",
    ]
    prev = None
    if n - 1 >= n1 and m_low(n - 1) is not None:
        prev_hi = _m_high(n - 1, targets, _one_tail_m(n - 1, targets)[1])
        prev = (k_for_estimate(n - 1, prev_hi) if prev_hi is not None else float("inf"),
                k_for_estimate(n - 1, m_low(n - 1)))
    att, note = _attributes(targets, attributes)
    return VariablesDesign(plan=plan, targets=targets,
                           k_low=k_for_estimate(n, m_hi), k_high=k_for_estimate(n, m_lo),
                           k_rule=k_rule, k_decimals=dec, pa_aql=float(pa_aql),
                           pa_rql=float(pa_rql), approximation=approx, known_sigma_n=known_n,
                           attributes=att, attributes_note=note, previous_window=prev,
                           two_limit=two, notes=notes)


def _choose_m(m_lo: float, m_hi: float, rule: str) -> tuple[float, int]:
    """``M`` in ``[m_lo, m_hi)`` by ``rule`` (midpoint; 'low' k = largest M;
    'high' k = smallest M), rounded to the fewest significant digits (>= 3)
    that stay inside."""
    target = {"midpoint": 0.5 * (m_lo + m_hi), "low": m_hi, "high": m_lo}[rule]
    for d in range(3, 16):
        e = 10.0 ** (d - 1 - math.floor(math.log10(target)))
        if rule == "midpoint":
            mr = round(target * e) / e
        elif rule == "low":
            mr = (math.ceil(target * e) - 1) / e
        else:
            mr = math.ceil(target * e) / e
        if m_lo <= mr < m_hi:
            return mr, d
    return target, 17


def _exact_report(plan, targets) -> dict:
    """Exact two-limit risks of an estimate-method plan: both edges of the band
    at the AQL and the RQL, the split where each worst case lies, the centred
    process and the one-tail (noncentral t) values."""
    from lotwise.core.twolimit import band, pa_split

    levels = np.array([targets.aql, targets.rql])
    (lo, lo_at), (up, up_at) = band(plan.n, levels, m=plan.m, shares=True)
    centred = pa_split(plan.n, levels, np.array([0.5, 0.5]), m=plan.m)
    one = pa_unknown(plan.n, plan.k_equivalent, levels)
    return {
        "convention": "exact for every split of the nonconforming fraction between the tails "
                      "(quadrature over the law of s); alpha on the lower edge of the band at "
                      "the AQL, beta on its upper edge at the RQL",
        "m": float(plan.m),
        "k_equivalent": plan.k_equivalent,
        "one_tail_exact": {"pa_aql": float(one[0]), "pa_rql": float(one[1])},
        "band": {"aql": {"lower": float(lo[0]), "upper": float(up[0])},
                 "rql": {"lower": float(lo[1]), "upper": float(up[1])}},
        "centred": {"pa_aql": float(centred[0]), "pa_rql": float(centred[1])},
        "worst_aql": {"lower_tail_share": float(lo_at[0]), "pa": float(lo[0])},
        "worst_rql": {"lower_tail_share": float(up_at[1]), "pa": float(up[1])},
    }


def report_extras(plan, targets, scope, model: str, report: dict) -> dict:
    """The two-limit band's conventions beside the plan's risks."""
    out = {}
    if plan.limit == "both" and plan.sigma == "unknown":
        one = plan.pa([targets.aql, targets.rql], "noncentral-t")
        out["one_tail_exact"] = {"pa_aql": float(one[0]), "pa_rql": float(one[1])}
    if plan.limit == "both" and plan.sigma == "known" and plan.width is None:
        out["convention"] = "worst case over where the mean sits (tolerance width not given)"
    return out


def design_registered(*, aql: float, rql: float, alpha: float = 0.05, beta: float = 0.10,
                      lot_size: int | None = None, model: str | None = None,
                      per_unit: bool = False, sigma: str | None = None,
                      limit: str | None = None, **options) -> VariablesDesign:
    """:func:`design_variables` behind the registry's common designer signature.

    A variables plan takes the process view: the lot size and the attributes
    model do not enter it (they are accepted and not used). ``sigma``
    defaults to ``known`` when ``sigma_value`` is given, else ``unknown``;
    ``limit`` to the limits given (``both`` for two, ``upper`` for none).

    Raises
    ------
    InputError
        For nonconformities per unit (a variables plan judges a fraction
        nonconforming), or a known sigma without its value.
    """
    if per_unit:
        raise InputError("a variables plan judges a fraction nonconforming from measurements; "
                         "it does not apply to nonconformities per unit")
    lower, upper = options.get("lower"), options.get("upper")
    if limit is None:
        limit = "both" if (lower is not None and upper is not None) else (
            "lower" if lower is not None else "upper")
    if sigma is None:
        sigma = "known" if options.get("sigma_value") is not None else "unknown"
    if lower is not None and upper is not None and not lower < upper:
        raise InputError(f"lower ({lower:g}) must be below upper ({upper:g})")
    return design_variables(aql=aql, rql=rql, alpha=alpha, beta=beta, sigma=sigma, limit=limit,
                            **options)



def check_options(var: dict, *, per_unit: bool, key=lambda name: name) -> None:
    """The rules tying a variables design's options together (plan files and
    catalogues; the command line checks its options as it reads them).

    ``var`` is modified in place: ``sigma`` defaults to ``known`` when
    ``sigma_value`` is given, else ``unknown``.
    """
    if per_unit:
        raise InputError(f"{key('scheme')} (variables) does not apply to "
                         "nonconformities per unit")
    if "lower" not in var and "upper" not in var:
        raise InputError(f"{key('scheme')} (variables) needs {key('upper')} and/or "
                         f"{key('lower')} (specification limits)")
    if "lower" in var and "upper" in var and not var["lower"] < var["upper"]:
        raise InputError(f"{key('lower')} ({var['lower']:g}) must be below {key('upper')} "
                         f"({var['upper']:g})")
    var.setdefault("sigma", "known" if "sigma_value" in var else "unknown")
    if var["sigma"] == "known" and "sigma_value" not in var:
        raise InputError(f"{key('sigma')} (known) needs {key('sigma_value')}")
    if var["sigma"] == "unknown" and "sigma_value" in var:
        raise InputError(f"{key('sigma_value')} ({var['sigma_value']:g}) is given with "
                         f"{key('sigma')} (unknown); drop one of them")


FAMILY = Family(
    name="variables", plan_class=VariablesPlan, parse=parse_variables, keys_hint=("k",),
    extras=report_extras,
    design=design_registered,
    check_options=check_options,
    design_options={"sigma": "known or unknown (default: known when sigma_value is given)",
                    "sigma_value": "known process sigma",
                    "limit": "upper, lower or both (default: the limits given)",
                    "upper": "upper specification limit",
                    "lower": "lower specification limit",
                    "max_n": "largest affordable sample"},
    option_types={"sigma": Option(kind=OptionKind.CHOICE, choices=("known", "unknown")),
                  "sigma_value": Option(kind=OptionKind.NUMBER, positive=True),
                  "limit": Option(kind=OptionKind.CHOICE, choices=("upper", "lower", "both")),
                  "upper": Option(kind=OptionKind.NUMBER),
                  "lower": Option(kind=OptionKind.NUMBER),
                  "max_n": Option(kind=OptionKind.WHOLE, minimum=1)},
    description="variables sampling of a normally distributed measurement (k- or M-method)",
)
