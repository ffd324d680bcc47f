"""Double and multiple plans: exact OC, ASN, curtailment, AOQ/ATI, decisions."""

from __future__ import annotations

import itertools
import re

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from lotwise.families.double import DoublePlan, double_max_asn
from lotwise.families.multiple import MultiplePlan
from lotwise.core.search import maximise_over_levels
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.families.base import parse_plan
from lotwise.core.quantities import InputError

PROCESS = Scope()
PER_UNIT = Scope(per_unit=True)


# --- published examples --------------------------------------------------------

# Montgomery, Introduction to Statistical Quality Control, double-sampling
# example (from memory): n1 = 50, c1 = 1, n2 = 100, c2 = 3, binomial, p = 0.05.
# Published to 4 decimals (ASN to 2), so the tolerance is half a unit there.
def test_montgomery_double_example():
    plan = DoublePlan(n1=50, c1=1, n2=100, c2=3)
    first, second = plan.pa_stages(0.05, "binomial", PROCESS)
    assert first == pytest.approx(0.2794, abs=5e-5)
    assert second == pytest.approx(0.0110, abs=5e-5)
    assert plan.pa(0.05, "binomial", PROCESS) == pytest.approx(0.2904, abs=5e-5)
    assert plan.asn(0.05, "binomial", PROCESS) == pytest.approx(98.10, abs=5e-3)


# NIST/SEMATECH e-Handbook of Statistical Methods, section 6.2.4 (double
# sampling, table of the Army Chemical Corps, Poisson): p*n1 at Pa = 0.95 and
# 0.10. Published to 2 decimals. The exact value at Pa = 0.10 for c1 = 2,
# c2 = 4 is 5.3847 (mpmath agrees, see below), which the handbook prints as
# 5.39; so that row allows 0.006 and the others half a unit in the last digit.
@pytest.mark.parametrize("ratio, c1, c2, pa, pn1, tol", [
    (1, 2, 4, 0.95, 1.16, 0.005),
    (1, 2, 4, 0.10, 5.39, 0.006),
    (2, 1, 4, 0.95, 0.77, 0.005),
])
def test_nist_double_poisson_table(ratio, c1, c2, pa, pn1, tol):
    n1 = 1000  # under the Poisson model Pa depends on p * n1 only
    plan = DoublePlan(n1=n1, c1=c1, n2=ratio * n1, c2=c2)
    p = plan.quality_at(pa, "poisson", PER_UNIT, "x")
    assert p * n1 == pytest.approx(pn1, abs=tol)


def test_nist_row_disagreement_is_rounding():
    # mpmath (reference library): solve the same Poisson double-sampling OC
    # equation to 30 digits; p*n1 at Pa = 0.10 is 5.3847..., not 5.39.
    mp.mp.dps = 30

    def pa(lam):
        P = lambda k: mp.e ** -lam * lam ** k / mp.factorial(k)  # noqa: E731
        F = lambda c: mp.fsum(P(k) for k in range(c + 1))  # noqa: E731
        return F(2) + P(3) * F(1) + P(4) * F(0)

    root = mp.findroot(lambda lam: pa(lam) - mp.mpf("0.1"), 5.4)
    assert float(root) == pytest.approx(5.38472, abs=1e-5)
    plan = DoublePlan(n1=1000, c1=2, n2=1000, c2=4)
    assert 1000 * plan.quality_at(0.10, "poisson", PER_UNIT, "x") == pytest.approx(
        float(root), rel=1e-9)


# --- exact sums with mpmath ---------------------------------------------------------

def _mp_hyper(k, n, N, D):
    if k < 0 or k > n or k > D or n - k > N - D:
        return mp.mpf(0)
    return mp.binomial(D, k) * mp.binomial(N - D, n - k) / mp.binomial(N, n)


def _mp_double_hyper(n1, c1, r1, n2, c2, N, D):
    pa = mp.fsum(_mp_hyper(k, n1, N, D) for k in range(c1 + 1))
    asn = mp.mpf(n1)
    for d1 in range(c1 + 1, r1):
        f = _mp_hyper(d1, n1, N, D)
        pa += f * mp.fsum(_mp_hyper(k, n2, N - n1, D - d1) for k in range(c2 - d1 + 1))
        asn += n2 * f
    return pa, asn


