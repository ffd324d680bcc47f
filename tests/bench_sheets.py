"""Benchmarks of the documents (see benchmark.py): one plan sheet (PDF,
Markdown, PNG, CSV) and the demo (nine plan files), each a whole command in a
child process (start-up and imports included), output into a temporary
folder."""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
_OUT = Path(tempfile.mkdtemp(prefix="lotwise-bench-sheets-"))


def _cli(*args):
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    subprocess.run([sys.executable, "-m", "lotwise", *args], check=True, env=env, cwd=ROOT,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)


CASES = [
    {"name": "sheet CLI: one plan file (qp-1104, three characteristics), PDF + Markdown + "
             "PNG + CSV",
     "func": lambda: _cli("sheet", str(ROOT / "plans" / "qp-1104-relief-spring.toml"),
                          "--out", str(_OUT / "sheet"), "--force"),
     "goal_ms": 1_000, "repeat": 5},
    {"name": "demo CLI: nine plan files, every sheet",
     "func": lambda: _cli("demo", "--out", str(_OUT / "demo"), "--force"),
     "goal_ms": 6_000, "repeat": 3},
]
