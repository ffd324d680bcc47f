"""Benchmarks for imperfect inspection (see benchmark.py): the exact finite-lot OC of a
plan judged with misclassification, and the design holding the true risks."""

from __future__ import annotations

import numpy as np

from lotwise.core.inspection import ErrorRates
from lotwise.core.types import Scope
from lotwise.families.base import parse_plan
from lotwise.families.misclassified import design_misclassified, wrap

RATES = ErrorRates(miss_rate=0.10, false_alarm=0.02)
SCOPE = Scope(lot_size=10_000)
LEVELS = np.linspace(0.0, 0.10, 200)


def oc_single():
    """200 true levels, lot of 10,000, n = 200, c = 5: every point summed exactly over
    the lot's flagged count."""
    plan = wrap(parse_plan("n=200,c=5"), RATES)
    return plan.pa(LEVELS, "hypergeometric", SCOPE)


def oc_double():
    plan = wrap(parse_plan("double: n1=80,c1=1,r1=4,n2=160,c2=5"), RATES)
    return plan.pa(LEVELS, "hypergeometric", SCOPE)


def design_lot():
    return design_misclassified("single", RATES, aql=0.01, rql=0.06, lot_size=10_000)


def design_process():
    return design_misclassified("single", RATES, aql=0.01, rql=0.06)


CASES = [
    {"name": "inspection errors: exact finite-lot OC, 200 points, N = 10,000, n=200 c=5",
     "func": oc_single, "goal_ms": 100},
    {"name": "inspection errors: exact finite-lot OC, 200 points, N = 10,000, double plan",
     "func": oc_double},
    {"name": "inspection errors: single design holding the true risks, N = 10,000",
     "func": design_lot, "goal_ms": 50},
    {"name": "inspection errors: single design holding the true risks, process",
     "func": design_process, "goal_ms": 50},
]
