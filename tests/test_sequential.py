"""Item-by-item sequential plans: Wald's lines, Wald's OC/ASN, the exact
truncated dynamic program, decisions on the bench."""

from __future__ import annotations

import itertools
import math
import re

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from lotwise.core.types import Scope
from lotwise.families.base import parse_plan
from lotwise.core.quantities import InputError
from lotwise.families.sequential import SequentialPlan, sprt_lines, wald_asn, wald_pa

PROCESS = Scope()


# Montgomery, Introduction to Statistical Quality Control, sequential
# sampling example (from memory): p1 = 0.01, alpha = 0.05, p2 = 0.06,
# beta = 0.10 gives h1 = 1.22, h2 = 1.57, s = 0.0281 (published to the
# digits shown; tolerance half a unit in the last digit).
def test_montgomery_sequential_lines():
    h1, h2, s = sprt_lines(0.01, 0.05, 0.06, 0.10)
    assert h1 == pytest.approx(1.22, abs=0.005)
    assert h2 == pytest.approx(1.57, abs=0.005)
    assert s == pytest.approx(0.0281, abs=0.00005)


def test_lines_do_not_depend_on_log_base():
    # Fact of the trade: h and s are ratios of logarithms, so the
    # base cancels; recompute with base-10 logarithms. Tolerance 1e-12.
    p1, a, p2, b = 0.01, 0.05, 0.06, 0.10
    k = math.log10(p2 * (1 - p1) / (p1 * (1 - p2)))
    ref = (math.log10((1 - a) / b) / k, math.log10((1 - b) / a) / k,
           math.log10((1 - p1) / (1 - p2)) / k)
    assert sprt_lines(p1, a, p2, b) == pytest.approx(ref, rel=1e-12)


# Montgomery (from memory), the same example: acceptance is impossible before
# the acceptance line reaches 0, at n = h1 / s = 43.4, so the first possible
# acceptance is after 44 conforming units; the rejection number at n = 2 is 2.
def test_acceptance_impossible_before_line_reaches_zero():
    h1, h2, s = sprt_lines(0.01, 0.05, 0.06, 0.10)
    plan = SequentialPlan(h1=h1, h2=h2, s=s, truncate=300)
    ns, a, r = plan.numbers()
    first = int(ns[np.argmax(a >= 0)])
    assert first == math.ceil(h1 / s) == 44 == plan.first_acceptance
    assert np.all(a[ns < h1 / s] < 0)
    assert plan.rejection_number(1) == 2 and plan.rejection_number(2) == 2
    # the numbers are the floor and ceiling of the lines (the plan's definition)
    m = ns[:-1]
    assert np.array_equal(a[:-1], np.floor(s * m - h1))
    assert np.array_equal(r[:-1], np.ceil(s * m + h2))


def test_truncation_rule():
    # Our documented rule: at the truncation point accept on a count at most
    # the midpoint line s n0 + (h2 - h1) / 2.
    plan = SequentialPlan(h1=1.2211, h2=1.5678, s=0.028111, truncate=200)
    mid = 0.028111 * 200 + (1.5678 - 1.2211) / 2
    assert plan.acceptance_number(200) == math.floor(mid) == 5
    assert plan.rejection_number(200) == 6
    assert plan.decide(200, 5).action == "accept"
    assert plan.decide(200, 6).action == "reject"


# --- Wald's formulas ----------------------------------------------------------------

# Wald, Sequential Analysis (1947), ch. 3 (from memory): the approximate OC
# passes through (p1, 1 - alpha) and (p2, beta), and Pa(s) = h2 / (h1 + h2);
# ASN(0) = h1 / s and ASN(s) = h1 h2 / (s (1 - s)). Tolerance 1e-9.
@pytest.mark.parametrize("p1, a, p2, b", [(0.01, 0.05, 0.06, 0.10), (0.005, 0.01, 0.03, 0.05),
                                          (0.05, 0.10, 0.20, 0.20)])
def test_wald_formulas_at_known_points(p1, a, p2, b):
    h1, h2, s = sprt_lines(p1, a, p2, b)
    assert wald_pa(p1, h1, h2, s) == pytest.approx(1 - a, abs=1e-9)
    assert wald_pa(p2, h1, h2, s) == pytest.approx(b, abs=1e-9)
    assert wald_pa(s, h1, h2, s) == pytest.approx(h2 / (h1 + h2), abs=1e-9)
    assert wald_asn(0.0, h1, h2, s) == pytest.approx(h1 / s, rel=1e-9)
    assert wald_asn(s, h1, h2, s) == pytest.approx(h1 * h2 / (s * (1 - s)), rel=1e-9)
    # ASN is continuous through p = s (the formula's 0/0 point)
    assert wald_asn(s * (1 + 1e-5), h1, h2, s) == pytest.approx(h1 * h2 / (s * (1 - s)),
                                                                rel=1e-3)