# Reference: mpmath exact binomial-coefficient sums (30 digits); tolerance
# 1e-12 relative (double precision kernels).
@pytest.mark.parametrize("n1, c1, r1, n2, c2, N, D", [
    (50, 1, 4, 100, 3, 1000, 50),
    (50, 1, 4, 100, 3, 200, 20),
    (20, 0, 3, 40, 2, 60, 5),
    (80, 2, 5, 80, 6, 100_000, 1500),
    (13, 0, 2, 26, 1, 40, 1),
    (30, 1, 3, 30, 4, 61, 30),
])
def test_hypergeometric_double_against_mpmath(n1, c1, r1, n2, c2, N, D):
    mp.mp.dps = 30
    plan = DoublePlan(n1=n1, c1=c1, r1=r1, n2=n2, c2=c2)
    scope = Scope(lot_size=N)
    pa, asn = _mp_double_hyper(n1, c1, r1, n2, c2, N, D)
    assert plan.pa_count(D, scope) == pytest.approx(float(pa), rel=1e-12, abs=1e-300)
    assert plan.asn(D / N, "hypergeometric", scope) == pytest.approx(float(asn), rel=1e-12)
    # the stage recursion of a two-stage multiple plan gives the same
    multi = MultiplePlan(n=(n1, n2), c=(c1, c2), r=(r1, c2 + 1))
    assert multi.pa_count(D, scope) == pytest.approx(float(pa), rel=1e-12, abs=1e-300)


# Reference: mpmath nested binomial sums of a three-stage plan (cumulative
# counts), 30 digits; tolerance 1e-12 relative.
@pytest.mark.parametrize("p", [0.005, 0.03, 0.08, 0.2])
def test_three_stage_binomial_against_mpmath(p):
    mp.mp.dps = 30
    n, c, r = (20, 20, 20), (None, 1, 3), (2, 3, 4)
    pm = mp.mpf(p)
    b = lambda k, m: mp.binomial(m, k) * pm ** k * (1 - pm) ** (m - k) if 0 <= k <= m else 0  # noqa: E731
    pa = mp.mpf(0)
    asn = mp.mpf(20)
    for d1 in range(0, 2):  # stage 1 cannot accept; continue on d1 < 2
        f1 = b(d1, 20)
        asn += 20 * f1
        for s2 in range(d1, 21 + d1):
            f2 = f1 * b(s2 - d1, 20)
            if s2 <= 1:
                pa += f2
            elif s2 < 3:
                asn += 20 * f2
                pa += f2 * mp.fsum(b(k, 20) for k in range(0, 3 - s2 + 1))
    plan = MultiplePlan(n=n, c=c, r=r)
    assert plan.pa(p, "binomial", PROCESS) == pytest.approx(float(pa), rel=1e-12)
    assert plan.asn(p, "binomial", PROCESS) == pytest.approx(float(asn), rel=1e-12)


# --- curtailment -----------------------------------------------------------------

def _stop(seq, sizes, acc, rej, stages="all", accept=True):
    """Decision and units inspected for one 0/1 sequence, curtailed as
    documented (written independently of the library's dynamic program)."""
    k = len(sizes)
    m = 0
    d = 0
    for i, n in enumerate(sizes):
        end = m + n
        curtail = stages == "all" or i == k - 1
        # At the start of a stage (a boundary): accepted without inspecting it
        # when even an all-nonconforming stage keeps the count within acc[i].
        if curtail and accept and acc[i] >= 0 and d + n <= acc[i]:
            return "accept", m
        for u in range(m, end):
            d += seq[u]
            left = end - (u + 1)
            if u + 1 == end:
                break
            if curtail and d >= rej[i]:
                return "reject", u + 1
            if curtail and accept and acc[i] >= 0 and d + left <= acc[i]:
                return "accept", u + 1
        m = end
        if d <= acc[i]:
            return "accept", m
        if d >= rej[i]:
            return "reject", m
    raise AssertionError("the last stage must decide")


