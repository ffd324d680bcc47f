"""The Python API: lotwise.design, lotwise.check, lotwise.parse_plan.

References: scipy.stats (binom, hypergeom, poisson) as an independent
computation of the acceptance probabilities (the library's kernels call
scipy.special, not scipy.stats); the command line's --json for equality of
the two interfaces (the same Assessment must print the same object).
"""

from __future__ import annotations

import io
import json
from contextlib import redirect_stdout

import pytest
from scipy import stats

import lotwise
from lotwise.cli import main


def _cli_json(*argv):
    buf = io.StringIO()
    with redirect_stdout(buf):
        main(list(argv))
    return json.loads(buf.getvalue())


def test_design_single_matches_scipy():
    # scipy.stats.binom as the reference, 1e-12 absolute.
    r = lotwise.design(aql=0.01, rql=0.06)
    assert (r.plan.n, r.plan.c) == (110, 3)
    assert r.beta == pytest.approx(stats.binom.cdf(3, 110, 0.06), abs=1e-12)
    assert r.alpha == pytest.approx(stats.binom.sf(3, 110, 0.01), abs=1e-12)
    assert r.meets


@pytest.mark.parametrize("kwargs, argv", [
    ({"aql": 0.01, "rql": 0.06}, ["design", "--aql", "0.01", "--rql", "0.06"]),
    ({"aql": 0.01, "rql": 0.08, "lot_size": 500},
     ["design", "--aql", "0.01", "--rql", "0.08", "--lot-size", "500"]),
    ({"aql": 0.5, "rql": 2, "per_unit": True},
     ["design", "--aql", "0.5", "--rql", "2", "--per-unit"]),
    ({"aql": 0.01, "rql": 0.05, "scheme": "double", "ratio": 2.0},
     ["design", "--aql", "0.01", "--rql", "0.05", "--scheme", "double", "--ratio", "2"]),
    ({"aql": 0.01, "rql": 0.15, "scheme": "chain"},
     ["design", "--aql", "0.01", "--rql", "0.15", "--scheme", "chain"]),
])
def test_design_json_equals_cli(kwargs, argv):
    # The same Assessment behind both interfaces: identical JSON objects.
    api = json.loads(json.dumps(lotwise.design(**kwargs).to_json()))
    assert api == _cli_json(*argv, "--json")


def test_check_finite_lot_matches_scipy_hypergeom():
    # scipy.stats.hypergeom as the reference; lot of 1,000, AQL 1 % = 10 items
    # (rounded up), RQL 6 % = 60 items (rounded down).
    q = lotwise.check("n=89,c=2", aql=0.01, rql=0.06, lot_size=1000)
    assert q.alpha == pytest.approx(stats.hypergeom.sf(2, 1000, 10, 89), abs=1e-12)
    assert q.beta == pytest.approx(stats.hypergeom.cdf(2, 1000, 60, 89), abs=1e-12)
    assert not q.meets
    cli = _cli_json("check", "--plan", "n=89,c=2", "--aql", "1%", "--rql", "6%",
                    "--lot-size", "1000", "--json")
    assert json.loads(json.dumps(q.to_json())) == cli


def test_oc_dataframe_and_plot():
    q = lotwise.check(lotwise.SinglePlan(n=50, c=1), aql=0.01, rql=0.08)
    df = q.oc([0.0, 0.02, 0.05])
    assert list(df.columns) == ["p", "binomial", "poisson"]
    assert df["binomial"].tolist() == pytest.approx(
        [stats.binom.cdf(1, 50, p) for p in (0.0, 0.02, 0.05)], abs=1e-12)
    assert df["poisson"].tolist() == pytest.approx(
        [stats.poisson.cdf(1, 50 * p) for p in (0.0, 0.02, 0.05)], abs=1e-12)
    fig = q.plot()
    assert fig.axes and fig.axes[0].lines
    html = q._repr_html_()
    assert "<table>" in html and "data:image/png;base64," in html


@pytest.mark.parametrize("text", [
    "n=80,c=2",
    "double: n1=50,c1=1,r1=4,n2=100,c2=3",
    "multiple: n=20/20/20; c=-/1/3; r=2/3/4",
    "sequential: h1=1.5,h2=2.0,s=0.03,truncate=300",
    "chain: n=20,i=3",
    "skiplot: n=80,c=2,i=4,f=0.25",
    "variables: n=42,k=1.901,upper=25",
])
def test_notation_round_trips_for_every_family(text):
    # The plan interface: notation() reads back to an equal plan.
    p = lotwise.parse_plan(text)
    assert lotwise.parse_plan(p.notation()) == p


def test_bad_input_is_an_input_error():
    with pytest.raises(lotwise.InputError, match="scheme"):
        lotwise.design(aql=0.01, rql=0.06, scheme="nonesuch")
    with pytest.raises(lotwise.InputError):
        lotwise.check("n=80,c=2,q=3", aql=0.01, rql=0.06)
