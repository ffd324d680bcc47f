"""Priors from the supplier's history, posterior risks and least-cost plans.

Every check names its source beside it:

* brute force: a loop over every (n, c) of the lot with beta-binomial
  probabilities from ``scipy.stats.betabinom`` (which lotwise does not call)
  and exact cumulative sums over d;
* mpmath: numerical integration (``mpmath.quad``, 30 digits) of the plan's
  ``Pa(p)``, written out here from its definition, against the beta density;
* limits: a prior concentrated at one p (``a + b = 1e12``) gives back the
  plan's own OC curve (``scipy.stats.binom``);
* simulation: seeded beta-binomial histories for the prior fit, and
  ``scipy.optimize`` on ``scipy.stats.betabinom.logpmf`` for the maximum;
* Deming's all-or-none rule, W. E. Deming, *Out of the Crisis* (MIT, 1986),
  ch. 15 (from memory).
"""

from __future__ import annotations

import io
import json
import math

import mpmath as mp
import numpy as np
import pytest
from scipy import stats

from lotwise.analysis.cost import Costs, expected_cost, least_cost_single
from lotwise.analysis.prior import (BetaPrior, fit_prior, half_life_weights, parse_prior,
                                    posterior_risks)
from lotwise.cli import main
from lotwise.core.quantities import InputError
from lotwise.data.history import read_history
from lotwise.families.base import parse_plan


# --- least-cost plans against brute force -------------------------------------

def brute_force(N, a, b, S, A, R=None, rql=None, beta=0.10):
    """Least expected cost over every n = 0..N and c = 0..n (Hald's model, the
    formula of the task written out; scipy.stats for the probabilities)."""
    best = (math.inf, None, None)
    d2 = math.floor(rql * N + 1e-9) if rql is not None else None
    for n in range(N + 1):
        d = np.arange(n + 1)
        P = stats.betabinom.pmf(d, n, a, b)
        q = S * (N - n) if R is None else R
        acc = np.cumsum(P * A * (N - n) * (a + d) / (a + b + n))
        cost = S * n + acc + q * (1.0 - np.cumsum(P))
        if rql is not None:
            if n == 0:
                continue  # accepts every lot
            cost = np.where(stats.hypergeom.cdf(d, N, d2, n) <= beta + 1e-12, cost, np.inf)
        c = int(np.argmin(cost))
        if cost[c] < best[0]:
            best = (float(cost[c]), n, c)
    return best


def brute_cost(N, a, b, S, A, R, n, c):
    """The cost of one plan by the same formula."""
    d = np.arange(n + 1)
    P = stats.betabinom.pmf(d, n, a, b)
    q = S * (N - n) if R is None else R
    acc = P[:c + 1] * A * (N - n) * (a + d[:c + 1]) / (a + b + n)
    return float(S * n + acc.sum() + q * (1.0 - P[:c + 1].sum()))


# (N, a, b, S, A, R, RQL): source brute force; tolerance 1e-9 relative on the cost
COST_CASES = [
    (200, 2.0, 98.0, 1.0, 40.0, None, None),
    (500, 0.5, 20.0, 1.0, 10.0, None, None),     # no inspection is best
    (1000, 2.0, 38.0, 1.0, 30.0, None, None),
    (300, 3.0, 50.0, 1.0, 100.0, 50.0, None),    # rejected lots returned at R
    (2000, 1.5, 60.0, 1.0, 25.0, None, None),
    (2000, 2.0, 8.0, 1.0, 5.0, None, None),      # a poor supplier: large c
    (600, 6.0, 30.0, 1.0, 4.0, None, None),      # mean 16.7 %, break-even S/A 25 %
    (50, 0.7, 5.0, 2.0, 9.0, None, None),        # a small lot, a U-shaped prior
    (500, 2.0, 98.0, 1.0, 40.0, None, 0.03),     # the RQL constraint binds
    (1000, 2.0, 98.0, 1.0, 40.0, None, 0.02),
    (800, 1.0, 30.0, 1.0, 20.0, 100.0, 0.05),
]


