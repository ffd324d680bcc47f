"""Exact OC of two-limit variables plans with sigma unknown, by quadrature.

A normal sample of ``n`` gives the mean ``xbar`` and the standard deviation
``s``, independent, ``sqrt(n)(xbar - mu)/sigma`` standard normal and
``W = s/sigma`` chi-distributed, ``(n - 1) W^2`` chi-square with ``n - 1``
degrees of freedom. Measure in units of sigma from the process mean: the
upper limit lies ``zU`` above it and the lower ``zL`` below it
(``d = zU + zL`` the tolerance width). Two acceptance rules are covered.

*k-method, two limits*: accept when ``(U - xbar)/s >= k`` and
``(xbar - L)/s >= k``. Given ``W`` the mean must lie in
``[L + k s, U - k s]``, so

    ``Pa = E_W[ Phi(sqrt(n)(zU - k W)) - Phi(sqrt(n)(k W - zL)) ]^+``,

zero for ``W > d/(2k)``.

*M-method* (minimum-variance unbiased estimates, Lieberman and Resnikoff,
1955): with ``a = sqrt(n)/(n - 1)``, ``b = n/2 - 1`` and
``Gbar(t) = I_{(1 - t)/2}(b, b)`` (``I`` the regularised incomplete beta
function; ``Gbar(t) = 0`` for ``t >= 1``) the estimates beyond the limits
are ``Gbar(a Q_U)`` and ``Gbar(a Q_L)``, ``Q_U = (U - xbar)/s``,
``Q_L = (xbar - L)/s``, and the lot is accepted when their sum is at most
``M``. Write ``t = a Q_U``; then ``a Q_L = 2h - t`` with ``h = a d/(2 W)``.
``Gbar`` is the upper tail of a symmetric beta law on ``[-1, 1]``, unimodal
for ``n >= 4``, so ``phi(t) = Gbar(t) + Gbar(2h - t)`` falls in ``t`` up to
``t = h`` and is symmetric about it: given ``W`` the acceptance set in
``xbar`` is one interval, centred on the middle of the tolerance, empty
when ``2 Gbar(h) > M``; otherwise ``t`` runs from ``T(h)``, the root of
``phi(t) = M`` below ``h``, to ``2h - T(h)``. So

    ``Pa = E_W[ Phi(sqrt(n)(zU - w)) - Phi(sqrt(n)(w - zL)) ]^+``,
    ``w = W T(h)/a``,

the two-limit k-method with a ``k`` that depends on ``W``. Two values of
``h`` matter: ``h0 = Gbar^{-1}(M/2)`` (below it nothing is accepted) and
``h_sat = (1 + t1)/2``, ``t1 = Gbar^{-1}(M)``, above which the lower
estimate is exactly 0 and ``T(h) = t1``: there the rule is the k-method
with ``k = t1/a``, the one-limit equivalent of ``M``. Between them ``T`` is
found once per plan by bisection at the Chebyshev points of
``theta``, ``h = h0 + (h_sat - h0) sin^2(pi theta/2)`` (which makes ``T``
analytic in ``theta``: it behaves like ``sqrt(h - h0)`` at one end and like
``(h_sat - h)^b`` at the other), and evaluated by cubic Hermite
interpolation on 2,049 points (error below 1e-13). For ``n = 3``
(``b = 1/2``, the arcsine law) the set is closed-form: the same interval
with a hole in the middle when ``h`` is below ``cos(pi M/2)``.

Quadrature and its error
------------------------
``W`` is integrated over the central part of its law, between the
quantiles ``1e-16`` and ``1 - 1e-16`` (truncation error at most ``2e-16``),
split where the integrand stops being analytic: at ``W = a d/(2 h_sat)``
and ``W = a d/(2 h0)`` (``d/(2k)`` for the k-method), and for ``n = 3`` at
the hole's edge. Each piece takes a Gauss-Legendre rule, on
``W`` itself where the integrand is analytic up to both ends, and on
``theta`` with ``W = W_a + (W_b - W_a) psi(theta)`` where an end is a
square-root or power-law point (``psi = sin^2(pi theta/2)`` for both ends,
``theta^2`` or ``1 - (1 - theta)^2`` for one: the map makes the integrand
analytic there). For an integrand analytic in the Bernstein ellipse of parameter
``rho`` the N-point rule errs by at most ``64 M_rho rho^(-2N)/(15 (rho^2 - 1))``
(L. N. Trefethen, "Is Gauss quadrature better than Clenshaw-Curtis?",
SIAM Review 50, 2008, Theorem 4.5). Measured: against mpmath integrals at
16-20 digits (``tests/test_variables_exact.py``, ``n`` from 2 to 200) the
agreement is about 1e-14; against rules of 400 points per piece the error
stays below 6e-11 for ``n`` up to 5,000 and about 1e-10 at 20,000 (48
points per piece up to ``n = 400``, 96 above); the interpolated boundary
adds at most about ``n`` times 1e-14.

The OC at a total fraction nonconforming ``p`` depends on how ``p`` splits
between the tails; :func:`band` gives the smallest and the largest ``Pa``
over every split by a bounded maximisation on the share of ``p`` beyond
the lower limit (``0`` to ``1/2``: the rules are symmetric), seeded by five
shares and refined by golden-section search with parabolic steps (Brent's
method, vectorised over the levels) to ``1e-7`` in the share.

Only :mod:`scipy.special` is imported; Gauss-Legendre nodes are computed on
first use and cached.
"""

