"""Whole counts in finite lots: a plan's own quality levels (producer,
indifference, consumer) are counts D of the lot, each stated with its true Pa,
and the OC table and plot of a finite lot show the count every row is taken as.

References (independent of the code under test, which sums its own
hypergeometric tails with scipy.special and never calls scipy.stats):

* scipy.stats.hypergeom -- the hypergeometric law of the sample count;
* the Pa of double sampling (the second sample drawn from the rest of the lot)
  and of ChSP-1 (Pa = P0 + P1 P0^i) and SkSP-2 (Pa = (f P + (1 - f) P^i) /
  (f + (1 - f) P^i)) as given by E. G. Schilling and D. V. Neubauer, 2nd ed.,
  CRC Press, 2009 (chapters on double, chain and skip-lot plans; formulas
  from memory), evaluated here with scipy.stats.hypergeom;
* a brute-force scan over every count D = 0..N (no search) for the
  definitions of the three counts.
Tolerance: 1e-10 absolute on probabilities (floating-point summation only).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy.stats import hypergeom

from lotwise.analysis.assess import assess, oc_table
from lotwise.core.types import TOL, Scope, Targets
from lotwise.families.base import parse_plan

TOL_PA = 1e-10


def hyper_cdf(c, N, D, n):
    """P(X <= c), X the count in a sample of n from N items holding D (scipy.stats)."""
    if c < 0:
        return 0.0
    return float(hypergeom.cdf(c, N, D, n))


def ref_single(n, c, N, D):
    return hyper_cdf(c, N, D, n)


def ref_double(n1, c1, r1, n2, c2, N, D):
    """Accept on x1 <= c1; reject on x1 >= r1; otherwise a second sample of n2
    from the N - n1 items left, holding D - x1, and accept on x1 + x2 <= c2."""
    pa = hyper_cdf(c1, N, D, n1)
    for x1 in range(c1 + 1, r1):
        px1 = float(hypergeom.pmf(x1, N, D, n1))
        if px1:
            pa += px1 * hyper_cdf(c2 - x1, N - n1, D - x1, n2)
    return pa


def ref_chain(n, i, N, D):
    p0 = float(hypergeom.pmf(0, N, D, n))
    p1 = float(hypergeom.pmf(1, N, D, n))
    return p0 + p1 * p0**i


def ref_skip(n, c, i, f, N, D):
    p = ref_single(n, c, N, D)
    return (f * p + (1 - f) * p**i) / (f + (1 - f) * p**i)


def brute_counts(pa_of, N, alpha, beta):
    """The three counts by scanning every D (definitions, no search)."""
    pas = np.array([pa_of(d) for d in range(N + 1)])
    producer = max([d for d in range(N + 1) if pas[d] >= 1 - alpha - TOL], default=0)
    consumer = min([d for d in range(N + 1) if pas[d] <= beta + TOL], default=N)
    lo = max([d for d in range(N + 1) if pas[d] >= 0.5 - TOL], default=-1)
    pair = [d for d in (lo, lo + 1) if 0 <= d <= N]
    indiff = min(pair, key=lambda d: (abs(pas[d] - 0.5), d))
    return {"producer": producer, "indifference": indiff, "consumer": consumer}, pas


# The user's own case: lot of 150, n = 129, c = 2 (scipy.stats.hypergeom:
# Pa(2) = 1, Pa(3) = 0.36604, Pa(4) = 0.09434).
def test_lot_150_n129_c2_counts_and_true_pa():
    N = 150
    rep = assess(parse_plan("n=129,c=2"), Targets(aql=0.01, rql=0.025), Scope(lot_size=N)).to_json()
    assert rep["plan_quality_counts"] == {"producer": 2, "indifference": 3, "consumer": 4}
    for side, d in rep["plan_quality_counts"].items():
        assert rep["plan_quality"][side] == d / N
        assert abs(rep["plan_quality_pa"][side] - ref_single(129, 2, N, d)) < TOL_PA
    assert abs(ref_single(129, 2, N, 2) - 1.0) < TOL_PA
    assert round(ref_single(129, 2, N, 3), 5) == 0.36604
    assert round(ref_single(129, 2, N, 4), 5) == 0.09434
    text = " ".join(rep["statements"])
    assert "lots holding 2 of 150 nonconforming (1.33 %) are accepted 100 % of the time" in text
    assert "lots holding 3 of 150 nonconforming (2.00 %) are accepted 36.6 % of the time" in text
    assert "lots holding 4 of 150 nonconforming (2.67 %) are accepted 9.43 % of the time" in text
    assert "95.0 % of the time." not in text  # no invented level "accepted 95.0 %"
    json.dumps(rep)  # plain JSON types


# Every attribute family through the plan interface, with an independent Pa.
FAMILIES = [
    # (notation, lot size, reference Pa(D))
    ("n=50,c=1", 400, lambda N, D: ref_single(50, 1, N, D)),
    ("n1=30,c1=0,r1=3,n2=30,c2=3", 300, lambda N, D: ref_double(30, 0, 3, 30, 3, N, D)),
    ("chain: n=20,i=3", 250, lambda N, D: ref_chain(20, 3, N, D)),
    ("skiplot: n=40,c=1,i=4,f=0.25", 500, lambda N, D: ref_skip(40, 1, 4, 0.25, N, D)),
    ("multiple: n=20/20/20; c=-/1/3; r=2/3/4", 300, None),
    ("sequential: h1=1.2,h2=1.6,s=0.03,truncate=90", 400, None),
]


@pytest.mark.parametrize("notation,N,ref", FAMILIES, ids=[f[0] for f in FAMILIES])
def test_every_attribute_family_states_whole_counts(notation, N, ref):
    plan = parse_plan(notation)
    scope = Scope(lot_size=N)
    t = Targets(aql=0.01, rql=0.08)
    rep = assess(plan, t, scope).to_json()
    counts = rep["plan_quality_counts"]
    assert all(isinstance(v, int) for v in counts.values())
    want, pas = brute_counts(lambda d: float(plan.pa_count(d, scope)), N, t.alpha, t.beta)
    assert counts == want
    for side, d in counts.items():
        assert rep["plan_quality"][side] == d / N
        assert abs(rep["plan_quality_pa"][side] - pas[d]) < TOL_PA
        if ref is not None:
            assert abs(pas[d] - ref(N, d)) < TOL_PA, (side, d)
    assert f"of {N} nonconforming" in " ".join(rep["statements"])


@pytest.mark.parametrize("scope,model", [(Scope(), None), (Scope(lot_size=500), "binomial"),
                                         (Scope(per_unit=True), None)])
def test_counts_absent_without_a_finite_lot_model(scope, model):
    rep = assess(parse_plan("n=50,c=1"), Targets(aql=0.01, rql=0.08), scope, model).to_json()
    assert "plan_quality_counts" not in rep and "plan_quality_pa" not in rep


def test_variables_plan_has_no_counts():
    rep = assess(parse_plan("variables: n=42,k=1.901,upper=25"), Targets(aql=0.01, rql=0.06),
                 Scope(lot_size=500)).to_json()
    assert "plan_quality_counts" not in rep


# Property: every stated count lies on the right side of its risk, and the next
# count out does not (the definition, checked with scipy.stats.hypergeom).
@settings(max_examples=60, deadline=None)
@given(N=st.integers(2, 600), frac=st.floats(0.01, 1.0), c=st.integers(0, 6),
       alpha=st.sampled_from([0.01, 0.05, 0.10]), beta=st.sampled_from([0.05, 0.10, 0.20]))
def test_counts_lie_on_the_right_side_of_their_risks(N, frac, c, alpha, beta):
    n = max(1, min(N, int(round(frac * N))))
    c = min(c, n)
    plan = parse_plan(f"n={n},c={c}")
    scope = Scope(lot_size=N)
    rep = assess(plan, Targets(aql=0.5 / N, rql=min(0.99, 0.5 / N + 0.3), alpha=alpha, beta=beta),
                 scope, verdict=False, rectifying=False).to_json()
    k = rep["plan_quality_counts"]
    pa = lambda d: ref_single(n, c, N, d)  # noqa: E731
    dp, dc = k["producer"], k["consumer"]
    assert pa(dp) >= 1 - alpha - TOL
    if dp < N:
        assert pa(dp + 1) < 1 - alpha + TOL
    if pa(dc) <= beta + TOL:
        if dc > 0:
            assert pa(dc - 1) > beta - TOL
    else:  # no count gets acceptance down to beta (c = n): the whole lot is stated
        assert dc == N and all(pa(d) > beta for d in range(N + 1))
    di = k["indifference"]
    gap = abs(pa(di) - 0.5)
    for d in (di - 1, di + 1):
        if 0 <= d <= N:
            assert gap <= abs(pa(d) - 0.5) + TOL


# OC table of a finite lot: the count every row is taken as, rounded as design
# rounds the targets (up at the AQL, down at the RQL), and Pa of that count.
def test_oc_table_rows_are_conservative_counts():
    N = 150
    plan, scope = parse_plan("n=129,c=2"), Scope(lot_size=N)
    ps = [0.01, 0.015, 0.02, 0.025, 0.03]
    header, rows = oc_table(plan, scope, "hypergeometric", ps, aql=0.01, rql=0.025)
    i_d, i_h = header.index("lot_count"), header.index("hypergeometric")
    d = [row[i_d] for row in rows]
    # 1 % of 150 = 1.5 -> up to 2 (AQL); 2.25 -> up to 3 (below the indifference
    # count 3); 3 -> 3; 3.75 -> down to 3 (RQL); 4.5 -> down to 4 (from 3 on)
    assert d == [2, 3, 3, 3, 4]
    for row, dd in zip(rows, d):
        assert abs(row[i_h] - ref_single(129, 2, N, dd)) < TOL_PA
    # the AQL and RQL rows equal the risks the check states
    rep = assess(plan, Targets(aql=0.01, rql=0.025), scope).to_json()
    assert rows[0][i_h] == rep["pa_aql"] and rows[3][i_h] == rep["pa_rql"]


def test_plot_legend_equals_table_values():
    from lotwise.documents.plots.style import oc_figure

    N = 150
    plan, scope = parse_plan("n=129,c=2"), Scope(lot_size=N)
    header, rows = oc_table(plan, scope, "hypergeometric", [0.01, 0.025], aql=0.01, rql=0.025)
    i_h = header.index("hypergeometric")
    fig = oc_figure([(plan, scope)], aql=0.01, rql=0.025)
    labels = fig.axes[0].get_legend_handles_labels()[1]
    assert f"AQL 1 % (D = 2 of 150): Pa {rows[0][i_h]:.3f}" in labels
    assert f"RQL 2.5 % (D = 3 of 150): Pa {rows[1][i_h]:.3f}" in labels


def test_oc_json_states_the_rounding_rule():
    from lotwise.analysis.outputs import attribute_oc

    out = attribute_oc(parse_plan("n=129,c=2"), Scope(lot_size=150), "hypergeometric",
                       np.array([0.01, 0.02]), aql=0.01, rql=0.025)
    assert "rounded up" in out["lot_count_rule"] and "indifference count 3" in out["lot_count_rule"]


# The wording of the finite-lot AOQ: the exact E[(D - X) 1{X <= c}]/N (summed
# here with scipy.stats.hypergeom) is never below the plug-in p Pa (N - n)/N,
# and for c = 0 it is N/(N - n) times it (C(N, n)/C(N - 1, n), algebra).
@pytest.mark.parametrize("n,c,N", [(20, 0, 100), (129, 0, 150), (129, 2, 150), (50, 1, 400),
                                   (13, 0, 500)])
def test_finite_lot_aoq_is_the_exact_expectation_and_not_below_the_plug_in(n, c, N):
    plan, scope = parse_plan(f"n={n},c={c}"), Scope(lot_size=N)
    for D in range(1, N + 1, max(1, N // 37)):
        x = np.arange(0, min(c, D) + 1)
        exact = float(np.sum((D - x) * hypergeom.pmf(x, N, D, n))) / N
        assert abs(float(plan.aoq_count(D, scope)) - exact) < TOL_PA
        plug_in = D / N * ref_single(n, c, N, D) * (N - n) / N
        assert exact >= plug_in - TOL_PA
        if c == 0 and plug_in > 1e-300:
            assert abs(exact / plug_in - N / (N - n)) < 1e-9 * N / (N - n)