def test_wald_poisson_lines():
    # Wald (1947), the Poisson case (from memory): for nonconformities per
    # unit the OC passes through (l1, 1 - alpha) and (l2, beta).
    h1, h2, s = sprt_lines(0.02, 0.05, 0.08, 0.10, per_unit=True)
    assert s == pytest.approx((0.08 - 0.02) / math.log(4), rel=1e-12)
    assert wald_pa(0.02, h1, h2, s, per_unit=True) == pytest.approx(0.95, abs=1e-9)
    assert wald_pa(0.08, h1, h2, s, per_unit=True) == pytest.approx(0.10, abs=1e-9)
    assert wald_asn(s, h1, h2, s, per_unit=True) == pytest.approx(h1 * h2 / s, rel=1e-9)


def simulate(p, h1, h2, s, runs, seed, block=1024):
    """Seeded simulation of the untruncated SPRT for 0/1 items: returns the
    decisions, the units inspected and the final position d - s n."""
    rng = np.random.default_rng(seed)
    n_used = np.zeros(runs, dtype=np.int64)
    acc = np.zeros(runs, dtype=bool)
    pos = np.zeros(runs)
    alive = np.arange(runs)
    d = np.zeros(runs, dtype=np.int64)
    n0 = 0
    while alive.size:
        x = rng.random((alive.size, block)) < p
        cum = d[alive, None] + np.cumsum(x, axis=1)
        ns = n0 + np.arange(1, block + 1)
        a = cum <= s * ns - h1 + 1e-9
        r = cum >= s * ns + h2 - 1e-9
        hit = a | r
        done = hit.any(axis=1)
        first = np.argmax(hit, axis=1)
        idx = alive[done]
        n_used[idx] = ns[first[done]]
        acc[idx] = a[done, first[done]]
        pos[idx] = cum[done, first[done]] - s * ns[first[done]]
        d[alive] = cum[:, -1]
        alive = alive[~done]
        n0 += block
    return acc, n_used, pos


H1, H2, S = sprt_lines(0.01, 0.05, 0.06, 0.10)
RUNS = 20_000


@pytest.fixture(scope="module")
def sims():
    return {p: simulate(p, H1, H2, S, RUNS, seed=20240 + i)
            for i, p in enumerate((0.01, S, 0.06, 0.12))}


# Reference: seeded simulation of the untruncated test (20,000 runs per
# level). The exact DP truncated at 5,000 units (beyond which no lot of
# these levels survives to 1e-15) must agree within 4 standard errors.
@pytest.mark.parametrize("p", [0.01, S, 0.06, 0.12])
def test_exact_dp_against_simulation(sims, p):
    acc, n, _ = sims[p]
    plan = SequentialPlan(h1=H1, h2=H2, s=S, truncate=5000)
    pa, asn = plan.oc_asn(p, "binomial", PROCESS)
    se_pa = math.sqrt(max(pa * (1 - pa), 1e-12) / RUNS)
    assert abs(acc.mean() - pa) <= 4 * se_pa
    assert abs(n.mean() - asn) <= 4 * n.std() / math.sqrt(RUNS)


# Wald's equation E[d_N - s N] = (p - s) E[N] (Wald 1947, from memory), on
# the simulation: within 4 standard errors of the difference.
@pytest.mark.parametrize("p", [0.01, 0.06, 0.12])
def test_wald_equation_on_simulation(sims, p):
    _, n, pos = sims[p]
    diff = pos - (p - S) * n
    assert abs(diff.mean()) <= 4 * diff.std() / math.sqrt(RUNS)


# Wald's inequalities for the true risks (Wald 1947, sec. 3.2, from memory):
# alpha' <= alpha / (1 - beta), beta' <= beta / (1 - alpha), alpha' + beta'
# <= alpha + beta; checked on the simulation (4 standard errors of slack)
# and on the exact long-truncation DP.
def test_wald_risk_inequalities(sims):
    a_sim = 1 - sims[0.01][0].mean()
    b_sim = sims[0.06][0].mean()
    slack = 4 * math.sqrt(0.1 * 0.9 / RUNS)
    assert a_sim <= 0.05 / 0.90 + slack
    assert b_sim <= 0.10 / 0.95 + slack
    plan = SequentialPlan(h1=H1, h2=H2, s=S, truncate=5000)
    a_ex = 1 - plan.pa(0.01, "binomial", PROCESS)
    b_ex = plan.pa(0.06, "binomial", PROCESS)
    assert a_ex <= 0.05 / 0.90 and b_ex <= 0.10 / 0.95 and a_ex + b_ex <= 0.15