@pytest.mark.parametrize("N, a, b, S, A, R, rql", COST_CASES)
def test_least_cost_matches_brute_force(N, a, b, S, A, R, rql):
    d = least_cost_single(lot_size=N, prior=BetaPrior(a=a, b=b),
                          costs=Costs(inspect=S, escape=A, reject_lot=R), rql=rql)
    cost, n, c = brute_force(N, a, b, S, A, R, rql)
    assert d.expected_cost == pytest.approx(cost, rel=1e-9)  # brute force, 1e-9
    # the plan found costs what it says (ties with another plan are allowed)
    assert brute_cost(N, a, b, S, A, R, d.n, d.c) == pytest.approx(cost, rel=1e-9)
    assert d.expected_cost_none == pytest.approx(A * N * a / (a + b), rel=1e-12)
    assert d.expected_cost_all == S * N
    assert d.breakeven_p == S / A


def test_expected_cost_of_any_plan_matches_brute_force():
    # brute force formula; 1e-11 relative
    for n, c in ((0, 0), (10, 0), (80, 2), (150, 149), (200, -1), (200, 5)):
        got = expected_cost(n, c, lot_size=200, prior=BetaPrior(a=2, b=98),
                            costs=Costs(inspect=1, escape=40))
        if c < 0:
            want = 1.0 * 200  # reject every lot: all 200 inspected
        else:
            want = brute_cost(200, 2, 98, 1, 40, None, n, c)
        assert got == pytest.approx(want, rel=1e-11)


@pytest.mark.parametrize("N", [50, 1000, 10_000])
@pytest.mark.parametrize("S, A", [(1.0, 40.0), (2.0, 25.0)])
def test_deming_all_or_none(N, S, A):
    # Deming, Out of the Crisis (1986), ch. 15 (from memory): with p known,
    # inspect every item when p > S/A, none when p < S/A.
    k = S / A
    for p0, expect_n in ((0.5 * k, 0), (0.8 * k, 0), (1.25 * k, N), (2.0 * k, N)):
        prior = BetaPrior(a=p0 * 1e12, b=(1 - p0) * 1e12)
        d = least_cost_single(lot_size=N, prior=prior, costs=Costs(inspect=S, escape=A))
        assert d.n == expect_n
        want = A * N * p0 if expect_n == 0 else S * N
        assert d.expected_cost == pytest.approx(want, rel=1e-9)


def test_cost_design_holds_the_consumers_risk():
    # the constraint against scipy.stats.hypergeom; exact comparison with beta
    d = least_cost_single(lot_size=1000, prior=BetaPrior(a=2, b=98),
                          costs=Costs(inspect=1, escape=40), rql=0.02, beta=0.10)
    assert stats.hypergeom.cdf(d.c, 1000, 20, d.n) <= 0.10
    free = least_cost_single(lot_size=1000, prior=BetaPrior(a=2, b=98),
                             costs=Costs(inspect=1, escape=40))
    assert d.expected_cost >= free.expected_cost  # a constraint cannot lower the least cost


def test_cost_design_bad_input():
    with pytest.raises(InputError, match=r"--cost-inspect \(0\)"):
        Costs(inspect=0, escape=1)
    with pytest.raises(InputError, match=r"--cost-reject-lot \(-1\)"):
        Costs(inspect=1, escape=1, reject_lot=-1)
    with pytest.raises(InputError, match=r"--lot-size \(0\)"):
        least_cost_single(lot_size=0, prior=BetaPrior(a=1, b=9), costs=Costs(inspect=1, escape=9))


# --- posterior risks against mpmath ---------------------------------------------

mp.mp.dps = 30


def _binom_cdf(n, c, p):
    return mp.fsum(mp.binomial(n, d) * p ** d * (1 - p) ** (n - d) for d in range(c + 1))


def _binom_pmf(n, d, p):
    return mp.binomial(n, d) * p ** d * (1 - p) ** (n - d)


def _double_parts(n1, c1, r1, n2, c2):
    """Acceptance at stage 1 and at stage 2 of a double plan (Pa by definition)."""
    def first(p):
        return _binom_cdf(n1, c1, p)

    def second(p):
        return mp.fsum(_binom_pmf(n1, d1, p) * _binom_cdf(n2, c2 - d1, p)
                       for d1 in range(c1 + 1, r1))
    return first, second