def _brute_binomial(plan, p, **kw):
    total = plan.n_max
    pa = asn = 0.0
    for seq in itertools.product((0, 1), repeat=total):
        w = p ** sum(seq) * (1 - p) ** (total - sum(seq))
        dec, used = _stop(seq, plan.sizes, plan.acc, plan.rej, **kw)
        pa += w * (dec == "accept")
        asn += w * used
    return pa, asn


def _brute_hyper(plan, N, D, **kw):
    total = plan.n_max
    pa = asn = 0.0
    combos = list(itertools.combinations(range(N), D))
    for pos in combos:
        seq = [0] * N
        for j in pos:
            seq[j] = 1
        dec, used = _stop(seq[:total], plan.sizes, plan.acc, plan.rej, **kw)
        pa += dec == "accept"
        asn += used
    return pa / len(combos), asn / len(combos)


PLANS_SMALL = [
    DoublePlan(n1=4, c1=0, n2=6, c2=2),
    DoublePlan(n1=5, c1=1, r1=3, n2=5, c2=3),
    MultiplePlan(n=(3, 3, 4), c=(None, 1, 2), r=(2, 3, 3)),
    # Acceptance certain at a stage boundary: a short last stage whose
    # acceptance number covers it whole, and c1 = n1 (certain before any unit).
    DoublePlan(n1=8, c1=0, r1=3, n2=1, c2=2),
    MultiplePlan(n=(6, 2, 2), c=(None, 3, 4), r=(3, 5, 5)),
    DoublePlan(n1=3, c1=3, r1=5, n2=2, c2=4),
]


# Reference: brute-force enumeration of every unit sequence (at most 2^10 of
# them) with the stopping rules applied unit by unit; tolerance 1e-12.
@pytest.mark.parametrize("plan", PLANS_SMALL, ids=lambda p: p.label)
@pytest.mark.parametrize("kw", [{}, {"stages": "last"}, {"accept": False},
                                {"stages": "last", "accept": False}], ids=str)
@pytest.mark.parametrize("p", [0.07, 0.3])
def test_curtailed_asn_binomial_brute_force(plan, kw, p):
    pa, asn = _brute_binomial(plan, p, **kw)
    assert plan.asn_curtailed(p, "binomial", PROCESS, **kw) == pytest.approx(asn, abs=1e-12)
    assert plan.pa_curtailed(p, "binomial", PROCESS, **kw) == pytest.approx(pa, abs=1e-12)
    assert plan.pa(p, "binomial", PROCESS) == pytest.approx(pa, abs=1e-12)


# Reference: enumeration of all C(N, D) placements of the nonconforming items
# in the inspection order (each equally likely); tolerance 1e-12.
@pytest.mark.parametrize("plan", PLANS_SMALL, ids=lambda p: p.label)
@pytest.mark.parametrize("N, D", [(12, 3), (14, 5), (10, 1)])
def test_curtailed_asn_hypergeometric_brute_force(plan, N, D):
    scope = Scope(lot_size=N)
    pa, asn = _brute_hyper(plan, N, D)
    assert plan.asn_curtailed(D / N, "hypergeometric", scope) == pytest.approx(asn, abs=1e-12)
    assert plan.pa_count(D, scope) == pytest.approx(pa, abs=1e-12)


def _rule_asn(sizes, acc, rej, p):
    """Curtailed ASN by carrying the probability of each (units, count)
    state unit by unit under the same stage rule as :func:`_stop` (an
    enumeration of states, for plans too long for every sequence)."""
    states, asn, start = {0: 1.0}, 0.0, 0
    for i, n in enumerate(sizes):
        end = start + n
        for m in range(start, end + 1):
            nxt = {}
            for d, w in states.items():
                stop = (m == end and (d <= acc[i] or d >= rej[i])) or d >= rej[i] \
                    or (acc[i] >= 0 and d + end - m <= acc[i])
                if stop:
                    asn += w * m
                elif m < end:
                    nxt[d] = nxt.get(d, 0.0) + w * (1 - p)
                    nxt[d + 1] = nxt.get(d + 1, 0.0) + w * p
                else:
                    nxt[d] = nxt.get(d, 0.0) + w
            states = nxt
        start = end
    assert not states
    return asn


