"""Acceptance-probability kernels against mpmath and against the facts they
must obey (monotonicity, limits between the models)."""

from __future__ import annotations

import math

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from lotwise.core import kernels as oc

mp.mp.dps = 40
TOL = 1e-10  # absolute


def mp_binomial(n, c, p):
    """P(X <= c), X ~ Bin(n, p), summed exactly in mpmath over the shorter tail."""
    if c >= n:
        return mp.mpf(1)
    p = mp.mpf(p)
    q = 1 - p
    term = lambda k: mp.binomial(n, k) * p**k * q ** (n - k)  # noqa: E731
    if c + 1 <= n - c:
        return mp.fsum(term(k) for k in range(c + 1))
    return 1 - mp.fsum(term(k) for k in range(c + 1, n + 1))


def mp_poisson(c, lam):
    lam = mp.mpf(lam)
    if c <= 200:
        return mp.fsum(mp.exp(-lam) * lam**k / mp.factorial(k) for k in range(c + 1))
    return mp.gammainc(c + 1, lam, mp.inf, regularized=True)


def mp_hyper(n, c, N, D):
    lo, hi = max(0, n - (N - D)), min(n, D)
    if c >= hi:
        return mp.mpf(1)
    if c < lo:
        return mp.mpf(0)
    total = mp.binomial(N, n)
    term = lambda k: mp.binomial(D, k) * mp.binomial(N - D, n - k) / total  # noqa: E731
    if c - lo <= hi - c:
        return mp.fsum(term(k) for k in range(lo, c + 1))
    return 1 - mp.fsum(term(k) for k in range(c + 1, hi + 1))


# Grid with extreme n (1 .. 1e7), p (1e-9 .. 1 - 1e-9) and every kind of c.
P_GRID = [1e-9, 1e-6, 1e-3, 0.02, 0.3, 0.5, 0.9, 1 - 1e-9]
BIN_CASES = [(n, c, p) for n in (1, 7, 50, 1000, 100_000, 10_000_000)
             for c in sorted({0, 1, 3, 20, n - 1, n}) if 0 <= c <= n
             for p in P_GRID]


@pytest.mark.parametrize("n,c,p", BIN_CASES)
def test_binomial_against_mpmath(n, c, p):
    # Reference: mpmath exact sums at 40 digits; 1e-10 absolute.
    assert abs(oc.pa_binomial(n, c, p) - float(mp_binomial(n, c, p))) <= TOL


POI_CASES = [(n, c, p) for n in (1, 50, 1000, 10_000_000) for c in (0, 1, 3, 20)
             for p in P_GRID] + [(1000, 1000, 1.0), (1, 250, 260.0), (10_000, 5000, 0.5)]


@pytest.mark.parametrize("n,c,p", POI_CASES)
def test_poisson_against_mpmath(n, c, p):
    # Reference: mpmath exact sums / regularised incomplete gamma; 1e-10 absolute.
    assert abs(oc.pa_poisson(n, c, p) - float(mp_poisson(c, n * mp.mpf(p)))) <= TOL


HYP_CASES = [
    (1, 0, 1, 0), (1, 0, 1, 1), (5, 0, 10, 3), (80, 2, 1000, 10), (80, 2, 1000, 80),
    (500, 20, 1000, 300), (999, 998, 1000, 999), (20, 5, 50, 45), (50, 25, 100, 50),
    (3000, 1500, 10_000, 5000), (10_000, 100, 1_000_000, 12_345),
    (1000, 0, 10**9, 5000), (2000, 3, 10**9, 1_000_000), (100_000, 1000, 10**9, 10**6),
    (100_000, 950, 10**9, 10**6), (40_805, 51, 1_000_000, 1500), (200, 199, 10**9, 10**9 - 1),
    (10**7, 10, 10**9, 1000), (60, 30, 10**9, 5 * 10**8),
]


@pytest.mark.parametrize("n,c,N,D", HYP_CASES)
def test_hypergeometric_against_mpmath(n, c, N, D):
    # Reference: mpmath exact ratio of binomial coefficients; 1e-10 absolute.
    assert abs(oc.pa_hypergeometric(n, c, N, D) - float(mp_hyper(n, c, N, D))) <= TOL


@pytest.mark.parametrize("k,n,N,D", [(3, 80, 1000, 10), (0, 5, 10, 3), (40, 100, 10**9, 4 * 10**8)])
def test_hypergeometric_pmf_against_mpmath(k, n, N, D):
    # Reference: mpmath exact mass; 1e-12 relative.
    ref = float(mp.binomial(D, k) * mp.binomial(N - D, n - k) / mp.binomial(N, n))
    assert oc.hypergeometric_pmf(k, n, N, D) == pytest.approx(ref, rel=1e-12)