# Wald's approximate OC and ASN against the simulation. Wald neglects the
# overshoot of the lines, which for 0/1 items is up to one item at a
# rejection and up to s at an acceptance; for this plan that shifts Pa by
# at most 0.05 and makes the true ASN longer, by at most a third (tolerance
# from that bound, common practice, no source).
@pytest.mark.parametrize("p", [0.01, S, 0.06, 0.12])
def test_wald_approximations_against_simulation(sims, p):
    acc, n, _ = sims[p]
    assert abs(float(wald_pa(p, H1, H2, S)) - acc.mean()) <= 0.05
    w = float(wald_asn(p, H1, H2, S))
    assert 0.75 * n.mean() <= w <= n.mean() + 4 * n.std() / math.sqrt(RUNS)


# --- exact truncated DP against enumeration --------------------------------------

def _decide_path(seq, plan, curtailed=False, early_accept=True):
    """(accepted, units) for one sequence of per-unit counts, applying the
    documented rules directly (independent of the library's walk)."""
    n0 = plan.truncate
    top = math.floor(plan.s * n0 + (plan.h2 - plan.h1) / 2 + 1e-9)
    d = 0
    for m in range(1, n0 + 1):
        d += seq[m - 1]
        if m == n0:
            return d <= top, m
        if d <= plan.s * m - plan.h1 + 1e-9:
            return True, m
        if d >= plan.s * m + plan.h2 - 1e-9:
            return False, m
        if curtailed:
            if d > top:
                return False, m
            if early_accept and d + (n0 - m) <= top:
                return True, m
    raise AssertionError


SMALL = SequentialPlan(h1=0.8, h2=1.1, s=0.15, truncate=12)


# Reference: enumeration of all 2^12 unit sequences, each with its binomial
# weight; tolerance 1e-12.
@pytest.mark.parametrize("p", [0.02, 0.15, 0.4])
@pytest.mark.parametrize("curtailed", [False, True])
def test_truncated_dp_binomial_brute_force(p, curtailed):
    pa = asn = 0.0
    for seq in itertools.product((0, 1), repeat=SMALL.truncate):
        k = sum(seq)
        w = p ** k * (1 - p) ** (SMALL.truncate - k)
        ok, m = _decide_path(seq, SMALL, curtailed)
        pa += w * ok
        asn += w * m
    if curtailed:
        got_asn = SMALL.asn_curtailed(p, "binomial", PROCESS)
    else:
        got_asn = SMALL.asn(p, "binomial", PROCESS)
    assert SMALL.pa(p, "binomial", PROCESS) == pytest.approx(pa, abs=1e-12)
    assert got_asn == pytest.approx(asn, abs=1e-12)


# Reference: enumeration of every placement of D nonconforming items in a
# lot of 14 inspected in random order (C(14, D) placements, equally likely);
# tolerance 1e-12.
@pytest.mark.parametrize("D", [0, 2, 5, 9])
def test_truncated_dp_hypergeometric_brute_force(D):
    N = 14
    scope = Scope(lot_size=N)
    combos = list(itertools.combinations(range(N), D))
    pa = asn = left = 0.0
    for pos in combos:
        seq = [0] * N
        for j in pos:
            seq[j] = 1
        ok, m = _decide_path(seq, SMALL)
        pa += ok
        asn += m
        if ok:
            left += D - sum(seq[:m])
    k = len(combos)
    assert SMALL.pa_count(D, scope) == pytest.approx(pa / k, abs=1e-12)
    assert SMALL.asn(D / N, "hypergeometric", scope) == pytest.approx(asn / k, abs=1e-12)
    assert SMALL.aoq(D / N, "hypergeometric", scope) == pytest.approx(left / k / N, abs=1e-12)