@pytest.mark.parametrize("text,asn", [
    ("n1=20,c1=0,r1=3,n2=1,c2=2", 19.8118), ("n1=30,c1=1,r1=4,n2=2,c2=4", 29.5157),
    ("multiple: n=10/2/2; c=-/3/4; r=3/5/5", 10.0568), ("n1=3,c1=3,r1=5,n2=2,c2=4", 0.0),
])
def test_curtailed_asn_accepts_at_stage_boundary(text, asn):
    # Reference: enumeration of (units, count) states under the stage rule
    # (_rule_asn, written here); 1e-12, and the 4-decimal values of the
    # request, 5e-5. A lot whose count is within the next stage's acceptance
    # number even if that whole stage were nonconforming is accepted at the
    # boundary (ASN 0 when c1 >= n1).
    plan = parse_plan(text)
    got = plan.asn_curtailed(0.05, "binomial", PROCESS)
    assert got == pytest.approx(_rule_asn(plan.sizes, plan.acc, plan.rej, 0.05), abs=1e-12)
    assert got == pytest.approx(asn, abs=5e-5)


def test_full_asn_hypergeometric_brute_force():
    # Reference: enumeration as above with no curtailment at all (every
    # stage inspected in full); tolerance 1e-12.
    plan = DoublePlan(n1=4, c1=0, n2=6, c2=2)
    N, D = 12, 3
    combos = list(itertools.combinations(range(N), D))
    asn = 0.0
    for pos in combos:
        d1 = sum(1 for j in pos if j < 4)
        asn += 4 + (6 if 0 < d1 <= 2 else 0)
    assert plan.asn(D / N, "hypergeometric", Scope(lot_size=N)) == pytest.approx(
        asn / len(combos), abs=1e-12)


# Montgomery, section 15.3 (from memory): ASN of a double plan curtailed on
# rejection in the second sample only,
#   ASN = n1 + sum_{j=c1+1}^{c2} P(n1, j) [n2 P_L(n2, c2 - j)
#                                          + (c2 - j + 1)/p * P_M(n2 + 1, c2 - j + 2)],
# where P_M is read as "at least c2 - j + 2 in n2 + 1 units" (derived from
# t C(t-1, k-1) = k C(t, k)). Evaluated with mpmath; tolerance 1e-10.
@pytest.mark.parametrize("p", [0.01, 0.05, 0.1])
def test_semicurtailed_against_textbook_formula(p):
    mp.mp.dps = 30
    n1, c1, n2, c2 = 50, 1, 100, 3
    pm = mp.mpf(p)
    b = lambda k, m: mp.binomial(m, k) * pm ** k * (1 - pm) ** (m - k)  # noqa: E731
    F = lambda c, m: mp.fsum(b(k, m) for k in range(0, c + 1))  # noqa: E731
    asn = mp.mpf(n1)
    for j in range(c1 + 1, c2 + 1):
        k = c2 - j + 1
        asn += b(j, n1) * (n2 * F(c2 - j, n2) + k / pm * (1 - F(k, n2 + 1)))
    plan = DoublePlan(n1=n1, c1=c1, n2=n2, c2=c2)
    got = plan.asn_curtailed(p, "binomial", PROCESS, stages="last", accept=False)
    assert got == pytest.approx(float(asn), rel=1e-10)


# --- AOQ and ATI ------------------------------------------------------------------

# Montgomery, section 15.3 (from memory): under rectifying inspection
# AOQ = p [Pa1 (N - n1) + Pa2 (N - n1 - n2)] / N and
# ATI = n1 Pa1 + (n1 + n2) Pa2 + N (1 - Pa). Tolerance 1e-12 relative.
@pytest.mark.parametrize("p", [0.0, 0.01, 0.03, 0.08])
def test_aoq_ati_binomial_textbook(p):
    plan = DoublePlan(n1=50, c1=1, n2=100, c2=3)
    N = 5000
    scope = Scope(lot_size=N)
    a1, a2 = plan.pa_stages(p, "binomial", scope)
    assert plan.aoq(p, "binomial", scope) == pytest.approx(
        p * (a1 * (N - 50) + a2 * (N - 150)) / N, rel=1e-12, abs=1e-15)
    assert plan.ati(p, "binomial", scope) == pytest.approx(
        50 * a1 + 150 * a2 + N * (1 - a1 - a2), rel=1e-12)


