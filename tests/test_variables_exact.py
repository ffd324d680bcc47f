"""Exact two-limit OC of variables plans with sigma unknown (the estimate or
M-method, and the two-limit k-method): quadrature against mpmath, a seeded
simulation and the noncentral t, the band over the splits, the designer."""

from __future__ import annotations

import math
import subprocess
import sys

import mpmath as mp
import numpy as np
import pytest
from scipy import special, stats

from lotwise.core import twolimit as T
from lotwise.families import variables as V
from lotwise.core.types import Targets


# --- references written here --------------------------------------------------------

def _estimate(q, n):
    """Lieberman and Resnikoff (1955, JASA 50): minimum-variance unbiased estimate
    of the fraction beyond a limit, sigma unknown: I_x(n/2 - 1, n/2 - 1),
    x = max(0, 1/2 - Q sqrt(n)/(2(n - 1)))."""
    b = n / 2 - 1
    x = np.clip(0.5 - q * math.sqrt(n) / (2 * (n - 1)), 0.0, 1.0)
    return special.betainc(b, b, x)


def mp_pa_m(n, m, zu, zl, dps=16):
    """Pa of the M-method, limits zu above and zl below the mean (sigma units):
    a nested integral in mpmath over W = s/sigma (chi law, n - 1 df) of the
    normal probability of the interval of means whose estimates sum to at most
    M (found by bisection on the estimates themselves, n >= 4)."""
    with mp.workdps(dps):
        n, m, zu, zl = (mp.mpf(v) for v in (n, m, zu, zl))
        b, rn = n / 2 - 1, mp.sqrt(n)
        c0 = rn / (2 * (n - 1))

        def est(q):
            x = mp.mpf(1) / 2 - q * c0
            if x >= 1:
                return mp.mpf(1)
            return mp.mpf(0) if x <= 0 else mp.betainc(b, b, 0, x, regularized=True)

        mid = (zu - zl) / 2
        g = lambda xb, w: est((zu - xb) / w) + est((xb + zl) / w) - m  # noqa: E731

        def bisect(fun, inside, outside, steps):
            for _ in range(steps):
                x = (inside + outside) / 2
                inside, outside = (x, outside) if fun(x) <= 0 else (inside, x)
            return (inside + outside) / 2

        whi = mp.mpf(1)
        while g(mid, whi) <= 0:
            whi *= 2
        wlo = whi / 2
        while g(mid, wlo) > 0:
            wlo /= 2
        wmax = bisect(lambda w: g(mid, w), wlo, whi, 70)
        # Where the lower estimate leaves 0 at the set's edge: there Q_U = q1
        # with est(q1) = M and Q_L = (n - 1)/sqrt(n), and Q_U + Q_L = d/W.
        q1 = bisect(lambda q: m - est(q), (n - 1) / rn, mp.mpf(-50), 80)
        wsat = (zu + zl) / (q1 + (n - 1) / rn)
        nu = n - 1
        const = mp.log(2) + nu / 2 * mp.log(nu / 2) - mp.loggamma(nu / 2)

        def f(w):
            if w <= 0 or w >= wmax:
                return mp.mpf(0)
            hi = bisect(lambda x: g(x, w), mid, zu, 48)
            lo = bisect(lambda x: g(x, w), mid, -zl, 48)
            dens = mp.exp(const + (nu - 1) * mp.log(w) - nu * w * w / 2)
            return dens * (mp.ncdf(rn * hi) - mp.ncdf(rn * lo))

        sd = 1 / mp.sqrt(2 * nu)
        pts = {mp.mpf(0), wmax} | {min(wmax, max(mp.mpf(0), 1 + j * sd))
                                   for j in range(-9, 10, 3)}
        if wsat < wmax:
            pts.add(wsat)
        return mp.quad(f, sorted(pts))


def mp_pa_k(n, k, zu, zl, dps=20):
    """Pa of the two-limit k-method in mpmath: the mean must lie k s inside each
    limit, integrated over the chi law of W = s/sigma up to W = d/(2k)."""
    with mp.workdps(dps):
        n, k, zu, zl = (mp.mpf(v) for v in (n, k, zu, zl))
        rn, nu = mp.sqrt(n), n - 1
        const = mp.log(2) + nu / 2 * mp.log(nu / 2) - mp.loggamma(nu / 2)
        wmax = (zu + zl) / (2 * k)

        def f(w):
            dens = mp.exp(const + (nu - 1) * mp.log(w) - nu * w * w / 2)
            return dens * (mp.ncdf(rn * (zu - k * w)) - mp.ncdf(rn * (k * w - zl)))

        return mp.quad(f, [0, min(wmax, 1), wmax])


