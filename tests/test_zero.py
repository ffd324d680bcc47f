"""Accept-on-zero plans and c = 0 equivalents."""

from __future__ import annotations

import json
import math

import pytest
from hypothesis import given, settings, strategies as st

from lotwise.families.chain import ChainPlan
from lotwise.cli import main
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import Infeasible
from lotwise.analysis.zero import design_zero, zero_equivalent
from lotwise.documents.plots.zero import equivalent_figure


@pytest.mark.parametrize("rql, beta", [(0.05, 0.10), (0.01, 0.05), (0.2, 0.1), (0.001, 0.1)])
def test_zero_design_binomial_closed_form(rql, beta):
    # (1 - RQL)^n <= beta, n = ceil(ln beta / ln(1 - RQL)) (textbook closed
    # form, common practice); exact integers.
    want = math.ceil(math.log(beta) / math.log1p(-rql) - 1e-12)
    assert design_zero(rql=rql, beta=beta).n == want


# Finite lot (computed, common practice): to find a 5 % nonconforming lot with
# 95 % confidence at c = 0, N = 20 needs n = 19, N = 100 needs n = 45.
@pytest.mark.parametrize("N, n", [(20, 19), (100, 45)])
def test_zero_design_finite_lot(N, n):
    assert design_zero(rql=0.05, beta=0.05, lot_size=N).n == n


def test_zero_design_full_inspection_and_producers_risk():
    # A lot of 10 at RQL 10 % (1 item), beta 5 %: P(X = 0) = (10 - n)/10 <= 0.05
    # only at n = 10 (direct calculation): 100 % inspection.
    z = design_zero(rql=0.10, beta=0.05, lot_size=10)
    assert z.n == 10 and z.full_inspection
    # producer's risk at AQL 1 % for n = 45: 1 - 0.99^45 (direct calculation).
    z = design_zero(rql=0.05, beta=0.10, aql=0.01)
    assert z.producers_risk == pytest.approx(1 - 0.99 ** 45, rel=1e-12)
    assert "PRODUCER'S RISK" in " ".join(z.statements())
    with pytest.raises(Infeasible):
        design_zero(rql=0.05, lot_size=10)  # 5 % of 10 rounds down to no item


def test_zero_design_reuses_design_single():
    # design_single(c = 0) gives the same n whenever it meets alpha too
    # (the same integer search; consistency with the single-plan engine).
    from lotwise.families.single import design_single

    d = design_single(aql=0.0005, rql=0.05, c=0)
    assert design_zero(rql=0.05, aql=0.0005).n == d.n


@settings(max_examples=40, deadline=None)
@given(st.integers(5, 300), st.integers(1, 6), st.sampled_from([None, 2000]),
       st.sampled_from([0.05, 0.10, 0.2]))
def test_equivalent_has_same_rql_point(n, c, N, beta):
    # The definition: the smallest c = 0 plan accepting lots at the given
    # plan's consumer quality level at most beta of the time.
    c = min(c, n - 1)
    scope = Scope(lot_size=N)
    e = zero_equivalent(SinglePlan(n=n, c=c), scope, beta=beta)
    m = scope.exact_model
    assert e.pa_point["zero_plan"] <= beta + 1e-12
    if e.zero_plan.n > 1:
        smaller = SinglePlan(n=e.zero_plan.n - 1, c=0)
        if m == "hypergeometric":
            assert float(smaller.pa_count(e.point_count, scope)) > beta
        else:
            assert float(smaller.pa(e.point, m, scope)) > beta
    # the c = 0 plan never needs more samples than the plan it replaces
    assert e.zero_plan.n <= n


def test_equivalent_example():
    # n = 125, c = 3: Pa = 0.10 at p = 5.266 % (binomial); the c = 0 plan with
    # 0.9473^n <= 0.10 is n = 43 (direct calculation, scipy.stats.binom for the point).
    from scipy.stats import binom

    e = zero_equivalent(SinglePlan(n=125, c=3), Scope(), aql=0.01)
    assert binom.cdf(3, 125, e.point) == pytest.approx(0.10, rel=1e-9)
    assert e.zero_plan.n == math.ceil(math.log(0.10) / math.log1p(-e.point))
    assert e.pa_level["zero_plan"] == pytest.approx(0.99 ** 43, rel=1e-12)


def test_equivalent_of_a_chain_plan_finite_lot():
    # Works for any plan object (generic interface), here ChSP-1 in a lot of 500.
    e = zero_equivalent(ChainPlan(n=20, i=3), Scope(lot_size=500))
    assert e.pa_point["zero_plan"] <= 0.10 and e.point_count is not None


def test_equivalent_figure():
    e = zero_equivalent(SinglePlan(n=125, c=3), Scope(), aql=0.01)
    fig = equivalent_figure(e)
    assert len(fig.axes[0].lines) >= 4


def test_cli(capsys, tmp_path):
    # Producer's risk 36.4 % at the AQL against 5 %: exit 1 (README, "Exit codes").
    assert main(["zero", "--rql", "5%", "--aql", "1%", "--json"]) == 1
    out = json.loads(capsys.readouterr().out)
    assert out["n"] == 45 and out["c"] == 0 and out["producers_risk"] > 0.3
    assert main(["zero", "--plan", "n=125,c=3", "--json", "--plot", str(tmp_path / "eq.png")]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["zero_plan"]["n"] == 43 and (tmp_path / "eq.png").exists()
    main(["zero", "--rql", "5%", "--aql", "1%"])
    assert "PRODUCER'S RISK" in capsys.readouterr().out


@pytest.mark.parametrize("argv, word", [
    (["zero"], "--rql"),
    (["zero", "--rql", "5%", "--plan", "n=125,c=3"], "--rql"),
    (["zero", "--rql", "5", "--lot-size", "100"], "--rql"),
    (["zero", "--rql", "5%", "--plot", "x.jpg"], "--plot"),
    (["zero", "--plan", "n=125,c=3", "--lot-size", "100"], "--n"),
])
def test_cli_bad_input(argv, word, capsys):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and word in err[0]
