"""Supplier view (beta posterior, predictive rejection) and the trade-off grid."""

from __future__ import annotations

import json

import mpmath as mp
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from generated import history
from lotwise.cli import main
from lotwise.families.single import design_single
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import Infeasible, InputError
from lotwise.analysis.supplier import Posterior, parse_levels, rejection_outlook, tradeoff


def _mp_predictive_accept(n, c, a, b):
    """Reference: beta-binomial P(X <= c), summed in mpmath (40 digits)."""
    with mp.workdps(40):
        a, b = mp.mpf(a), mp.mpf(b)
        return mp.fsum(mp.binomial(n, k) * mp.beta(k + a, n - k + b) / mp.beta(a, b)
                       for k in range(c + 1))


@pytest.mark.parametrize("x, m, n, c", [(14, 3200, 80, 2), (0, 500, 50, 0), (3, 60, 20, 1),
                                        (120, 5000, 200, 7), (30, 400, 125, 3)])
def test_predictive_rejection_matches_mpmath(x, m, n, c):
    # Reference: mpmath beta-binomial sum; 1e-10 absolute.
    post = Posterior.from_counts(x, m)
    assert (post.a, post.b) == (x + 0.5, m - x + 0.5)  # Jeffreys prior Beta(1/2, 1/2)
    ref = 1 - float(_mp_predictive_accept(n, c, post.a, post.b))
    out = rejection_outlook(SinglePlan(n=n, c=c), post)
    assert out.p_reject == pytest.approx(ref, abs=1e-10)
    # The quadrature used for other plan types agrees with the exact sum.
    quad = 1 - post.expect(lambda p: SinglePlan(n=n, c=c).pa(p, "binomial", Scope()))
    assert quad == pytest.approx(ref, abs=1e-9)


def test_uniform_prior_and_plug_in():
    post = Posterior.from_counts(4, 100, prior="uniform")
    assert (post.a, post.b) == (5.0, 97.0) and post.estimate == 0.04
    out = rejection_outlook(SinglePlan(n=50, c=1), post)
    # Reference: scipy.stats-free plug-in, 1 - binomial Pa at the estimate (mpmath sum).
    with mp.workdps(30):
        plug = 1 - mp.fsum(mp.binomial(50, k) * mp.mpf("0.04") ** k * mp.mpf("0.96") ** (50 - k)
                           for k in range(2))
    assert out.p_reject_at_estimate == pytest.approx(float(plug), abs=1e-12)
    with pytest.raises(InputError, match="--prior"):
        Posterior.from_counts(1, 10, prior="flat")


def test_rejected_lots_per_year_and_interval():
    # Reference: the predictive distribution of the rejected lots among L = 12, an
    # mpmath integral of Binomial(r; L, 1 - Pa(p)) over the Beta posterior.
    post = Posterior.from_counts(6, 400)
    plan = SinglePlan(n=50, c=1)
    out = rejection_outlook(plan, post, deliveries_per_year=12, interval=0.90)
    assert out.rejected_per_year == pytest.approx(12 * out.p_reject)
    with mp.workdps(25):
        a, b = mp.mpf(post.a), mp.mpf(post.b)

        def pr(r):
            def f(p):
                q = 1 - ((1 - p) ** 50 + 50 * p * (1 - p) ** 49)
                return mp.binomial(12, r) * q ** r * (1 - q) ** (12 - r) * \
                    p ** (a - 1) * (1 - p) ** (b - 1) / mp.beta(a, b)
            return mp.quad(f, [0, 0.01, 0.02, 0.04, 0.1, 1])
        cdf, acc = [], mp.mpf(0)
        for r in range(13):
            acc += pr(r)
            cdf.append(acc)
    lo = next(r for r in range(13) if cdf[r] >= 0.05)
    hi = next(r for r in range(13) if cdf[r] >= 0.95)
    assert out.rejected_interval == (lo, hi)


@pytest.mark.parametrize("text, expected", [
    ("1%..3%:0.5%", [0.01, 0.015, 0.02, 0.025, 0.03]),
    ("1%,2%,3%", [0.01, 0.02, 0.03]),
    ("0.65%, 1%..2%:0.5%, 1%", [0.0065, 0.01, 0.015, 0.02]),
    ("2%", [0.02]),
    ("0.001..0.003:0.001", [0.001, 0.002, 0.003]),
])
def test_parse_levels(text, expected):
    assert parse_levels(text, "--aql") == pytest.approx(expected, abs=1e-15)


@pytest.mark.parametrize("text, needle", [
    ("1%..3%", "start..stop:step"), ("3%..1%:1%", "must not be below"),
    ("1%..3%:x", "--aql step"), ("5", "write 5% for a percentage"), (",", "holds no level"),
    ("0.0001%..50%:0.0001%", "at most 200"),
])
def test_parse_levels_errors(text, needle):
    with pytest.raises(InputError, match=needle.replace("(", r"\(")):
        parse_levels(text, "--aql")


# --- the trade-off is monotone ----------------------------------------------------

@settings(max_examples=60, deadline=None)
@given(aql=st.sampled_from([0.001, 0.004, 0.01, 0.025, 0.04]),
       r1=st.floats(1.2, 20), r2=st.floats(1.2, 20),
       lot=st.one_of(st.none(), st.integers(50, 100_000)),
       alpha=st.sampled_from([0.05, 0.10]), beta=st.sampled_from([0.05, 0.10]))
