"""Output files across real processes: kill -9 at every step of the write
protocol and at random moments, and eight processes writing into one folder.

Sources: POSIX.1-2017 (IEEE Std 1003.1): SIGKILL cannot be caught, so the
killed process runs no clean-up; rename() is atomic (a reader sees the old
file or the new one, never a mix); flock locks are released when the holder
dies. What is checked is the contract of lotwise.data.files (its module
docstring): after any kill each output is absent, the previous complete file
or the new complete file, a plain re-run accepts it, and no temporary
survives the next run. Exact checks, no tolerance.
"""

from __future__ import annotations

import hashlib
import json
import os
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

import lotwise
from lotwise.cli import main
from lotwise.data import files

ROOT = Path(__file__).resolve().parents[1]
PLANS = ROOT / "plans"
CATALOGUE = ROOT / "examples" / "catalogue.csv"
SRC = str(Path(lotwise.__file__).resolve().parents[1])  # the lotwise under test
pytestmark = pytest.mark.skipif(os.name != "posix", reason="kill -9 and fork")

#: Run lotwise in a child process that kills itself (SIGKILL, no clean-up) just
#: before its K-th call of os.replace -- the steps of the protocol: the intent
#: record, each rename, the confirmed record; K = 0 never kills and reports the
#: number of calls.
KILL_AT = r"""
import os, signal, sys
k, calls, real = int(sys.argv[1]), [0], os.replace
def replace(*a, **kw):
    calls[0] += 1
    if calls[0] == k:
        os.kill(os.getpid(), signal.SIGKILL)
    return real(*a, **kw)
os.replace = replace
from lotwise.cli import main
code = main(sys.argv[2:])
print("REPLACE_CALLS", calls[0], file=sys.stderr)
sys.exit(code)
"""


def env() -> dict:
    e = dict(os.environ, PYTHONPATH=SRC, SOURCE_DATE_EPOCH="1700000000")
    e.pop("PYTEST_CURRENT_TEST", None)
    return e


def lotwise_cmd(*args) -> list:
    return [sys.executable, "-m", "lotwise", *map(str, args)]


def sha(path) -> str:
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def record(folder) -> dict:
    p = Path(folder) / files.RECORD
    return json.loads(p.read_text()) if p.exists() else {}


def temporaries(folder) -> list:
    return sorted(p.name for p in Path(folder).iterdir() if p.name.endswith(".tmp"))


def outputs(folder) -> dict:
    """{name: sha256} of the files in ``folder`` other than the tool's bookkeeping."""
    return {p.name: sha(p) for p in Path(folder).iterdir()
            if p.is_file() and p.name not in (files.RECORD, files.LOCK)
            and not p.name.endswith(".tmp")}


def accepted(entry) -> set:
    return {entry} if isinstance(entry, str) else set(entry or [])


# --- kill -9 at each step of the protocol -------------------------------------------------

def _oc(folder, n, c, *extra):
    return ["oc", "--n", n, "--c", c, "--csv", Path(folder) / "oc.csv",
            "--plot", Path(folder) / "oc.png", *extra]


def _clean(tmp_path, name, n, c) -> dict:
    d = tmp_path / name
    subprocess.run([sys.executable, "-c", KILL_AT, "0", *map(str, _oc(d, n, c))], env=env(),
                   check=True, capture_output=True)
    return outputs(d)


def test_kill_at_every_step_of_the_protocol(tmp_path, capsys):
    old, new = _clean(tmp_path, "old", 50, 1), _clean(tmp_path, "new", 80, 2)
    assert set(old) == set(new) == {"oc.csv", "oc.png"} and old != new
    probe = subprocess.run([sys.executable, "-c", KILL_AT, "0",
                            *map(str, _oc(tmp_path / "probe", 80, 2))],
                           env=env(), capture_output=True, text=True)
    steps = int(probe.stderr.split("REPLACE_CALLS")[1])
    assert steps == 4  # intent, two renames, confirmation
    for k in range(1, steps + 1):
        d = tmp_path / f"k{k}"
        assert main(list(map(str, _oc(d, 50, 1)))) == 0  # the old, complete files
        capsys.readouterr()
        run = subprocess.run([sys.executable, "-c", KILL_AT, str(k),
                              *map(str, _oc(d, 80, 2))], env=env(), capture_output=True)
        assert run.returncode == -signal.SIGKILL
        rec = record(d)
        for name, digest in outputs(d).items():
            assert digest in (old[name], new[name]), (k, name)  # never a partial file
            assert digest in accepted(rec.get(name)), (k, name)  # and always recorded
        assert main(list(map(str, _oc(d, 80, 2)))) == 0, k  # a plain re-run
        capsys.readouterr()
        assert outputs(d) == new and temporaries(d) == []
        assert record(d) == new