from __future__ import annotations

import functools
import math

import numpy as np
from scipy import special

__all__ = ["boundary", "pa_limits", "pa_split", "band", "band_of", "gauss_legendre",
           "chi_bulk", "nodes_for", "QUAD_NODES", "SHARE_TOL"]

#: Gauss-Legendre points per piece of the W integral.
QUAD_NODES = 48
#: Tolerance on the lower-tail share in the bounded maximisation.
SHARE_TOL = 1e-5
_TAIL = 1e-16
_HERMITE = 2048


@functools.cache
def gauss_legendre(n: int):
    """Gauss-Legendre nodes and weights on ``[0, 1]`` (computed on first use,
    once per ``n``).

    Newton's method on the three-term recurrence of the Legendre polynomials
    from Tricomi's initial guesses ``cos(pi (i - 1/4) / (n + 1/2))``, all
    nodes at once (a few milliseconds for ``n = 400``, where an eigenvalue
    method takes seconds); weights ``2 / ((1 - x^2) P_n'(x)^2)``
    (W. H. Press et al., *Numerical Recipes*, 3rd ed., 2007, section 4.6).
    """
    i = np.arange(1, n + 1, dtype=float)
    x = np.cos(np.pi * (i - 0.25) / (n + 0.5))
    for _ in range(20):  # quadratic convergence: a handful of steps
        p0, p1 = np.ones_like(x), x.copy()
        for k in range(2, n + 1):
            p0, p1 = p1, ((2 * k - 1) * x * p1 - (k - 1) * p0) / k
        dp = n * (x * p1 - p0) / (x * x - 1.0)
        dx = p1 / dp
        x = x - dx
        if np.max(np.abs(dx)) < 1e-15:
            break
    p0, p1 = np.ones_like(x), x.copy()
    for k in range(2, n + 1):
        p0, p1 = p1, ((2 * k - 1) * x * p1 - (k - 1) * p0) / k
    dp = n * (x * p1 - p0) / (x * x - 1.0)
    w = 2.0 / ((1.0 - x * x) * dp * dp)
    x, w = x[::-1], w[::-1]  # ascending, as numpy's leggauss
    return 0.5 * (x + 1.0), 0.5 * w


