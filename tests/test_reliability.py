"""Confidence/reliability sizing and exact upper bounds."""

from __future__ import annotations

import json
import math

import mpmath as mp
import pytest

from lotwise.cli import main
from lotwise.core.quantities import Infeasible, InputError
from lotwise.analysis.reliability import (clopper_pearson_upper, demonstration_size, hypergeometric_upper_count, upper_bound)


# Confidence/reliability sample sizes (common practice, no source); exact integers.
@pytest.mark.parametrize("C, R, k, n", [
    (0.95, 0.90, 0, 29), (0.95, 0.90, 1, 46), (0.80, 0.80, 0, 8), (0.70, 0.70, 0, 4),
    (0.95, 0.95, 0, 59),
])
def test_sizing_common_practice(C, R, k, n):
    assert demonstration_size(confidence=C, reliability=R, failures=k).n == n


# Finite lot (computed, common practice): to find a 5 % nonconforming lot with
# 95 % confidence at c = 0; exact integers.
@pytest.mark.parametrize("N, n", [(20, 19), (100, 45), (None, 59)])
def test_sizing_finite_lot(N, n):
    assert demonstration_size(confidence=0.95, reliability=0.95, lot_size=N).n == n


@pytest.mark.parametrize("C, R, k", [(0.9, 0.99, 0), (0.95, 0.99, 2), (0.99, 0.999, 1),
                                     (0.5, 0.9, 3)])
def test_sizing_is_smallest(C, R, k):
    # scipy.stats.binom (general-purpose reference library): P(X <= k) at
    # p = 1 - R is <= 1 - C at n and > 1 - C at n - 1 (tolerance 1e-12).
    from scipy.stats import binom

    n = demonstration_size(confidence=C, reliability=R, failures=k).n
    assert binom.cdf(k, n, 1 - R) <= 1 - C + 1e-12
    assert binom.cdf(k, n - 1, 1 - R) > 1 - C - 1e-12


def test_k0_closed_form():
    # k = 0: n = ceil(ln(1 - C) / ln R) (textbook closed form, common practice).
    for C, R in [(0.95, 0.99), (0.9, 0.999), (0.99, 0.95)]:
        want = math.ceil(math.log(1 - C) / math.log(R) - 1e-12)
        assert demonstration_size(confidence=C, reliability=R).n == want


def test_finite_lot_sizing_brute_force():
    # scipy.stats.hypergeom (reference library), brute force over n: the
    # smallest n with P(X <= k | D*) <= 1 - C, D* = ceil((1 - R) N).
    from scipy.stats import hypergeom

    for N, R, k in [(50, 0.9, 0), (50, 0.9, 2), (300, 0.98, 1), (30, 0.95, 0)]:
        dstar = math.ceil((1 - R) * N - 1e-9)
        want = next(n for n in range(k + 1, N + 1)
                    if hypergeom.cdf(k, N, dstar, n) <= 0.05 + 1e-12)
        assert demonstration_size(confidence=0.95, reliability=R, failures=k, lot_size=N).n == want


def test_finite_lot_infeasible():
    # 1 failure allowed in a lot of 20 at 95 %: a lot with 1 nonconforming always passes.
    with pytest.raises(Infeasible):
        demonstration_size(confidence=0.95, reliability=0.95, failures=1, lot_size=20)


@pytest.mark.parametrize("n, k", [(10, 0), (10, 1), (10, 5), (10, 9), (10, 10), (1, 0), (1, 1),
                                  (59, 0), (1000, 3), (5, 4)])
@pytest.mark.parametrize("C", [0.8, 0.95, 0.999])
def test_clopper_pearson_against_scipy_binomtest(n, k, C):
    # scipy.stats.binomtest's exact (Clopper-Pearson) interval, one-sided
    # (alternative='less' gives the upper bound), general-purpose reference
    # library; tolerance 1e-10 relative.
    from scipy.stats import binomtest

    ref = binomtest(k, n, alternative="less").proportion_ci(confidence_level=C).high
    assert clopper_pearson_upper(n, k, C) == pytest.approx(ref, rel=1e-10, abs=1e-15)


@pytest.mark.parametrize("n, k, C", [(10, 0, 0.95), (10, 3, 0.9), (200, 7, 0.99), (3, 2, 0.5),
                                     (100000, 0, 0.95), (20, 19, 0.95)])
def test_clopper_pearson_against_mpmath(n, k, C):
    # mpmath, 40 digits: solve sum_{j<=k} C(n,j) p^j (1-p)^(n-j) = 1 - C by
    # plain bisection (the sum falls in p); tolerance 1e-12 relative.
    mp.mp.dps = 40
    f = lambda p: mp.fsum(mp.binomial(n, j) * p ** j * (1 - p) ** (n - j) for j in range(k + 1)) - (1 - mp.mpf(C))  # noqa: E731
    lo, hi = mp.mpf(0), mp.mpf(1)
    for _ in range(140):
        mid = (lo + hi) / 2
        if f(mid) > 0:
            lo = mid
        else:
            hi = mid
    assert clopper_pearson_upper(n, k, C) == pytest.approx(float(lo), rel=1e-12)


