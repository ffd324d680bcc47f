"""Benchmarks for single-sampling design and OC curves (see benchmark.py)."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np

from lotwise.core import kernels as oc
from lotwise.families.single import design_single
from lotwise.core.types import Scope
from lotwise.families.single import SinglePlan

AQL, RQL, ALPHA, BETA = 0.001, 0.0015, 0.05, 0.10


def exhaustive_scan(lot_size=None, c_max=200):
    """What a spreadsheet user does: walk n = 1, 2, ... and for each n evaluate
    every acceptance number 0 .. min(n, c_max) at once (one column of the
    sheet), until a pair meets both risks. ``c_max`` = 200 is generous for
    these targets (the answer has c = 53) and keeps the scan affordable."""
    d1 = d2 = None
    if lot_size:
        d1 = oc.lot_count(AQL, lot_size, "up")
        d2 = oc.lot_count(RQL, lot_size, "down")
    n = 0
    while True:
        n += 1
        cs = np.arange(0, min(n, c_max) + 1)
        if lot_size:
            pa1 = oc.pa_hypergeometric(n, cs, lot_size, d1)
            pa2 = oc.pa_hypergeometric(n, cs, lot_size, d2)
        else:
            pa1 = oc.pa_binomial(n, cs, AQL)
            pa2 = oc.pa_binomial(n, cs, RQL)
        ok = (np.asarray(pa1) >= 1 - ALPHA) & (np.asarray(pa2) <= BETA)
        if ok.any():
            return n, int(np.argmax(ok))


PLAN = SinglePlan(n=125, c=3)
PS = np.linspace(0, 0.2, 1000)

CASES = [
    {"name": "design single, binomial, AQL 0.1 %/RQL 0.15 % (n = 42,399, c = 53)",
     "func": lambda: design_single(aql=AQL, rql=RQL), "goal_ms": 20,
     "baseline": lambda: exhaustive_scan(None), "ratio_goal": 100},
    {"name": "design single, hypergeometric, same targets, lot of 1,000,000",
     "func": lambda: design_single(aql=AQL, rql=RQL, lot_size=1_000_000), "goal_ms": 20,
     "baseline": lambda: exhaustive_scan(1_000_000), "ratio_goal": 100, "baseline_repeat": 1},
    {"name": "OC curve, 1,000 points, binomial", "goal_ms": 5,
     "func": lambda: PLAN.pa(PS, "binomial", Scope())},
    {"name": "OC curve, 1,000 points, Poisson", "goal_ms": 5,
     "func": lambda: PLAN.pa(PS, "poisson", Scope())},
    {"name": "OC curve, 1,000 points, hypergeometric (lot 5,000)", "goal_ms": 5,
     "func": lambda: PLAN.pa(PS, "hypergeometric", Scope(lot_size=5000))},
]


#: A user's install keeps compiled bytecode; a machine set to write none
#: (PYTHONDONTWRITEBYTECODE) would compile every lotwise module on every start and
#: measure the compiler, so the cold starts run with bytecode allowed (the first
#: run writes it, as a user's first run does).
_ENV = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}


def _cold(args):
    subprocess.run(args, check=True, capture_output=True, env=_ENV)


def _lotwise_command() -> list[str]:
    """The installed ``lotwise`` command (the console script beside this
    interpreter), as a user starts it; ``python -m lotwise`` where there is
    none (it adds runpy's start-up, about 5 ms)."""
    script = Path(sys.executable).with_name("lotwise")
    return [str(script)] if script.is_file() else [sys.executable, "-m", "lotwise"]


_LOTWISE = _lotwise_command()
_CLI = [*_LOTWISE, "design", "--aql", "0.1%", "--rql", "0.15%", "--json"]
_BASE = [sys.executable, "-c", "import numpy, scipy.special"]

CASES.append({
    "name": "cold `lotwise design --json` vs `python -c 'import numpy, scipy.special'` "
            "(ratio shown is baseline/CLI; goal CLI <= 1.3x baseline, i.e. ratio >= 0.77)",
    "func": lambda: _cold(_CLI), "baseline": lambda: _cold(_BASE), "ratio_goal": 0.77,
    "repeat": 21, "paired": True,
})


# --- single design near the limit: time, and CDF evaluations beside the
# (c + 1) log2 n cost of scanning every acceptance number up to the answer.

def _evaluations(kw):
    """CDF evaluations of one design (the kernel counts them) and the bound."""
    import math

    from lotwise.core import search

    seen = []
    real = search.Kernel.__init__

    def spy(self, *a, **k):
        real(self, *a, **k)
        seen.append(self)

    search.Kernel.__init__ = spy
    try:
        d = design_single(**kw)
    finally:
        search.Kernel.__init__ = real
    return seen[-1].evaluations, (d.c + 1) * math.log2(d.n), d


NEAR = [
    ("binomial, AQL 1 %/RQL 1.05 %", dict(aql=0.01, rql=0.0105), 50),
    ("Poisson (per unit), AQL 1 %/RQL 1.05 %", dict(aql=0.01, rql=0.0105, per_unit=True), 50),
    ("hypergeometric, lot 10^9, AQL 1 %/RQL 1.05 %",
     dict(aql=0.01, rql=0.0105, lot_size=10**9), 50),
    ("hypergeometric, lot 10^6, AQL 0.1 %/RQL 0.15 %",
     dict(aql=0.001, rql=0.0015, lot_size=10**6), 50),
    ("binomial, AQL 1 %/RQL 6 %", dict(aql=0.01, rql=0.06), 50),
    ("binomial, AQL 1 %/RQL 1.01 %", dict(aql=0.01, rql=0.0101), 1000),
    ("hypergeometric, lot 10^9, AQL 1 %/RQL 1.02 %",
     dict(aql=0.01, rql=0.0102, lot_size=10**9), 1000),
]

for _label, _kw, _goal in NEAR:
    _ev, _bound, _d = _evaluations(_kw)
    CASES.append({
        "name": f"design single, {_label} (n = {_d.n:,}, c = {_d.c:,}; {_ev:,} CDF evaluations, "
                f"(c + 1) log2 n = {_bound:,.0f})",
        "func": (lambda kw=_kw: design_single(**kw)), "goal_ms": _goal, "repeat": 5})


def _refused():
    from lotwise.core.quantities import Infeasible

    try:
        design_single(aql=1e-20, rql=2e-20)
    except Infeasible:
        return
    raise AssertionError("AQL 1e-20 was not refused")


CASES.append({"name": "design single, AQL 1e-20: a clear error", "func": _refused,
              "goal_ms": 1000, "repeat": 5})

# Cold start of every design scheme against the same baseline (there is no
# multiple-plan designer; the chain designer finds no plan at these targets).
for _scheme, _extra in (("double", []), ("sequential", []),
                        ("variables", ["--sigma", "unknown"])):
    _cmd = [*_LOTWISE, "design", "--scheme", _scheme, "--aql", "1%",
            "--rql", "6%", "--json", *_extra]
    CASES.append({
        "name": f"cold `lotwise design --scheme {_scheme} --json` (AQL 1 %/RQL 6 %) vs the "
                "same baseline (goal ratio >= 0.77)",
        "func": (lambda cmd=_cmd: _cold(cmd)), "baseline": lambda: _cold(_BASE),
        "ratio_goal": 0.77, "repeat": 21, "paired": True})

# The command line asks for one BLAS thread (lotwise.cli.BLAS_THREADS), which
# spares it the start-up of numpy's thread pool; the baseline above runs with
# the default pool. For comparison, the same cold start against a baseline
# started with one BLAS thread too (no goal: the goal is set on the baseline above).
_ENV1 = dict(_ENV, OPENBLAS_NUM_THREADS="1", MKL_NUM_THREADS="1")
CASES.append({
    "name": "for comparison: cold `lotwise design --json` vs the baseline with one BLAS thread "
            "(as the CLI runs)",
    "func": lambda: _cold(_CLI),
    "baseline": lambda: subprocess.run(_BASE, check=True, capture_output=True, env=_ENV1),
    "repeat": 21, "paired": True,
})
