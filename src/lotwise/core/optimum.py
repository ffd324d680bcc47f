"""Maximum of a unimodal function on a bracket (Brent's method).

Shared by the AOQL searches of every plan type: the caller brackets the peak
on a grid (a proper bounded maximisation, never an unbounded one) and
:func:`brent_max` polishes it.

References
----------
.. [1] R. P. Brent, *Algorithms for Minimization without Derivatives*,
   Prentice-Hall, 1973, ch. 5.

Examples
--------
>>> x, fx = brent_max(lambda p: p * (1 - p) ** 9, 0.0, 0.5)
>>> round(x, 6), round(fx, 6)
(0.1, 0.038742)
"""

from __future__ import annotations

import math

__all__ = ["brent_max"]


def brent_max(f, a: float, b: float, *, rtol: float = 3e-9, maxiter: int = 200):
    """Maximum of a unimodal ``f`` on ``[a, b]`` by Brent's method [1]_.

    Golden-section steps, replaced by a parabola through the three best
    points whenever that parabola's vertex falls well inside the bracket
    and the step is shrinking. Returns ``(x, f(x))``.
    """
    golden = 0.5 * (3.0 - math.sqrt(5.0))
    x = w = v = a + golden * (b - a)
    fx = fw = fv = -f(x)
    d = e = 0.0
    for _ in range(maxiter):
        mid = 0.5 * (a + b)
        tol1 = rtol * abs(x) + 1e-300
        tol2 = 2.0 * tol1
        if abs(x - mid) <= tol2 - 0.5 * (b - a):
            break
        parabolic = False
        if abs(e) > tol1:
            r = (x - w) * (fx - fv)
            q = (x - v) * (fx - fw)
            s = (x - v) * q - (x - w) * r
            q = 2.0 * (q - r)
            if q > 0.0:
                s = -s
            q = abs(q)
            e_prev, e = e, d
            if abs(s) < abs(0.5 * q * e_prev) and q * (a - x) < s < q * (b - x):
                d = s / q
                u = x + d
                if u - a < tol2 or b - u < tol2:
                    d = tol1 if x < mid else -tol1
                parabolic = True
        if not parabolic:
            e = (a - x) if x >= mid else (b - x)
            d = golden * e
        u = x + (d if abs(d) >= tol1 else (tol1 if d > 0 else -tol1))
        fu = -f(u)
        if fu <= fx:
            if u >= x:
                a = x
            else:
                b = x
            v, fv, w, fw, x, fx = w, fw, x, fx, u, fu
        else:
            if u < x:
                a = u
            else:
                b = u
            if fu <= fw or w == x:
                v, fv, w, fw = w, fw, u, fu
            elif fu <= fv or v == x or v == w:
                v, fv = u, fu
    return x, -fx