def test_aoq_hypergeometric_against_enumeration():
    # Reference: enumeration of all placements (each equally likely): the
    # nonconforming items left in accepted lots are D minus those found;
    # tolerance 1e-12.
    plan = DoublePlan(n1=4, c1=0, n2=6, c2=2)
    N, D = 14, 3
    scope = Scope(lot_size=N)
    combos = list(itertools.combinations(range(N), D))
    left = 0.0
    for pos in combos:
        d1 = sum(1 for j in pos if j < 4)
        d12 = sum(1 for j in pos if j < 10)
        if d1 <= 0:
            left += D - d1
        elif d1 <= 2 and d12 <= 2:
            left += D - d12
    assert plan.aoq(D / N, "hypergeometric", scope) == pytest.approx(
        left / len(combos) / N, abs=1e-12)


# --- properties (hypothesis) ---------------------------------------------------------

@st.composite
def double_plans(draw, allow_n2_zero=True):
    n1 = draw(st.integers(1, 60))
    c1 = draw(st.integers(0, min(5, n1)))
    c2 = draw(st.integers(c1, c1 + 6))
    r1 = draw(st.integers(c1 + 1, c2 + 1))
    n2 = draw(st.integers(0 if allow_n2_zero else 1, 80))
    return DoublePlan(n1=n1, c1=c1, r1=r1, n2=n2, c2=c2)


MODELS = st.sampled_from(["binomial", "poisson", "hypergeometric"])


def _scope_for(model, plan, extra):
    if model == "hypergeometric":
        return Scope(lot_size=plan.n_max + extra)
    return PROCESS


# Property: a double plan with n2 = 0 and r1 = c2 + 1 is the single
# plan (n1, c2). Tolerance 1e-12.
@settings(max_examples=40, deadline=None)
@given(n1=st.integers(1, 200), c=st.integers(0, 8), c1=st.integers(0, 8),
       p=st.floats(0, 0.6), model=MODELS, extra=st.integers(0, 300))
def test_n2_zero_equals_single(n1, c, c1, p, model, extra):
    c1 = min(c1, c, n1)
    c2 = c
    if c2 > n1:
        c2 = n1
        c1 = min(c1, c2)
    double = DoublePlan(n1=n1, c1=c1, n2=0, c2=c2)
    single = SinglePlan(n=n1, c=c2)
    scope = _scope_for(model, double, extra)
    assert double.pa(p, model, scope) == pytest.approx(single.pa(p, model, scope), abs=1e-12)
    assert double.asn(p, model, scope) == pytest.approx(n1, abs=1e-12)


# Property: curtailed ASN <= full ASN, with the same Pa.
@settings(max_examples=40, deadline=None)
@given(plan=double_plans(), p=st.floats(0, 0.6), model=MODELS, extra=st.integers(0, 100),
       stages=st.sampled_from(["all", "last"]), accept=st.booleans())
def test_curtailed_not_above_full(plan, p, model, extra, stages, accept):
    scope = _scope_for(model, plan, extra)
    full = plan.asn(p, model, scope)
    cur = plan.asn_curtailed(p, model, scope, stages=stages, accept=accept)
    assert cur <= full + 1e-9
    assert plan.pa_curtailed(p, model, scope, stages=stages, accept=accept) == pytest.approx(
        plan.pa(p, model, scope), abs=1e-10)


# Property: the stage-wise recursion for k = 2 equals the
# double-plan formula. Tolerance 1e-12.
@settings(max_examples=40, deadline=None)
@given(plan=double_plans(allow_n2_zero=False), p=st.floats(0, 0.6), model=MODELS,
       extra=st.integers(0, 100))