@functools.cache
def chi_bulk(n: int):
    """``(W_lo, W_hi, log-density constant)`` of ``W = s/sigma`` for samples of ``n``."""
    nu = n - 1.0
    lo = math.sqrt(2.0 * float(special.gammaincinv(0.5 * nu, _TAIL)) / nu)
    hi = math.sqrt(2.0 * float(special.gammainccinv(0.5 * nu, _TAIL)) / nu)
    const = math.log(2.0) + 0.5 * nu * math.log(0.5 * nu) - float(special.gammaln(0.5 * nu))
    return lo, hi, const


def _chi_pdf(w, n):
    nu = n - 1.0
    const = chi_bulk(n)[2]
    with np.errstate(all="ignore"):
        out = np.exp(const + (nu - 1.0) * np.log(w) - 0.5 * nu * w * w)
    return np.where(w > 0, out, 0.0)


def _phi_diff(x, y):
    """``Phi(x) - Phi(y)`` for ``x >= y``, accurate in both tails."""
    flip = y > 0  # both in the upper tail: Phi(-y) - Phi(-x)
    with np.errstate(all="ignore"):
        return special.ndtr(np.where(flip, -y, x)) - special.ndtr(np.where(flip, -x, y))


def _window(n, zu, zl, w):
    """``P(L + w s <= xbar <= U - w s | s)`` written through ``w``: the chance
    that the mean lies at least ``w`` inside each limit (0 when the window is
    empty)."""
    rn = math.sqrt(n)
    return np.maximum(_phi_diff(rn * (zu - w), rn * (w - zl)), 0.0)


# --- the acceptance boundary of the M-method ---------------------------------

