"""One benchmark command in a child process of its own, with that child's
peak memory and CPU time (used by the bench_*.py modules; no CASES here)."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


#: Runs ``python -m MODULE ARGS`` / ``python SCRIPT ARGS`` and writes, at exit,
#: the VmHWM of the process's own memory map: ``ru_maxrss`` would carry the
#: benchmark's own peak over into a child started by fork or vfork and exec.
_WRAPPER = """
import atexit, os, re, runpy, sys
def _hwm():
    with open("/proc/self/status") as f:
        kb = re.search(r"VmHWM:\\s+(\\d+)", f.read()).group(1)
    with open(os.environ["LOTWISE_BENCH_HWM"], "w") as f:
        f.write(kb)
atexit.register(_hwm)
args = sys.argv[1:]
if args[0] == "-m":
    sys.argv = [args[1]] + args[2:]
    runpy.run_module(args[1], run_name="__main__", alter_sys=True)
else:
    sys.argv = args
    runpy.run_path(args[0], run_name="__main__")
"""

#: Largest peak RSS (MB) seen per key, over the runs of a case.
PEAKS: dict = {}


def run_child(args, *, key: str = "", peak_goal_mb: float | None = None, cwd=ROOT,
              ok_codes=(0,)) -> tuple:
    """Run ``python *args`` (lotwise from this checkout) and wait for it with
    ``os.wait4``, which reports the CPU time of that one child; its peak
    RSS is the child's own VmHWM (not the largest of all children so far,
    as ``RUSAGE_CHILDREN`` would give). Prints both; raises when the command exits
    with a code not in ``ok_codes`` (``batch`` and ``records`` exit 1, their output
    written, when a row failed or a disposition disagrees: see the README) or
    the peak is above ``peak_goal_mb``. Returns ``(peak_mb, cpu_s)``."""
    import tempfile

    with tempfile.NamedTemporaryFile(suffix=".hwm", delete=False) as f:
        hwm = f.name
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"), LOTWISE_BENCH_HWM=hwm)
    proc = subprocess.Popen([sys.executable, "-c", _WRAPPER, *args], env=env, cwd=cwd,
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(proc.pid, 0)
    proc.returncode = os.waitstatus_to_exitcode(status)
    if proc.returncode not in ok_codes:
        raise subprocess.CalledProcessError(proc.returncode, args)
    peak = int(Path(hwm).read_text() or 0) / 1024  # VmHWM in kB
    os.unlink(hwm)
    cpu = usage.ru_utime + usage.ru_stime
    verdict = "" if peak_goal_mb is None else (" ok" if peak <= peak_goal_mb else " OVER")
    goal = "" if peak_goal_mb is None else f" (goal <= {peak_goal_mb:g} MB)"
    print(f"    this run: peak RSS {peak:.0f} MB{goal}{verdict}, CPU {cpu:.2f} s "
          "(user + system, the child and not its own workers)")
    PEAKS[key] = max(PEAKS.get(key, 0.0), peak)
    return peak, cpu
