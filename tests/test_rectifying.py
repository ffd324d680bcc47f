"""Rectifying inspection: AOQ, AOQL and ATI checked against published factors,
an independent computation (scipy.optimize), mpmath and brute force."""

from __future__ import annotations

import json

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from lotwise.analysis import rectifying as R
from lotwise.cli import main
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan


# Dodge-Romig / Schilling AOQL factors y for single sampling with a Poisson OC
# curve, AOQL = y / n for large lots (from memory). Printed to 4 significant
# figures, so the tolerance is half a unit in the last printed place.
@pytest.mark.parametrize("c, y, tol", [
    (0, 0.3679, 5e-5), (1, 0.8400, 5e-5), (2, 1.371, 5e-4),
    (3, 1.942, 5e-4), (4, 2.544, 5e-4), (5, 3.168, 5e-4),
])
def test_aoql_factors_poisson(c, y, tol):
    for n in (50, 400, 5000):
        a = R.aoql(SinglePlan(n=n, c=c), Scope(), "poisson")
        assert abs(a.value * n - y) <= tol


@pytest.mark.parametrize("c", range(6))
def test_aoql_factor_against_mpmath(c):
    # mpmath, 30 digits: y = max x Q(c + 1, x); the maximiser solves
    # d/dx [x Q(c+1, x)] = Q(c+1, x) - x * x^c e^-x / c! = 0.
    mp.mp.dps = 30
    f = lambda x: mp.gammainc(c + 1, x, mp.inf, regularized=True) - x ** (c + 1) * mp.e ** (-x) / mp.factorial(c)  # noqa: E731
    x = mp.findroot(f, c + 1.0)
    y = x * mp.gammainc(c + 1, x, mp.inf, regularized=True)
    n = 1000
    a = R.aoql(SinglePlan(n=n, c=c), Scope(), "poisson")
    assert a.value * n == pytest.approx(float(y), rel=1e-12)
    assert a.at * n == pytest.approx(float(x), rel=1e-6)   # flat maximum: location to ~sqrt(eps)


def test_aoql_simple_formula_n20_c1():
    # Plan n = 20, c = 1, N = 4000, AOQ without the (N - n)/N factor. Reference:
    # independent computation, scipy.optimize's bounded maximisation of
    # p B(1; 20, p) with scipy.stats.binom: 0.0413808 at p = 0.0774659 (a value
    # read off a printed table at p = 0.08 would be 0.04135). Tolerance 1e-8.
    from scipy import optimize, stats

    r = optimize.minimize_scalar(lambda p: -p * stats.binom.cdf(1, 20, p), bounds=(0.01, 0.2),
                                 method="bounded", options={"xatol": 1e-12})
    a = R.aoql(SinglePlan(n=20, c=1), Scope(lot_size=4000), "binomial", formula="simple")
    assert a.value == pytest.approx(-r.fun, abs=1e-8)
    assert a.at == pytest.approx(r.x, abs=1e-5)


def test_binomial_aoql_against_mpmath_root():
    # mpmath: maximiser of p F(p) with F the binomial cdf solves
    # F(p) = p n b(c; n - 1, p); tolerance 1e-12 on the value.
    mp.mp.dps = 30
    n, c, N = 50, 2, 1000
    F = lambda p: mp.fsum(mp.binomial(n, k) * p ** k * (1 - p) ** (n - k) for k in range(c + 1))  # noqa: E731
    g = lambda p: F(p) - p * n * mp.binomial(n - 1, c) * p ** c * (1 - p) ** (n - 1 - c)  # noqa: E731
    p = mp.findroot(g, (mp.mpf("0.01"), mp.mpf("0.2")), solver="illinois")
    want = p * F(p) * (N - n) / N
    a = R.aoql(SinglePlan(n=n, c=c), Scope(lot_size=N), "binomial")
    assert a.value == pytest.approx(float(want), rel=1e-12)
    assert a.at == pytest.approx(float(p), rel=1e-6)


def _mp_hyper_aoq(n, c, N, D, formula):
    """E[(D - X) 1{X <= c}] / N (screened) or E[D 1{X <= c}] / N (simple), by
    direct summation of hypergeometric masses in mpmath."""
    tot = mp.mpf(0)
    for x in range(0, min(c, n, D) + 1):
        if n - x > N - D:
            continue
        h = mp.binomial(D, x) * mp.binomial(N - D, n - x) / mp.binomial(N, n)
        tot += (D - x if formula == "screened" else D) * h
    return tot / N


