"""Speed benchmarks: medians and ratios measured side by side in one run.

Run ``python tests/benchmark.py`` (add ``--quick`` for fewer repetitions,
``--only NAME`` to filter). Not part of the test suite: timings are printed,
compared with their goals, and copied into DEVELOPERS.md by hand.

Every ``tests/bench_*.py`` module contributes a list ``CASES`` of dicts:

``name``
    what is measured;
``func``
    a callable with no arguments;
``goal_ms`` (optional)
    the goal for the median, in milliseconds;
``baseline`` and ``ratio_goal`` (optional)
    a slower reference callable measured in the same run, and the smallest
    acceptable ratio ``baseline / func``;
``repeat`` (optional)
    repetitions (default 15; baselines run ``baseline_repeat``, default 3);
``paired`` (optional)
    run ``func`` and ``baseline`` alternately, ``repeat`` times each (the
    cold starts: a drift in the machine's speed then reaches both sides);
``peak_mb`` and ``peak_mb_goal`` (optional)
    a callable giving the largest peak memory (MB) of the case's own child
    process over its runs (see bench_child.py), and its goal: above the
    goal the case's verdict is ``OVER``.
"""

from __future__ import annotations

import argparse
import os
import importlib.util
import statistics
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent


def median_ms(func, repeat: int) -> float:
    func()  # warm-up: imports, caches
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        func()
        times.append(time.perf_counter() - t)
    return 1000.0 * statistics.median(times)


def paired_medians_ms(func, baseline, repeat: int) -> tuple[float, float]:
    """Medians of ``func`` and ``baseline`` run alternately (``func``, then
    ``baseline``, ``repeat`` times after one warm-up each), so a drift in the
    machine's speed during the case (other work on the host, frequency
    changes) reaches both sides of the ratio alike."""
    func()
    baseline()
    times: tuple[list, list] = ([], [])
    for _ in range(repeat):
        for side, call in zip(times, (func, baseline)):
            t = time.perf_counter()
            call()
            side.append(time.perf_counter() - t)
    return 1000.0 * statistics.median(times[0]), 1000.0 * statistics.median(times[1])


def _ratio(r: float) -> str:
    return f"{r:,.0f}x" if r >= 10 else f"{r:.2f}x"


def load_cases():
    sys.path.insert(0, str(HERE))
    for path in sorted(HERE.glob("bench_*.py")):
        spec = importlib.util.spec_from_file_location(path.stem, path)
        mod = importlib.util.module_from_spec(spec)
        spec.loader.exec_module(mod)
        for case in getattr(mod, "CASES", []):
            yield path.stem, case


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    # A user's install keeps compiled bytecode; on a machine set to write none every
    # command started below would recompile lotwise and the timings would measure the
    # compiler. The first start writes the bytecode, as a user's first run does.
    os.environ.pop("PYTHONDONTWRITEBYTECODE", None)
    sys.dont_write_bytecode = False
    ap.add_argument("--quick", action="store_true", help="fewer repetitions")
    ap.add_argument("--only", default=None, help="run cases whose name contains this text")
    ap.add_argument("--skip", action="append", default=[],
                    help="leave out cases whose name contains this text (repeatable)")
    args = ap.parse_args(argv)
    rows = []
    for module, case in load_cases():
        if any(text in case["name"] for text in args.skip):
            continue
        if args.only and args.only not in case["name"]:
            continue
        rep = case.get("repeat", 15)
        if args.quick:
            rep = max(3, rep // 3)
        if case.get("paired"):
            med, base = paired_medians_ms(case["func"], case["baseline"], rep)
        else:
            med = median_ms(case["func"], rep)
        goal = case.get("goal_ms")
        status = "" if goal is None else ("ok" if med <= goal else "SLOW")
        ratio = None
        if case.get("baseline") is not None:
            if not case.get("paired"):
                base = median_ms(case["baseline"], case.get("baseline_repeat", 3))
            ratio = base / med if med > 0 else float("inf")
            rg = case.get("ratio_goal")
            if rg is not None:
                status = "SLOW" if ratio < rg or status == "SLOW" else "ok"
        if case.get("peak_mb") is not None:
            peak, cap = case["peak_mb"](), case.get("peak_mb_goal")
            print(f"    largest peak RSS of the case's child: {peak:.0f} MB"
                  + ("" if cap is None else f" (goal <= {cap:g} MB)"))
            if cap is not None and (peak is None or peak > cap):
                status = "OVER" if status != "SLOW" else "SLOW, OVER"
        rows.append((case["name"], med, goal, ratio, case.get("ratio_goal"), status))
        rg = case.get("ratio_goal")
        r = "" if ratio is None else f"  ratio {_ratio(ratio)}" + (
            "" if rg is None else f" (goal >= {rg}x)")
        g = "" if goal is None else f" (goal <= {goal:g} ms)"
        print(f"{case['name']}: median {med:.2f} ms{g}{r}  {status}", flush=True)
    print()
    print("| case | median | goal | ratio to baseline | verdict |")
    print("|---|---|---|---|---|")
    for name, med, goal, ratio, rg, status in rows:
        print(f"| {name} | {med:.2f} ms | {'' if goal is None else f'<= {goal:g} ms'} | "
              f"{'' if ratio is None else _ratio(ratio) + ('' if rg is None else f' (goal >= {rg}x)')}"
              f" | {status or '-'} |")
    return 1 if any(r[-1] not in ("", "ok") for r in rows) else 0


if __name__ == "__main__":
    sys.exit(main())