def test_tighter_rql_never_needs_a_smaller_sample(aql, r1, r2, lot, alpha, beta):
    # Every plan meeting the tighter RQL also meets the looser one, so the smallest
    # sample can only grow as the RQL comes down (exact designs, any model).
    tight, loose = sorted((min(aql * r1, 0.5), min(aql * r2, 0.5)))
    try:
        nt = design_single(aql=aql, rql=tight, alpha=alpha, beta=beta, lot_size=lot).n
    except Infeasible:
        return  # nothing to compare: the tighter pair has no plan short of the lot
    nl = design_single(aql=aql, rql=loose, alpha=alpha, beta=beta, lot_size=lot).n
    assert nt >= nl


def test_tradeoff_grid_is_monotone_and_priced():
    rows = tradeoff([0.0065, 0.01, 0.015], [0.02, 0.03, 0.04, 0.06, 0.08, 0.1],
                    process_average=0.008, deliveries_per_year=52)
    assert all(r.rql > r.aql for r in rows) and len(rows) == 18
    for a in (0.0065, 0.01, 0.015):
        ns = [r.n for r in sorted((r for r in rows if r.aql == a), key=lambda r: r.rql)]
        assert ns == sorted(ns, reverse=True)
    for r in rows:
        d = design_single(aql=r.aql, rql=r.rql)
        assert (r.n, r.c) == (d.n, d.c) and r.beta_actual <= 0.10 + 1e-12
        assert r.p_reject == pytest.approx(1 - float(d.plan.pa(0.008, "binomial", Scope())))
        assert r.rejected_per_year == pytest.approx(52 * r.p_reject)


def test_tradeoff_reports_pairs_without_a_plan():
    rows = tradeoff([0.01], [0.02, 0.05], lot_size=40)
    assert rows[0].plan is None and "too small" in rows[0].reason
    with pytest.raises(InputError, match="no level of the grid is above"):
        tradeoff([0.05], [0.01, 0.02])


# --- the command line ------------------------------------------------------------

def _run(argv, capsys):
    code = main(argv)
    cap = capsys.readouterr()
    return code, cap.out, cap.err


def test_cli_tradeoff_json_csv_plot(tmp_path, capsys):
    png = tmp_path / "t.png"
    code, out, err = _run(["tradeoff", "--aql", "1%,1.5%", "--rql", "4%..8%:2%",
                           "--process-average", "0.8%", "--plot", str(png), "--json"], capsys)
    assert code == 0 and err == ""
    d = json.loads(out)
    assert {"alpha", "beta", "model", "process_average", "rows"} <= set(d)
    assert {"aql", "rql", "ratio", "n", "c", "alpha_actual", "beta_actual",
            "supplier_p_reject"} <= set(d["rows"][0])
    assert png.read_bytes()[:4] == b"\x89PNG"
    code, out, _ = _run(["tradeoff", "--aql", "1%", "--rql", "6%", "--csv", "-"], capsys)
    assert code == 0 and out.splitlines()[0].startswith("aql,rql,ratio,n,c,")
    assert out.splitlines()[1].startswith("0.01,0.06,") and ",110,3," in out


def test_cli_supplier_from_records(tmp_path, capsys):
    path = tmp_path / "lots.csv"
    history(60, p=0.01, seed=3, suppliers=("Acme",), parts=("H-1",)).to_csv(path, index=False)
    code, out, err = _run(["supplier", "--records", str(path), "--supplier", "Acme",
                           "--plan", "n=80,c=2", "--deliveries-per-year", "52", "--json"],
                          capsys)
    assert code == 0 and err == ""
    d = json.loads(out)
    post = Posterior.from_counts(d["posterior"]["nonconforming"], d["posterior"]["inspected"])
    assert d["p_reject_predictive"] == pytest.approx(
        rejection_outlook(SinglePlan(n=80, c=2), post).p_reject, abs=1e-14)
    assert d["rejected_per_year"]["expected"] == pytest.approx(52 * d["p_reject_predictive"])
    assert "Jeffreys" in d["posterior"]["prior"]
    code, out, err = _run(["tradeoff", "--aql", "1%", "--rql", "4%,6%", "--records", str(path),
                           "--supplier", "Acme"], capsys)
    assert code == 0 and "from 60 lots of Acme" in out and "predictive" in out


@pytest.mark.parametrize("argv, needle", [
    (["supplier", "--found", "3", "--inspected", "100"], "--plan is required"),
    (["supplier", "--plan", "n=80,c=2", "--found", "300", "--inspected", "100"],
     "--found (300) must not be greater than --inspected (100)"),
    (["supplier", "--plan", "n=80,c=2"], "give --records"),
    (["supplier", "--plan", "n=80;c=x", "--found", "1", "--inspected", "10"], "c ('x')"),
    (["tradeoff", "--aql", "1%..2%", "--rql", "5%"], "start..stop:step"),
    (["tradeoff", "--rql", "5%"], "--aql is required"),
    (["tradeoff", "--aql", "1%", "--rql", "5%", "--process-average", "7"], "--process-average"),
    (["tradeoff", "--aql", "1%", "--rql", "5%", "--process-average", "1%", "--records", "x.csv"],
     "cannot be combined"),
    (["tradeoff", "--aql", "1%", "--rql", "5%", "--plot", "t.gif"], "--plot (t.gif)"),
])
def test_cli_malformed_input_is_one_line_exit_2(tmp_path, capsys, monkeypatch, argv, needle):
    monkeypatch.chdir(tmp_path)
    code, out, err = _run(argv, capsys)
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and needle in err and "Traceback" not in err