# Reference: enumeration of per-unit Poisson counts 0..7 over a plan
# truncated at 6 (8^6 sequences; the mass above 7 per unit at 0.3 is below
# 1e-8), each weighted by its Poisson probability; tolerance 1e-7. Both ways
# of convolving one unit's count (the matrices of small walks, row by row for
# wide ones) are checked.
@pytest.mark.parametrize("toeplitz_cells", [None, 0])
@pytest.mark.parametrize("lam", [0.05, 0.3])
def test_truncated_dp_poisson_brute_force(lam, toeplitz_cells, monkeypatch):
    from lotwise.core import stages
    from lotwise.families import sequential

    if toeplitz_cells is not None:
        monkeypatch.setattr(stages, "TOEPLITZ_CELLS", toeplitz_cells)
    sequential.clear_cache()
    plan = SequentialPlan(h1=0.5, h2=0.9, s=0.3, truncate=6)
    scope = Scope(per_unit=True)
    f = [math.exp(-lam) * lam ** k / math.factorial(k) for k in range(8)]
    pa = asn = 0.0
    for seq in itertools.product(range(8), repeat=6):
        w = math.prod(f[k] for k in seq)
        ok, m = _decide_path(seq, plan)
        pa += w * ok
        asn += w * m
    assert plan.pa(lam, "poisson", scope) == pytest.approx(pa, abs=1e-7)
    assert plan.asn(lam, "poisson", scope) == pytest.approx(asn, abs=1e-6)


def test_curtailed_not_above_full_and_same_pa():
    # Property: curtailed ASN <= full ASN; the decisions are the same.
    plan = SequentialPlan(h1=H1, h2=H2, s=S, truncate=150)
    ps = np.linspace(0, 0.2, 41)
    for model, scope in (("binomial", PROCESS), ("poisson", PROCESS),
                         ("hypergeometric", Scope(lot_size=400))):
        full = plan.asn(ps, model, scope)
        cur = plan.asn_curtailed(ps, model, scope)
        assert np.all(cur <= full + 1e-9)
        assert np.any(cur < full - 1e-6)
        res = plan._walk(ps, model, scope, "nearest", curtailed=True)
        assert np.allclose(res.pa, plan.pa(ps, model, scope), atol=1e-12)


def test_pa_falls_in_p_and_truncation_converges():
    # Pa falls as quality worsens; a long truncation reproduces the
    # untruncated test (checked against the simulation above), a short one
    # caps the ASN at the truncation point.
    plan = SequentialPlan(h1=H1, h2=H2, s=S, truncate=400)
    ps = np.linspace(0, 0.3, 200)
    pa, asn = plan.oc_asn(ps, "binomial", PROCESS)
    assert np.all(np.diff(pa) <= 1e-12)
    assert np.all(asn <= 400 + 1e-9)
    short = SequentialPlan(h1=H1, h2=H2, s=S, truncate=50)
    assert np.all(short.asn(ps, "binomial", PROCESS) <= 50 + 1e-9)


# --- decisions, notation ----------------------------------------------------------

def test_sequential_decisions():
    plan = SequentialPlan(h1=H1, h2=H2, s=S, truncate=300)
    dec = plan.decide(10, 0)
    assert dec.action == "continue" and dec.more_at_most == 290
    assert "acceptance is possible after 34 more conforming unit(s)" in dec.reason
    assert plan.decide(44, 0).action == "accept"
    assert plan.decide(2, 2).action == "reject"
    assert plan.decide(80, 3).action == "continue"
    assert plan.decide(80, 4).action == "reject"
    assert plan.decide(80, 1).action == "accept"


def test_sequential_notation():
    plan = parse_plan("sequential: h1=1.22,h2=1.57,s=0.0281,truncate=300")
    assert (plan.h1, plan.h2, plan.s, plan.truncate) == (1.22, 1.57, 0.0281, 300)
    assert parse_plan("h1=1.22,h2=1.57,s=0.0281,truncate=300") == plan
    assert parse_plan(plan.notation()) == plan
    from_risks = parse_plan("sequential: p1=1%,alpha=5%,p2=6%,beta=10%,truncate=300")
    assert (from_risks.h1, from_risks.h2, from_risks.s) == pytest.approx((H1, H2, S))


@pytest.mark.parametrize("text, words", [
    ("sequential: h1=1,h2=1,s=0.03", "lacks truncate"),
    ("sequential: h1=1,h2=1,truncate=9", "lacks s"),
    ("sequential: h1=0,h2=1,s=0.03,truncate=9", "h1 (0) must be a positive number"),
    ("sequential: h1=1,h2=1,s=0.03,p1=1%,truncate=9", "either h1, h2, s or p1"),
    ("sequential: p1=5%,p2=1%,truncate=9", "must be above p1"),
    ("sequential: h1=1,h2=1,s=0.03,truncate=9,z=1", "unknown key 'z'"),
])
def test_sequential_notation_errors(text, words):
    with pytest.raises(InputError, match=re.escape(words)):
        parse_plan(text)