def mp_posterior(parts, a, b, aql, rql, N):
    """Posterior risks by mpmath.quad; ``parts`` = [(Pa_i(p), units inspected)]."""
    dens = lambda p: p ** (a - 1) * (1 - p) ** (b - 1) / mp.beta(a, b)  # noqa: E731
    pa = lambda p: mp.fsum(f(p) for f, _ in parts)  # noqa: E731
    cuts = [0, aql, rql, 1]
    acc = mp.quad(lambda p: pa(p) * dens(p), cuts)
    rej = 1 - acc
    bad_acc = mp.quad(lambda p: pa(p) * dens(p), [rql, 1])
    good_rej = mp.quad(lambda p: (1 - pa(p)) * dens(p), [0, aql])
    left = mp.quad(lambda p: p * mp.fsum(f(p) * (N - m) for f, m in parts) * dens(p), cuts)
    return float(rej), float(bad_acc / acc), float(good_rej / rej), float(left / acc)


# (plan, a, b, AQL, RQL, N): source mpmath; tolerance 1e-9 absolute/relative
POSTERIOR_CASES = [
    ("n=80,c=2", 2.0, 98.0, 0.01, 0.05, 1000),
    ("n=50,c=0", 0.6, 30.0, 0.005, 0.04, 500),     # a < 1: density infinite at 0
    ("n=200,c=7", 5.0, 120.0, 0.02, 0.06, 5000),
    ("double: n1=50,c1=1,r1=4,n2=100,c2=4", 2.0, 98.0, 0.01, 0.05, 5000),
    ("double: n1=32,c1=0,r1=3,n2=32,c2=3", 1.2, 40.0, 0.01, 0.08, 1000),
]


@pytest.mark.parametrize("text, a, b, aql, rql, N", POSTERIOR_CASES)
def test_posterior_risks_against_mpmath(text, a, b, aql, rql, N):
    plan = parse_plan(text)
    if plan.scheme == "single":
        parts = [(lambda p, n=plan.n, c=plan.c: _binom_cdf(n, c, p), plan.n)]
    else:
        f1, f2 = _double_parts(plan.n1, plan.c1, plan.r1, plan.n2, plan.c2)
        parts = [(f1, plan.n1), (f2, plan.n1 + plan.n2)]
    rej, cons, prod, left = mp_posterior(parts, a, b, aql, rql, N)
    for exact in (True, False):  # exact sums, and quadrature of pa(p)
        r = posterior_risks(plan, BetaPrior(a=a, b=b), aql=aql, rql=rql, lot_size=N,
                            exact=exact)
        assert r.p_reject == pytest.approx(rej, rel=1e-9, abs=1e-12)
        assert r.consumer_risk == pytest.approx(cons, rel=1e-8, abs=1e-12)
        assert r.producer_risk == pytest.approx(prod, rel=1e-8, abs=1e-12)
        assert r.expected_left == pytest.approx(left, rel=1e-9)


def test_chain_skiplot_variables_against_mpmath():
    # Pa by definition: ChSP-1 P0 + P1 P0^i (Dodge 1955, from memory); SkSP-2
    # (f P + (1 - f) P^i) / (f + (1 - f) P^i) (Perry 1973, from memory); a
    # known-sigma variables plan Phi(sqrt(n) (z_p - k)) (from memory). mpmath; 1e-8.
    a, b, aql, rql = 2.0, 98.0, 0.01, 0.05
    P0 = lambda p, n: (1 - p) ** n  # noqa: E731
    cases = {
        "chain: n=20,i=3": lambda p: P0(p, 20) + 20 * p * (1 - p) ** 19 * P0(p, 20) ** 3,
        "skiplot: n=50,c=1,i=4,f=0.25": lambda p: (
            (0.25 * _binom_cdf(50, 1, p) + 0.75 * _binom_cdf(50, 1, p) ** 4)
            / (0.25 + 0.75 * _binom_cdf(50, 1, p) ** 4)),
        "variables: n=30,k=1.9,upper=10,sigma=known": lambda p: mp.ncdf(
            mp.sqrt(30) * (-mp.sqrt(2) * mp.erfinv(2 * p - 1) - 1.9)),
    }
    dens = lambda p: p ** (a - 1) * (1 - p) ** (b - 1) / mp.beta(a, b)  # noqa: E731
    for text, pa in cases.items():
        acc = mp.quad(lambda p: pa(p) * dens(p), [0, aql, rql, 1])
        cons = mp.quad(lambda p: pa(p) * dens(p), [rql, 1]) / acc
        prod = mp.quad(lambda p: (1 - pa(p)) * dens(p), [0, aql]) / (1 - acc)
        r = posterior_risks(parse_plan(text), BetaPrior(a=a, b=b), aql=aql, rql=rql)
        assert r.p_reject == pytest.approx(float(1 - acc), rel=1e-8), text
        assert r.consumer_risk == pytest.approx(float(cons), rel=1e-7), text
        assert r.producer_risk == pytest.approx(float(prod), rel=1e-7), text


