"""Acceptance-probability kernels for a single attribute sample.

Three models give the probability ``Pa`` that a sample of ``n`` units holds
at most ``c`` nonconforming items (or nonconformities):

* :func:`pa_hypergeometric` -- a finite lot of ``N`` items holding ``D``
  nonconforming ones, the sample drawn without replacement (Dodge's type A
  OC curve);
* :func:`pa_binomial` -- a fraction nonconforming ``p`` of the producing
  process or of a very large lot (type B OC curve);
* :func:`pa_poisson` -- a Poisson count with mean ``lambda = n * p``: exact
  for nonconformities per unit, an approximation for a fraction
  nonconforming.

All three are vectorised (numpy broadcasting over every argument), return
values clipped to ``[0, 1]`` and never NaN for valid input, and are monotone:
``Pa`` falls as ``p`` (or ``D``) or ``n`` grows and rises with ``c``. The
designers in :mod:`lotwise.design` rely on that monotonicity.

Closed forms are used where they exist: the regularised incomplete beta
function for the binomial tail and the regularised incomplete gamma function
for the Poisson tail [1]_. The hypergeometric tail has no such form; it is
computed as one accurately evaluated probability mass (Loader's saddle-point
expansion [2]_) times a short sum of mass ratios taken over the smaller tail,
stopping when the terms no longer change the sum.

Only :mod:`scipy.special` is imported here: ``scipy.stats`` costs about half
a second of start-up, which the command line cannot afford.

References
----------
.. [1] M. Abramowitz and I. A. Stegun, *Handbook of Mathematical Functions*,
   26.5.24 (binomial) and 26.4.21 (Poisson).
.. [2] C. Loader, "Fast and Accurate Computation of Binomial Probabilities",
   2000.

Examples
--------
A receiving inspector samples 80 housings and accepts on 2 nonconforming.
At a process running 1 % nonconforming the lot is accepted 95.3 % of the
time:

>>> round(float(pa_binomial(80, 2, 0.01)), 4)
0.9534
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

__all__ = [
    "MODELS",
    "pa_binomial",
    "pa_poisson",
    "pa_hypergeometric",
    "hypergeometric_pmf",
    "lot_count",
]

#: The models by name, in the order reports list them.
MODELS = ("hypergeometric", "binomial", "poisson")

_LN_SQRT_2PI = 0.5 * math.log(2.0 * math.pi)
_EPS = np.finfo(float).eps


def _finish(pa):
    """Clip to [0, 1] and return a Python float for scalar results."""
    pa = np.clip(pa, 0.0, 1.0)
    if np.ndim(pa) == 0:
        return float(pa)
    return pa


def pa_binomial(n, c, p):
    """Probability of acceptance under the binomial model (type B OC curve).

    ``Pa = P(X <= c)`` with ``X ~ Binomial(n, p)``, computed as the
    complemented regularised incomplete beta function
    ``1 - I_p(c + 1, n - c)``, which keeps full absolute accuracy for
    ``p`` down to 1e-300 and up to ``1 - 1e-16``.

    Parameters
    ----------
    n : int or array_like
        Sample size, ``n >= 1``.
    c : int or array_like
        Acceptance number, ``c >= 0``; ``c >= n`` accepts every lot.
    p : float or array_like
        Fraction nonconforming, ``0 <= p <= 1``.

    Returns
    -------
    float or ndarray
        ``Pa``, broadcast over the arguments.
    """
    n, c, p = np.broadcast_arrays(np.asarray(n, dtype=float), np.asarray(c, dtype=float),
                                  np.asarray(p, dtype=float))
    with np.errstate(all="ignore"):
        # betaincc(a, b, x) = 1 - I_x(a, b); invalid where c >= n, patched below.
        pa = special.betaincc(c + 1.0, np.maximum(n - c, 1.0), p)
        pa = np.where(c >= n, 1.0, pa)
        pa = np.where(p <= 0.0, 1.0, pa)
        pa = np.where(p >= 1.0, np.where(c >= n, 1.0, 0.0), pa)
    return _finish(pa)


def pa_poisson(n, c, p):
    """Probability of acceptance under the Poisson model.

    ``Pa = P(X <= c)`` with ``X ~ Poisson(n * p)``, computed as the
    regularised upper incomplete gamma function ``Q(c + 1, n * p)``.

    Parameters
    ----------
    n : int or array_like
        Sample size (units inspected), ``n >= 1``.
    c : int or array_like
        Acceptance number, ``c >= 0``.
    p : float or array_like
        Nonconformities per unit (exact model) or fraction nonconforming
        (the Poisson approximation to the binomial), ``p >= 0``.
    """
    n, c, p = np.broadcast_arrays(np.asarray(n, dtype=float), np.asarray(c, dtype=float),
                                  np.asarray(p, dtype=float))
    lam = n * p
    with np.errstate(all="ignore"):
        pa = special.gammaincc(c + 1.0, lam)
        pa = np.where(lam <= 0.0, 1.0, pa)
    return _finish(pa)


# --- hypergeometric ---------------------------------------------------------

# Stirling-series coefficients for log(n!) - log(sqrt(2 pi n) (n/e)^n).
_S0, _S1, _S2, _S3, _S4 = 1 / 12, 1 / 360, 1 / 1260, 1 / 1680, 1 / 1188


def _stirlerr_table():
    k = np.arange(16, dtype=float)
    ks = np.maximum(k, 1.0)
    t = special.gammaln(ks + 1.0) - (ks + 0.5) * np.log(ks) + ks - _LN_SQRT_2PI
    t[0] = 0.0
    return t


_STIRLERR_SMALL = _stirlerr_table()


def _stirlerr(n):
    """Error of Stirling's formula, ``log(n!) - log(sqrt(2 pi n) (n/e)^n)``.

    Whole ``n <= 15`` from a table made with the log-gamma function (small
    numbers, so no cancellation to speak of); above, the asymptotic series.
    """
    n = np.asarray(n, dtype=float)
    nl = np.maximum(n, 16.0)
    nn = nl * nl
    series = (_S0 - (_S1 - (_S2 - (_S3 - _S4 / nn) / nn) / nn) / nn) / nl
    small = n <= 15.0
    if not small.any():
        return series
    table = _STIRLERR_SMALL[np.clip(n, 0, 15).astype(np.int64)]
    return np.where(small, table, series)


def _bd0(x, m):
    """Deviance term ``x log(x/m) + m - x``, accurate when ``x`` is near ``m``.

    Near ``m`` it is summed as the series ``(x - m) v + 2 x sum v^(2j+1)/(2j+1)``
    with ``v = (x - m)/(x + m)``, ``|v| < 0.1``, so nine terms reach full
    double precision.
    """
    near = np.abs(x - m) < 0.1 * (x + m)
    far = x * np.log(np.where(x > 0, x / m, 1.0)) + m - x
    if not near.any():
        return far
    v = np.where(near, (x - m) / (x + m), 0.0)
    total = (x - m) * v
    ej = 2.0 * x * v
    v2 = v * v
    # Terms shrink by v^2 <= 0.01 each; take as many as the largest v needs
    # to fall below double precision (at most nine).
    top = float(v2.max()) if v2.size else 0.0
    terms = 9 if top >= 0.01 else (0 if top == 0.0 else min(9, int(-16.5 / np.log10(top)) + 1))
    for j in range(1, terms + 1):
        ej = ej * v2
        total = total + ej / (2 * j + 1)
    return np.where(near, total, far)


def _log_dbinom(x, n, p, q):
    """``log P(X = x)``, ``X ~ Binomial(n, p)``, ``q = 1 - p``, for ``0 <= x <= n``
    and ``0 < p < 1``: Loader's saddle-point form, accurate for huge ``n``.

    Called with numpy errors silenced by :func:`pa_hypergeometric`.
    """
    inner = (x > 0) & (x < n)
    xs = np.where(inner, x, 1.0)
    ns = np.where(inner, n, 2.0)
    out = (_stirlerr(ns) - _stirlerr(xs) - _stirlerr(ns - xs)
           - _bd0(xs, ns * p) - _bd0(ns - xs, ns * q)
           - _LN_SQRT_2PI - 0.5 * (np.log(xs) + np.log1p(-xs / ns)))
    if not inner.all():
        zero = x == 0
        if zero.any():
            at0 = np.where(p < 0.1, -_bd0(n, n * q) - n * p, n * np.log(q))
            out = np.where(zero, at0, out)
        full = (x == n) & (n > 0)
        if full.any():
            atn = np.where(q < 0.1, -_bd0(n, n * p) - n * q, n * np.log(p))
            out = np.where(full, atn, out)
    return out


def _hyper_pmf(k, n, N, D):
    """Hypergeometric mass for ``max(0, n - (N - D)) <= k <= min(n, D)`` and
    ``0 < n < N`` (errors silenced by the caller)."""
    p = n / N
    q = (N - n) / N
    # P(k) = Bin(k; D, p) Bin(n - k; N - D, p) / Bin(n; N, p); the last has
    # x = n p exactly, so its deviance terms vanish.
    log3 = (_stirlerr(N) - _stirlerr(n) - _stirlerr(N - n)
            - _LN_SQRT_2PI - 0.5 * (np.log(n) + np.log1p(-n / N)))
    return np.exp(_log_dbinom(k, D, p, q) + _log_dbinom(n - k, N - D, p, q) - log3)


def hypergeometric_pmf(k, n, N, D):
    """Probability that a sample of ``n`` from a lot of ``N`` holding ``D``
    nonconforming items contains exactly ``k`` of them.

    Written as a ratio of binomial masses at ``p = n / N`` and evaluated with
    Loader's saddle-point expansion [2]_, so it stays accurate for lots of 1e9.
    """
    k, n, N, D = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (k, n, N, D)))
    with np.errstate(all="ignore"):
        inside = (n < N) & (n > 0)
        nn = np.where(inside, n, 1.0)
        NN = np.where(inside, N, 2.0)
        out = _hyper_pmf(k, nn, NN, D)
        lo = np.maximum(0.0, n - (N - D))
        hi = np.minimum(n, D)
        out = np.where((k < lo) | (k > hi), 0.0, out)
        out = np.where(n >= N, np.where(k == D, 1.0, 0.0), out)
        out = np.where(n == 0, np.where(k == 0, 1.0, 0.0), out)
    return np.clip(np.nan_to_num(out, nan=0.0), 0.0, 1.0)


def _lower_tail_sum(x, red, black, n):
    """``sum_{k<=x} P(k) / P(x)`` by the backward mass-ratio recurrence.

    ``P(k-1)/P(k) = k (black - n + k) / ((n + 1 - k)(red + 1 - k))``. Used only
    for ``x`` at or below the mean, where the terms fall at least
    geometrically once past the mode. The ratios are taken in blocks (one
    cumulative product per block) until every remaining term is below
    machine precision relative to its sum or the support ends.
    """
    shape = np.broadcast(x, red, black, n).shape
    x, red, black, n = (np.array(a, dtype=float).ravel()
                        for a in np.broadcast_arrays(x, red, black, n))
    total = np.ones(x.shape)
    term = np.ones(x.shape)
    lo = np.maximum(0.0, n - black)
    active = np.flatnonzero(x > lo)
    done = 0
    block = int(min(16.0, max(1.0, float(np.max(x[active] - lo[active]))))) if active.size else 1
    while active.size:
        steps = np.arange(block, dtype=float)
        k = x[active, None] - done - steps[None, :]
        r, b, m, lw = red[active, None], black[active, None], n[active, None], lo[active, None]
        with np.errstate(all="ignore"):
            ratio = k * (b - m + k) / ((m + 1.0 - k) * (r + 1.0 - k))
        ratio = np.where(k > lw, ratio, 0.0)
        run = term[active, None] * np.cumprod(ratio, axis=1)
        total[active] += run.sum(axis=1)
        term[active] = run[:, -1]
        done += block
        keep = (x[active] - done > lo[active]) & (term[active] >= _EPS * total[active])
        active = active[keep]
        block = min(block * 2, 4096)
    return total.reshape(shape)


def _direct_tail(x, n, N, D, upper):
    """``P(X <= x)`` (``upper`` False) or ``P(X > x)`` (``upper`` True) for
    ``X ~ H(n, D, N)``, ``0 < n < N``, summed directly: the upper tail as the
    lower tail of the conforming count, ``P(X > x) = P(n - X <= n - x - 1)``."""
    red = np.where(upper, N - D, D)
    black = np.where(upper, D, N - D)
    y = np.where(upper, n - x - 1.0, x)
    lo = np.maximum(0.0, n - black)
    hi = np.minimum(n, red)
    y_safe = np.clip(y, lo, hi)
    inside = (n < N) & (n > 0)
    mass = _hyper_pmf(y_safe, np.where(inside, n, 1.0), np.where(inside, N, 2.0), red)
    tail = mass * _lower_tail_sum(y_safe, red, black, n)
    tail = np.where(y < lo, 0.0, tail)
    return np.where(y >= hi, 1.0, tail)


def _hyper_tails(x, n, N, D):
    """``(P(X <= x), P(X > x))`` for ``X ~ H(n, D, N)`` with ``0 < n < N``,
    each with full relative accuracy.

    The tail on the far side of ``x`` from the mean ``n D / N`` is summed
    first (it is the short one); where it still exceeds one half (a mean
    below one, say), the other tail is summed directly too instead of being
    taken as one minus it.
    """
    x, n, N, D = np.broadcast_arrays(x, n, N, D)
    upper = x * N > n * D
    first = _direct_tail(x, n, N, D, upper)
    other = 1.0 - first
    redo = np.flatnonzero(np.ravel(first > 0.5))
    if redo.size:
        other = np.array(other, dtype=float).ravel()
        args = (a.ravel()[redo] for a in (x, n, N, D))
        other[redo] = _direct_tail(*args, ~upper.ravel()[redo])
        other = other.reshape(first.shape)
    return np.where(upper, other, first), np.where(upper, first, other)


def pa_hypergeometric(n, c, N, D):
    """Probability of acceptance for a finite lot (type A OC curve).

    ``Pa = P(X <= c)`` where ``X`` is the number of nonconforming items in a
    sample of ``n`` drawn without replacement from a lot of ``N`` items that
    holds ``D`` nonconforming ones.

    Parameters
    ----------
    n : int or array_like
        Sample size, ``1 <= n <= N``.
    c : int or array_like
        Acceptance number, ``c >= 0``.
    N : int or array_like
        Lot size (up to 1e9 and beyond).
    D : int or array_like
        Whole number of nonconforming items in the lot, ``0 <= D <= N``.

    Notes
    -----
    The smaller tail is summed (see :func:`_hyper_tails`), so the cost grows
    with the spread of the distribution, not with ``c``. When the sample is
    more than half the lot, the items left in the lot are described instead:
    the ``D - X`` nonconforming items not drawn are a sample of ``N - n``
    from the same lot, ``D - X ~ H(N - n, D, N)``, so
    ``P(X <= c) = P(Y > D - c - 1)`` with ``Y ~ H(N - n, D, N)``. The
    saddle-point masses then work at a sampling fraction below one half,
    where they keep full relative accuracy: ``Pa(n = N - 1, c = D - 1)`` is
    ``D/N`` to rounding even for lots of 1e9.
    """
    n, c, N, D = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (n, c, N, D)))
    with np.errstate(all="ignore"):
        big = 2.0 * n > N
        m = np.where(big, N - n, n)
        x = np.where(big, D - c - 1.0, c)
        low, high = _hyper_tails(x, m, N, D)
        pa = np.where(big, high, low)
        # Exact edges: every lot accepted, or none can be; the whole lot inspected.
        pa = np.where(c >= np.minimum(n, D), 1.0, pa)
        pa = np.where(c < n - (N - D), 0.0, pa)
        pa = np.where(n >= N, np.where(D <= c, 1.0, 0.0), pa)
    return _finish(pa)


def lot_count(p, lot_size, rounding):
    """Whole number of nonconforming items for a fraction ``p`` of a lot.

    ``rounding`` is ``"up"`` (producer's side: a lot at the AQL may hold the
    next whole item), ``"down"`` (consumer's side) or ``"nearest"``. A product
    ``p * N`` within 1e-9 of a whole number is taken as that number, so that
    ``1 % of 1000`` is 10 and not 11 through binary rounding.
    """
    x = float(p) * float(lot_size)
    r = round(x)
    if abs(x - r) <= 1e-9 * max(1.0, abs(x)):
        return int(r)
    if rounding == "up":
        return int(math.ceil(x))
    if rounding == "down":
        return int(math.floor(x))
    if rounding == "nearest":
        return int(r)
    raise ValueError(f"rounding ({rounding!r}) must be 'up', 'down' or 'nearest'")