def test_multiple_k2_equals_double(plan, p, model, extra):
    if plan.r1 < plan.c1 + 2:  # no second stage: not a two-stage multiple plan
        return
    multi = MultiplePlan(n=(plan.n1, plan.n2), c=(plan.c1, plan.c2), r=(plan.r1, plan.c2 + 1))
    scope = _scope_for(model, plan, extra)
    assert multi.pa(p, model, scope) == pytest.approx(plan.pa(p, model, scope), abs=1e-12)
    assert multi.asn(p, model, scope) == pytest.approx(plan.asn(p, model, scope), rel=1e-12)


# Property: Pa falls as quality worsens (the designers and the quality-level
# inversion rely on it).
@settings(max_examples=25, deadline=None)
@given(plan=double_plans(), model=st.sampled_from(["binomial", "poisson"]))
def test_pa_falls_in_p(plan, model):
    ps = np.linspace(0, 0.5, 60)
    pa = plan.pa(ps, model, PROCESS)
    assert np.all(np.diff(pa) <= 1e-12)


# --- the closed-form largest ASN ----------------------------------------------------

# Reference: a brute-force grid (300,001 points, or every whole count D)
# over the OC curve; tolerance 1e-7 relative.
@pytest.mark.parametrize("model, lot", [("binomial", None), ("poisson", None),
                                         ("hypergeometric", 1000), ("hypergeometric", 180)])
@pytest.mark.parametrize("plan", [DoublePlan(n1=50, c1=1, n2=100, c2=3),
                                  DoublePlan(n1=20, c1=0, r1=3, n2=40, c2=4),
                                  DoublePlan(n1=8, c1=2, n2=30, c2=9)], ids=lambda p: p.label)
def test_double_max_asn_closed_form(plan, model, lot):
    scope = Scope(lot_size=lot)
    got, at = double_max_asn(plan.n1, plan.c1, plan.r1, plan.n2, model, lot)
    if model == "hypergeometric":
        ds = np.arange(0, lot + 1)
        grid = plan.asn(ds / lot, model, scope)
    else:
        grid = plan.asn(np.linspace(0, 1, 300_001), model, scope)
    assert got == pytest.approx(float(np.max(grid)), rel=1e-7)
    assert plan.max_asn(model, scope)[0] == pytest.approx(got, rel=1e-12)


def test_generic_max_asn_on_multiple_plan():
    # Reference: brute-force grid of 200,001 points; tolerance 1e-6 relative.
    plan = MultiplePlan(n=(20, 20, 20), c=(None, 1, 3), r=(2, 3, 4))
    grid = plan.asn(np.linspace(0, 0.5, 200_001), "binomial", PROCESS)
    assert maximise_over_levels(plan.asn, plan, "binomial", PROCESS)[0] == pytest.approx(float(grid.max()), rel=1e-6)


# The generic search (grid, one zoom, then the vertex of interpolating polynomials)
# against the closed form of the double plan's largest ASN, which is itself checked
# against brute-force grids above. The plan n1 = n2 = 20, c1 = 0, r1 = 2, c2 = 1 has
# ASN = 20 + 20 * 20 p (1 - p)^19, whose maximum is at p = 1/20 exactly (calculus:
# d/dp [p (1 - p)^19] = 0 at p = 1/20; common practice, no source needed beyond that).
# Tolerances: value 1e-12 relative, level 1e-9 relative.
@pytest.mark.parametrize("model", ["binomial", "poisson"])
@pytest.mark.parametrize("plan", [DoublePlan(n1=20, c1=0, r1=2, n2=20, c2=1),
                                  DoublePlan(n1=50, c1=1, n2=100, c2=3),
                                  DoublePlan(n1=20, c1=0, r1=3, n2=40, c2=4),
                                  DoublePlan(n1=400, c1=3, r1=9, n2=800, c2=14)],
                         ids=lambda p: p.label)
def test_generic_max_asn_agrees_with_closed_form(plan, model):
    want, want_at = double_max_asn(plan.n1, plan.c1, plan.r1, plan.n2, model)
    got, at = maximise_over_levels(plan.asn, plan, model, PROCESS)
    assert got == pytest.approx(float(want), rel=1e-12)
    assert at == pytest.approx(float(want_at), rel=1e-9)
    if plan.n1 == 20 and plan.r1 == 2 and model == "binomial":
        assert at == pytest.approx(1 / 20, rel=1e-12)
        assert got == pytest.approx(20 + 400 / 20 * (19 / 20) ** 19, rel=1e-13)