class Boundary:
    """``T(h)`` for the M-method with ``n`` and ``M`` (see the module notes).

    Attributes: ``n``, ``m``, ``a``, ``b``, ``t1``, ``h0``, ``h_sat``; for
    ``n = 3`` also ``h_hole`` (below it the acceptance set has a hole).
    """

    def __init__(self, n: int, m: float):
        self.n, self.m = int(n), float(m)
        self.a = math.sqrt(n) / (n - 1.0)
        self.b = 0.5 * n - 1.0
        self.t1 = self.gbar_inv(self.m)
        self.h0 = self.gbar_inv(0.5 * self.m)
        self.h_sat = 0.5 * (1.0 + self.t1)
        self.h_hole = None
        self.table = None
        if self.n == 3:
            # Arcsine law: Gbar(t) = arccos(t)/pi; nothing is accepted below
            # h_sat, and below cos(pi M/2) the set has a hole in the middle.
            self.h0 = self.h_sat
            self.h_hole = math.cos(0.5 * math.pi * self.m)
        elif self.h_sat - self.h0 > 1e-14:
            self.table = self._hermite_table()

    def gbar(self, t):
        """Estimate of the fraction beyond a limit at ``t = a Q``."""
        x = np.clip((1.0 - np.asarray(t, dtype=float)) * 0.5, 0.0, 1.0)
        return special.betainc(self.b, self.b, x)

    def gbar_inv(self, y: float) -> float:
        return 1.0 - 2.0 * float(special.betaincinv(self.b, self.b, y))

    def density(self, t):
        """``-dGbar/dt``: the symmetric beta density on ``[-1, 1]`` (0 outside)."""
        t = np.asarray(t, dtype=float)
        x = np.clip((1.0 - t) * 0.5, 0.0, 1.0)
        with np.errstate(all="ignore"):
            logf = ((self.b - 1.0) * (np.log(x) + np.log1p(-x)) - special.betaln(self.b, self.b)
                    - math.log(2.0))
            out = np.exp(logf)
        return np.where((t > -1.0) & (t < 1.0), out, 0.0)

    def solve(self, h):
        """``T(h)`` for ``h >= h0``: with ``u = h - t`` the condition
        ``psi(u) = Gbar(h - u) + Gbar(h + u) - M = 0`` is even in ``u`` and
        rises on ``[0, h - t1]``, so Newton steps on ``v = u^2`` (where the
        root is simple even at ``h = h0``, where it is double in ``u``),
        kept inside a shrinking bracket, reach full precision in a few
        steps."""
        h = np.asarray(h, dtype=float)
        lo = np.zeros(h.shape)  # psi <= 0
        hi = (h - self.t1) ** 2  # psi >= 0
        v = 0.5 * hi
        for _ in range(60):
            u = np.sqrt(v)
            f = self.gbar(h - u) + self.gbar(h + u) - self.m
            lo = np.where(f <= 0, v, lo)
            hi = np.where(f >= 0, v, hi)
            with np.errstate(all="ignore"):
                slope = np.where(u > 0, (self.density(h - u) - self.density(h + u))
                                 / (2.0 * u), 0.0)
                nv = v - f / slope
            inside = (slope > 0) & (nv > lo) & (nv < hi)
            nv = np.where(inside, nv, 0.5 * (lo + hi))
            done = (np.abs(nv - v) <= 1e-13 * v) | (f == 0) | (hi - lo <= 1e-15 * hi)
            v = nv
            if done.all():
                break
        return h - np.sqrt(v)

    def _theta_to_h(self, theta):
        return self.h0 + (self.h_sat - self.h0) * np.sin(0.5 * np.pi * theta) ** 2

    def _hermite_table(self):
        """Values and ``theta``-derivatives of ``T`` on a uniform grid, from a
        Chebyshev interpolant in ``theta`` whose degree doubles (from 32, 64
        or 128 as ``n`` grows, up to 512) until its last coefficients fall
        below 1e-14."""
        cheb = np.polynomial.chebyshev
        first = 32 if self.n < 16 else (64 if self.n < 500 else 128)
        for deg in (d for d in (32, 64, 128, 256, 512) if d >= first):
            c = cheb.chebinterpolate(lambda x: self.solve(self._theta_to_h(0.5 * (x + 1.0))),
                                     deg)
            if np.max(np.abs(c[-4:])) <= 1e-14 * max(1.0, np.max(np.abs(c))):
                break
        grid = np.linspace(0.0, 1.0, _HERMITE + 1)
        y = cheb.chebval(2.0 * grid - 1.0, c)
        dy = 2.0 * cheb.chebval(2.0 * grid - 1.0, cheb.chebder(c))
        return y, dy

    def t_of_h(self, h):
        """``T(h)`` for ``h0 <= h <= h_sat`` (``t1`` above ``h_sat``)."""
        h = np.asarray(h, dtype=float)
        if self.table is None:
            return np.full(h.shape, self.t1)
        frac = np.clip((h - self.h0) / (self.h_sat - self.h0), 0.0, 1.0)
        theta = (2.0 / np.pi) * np.arcsin(np.sqrt(frac))
        x = theta * _HERMITE
        i = np.minimum(x.astype(np.int64), _HERMITE - 1)
        t = x - i
        y, dy = self.table
        step = 1.0 / _HERMITE
        t2, t3 = t * t, t * t * t
        out = ((2 * t3 - 3 * t2 + 1) * y[i] + (t3 - 2 * t2 + t) * step * dy[i]
               + (-2 * t3 + 3 * t2) * y[i + 1] + (t3 - t2) * step * dy[i + 1])
        return np.where(h >= self.h_sat, self.t1, out)

    def hole(self, h):
        """``n = 3``: half-width ``u_a`` of the hole in ``t`` about ``h`` (0 when
        none): where ``arccos(h + u) + arccos(h - u) = pi M``."""
        c = math.cos(math.pi * self.m)
        h = np.asarray(h, dtype=float)
        with np.errstate(invalid="ignore"):
            u2 = (1.0 - c) * ((1.0 + c) - 2.0 * h * h) / (2.0 * (1.0 + c))
        return np.where(h < self.h_hole, np.sqrt(np.clip(u2, 0.0, None)), 0.0)


@functools.lru_cache(maxsize=64)
def boundary(n: int, m: float) -> Boundary:
    """The (cached) :class:`Boundary` of the M-method with ``n`` and ``M``."""
    return Boundary(n, m)


# --- quadrature over W ------------------------------------------------------------

