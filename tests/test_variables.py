"""Variables plans: OC curves and designs checked against references outside
the project (textbook formulas and examples, mpmath, scipy.stats, seeded
Monte Carlo of normal samples). Each table names its source and tolerance."""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from lotwise.families import variables as V
from lotwise.core.types import Targets
from lotwise.families.single import design_single
from lotwise.families.variables import closed_form_known, design_variables, k_window, wallis
from lotwise.families.base import parse_plan
from lotwise.core.quantities import InputError, Infeasible

ndtr = lambda x: 0.5 * math.erfc(-x / math.sqrt(2))  # noqa: E731


def z(p):
    """Standard normal quantile of 1 - p, by mpmath (exact reference)."""
    return float(-mpmath.sqrt(2) * mpmath.erfinv(2 * mpmath.mpf(p) - 1))


# --- known sigma: closed forms ------------------------------------------------

# Source: standard textbook closed forms for the k-method with sigma known
# (e.g. Montgomery, Introduction to Statistical Quality Control, variables
# chapter; from memory): n = ((z_a + z_b)/(z_p1 - z_p2))^2,
# k = (z_p1 z_b + z_p2 z_a)/(z_a + z_b). A worked design (alpha = beta =
# 0.10, p1 = 0.02, p2 = 0.10; computed here, no published source) gives n = 10.77 -> 11 with two-decimal z values;
# 10.77 is reproduced by z_0.02 = 2.06 (the first table entry at or above
# 0.98) and z_0.10 = 1.28; the nearest two-decimal value 2.05 gives 11.05.
# Tolerance: 0.005 on n (two decimals as printed).
@pytest.mark.parametrize("za, zb, z1, z2, n_expected", [
    (1.28, 1.28, 2.06, 1.28, 10.77),   # two-decimal z read upward
    (1.28, 1.28, 2.05, 1.28, 11.05),   # same with the nearest two-decimal z_0.02
])
def test_closed_form_two_decimal_tables(za, zb, z1, z2, n_expected):
    n, _ = closed_form_known(za, zb, z1, z2)
    assert n == pytest.approx(n_expected, abs=0.005)


def test_closed_form_exact_z():
    # Source: the worked design above with exact z (11.02 and
    # k = 1.668); z from mpmath. Tolerance 0.005 on n, 0.0005 on k.
    n, k = closed_form_known(z(0.10), z(0.10), z(0.02), z(0.10))
    assert n == pytest.approx(11.02, abs=0.005)
    assert k == pytest.approx(1.668, abs=0.0005)


def test_exact_design_rounds_up_to_12():
    # The tool rounds the closed-form n up (exact z): 11.02 -> 12, because at
    # n = 11 no k meets both risks. Checked with mpmath's normal distribution:
    # at n = 11 the window is empty, and the plan (11, 1.668) carries
    # alpha just above 10 %.
    d = design_variables(aql=0.02, rql=0.10, alpha=0.10, beta=0.10, sigma="known")
    assert d.n == 12
    lo, hi = k_window(11, d.targets, "known", "upper")
    assert lo > hi
    pa = float(mpmath.ncdf(math.sqrt(11) * (z(0.02) - 1.668)))
    assert 1 - pa > 0.10
    assert d.approximation["n_unrounded"] == pytest.approx(11.0173, abs=1e-4)
    assert d.approximation["n"] == 12


@settings(max_examples=40, deadline=None)
@given(p1=st.floats(0.0005, 0.1), ratio=st.floats(1.5, 8.0), a=st.floats(0.01, 0.2),
       b=st.floats(0.01, 0.2))
def test_known_sigma_exact_n_is_closed_form_rounded_up(p1, ratio, a, b):
    # Source: the textbook closed form (above) is exact for sigma known; the
    # exact design must give its ceiling and a window [k_low, k_high] with
    # k_low = z_p2 + z_b/sqrt(n), k_high = z_p1 - z_a/sqrt(n). Tolerance 1e-9.
    p2 = min(p1 * ratio, 0.45)
    d = design_variables(aql=p1, rql=p2, alpha=a, beta=b, sigma="known", attributes=False)
    n0, _ = closed_form_known(z(a), z(b), z(p1), z(p2))
    assert d.n == max(1, math.ceil(n0 - 1e-9))
    assert d.k_low == pytest.approx(z(p2) + z(b) / math.sqrt(d.n), abs=1e-9)
    assert d.k_high == pytest.approx(z(p1) - z(a) / math.sqrt(d.n), abs=1e-9)
    assert d.k_low <= d.k <= d.k_high
    assert 1 - d.pa_aql <= a + 1e-12 and d.pa_rql <= b + 1e-12


