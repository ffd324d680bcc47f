"""Benchmarks for switching schemes (see benchmark.py).

Goals: the exact scheme OC (long-run Pa, ASN, shares, expected lots to
tightened and to discontinuation) over 200 quality levels under 200 ms with
the default rules, and under 1 s with a reduce limit of 20.
"""

from __future__ import annotations

import numpy as np

from lotwise.analysis.switching import Scheme, SwitchRules, scheme_oc
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan

PS = np.linspace(0.0, 0.1, 200)
DEFAULT = Scheme(normal=SinglePlan(n=80, c=2), tightened=SinglePlan(n=80, c=1),
                 reduced=SinglePlan(n=32, c=1))
# c = 5 on normal, so that ten accepted lots can find more than 20 in all.
LIMIT = Scheme(normal=SinglePlan(n=125, c=5), tightened=SinglePlan(n=125, c=3),
               reduced=SinglePlan(n=50, c=2), rules=SwitchRules(reduce_limit=20))

CASES = [
    {"name": "switching scheme OC, 200 levels, default rules, binomial",
     "func": lambda: scheme_oc(DEFAULT, PS, "binomial", Scope()), "goal_ms": 200, "repeat": 9},
    {"name": "switching scheme OC, 200 levels, default rules, hypergeometric (lot 1,500)",
     "func": lambda: scheme_oc(DEFAULT, PS, "hypergeometric", Scope(lot_size=1500)),
     "goal_ms": 200, "repeat": 9},
    {"name": "switching scheme OC, 200 levels, reduce_limit 20, binomial",
     "func": lambda: scheme_oc(LIMIT, PS, "binomial", Scope()), "goal_ms": 1000, "repeat": 5},
]