@functools.cache
def _maps(nodes: int):
    """Node positions and derivatives of the four maps of :func:`_piece`
    (rows: neither end, left, right, both), with the weights."""
    x, wts = gauss_legendre(nodes)
    psi = np.stack([x, x * x, 1.0 - (1.0 - x) ** 2, np.sin(0.5 * np.pi * x) ** 2])
    dpsi = np.stack([np.ones_like(x), 2.0 * x, 2.0 * (1.0 - x),
                     0.5 * np.pi * np.sin(np.pi * x)])
    return psi, dpsi, wts


def nodes_for(n: int) -> int:
    """Gauss-Legendre points per piece: :data:`QUAD_NODES`, doubled above
    ``n = 400`` (the integrand narrows with the chi law)."""
    return QUAD_NODES if n <= 400 else 2 * QUAD_NODES


def _piece(n, lo, hi, integrand, left=None, right=None):
    """``int_lo^hi f_W(W) integrand(W) dW`` for arrays of ends (0 where
    ``hi <= lo``). ``left``/``right`` (boolean arrays) mark ends where the
    integrand has a square-root or power-law point: ``W = lo + (hi - lo)
    psi(theta)`` with ``psi = sin^2(pi theta/2)`` (both), ``theta^2`` (left),
    ``1 - (1 - theta)^2`` (right), ``theta`` (neither)."""
    psi_all, dpsi_all, wts = _maps(nodes_for(n))
    lo, hi = np.broadcast_arrays(np.asarray(lo, dtype=float), np.asarray(hi, dtype=float))
    live = hi > lo
    out = np.zeros(lo.shape)
    if not live.any():
        return out
    a, b = lo[live][:, None], hi[live][:, None]
    code = np.zeros(a.shape[0], dtype=np.int64)
    if left is not None:
        code += np.asarray(left)[live].astype(np.int64)
    if right is not None:
        code += 2 * np.asarray(right)[live].astype(np.int64)
    wv = a + (b - a) * psi_all[code]
    jac = (b - a) * dpsi_all[code]
    vals = integrand(wv, live) * _chi_pdf(wv, n) * jac
    out[live] = vals @ wts
    return out


def pa_limits(n: int, zu, zl, *, m: float | None = None, k: float | None = None):
    """``Pa`` with the limits ``zu`` above and ``zl`` below the process mean
    (in sigma; ``inf`` for a limit that is not there), sigma unknown.

    Give ``m`` for the M-method (``n >= 3``, ``0 < m < 1``) or ``k`` for the
    two-limit k-method (``n >= 2``). Vectorised over ``zu`` and ``zl``.
    """
    zu, zl = np.broadcast_arrays(np.asarray(zu, dtype=float), np.asarray(zl, dtype=float))
    shape = zu.shape
    zu, zl = zu.ravel(), zl.ravel()
    with np.errstate(invalid="ignore"):
        d = zu + zl  # NaN only for a level of 1 (both limits at the mean): Pa = 0 there
    w_lo, w_hi, _ = chi_bulk(n)
    start = np.full(d.shape, w_lo)
    top = np.full(d.shape, w_hi)

    def window(kk):
        return lambda wv, live: _window(n, zu[live][:, None], zl[live][:, None], kk * wv)

    if m is None:
        if k is None:
            raise ValueError("give m (M-method) or k (k-method)")
        with np.errstate(divide="ignore", invalid="ignore"):
            stop = np.where(k > 0, d / (2.0 * k), np.inf)
        total = _piece(n, start, np.minimum(stop, top), window(k))
        return np.clip(total, 0.0, 1.0).reshape(shape)
    bd = boundary(int(n), float(m))
    k1 = bd.t1 / bd.a
    with np.errstate(divide="ignore", invalid="ignore"):
        w_sat = bd.a * d / (2.0 * bd.h_sat)
        w_max = bd.a * d / (2.0 * bd.h0)
    if n == 3:
        return _pa_three(bd, zu, zl, d, start, top, w_sat).reshape(shape)
    total = _piece(n, start, np.minimum(w_sat, top), window(k1))

    def middle(wv, live):
        h = bd.a * d[live][:, None] / (2.0 * wv)
        w = wv * bd.t_of_h(h) / bd.a
        return _window(n, zu[live][:, None], zl[live][:, None], w)

    total = total + _piece(n, np.maximum(w_sat, start), np.minimum(w_max, top), middle,
                           w_sat > start, w_max < top)
    return np.clip(total, 0.0, 1.0).reshape(shape)