@pytest.mark.parametrize("n, c, N, D", [(20, 1, 100, 10), (5, 0, 12, 3), (30, 3, 60, 17),
                                        (50, 2, 5000, 160), (1, 0, 2, 1), (10, 10, 30, 25)])
@pytest.mark.parametrize("formula", ["screened", "simple"])
def test_hyper_aoq_identity_against_mpmath(n, c, N, D, formula):
    # mpmath direct sum of the definition (exact arithmetic at 30 digits);
    # tolerance 1e-12 relative.
    mp.mp.dps = 30
    got = R.aoq_count(SinglePlan(n=n, c=c), D, Scope(lot_size=N), formula)
    assert got == pytest.approx(float(_mp_hyper_aoq(n, c, N, D, formula)), rel=1e-12, abs=1e-300)


@settings(max_examples=40, deadline=None)
@given(st.integers(2, 400), st.data())
def test_hyper_aoql_is_the_maximum_over_all_counts(N, data):
    # Brute force over every count D = 0..N (the definition of the finite-lot AOQL).
    n = data.draw(st.integers(1, N))
    c = data.draw(st.integers(0, min(n, 8)))
    formula = data.draw(st.sampled_from(R.FORMULAS))
    plan, scope = SinglePlan(n=n, c=c), Scope(lot_size=N)
    d = np.arange(0, N + 1)
    vals = R.aoq_count(plan, d, scope, formula)
    a = R.aoql(plan, scope, "hypergeometric", formula)
    assert a.value == pytest.approx(float(vals.max()), rel=1e-13, abs=1e-300)
    v, _ = R.aoql_single_many([n], [c], "hypergeometric", N, formula)
    assert v[0] == pytest.approx(float(vals.max()), rel=1e-13, abs=1e-300)


@pytest.mark.parametrize("n, c, N", [(125, 3, 100_000), (20, 1, 4000), (500, 10, 200_000),
                                     (80, 2, 1000)])
def test_hyper_aoql_window_matches_exhaustive_large_lots(n, c, N):
    # Brute force over every count for lots too big for the all-counts path.
    plan, scope = SinglePlan(n=n, c=c), Scope(lot_size=N)
    top = int(min(N, 0.25 * N if N < 10_000 else 30 * (c + 1) / n * N))
    d = np.arange(0, top + 1)
    vals = R.aoq_count(plan, d, scope)
    assert R.aoql(plan, scope, "hypergeometric").value == pytest.approx(float(vals.max()), rel=1e-13)


def test_finite_lot_unimodal_small_lots_exhaustive():
    # The window search relies on the finite-lot AOQ being unimodal in D:
    # checked for every plan with n < N <= 30 and c <= 6 (brute force).
    for N in range(2, 31):
        for n in range(1, N):
            for c in range(0, min(n, 6) + 1):
                for formula in R.FORMULAS:
                    g = R.aoq_count(SinglePlan(n=n, c=c), np.arange(N + 1), Scope(lot_size=N),
                                    formula)
                    dg = np.diff(g)
                    s = np.sign(np.where(np.abs(dg) <= 1e-15 * g.max(), 0, dg))
                    s = s[s != 0]
                    assert not np.any(np.diff(s) > 0), (N, n, c, formula)


@settings(max_examples=40, deadline=None)
@given(st.integers(1, 300), st.integers(0, 6), st.integers(1, 50),
       st.sampled_from(["hypergeometric", "binomial", "poisson"]),
       st.sampled_from(R.FORMULAS))
def test_aoq_never_above_aoql_and_ati_between_n_and_N(n, c, extra, model, formula):
    # Property tests (common practice, no source):
    # AOQ <= AOQL everywhere; n <= ATI <= N.
    c = min(c, n)
    N = n + extra * 7
    plan, scope = SinglePlan(n=n, c=c), Scope(lot_size=N)
    a = R.aoql(plan, scope, model, formula)
    ps = np.linspace(0, 1, 2001)
    q = R.aoq(plan, ps, model, scope, formula)
    assert np.all(q <= a.value * (1 + 1e-9) + 1e-15)
    t = R.ati(plan, ps, model, scope)
    assert np.all(t >= n - 1e-9) and np.all(t <= N + 1e-9)


