"""Sequential plans whose exact report would take minutes are refused before
the work starts (one line, exit 2), and ``compare --designed`` says which
designed plans it left out and why instead of running for minutes."""

import json
import math
import time

import numpy as np
import pytest

from lotwise.cli import main
from lotwise.core import stages
from lotwise.core.quantities import TooCostly
from lotwise.families import sequential as sq


@pytest.mark.parametrize("args", [
    ["design", "--scheme", "sequential", "--aql", "1%", "--rql", "1.2%"],
    ["design", "--scheme", "sequential", "--aql", "0.1%", "--rql", "0.15%"],
    ["oc", "--plan", "sequential: h1=14,h2=14,s=0.011,truncate=100000"],
    ["check", "--plan", "sequential: h1=14,h2=14,s=0.011,truncate=100000", "--aql", "1%",
     "--rql", "1.2%"],
])
def test_costly_sequential_report_is_refused_at_once(capsys, args):
    t0 = time.process_time()
    code = main(args)
    spent = time.process_time() - t0
    err = capsys.readouterr().err
    assert code == 2, err
    assert len(err.strip().splitlines()) == 1
    assert "beyond the budget" in err
    assert spent < 5.0  # refused before the walks (they took minutes before)


def test_compare_designed_names_the_plans_it_left_out(capsys):
    code = main(["compare", "--designed", "--plan", "n=89,c=2", "--aql", "1%", "--rql",
                 "1.2%", "--json"])
    out = json.loads(capsys.readouterr().out)
    assert code == 0
    assert [p["label"].split(":")[0] for p in out["plans"]] == ["designed single", "n=89, c=2"]
    left = " ".join(out["notes"])
    assert "designed double: left out" in left and "designed sequential: left out" in left


def _units_walked(plan, x):
    """Units an exact walk of ``plan`` at levels ``x`` really goes through."""
    seen = []
    orig = stages._Walk._unit

    def unit(self, m):
        seen.append(m)
        return orig(self, m)

    stages._Walk._unit = unit
    try:
        sq._WALKS.clear()
        plan._walk(x, "binomial", sq.Scope(), "nearest")
    finally:
        stages._Walk._unit = orig
    return max(seen)


@pytest.mark.parametrize("aql, rql", [(0.01, 0.06), (0.01, 0.03), (0.02, 0.05), (0.005, 0.02)])
def test_stopping_length_bound_holds(aql, rql):
    # The estimate of walk_seconds: a walk truncated far out stops, once the undecided
    # probability is below 1e-15 everywhere, within 1.5 x 2 (h1 + h2)^2 ln(1e15) /
    # (pi^2 s (1 - s)) units (the first eigenvalue of a driftless random walk between
    # absorbing lines; W. Feller, An Introduction to Probability Theory and Its
    # Applications, vol. 1, 3rd ed., 1968, ch. XIV, from memory). Checked by counting.
    d = sq.design_sequential(aql=aql, rql=rql, truncate=200_000)
    p = d.plan
    width = p.h1 + p.h2
    bound = 1.5 * 2 * width ** 2 * math.log(1e15) / (math.pi ** 2 * p.s * (1 - p.s))
    walked = _units_walked(p, np.linspace(aql * 0.2, rql * 1.5, 127))
    assert walked <= bound + width / p.s, (walked, bound)
    assert walked >= bound / 6  # and it is not a loose bound


def test_report_check_passes_ordinary_plans():
    sq.design_sequential(aql=0.01, rql=0.06).plan.check_report_cost()
    sq.design_sequential(aql=0.01, rql=0.06, truncate=100_000).plan.check_report_cost()
    with pytest.raises(TooCostly):
        sq.SequentialPlan(h1=14.0, h2=14.0, s=0.011, truncate=100_000).check_report_cost()
