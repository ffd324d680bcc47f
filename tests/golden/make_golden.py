"""Write the golden snapshots: one JSON file per case of ``cases.toml``.

Usage (from anywhere)::

    .venv/bin/python tests/golden/make_golden.py            # write missing snapshots
    .venv/bin/python tests/golden/make_golden.py NAME ...   # only these cases
    .venv/bin/python tests/golden/make_golden.py --force    # rewrite existing ones too

Each case is run in-process through ``lotwise.cli.main`` by the runner of
``tests/test_golden.py`` and stored as ``{"argv", "exit", "json"}``,
pretty-printed with sorted keys. A case that ends in an internal error, or
whose stdout is not one JSON document, is refused and reported.

The snapshots in the repository were taken from lotwise 0.1 before the
plan-spine refactor. Rewriting one after that refactor throws away what it
guards: name a deliberate difference in ``CHANGED`` in ``tests/test_golden.py``
instead, and use ``--force`` only for a new case or with a reason in the commit.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

TESTS = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(TESTS))

import test_golden as tg  # noqa: E402  (the runner shared with the test)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("names", nargs="*", help="only these cases (default: all)")
    parser.add_argument("--force", action="store_true", help="rewrite existing snapshots")
    args = parser.parse_args(argv)

    cases = tg.load_cases()
    known = {c["name"] for c in cases}
    unknown = [n for n in args.names if n not in known]
    if unknown:
        print(f"make_golden: unknown case(s): {', '.join(unknown)}", file=sys.stderr)
        return 2
    if args.names:
        cases = [c for c in cases if c["name"] in args.names]

    tg.SNAPSHOTS.mkdir(parents=True, exist_ok=True)
    refused, written, kept = [], 0, 0
    start = time.perf_counter()
    for case in cases:
        path = tg.SNAPSHOTS / f"{case['name']}.json"
        if path.exists() and not args.force:
            kept += 1
            continue
        t0 = time.perf_counter()
        try:
            result = tg.run_case(case["argv"])
        except ValueError as exc:  # stdout not JSON
            refused.append((case, f"stdout is not one JSON document ({exc})"))
            continue
        if tg.CRASH_MARK in result["stderr"]:
            refused.append((case, result["stderr"].strip()))
            continue
        snap = {"argv": case["argv"], "exit": result["exit"], "json": result["json"]}
        tmp = path.with_suffix(".json.tmp")
        tmp.write_text(json.dumps(snap, indent=2, sort_keys=True, ensure_ascii=False) + "\n",
                       encoding="utf-8")
        tmp.replace(path)
        written += 1
        print(f"{time.perf_counter() - t0:6.2f} s  exit {result['exit']}  {case['name']}")
    print(f"{written} written, {kept} kept, {len(refused)} refused "
          f"in {time.perf_counter() - start:.1f} s")
    for case, why in refused:
        print(f"REFUSED {case['name']}: lotwise {' '.join(case['argv'])}\n    {why}",
              file=sys.stderr)
    return 1 if refused else 0


if __name__ == "__main__":
    sys.exit(main())
