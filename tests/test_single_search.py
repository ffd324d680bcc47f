"""The single-plan search (:func:`lotwise.core.search.smallest_plan`) against
the previous designer, kept below as the reference: acceptance numbers in
blocks of 64, 128, ... from zero, each block's smallest ``n`` by integer
bisection (the exhaustive method of E. G. Schilling and D. V. Neubauer, 2nd
ed., CRC Press, 2009, ch. 5, carried out exactly). Both must give the same
``(n, c)`` (same minimal ``n``, same tie rule) or both find no plan, on
random target sets under every model; plus a brute-force scan over every
``(n, c)`` for small cases (no source needed: it is the definition)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import special

from lotwise.core.search import MAX_SAMPLE, Kernel, c_min, n_max, n_min, smallest_plan
from lotwise.core.types import TOL, Scope, Targets
from lotwise.core.quantities import Infeasible


# --- the reference: the previous algorithm, verbatim but for names ---------

def _ref_initial_upper(kernel, c, beta):
    lam = special.gammainccinv(c + 1.0, beta)
    guess = np.ceil(1.05 * lam / kernel.t.rql) + 2
    guess = np.minimum(np.maximum(guess, c + 1), MAX_SAMPLE)
    if kernel.model == "hypergeometric":
        guess = np.minimum(guess, kernel.N)
    return guess.astype(np.int64)


def _ref_n_min(kernel, c, beta, cap):
    c = np.asarray(c, dtype=np.int64)
    hi = _ref_initial_upper(kernel, c, beta)
    limit = cap
    if kernel.model == "hypergeometric":
        limit = kernel.N if limit is None else min(limit, kernel.N)
    if limit is not None:
        hi = np.minimum(hi, limit)
    ok = kernel.at_rql(hi, c) <= beta + TOL
    while True:
        grow = ~ok & (hi < MAX_SAMPLE)
        if limit is not None:
            grow &= hi < limit
        if not grow.any():
            break
        new = np.minimum(hi[grow] * 2, MAX_SAMPLE)
        if limit is not None:
            new = np.minimum(new, limit)
        hi[grow] = new
        ok[grow] = kernel.at_rql(hi[grow], c[grow]) <= beta + TOL
    lo = np.zeros_like(hi) if kernel.per_unit else np.minimum(c, hi - 1)
    lo = np.maximum(lo, 0)
    act = ok & (hi - lo > 1)
    while act.any():
        mid = (lo[act] + hi[act]) // 2
        good = kernel.at_rql(mid, c[act]) <= beta + TOL
        h, l_ = hi[act], lo[act]
        hi[act] = np.where(good, mid, h)
        lo[act] = np.where(good, l_, mid)
        act = ok & (hi - lo > 1)
    return np.where(ok, hi, -1)


def _ref_smallest_plan(kernel, alpha, beta, cap, c_limit):
    start, width = 0, 64
    while True:
        stop = start + width if c_limit is None else min(start + width, c_limit)
        if stop <= start:
            return None
        cs = np.arange(start, stop, dtype=np.int64)
        nm = _ref_n_min(kernel, cs, beta, cap)
        have = nm >= 0
        feasible = np.zeros_like(have)
        if have.any():
            feasible[have] = kernel.at_aql(nm[have], cs[have]) >= 1.0 - alpha - TOL
        if feasible.any():
            i = int(np.argmax(feasible))
            return int(nm[i]), int(cs[i])
        if cap is not None and not have[-1]:
            return None
        start, width = stop, width * 2


# --- random target sets ----------------------------------------------------

def _case(rng):
    """One random problem: model, targets, scope, cap and the ``c`` bound the
    designer uses (lot count at the RQL; the cap for items)."""
    model = rng.choice(["binomial", "poisson", "hypergeometric", "per_unit"])
    aql = float(10 ** rng.uniform(-4, -0.7))
    ratio = float(rng.choice([rng.uniform(1.3, 2.0), rng.uniform(2.0, 30.0)]))
    rql = min(aql * ratio, 0.9)
    alpha, beta = float(rng.uniform(0.005, 0.3)), float(rng.uniform(0.005, 0.3))
    t = Targets(aql=aql, rql=rql, alpha=alpha, beta=beta)
    cap = int(10 ** rng.uniform(1, 5)) if rng.random() < 0.3 else None
    if model == "hypergeometric":
        N = int(10 ** rng.uniform(1.5, 7))
        scope = Scope(lot_size=N)
        cap = N if cap is None else min(cap, N)
    else:
        scope = Scope(per_unit=(model == "per_unit"))
        model = "poisson" if model == "per_unit" else model
    kernel = Kernel(model, t, scope)
    c_limit = kernel.d2 if model == "hypergeometric" else None
    if cap is not None and not scope.per_unit:
        c_limit = cap if c_limit is None else min(c_limit, cap)
    if model == "hypergeometric" and (kernel.d2 < 1 or kernel.d1 >= kernel.d2):
        return None
    return kernel, alpha, beta, cap, c_limit


def _compare(seed):
    rng = np.random.default_rng(seed)
    case = _case(rng)
    if case is None:
        return
    kernel, alpha, beta, cap, c_limit = case
    want = _ref_smallest_plan(kernel, alpha, beta, cap, c_limit)
    got = smallest_plan(kernel, alpha, beta, cap, c_limit)
    assert got == want, (seed, kernel.model, kernel.t, kernel.N, kernel.per_unit, cap)


@pytest.mark.parametrize("block", range(10))
def test_same_plans_as_previous_search(block):
    # 200 random target sets by default (20 per block).
    for seed in range(block * 20, block * 20 + 20):
        _compare(seed)


@pytest.mark.slow
@pytest.mark.parametrize("block", range(18))
def test_same_plans_as_previous_search_2000(block):
    # 1,800 more random target sets (2,000 in all with the default ones).
    for seed in range(200 + block * 100, 300 + block * 100):
        _compare(seed)


def _brute(kernel, alpha, beta, n_top):
    """Every (n, c) with n <= n_top in increasing n, then c: the definition."""
    for n in range(1, n_top + 1):
        cs = np.arange(0, (n if not kernel.per_unit else 3 * n + 10) + 1)
        ok = ((kernel.at_rql(n, cs) <= beta + TOL) & (kernel.at_aql(n, cs) >= 1 - alpha - TOL))
        if ok.any():
            return n, int(np.argmax(ok))
    return None


@pytest.mark.parametrize("model,aql,rql,alpha,beta,N", [
    # (model, AQL, RQL, alpha, beta, lot size): small answers, scanned in full.
    ("binomial", 0.01, 0.06, 0.05, 0.10, None),
    ("binomial", 0.02, 0.15, 0.10, 0.20, None),
    ("poisson", 0.5, 3.0, 0.05, 0.10, None),     # per unit: c may exceed n
    ("poisson", 1.0, 2.5, 0.10, 0.10, None),
    ("hypergeometric", 0.05, 0.25, 0.05, 0.10, 40),  # n/N near one half
    ("hypergeometric", 0.1, 0.3, 0.05, 0.10, 60),
])
def test_brute_force_small(model, aql, rql, alpha, beta, N):
    per_unit = model == "poisson" and aql >= 0.5
    scope = Scope(lot_size=N, per_unit=per_unit)
    kernel = Kernel(model, Targets(aql=aql, rql=rql, alpha=alpha, beta=beta), scope)
    c_limit = kernel.d2 if model == "hypergeometric" else None
    got = smallest_plan(kernel, alpha, beta, N, c_limit)
    assert got == _brute(kernel, alpha, beta, N or 400)


def test_per_unit_plan_with_c_above_n():
    # Nonconformities per unit: AQL 3/unit, RQL 15/unit -> n = 1, c = 6 (Poisson:
    # P(X <= 6 | 3) = 0.966, P(X <= 6 | 15) = 0.0076, P(X <= 5 | 3) = 0.916; any
    # table of the Poisson distribution), and the brute-force scan agrees.
    scope = Scope(per_unit=True)
    kernel = Kernel("poisson", Targets(aql=3.0, rql=15.0), scope)
    got = smallest_plan(kernel, 0.05, 0.10, None, None)
    assert got == _brute(kernel, 0.05, 0.10, 20)
    assert got == (1, 6)


@pytest.mark.parametrize("model,N", [("binomial", None), ("poisson", None),
                                      ("hypergeometric", 10**6)])
def test_n_min_n_max_bracket(model, N):
    # n_min is the first n meeting beta and n_max the last meeting alpha: the
    # neighbours on either side must fail (definition, no source needed).
    kernel = Kernel(model, Targets(aql=0.01, rql=0.03), Scope(lot_size=N))
    cs = np.array([0, 1, 5, 40, 300])
    nm, nx = n_min(kernel, cs, 0.1, N), n_max(kernel, cs, 0.05, N)
    assert (kernel.at_rql(nm, cs) <= 0.1 + TOL).all()
    assert (kernel.at_rql(nm - 1, cs) > 0.1 + TOL).all()
    assert (kernel.at_aql(nx, cs) >= 0.95 - TOL).all()
    assert (kernel.at_aql(nx + 1, cs) < 0.95 - TOL).all()


def test_tie_rule_matches_fixed_n():
    # The smaller c on a tie: designing again at the found n gives the same c.
    kernel = Kernel("binomial", Targets(aql=0.01, rql=0.0105), Scope())
    n, c = smallest_plan(kernel, 0.05, 0.10, None, None)
    assert (n, c) == (347178, 3568)  # the previous search's answer
    assert c_min(kernel, n, 0.05) == c