# --- nonconformities per unit, plans that never accept, designs that keep
#     their promise ------------------------------------------------------------

def _poisson_lines(l1, a, l2, b):
    """Wald's SPRT lines for a Poisson count per unit (Wald, Sequential
    Analysis, Wiley 1947, ch. 5): k = ln(l2/l1), s = (l2 - l1)/k."""
    k = math.log(l2 / l1)
    return math.log((1 - a) / b) / k, math.log((1 - b) / a) / k, (l2 - l1) / k


def test_risk_notation_takes_the_scope():
    # Reference: the Poisson lines by hand (Wald 1947, ch. 5): p1 = 0.05,
    # p2 = 0.2 per unit gives h1 1.623964, h2 2.084963, s 0.108202 (1e-6),
    # not the binomial 1.44485, 1.85501, 0.110292.
    ref = _poisson_lines(0.05, 0.05, 0.2, 0.10)
    assert ref == pytest.approx((1.623964, 2.084963, 0.108202), abs=1e-6)
    plan = parse_plan("sequential: p1=0.05,p2=0.2,truncate=40")
    assert (plan.h1, plan.h2, plan.s) == pytest.approx((1.44485, 1.85501, 0.110292), abs=1e-5)
    per_unit = plan.for_scope(Scope(per_unit=True))
    assert (per_unit.h1, per_unit.h2, per_unit.s) == pytest.approx(ref, rel=1e-12)
    assert plan.for_scope(PROCESS) == plan
    said = parse_plan("sequential: p1=0.05,p2=0.2,per_unit=1,truncate=40")
    assert said == per_unit and parse_plan(said.notation()) == said
    with pytest.raises(InputError, match="per_unit=1"):
        said.check_scope(PROCESS)
    with pytest.raises(InputError, match="add per_unit=1"):
        parse_plan("sequential: p1=0.5,p2=2,truncate=40")