# --- Montgomery example (from memory) ------------------------------------------

# Source: Montgomery, Introduction to Statistical Quality Control, variables
# example (from memory): p1 = 0.01, alpha = 0.05, p2 = 0.06, beta = 0.10 gives
# k ~ 1.9 and n ~ 15 (sigma known), n ~ 40 (sigma unknown), read from a
# nomograph. Exact answers: 15 and 42 (k = 1.894 and 1.901). Tolerance: k
# within 0.02 of 1.9; known n exact; unknown n within 3 of the nomograph's 40.
def test_montgomery_example_known_and_unknown():
    dk = design_variables(aql=0.01, rql=0.06, sigma="known")
    du = design_variables(aql=0.01, rql=0.06, sigma="unknown")
    assert dk.n == 15 and abs(dk.k - 1.9) < 0.02
    assert du.n == 42 and abs(du.n - 40) <= 3 and abs(du.k - 1.9) < 0.02
    # Side by side with attributes: the binomial single plan for the same points.
    ref = design_single(aql=0.01, rql=0.06, alpha=0.05, beta=0.10)
    assert (du.attributes.n, du.attributes.c) == (ref.n, ref.c) == (110, 3)
    assert du.saved == {"n": 68, "fraction": pytest.approx(68 / 110)}


# --- noncentral t OC ------------------------------------------------------------

def _nct_cdf_mpmath(df, nc, t):
    """P(T <= t) for the noncentral t by direct integration over the chi-square
    variable: int Phi(t sqrt(v/df) - nc) f_chi2(v) dv (mpmath, 30 digits)."""
    mpmath.mp.dps = 30
    df, nc, t = mpmath.mpf(df), mpmath.mpf(nc), mpmath.mpf(t)
    f = lambda v: mpmath.ncdf(t * mpmath.sqrt(v / df) - nc) * v ** (df / 2 - 1) * \
        mpmath.exp(-v / 2) / (2 ** (df / 2) * mpmath.gamma(df / 2))  # noqa: E731
    return float(mpmath.quad(f, [0, df / 4, df, 2 * df, 4 * df, mpmath.inf]))


# Source: the noncentral t distribution (Owen 1968) integrated with mpmath
# (independent of scipy) and scipy.stats.nct (general-purpose library; note
# that it shares its numerical core with scipy.special.nctdtr). Tolerance 1e-9.
@pytest.mark.parametrize("n, k, p", [
    (42, 1.901, 0.01), (42, 1.901, 0.06), (10, 1.5, 0.05), (3, 0.8, 0.2),
    (100, 2.3, 0.005), (5, 2.0, 0.001), (20, 1.0, 0.4),
])
def test_noncentral_t_oc_against_references(n, k, p):
    from scipy import stats

    pa = V.pa_unknown(n, k, p)
    nc = math.sqrt(n) * z(p)
    ref = 1.0 - _nct_cdf_mpmath(n - 1, nc, k * math.sqrt(n))
    assert pa == pytest.approx(ref, abs=1e-9)
    assert pa == pytest.approx(float(stats.nct.sf(k * math.sqrt(n), n - 1, nc)), abs=1e-9)


# Source: mpmath integration (above) at points where scipy.special.nctdtr
# returns NaN from both tails (found by a scan); the tool falls back to its
# own quadrature there, and also checked at ordinary points. Tolerance 1e-9.
@pytest.mark.parametrize("n, k, p", [
    (100_000, -2.0, 0.023536), (260, -1.0, 0.1875), (2, 5.0, 1 - 1e-9), (10, 1.5, 0.05),
])
def test_noncentral_t_far_tails(n, k, p):
    nc = math.sqrt(n) * z(p)
    ref = 1.0 - _nct_cdf_mpmath(n - 1, nc, k * math.sqrt(n))
    pa = V.pa_unknown(n, k, p)
    assert math.isfinite(pa) and pa == pytest.approx(ref, abs=1e-9)
    q = float(V.nct_sf_quadrature(n - 1, nc, k * math.sqrt(n))[0])
    assert q == pytest.approx(ref, abs=1e-9)


