"""Benchmarks of the documents (see benchmark.py): one plan sheet (PDF,
Markdown, PNG, CSV) and the demo (nine plan files), each a whole command in a
child process (start-up and imports included), output into a temporary
folder."""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

ROOT = Path(__file__).resolve().parents[1]
_OUT = Path(tempfile.mkdtemp(prefix="lotwise-bench-sheets-"))


def _cli(*args):
    """The command in its own child process; prints its CPU time beside the
    wall time the goal is set on."""
    from bench_child import run_child

    run_child(["-m", "lotwise", *args], cwd=ROOT)


CASES = [
    {"name": "sheet CLI: one plan file (qp-1104, three characteristics), PDF + Markdown + "
             "PNG + CSV",
     "func": lambda: _cli("sheet", str(ROOT / "plans" / "qp-1104-relief-spring.toml"),
                          "--out", str(_OUT / "sheet"), "--force"),
     "goal_ms": 1_000, "repeat": 11},
    {"name": "demo CLI: nine plan files, every sheet",
     "func": lambda: _cli("demo", "--out", str(_OUT / "demo"), "--force"),
     "goal_ms": 6_000, "repeat": 3},
]
