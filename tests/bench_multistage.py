"""Benchmarks for double and sequential plans (see benchmark.py).

Speed goals: the exact OC and ASN of a sequential plan truncated at
n = 2,000 over 200 quality levels under 200 ms, and the double-plan designer
for AQL 1 %/RQL 5 % under 1 s in-process, and for AQL 1 %/RQL 1.5 % (close
targets, the hard case: 241 s before the search over n1) under 1 s as well,
also with the largest ASN as the objective and in a lot of 1,000,000.
"""

from __future__ import annotations

import numpy as np

from lotwise.families.double import design_double
from lotwise.core.types import Scope
from lotwise.families.sequential import SequentialPlan, clear_cache, sprt_lines

H1, H2, S = sprt_lines(0.01, 0.05, 0.06, 0.10)
PLAN = SequentialPlan(h1=H1, h2=H2, s=S, truncate=2000)
PS = np.linspace(0.0, 0.15, 200)
LOT = Scope(lot_size=10_000)



def _fresh(plan, model, scope):
    """The walk itself: the family remembers its last walks (a report asks for the
    same levels twice), so each timed call starts with that memory cleared."""
    def run():
        clear_cache()
        return plan.oc_asn(PS, model, scope)
    return run


CASES = [
    {"name": "sequential exact OC+ASN, truncated at 2,000, 200 levels, binomial",
     "func": _fresh(PLAN, "binomial", Scope()), "goal_ms": 200, "repeat": 9},
    {"name": "sequential exact OC+ASN, truncated at 2,000, 200 levels, hypergeometric "
             "(lot 10,000)",
     "func": _fresh(PLAN, "hypergeometric", LOT), "goal_ms": 200, "repeat": 9},
    {"name": "double-plan designer, AQL 1 %/RQL 5 %, binomial, ratio 2",
     "func": lambda: design_double(aql=0.01, rql=0.05), "goal_ms": 1000, "repeat": 5},
    {"name": "double-plan designer, AQL 1 %/RQL 5 %, hypergeometric (lot 1,000), ratio 2",
     "func": lambda: design_double(aql=0.01, rql=0.05, lot_size=1000), "goal_ms": 1000,
     "repeat": 5},
]

# Long truncation: the walk stops per level once the undecided mass is below
# 1e-15; the memory is the band of counts times the levels, not the units.
LONG = SequentialPlan(h1=H1, h2=H2, s=S, truncate=100_000)


def _long_with_memory():
    import tracemalloc

    clear_cache()
    tracemalloc.start()
    try:
        LONG.oc_asn(PS, "binomial", Scope())
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    print(f"    this run: peak traced memory {peak / 1e6:.1f} MB (goal <= 100 MB)")
    if peak > 100e6:
        raise AssertionError(f"peak memory {peak / 1e6:.0f} MB is above 100 MB")


def _design_sequential_cli():
    import subprocess
    import sys

    subprocess.run([sys.executable, "-m", "lotwise", "design", "--scheme", "sequential",
                    "--aql", "1%", "--rql", "5%", "--truncate", "100000", "--json"],
                   check=True, capture_output=True)


def _refused():
    from lotwise.core.quantities import TooCostly

    try:
        design_double(aql=0.01, rql=0.012)
    except TooCostly:
        return
    raise AssertionError("AQL 1 %/RQL 1.2 % was expected to be refused by the budget")


CASES += [
    {"name": "sequential exact OC+ASN, truncated at 100,000, 200 levels, binomial",
     "func": _fresh(LONG, "binomial", Scope()), "goal_ms": 200, "repeat": 5},
    {"name": "sequential exact OC+ASN, truncated at 100,000, 200 levels, hypergeometric "
             "(lot 1,000,000)",
     "func": _fresh(LONG, "hypergeometric", Scope(lot_size=1_000_000)),
     "goal_ms": 200, "repeat": 5},
    {"name": "same, binomial, with tracemalloc (fails above 100 MB peak)",
     "func": _long_with_memory, "repeat": 3},
    {"name": "`lotwise design --scheme sequential --truncate 100000 --json` (cold)",
     "func": _design_sequential_cli, "goal_ms": 2000, "repeat": 3},
    {"name": "double-plan designer, AQL 1 %/RQL 1.5 %, binomial, ratio 2",
     "func": lambda: design_double(aql=0.01, rql=0.015), "goal_ms": 1000, "repeat": 5},
    {"name": "double-plan designer, AQL 1 %/RQL 1.5 %, binomial, ratio 2, smallest largest ASN",
     "func": lambda: design_double(aql=0.01, rql=0.015, minimize="asn-max"), "goal_ms": 1000,
     "repeat": 3},
    {"name": "double-plan designer, AQL 1 %/RQL 1.5 %, hypergeometric (lot 1,000,000), ratio 2",
     "func": lambda: design_double(aql=0.01, rql=0.015, lot_size=1_000_000), "goal_ms": 1000,
     "repeat": 3},
    {"name": "double-plan designer, AQL 8 %/RQL 10 %, lot 1,000, smallest largest ASN",
     "func": lambda: design_double(aql=0.08, rql=0.10, lot_size=1000, minimize="asn-max"),
     "goal_ms": 1000, "repeat": 3},
    {"name": "double-plan designer, AQL 1 %/RQL 1.2 %: refused by the budget",
     "func": _refused, "goal_ms": 1000, "repeat": 3},
]