# Source: seeded Monte Carlo of normal samples (the definition of the plan:
# accept when (U - xbar)/s >= k). Tolerance: 4 standard errors.
@pytest.mark.parametrize("n, k, p", [(42, 1.901, 0.03), (8, 1.2, 0.1), (15, 1.9, 0.06)])
def test_noncentral_t_oc_against_monte_carlo(n, k, p):
    rng = np.random.default_rng(12345)
    reps = 40_000
    x = rng.standard_normal((reps, n))
    upper = z(p)  # mean 0, sigma 1: a fraction p above the limit
    q = (upper - x.mean(axis=1)) / x.std(axis=1, ddof=1)
    mc = float(np.mean(q >= k))
    se = math.sqrt(mc * (1 - mc) / reps)
    assert abs(V.pa_unknown(n, k, p) - mc) <= 4 * se


# Source: the k-method OC Phi(sqrt(n)(z_p - k)) (textbook formula, from
# memory) with mpmath's normal distribution. Tolerance 1e-12.
@pytest.mark.parametrize("n, k, p", [(15, 1.894, 0.01), (15, 1.894, 0.06), (1, 0.5, 0.3)])
def test_known_sigma_oc_formula(n, k, p):
    assert V.pa_known(n, k, p) == pytest.approx(
        float(mpmath.ncdf(math.sqrt(n) * (z(p) - k))), abs=1e-12)


# --- Wallis's approximation -----------------------------------------------------

# Source: Wallis (1947), n ~ n_sigma (1 + k^2/2). Its accuracy (from memory):
# good to a unit or two for the sample sizes of practice, slightly low.
# Tolerance: the rounded Wallis n is at most one above the exact n and at
# most max(2, 1 %) below it.
@pytest.mark.parametrize("p1, p2, a, b", [
    (0.01, 0.06, 0.05, 0.10), (0.02, 0.10, 0.10, 0.10), (0.001, 0.01, 0.05, 0.10),
    (0.005, 0.02, 0.05, 0.10), (0.01, 0.03, 0.05, 0.05), (0.05, 0.20, 0.05, 0.10),
    (0.001, 0.002, 0.01, 0.10), (0.025, 0.25, 0.10, 0.20), (0.01, 0.10, 0.05, 0.20),
])
def test_wallis_within_known_accuracy(p1, p2, a, b):
    d = design_variables(aql=p1, rql=p2, alpha=a, beta=b, sigma="unknown", attributes=False)
    w = wallis(Targets(aql=p1, rql=p2, alpha=a, beta=b))
    assert d.approximation["n"] == w["n"]
    assert w["n"] <= d.n + 1
    assert d.n - w["n"] <= max(2, 0.01 * d.n)


# --- properties ---------------------------------------------------------------------

@settings(max_examples=30, deadline=None)
@given(n=st.integers(2, 400), k=st.floats(-1.0, 3.5),
       ps=st.lists(st.floats(0.0, 1.0), min_size=2, max_size=20))
def test_pa_decreasing_in_p(n, k, ps):
    # Fact of the trade: the OC curve falls as quality worsens.
    ps = np.sort(np.asarray(ps))
    for pa in (V.pa_known(n, k, ps), V.pa_unknown(n, k, ps)):
        assert np.all(np.diff(pa) <= 1e-12)
        assert np.all((pa >= 0) & (pa <= 1))


@settings(max_examples=15, deadline=None)
@given(n=st.integers(2, 200), k=st.floats(0.5, 3.0), width=st.floats(3.0, 12.0))
def test_two_limit_known_pa_decreasing(n, k, width):
    ps = np.linspace(0.0, 0.6, 41)
    for pa in (V.pa_known_two(n, k, ps, width), V.pa_known_two(n, k, ps, None, "upper"),
               V.pa_known_two(n, k, ps, None, "lower")):
        assert np.all(np.diff(pa) <= 1e-9)


@settings(max_examples=30, deadline=None)
@given(p1=st.floats(0.0005, 0.1), ratio=st.floats(1.5, 8.0), a=st.floats(0.01, 0.2),
       b=st.floats(0.01, 0.2))