@pytest.mark.parametrize("text", ["n=80,c=2", "n=315,c=7",
                                  "double: n1=50,c1=1,r1=4,n2=100,c2=4"])
@pytest.mark.parametrize("p0", [0.004, 0.02, 0.06])
def test_concentrated_prior_gives_the_oc_curve(text, p0):
    # a + b -> infinity: the predictive rejection is 1 - Pa(p0); single plans
    # against scipy.stats.binom, the double plan against its definition (mpmath).
    plan = parse_plan(text)
    s = 1e12
    r = posterior_risks(plan, BetaPrior(a=p0 * s, b=(1 - p0) * s), aql=0.01, rql=0.05)
    if plan.scheme == "single":
        want = 1 - stats.binom.cdf(plan.c, plan.n, p0)
    else:
        f1, f2 = _double_parts(plan.n1, plan.c1, plan.r1, plan.n2, plan.c2)
        want = float(1 - f1(mp.mpf(p0)) - f2(mp.mpf(p0)))
    assert r.p_reject == pytest.approx(want, rel=1e-7, abs=1e-12)


def test_posterior_edge_cases():
    prior = BetaPrior(a=2, b=98)
    r = posterior_risks(parse_plan("n=10,c=10"), prior, aql=0.01, rql=0.05)
    assert r.p_reject == 0.0 and r.producer_risk is None  # never rejects
    # accepting every lot: the consumer's risk is the prior's own tail (scipy.stats.beta)
    assert r.consumer_risk == pytest.approx(stats.beta.sf(0.05, 2, 98), rel=1e-12)
    r = posterior_risks(parse_plan("n=80,c=2"), prior)
    assert r.consumer_risk is None and r.producer_risk is None and r.left_per == "unit"


# --- the prior from records ------------------------------------------------------

def test_fit_matches_scipy_optimize():
    # the maximum by scipy.optimize (Nelder-Mead on scipy.stats.betabinom); 1e-5
    from scipy.optimize import minimize

    rng = np.random.default_rng(7)
    n = rng.integers(50, 200, 120)
    x = rng.binomial(n, rng.beta(1.5, 40, 120))
    f = fit_prior(n, x)
    nll = lambda t: -stats.betabinom.logpmf(x, n, np.exp(t[0]), np.exp(t[1])).sum()  # noqa: E731
    res = minimize(nll, [0.0, 3.0], method="Nelder-Mead",
                   options={"xatol": 1e-10, "fatol": 1e-12, "maxiter": 20_000})
    assert f.prior.a == pytest.approx(math.exp(res.x[0]), rel=1e-5)
    assert f.prior.b == pytest.approx(math.exp(res.x[1]), rel=1e-5)
    assert f.log_likelihood == pytest.approx(-res.fun, abs=1e-8)


@pytest.mark.parametrize("a, b, lots, n", [(2.0, 38.0, 200, 100), (0.8, 20.0, 150, 50)])
def test_fit_recovers_a_known_beta(a, b, lots, n):
    # seeded simulation, 200 histories: the true a and b lie within 1.96
    # standard errors in about 95 % of them (accept 90 %..99 %, three binomial
    # standard deviations of 200 trials), the standardised errors average
    # near 0 (|mean| < 0.25, about 3.5 standard errors of a mean of 200), and
    # the chi-square goodness of fit rejects at 5 % in at most 10 % of them.
    za, zb, rejects = [], [], 0
    for seed in range(200):
        rng = np.random.default_rng(seed)
        x = rng.binomial(n, rng.beta(a, b, lots))
        f = fit_prior(np.full(lots, n), x)
        assert f.usable, f.reason
        za.append((f.prior.a - a) / f.se_a)
        zb.append((f.prior.b - b) / f.se_b)
        rejects += f.gof["p_value"] < 0.05
    za, zb = np.array(za), np.array(zb)
    for z in (za, zb):
        assert 0.90 <= np.mean(np.abs(z) < 1.96) <= 0.99
        assert abs(z.mean()) < 0.25
    assert rejects / 200 <= 0.10


