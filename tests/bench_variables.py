"""Benchmarks for variables plans (see benchmark.py)."""

from __future__ import annotations

import numpy as np

from lotwise.core.twolimit import boundary
from lotwise.families.variables import design_variables
from lotwise.families.variables import VariablesPlan

PLAN = VariablesPlan(n=42, k=1.901, sigma="unknown", limit="upper")
PS = np.linspace(0.0, 0.3, 500)
TWO = VariablesPlan(n=43, m=0.02648, sigma="unknown", limit="both")
PS200 = np.linspace(0.0, 0.15, 200)

CASES = [
    {"name": "variables: unknown-sigma exact design, AQL 1 %/RQL 6 % (n = 42)",
     "func": lambda: design_variables(aql=0.01, rql=0.06, sigma="unknown", attributes=False),
     "goal_ms": 100},
    {"name": "variables: unknown-sigma exact design, AQL 0.1 %/RQL 0.2 %, alpha 1 % (n = 2,626)",
     "func": lambda: design_variables(aql=0.001, rql=0.002, alpha=0.01, beta=0.01,
                                      sigma="unknown", attributes=False),
     "goal_ms": 100},
    {"name": "variables: unknown-sigma design with the attributes plan beside it",
     "func": lambda: design_variables(aql=0.01, rql=0.06, sigma="unknown"), "goal_ms": 100},
    {"name": "variables: 500-point exact OC curve, noncentral t", "goal_ms": 50,
     "func": lambda: PLAN.pa(PS)},
    {"name": "variables: 500-point OC band, two limits, sigma known, width unknown",
     "func": lambda: VariablesPlan(n=17, k=1.919, sigma="known", limit="both").pa(PS)},
    {"name": "variables: 200-point exact OC, two limits, sigma unknown (upper edge)",
     "func": lambda: TWO.pa(PS200), "goal_ms": 100},
    # The boundary cache is cleared each time: a design builds a fresh one per M tried.
    {"name": "variables: exact two-limit design, sigma unknown, AQL 1 %/RQL 6 % (n = 43)",
     "func": lambda: (boundary.cache_clear(),
                      design_variables(aql=0.01, rql=0.06, sigma="unknown", limit="both",
                                       attributes=False)), "goal_ms": 1000, "repeat": 5},
]
