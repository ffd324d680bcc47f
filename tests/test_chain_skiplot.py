"""ChSP-1 chain sampling and SkSP-2 skip-lot plans: OC functions against
direct simulation of many lots, mpmath, and brute-force design search."""

from __future__ import annotations

import json

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from lotwise.analysis import rectifying as R
from lotwise.families.chain import ChainPlan, design_chain
from lotwise.cli import main
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.families.base import parse_plan
from lotwise.core.quantities import Infeasible
from lotwise.families.skiplot import SkipLotPlan, parse_skip


def _simulate_chain(n, i, p, chains=4000, lots=80, seed=12345):
    """Direct simulation of ChSP-1 over many lots: each chain is a run of lots
    from a process at p; a lot is accepted on 0 nonconforming in its sample,
    or on 1 when the i preceding samples held none. The first i lots (no full
    history) are dropped; the chain means are independent, which gives the
    standard error."""
    rng = np.random.default_rng(seed)
    x = rng.binomial(n, p, size=(chains, lots))
    clean = x == 0
    acc = np.zeros((chains, lots - i), dtype=bool)
    for t in range(i, lots):
        history = clean[:, t - i:t].all(axis=1)
        acc[:, t - i] = clean[:, t] | ((x[:, t] == 1) & history)
    means = acc.mean(axis=1)
    return means.mean(), means.std(ddof=1) / np.sqrt(chains)


@pytest.mark.parametrize("n, i, p", [(20, 3, 0.02), (10, 1, 0.1), (50, 5, 0.01), (15, 2, 0.06)])
def test_chain_oc_against_simulation(n, i, p):
    # Direct simulation with a fixed seed: within 4 standard errors.
    est, se = _simulate_chain(n, i, p)
    pa = ChainPlan(n=n, i=i).pa(p, "binomial", Scope())
    assert abs(est - pa) <= 4 * se


@pytest.mark.parametrize("n, i, p", [(20, 3, 0.02), (1, 1, 0.5), (200, 4, 0.003)])
def test_chain_oc_against_mpmath(n, i, p):
    # mpmath 30 digits: Pa = P0 + P1 P0^i from binomial masses (Dodge 1955); rel 1e-12.
    mp.mp.dps = 30
    P0 = (1 - mp.mpf(p)) ** n
    P1 = n * mp.mpf(p) * (1 - mp.mpf(p)) ** (n - 1)
    assert ChainPlan(n=n, i=i).pa(p, "binomial", Scope()) == pytest.approx(float(P0 + P1 * P0 ** i),
                                                                          rel=1e-12)
    lam = n * mp.mpf(p)
    assert ChainPlan(n=n, i=i).pa(p, "poisson", Scope()) == pytest.approx(
        float(mp.e ** -lam * (1 + lam * mp.e ** (-lam * i))), rel=1e-12)


def test_chain_hypergeometric_against_scipy():
    # scipy.stats.hypergeom masses (reference library), rel 1e-10.
    from scipy.stats import hypergeom

    N, n, i = 500, 30, 3
    for D in (0, 1, 5, 25, 100):
        h0, h1 = hypergeom.pmf(0, N, D, n), hypergeom.pmf(1, N, D, n)
        got = ChainPlan(n=n, i=i).pa_count(D, Scope(lot_size=N))
        assert got == pytest.approx(h0 + h1 * h0 ** i, rel=1e-10, abs=1e-300)


def test_chain_limits():
    # i = 0 would be the c = 1 plan, i -> infinity the c = 0 plan: the chain OC
    # lies between them (Dodge 1955).
    ps = np.linspace(0, 0.3, 301)
    sc = Scope()
    pa = ChainPlan(n=20, i=2).pa(ps, "binomial", sc)
    assert np.all(pa <= SinglePlan(n=20, c=1).pa(ps, "binomial", sc) + 1e-15)
    assert np.all(pa >= SinglePlan(n=20, c=0).pa(ps, "binomial", sc) - 1e-15)


@settings(max_examples=40, deadline=None)
@given(st.sampled_from(["binomial", "poisson", "hypergeometric"]), st.integers(1, 12),
       st.floats(1e-4, 0.5))
def test_chain_pa_falls_in_n(model, i, p):
    # The designer's monotonicity (Pa falls in n), checked directly.
    N = 400
    n = np.arange(1, N)
    if model == "hypergeometric":
        from lotwise.families.chain import _pa_chain

        pa = _pa_chain(model, n, i, round(p * N), N)
    else:
        from lotwise.families.chain import _pa_chain

        pa = _pa_chain(model, n, i, p)
    assert np.all(np.diff(pa) <= 1e-14)