def test_history_too_short_or_flat():
    # the definitions in lotwise.analysis.prior: fewer than 10 lots; a flat
    # likelihood (one binomial within 1.92 log-likelihood units of the best fit)
    rng = np.random.default_rng(3)
    x = rng.binomial(100, rng.beta(2, 38, 9))
    f = fit_prior(np.full(9, 100), x)
    assert not f.usable and "holds 9 lots" in f.reason
    # no lot-to-lot variation at all: the likelihood-ratio statistic exceeds
    # 2 x 1.92 = 3.84 in about 2.5 % of such histories (half a chi-square tail,
    # Self and Liang 1987), so at least 17 of 20 are flat (binomial tail < 1e-2)
    flats = sum(not fit_prior(np.full(400, 100), rng.binomial(100, 0.05, 400)).usable
                for _ in range(20))
    assert flats >= 17
    # strong variation between lots: never flat
    assert fit_prior(np.full(100, 100), rng.binomial(100, rng.beta(1, 20, 100))).usable
    f = fit_prior(np.full(30, 80), np.zeros(30, dtype=int))
    assert f.prior is None and "no nonconforming item" in f.reason


def test_half_life_weights():
    # stated rule: the lot k lots older than the newest weighs 0.5 ** (k / h)
    w = half_life_weights(5, 2.0)
    assert w.tolist() == pytest.approx([0.25, 0.5 ** 1.5, 0.5, 0.5 ** 0.5, 1.0], rel=1e-15)
    assert half_life_weights(4, None).tolist() == [1.0, 1.0, 1.0, 1.0]
    with pytest.raises(InputError, match=r"--half-life \(0"):
        half_life_weights(3, 0.0)


def test_weights_multiply_the_likelihood():
    # a lot of weight 2 counts as the same lot twice (scipy.stats.betabinom fit of
    # the doubled data as the reference; 1e-8)
    rng = np.random.default_rng(11)
    n = np.full(60, 80)
    x = rng.binomial(80, rng.beta(2, 30, 60))
    w = np.where(np.arange(60) % 2 == 0, 2.0, 1.0)
    f = fit_prior(n, x, weights=w)
    twice = np.concatenate([x, x[::2]])
    g = fit_prior(np.full(twice.size, 80), twice)
    assert f.prior.a == pytest.approx(g.prior.a, rel=1e-8)
    assert f.prior.b == pytest.approx(g.prior.b, rel=1e-8)


def test_half_life_lowers_old_lots_by_date():
    # a supplier that improved: 40 old lots near 8 %, then 40 recent ones near 1 %.
    # The dates (out of file order) decide which lots are old; with a half-life
    # of 10 lots the fitted mean moves towards the recent quality.
    rng = np.random.default_rng(5)
    old = rng.binomial(100, rng.beta(4, 46, 40))
    new = rng.binomial(100, rng.beta(2, 198, 40))
    rows = ["date,part,sample_size,found"]
    order = rng.permutation(80)
    for i in order:
        day = 1 + i
        found = old[i] if i < 40 else new[i - 40]
        rows.append(f"2026-{1 + day // 28:02d}-{1 + day % 28:02d},P-9,100,{found}")
    h = read_history(io.StringIO("\n".join(rows) + "\n"), part="P-9")
    assert h.found.tolist() == list(old) + list(new)  # oldest first, by date
    plain = fit_prior(h.sample_sizes, h.found)
    recent = fit_prior(h.sample_sizes, h.found, half_life=10)
    assert recent.weight == pytest.approx(sum(0.5 ** (k / 10) for k in range(80)), rel=1e-12)
    assert recent.prior.mean < 0.5 * plain.prior.mean
    by_hand = fit_prior(h.sample_sizes, h.found, weights=0.5 ** (np.arange(79, -1, -1) / 10))
    assert recent.prior.a == pytest.approx(by_hand.prior.a, rel=1e-12)


