"""The double-plan designer: feasibility, optimality against brute force,
and the sequential designer's JSON numbers."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from lotwise.families.double import design_double
from lotwise.families.sequential import design_sequential
from lotwise.families.single import design_single
from lotwise.families.double import DoublePlan
from lotwise.core.types import Scope
from lotwise.core.quantities import InputError, Infeasible


def _brute(aql, rql, alpha, beta, ratio, model, lot=None, n1_max=200, c2_max=12,
           minimize="asn-aql"):
    """Every (n1, c1 < r1 <= c2 + 1, c1 < c2) plan in the box, evaluated with
    scipy.stats (a reference library our code does not call), and the best
    (objective, n1, c2, c1, r1) under the designer's tie order."""
    n1 = np.arange(1, n1_max + 1)
    n2 = np.floor(n1 * ratio + 0.5).astype(int)
    best = None
    grid = np.linspace(0, 0.5, 4001)
    for c2, c1, r1 in ((c2, c1, r1) for c2 in range(1, c2_max + 1) for c1 in range(0, c2)
                       for r1 in range(c1 + 1, c2 + 2)):
        if True:
            if lot is not None:
                ok_n = n1 + n2 <= lot
            else:
                ok_n = np.ones(n1.shape, bool)

            def parts(x):
                if model == "binomial":
                    f1 = lambda k: stats.binom.pmf(k, n1, x)  # noqa: E731
                    F1 = stats.binom.cdf(c1, n1, x)
                    F2 = lambda c, d: stats.binom.cdf(c, n2, x)  # noqa: E731
                elif model == "poisson":
                    f1 = lambda k: stats.poisson.pmf(k, n1 * x)  # noqa: E731
                    F1 = stats.poisson.cdf(c1, n1 * x)
                    F2 = lambda c, d: stats.poisson.cdf(c, n2 * x)  # noqa: E731
                else:
                    D = x
                    f1 = lambda k: stats.hypergeom.pmf(k, lot, D, n1)  # noqa: E731
                    F1 = stats.hypergeom.cdf(c1, lot, D, n1)
                    F2 = lambda c, d: stats.hypergeom.cdf(c, lot - n1, D - d, n2)  # noqa: E731
                pa = F1.copy()
                second = np.zeros(n1.shape)
                for d1 in range(c1 + 1, r1):
                    f = f1(d1)
                    second += f
                    pa += f * F2(c2 - d1, d1)
                return pa, second

            if model == "hypergeometric":
                xa, xr = int(np.ceil(aql * lot - 1e-9)), int(np.floor(rql * lot + 1e-9))
            else:
                xa, xr = aql, rql
            pa_a, sec = parts(xa)
            pa_r, _ = parts(xr)
            feas = ok_n & (pa_a >= 1 - alpha - 1e-12) & (pa_r <= beta + 1e-12)
            if not feas.any():
                continue
            obj = n1 + n2 * sec
            if minimize == "asn-max":
                m = [max(n1[i] + n2[i] * (stats.binom.cdf(r1 - 1, n1[i], grid)
                                          - stats.binom.cdf(c1, n1[i], grid)))
                     for i in np.flatnonzero(feas)]
                obj = np.full(n1.shape, np.inf)
                obj[np.flatnonzero(feas)] = m
            obj = np.where(feas, obj, np.inf)
            i = int(np.argmin(obj))
            cand = (float(obj[i]), int(n1[i]), c2, c1, r1)
            if best is None or cand[0] < best[0] * (1 - 1e-9) or (
                    cand[0] <= best[0] * (1 + 1e-9) and cand[1:] < best[1:]):
                best = cand
    return best


# Reference: exhaustive enumeration in a box (n1 <= 200, c2 <= 12, every
# c1 < r1 <= c2 + 1) with scipy.stats; the designer must find the same
# optimum (objective to 1e-9 relative, the same plan under the tie order) and
# its plan must meet both risks.
@pytest.mark.parametrize("aql, rql, ratio, model, lot", [
    (0.02, 0.10, 1.0, "binomial", None),
    (0.02, 0.10, 2.0, "binomial", None),
    (0.01, 0.06, 2.0, "binomial", None),
    (0.02, 0.12, 1.5, "poisson", None),
    (0.02, 0.10, 2.0, "hypergeometric", 400),
    (0.01, 0.08, 1.0, "hypergeometric", 150),
])
def test_designer_matches_brute_force(aql, rql, ratio, model, lot):
    d = design_double(aql=aql, rql=rql, ratio=ratio, model=model, lot_size=lot)
    ref = _brute(aql, rql, 0.05, 0.10, ratio, model, lot)
    assert d.objective == pytest.approx(ref[0], rel=1e-9)
    assert d.plan.n1 <= 200 and d.plan.c2 <= 12  # the optimum lies inside the box
    assert (d.plan.n1, d.plan.c2, d.plan.c1, d.plan.r1) == ref[1:]
    scope = Scope(lot_size=lot)
    r = d.plan
    if model == "hypergeometric":
        pa_a = r.pa_count(int(np.ceil(aql * lot - 1e-9)), scope)
        pa_r = r.pa_count(int(np.floor(rql * lot + 1e-9)), scope)
    else:
        pa_a, pa_r = r.pa(aql, model, scope), r.pa(rql, model, scope)
    assert pa_a >= 0.95 - 1e-12 and pa_r <= 0.10 + 1e-12


