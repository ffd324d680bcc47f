"""Benchmarks for rectifying inspection and least-ATI designs (see benchmark.py)."""

from __future__ import annotations

from lotwise.analysis import rectifying
from lotwise.analysis.least_ati import design_least_ati
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan

PLAN = SinglePlan(n=125, c=3)
BIG = Scope(lot_size=100_000)

CASES = [
    {"name": "least-ATI design, N = 100,000, process average 0.5 %, RQL 2 % (hypergeometric)",
     "func": lambda: design_least_ati(lot_size=100_000, process_average=0.005, rql=0.02),
     "goal_ms": 50},
    {"name": "least-ATI design, N = 100,000, process average 0.5 %, RQL 2 % (binomial)",
     "func": lambda: design_least_ati(lot_size=100_000, process_average=0.005, rql=0.02,
                                      model="binomial"),
     "goal_ms": 50},
    {"name": "AOQL of n=125, c=3, lot of 100,000, hypergeometric (whole counts)",
     "func": lambda: rectifying.aoql(PLAN, BIG, "hypergeometric"), "goal_ms": 2},
    {"name": "AOQL of n=125, c=3, lot of 100,000, binomial (Brent)",
     "func": lambda: rectifying.aoql(PLAN, BIG, "binomial"), "goal_ms": 2},
    {"name": "AOQL of n=125, c=3, lot of 100,000, Poisson (Brent)",
     "func": lambda: rectifying.aoql(PLAN, BIG, "poisson"), "goal_ms": 2},
    {"name": "AOQL of n=2000, c=40, lot of 1,000,000, hypergeometric (whole counts)",
     "func": lambda: rectifying.aoql(SinglePlan(n=2000, c=40), Scope(lot_size=1_000_000),
                                     "hypergeometric"), "goal_ms": 2},
]