def test_unknown_sigma_n_never_below_known(p1, ratio, a, b):
    # Fact of the trade: estimating sigma costs sample. Also: the exact
    # unknown-sigma n is the smallest (the window at n - 1 is empty).
    p2 = min(p1 * ratio, 0.45)
    kw = dict(aql=p1, rql=p2, alpha=a, beta=b, attributes=False)
    dk = design_variables(sigma="known", **kw)
    du = design_variables(sigma="unknown", **kw)
    assert du.n >= dk.n
    if du.n > 2:
        lo, hi = k_window(du.n - 1, du.targets, "unknown", "upper")
        assert lo > hi
    assert 1 - du.pa_aql <= a + 1e-12 and du.pa_rql <= b + 1e-12


def test_linear_scan_agrees_with_search():
    # The bisection over n relies on the window widening with n; a linear
    # scan over every n confirms the smallest n for a few targets.
    for p1, p2, a, b in [(0.01, 0.06, 0.05, 0.1), (0.02, 0.1, 0.1, 0.1), (0.05, 0.3, 0.1, 0.2)]:
        t = Targets(aql=p1, rql=p2, alpha=a, beta=b)
        for sigma, start in (("known", 1), ("unknown", 2)):
            d = design_variables(aql=p1, rql=p2, alpha=a, beta=b, sigma=sigma, attributes=False)
            first = next(n for n in range(start, 500)
                         if (lambda w: w[0] <= w[1])(k_window(n, t, sigma, "upper")))
            assert d.n == first


@pytest.mark.parametrize("k", [1.5, 2.0, 2.5])
def test_large_n_curves_meet(k):
    # Fact of the trade: with a large sample s estimates sigma closely, so the
    # s-method's OC meets the k-method's for the same (n, k): both tend to the
    # step at p_k = Phi(-k). Away from p_k the difference vanishes, and the area
    # between the curves shrinks like 1/sqrt(n) (the steepness ratio
    # sqrt(1 + k^2/2) of Wallis's approximation stays, so the largest
    # difference, right at p_k, does not vanish at fixed k). Tolerances: 1e-3
    # at p_k/1.25 and 1.25 p_k with n = 20,000; area ratio 100 -> 10,000 below
    # 1/5 (1/10 expected).
    pk = float(mpmath.ncdf(-k))
    n = 20_000
    for p in (pk / 1.25, pk * 1.25):
        assert abs(V.pa_known(n, k, p) - V.pa_unknown(n, k, p)) < 1e-3

    def area(n):
        ps = np.linspace(0.0, min(1.0, 4 * pk), 2_001)
        return np.trapezoid(np.abs(V.pa_known(n, k, ps) - V.pa_unknown(n, k, ps)), ps)

    assert area(10_000) < area(100) / 5


# --- two limits, sigma known ---------------------------------------------------------

def _pa_from_mean(n, k, mu, lower, upper, sigma=1.0):
    """Direct two-tail Pa from the mean (mpmath): xbar ~ N(mu, sigma^2/n)."""
    s = sigma / math.sqrt(n)
    a, b = lower + k * sigma, upper - k * sigma
    if b <= a:
        return 0.0
    return float(mpmath.ncdf((b - mu) / s) - mpmath.ncdf((a - mu) / s))


# Source: the definition of the two-limit k-method with xbar normal (direct
# integration from the process mean with mpmath). Mirror positions of the mean
# give the same total p and the same Pa. Tolerance 1e-9.
@pytest.mark.parametrize("n, k, width, delta", [(15, 1.9, 6.0, 0.8), (10, 1.5, 5.0, 0.3),
                                                 (30, 2.2, 8.0, 1.5)])
def test_two_limit_width_known_exact_and_mirror(n, k, width, delta):
    lower, upper = -width / 2, width / 2
    for mu in (delta, -delta):
        p = float(mpmath.ncdf(lower - mu) + 1 - mpmath.ncdf(upper - mu))
        ref = _pa_from_mean(n, k, mu, lower, upper)
        assert V.pa_known_two(n, k, p, width) == pytest.approx(ref, abs=1e-9)


