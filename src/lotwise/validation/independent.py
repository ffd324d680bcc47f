"""Independent computations the reference cases compare the tool with.

Nothing here calls lotwise or the scipy routines lotwise calls for the same
quantity (``scipy.special.betainc``/``bdtr`` for the binomial, ``gammaincc``
for the Poisson, ``nctdtr`` for the noncentral t, ``betaincinv`` for
Clopper-Pearson bounds): sums are taken term by term in mpmath, counts in
exact integers, searches by enumeration.

Examples
--------
>>> round(binomial_cdf(50, 1, 0.05), 5)
0.27943
>>> single_design(0.02, 0.15, 0.10, 0.20)
(19, 1)
"""

from __future__ import annotations

import math
from fractions import Fraction

__all__ = ["binomial_cdf", "poisson_cdf", "hyper_cdf", "bisect", "single_design",
           "design_is_smallest", "success_run_n", "finite_zero_n", "cp_upper", "cp_interval",
           "poisson_unity", "nct_sf"]


def binomial_cdf(n: int, c: int, p, dps: int = 50) -> float:
    """``P(X <= c)``, ``X ~ Binomial(n, p)``: masses summed in mpmath at ``dps``
    digits, each from the previous by the exact ratio ``(n - k + 1) p / (k (1 - p))``."""
    import mpmath as mp

    with mp.workdps(dps):
        p = mp.mpf(p)
        term = (1 - p) ** n
        total = term
        r = p / (1 - p)
        for k in range(1, c + 1):
            term = term * (n - k + 1) * r / k
            total += term
        return float(total)


def poisson_cdf(lam, c: int, dps: int = 50) -> float:
    """``P(X <= c)``, ``X ~ Poisson(lam)``, summed in mpmath."""
    import mpmath as mp

    with mp.workdps(dps):
        lam = mp.mpf(lam)
        term = mp.exp(-lam)
        total = term
        for k in range(1, c + 1):
            term = term * lam / k
            total += term
        return float(total)


def hyper_cdf(n: int, c: int, N: int, D: int) -> float:
    """Hypergeometric ``P(X <= c)`` in exact integer arithmetic."""
    num = sum(math.comb(D, k) * math.comb(N - D, n - k) for k in range(0, min(c, D, n) + 1))
    return float(Fraction(num, math.comb(N, n)))


def bisect(f, lo, hi, steps: int = 200):
    """Root of ``f`` (mpmath numbers) changing sign on ``[lo, hi]``, by bisection."""
    import mpmath as mp

    lo, hi = mp.mpf(lo), mp.mpf(hi)
    flo = f(lo)
    for _ in range(steps):
        mid = (lo + hi) / 2
        fm = f(mid)
        if (fm > 0) == (flo > 0):
            lo, flo = mid, fm
        else:
            hi = mid
    return (lo + hi) / 2


def _pa(model: str, n: int, c: int, p) -> float:
    return poisson_cdf(n * p, c, 30) if model == "poisson" else binomial_cdf(n, c, p, 30)


def _c_for_alpha(model, n, aql, alpha, c_max=None):
    """Smallest ``c`` with ``Pa(aql) >= 1 - alpha`` at ``n`` (None if none up to ``c_max``)."""
    top = n if c_max is None else c_max
    for c in range(0, top + 1):
        if _pa(model, n, c, aql) >= 1 - alpha - 1e-12:
            return c
    return None


def single_design(aql, rql, alpha=0.05, beta=0.10, model="binomial", c=None, n_max=400):
    """Enumeration of ``n = 1, 2, ...``: the first ``n`` at which the smallest
    ``c`` meeting ``alpha`` (or the fixed ``c``) also meets ``beta``, as
    ``(n, c)``; ``"infeasible"`` when no ``n`` up to ``n_max`` does. Pa rises
    with ``c``, so a larger ``c`` than the smallest meeting ``alpha`` cannot
    meet ``beta`` when that one does not."""
    for n in range(1, n_max + 1):
        if c is None:
            cc = _c_for_alpha(model, n, aql, alpha, c_max=n if model != "poisson" else 4 * n + 20)
        else:
            cc = c if _pa(model, n, c, aql) >= 1 - alpha - 1e-12 else None
        if cc is not None and _pa(model, n, cc, rql) <= beta + 1e-12:
            return (n, cc)
    return "infeasible"


def design_is_smallest(n, c, aql, rql, alpha=0.05, beta=0.10):
    """``(n, c)`` when the binomial plan meets both risks and the smallest
    ``c`` meeting ``alpha`` at ``n - 1`` misses ``beta`` (mpmath); otherwise
    a word saying which check failed."""
    if _pa("binomial", n, c, aql) < 1 - alpha or _pa("binomial", n, c, rql) > beta:
        return "plan misses a risk"
    if c > 0 and _pa("binomial", n, c - 1, aql) >= 1 - alpha:
        return "a smaller c meets alpha"
    c1 = _c_for_alpha("binomial", n - 1, aql, alpha, c_max=c + 5)
    if c1 is not None and _pa("binomial", n - 1, c1, rql) <= beta:
        return "n - 1 meets both risks"
    return (n, c)


def success_run_n(reliability, confidence, failures=0) -> int:
    """Smallest ``n`` with ``P(X <= failures | n, 1 - R) <= 1 - C`` (mpmath, enumeration)."""
    n = failures + 1
    while binomial_cdf(n, failures, 1 - reliability, 30) > 1 - confidence + 1e-15:
        n += 1
    return n