def _pa_three(bd, zu, zl, d, start, top, w_sat):
    """``n = 3``: the window minus the hole about the middle of the tolerance."""
    n = 3
    k1 = bd.t1 / bd.a
    with np.errstate(divide="ignore", invalid="ignore"):
        w_hole = bd.a * d / (2.0 * bd.h_hole)

    def outer(wv, live):
        return _window(n, zu[live][:, None], zl[live][:, None], k1 * wv)

    def holed(wv, live):
        u, l_ = zu[live][:, None], zl[live][:, None]
        dd = d[live][:, None]
        va = bd.hole(bd.a * dd / (2.0 * wv)) * wv / bd.a  # hole half-width in xbar
        mid = 0.5 * dd - va  # the hole as a window "w" from each limit
        return np.clip(_window(n, u, l_, k1 * wv) - _window(n, u, l_, mid), 0.0, 1.0)

    total = _piece(n, start, np.minimum(w_hole, top), outer)
    total = total + _piece(n, np.maximum(w_hole, start), np.minimum(w_sat, top), holed,
                           w_hole > start, w_sat < top)
    return np.clip(total, 0.0, 1.0)


# --- total fraction nonconforming and its splits -------------------------------------

def _z(p):
    with np.errstate(divide="ignore"):
        return -special.ndtri(np.clip(p, 0.0, 1.0))


def pa_split(n: int, p, share, *, m: float | None = None, k: float | None = None):
    """``Pa`` at total fraction ``p`` with the share ``share`` of it beyond
    the lower limit (``0``: one tail; ``1/2``: centred)."""
    p, share = np.broadcast_arrays(np.asarray(p, dtype=float), np.asarray(share, dtype=float))
    zl = np.where(share > 0, _z(share * p), np.inf)
    zu = _z((1.0 - share) * p)
    out = pa_limits(n, zu, zl, m=m, k=k)
    out = np.where(p <= 0, 1.0, np.where(p >= 1, 0.0, out))
    return out


_SEED = np.array([0.0, 0.03, 0.12, 0.3, 0.5])
_GOLD = 0.5 * (3.0 - math.sqrt(5.0))