def test_parse_prior():
    p = parse_prior("beta: a=2, b=98")
    assert (p.a, p.b) == (2.0, 98.0)
    assert parse_prior("a=0.5,b=12").b == 12.0
    for bad, what in (("beta: a=2", "both needed"), ("beta: a=0,b=3", r"a \(0\)"),
                      ("gamma: a=1,b=2", "beta distribution"), ("beta: a=1,b=2,c=3", "'c'")):
        with pytest.raises(InputError, match=what):
            parse_prior(bad)


# --- the command line --------------------------------------------------------------

def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def test_check_prior_json(capsys):
    code, out, err = run(capsys, "check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "5%",
                         "--lot-size", "1000", "--prior", "beta: a=2,b=98", "--json")
    d = json.loads(out)
    assert set(d["posterior"]) == {"consumer_risk", "producer_risk", "p_reject",
                                   "expected_left"}
    r = posterior_risks(parse_plan("n=80,c=2"), BetaPrior(a=2, b=98), aql=0.01, rql=0.05,
                        lot_size=1000)
    assert d["posterior"]["p_reject"] == r.p_reject
    assert d["prior"]["a"] == 2.0 and d["posterior_notes"]["expected_left_per"] == "lot"


def test_design_cost_json_contract(capsys):
    code, out, err = run(capsys, "design", "--minimize", "cost", "--lot-size", "2000",
                         "--prior", "beta: a=2,b=98", "--cost-inspect", "1",
                         "--cost-escape", "40", "--json")
    assert code == 0
    d = json.loads(out)
    for key, kind in (("scheme", str), ("n", int), ("c", int), ("expected_cost", float),
                      ("expected_cost_none", float), ("expected_cost_all", float),
                      ("breakeven_p", float), ("prior", dict)):
        assert isinstance(d[key], kind), key
    assert d["prior"] == {"a": 2.0, "b": 98.0}
    assert d["posterior_consumer_risk"] is None  # no RQL
    code, out, err = run(capsys, "design", "--minimize", "cost", "--lot-size", "2000",
                         "--prior", "beta: a=2,b=98", "--cost-inspect", "1",
                         "--cost-escape", "40", "--aql", "1%", "--rql", "5%", "--json")
    d = json.loads(out)
    assert isinstance(d["posterior_consumer_risk"], float)
    assert d["two_point"]["n"] == 130 and d["two_point"]["c"] == 3  # lotwise design, same targets


def test_prior_from_records(capsys, tmp_path):
    code, out, err = run(capsys, "check", "--plan", "n=125,c=5", "--aql", "1%", "--rql", "6%",
                         "--prior-from", "examples/history.csv", "--part", "QP-8840", "--json")
    d = json.loads(out)
    h = read_history("examples/history.csv", part="QP-8840")
    f = fit_prior(h.sample_sizes, h.found)
    assert d["prior"]["a"] == f.prior.a and d["prior"]["fit"]["usable"]
    # a homogeneous history carries no prior: exit 1, one line
    code, out, err = run(capsys, "check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "5%",
                         "--prior-from", "examples/lots.csv", "--part", "QP-6630")
    assert code == 1 and "too short to carry a prior" in err and len(err.splitlines()) == 1