def test_two_limit_band_brackets_every_split():
    # The band's edges are the extremes of Pa over every split of p between the
    # tails: a brute-force grid of 4,001 splits (direct formula) stays inside,
    # and touches the edges to 1e-6.
    from scipy import special

    n, k = 17, 1.919
    for p in (0.01, 0.03, 0.06, 0.1):
        a = np.linspace(0, p, 4001)
        with np.errstate(divide="ignore"):
            zu = -special.ndtri(p - a)
            zl = np.where(a > 0, -special.ndtri(a), np.inf)
        vals = np.maximum(special.ndtr(math.sqrt(n) * (zu - k))
                          + special.ndtr(math.sqrt(n) * (zl - k)) - 1, 0)
        lo = V.pa_known_two(n, k, p, None, "lower")
        hi = V.pa_known_two(n, k, p, None, "upper")
        assert vals.min() >= lo - 1e-9 and vals.max() <= hi + 1e-9
        assert vals.min() == pytest.approx(lo, abs=1e-6)
        assert vals.max() == pytest.approx(hi, abs=1e-6)


def test_two_limit_known_worst_case_design():
    # The worst-case convention: the design meets alpha on the band's lower
    # edge and beta on its upper edge, so every split meets both risks; it
    # needs at least the one-limit n.
    d = design_variables(aql=0.01, rql=0.06, sigma="known", limit="both")
    one = design_variables(aql=0.01, rql=0.06, sigma="known")
    assert d.n >= one.n
    assert 1 - V.pa_known_two(d.n, d.k, 0.01, None, "lower") <= 0.05 + 1e-12
    assert V.pa_known_two(d.n, d.k, 0.06, None, "upper") <= 0.10 + 1e-12
    assert d.two_limit["convention"].startswith("worst case")
    lo, hi = k_window(d.n - 1, d.targets, "known", "both")
    assert lo > hi


# Source: seeded Monte Carlo of normal samples for a two-limit k-method plan
# (definition). Tolerance: 4 standard errors.
def test_two_limit_known_monte_carlo():
    n, k, width, mu = 15, 1.9, 6.0, 0.9
    lower, upper = -width / 2, width / 2
    rng = np.random.default_rng(7)
    xbar = rng.standard_normal((50_000, n)).mean(axis=1) + mu
    acc = np.mean((upper - xbar >= k) & (xbar - lower >= k))
    p = float(mpmath.ncdf(lower - mu) + 1 - mpmath.ncdf(upper - mu))
    se = math.sqrt(acc * (1 - acc) / 50_000)
    assert abs(V.pa_known_two(n, k, p, width) - acc) <= 4 * se


def test_two_limit_unreachable_aql():
    with pytest.raises(Infeasible, match="cannot run as well as the AQL"):
        design_variables(aql=0.001, rql=0.06, sigma="known", limit="both", width=5.0)


# --- estimates of the fraction nonconforming and the estimate method --------------

# Source: Lieberman and Resnikoff (1955): the estimates are minimum-variance
# unbiased; checked by a seeded simulation of normal samples (the mean of the
# estimate equals p). Tolerance: 4 standard errors of the mean.
@pytest.mark.parametrize("n, p", [(5, 0.05), (20, 0.01), (42, 0.06)])
def test_estimates_unbiased(n, p):
    rng = np.random.default_rng(99)
    x = rng.standard_normal((40_000, n))
    xbar, s = x.mean(axis=1), x.std(axis=1, ddof=1)
    upper = z(p)
    for est in (V.estimate_unknown((upper - xbar) / s, n), V.estimate_known(upper - xbar, n)):
        est = np.asarray(est)
        se = est.std() / math.sqrt(est.size)
        assert abs(est.mean() - p) <= 4 * se


def test_estimate_method_one_tail_equals_s_method():
    # With one limit, "estimate <= M" with M the estimate at Q = k is the
    # s-method: identical decisions on simulated samples, and the one-tail
    # simulated Pa agrees with the exact noncentral t within 4 standard errors.
    n, k = 42, 1.901
    m = V.max_estimate_for_k(n, k)
    assert V.k_for_estimate(n, m) == pytest.approx(k, abs=1e-10)
    rng = np.random.default_rng(5)
    x = rng.standard_normal((20_000, n))
    q = (z(0.03) - x.mean(axis=1)) / x.std(axis=1, ddof=1)
    assert np.array_equal(np.asarray(V.estimate_unknown(q, n)) <= m, q >= k)
    plan = V.VariablesPlan(n=n, m=m, sigma="unknown", limit="both")
    exact = V.pa_unknown(n, k, np.array([0.01, 0.06]))
    assert plan.pa(np.array([0.01, 0.06]), "noncentral-t") == pytest.approx(exact, abs=1e-12)