def test_designer_asn_max_matches_brute_force():
    # Reference: enumeration as above, the largest ASN taken on a 4,001-point
    # grid (so the reference can only be lower, by the grid error: 1e-4).
    d = design_double(aql=0.02, rql=0.10, ratio=1.0, minimize="asn-max")
    ref = _brute(0.02, 0.10, 0.05, 0.10, 1.0, "binomial", minimize="asn-max", n1_max=120,
                 c2_max=8)
    assert d.objective == pytest.approx(ref[0], rel=1e-4)
    assert d.objective >= ref[0] - 1e-9
    assert d.asn["max"] == pytest.approx(d.objective, rel=1e-12)


def test_double_beats_single_on_asn_at_aql():
    # Fact of the trade: a double plan reaches the same two
    # risk points with a smaller average sample at good quality.
    single = design_single(aql=0.01, rql=0.05)
    d = design_double(aql=0.01, rql=0.05)
    assert d.asn["aql"] < single.n


def test_designer_search_record():
    # The search starts from the single plan (n = 132, c = 3 at AQL 1 %/RQL 5 %,
    # design_single) and covers every n1 up to the best ASN (every plan
    # inspects at least n1 units).
    d = design_double(aql=0.01, rql=0.05)
    single = design_single(aql=0.01, rql=0.05)
    assert d.search["single_plan"] == {"n": single.n, "c": single.c} == {"n": 132, "c": 3}
    assert "above the best objective" in d.search["stopped"]
    assert d.search["n1"][1] >= int(d.objective)
    assert d.search["work"] <= d.search["budget"]
    assert d.plan.n2 == 2 * d.plan.n1


def test_designer_searches_r1():
    # Reference: scipy.stats.binom by hand for n1=80, c1=1, r1=3, n2=160,
    # c2=6 at AQL 1 % / RQL 5 %: Pa 0.9535 / 0.0975 (both risks met), ASN at
    # the AQL 103.09 (1e-2), below the 108.56 of the best plan with r1 = c2 + 1.
    d = design_double(aql=0.01, rql=0.05, ratio=2)
    assert d.plan.label == "n1=80, c1=1, r1=3, n2=160, c2=6"
    f = stats.binom.pmf(2, 80, 0.01)
    pa = stats.binom.cdf(1, 80, 0.01) + f * stats.binom.cdf(4, 160, 0.01)
    assert pa >= 0.95
    g = stats.binom.pmf(2, 80, 0.05)
    assert stats.binom.cdf(1, 80, 0.05) + g * stats.binom.cdf(4, 160, 0.05) <= 0.10
    assert d.asn["aql"] == pytest.approx(80 + 160 * f, rel=1e-12)
    assert d.asn["aql"] == pytest.approx(103.09, abs=1e-2)


@pytest.mark.parametrize("kw, err", [
    (dict(ratio=0), InputError), (dict(ratio=11), InputError),
    (dict(minimize="asn"), InputError), (dict(rql=0.005), Infeasible),
    (dict(lot_size=20), Infeasible), (dict(max_n=60, rql=0.03), Infeasible),
])
def test_designer_errors(kw, err):
    args = dict(aql=0.01, rql=0.05)
    args.update(kw)
    with pytest.raises(err):
        design_double(**args)


def test_full_lot_cap_respected():
    d = design_double(aql=0.01, rql=0.05, lot_size=200)
    assert d.plan.n_max <= 200


# --- sequential designer --------------------------------------------------------------

def test_sequential_design_numbers():
    # Montgomery (from memory) lines; truncation defaults to three times the
    # single plan's n (our documented choice).
    d = design_sequential(aql=0.01, rql=0.06)
    single = design_single(aql=0.01, rql=0.06)
    assert d.plan.truncate == 3 * single.n
    assert d.plan.h1 == pytest.approx(1.2211, abs=1e-4)
    assert d.wald["pa_aql"] == pytest.approx(0.95, abs=1e-9)
    assert d.wald["pa_rql"] == pytest.approx(0.10, abs=1e-9)
    # exact numbers are those of the plan's own dynamic program
    pa, asn = d.plan.oc_asn([0.01, 0.06], "binomial", Scope())
    assert d.exact["pa_aql"] == pa[0] and d.exact["asn_rql"] == asn[1]
    nums = d.numbers()
    assert nums["accept"][:43] == [None] * 43 and nums["accept"][43] == 0
    assert nums["reject"][0] is None and nums["reject"][1] == 2


def test_sequential_design_lot_cap():
    d = design_sequential(aql=0.01, rql=0.06, lot_size=200)
    assert d.plan.truncate == 200
    assert "capped at the lot size" in d.truncate_source
    with pytest.raises(InputError):
        design_sequential(aql=0.01, rql=0.06, lot_size=200, truncate=300)


def test_double_plan_equals_designed_label():
    d = design_double(aql=0.01, rql=0.05)
    assert d.plan == DoublePlan(n1=d.plan.n1, c1=d.plan.c1, n2=d.plan.n2, c2=d.plan.c2,
                                r1=d.plan.r1)