def test_large_lot_limit_and_binomial_hyper_agree():
    # As N grows the finite-lot AOQL tends to the binomial one (common
    # practice, no source); tolerance 1e-3 relative at N = 10^7.
    plan = SinglePlan(n=80, c=2)
    h = R.aoql(plan, Scope(lot_size=10_000_000), "hypergeometric").value
    b = R.aoql(plan, Scope(), "binomial").value
    assert h == pytest.approx(b, rel=1e-3)


def test_ati_values_against_formula():
    # ATI = n + (1 - Pa)(N - n) (Dodge-Romig definition), with Pa from
    # scipy.stats.binom (general-purpose reference library), tolerance 1e-12.
    from scipy.stats import binom

    plan, N = SinglePlan(n=50, c=1), 2000
    for p in (0.001, 0.02, 0.1):
        pa = binom.cdf(1, 50, p)
        assert R.ati(plan, p, "binomial", Scope(lot_size=N)) == pytest.approx(50 + (1 - pa) * 1950,
                                                                            rel=1e-12)


def test_plan_with_c_at_least_n_accepts_everything():
    # Every lot accepted: AOQ = p (N - n)/N is largest at p = 1 (direct reasoning).
    a = R.aoql(SinglePlan(n=5, c=5), Scope(lot_size=100), "binomial")
    assert a.at == 1.0 and a.value == pytest.approx(0.95)


def test_check_json_keys_and_terminal(capsys):
    rc = main(["check", "--n", "20", "--c", "1", "--aql", "1%", "--rql", "10%",
               "--lot-size", "4000", "--json"])
    out = json.loads(capsys.readouterr().out)
    assert rc == 1  # beta not met
    assert set(out["ati"]) == {"aql", "rql"}
    direct = R.aoql(SinglePlan(n=20, c=1), Scope(lot_size=4000), "hypergeometric")
    assert out["aoql"] == direct.value and out["aoql_p"] == direct.at
    assert set(out["rectifying"]["models"]) == {"hypergeometric", "binomial", "poisson"}
    main(["check", "--n", "20", "--c", "1", "--aql", "1%", "--rql", "10%", "--lot-size", "4000",
          "--aoq-formula", "simple"])
    text = capsys.readouterr().out
    assert "AOQL" in text and "AOQ = p Pa (the form without" in text


@pytest.mark.parametrize("argv, word", [
    (["check", "--n", "20", "--c", "1", "--aql", "1%", "--rql", "10%", "--lot-size", "4000",
      "--aoq-formula", "both"], "--aoq-formula"),
    (["check", "--n", "20", "--c", "1", "--aql", "1%", "--rql", "10%", "--aoq-formula",
      "simple"], "--aoq-formula"),
    (["check", "--n", "20", "--c", "1", "--aql", "1%", "--rql", "10%", "--aoq-plot", "x.png"],
     "--aoq-plot"),
])
def test_check_bad_input_one_line_exit_2(argv, word, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and word in err[0]


def test_aoq_plot_written(tmp_path, capsys):
    path = tmp_path / "r.png"
    main(["check", "--n", "20", "--c", "1", "--aql", "1%", "--rql", "10%", "--lot-size", "4000",
          "--aoq-plot", str(path)])
    assert path.read_bytes()[:4] == b"\x89PNG"
    # a user's file is not overwritten without --force
    other = tmp_path / "mine.png"
    other.write_bytes(b"mine")
    assert main(["check", "--n", "20", "--c", "1", "--aql", "1%", "--rql", "10%",
                 "--lot-size", "4000", "--aoq-plot", str(other)]) == 2
    assert other.read_bytes() == b"mine"


def test_figures_have_the_curves():
    from lotwise.documents.plots.rectifying import aoq_figure, ati_figure

    plan, scope = SinglePlan(n=50, c=1), Scope(lot_size=1000)
    fig = aoq_figure(plan, scope)
    assert len(fig.axes[0].lines) == 4  # three models and the AOQL mark
    fig = ati_figure(plan, scope)
    assert fig.axes[0].get_ylim()[1] >= 1000