def _mp_double_pa(plan, p):
    """Pa of a double plan under the binomial model, in mpmath (60 digits)."""
    with mp.workdps(60):
        p = mp.mpf(p)
        b = lambda k, n: mp.binomial(n, k) * p**k * (1 - p)**(n - k)  # noqa: E731
        pa = mp.fsum(b(k, plan.n1) for k in range(plan.c1 + 1))
        for d1 in range(plan.c1 + 1, plan.r1):
            pa += b(d1, plan.n1) * mp.fsum(b(k, plan.n2) for k in range(plan.c2 - d1 + 1))
        return pa


# Quality levels of a plan without a closed-form inverse (the generic inversion:
# 256-fold grid passes, then the crossing on interpolating polynomials) against
# mpmath's root finder on the double plan's Pa summed in 60-digit arithmetic
# (mpmath 1.3, findroot). Tolerance 1e-12 relative.
@pytest.mark.parametrize("prob", [0.999, 0.95, 0.5, 0.10, 0.001])
@pytest.mark.parametrize("plan", [DoublePlan(n1=50, c1=1, n2=100, c2=3),
                                  DoublePlan(n1=400, c1=3, r1=9, n2=800, c2=14)],
                         ids=lambda p: p.label)
def test_generic_quality_level_against_mpmath(plan, prob):
    got = plan.quality_at(prob, "binomial", PROCESS)
    with mp.workdps(60):
        want = mp.findroot(lambda p: _mp_double_pa(plan, p) - prob, mp.mpf(got),
                           tol=mp.mpf(10) ** -40)
    assert got == pytest.approx(float(want), rel=1e-12)


class _KinkedPa:
    """A falling Pa with a kink at p = 0.3 (slope -1 below it, -3 above it):
    the interpolating polynomials disagree across the kink, so the inversion
    must narrow the grid instead."""

    @staticmethod
    def pa(p, model, scope):
        p = np.asarray(p, dtype=float)
        return np.where(p < 0.3, 1.0 - p, 0.7 - 3.0 * (p - 0.3)).clip(0.0, 1.0)


# Reference: the inverse of the piecewise-linear function by hand (0.7 - 3 (p - 0.3)
# = 0.55 at p = 0.35; 1 - p = 0.8 at p = 0.2). Tolerance 1e-13 relative.
@pytest.mark.parametrize("prob, want", [(0.55, 0.35), (0.8, 0.2), (0.7, 0.3)])
def test_inversion_of_a_kinked_pa(prob, want):
    from lotwise.core.search import invert_levels

    assert invert_levels(_KinkedPa(), [prob], "binomial", PROCESS)[0] == pytest.approx(
        want, rel=1e-13)


# --- notation and validation --------------------------------------------------------

@pytest.mark.parametrize("text, expected", [
    ("n1=50,c1=1,r1=4,n2=100,c2=3", DoublePlan(n1=50, c1=1, n2=100, c2=3)),
    ("n1=50, c1=1, n2=100, c2=3", DoublePlan(n1=50, c1=1, n2=100, c2=3)),
    ("double: n1=50,c1=0,r1=3,n2=50,c2=3", DoublePlan(n1=50, c1=0, r1=3, n2=50, c2=3)),
    ("multiple: n=20/20/20; c=-/1/3; r=2/3/4", MultiplePlan(n=(20, 20, 20), c=(None, 1, 3),
                                                            r=(2, 3, 4))),
    ("multiple: n=20 20 20; c=# 1 3; r=2 3", MultiplePlan(n=(20, 20, 20), c=(None, 1, 3),
                                                          r=(2, 3, 4))),
    ("n1=10,c1=-,r1=2,n2=10,c2=1,r2=3,n3=10,c3=2",
     MultiplePlan(n=(10, 10, 10), c=(None, 1, 2), r=(2, 3, 3))),
])
def test_notation(text, expected):
    plan = parse_plan(text)
    assert plan == expected
    assert parse_plan(plan.notation()) == plan