def _extreme(f, lo, hi, x0, f0, sign):
    """Vectorised Brent minimisation of ``sign * f(x, rows)`` on ``[lo, hi]``
    from ``x0`` (golden-section steps, parabolic ones where they land well
    inside the bracket), each level stopping on its own at
    :data:`SHARE_TOL`; ``f`` is evaluated only for the levels still open."""
    a, b = lo.copy(), hi.copy()
    x, w, v = x0.copy(), x0.copy(), x0.copy()
    fx = sign * f0
    fw, fv = fx.copy(), fx.copy()
    e = np.zeros_like(x)
    dstep = np.zeros_like(x)
    tol = SHARE_TOL
    for _ in range(100):
        mid = 0.5 * (a + b)
        rows = np.flatnonzero(np.abs(x - mid) > 2 * tol - 0.5 * (b - a))
        if not rows.size:
            break
        xa, wa, va, aa, ba = x[rows], w[rows], v[rows], a[rows], b[rows]
        fxa, fwa, fva, ea = fx[rows], fw[rows], fv[rows], e[rows]
        r = (xa - wa) * (fxa - fva)
        q = (xa - va) * (fxa - fwa)
        pp = (xa - va) * q - (xa - wa) * r
        q = 2.0 * (q - r)
        pp = np.where(q > 0, -pp, pp)
        q = np.abs(q)
        with np.errstate(divide="ignore", invalid="ignore"):
            para = pp / q
        ok = (np.abs(ea) > tol) & (np.abs(pp) < np.abs(0.5 * q * ea)) & \
            (pp > q * (aa - xa)) & (pp < q * (ba - xa))
        golden_e = np.where(xa >= mid[rows], aa - xa, ba - xa)
        e[rows] = np.where(ok, dstep[rows], golden_e)
        step = np.where(ok, para, _GOLD * golden_e)
        step = np.where(np.abs(step) >= tol, step, np.where(step >= 0, tol, -tol))
        dstep[rows] = step
        u = xa + step
        fu = sign * f(u, rows)
        better = fu <= fxa
        a[rows] = np.where(better, np.where(u >= xa, xa, aa), np.where(u < xa, u, aa))
        b[rows] = np.where(better, np.where(u >= xa, ba, xa), np.where(u >= xa, u, ba))
        shift_w = ~better & ((fu <= fwa) | (wa == xa))
        shift_v = ~better & ~shift_w & ((fu <= fva) | (va == xa) | (va == wa))
        v[rows] = np.where(better | shift_w, wa, np.where(shift_v, u, va))
        fv[rows] = np.where(better | shift_w, fwa, np.where(shift_v, fu, fva))
        w[rows] = np.where(better, xa, np.where(shift_w, u, wa))
        fw[rows] = np.where(better, fxa, np.where(shift_w, fu, fwa))
        x[rows] = np.where(better, u, xa)
        fx[rows] = np.where(better, fu, fxa)
    return sign * fx, x


def band_of(func, p, which: str = "both", shares: bool = False):
    """Smallest and largest ``func(p, share)`` over the shares ``0 .. 1/2`` of
    ``p`` beyond the lower limit, for each level ``p`` (``Pa = 1`` at
    ``p = 0`` and ``0`` at ``p = 1``).

    ``which`` is ``'lower'``, ``'upper'`` or ``'both'`` (then ``(lower,
    upper)``). Five seed shares bracket each extreme; Brent's method refines
    it within the bracket to :data:`SHARE_TOL` (a level whose seeds agree to
    1e-13 is taken as flat). ``shares=True`` also returns the share where
    each extreme lies.
    """
    if which not in ("lower", "upper", "both"):
        raise ValueError(f"which ({which!r}) must be 'lower', 'upper' or 'both'")
    p = np.atleast_1d(np.asarray(p, dtype=float))
    inner = (p > 0) & (p < 1)
    pi = np.where(inner, p, 0.5)
    seed = func(pi[:, None], _SEED[None, :])
    out = {}
    for name, sign in (("lower", 1.0), ("upper", -1.0)):
        if which not in (name, "both"):
            continue
        j = np.argmin(sign * seed, axis=1)
        lo = _SEED[np.maximum(j - 1, 0)]
        hi = _SEED[np.minimum(j + 1, _SEED.size - 1)]
        flat = np.ptp(seed, axis=1) <= 1e-13  # Pa the same for every split: done
        lo, hi = np.where(flat, _SEED[j], lo), np.where(flat, _SEED[j], hi)
        best = seed[np.arange(p.size), j]
        val, at = _extreme(lambda s, rows: func(pi[rows], s), lo, hi, _SEED[j], best, sign)
        keep = (val < best) if sign > 0 else (val > best)
        val, at = np.where(keep, val, best), np.where(keep, at, _SEED[j])
        val = np.where(p <= 0, 1.0, np.where(p >= 1, 0.0, val))
        out[name] = (val, at) if shares else val
    if which == "both":
        return out["lower"], out["upper"]
    return out[which]


def band(n: int, p, *, m: float | None = None, k: float | None = None, which: str = "both",
         shares: bool = False):
    """:func:`band_of` for the M-method (``m``) or the two-limit k-method
    (``k``), sigma unknown, samples of ``n``."""
    return band_of(lambda pp, sh: pa_split(n, pp, sh, m=m, k=k), p, which, shares)