def test_edges_k0_kn_exact():
    # k = 0: 1 - (1 - C)^(1/n) exactly (mpmath, 40 digits); k = n: 1.
    mp.mp.dps = 40
    for n in (1, 2, 7, 10**6, 10**12):
        want = 1 - mp.power(mp.mpf("0.05"), mp.mpf(1) / n)
        assert clopper_pearson_upper(n, 0, 0.95) == pytest.approx(float(want), rel=1e-13)
        assert clopper_pearson_upper(n, n, 0.95) == 1.0


@pytest.mark.parametrize("n", [20, 30, 100, 1000, 10**6])
def test_rule_of_three(n):
    # Rule of three (common practice, no source): 0 failures in n gives a 95 %
    # upper bound close to 3/n for n >= 20; within 8 % at n = 20, and n p_U
    # tends to -ln(0.05) = 2.9957.
    u = clopper_pearson_upper(n, 0, 0.95)
    assert abs(u * n - 3) / 3 <= 0.08
    assert u * n <= -math.log(0.05) + 1e-9


@pytest.mark.parametrize("n, k, N, C", [(19, 0, 20, 0.95), (45, 0, 100, 0.95), (20, 2, 200, 0.95),
                                        (10, 10, 30, 0.9), (5, 1, 12, 0.8), (50, 0, 10000, 0.99)])
def test_hypergeometric_bound_brute_force(n, k, N, C):
    # scipy.stats.hypergeom (reference library), brute force over D: the
    # largest D with P(X <= k | D) > 1 - C.
    from scipy.stats import hypergeom

    want = max(D for D in range(k, N - (n - k) + 1) if hypergeom.cdf(k, N, D, n) > 1 - C + 1e-12)
    assert hypergeometric_upper_count(n, k, N, C) == want


def test_sizing_and_bound_agree():
    # A passing test sized by demonstration_size demonstrates its claim
    # (the two use the same inequality; direct reasoning).
    for N, R, k in [(None, 0.99, 0), (None, 0.9, 2), (100, 0.95, 0), (500, 0.98, 1)]:
        d = demonstration_size(confidence=0.95, reliability=R, failures=k, lot_size=N)
        b = upper_bound(tested=d.n, failures=k, confidence=0.95, lot_size=N, reliability=R)
        assert b.demonstrated
        if d.n > k + 1:
            b2 = upper_bound(tested=d.n - 1, failures=k, confidence=0.95, lot_size=N,
                             reliability=R)
            assert not b2.demonstrated


def test_bad_arguments():
    with pytest.raises(InputError):
        clopper_pearson_upper(10, 11, 0.95)
    with pytest.raises(InputError):
        upper_bound(tested=30, failures=0, confidence=0.95, lot_size=20)


def test_cli_json_keys(capsys):
    assert main(["demonstrate", "--confidence", "95%", "--reliability", "99%", "--failures",
                 "1", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert {"n", "failures", "confidence", "reliability", "lot_size"} <= set(out)
    assert out["confidence"] == 0.95 and out["reliability"] == 0.99 and out["lot_size"] is None
    assert out["n"] == demonstration_size(confidence=0.95, reliability=0.99, failures=1).n
    assert main(["demonstrate", "--confidence", "95%", "--tested", "59", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert {"upper_bound", "reliability_demonstrated", "confidence"} <= set(out)
    assert out["upper_bound"] == pytest.approx(1 - 0.05 ** (1 / 59), rel=1e-13)
    assert main(["demonstrate", "--confidence", "95%", "--reliability", "95%", "--lot-size",
                 "20", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["n"] == 19


@pytest.mark.parametrize("argv, word", [
    (["demonstrate", "--reliability", "99%"], "--confidence"),
    (["demonstrate", "--confidence", "95"], "--confidence"),
    (["demonstrate", "--confidence", "95%"], "--reliability"),
    (["demonstrate", "--confidence", "95%", "--tested", "5", "--failures", "6"], "--failures"),
    (["demonstrate", "--confidence", "95%", "--tested", "50", "--lot-size", "20"], "--tested"),
    (["demonstrate", "--confidence", "95%", "--reliability", "99%", "--failures", "-1"],
     "--failures"),
])
def test_cli_bad_input(argv, word, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and word in err[0]


def test_cli_infeasible_exit_1(capsys):
    assert main(["demonstrate", "--confidence", "95%", "--reliability", "95%", "--failures", "1",
                 "--lot-size", "20"]) == 1
    assert len(capsys.readouterr().err.strip().splitlines()) == 1