def mp_hyper_tail(n, c, N, D, dps=50):
    """P(X <= c) at ``dps`` digits, summing whichever tail has fewer terms
    (complement taken in mpmath, so no float cancellation)."""
    with mp.workdps(dps):
        lo, hi = max(0, n - (N - D)), min(n, D)
        if c >= hi:
            return mp.mpf(1)
        if c < lo:
            return mp.mpf(0)
        total = mp.binomial(N, n)
        term = lambda k: mp.binomial(D, k) * mp.binomial(N - D, n - k) / total  # noqa: E731
        if c - lo <= hi - c:
            return mp.fsum(term(k) for k in range(lo, c + 1))
        return 1 - mp.fsum(term(k) for k in range(c + 1, hi + 1))


# Samples that are almost the whole lot (n = N - 1, N - 2, ...), where the
# saddle-point masses used to lose accuracy at a sampling fraction near one.
NEAR_FULL = [
    (5_884_367 - 1, 5_884_109 - 1, 5_884_367, 5_884_109),
    (874_934_833 - 1, 874_934_833 - 59, 874_934_833, 874_934_833 - 58),
    (999, 2, 1000, 3), (10**9 - 1, 0, 10**9, 1), (10**9 - 2, 10**9 - 4, 10**9, 10**9 - 3),
    (10**6 - 5, 10**6 - 80, 10**6, 10**6 - 77), (10**6 - 5, 3, 10**6, 7),
    (700, 200, 1000, 300), (600, 10, 1000, 30), (90_000, 29_950, 100_000, 33_300),
    (51, 20, 100, 40), (99, 49, 100, 50),
]


@pytest.mark.parametrize("n,c,N,D", NEAR_FULL)
def test_hypergeometric_large_sample_against_mpmath(n, c, N, D):
    # Reference: mpmath exact sums of binomial-coefficient ratios at 50 digits;
    # relative 1e-13 (absolute 1e-300 for a zero).
    n, c, N, D = int(n), int(c), int(N), int(D)
    ref = float(mp_hyper_tail(n, c, N, D))
    assert oc.pa_hypergeometric(n, c, N, D) == pytest.approx(ref, rel=1e-13, abs=1e-300)


@pytest.mark.parametrize("N,D", [(5_884_367, 5_884_109), (874_934_833, 874_934_833 - 58),
                                 (1000, 3), (10**9, 1), (10**9, 10**9 - 1), (10, 5), (2, 1)])
def test_hypergeometric_all_but_one_item(N, D):
    # Reference: exact identity P(X <= D - 1) = 1 - P(X = D) = 1 - (N - D)/N = D/N
    # for n = N - 1 (one item left in the lot); to rounding (4 ulp).
    assert oc.pa_hypergeometric(N - 1, D - 1, N, D) == pytest.approx(D / N, rel=1e-15)


def test_textbook_table_n50_c1():
    # A textbook exercise table (plan n = 50, c = 1, binomial), 5 decimals.
    ps = [0.005, 0.01, 0.02, 0.03, 0.04, 0.05, 0.06, 0.08]
    ref = [0.97387, 0.91056, 0.73577, 0.55528, 0.40048, 0.27943, 0.19000, 0.08271]
    np.testing.assert_allclose(oc.pa_binomial(50, 1, ps), ref, atol=5e-6)


def test_montgomery_n89_c2():
    # Montgomery, Introduction to Statistical Quality Control, single-sampling
    # example (from memory): n = 89, c = 2, binomial; 5 decimals.
    ps = [0.01, 0.02, 0.03, 0.04, 0.05]
    ref = [0.93969, 0.73658, 0.49848, 0.30416, 0.17208]
    np.testing.assert_allclose(oc.pa_binomial(89, 2, ps), ref, atol=5e-6)


