"""Two-risk single-plan designer and audit against published tables, worked
examples and brute force."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from lotwise.core import kernels as oc
from lotwise.analysis.approximation import poisson_verdict, rule_of_thumb
from lotwise.analysis.audit import audit_plan, quality_at
from lotwise.core.types import Targets
from lotwise.families.single import design_single, min_sample_size
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import InputError, Infeasible

# Cameron (1952) unity values for single sampling at alpha = 0.05, beta = 0.10:
# Poisson n*p at Pa = 0.95 and at Pa = 0.10 (from memory), +-0.002 for the
# table's rounding.
CAMERON = {0: (0.051, 2.303), 1: (0.355, 3.890), 2: (0.818, 5.322), 3: (1.366, 6.681),
           4: (1.970, 7.994), 5: (2.613, 9.275), 6: (3.286, 10.532), 7: (3.981, 11.771),
           8: (4.695, 12.995), 9: (5.426, 14.206), 10: (6.169, 15.407)}


@pytest.mark.parametrize("c,vals", sorted(CAMERON.items()))
def test_cameron_unity_values(c, vals):
    n = 1000
    plan = SinglePlan(n=n, c=c)
    scope = Scope()
    np95 = n * quality_at(plan, 0.95, "poisson", scope)
    np10 = n * quality_at(plan, 0.10, "poisson", scope, "consumer")
    assert np95 == pytest.approx(vals[0], abs=0.002)
    assert np10 == pytest.approx(vals[1], abs=0.002)


def test_montgomery_design_example():
    # Montgomery, Introduction to Statistical Quality Control (from memory):
    # the nomograph plan n = 89, c = 2 for AQL 1 %/alpha 5 %, RQL 6 %/beta 10 %
    # carries alpha about 6.0 %; the exact binomial designer gives n = 110, c = 3,
    # the Poisson designer n = 112, c = 3.
    t = Targets(aql=0.01, rql=0.06)
    nomograph = audit_plan(SinglePlan(n=89, c=2), t, Scope())
    assert nomograph.risks["binomial"].alpha == pytest.approx(0.060, abs=0.0005)
    assert not nomograph.risks["binomial"].meets_alpha
    d = design_single(aql=0.01, rql=0.06)
    assert (d.n, d.c, d.model) == (110, 3, "binomial")
    p = design_single(aql=0.01, rql=0.06, model="poisson")
    assert (p.n, p.c) == (112, 3)
    v = poisson_verdict(d.plan, t, Scope())
    assert (v.poisson_plan.n, v.poisson_plan.c) == (112, 3) and v.poisson_plan_meets


def test_chi_square_poisson_design():
    # Two-point design by the chi-square/Poisson table method (Schilling and Neubauer,
    # 2nd ed., CRC Press, 2009, ch. 5; from memory) for
    # p1 = 0.01, alpha = 0.05, p2 = 0.10, beta = 0.10 gives c = 2, n = 54;
    # operating ratios 44.89, 10.95, 6.51 for c = 0, 1, 2 (two decimals).
    d = design_single(aql=0.01, rql=0.10, model="poisson")
    assert (d.c, d.n) == (2, 54)
    for c, ratio in ((0, 44.89), (1, 10.95), (2, 6.51)):
        plan, s = SinglePlan(n=100, c=c), Scope()
        r = quality_at(plan, 0.10, "poisson", s, "consumer") / quality_at(plan, 0.95, "poisson", s)
        assert r == pytest.approx(ratio, abs=0.01)


def _exact_cdf(c, n, p):
    from fractions import Fraction
    from math import comb

    p = Fraction(p)
    return sum(comb(n, k) * p ** k * (1 - p) ** (n - k) for k in range(c + 1))


def test_exact_binomial_small_design():
    # Independent computation: exact rational binomial sums (math.comb, Fraction)
    # enumerating every n = 1..40 and c = 0..n find the smallest n (then c)
    # meeting AQL 2 %/alpha 10 %, RQL 15 %/beta 20 %: n = 19, c = 1; c = 0 cannot.
    from fractions import Fraction

    aql, rql, a, b = Fraction(2, 100), Fraction(15, 100), Fraction(1, 10), Fraction(2, 10)
    ref = next((n, c) for n in range(1, 41) for c in range(n + 1)
               if _exact_cdf(c, n, aql) >= 1 - a and _exact_cdf(c, n, rql) <= b)
    d = design_single(aql=0.02, rql=0.15, alpha=0.10, beta=0.20)
    assert (d.n, d.c) == ref == (19, 1)
    with pytest.raises(Infeasible):
        design_single(aql=0.02, rql=0.15, alpha=0.10, beta=0.20, c=0)


def test_tight_ppm_design():
    # AQL 0.1 %/alpha 5 %, RQL 0.15 %/beta 10 %, binomial (computed, no published source):
    # n = 42,399, c = 53. Verified here by the two risks and minimality in c.
    d = design_single(aql=0.001, rql=0.0015)
    assert (d.n, d.c) == (42_399, 53)
    assert oc.pa_binomial(42_399, 53, 0.001) >= 0.95
    assert oc.pa_binomial(42_399, 53, 0.0015) <= 0.10
    # Independent check with scipy.stats.binom: the plan meets both risks, and at
    # n = 42,398 the smallest c meeting alpha leaves beta above 10 % (a larger c
    # only raises beta), so no plan with one unit fewer exists.
    from scipy import stats

    assert stats.binom.cdf(53, 42_399, 0.001) >= 0.95
    assert stats.binom.cdf(53, 42_399, 0.0015) <= 0.10
    c_star = int(stats.binom.ppf(0.95, 42_398, 0.001))
    while stats.binom.cdf(c_star, 42_398, 0.001) < 0.95:
        c_star += 1
    assert stats.binom.cdf(c_star, 42_398, 0.0015) > 0.10
    assert oc.pa_binomial(42_398, 53, 0.0015) > 0.10  # one unit fewer fails beta


@pytest.mark.parametrize("c,confidence,reliability,n", [
    # Zero-acceptance confidence/reliability sizes (common practice, no source).
    (0, 0.95, 0.95, 59), (0, 0.90, 0.90, 22), (0, 0.95, 0.99, 299), (1, 0.95, 0.95, 93),
])
def test_confidence_reliability_sizes(c, confidence, reliability, n):
    assert min_sample_size(c=c, rql=1 - reliability, beta=1 - confidence) == n


def brute_force(t, model="binomial", lot=None, n_max=400):
    """Smallest n, then smallest c, meeting both risks, by walking every pair
    (each n's acceptance numbers evaluated at once)."""
    if model == "hypergeometric":
        d1 = oc.lot_count(t.aql, lot, "up")
        d2 = oc.lot_count(t.rql, lot, "down")
    for n in range(1, (lot or n_max) + 1):
        cs = np.arange(0, n + 1)
        if model == "hypergeometric":
            pa1, pa2 = oc.pa_hypergeometric(n, cs, lot, d1), oc.pa_hypergeometric(n, cs, lot, d2)
        else:
            pa1, pa2 = oc.pa_binomial(n, cs, t.aql), oc.pa_binomial(n, cs, t.rql)
        ok = (pa1 >= 1 - t.alpha) & (pa2 <= t.beta)
        if ok.any():
            return n, int(np.argmax(ok))
    return None


@settings(max_examples=25, deadline=None)
@given(aql=st.floats(0.01, 0.08), ratio=st.floats(3, 12), alpha=st.sampled_from([0.05, 0.10]),
       beta=st.sampled_from([0.05, 0.10, 0.20]))
def test_design_meets_targets_and_is_minimal(aql, ratio, alpha, beta):
    rql = min(aql * ratio, 0.6)
    t = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    d = design_single(aql=aql, rql=rql, alpha=alpha, beta=beta)
    a = audit_plan(d.plan, t, Scope())
    assert a.meets
    # Minimality: no smaller n meets both risks for any c (Pa rises in c, so
    # for each n it suffices to try the smallest c meeting alpha).
    for n in range(1, d.n):
        cs = np.arange(0, n + 1)
        ok = (oc.pa_binomial(n, cs, aql) >= 1 - alpha) & (oc.pa_binomial(n, cs, rql) <= beta)
        assert not ok.any(), (n, cs[ok])


@settings(max_examples=15, deadline=None)
@given(lot=st.integers(20, 300), aql=st.floats(0.005, 0.05), ratio=st.floats(3, 10))
def test_hypergeometric_design_matches_brute_force(lot, aql, ratio):
    rql = min(aql * ratio, 0.5)
    t = Targets(aql=aql, rql=rql)
    try:
        d = design_single(aql=aql, rql=rql, lot_size=lot)
    except Infeasible:
        assert brute_force(t, "hypergeometric", lot) is None
        return
    assert (d.n, d.c) == brute_force(t, "hypergeometric", lot)


@settings(max_examples=20, deadline=None)
@given(aql=st.floats(0.002, 0.05), ratio=st.floats(2, 10), lot=st.one_of(st.none(), st.integers(200, 10**6)))
def test_round_trip_fixed_n_and_fixed_c(aql, ratio, lot):
    # Like statsmodels' solve_power tests: solving for each unknown in turn
    # returns the other parameters.
    rql = min(aql * ratio, 0.5)
    try:
        d = design_single(aql=aql, rql=rql, lot_size=lot)
    except Infeasible:
        return
    if d.full_inspection:
        return
    assert design_single(aql=aql, rql=rql, lot_size=lot, c=d.c).n == d.n
    assert design_single(aql=aql, rql=rql, lot_size=lot, n=d.n).c == d.c
    assert design_single(aql=aql, rql=rql, lot_size=lot, max_n=d.n).plan == d.plan
    with pytest.raises(Infeasible):
        design_single(aql=aql, rql=rql, lot_size=lot, max_n=d.n - 1) if d.n > 1 else \
            (_ for _ in ()).throw(Infeasible("n = 1"))


def test_lot_rounding_conservative_and_reported():
    # AQL 1.5 % of 130 = 1.95 -> 2 (up); RQL 9 % of 130 = 11.7 -> 11 (down).
    d = design_single(aql=0.015, rql=0.09, lot_size=130)
    assert d.lot_counts == (2, 11)
    a = audit_plan(d.plan, d.targets, d.scope, model=d.model)
    r = a.risks["hypergeometric"]
    assert (r.count_aql, r.count_rql) == (2, 11)
    assert r.pa_aql == pytest.approx(oc.pa_hypergeometric(d.n, d.c, 130, 2), abs=0)


def test_small_lot_changes_the_answer():
    # The finite lot needs fewer units than the binomial (process) plan.
    b = design_single(aql=0.01, rql=0.08)
    h = design_single(aql=0.01, rql=0.08, lot_size=200)
    assert h.n < b.n


def test_full_inspection_when_sample_reaches_lot():
    # Lot of 12, AQL 5 % -> 1 item, RQL 20 % -> 2 items (down from 2.4): only
    # 100 % inspection tells one nonconforming item from two with these risks.
    d = design_single(aql=0.05, rql=0.20, alpha=0.01, beta=0.01, lot_size=12)
    assert d.full_inspection and d.n == 12 and d.c == 1


def test_lot_too_small_message():
    with pytest.raises(Infeasible, match="too small"):
        design_single(aql=0.01, rql=0.08, lot_size=10)  # RQL rounds down to 0 items


def test_cap_reports_best_reachable():
    with pytest.raises(Infeasible) as e:
        design_single(aql=0.01, rql=0.06, max_n=60)
    assert e.value.reachable["n"] == 60
    assert "n <= 60" in str(e.value)


@pytest.mark.parametrize("kw,exc,text", [
    (dict(aql=0.05, rql=0.01), Infeasible, "must be above the AQL"),
    (dict(aql=0.01, rql=0.05, alpha=0.6, beta=0.5), Infeasible, "below 100 %"),
    (dict(aql=0.01, rql=0.05, model="hypergeometric"), InputError, "needs a lot size"),
    (dict(aql=0.01, rql=0.05, n=10, c=1), InputError, "cannot both"),
    (dict(aql=0.01, rql=0.05, per_unit=True, model="binomial"), InputError, "Poisson model is exact"),
])
def test_design_rejects(kw, exc, text):
    with pytest.raises(exc, match=text):
        design_single(**kw)


def test_defects_per_unit_design_is_poisson():
    # Nonconformities per unit: the Poisson model is exact; levels may exceed 1.
    d = design_single(aql=0.5, rql=2.0, per_unit=True)
    assert d.model == "poisson"
    assert oc.pa_poisson(d.n, d.c, 0.5) >= 0.95 and oc.pa_poisson(d.n, d.c, 2.0) <= 0.10


def test_rule_of_thumb():
    # common practice, no source: n >= 50 and n p < 5
    assert rule_of_thumb(100, 0.01) and not rule_of_thumb(49, 0.01) and not rule_of_thumb(100, 0.05)


def test_poisson_verdict_poor_case():
    # Larger fractions and small samples: the Poisson plan demands more units
    # than the exact one and its curve departs visibly.
    t = Targets(aql=0.05, rql=0.30)
    d = design_single(aql=0.05, rql=0.30)
    v = poisson_verdict(d.plan, t, Scope())
    assert v.poisson_plan.n > d.n
    assert v.max_error > 0.02


# --- nonconformities per unit: c may exceed n ---------------------------------

def _brute_per_unit(aql, rql, alpha, beta, n_top=120, c_top=400):
    """Smallest n (then smallest c) with Poisson Pa(AQL) >= 1 - alpha and
    Pa(RQL) <= beta, by trying every (n, c) with scipy.stats.poisson."""
    from scipy.stats import poisson

    cs = np.arange(c_top + 1)
    for n in range(1, n_top + 1):
        ok = (poisson.cdf(cs, n * aql) >= 1 - alpha - 1e-12) & \
             (poisson.cdf(cs, n * rql) <= beta + 1e-12)
        if ok.any():
            return n, int(cs[np.argmax(ok)])
    raise AssertionError("no plan in the brute-force range")


PER_UNIT_CASES = [
    # (aql, rql, alpha, beta): levels in nonconformities per unit; several of
    # them are met only by an acceptance number above the sample size.
    (0.2, 3.0, 0.10, 0.25), (2.0, 10.0, 0.05, 0.10), (1.0, 4.0, 0.05, 0.10),
    (0.5, 2.0, 0.05, 0.10), (3.0, 6.0, 0.05, 0.10), (0.05, 0.4, 0.05, 0.10),
    (5.0, 12.0, 0.10, 0.10), (0.8, 1.5, 0.05, 0.20),
]


@pytest.mark.parametrize("aql,rql,alpha,beta", PER_UNIT_CASES)
def test_per_unit_design_is_smallest_by_brute_force(aql, rql, alpha, beta):
    # Reference: enumeration of every (n, c), n <= 120, c <= 400, with
    # scipy.stats.poisson (not what the designer calls); exact plan equality.
    d = design_single(aql=aql, rql=rql, alpha=alpha, beta=beta, per_unit=True)
    assert (d.n, d.c) == _brute_per_unit(aql, rql, alpha, beta)


def test_per_unit_small_plans_named():
    # Reference: scipy.stats.poisson by hand. n = 1, c = 1 meets AQL 0.2 /
    # RQL 3 per unit at 10 % / 25 % (Pa 0.982 / 0.199); n = 1, c = 5 meets
    # AQL 2 / RQL 10 at 5 % / 10 % (Pa 0.983 / 0.067); 1e-3 absolute.
    from scipy.stats import poisson

    d = design_single(aql=0.2, rql=3.0, alpha=0.10, beta=0.25, per_unit=True)
    assert (d.n, d.c) == (1, 1)
    assert poisson.cdf(1, 0.2) == pytest.approx(0.982, abs=1e-3)
    assert poisson.cdf(1, 3.0) == pytest.approx(0.199, abs=1e-3)
    d = design_single(aql=2.0, rql=10.0, per_unit=True)
    assert (d.n, d.c) == (1, 5)
    assert poisson.cdf(5, 2.0) == pytest.approx(0.983, abs=1e-3)
    assert poisson.cdf(5, 10.0) == pytest.approx(0.067, abs=1e-3)


@pytest.mark.parametrize("n", [1, 2, 3, 7])
def test_per_unit_fixed_n_smallest_c(n):
    # Reference: enumeration of c with scipy.stats.poisson: the smallest c with
    # Pa(AQL) >= 1 - alpha at the fixed n (here c may exceed n).
    from scipy.stats import poisson

    aql, rql = 2.0, 10.0
    d = design_single(aql=aql, rql=rql, per_unit=True, n=n)
    cs = np.arange(200)
    want = int(cs[np.argmax(poisson.cdf(cs, n * aql) >= 0.95 - 1e-12)])
    assert d.c == want and d.c > n


def test_c_above_n_only_for_nonconformities_per_unit():
    # Facts of the trade: a sample of n items cannot hold more than n
    # nonconforming ones, but n units may carry more than n nonconformities.
    plan = SinglePlan(n=1, c=5)
    plan.check_scope(Scope(per_unit=True))
    with pytest.raises(InputError, match=r"c \(5\) must not be greater than n \(1\)"):
        plan.check_scope(Scope())