@pytest.mark.parametrize("args, option", [
    (["check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "5%", "--prior", "beta: a=x,b=2"],
     "--prior a (x)"),
    (["check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "5%", "--half-life", "4"],
     "--half-life (4)"),
    (["check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "5%", "--prior-from",
      "examples/history.csv", "--part", "QP-8840", "--half-life", "-2"], "--half-life (-2)"),
    (["design", "--minimize", "cost", "--lot-size", "100", "--prior", "beta: a=1,b=9",
      "--cost-inspect", "abc", "--cost-escape", "9"], "--cost-inspect (abc)"),
    (["design", "--minimize", "cost", "--lot-size", "100", "--prior", "beta: a=1,b=9",
      "--cost-inspect", "1", "--cost-escape", "9", "--c", "2"], "--c (2)"),
    (["design", "--aql", "1%", "--rql", "5%", "--cost-escape", "9"], "--cost-escape (9)"),
])
def test_bad_input_one_line_exit_2(capsys, args, option):
    code, out, err = run(capsys, *args)
    assert code == 2 and len(err.splitlines()) == 1 and option in err


def test_batch_cost_columns(tmp_path):
    # the batch row against design --minimize cost with the same inputs
    from lotwise.data.batch import design_catalogue
    import pandas as pd

    cat = pd.DataFrame({"part": ["A", "B"], "lot_size": ["2000", "2000"], "aql": ["1%", "1%"],
                        "rql": ["5%", "5%"], "prior_a": ["2", ""], "prior_b": ["98", ""],
                        "cost_inspect": ["1", ""], "cost_escape": ["40", ""]})
    t = design_catalogue(cat).table
    d = least_cost_single(lot_size=2000, prior=BetaPrior(a=2, b=98),
                          costs=Costs(inspect=1, escape=40), rql=0.05, beta=0.10)
    assert (int(t["n"][0]), int(t["c"][0])) == (d.n, d.c)
    assert t["expected_cost"][0] == pytest.approx(d.expected_cost, rel=1e-12)
    assert (int(t["n"][1]), int(t["c"][1])) == (130, 3) and math.isnan(t["expected_cost"][1])


def test_cost_sheet_and_yearly_cost(capsys, tmp_path):
    # the sheet repeats the --json numbers (source: the command's own JSON);
    # a file the user made is never overwritten without --force
    sheet = tmp_path / "cost.md"
    args = ["design", "--minimize", "cost", "--lot-size", "2000", "--prior", "beta: a=2,b=98",
            "--cost-inspect", "1", "--cost-escape", "40", "--deliveries-per-year", "52"]
    code, out, err = run(capsys, *args, "--sheet", str(sheet), "--json")
    d = json.loads(out)
    assert d["expected_cost_per_year"] == pytest.approx(52 * d["expected_cost"], rel=1e-15)
    text = sheet.read_text()
    assert f"{d['expected_cost']:,.2f}" in text and f"{52 * d['expected_cost']:,.2f}" in text
    assert "Beta(2, 98)" in text and "stated by the user" in text
    mine = tmp_path / "mine.md"
    mine.write_text("my notes\n")
    code, out, err = run(capsys, *args, "--sheet", str(mine))
    assert code == 2 and "--sheet" in err and mine.read_text() == "my notes\n"


def _keys(obj, out=None):
    out = set() if out is None else out
    if isinstance(obj, dict):
        for k, v in obj.items():
            out.add(k)
            _keys(v, out)
    elif isinstance(obj, list):
        for v in obj:
            _keys(v, out)
    return out


def test_every_json_key_is_in_the_readme(capsys, tmp_path):
    # the project's rule: every JSON key documented in README.md (exact check)
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text()
    runs = [
        ["check", "--plan", "n=80,c=2", "--skip-lot", "i=4,f=0.25", "--aql", "1%", "--rql",
         "5%", "--lot-size", "3000", "--prior-from", "examples/history.csv", "--part",
         "QP-8840", "--json"],
        ["design", "--minimize", "cost", "--lot-size", "3000", "--prior-from",
         "examples/history.csv", "--part", "QP-8840", "--cost-inspect", "1", "--cost-escape",
         "40", "--aql", "1%", "--rql", "5%", "--deliveries-per-year", "12", "--sheet",
         str(tmp_path / "c.md"), "--json"],
    ]
    base = set(json.loads(_run_json(capsys, ["check", "--plan", "n=80,c=2", "--skip-lot",
                                             "i=4,f=0.25", "--aql", "1%", "--rql", "5%",
                                             "--lot-size", "3000", "--json"])))
    for args in runs:
        d = json.loads(_run_json(capsys, args))
        new = _keys({k: v for k, v in d.items() if k not in base or k == "skip_lot"})
        if args[0] == "check":
            new = _keys({"prior": d["prior"], "posterior": d["posterior"],
                         "posterior_notes": d["posterior_notes"],
                         "skip_lot": {"posterior": d["skip_lot"]["posterior"]}})
        missing = sorted(k for k in new if f"`{k}`" not in readme)
        assert not missing, missing


def _run_json(capsys, args):
    main(list(args))
    return capsys.readouterr()[0]