def finite_zero_n(N: int, D: int, beta) -> int:
    """Smallest ``n`` with ``C(N - D, n)/C(N, n) <= beta`` (exact integers)."""
    beta = Fraction(str(beta))
    for n in range(0, N + 1):
        if Fraction(math.comb(N - D, n), math.comb(N, n)) <= beta:
            return n
    return N


def cp_upper(k: int, n: int, confidence, dps: int = 40) -> float:
    """One-sided Clopper-Pearson upper bound: ``P(X <= k | n, p) = 1 - C`` (mpmath bisection)."""
    import mpmath as mp

    with mp.workdps(dps):
        target = 1 - mp.mpf(str(confidence))

        def f(p):
            return _mp_cdf(n, k, p) - target

        return float(bisect(f, mp.mpf(0), mp.mpf(1)))


def _mp_cdf(n, k, p):
    import mpmath as mp

    return mp.fsum(mp.binomial(n, j) * p ** j * (1 - p) ** (n - j) for j in range(k + 1))


def cp_interval(x: int, m: int, confidence, dps: int = 40) -> tuple:
    """Two-sided Clopper-Pearson interval: ``P(X >= x | p_lo) = (1 - C)/2`` and
    ``P(X <= x | p_hi) = (1 - C)/2`` (mpmath bisection)."""
    import mpmath as mp

    with mp.workdps(dps):
        tail = (1 - mp.mpf(str(confidence))) / 2
        lo = mp.mpf(0) if x == 0 else bisect(lambda p: (1 - _mp_cdf(m, x - 1, p)) - tail, 0, 1)
        hi = mp.mpf(1) if x == m else bisect(lambda p: _mp_cdf(m, x, p) - tail, 0, 1)
        return (float(lo), float(hi))


def poisson_unity(c: int, prob, dps: int = 50) -> float:
    """``n p`` at which the Poisson ``P(X <= c)`` equals ``prob`` (mpmath bisection)."""
    import mpmath as mp

    with mp.workdps(dps):
        prob = mp.mpf(str(prob))

        def f(lam):
            term, total = mp.exp(-lam), mp.exp(-lam)
            for k in range(1, c + 1):
                term = term * lam / k
                total += term
            return total - prob

        return float(bisect(f, mp.mpf(0), mp.mpf(c + 40), steps=240))


def nct_sf(df, nc, t) -> float:
    """``P(T > t)`` for the noncentral t with ``df`` degrees of freedom and
    noncentrality ``nc``: the normal CDF integrated against the chi law of
    ``s/sigma`` (scipy.integrate.quad with scipy.special.ndtr; not the
    noncentral t routine ``nctdtr`` the tool calls)."""
    from scipy import integrate, special

    logc = (1 - df / 2) * math.log(2) - math.lgamma(df / 2) + df / 2 * math.log(df)

    def integrand(w):  # P(Z <= t w - nc) times the density of W = s/sigma (chi_df/sqrt(df))
        return float(special.ndtr(t * w - nc)) * math.exp(
            logc - df * w * w / 2 + (df - 1) * math.log(w))

    top = 1.0 + 12.0 / math.sqrt(df)  # the chi law beyond it holds less than 1e-30
    return 1.0 - integrate.quad(integrand, 1e-300, top, epsabs=1e-13, epsrel=1e-11,
                                limit=200)[0]


def z_upper(p) -> float:
    """Standard normal quantile of ``1 - p`` (mpmath at 30 digits)."""
    import mpmath as mp

    with mp.workdps(30):
        return float(-mp.sqrt(2) * mp.erfinv(2 * mp.mpf(p) - 1))


def _fbisect(f, lo, hi, steps=60):
    """Root of a float function that changes sign on ``[lo, hi]``."""
    flo = f(lo)
    for _ in range(steps):
        mid = 0.5 * (lo + hi)
        fm = f(mid)
        if (fm > 0) == (flo > 0):
            lo, flo = mid, fm
        else:
            hi = mid
    return 0.5 * (lo + hi)


def k_window(n: int, p1, alpha, p2, beta, sigma: str) -> tuple:
    """``(k_lo, k_hi)``: the acceptance constants of a one-limit variables plan
    of ``n`` meeting ``beta`` at ``p2`` (``k >= k_lo``) and ``alpha`` at ``p1``
    (``k <= k_hi``); empty when ``k_lo > k_hi``. Sigma known: closed form with
    mpmath quantiles; unknown: bisection on :func:`nct_sf`."""
    z1, z2, za, zb = z_upper(p1), z_upper(p2), z_upper(alpha), z_upper(beta)
    if sigma == "known":
        return (z2 + zb / math.sqrt(n), z1 - za / math.sqrt(n))
    rn = math.sqrt(n)

    def pa(k, z):
        return nct_sf(n - 1, rn * z, k * rn)

    k_lo = _fbisect(lambda k: pa(k, z2) - beta, 0.0, 5.0)
    k_hi = _fbisect(lambda k: pa(k, z1) - (1 - alpha), 0.0, 5.0)
    return (k_lo, k_hi)


def smallest_variables_n(n: int, p1, alpha, p2, beta, sigma: str):
    """``n`` when a ``k`` meets both risks at ``n`` and none does at ``n - 1``;
    otherwise a word saying which check failed."""
    lo, hi = k_window(n, p1, alpha, p2, beta, sigma)
    if lo > hi:
        return "no k meets both risks at n"
    lo1, hi1 = k_window(n - 1, p1, alpha, p2, beta, sigma)
    if lo1 <= hi1:
        return "n - 1 already meets both risks"
    return n