# --- exactness ------------------------------------------------------------------------

# Reference: mpmath nested integrals above (16-20 digits); tolerance 1e-8
# absolute (measured agreement is about 1e-14).
@pytest.mark.slow
@pytest.mark.parametrize("n,m,zu,zl", [
    (4, 0.10, 1.2, 2.0), (5, 0.08, 1.5, 3.5), (12, 0.05, 1.8, 2.4), (43, 0.02657, 2.3, 3.0),
    (43, 0.02657, 2.17, 2.17),
])
def test_m_method_against_mpmath(n, m, zu, zl):
    ref = float(mp_pa_m(n, m, zu, zl))
    assert float(T.pa_limits(n, zu, zl, m=m)) == pytest.approx(ref, abs=1e-8)


@pytest.mark.parametrize("n,k,zu,zl", [(2, 0.8, 1.0, 1.5), (10, 1.5, 2.0, 2.5),
                                       (43, 1.9, 2.3, 3.0), (200, 2.0, 2.4, 2.6)])
def test_k_method_against_mpmath(n, k, zu, zl):
    # Reference: mpmath integral over the chi law (mp_pa_k); 1e-10 absolute.
    ref = float(mp_pa_k(n, k, zu, zl))
    assert float(T.pa_limits(n, zu, zl, k=k)) == pytest.approx(ref, abs=1e-10)


@pytest.mark.parametrize("n", [3, 4, 5, 8, 20, 43, 100, 200])
@pytest.mark.parametrize("p", [0.002, 0.01, 0.05, 0.2])
def test_one_limit_is_the_noncentral_t(n, p):
    # Reference: scipy.stats.nct: with one limit (the other infinitely far)
    # the M-method accepts when Q >= k, k the one-limit equivalent of M, and
    # Pa = P(T >= k sqrt(n)), T noncentral t (n - 1 df, noncentrality
    # sqrt(n) z_p) (Owen, Technometrics 10, 1968). 1e-10 absolute; also with
    # the lower limit 40 sigma away.
    m = 0.03
    k = V.k_for_estimate(n, m)
    ref = stats.nct.sf(k * math.sqrt(n), n - 1, math.sqrt(n) * stats.norm.isf(p))
    zu = float(stats.norm.isf(p))
    assert float(T.pa_limits(n, zu, np.inf, m=m)) == pytest.approx(ref, abs=1e-10)
    assert float(T.pa_limits(n, zu, 40.0, m=m)) == pytest.approx(ref, abs=1e-10)
    assert float(T.pa_limits(n, zu, np.inf, k=1.7)) == pytest.approx(
        stats.nct.sf(1.7 * math.sqrt(n), n - 1, math.sqrt(n) * zu), abs=1e-10)


# --- simulation ------------------------------------------------------------------------

SIM_N = 1_000_000


def _simulated(n, m, p, share, seed):
    """Fraction of SIM_N simulated normal samples of n accepted by the M-method
    (xbar and s drawn from their exact laws), and its standard error."""
    rng = np.random.default_rng(seed)
    xbar = rng.standard_normal(SIM_N) / math.sqrt(n)
    w = np.sqrt(rng.chisquare(n - 1, SIM_N) / (n - 1))
    zu = stats.norm.isf((1 - share) * p)
    zl = stats.norm.isf(share * p) if share > 0 else np.inf
    total = _estimate((zu - xbar) / w, n) + _estimate((xbar + zl) / w, n)
    pa = np.count_nonzero(total <= m) / SIM_N
    return pa, math.sqrt(max(pa * (1 - pa), 1e-12) / SIM_N)


# Reference: a seeded simulation of 10^6 samples per case with the estimator
# written from its definition; within 4 standard errors (binomial). About 15 s
# in all, so not marked slow.
@pytest.mark.parametrize("n,m", [(3, 0.05), (5, 0.06), (20, 0.04), (54, 0.0172), (100, 0.02),
                                 (200, 0.015)])
def test_m_method_against_simulation(n, m):
    k = V.k_for_estimate(n, m)
    top = float(stats.norm.sf(k - 2.5 / math.sqrt(n)))  # a level far down the curve
    for j, (p, share) in enumerate([(0.3 * top, 0.5), (top, 0.2), (2 * top, 0.0)]):
        sim, se = _simulated(n, m, p, share, seed=1000 * n + j)
        exact = float(T.pa_split(n, p, share, m=m))
        assert abs(exact - sim) <= 4 * se, (n, p, share, exact, sim, se)


# --- the band over the splits ----------------------------------------------------------

