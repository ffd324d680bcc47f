"""Benchmarks for the seeded pick list (see benchmark.py)."""

from __future__ import annotations

import subprocess
import sys

from lotwise.data.draw import draw_units

CASES = [
    {"name": "draw 80 of 5,000, simple random", "goal_ms": 1,
     "func": lambda: draw_units(lot_size=5000, n=80, seed=1)},
    {"name": "draw 315 of 10**6 in 40 equal cartons", "goal_ms": 10,
     "func": lambda: draw_units(lot_size=10**6, n=315, seed=1, strata="cartons=40")},
    {"name": "draw 42,399 of 10**6, simple random (numpy's full-shuffle branch)", "goal_ms": 100,
     "func": lambda: draw_units(lot_size=10**6, n=42_399, seed=1), "repeat": 5},
    {"name": "cold `lotwise draw --json`", "goal_ms": 1500, "repeat": 5,
     "func": lambda: subprocess.run([sys.executable, "-m", "lotwise", "draw", "--lot-size",
                                     "5000", "--n", "80", "--json"],
                                    check=True, capture_output=True)},
]