@pytest.mark.parametrize("aql, rql, model, N", [(0.01, 0.15, "binomial", None),
                                               (0.005, 0.08, "binomial", None),
                                               (0.005, 0.08, "hypergeometric", 200),
                                               (0.002, 0.05, "poisson", None)])
def test_chain_design_brute_force(aql, rql, model, N):
    # Brute force over every n up to 200 and i up to 40: the smallest n meeting
    # both risks, then the smallest i.
    from lotwise.families.chain import _pa_chain
    from lotwise.core import kernels as oc

    a1 = oc.lot_count(aql, N, "up") if N else aql
    r1 = oc.lot_count(rql, N, "down") if N else rql
    best = None
    for n in range(1, 201 if N is None else N + 1):
        for i in range(1, 41):
            if (_pa_chain(model, n, i, r1, N) <= 0.10 + 1e-12
                    and _pa_chain(model, n, i, a1, N) >= 0.95 - 1e-12):
                best = (n, i)
                break
        if best:
            break
    d = design_chain(aql=aql, rql=rql, lot_size=N, model=model)
    assert (d.plan.n, d.plan.i) == best


def test_chain_design_infeasible():
    with pytest.raises(Infeasible):
        design_chain(aql=0.03, rql=0.08)


def _simulate_skip(n, c, i, f, p, chains=3000, lots=400, burn=150, seed=2024):
    """Direct simulation of SkSP-2 (Perry 1973) over many lots: normal
    inspection until i consecutive lots are accepted, then each lot inspected
    with probability f (uninspected lots accepted), back to normal on a
    rejection. Returns (fraction accepted, fraction inspected) and their
    standard errors from independent chains."""
    rng = np.random.default_rng(seed)
    skipping = np.zeros(chains, dtype=bool)
    run = np.zeros(chains, dtype=int)
    acc = np.zeros(chains)
    ins = np.zeros(chains)
    for t in range(lots):
        inspect = ~skipping | (rng.random(chains) < f)
        ok = rng.binomial(n, p, size=chains) <= c
        accepted = ~inspect | ok
        rejected = inspect & ~ok
        run = np.where(skipping, run, np.where(ok, run + 1, 0))
        skipping = np.where(rejected, False, skipping | (run >= i))
        run = np.where(rejected | skipping, 0, run)
        if t >= burn:
            acc += accepted
            ins += inspect
    k = lots - burn
    acc, ins = acc / k, ins / k
    return (acc.mean(), acc.std(ddof=1) / np.sqrt(chains),
            ins.mean(), ins.std(ddof=1) / np.sqrt(chains))


@pytest.mark.parametrize("n, c, i, f, p", [(80, 2, 4, 0.25, 0.02), (20, 1, 2, 0.5, 0.08),
                                           (50, 0, 6, 0.2, 0.01), (32, 1, 3, 1 / 3, 0.05)])
def test_skiplot_oc_against_simulation(n, c, i, f, p):
    # Direct Markov-chain simulation with a fixed seed: Pa and F within 4
    # standard errors.
    pa_s, se_a, F_s, se_f = _simulate_skip(n, c, i, f, p)
    s = SkipLotPlan(reference=SinglePlan(n=n, c=c), i=i, f=f)
    assert abs(pa_s - s.pa(p, "binomial", Scope())) <= 4 * se_a
    assert abs(F_s - s.fraction_inspected(p, "binomial", Scope())) <= 4 * se_f


def test_skiplot_formula_against_mpmath():
    # mpmath 30 digits: Pa = (f P + (1 - f) P^i)/(f + (1 - f) P^i) (Perry 1973); rel 1e-12.
    mp.mp.dps = 30
    n, c, i, f, p = 80, 2, 4, mp.mpf(1) / 4, mp.mpf("0.03")
    P = mp.fsum(mp.binomial(n, k) * p ** k * (1 - p) ** (n - k) for k in range(c + 1))
    want = (f * P + (1 - f) * P ** i) / (f + (1 - f) * P ** i)
    s = SkipLotPlan(reference=SinglePlan(n=n, c=c), i=i, f=0.25)
    assert s.pa(0.03, "binomial", Scope()) == pytest.approx(float(want), rel=1e-12)