@pytest.mark.parametrize("n,m", [(5, 0.06), (43, 0.02657), (150, 0.02)])
def test_band_edges_at_least_as_extreme_as_a_dense_grid(n, m):
    # Reference: Pa on 2,001 shares 0 .. 1/2; the bounded search must find an
    # extreme at least as far out (1e-12) and return a value Pa takes.
    ps = np.array([0.003, 0.01, 0.03, 0.06, 0.1])
    (lo, lo_at), (up, up_at) = T.band(n, ps, m=m, shares=True)
    grid = T.pa_split(n, ps[:, None], np.linspace(0, 0.5, 2001)[None, :], m=m)
    assert np.all(lo <= grid.min(axis=1) + 1e-12)
    assert np.all(up >= grid.max(axis=1) - 1e-12)
    assert T.pa_split(n, ps, lo_at, m=m) == pytest.approx(lo, abs=1e-15)
    assert T.pa_split(n, ps, up_at, m=m) == pytest.approx(up, abs=1e-15)


def test_plan_pa_uses_the_exact_band():
    # Reference: the band computed directly; the plan's model name is exact.
    plan = V.VariablesPlan(n=54, m=0.0172, sigma="unknown", limit="both")
    assert plan.exact_model == "estimate-exact"
    ps = np.array([0.005, 0.02, 0.05])
    assert plan.pa(ps) == pytest.approx(T.band(54, ps, m=0.0172, which="upper"), abs=1e-15)
    assert plan.pa(ps, envelope="lower") == pytest.approx(
        T.band(54, ps, m=0.0172, which="lower"), abs=1e-15)


# --- the designer -------------------------------------------------------------------------

def _edges(n, m, t):
    """Dense-grid edges: lower at the AQL, upper at the RQL (2,001 shares)."""
    sh = np.linspace(0, 0.5, 2001)
    return (float(T.pa_split(n, t.aql, sh, m=m).min()),
            float(T.pa_split(n, t.rql, sh, m=m).max()))


@pytest.mark.parametrize("aql,rql", [(0.01, 0.06), (0.02, 0.08)])
def test_design_meets_both_risks_and_is_smallest(aql, rql):
    # Reference: the exact Pa on a dense grid of splits (above). The plan
    # meets both risks; with n - 1 no M on a grid of 120 values across the
    # one-tail window (noncentral t, scipy.stats.nct; widened by 10 %) does.
    t = Targets(aql=aql, rql=rql)
    d = V.design_variables(aql=aql, rql=rql, sigma="unknown", limit="both", attributes=False)
    lo, up = _edges(d.n, d.plan.m, t)
    assert lo >= 0.95 - 1e-12 and up <= 0.10 + 1e-12
    assert d.pa_aql == pytest.approx(lo, abs=1e-10) and d.pa_rql == pytest.approx(up, abs=1e-10)
    n = d.n - 1
    k_lo = stats.nct.isf(0.10, n - 1, math.sqrt(n) * stats.norm.isf(rql)) / math.sqrt(n)
    k_hi = stats.nct.isf(0.95, n - 1, math.sqrt(n) * stats.norm.isf(aql)) / math.sqrt(n)
    m_a, m_b = float(_estimate(max(k_lo, k_hi), n)), float(_estimate(min(k_lo, k_hi), n))
    for m in np.linspace(0.9 * m_a, 1.1 * m_b, 120):
        a, r = _edges(n, m, t)
        assert not (a >= 0.95 - 1e-12 and r <= 0.10 + 1e-12), m


def test_no_nodes_at_import():
    # Facts of the implementation: importing the module computes no
    # Gauss-Legendre nodes and builds no boundary (they are made on first use).
    code = ("import lotwise.families.variables, lotwise.core.twolimit as t; "
            "print(t.gauss_legendre.cache_info().currsize, t.boundary.cache_info().currsize)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["0", "0"]


@pytest.mark.parametrize("m", [0.03, 0.2])
def test_three_units_hole_closed_form(m):
    # Reference: for n = 3 the estimate is arccos(a Q)/pi (the arcsine law,
    # b = 1/2); the hole half-width u of the acceptance set about h solves
    # arccos(h + u) + arccos(h - u) = pi M (mpmath, 30 digits; 1e-12), and
    # below h_sat = cos^2(pi M/2) nothing is accepted.
    bd = T.boundary(3, m)
    assert bd.h_sat == pytest.approx(math.cos(math.pi * m / 2) ** 2, rel=1e-12)
    for h in np.linspace(bd.h_sat, bd.h_hole, 7)[1:-1]:
        u = float(bd.hole(h))
        with mp.workdps(30):
            lhs = mp.acos(mp.mpf(h) + u) + mp.acos(mp.mpf(h) - u)
        assert float(lhs) == pytest.approx(math.pi * m, abs=1e-12)
