"""Benchmarks for continuous sampling plans CSP-1/2/3 (see benchmark.py)."""

from __future__ import annotations

import numpy as np

from lotwise.families.csp import Csp2Plan, design_csp

CURVE = np.linspace(0.0, 0.2, 1000)
CSP2 = Csp2Plan(i=38, f=0.1)


def _curve():
    CSP2.afi(CURVE)
    CSP2.aoq(CURVE)


CASES = [
    {"name": "CSP-1 design: smallest i for f = 1/10, AOQL 0.79 % (i = 139)",
     "func": lambda: design_csp(scheme="csp1", aoql=0.0079, f=0.1), "goal_ms": 20},
    {"name": "CSP-1 design: smallest i for f = 1/200, AOQL 0.018 % (i = 17,481)",
     "func": lambda: design_csp(scheme="csp1", aoql=0.00018, f=1 / 200), "goal_ms": 20},
    {"name": "CSP-3 design: smallest i for f = 1/200, AOQL 0.018 %",
     "func": lambda: design_csp(scheme="csp3", aoql=0.00018, f=1 / 200), "goal_ms": 20},
    {"name": "CSP-2 AFI and AOQ curve, 1,000 points",
     "func": _curve, "goal_ms": 50},
    {"name": "CSP-1 least-AFI design over 11 sampling fractions, AOQL 1 %, process average 0.3 %",
     "func": lambda: design_csp(scheme="csp1", aoql=0.01, minimize="afi",
                                process_average=0.003)},
    {"name": "CSP-2 short run of 100,000 units at 5 levels (i = 38, by doubling)",
     "func": lambda: CSP2.run_figures([0.005, 0.01, 0.02, 0.04, 0.08], 100_000), "repeat": 5},
]