def test_skiplot_f_one_is_reference_and_rectifying_hooks():
    # f = 1 inspects every lot: the reference plan itself (definition).
    ref = SinglePlan(n=50, c=1)
    s = SkipLotPlan(reference=ref, i=3, f=1.0)
    ps = np.linspace(0, 0.2, 51)
    sc = Scope(lot_size=1000)
    assert np.allclose(s.pa(ps, "binomial", sc), ref.pa(ps, "binomial", sc), rtol=1e-14)
    assert np.allclose(R.ati(s, ps, "binomial", sc), R.ati(ref, ps, "binomial", sc), rtol=1e-12)
    assert R.aoql(s, sc).value == pytest.approx(R.aoql(ref, sc).value, rel=1e-12)
    # with skipping: ATI = F ATI_ref and AOQ = (1 - F) p + F AOQ_ref (from the rule)
    s = SkipLotPlan(reference=ref, i=3, f=0.2)
    F = s.fraction_inspected(ps, "binomial", sc)
    assert np.allclose(R.ati(s, ps, "binomial", sc), F * R.ati(ref, ps, "binomial", sc))
    assert np.allclose(R.aoq(s, ps, "binomial", sc), (1 - F) * ps + F * R.aoq(ref, ps, "binomial", sc))


def test_notations():
    assert parse_plan("chain: n=20, i=3") == ChainPlan(n=20, i=3)
    s = parse_plan("skiplot: n=80, c=2, i=4, f=1/4")
    assert s.reference == SinglePlan(n=80, c=2) and s.f == 0.25
    assert parse_plan("n=80,c=2,i=4,f=0.25").scheme == "skiplot"
    assert parse_skip("i=4,f=25%") == (4, 0.25)


def test_cli_design_chain_json(capsys):
    assert main(["design", "--scheme", "chain", "--aql", "1%", "--rql", "15%", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    for key in ("scheme", "n", "i", "pa_aql", "pa_rql", "models", "zero_acceptance_same_n"):
        assert key in out
    assert out["scheme"] == "chain" and (out["n"], out["i"]) == (15, 2)
    assert main(["design", "--scheme", "chain", "--aql", "3%", "--rql", "8%"]) == 1
    assert len(capsys.readouterr().err.strip().splitlines()) == 1


def test_cli_check_chain_and_skip_lot(capsys):
    rc = main(["check", "--plan", "chain: n=15, i=2", "--aql", "1%", "--rql", "15%",
               "--lot-size", "500", "--json"])
    out = json.loads(capsys.readouterr().out)
    assert rc == 0 and out["scheme"] == "chain" and "aoql" in out and set(out["ati"]) == {"aql", "rql"}
    rc = main(["check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "8%",
               "--skip-lot", "i=4,f=0.25", "--json"])
    out = json.loads(capsys.readouterr().out)
    sk = out["skip_lot"]
    want = SkipLotPlan(reference=SinglePlan(n=80, c=2), i=4, f=0.25)
    assert sk["pa_aql"] == pytest.approx(want.pa(0.01, "binomial", Scope()), rel=1e-14)
    assert sk["fraction_inspected_aql"] == pytest.approx(
        want.fraction_inspected(0.01, "binomial", Scope()), rel=1e-14)


@pytest.mark.parametrize("argv, word", [
    (["check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "8%", "--skip-lot", "i=0,f=0.2"],
     "--skip-lot"),
    (["check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "8%", "--skip-lot", "i=4,f=1.5"],
     "--skip-lot"),
    (["check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "8%", "--skip-lot", "i=4"],
     "--skip-lot"),
    (["check", "--plan", "chain: n=20", "--aql", "1%", "--rql", "8%"], "--plan"),
    (["design", "--scheme", "chain", "--aql", "1%", "--rql", "8%", "--c", "1"], "--c"),
    (["design", "--scheme", "triple", "--aql", "1%", "--rql", "8%"], "--scheme"),
])
def test_cli_bad_input(argv, word, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and word in err[0]


@pytest.mark.parametrize("n, i, N, D", [(15, 2, 500, 28), (5, 1, 20, 3), (30, 4, 100, 1)])
def test_chain_finite_lot_aoq_against_mpmath(n, i, N, D):
    # mpmath, 30 digits, the definition: E[(D - X) 1{accept}] / N with
    # P(accept | X = 0) = 1, P(accept | X = 1) = P0^i (Dodge 1955); rel 1e-12.
    mp.mp.dps = 30
    h = lambda x: mp.binomial(D, x) * mp.binomial(N - D, n - x) / mp.binomial(N, n)  # noqa: E731
    want = (D * h(0) + (D - 1) * h(1) * h(0) ** i) / N
    got = R.aoq_count(ChainPlan(n=n, i=i), D, Scope(lot_size=N))
    assert got == pytest.approx(float(want), rel=1e-12)