def test_kill_while_forcing_never_hands_the_users_file_to_lotwise(tmp_path, capsys):
    """The user's file replaced with --force is not in the intent: killed before
    its rename, it stays the user's and a plain run still refuses it."""
    d = tmp_path / "out"
    d.mkdir()
    (d / "oc.csv").write_text("the user's own table\n")
    for k in (1, 2):  # before the intent record; after it, before the first rename
        run = subprocess.run([sys.executable, "-c", KILL_AT, str(k),
                              *map(str, _oc(d, 80, 2, "--force"))], env=env(),
                             capture_output=True)
        assert run.returncode == -signal.SIGKILL
        assert (d / "oc.csv").read_text() == "the user's own table\n"
        assert main(list(map(str, _oc(d, 80, 2)))) == 2
        assert "--force" in capsys.readouterr().err
    assert (d / "oc.csv").read_text() == "the user's own table\n"


# --- kill -9 from outside, at random moments ------------------------------------------------

JOBS = {  # command, folder it writes, whether its output is the same on every run
    "sheet": (lambda d: ["sheet", PLANS / "qp-2210-manifold-block.toml", "--out", d], True),
    "batch": (lambda d: ["batch", CATALOGUE, "--out", Path(d) / "plans.csv"], True),
    "validate": (lambda d: ["validate", "--out", d], False),  # the report is time-stamped
}


def _run(args, **kw):
    return subprocess.run(lotwise_cmd(*args), env=env(), capture_output=True, **kw)


@pytest.mark.slow
@pytest.mark.parametrize("job", list(JOBS))
def test_kill_at_random_moments(tmp_path, job):
    make, same = JOBS[job]
    start = time.monotonic()
    clean = _run(make(tmp_path / "clean"))
    took = time.monotonic() - start
    assert clean.returncode in (0, 1)
    reference = outputs(tmp_path / "clean")
    rng = random.Random(f"{job}-kills")  # reproducible moments
    d = tmp_path / "killed"
    kills = 2 if job == "validate" else 3  # a validate run takes about 20 s
    for i in range(kills):
        # late in the run, where the files are written, more often than early
        at = took * (rng.uniform(0.6, 1.1) if i % 2 else rng.uniform(0.0, 1.1))
        proc = subprocess.Popen(lotwise_cmd(*make(d)), env=env(), stdout=subprocess.DEVNULL,
                                stderr=subprocess.DEVNULL)
        time.sleep(at)
        proc.send_signal(signal.SIGKILL)
        proc.wait()
        if d.exists():
            rec = record(d)
            for name, digest in outputs(d).items():
                assert name in reference, name
                if same:
                    assert digest == reference[name], (i, name)  # complete, not partial
                assert digest in accepted(rec.get(name)), (i, name)  # and recorded
        again = _run(make(d))  # a plain re-run over whatever the kill left
        assert again.returncode == clean.returncode, again.stderr
        assert temporaries(d) == []
        assert set(outputs(d)) == set(reference)
        if same:
            assert outputs(d) == reference
        assert record(d) == outputs(d)


# --- eight processes, one folder ---------------------------------------------------------------

SHEETS = ["qp-1104-relief-spring", "qp-2210-manifold-block", "qp-4410-o-ring",
          "qp-6630-gasket-proposal"]


@pytest.mark.slow
def test_eight_processes_writing_into_one_folder(tmp_path):
    d = tmp_path / "shared"
    jobs = ([["sheet", PLANS / f"{s}.toml", "--out", d] for s in SHEETS]
            + [["batch", CATALOGUE, "--out", d / f"plans-{i}.csv"] for i in range(4)])
    for rnd in range(3):
        procs = [subprocess.Popen(lotwise_cmd(*j), env=env(), stdout=subprocess.DEVNULL,
                                  stderr=subprocess.PIPE, text=True) for j in jobs]
        errs = [(p.wait(), p.stderr.read()) for p in procs]
        for p in procs:
            p.stderr.close()
        assert all(code in (0, 1) for code, _ in errs), (rnd, errs)  # 1: falls short
        listed = record(d)
        assert listed == outputs(d), f"round {rnd}: the record lost entries"
    assert len(outputs(d)) >= 4 * 4 + 4
    again = _run(jobs[0])  # a plain re-run, no --force
    assert again.returncode in (0, 1), again.stderr
    assert record(d) == outputs(d) and temporaries(d) == []