def test_no_nan_and_bounds_on_extremes():
    ns = np.array([1, 2, 10, 10**4, 10**7])
    ps = np.array([0.0, 1e-9, 1e-5, 0.5, 1 - 1e-9, 1.0])
    for n in ns:
        for c in {0, 1, int(n) // 2, int(n) - 1, int(n)}:
            for f in (oc.pa_binomial, oc.pa_poisson):
                v = np.asarray(f(int(n), c, ps))
                assert np.all(np.isfinite(v)) and np.all((v >= 0) & (v <= 1))
    N = 10**9
    for n in (1, 10**3, 10**7):
        ds = np.array([0, 1, 10**3, 10**6, 5 * 10**8, N - 1, N])
        for c in (0, 1, n // 2, n - 1):
            v = np.asarray(oc.pa_hypergeometric(n, c, N, ds))
            assert np.all(np.isfinite(v)) and np.all((v >= 0) & (v <= 1))


def test_exact_edges():
    # Facts of the trade: c >= n accepts every lot; p = 0 always accepts;
    # p = 1 never accepts a c < n plan; 100 % inspection decides by the count.
    assert oc.pa_binomial(10, 10, 0.7) == 1.0
    assert oc.pa_binomial(10, 3, 0.0) == 1.0
    assert oc.pa_binomial(10, 3, 1.0) == 0.0
    assert oc.pa_poisson(10, 0, 0.0) == 1.0
    assert oc.pa_hypergeometric(100, 2, 100, 2) == 1.0
    assert oc.pa_hypergeometric(100, 2, 100, 3) == 0.0
    assert oc.pa_hypergeometric(10, 0, 20, 15) == 0.0  # at least 5 nonconforming in any sample


MONO = 1e-12  # slack for floating-point rounding in flat regions


@settings(max_examples=80, deadline=None)
@given(n=st.integers(1, 10**6), c=st.integers(0, 200), p=st.floats(1e-9, 1 - 1e-9))
def test_binomial_monotone(n, c, p):
    c = min(c, n)
    base = oc.pa_binomial(n, c, p)
    assert oc.pa_binomial(n, c, min(1.0, p * 1.01)) <= base + MONO  # falls in p
    assert oc.pa_binomial(n + 1, c, p) <= base + MONO  # falls in n
    assert oc.pa_binomial(n, min(c + 1, n), p) >= base - MONO  # rises in c


@settings(max_examples=80, deadline=None)
@given(n=st.integers(1, 10**6), c=st.integers(0, 200), p=st.floats(1e-9, 10.0))
def test_poisson_monotone(n, c, p):
    base = oc.pa_poisson(n, c, p)
    assert oc.pa_poisson(n, c, p * 1.01) <= base + MONO
    assert oc.pa_poisson(n + 1, c, p) <= base + MONO
    assert oc.pa_poisson(n, c + 1, p) >= base - MONO


@settings(max_examples=80, deadline=None)
@given(N=st.integers(2, 10**9), f=st.floats(0, 1), g=st.floats(0, 1), c=st.integers(0, 60))
def test_hypergeometric_monotone(N, f, g, c):
    n = max(1, min(N - 1, int(f * min(N, 10**5))))
    D = int(g * N)
    base = oc.pa_hypergeometric(n, c, N, D)
    if D < N:
        assert oc.pa_hypergeometric(n, c, N, D + 1) <= base + MONO  # falls in D
    assert oc.pa_hypergeometric(n + 1, c, N, D) <= base + MONO  # falls in n
    assert oc.pa_hypergeometric(n, c + 1, N, D) >= base - MONO  # rises in c


def test_hypergeometric_approaches_binomial():
    # Fact: sampling without replacement from ever larger lots at a fixed
    # fraction tends to the binomial; the gap shrinks roughly like n/N.
    n, c, p = 80, 2, 0.03
    gaps = [abs(oc.pa_hypergeometric(n, c, N, round(p * N)) - oc.pa_binomial(n, c, p))
            for N in (400, 4000, 40_000, 400_000, 4_000_000)]
    assert all(a > b for a, b in zip(gaps, gaps[1:]))
    assert gaps[-1] < 1e-4


def test_poisson_approaches_binomial():
    # Fact (the Poisson limit theorem): n p fixed, n growing.
    lam, c = 2.5, 3
    gaps = [abs(oc.pa_poisson(n, c, lam / n) - oc.pa_binomial(n, c, lam / n))
            for n in (10, 100, 1000, 10_000, 100_000)]
    assert all(a > b for a, b in zip(gaps, gaps[1:]))
    assert gaps[-1] < 1e-5


def test_lot_count_rounding():
    # 1 % of 1000 is 10 exactly, not 11 through binary rounding.
    assert oc.lot_count(0.01, 1000, "up") == 10
    assert oc.lot_count(0.07, 100, "down") == 7
    assert oc.lot_count(0.015, 50, "up") == 1 and oc.lot_count(0.015, 50, "down") == 0
    assert oc.lot_count(0.29, 100, "up") == 29  # 0.29 * 100 = 28.999999999999996
    assert math.isclose(0.29 * 100, 29, rel_tol=1e-12)


def _mp_poisson_minus_binomial(n, c, p):
    p = mp.mpf(p)
    b = mp.fsum(mp.binomial(n, k) * p**k * (1 - p)**(n - k) for k in range(c + 1))
    po = mp.fsum(mp.exp(-n * p) * (n * p)**k / mp.factorial(k) for k in range(c + 1))
    return po - b


# The largest |Poisson - binomial| difference of Pa (the approximation's error the
# reports print) against mpmath 1.3 in 40-digit arithmetic: the root of the
# derivative of the difference (findroot, Anderson's method, in a bracket around the
# peak). Tolerances: the difference 1e-12 relative, where it peaks 1e-9 relative.
@pytest.mark.parametrize("n, c, bracket", [(110, 3, (0.053, 0.0555)),
                                           (2000, 20, (0.0125, 0.0131))])
def test_poisson_error_peak_against_mpmath(n, c, bracket):
    from lotwise.analysis.approximation import max_curve_error
    from lotwise.core.types import Scope
    from lotwise.families.single import SinglePlan

    got, at = max_curve_error(SinglePlan(n=n, c=c), Scope(), "binomial")
    with mp.workdps(40):
        f = lambda p: _mp_poisson_minus_binomial(n, c, p)  # noqa: E731
        x = mp.findroot(lambda p: mp.diff(f, p), bracket, solver="anderson",
                        tol=mp.mpf(10) ** -30)
        want = abs(f(x))
    assert got == pytest.approx(float(want), rel=1e-12)
    assert at == pytest.approx(float(x), rel=1e-9)
