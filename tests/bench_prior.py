"""Benchmarks for priors, posterior risks and least-cost plans (see benchmark.py)."""

from __future__ import annotations

import numpy as np

from lotwise.analysis.cost import Costs, least_cost_single
from lotwise.analysis.prior import BetaPrior, fit_prior, posterior_risks
from lotwise.families.base import parse_plan

PRIOR = BetaPrior(a=2.0, b=98.0)
COSTS = Costs(inspect=1.0, escape=40.0)
_rng = np.random.default_rng(1)
_N = np.full(200, 100)
_X = _rng.binomial(100, _rng.beta(2.0, 38.0, 200))
SINGLE = parse_plan("n=80,c=2")
LARGE = parse_plan("n=2000,c=40")
DOUBLE = parse_plan("double: n1=50,c1=1,r1=4,n2=100,c2=4")
CHAIN = parse_plan("chain: n=20,i=3")

CASES = [
    {"name": "least-cost single plan, N = 10,000, Beta(2, 98), S = 1, A = 40",
     "func": lambda: least_cost_single(lot_size=10_000, prior=PRIOR, costs=COSTS),
     "goal_ms": 200},
    {"name": "least-cost single plan, N = 10,000, holding RQL 2 % at beta 10 % (hypergeometric)",
     "func": lambda: least_cost_single(lot_size=10_000, prior=PRIOR, costs=COSTS, rql=0.02),
     "goal_ms": 200},
    {"name": "least-cost single plan, N = 1,000,000, Beta(2, 98), S = 1, A = 40",
     "func": lambda: least_cost_single(lot_size=1_000_000, prior=PRIOR, costs=COSTS),
     "repeat": 5},
    {"name": "posterior risks of n=80, c=2 (exact sums), lot of 1,000",
     "func": lambda: posterior_risks(SINGLE, PRIOR, aql=0.01, rql=0.05, lot_size=1000),
     "goal_ms": 5},
    {"name": "posterior risks of n=2000, c=40 (exact sums), lot of 100,000",
     "func": lambda: posterior_risks(LARGE, PRIOR, aql=0.01, rql=0.05, lot_size=100_000),
     "goal_ms": 5},
    {"name": "posterior risks of a double plan (exact sums over its counts), lot of 5,000",
     "func": lambda: posterior_risks(DOUBLE, PRIOR, aql=0.01, rql=0.05, lot_size=5000)},
    {"name": "posterior risks of ChSP-1 n=20, i=3 (adaptive quadrature), lot of 5,000",
     "func": lambda: posterior_risks(CHAIN, PRIOR, aql=0.01, rql=0.05, lot_size=5000)},
    {"name": "beta prior fitted to 200 lots (maximum likelihood, goodness of fit)",
     "func": lambda: fit_prior(_N, _X), "goal_ms": 50},
]