@pytest.mark.parametrize("text, words", [
    ("n1=50,c1=1,n2=100", "lacks c2"),
    ("n1=50,c1=4,n2=100,c2=3", "c2 (3) must not be smaller than c1 (4)"),
    ("n1=50,c1=1,r1=7,n2=100,c2=3", "r1 (7) must not be greater than c2 + 1 (4)"),
    ("n1=50,c1=1,n2=100,c2=3,r2=5", "r2 (5) must be c2 + 1 (4)"),
    ("n1=50,c1=1,n2=100,c2=3,k=1", "unknown key 'k'"),
    ("multiple: n=20/20/20; c=-/1/3", "lacks r1"),
    ("multiple: n=20/20/20; c=-/1/-; r=2/3/4", "c (stage 3)"),
    ("multiple: n=20/20/20; c=0/1/3; r=1/3/4", "r1 (1) must be at least c1 + 2 (2)"),
    ("double: n1=5,c1=0,n2=5,c2=1,n3=5,c3=2", "a double plan has 2 stages"),
    ("n1=5,c1=0,n3=5,c3=1", "lacks stage 2"),
])
def test_notation_errors(text, words):
    with pytest.raises(InputError, match=re.escape(words)):
        parse_plan(text)


# --- decisions on the bench ---------------------------------------------------------

# The plan rule itself, no external source needed beyond
# the definition: accept d1 <= c1, reject d1 >= r1, else a second sample.
@pytest.mark.parametrize("n, d, action, more", [
    (0, 0, "continue", 50),
    (30, 0, "continue", 20),
    (30, 4, "reject", 0),      # curtailed: 4 >= r1 already
    (49, 0, "accept", 0),      # curtailed: even one more leaves d1 <= c1
    (50, 1, "accept", 0),
    (50, 2, "continue", 100),
    (50, 3, "continue", 100),
    (50, 4, "reject", 0),
    (60, 0, "accept", 0),      # accepted at stage 1 already
    (100, 4, "reject", 0),     # curtailed in the second sample
    (149, 3, "continue", 1),
    (150, 3, "accept", 0),
    (150, 4, "reject", 0),
])
def test_double_decisions(n, d, action, more):
    dec = DoublePlan(n1=50, c1=1, n2=100, c2=3).decide(n, d)
    assert dec.action == action
    if action == "continue":
        assert dec.more_to_next == more


def test_decision_empty_second_sample():
    plan = DoublePlan(n1=50, c1=1, n2=0, c2=3)
    assert plan.decide(50, 2).action == "accept"
    assert plan.decide(50, 4).action == "reject"


def test_decision_defects_no_early_acceptance():
    # With nonconformities per unit one unit can carry several, so a count
    # within c1 is not yet an acceptance before the stage ends.
    plan = DoublePlan(n1=50, c1=1, n2=100, c2=3)
    assert plan.decide(49, 0, per_unit=True).action == "continue"
    assert plan.decide(10, 12, per_unit=True).action == "reject"


def test_multiple_decisions():
    plan = MultiplePlan(n=(20, 20, 20), c=(None, 1, 3), r=(2, 3, 4))
    assert plan.decide(20, 0).action == "continue"      # stage 1 cannot accept
    assert plan.decide(20, 2).action == "reject"
    assert plan.decide(40, 1).action == "accept"
    assert plan.decide(40, 2).action == "continue"
    assert plan.decide(45, 4).action == "reject"        # curtailed: 4 >= r3
    assert plan.decide(60, 3).action == "accept"


def test_single_decisions():
    plan = SinglePlan(n=80, c=2)
    assert plan.decide(10, 3).action == "reject"
    assert plan.decide(78, 0).action == "accept"
    assert plan.decide(78, 1).action == "continue"
    assert plan.decide(80, 2).action == "accept"


@pytest.mark.parametrize("n, d, words", [
    (151, 0, "must not be greater than the plan's largest sample"),
    (10, 11, "must not be greater than --inspected"),
])
def test_decision_errors(n, d, words):
    with pytest.raises(InputError, match=words):
        DoublePlan(n1=50, c1=1, n2=100, c2=3).decide(n, d)
