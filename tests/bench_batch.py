"""Benchmarks for whole-catalogue batch design and lot-record summaries (see
benchmark.py). The data are generated (seeded) once, when the module loads:

* a catalogue of 100,000 parts with lot sizes drawn from 50 to 500,000 (so
  nearly every row is its own design problem: the hard case for the cache),
  and the same with lot sizes from 2,000 standard sizes;
* a history of 100,000 lots from 80 suppliers and 25 parts (2,000 groups).

Each case runs the whole job in-process, from the CSV file to the result:
reading, designing or summarising, and (for the batch) writing the output
CSV text.
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from generated import catalogue, history  # noqa: E402
from lotwise.data.batch import design_catalogue, read_catalogue
from lotwise.data.records import read_records, summarise

_DIR = Path(tempfile.mkdtemp(prefix="lotwise-bench-"))
_CAT = _DIR / "catalogue.csv"
_CAT_STD = _DIR / "catalogue-standard-lots.csv"
_LOTS = _DIR / "lots.csv"
catalogue(100_000, seed=3).to_csv(_CAT, index=False)
catalogue(100_000, seed=3, distinct_lots=2000).to_csv(_CAT_STD, index=False)
pd.concat([
    history(50_000, p=0.01, seed=4, suppliers=tuple(f"S{i}" for i in range(40)),
            parts=tuple(f"P{i}" for i in range(25))),
    history(50_000, p=0.02, seed=5, suppliers=tuple(f"T{i}" for i in range(40)),
            parts=tuple(f"P{i}" for i in range(25)), plan=(125, 3)),
]).to_csv(_LOTS, index=False)


def _batch(path):
    res = design_catalogue(read_catalogue(path))
    return res.table.to_csv(index=False)


def _records():
    return summarise(read_records(_LOTS), charts=False).as_dict()


CASES = [
    {"name": "batch: 100,000 catalogue rows, lot sizes 50..500,000 (about 80,000 distinct "
             "designs), read + design + CSV",
     "func": lambda: _batch(_CAT), "goal_ms": 30_000, "repeat": 3},
    {"name": "batch: 100,000 catalogue rows, 2,000 standard lot sizes, read + design + CSV",
     "func": lambda: _batch(_CAT_STD), "goal_ms": 30_000, "repeat": 3},
    {"name": "records: summary of 100,000 lots (2,000 supplier/part groups), read + summarise",
     "func": _records, "goal_ms": 5_000, "repeat": 5},
]


# --- a million rows (mostly repeated targets), each job in a child process ----------

_BIG = _DIR / "catalogue-1m.csv"
_BIG_LOTS = _DIR / "lots-1m.csv"


def _big_files():
    """A catalogue of 10^6 parts over 200 standard lot sizes (about 54,000
    distinct designs) and a log of 10^6 lots; written on first use."""
    if not _BIG.exists():
        catalogue(1_000_000, seed=3, distinct_lots=200).to_csv(_BIG, index=False)
        pd.concat([
            history(500_000, p=0.01, seed=4, suppliers=tuple(f"S{i}" for i in range(40)),
                    parts=tuple(f"P{i}" for i in range(25))),
            history(500_000, p=0.02, seed=5, suppliers=tuple(f"T{i}" for i in range(40)),
                    parts=tuple(f"P{i}" for i in range(25)), plan=(125, 3)),
        ]).to_csv(_BIG_LOTS, index=False)


def _cli(key, *args):
    """The command in a child process of its own; prints that child's peak
    memory (RSS, read by ``os.wait4`` for this child alone, not the largest
    child so far) and CPU time (user + system) and keeps the peak for the
    case's ``peak_mb_goal``."""
    from bench_child import run_child

    _big_files()
    run_child(["-m", "lotwise", *args], key=key, peak_goal_mb=500, ok_codes=(0, 1))


def _peak(key):
    from bench_child import PEAKS

    return lambda: PEAKS.get(key)


CASES += [
    {"name": "batch CLI: 10^6 catalogue rows, 200 standard lot sizes, read + design + write "
             "(peak RSS <= 500 MB)",
     "func": lambda: _cli("batch", "batch", str(_BIG), "--out", str(_DIR / "plans-1m.csv"),
                          "--force"),
     "goal_ms": 10_000, "repeat": 3, "peak_mb": _peak("batch"), "peak_mb_goal": 500},
    {"name": "records CLI: 10^6 lots, --json (peak RSS <= 500 MB)",
     "func": lambda: _cli("records", "records", str(_BIG_LOTS), "--json"), "goal_ms": 5_000,
     "repeat": 3, "peak_mb": _peak("records"), "peak_mb_goal": 500},
]