def test_risk_notation_per_unit_on_the_command_line(capsys):
    # Reference: as above; check --per-unit reports the Poisson lines.
    import json

    from lotwise.cli import main

    code = main(["check", "--plan", "sequential: p1=0.05,p2=0.2,truncate=40", "--per-unit",
                 "--aql", "0.05", "--rql", "0.2", "--json"])
    rep = json.loads(capsys.readouterr().out)
    assert code in (0, 1)
    assert (rep["h1"], rep["h2"], rep["s"]) == pytest.approx(
        _poisson_lines(0.05, 0.05, 0.2, 0.10), rel=1e-12)
    code = main(["check", "--plan", "sequential: p1=0.05,p2=0.2,per_unit=1,truncate=40",
                 "--aql", "5%", "--rql", "20%"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1 and "per_unit" in err


def test_plan_that_never_accepts(capsys):
    # Reference: the midpoint line at truncation s n0 + (h2 - h1)/2 computed by
    # hand from Wald's lines is negative, so no count is ever accepted: Pa is
    # exactly 0 and the report says so first.
    import json

    from lotwise.cli import main

    text = "sequential: p1=0.00132,p2=0.00323,alpha=0.0802,beta=0.0187,truncate=257"
    plan = parse_plan(text)
    p1, a, p2, b = 0.00132, 0.0802, 0.00323, 0.0187
    k = math.log(p2 * (1 - p1) / (p1 * (1 - p2)))
    h1, h2 = math.log((1 - a) / b) / k, math.log((1 - b) / a) / k
    s = math.log((1 - p1) / (1 - p2)) / k
    assert s * 257 + (h2 - h1) / 2 < 0
    assert plan.never_accepts
    assert np.all(plan.pa(np.array([0.0, 1e-6, 0.001, 0.1]), "binomial", PROCESS) == 0.0)
    assert plan.asn_curtailed(0.001, "binomial", PROCESS) == 0.0
    main(["check", "--plan", text, "--aql", "0.132%", "--rql", "0.323%", "--json"])
    rep = json.loads(capsys.readouterr().out)
    assert rep["never_accepts"] is True
    assert rep["statements"][0].startswith("This plan never accepts a lot")
    assert not parse_plan("sequential: p1=1%,p2=6%,truncate=300").never_accepts


def _dp_pa(h1, h2, s, n0, p):
    """Exact Pa of the truncated plan (items), written here: counts carried
    unit by unit in a dict, accept on d <= floor(s n - h1), reject on
    d >= ceil(h2 + s n), at n0 accept on d <= floor(s n0 + (h2 - h1)/2)."""
    state, acc = {0: 1.0}, 0.0
    for n in range(1, n0 + 1):
        new = {}
        for d, w in state.items():
            new[d] = new.get(d, 0.0) + w * (1 - p)
            new[d + 1] = new.get(d + 1, 0.0) + w * p
        if n < n0:
            a, r = math.floor(s * n - h1 + 1e-9), math.ceil(h2 + s * n - 1e-9)
        else:
            a = math.floor(s * n0 + (h2 - h1) / 2 + 1e-9)
            r = a + 1
        state = {}
        for d, w in new.items():
            if d <= a:
                acc += w
            elif d < r:
                state[d] = w
    return acc


@settings(max_examples=25, deadline=None)
@given(aql=st.floats(0.005, 0.05), ratio=st.floats(2.5, 6.0), alpha=st.floats(0.02, 0.2),
       beta=st.floats(0.02, 0.2))
def test_designed_plan_meets_both_risks(aql, ratio, alpha, beta):
    # Reference: the exact truncated Pa from _dp_pa (written here, not the
    # library's dynamic program); the design either meets both risks or says
    # it cannot (Infeasible). Tolerance 1e-9.
    from lotwise.core.quantities import Infeasible
    from lotwise.families.sequential import design_sequential

    rql = min(aql * ratio, 0.4)
    try:
        d = design_sequential(aql=aql, rql=rql, alpha=alpha, beta=beta)
    except Infeasible:
        return
    pl = d.plan
    assert 1 - _dp_pa(pl.h1, pl.h2, pl.s, pl.truncate, aql) <= alpha + 1e-9
    assert _dp_pa(pl.h1, pl.h2, pl.s, pl.truncate, rql) <= beta + 1e-9
    assert d.exact["meets"]


def test_design_reports_wald_lines_apart():
    # Reference: Wald's lines by hand (Wald 1947, ch. 5) for AQL 1 %, RQL 5 %;
    # the exact truncated plan with them misses a risk, so the design raises
    # the intercepts: its own h1, h2 differ from Wald's, which stay in 'wald'
    # with Wald's approximate OC there; the plan meets both risks (_dp_pa).
    from lotwise.families.sequential import design_sequential

    d = design_sequential(aql=0.01, rql=0.05)
    k = math.log(0.05 * 0.99 / (0.01 * 0.95))
    wald = (math.log(0.95 / 0.10) / k, math.log(0.90 / 0.05) / k, math.log(0.99 / 0.95) / k)
    assert (d.wald["h1"], d.wald["h2"], d.wald["s"]) == pytest.approx(wald, rel=1e-12)
    assert d.wald["lines_used"] is False and d.plan.s == pytest.approx(wald[2], rel=1e-12)
    assert d.plan.h1 >= wald[0] and d.plan.h2 >= wald[1]
    assert (d.plan.h1, d.plan.h2) != pytest.approx(wald[:2])
    assert d.wald["pa_aql"] == pytest.approx(0.95, abs=1e-9)  # Wald's OC at his own lines
    pl = d.plan
    assert 1 - _dp_pa(pl.h1, pl.h2, pl.s, pl.truncate, 0.01) <= 0.05 + 1e-9
    assert _dp_pa(pl.h1, pl.h2, pl.s, pl.truncate, 0.05) <= 0.10 + 1e-9
    rep = d.report_extra()
    assert (rep["h1"], rep["h2"], rep["s"], rep["truncate"]) == (pl.h1, pl.h2, pl.s,
                                                                  pl.truncate)


@pytest.mark.parametrize("model,xs", [("binomial", [0.0015, 0.002, 0.0026]),
                                      ("poisson", [0.001, 0.002, 0.004])])
def test_blocked_pa_equals_unit_walk(model, xs):
    # Reference: the unit-by-unit dynamic program (lotwise.core.stages.unit_walk)
    # for a plan truncated at 6,000 units; 1e-12 absolute.
    from lotwise.families.sequential import pa_blocked

    plan = SequentialPlan(h1=4.2, h2=3.3, s=0.002, truncate=6000)
    scope = Scope(per_unit=model == "poisson")
    ref = plan.pa(np.array(xs), model, scope)
    assert pa_blocked(plan, xs, model) == pytest.approx(ref, abs=1e-12)
