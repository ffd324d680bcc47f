"""The double-plan designer returns exactly the plans of its slower predecessor.

Reference: ``reference_double_before.design_double``, a verbatim copy of the
designer before the best-first search over ``r1`` and before the search over
n1 that replaced both of its passes (itself checked against scipy.stats
enumeration in test_design_double.py). Tolerance: the same plan
(n1, c1, r1, n2, c2) -- so the same minimum, with the same tie order -- and
the same objective to 1e-12 relative. Close targets (RQL/AQL 1.5 and below)
take the reference minutes to hours: those are compared with its recorded
answer in test_double_tight.py; here RQL/AQL runs from 2 to 8.
"""

from __future__ import annotations

import numpy as np
import pytest

import reference_double_before as before
from lotwise.families.double import design_double


def _random_targets(count, seed, aql, spread, ratios, lots):
    """Seeded random target sets: AQL uniform in ``aql``, RQL/AQL in
    ``spread`` (RQL at most 40 %), n2/n1 from ``ratios``, the three models
    (lots from ``lots``), both objectives."""
    rng = np.random.default_rng(seed)
    out = []
    for _ in range(count):
        a = float(np.round(rng.uniform(*aql), 4))
        rql = float(np.round(a * rng.uniform(*spread), 4))
        model = str(rng.choice(["binomial", "poisson", "hypergeometric"]))
        lot = int(rng.choice(lots)) if model == "hypergeometric" else None
        out.append(dict(aql=a, rql=min(rql, 0.4), ratio=float(rng.choice(ratios)),
                        model=model, lot_size=lot,
                        minimize=str(rng.choice(["asn-aql", "asn-max"]))))
    return out


def _targets(count, seed):
    """AQL 0.5-3 %, RQL/AQL 2.5-8, ratio 0.5-3."""
    return _random_targets(count, seed, (0.005, 0.03), (2.5, 8.0), [0.5, 1, 1.5, 2, 3],
                           [300, 800, 2000])


def _close_targets(count, seed):
    """Close targets the reference can still do in seconds: AQL 2-6 %,
    RQL/AQL 2-2.5, ratio 1-2."""
    return _random_targets(count, seed, (0.02, 0.06), (2.0, 2.5), [1, 1.5, 2],
                           [500, 1000, 2000])


def _same(kw):
    try:
        ref = before.design_double(**kw)
    except before.Infeasible:
        with pytest.raises(before.Infeasible):
            design_double(**kw)
        return
    got = design_double(**kw)
    assert got.plan.label == ref.plan.label, kw
    assert got.objective == pytest.approx(ref.objective, rel=1e-12)


@pytest.mark.parametrize("kw", _targets(12, 20261202))
def test_same_plans_fast_subset(kw):
    _same(kw)


@pytest.mark.slow
@pytest.mark.parametrize("kw", _targets(100, 7))
def test_same_plans_randomised(kw):
    _same(kw)


@pytest.mark.parametrize("kw", [kw for kw in _close_targets(12, 11)
                                if kw["model"] != "hypergeometric"][:4])
def test_same_plans_close_targets_fast_subset(kw):
    _same(kw)


@pytest.mark.slow
@pytest.mark.parametrize("kw", _close_targets(40, 12))
def test_same_plans_close_targets_randomised(kw):
    _same(kw)
