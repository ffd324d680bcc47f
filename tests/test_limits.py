"""Targets beyond what any sample can resolve get a clear answer at once.

Reference: the int64 range (2**63 - 1) and the Poisson approximation's sample
size n ~ lambda / RQL (common practice, no source): an AQL of 1e-20 would need
about 1e20 units, beyond any lot and beyond 64-bit counts; the tool refuses
such targets (exit 1, one line) instead of searching for ever.
"""

from __future__ import annotations

import subprocess
import sys
import time

import pytest


@pytest.mark.parametrize("args", [
    ["--aql", "1e-20", "--rql", "2e-20"],
    ["--per-unit", "--aql", "1e-300", "--rql", "2e-300"],
    ["--aql", "1%", "--rql", "1.0000001%"],
])
def test_unresolvable_targets_refused_quickly(args):
    start = time.perf_counter()
    out = subprocess.run([sys.executable, "-m", "lotwise", "design", *args],
                         capture_output=True, text=True, timeout=60)
    took = time.perf_counter() - start
    assert out.returncode == 1
    assert out.stdout == ""
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and ("AQL" in lines[0] or "RQL" in lines[0])
    assert "Warning" not in out.stderr and "Traceback" not in out.stderr
    assert took < 30  # a process start plus one check; generous for a loaded machine