# Source: seeded Monte Carlo of whole normal samples, centred process with
# both limits (the exact band's edges hold the centred value between them).
# Tolerance: 4 standard errors.
def test_estimate_method_exact_against_direct_samples():
    n, m, p = 20, 0.05, 0.06
    plan = V.VariablesPlan(n=n, m=m, sigma="unknown", limit="both")
    lo, up = plan.pa(p, envelope="lower"), plan.pa(p)
    rng = np.random.default_rng(2024)
    reps = 20_000
    x = rng.standard_normal((reps, n))
    xbar, s = x.mean(axis=1), x.std(axis=1, ddof=1)
    lim = z(p / 2)
    tot = np.asarray(V.estimate_unknown((lim - xbar) / s, n)) + \
        np.asarray(V.estimate_unknown((xbar + lim) / s, n))
    direct = float(np.mean(tot <= m))
    se = math.sqrt(direct * (1 - direct) / reps)
    assert lo - 4 * se <= direct <= up + 4 * se


def test_estimate_method_design_meets_exact_worst_case():
    d = design_variables(aql=0.01, rql=0.06, sigma="unknown", limit="both")
    one = design_variables(aql=0.01, rql=0.06, sigma="unknown")
    assert d.n >= one.n
    band = d.two_limit["band"]
    assert band["aql"]["lower"] >= 0.95 and band["rql"]["upper"] <= 0.10
    assert d.pa_aql == band["aql"]["lower"] and d.pa_rql == band["rql"]["upper"]
    d2 = d.as_dict()
    assert d2["m"] == d.plan.m and d2["k"] == pytest.approx(d.plan.k_equivalent)
    assert d2["model"] == "estimate-exact"


# --- plan class and notation ------------------------------------------------------

@pytest.mark.parametrize("text", [
    "variables: n=42,k=1.901,upper=25.0",
    "variables: n=15,k=1.894,lower=3.5,sigma=0.02",
    "variables: n=17,k=1.919,limit=both,sigma=known",
    "variables: n=15,k=1.896,lower=24.7,upper=25.0,sigma=0.05",
    "variables: n=43,m=0.02657,lower=24.8,upper=25.0",
    "n=42,k=1.9,limit=upper",
    "variables: n=17,k=1.919,upper=25.0,limit=both,sigma=0.05",
])
def test_notation_round_trip(text):
    p = parse_plan(text)
    assert p.scheme == "variables"
    q = parse_plan(p.notation())
    assert q == p
    d = p.to_dict()
    assert d["scheme"] == "variables" and d["n"] == p.n


@pytest.mark.parametrize("text, fragment", [
    ("variables: n=42,k=abc,upper=25", "k ('abc') must be a number"),
    ("variables: n=42,k=1.9", "needs a specification limit"),
    ("variables: n=1,k=1.9,upper=25", "must be at least 2"),
    ("variables: n=42,k=1.9,upper=25,lower=26", "must be below upper"),
    ("variables: n=42,k=1.9,upper=25,colour=red", "unknown key 'colour'"),
    ("variables: n=42,upper=25", "lacks k"),
    ("variables: n=42,k=1.9,m=0.02,lower=1,upper=2", "either k or m"),
    ("variables: n=42,k=1.9,upper=25,sigma=-1", "must be a positive number"),
])
def test_notation_errors(text, fragment):
    with pytest.raises(InputError, match=None) as exc:
        parse_plan(text)
    assert fragment in str(exc.value)


def test_common_interface():
    from lotwise.core.types import Scope

    p = parse_plan("variables: n=42,k=1.901,upper=25")
    ps = np.array([0.0, 0.01, 0.06, 1.0])
    base = p.pa(ps)
    for model in ("binomial", "hypergeometric", "poisson", "noncentral-t", None):
        assert np.array_equal(p.pa(ps, model, Scope(lot_size=500)), base)
    assert p.pa_count(5, Scope(lot_size=500)) == pytest.approx(p.pa(0.01))
    with pytest.raises(InputError):
        p.pa(0.01, "normal-known-sigma", Scope())
    assert p.scheme == "variables" and "n=42" in p.label
