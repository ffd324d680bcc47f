"""Generated invocations of every command: the promises of the command line hold
for any input.

Each example is one ``lotwise`` invocation drawn by hypothesis from a table of
every command's options, with values from pools of valid, borderline, extreme
and malformed inputs (including plan notations of every family and the example
files). Whatever the input, the invocation must:

- exit with a code its command may give by the README's table ("Exit codes": 0
  done/meets/accept, 1 falls short/no plan/reject/a row failed, 2 malformed
  input, 3 continue on the bench -- ``next`` only);
- on exit 2, print exactly one line on stderr and no traceback;
- with ``--json``, print exactly one JSON object on stdout with no NaN or
  Infinity, whose probabilities (keys ``pa*``, ``alpha``, ``beta``) lie in
  [0, 1] and whose sample size does not exceed its lot size (unless it says
  every item is inspected);
- raise no Python warning (numpy's RuntimeWarning included);
- finish within a time limit.

Common practice, no source: these are the command line's own rules (README,
"Bad input" and "Exit codes").

The quick profile (a few hundred invocations) runs with the suite. The long
profile (10,000 invocations) runs before a release::

    LOTWISE_FUZZ=long .venv/bin/python -m pytest -q tests/test_fuzz.py

and its last result is recorded in DEVELOPERS.md.
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import os
import shutil
import signal
import time
import warnings
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lotwise.cli import main

ROOT = Path(__file__).resolve().parent.parent
LONG = os.environ.get("LOTWISE_FUZZ") == "long"
#: Seconds one invocation may take (the long profile's limit is the project's
#: promise of one minute; the quick profile keeps the suite short).
LIMIT = 60 if LONG else 30

# --- value pools ---------------------------------------------------------------------

MALFORMED = ["", " ", "abc", "1.2.3", "--", "1e", "%", "nan", "inf", "-inf", "NaN%",
             "1,2,3", "0x10", "½", "1 000 000", "None", "true"]
HUGE = ["99999999999999999999", "1e308", "-1e308", "1e-320", "9" * 400,
        "18446744073709551617", "9223372036854775808"]
FRACTION = ["1%", "0.5%", "0.065", "2.5 %", "250ppm", "0", "0%", "100%", "101%", "-1%",
            "1e-20", "1e-15", "0.999999", "1", "50%", "8%", "6%", "10%", "1.01%",
            "0,65%", "1,500ppm"]
RISK = ["5%", "10%", "0.05", "0.1", "0", "1", "50%", "99.9%", "1e-12", "-5%", "120%"]
COUNT = ["0", "1", "2", "3", "13", "50", "80", "125", "1,000", "1_000", "-1", "2.5",
         "1000000", "1000000000000", "1000000000001"]
LEVEL_PER_UNIT = ["0.2", "3", "0.001", "10", "0", "1e-300"]
MODEL = ["binomial", "poisson", "hypergeometric", "BINOMIAL", "normal", ""]
PLANS = [
    "n=50,c=1", "n=80,c=2", "n=1,c=0", "n=13,c=13", "n=5,c=9", "n=0,c=0",
    "n1=20,c1=0,r1=3,n2=40,c2=3", "n1=30,c1=1,r1=4,n2=2,c2=4", "n1=3,c1=3",
    "multiple: n=20/20/20; c=-/1/3; r=2/3/4", "multiple: n=10/2/2; c=-/3/4; r=3/5/5",
    "sequential: p1=1%,p2=5%", "sequential: p1=0.05,p2=0.2,truncate=100",
    "sequential: p1=1%,p2=1.0001%,truncate=300",
    "chain: n=20,i=3", "skiplot: n=50,c=1,i=4,f=0.25",
    "variables: n=5,k=1.5,lower=0", "variables: n=42,k=1.9,upper=25",
    "variables: n=20,k=1.6,lower=0,upper=10",
    "csp1: i=20,f=0.1", "csp2: i=20,f=1/10", "csp3: i=30,f=0.2,k=5,burst=4",
    "n=50", "c=1", "n=50,c=1,r=5", "bogus: n=1", "n=50;c=1", "n1=10,c1=5,r1=3,n2=5,c2=1",
]
PATH_OUT = ["out.png", "out.svg", "out.pdf", ".png", "out.txt", "x" * 300 + ".png",
            "missing-dir/out.png", "out.csv", "-"]
FILES = {"catalogue": "examples/catalogue.csv", "lots": "examples/lots.csv",
         "history": "examples/history.csv", "shafts": "examples/shafts.csv",
         "switching": "examples/switching-lots.csv", "plans": "plans",
         "plan1": "plans/qp-1104-relief-spring.toml", "plan4": "plans/qp-4410-o-ring.toml",
         "scheme": "plans/qp-8840-switching.toml"}


def pool(*parts):
    return st.sampled_from([v for part in parts for v in part])


FRAC = pool(FRACTION, MALFORMED[:6], HUGE[:3])
RSK = pool(RISK, MALFORMED[:4])
CNT = pool(COUNT, MALFORMED[:5], HUGE)
PLAN = pool(PLANS, MALFORMED[:3])
RATE = pool(["0", "5%", "10%", "0.3", "60%", "1", "-1%", "x"])
STUDY = pool(["missed 4 of 50 nonconforming; flagged 2 of 50 conforming",
              "missed 0 of 10 nonconforming; flagged 0 of 10 conforming",
              "missed 60 of 50 nonconforming; flagged 2 of 50 conforming", "x"])
ERRORS = {"--miss-rate": RATE, "--false-alarm": RATE, "--study": STUDY}

#: command -> (option -> strategy of its value, or None for a flag)
COMMANDS = {
    "design": {**ERRORS, "--aql": FRAC, "--rql": FRAC, "--alpha": RSK, "--beta": RSK,
               "--lot-size": CNT, "--model": pool(MODEL), "--per-unit": None,
               "--scheme": pool(["single", "double", "sequential", "chain", "variables",
                                 "csp1", "csp2", "csp3", "compare-all", "multiple", "x"]),
               "--c": CNT, "--n": CNT, "--max-n": CNT,
               "--minimize": pool(["ati", "cost", "asn-aql", "asn-max", "afi", "x"]),
               "--process-average": FRAC, "--aoql": FRAC,
               "--sigma": pool(["known", "unknown", "x"]), "--sigma-value": CNT,
               "--limit": pool(["upper", "lower", "both", "x"]), "--lower": CNT,
               "--upper": CNT, "--ratio": pool(["2", "0.5", "0", "11", "x"]),
               "--truncate": CNT, "--f": pool(["0.1", "1/10", "10%", "0", "2", "x"]),
               "--i": CNT},
    "check": {**ERRORS, "--plan": PLAN, "--n": CNT, "--c": CNT, "--aql": FRAC, "--rql": FRAC,
              "--alpha": RSK, "--beta": RSK, "--lot-size": CNT, "--model": pool(MODEL),
              "--per-unit": None, "--aoq-formula": pool(["screened", "simple", "x"]),
              "--skip-lot": pool(["i=4,f=0.25", "i=0,f=2", "x"]), "--at": FRAC,
              "--run-length": CNT},
    "oc": {**ERRORS, "--plan": PLAN, "--n": CNT, "--c": CNT, "--lot-size": CNT,
           "--model": pool(MODEL), "--per-unit": None, "--max-p": FRAC,
           "--points": pool(["5", "21", "0", "1", "100000", "x"]), "--at": FRAC,
           "--aql": FRAC, "--rql": FRAC},
    "compare": {**ERRORS, "--plan": PLAN, "--aql": FRAC, "--rql": FRAC, "--alpha": RSK,
                "--beta": RSK, "--lot-size": CNT, "--model": pool(MODEL),
                "--per-unit": None, "--designed": None},
    "zero": {"--rql": FRAC, "--beta": RSK, "--aql": FRAC, "--alpha": RSK, "--plan": PLAN,
             "--n": CNT, "--c": CNT, "--lot-size": CNT, "--model": pool(MODEL),
             "--per-unit": None, "--max-n": CNT},
    "demonstrate": {"--confidence": RSK, "--reliability": FRAC, "--failures": CNT,
                    "--tested": CNT, "--lot-size": CNT},
    "next": {"--plan": PLAN, "--inspected": CNT, "--found": CNT, "--per-unit": None,
             "--seed": CNT, "--systematic": None, "--lot-size": CNT,
             "--history": pool(["", "ggb", "0110", "x"]), "--clean-lots": CNT},
    "draw": {"--lot-size": CNT, "--n": CNT, "--seed": CNT,
             "--strata": pool(["trays=4", "trays=0", "x", "cartons=40"]), "--plan": PLAN},
    "judge": {"--plan": PLAN,
              "--values": pool(["1,2,3,4,5", "1e308,1.5e308,1.7e308,1.2e308,1.6e308",
                                "1e-320,2e-320,3e-320,4e-320,5e-320", "1,1,1,1,1", "x",
                                "24.9,24.95,24.97,24.93,24.96"])},
    "tradeoff": {"--aql": FRAC, "--rql": FRAC, "--alpha": RSK, "--beta": RSK,
                 "--lot-size": CNT, "--model": pool(MODEL), "--process-average": FRAC},
}
FILE_COMMANDS = {
    "records": ["lots", "history", "switching", "shafts", "catalogue"],
    "supplier": ["lots", "history"],
    "batch": ["catalogue", "lots", "shafts"],
    "sheet": ["plan1", "plan4", "plans", "lots"],
    "scheme": ["scheme", "plan1"],
}


# Well-formed values only: a third of the invocations start from a command's required
# options with these, so the generated runs reach the computations (designs, walks,
# sheets) and not only the input checks.
FRAC_LOW = pool(["0.1%", "0.5%", "1%", "0,65%", "250ppm", "2%"])
FRAC_HIGH = pool(["1.01%", "1.5%", "3%", "6%", "8%", "10%", "15%", "2,5%"])
FRAC_OK = pool(["0.1%", "0.5%", "1%", "0,65%", "250ppm", "2%", "6%", "8%", "10%"])
RSK_OK = pool(["5%", "10%", "0.05", "1%", "20%"])
CNT_OK = pool(["1", "2", "3", "13", "50", "80", "125", "500", "1,000", "1_000", "20000",
               "1000000"])
PLAN_OK = pool([p for p in PLANS[:22] if "1.0001" not in p])
GOOD = {id(FRAC): FRAC_OK, id(RSK): RSK_OK, id(CNT): CNT_OK, id(PLAN): PLAN_OK}
REQUIRED = {
    "design": [("--aql", FRAC_LOW), ("--rql", FRAC_HIGH)],
    "check": [("--plan", PLAN_OK), ("--aql", FRAC_LOW), ("--rql", FRAC_HIGH)],
    "oc": [("--plan", PLAN_OK)],
    "compare": [("--plan", PLAN_OK), ("--plan", PLAN_OK), ("--aql", FRAC_LOW),
                ("--rql", FRAC_HIGH)],
    "zero": [("--rql", FRAC_HIGH)],
    "demonstrate": [("--reliability", pool(["99%", "95%", "99.9%"])),
                    ("--confidence", pool(["90%", "95%"]))],
    "next": [("--plan", PLAN_OK), ("--inspected", pool(["0", "1", "5", "20", "50"])),
             ("--found", pool(["0", "1", "2", "4"]))],
    "draw": [("--lot-size", pool(["100", "5000", "1000000"])),
             ("--n", pool(["1", "13", "80"]))],
    "judge": [("--plan", pool(PLANS[16:19]))],
    "tradeoff": [("--aql", pool(["1%", "0.65%,1%", "0.5%"])),
                 ("--rql", pool(["6%", "2%..8%:2%", "5%,10%"]))],
}


@st.composite
def well_formed(draw, cmd):
    """A command's required options with well-formed values, and up to three
    more of its options with well-formed values where the option has them."""
    args = [cmd]
    for opt, strat in REQUIRED[cmd]:
        args += [opt, draw(strat)]
    options = COMMANDS[cmd]
    more = draw(st.lists(st.sampled_from(sorted(set(options) - {o for o, _ in REQUIRED[cmd]})),
                         max_size=3, unique=True))
    for opt in more:
        strat = options[opt]
        args.append(opt)
        if strat is not None:
            args.append(draw(GOOD.get(id(strat), strat)))
    return args + (["--json"] if draw(st.booleans()) else [])


@st.composite
def invocation(draw):
    """One argument list: a command, some of its options, maybe --json (a third
    of them built from the command's required options, :func:`well_formed`)."""
    names = sorted(COMMANDS) + sorted(FILE_COMMANDS)
    cmd = draw(st.sampled_from(names))
    if cmd in REQUIRED and draw(st.integers(0, 2)) == 0:
        return draw(well_formed(cmd))
    args = [cmd]
    if cmd in FILE_COMMANDS:
        args.append(FILES[draw(st.sampled_from(FILE_COMMANDS[cmd]))])
        if cmd in ("sheet", "batch"):
            args += ["--out", "out"]
        return args + (["--json"] if draw(st.booleans()) else [])
    options = COMMANDS[cmd]
    chosen = draw(st.lists(st.sampled_from(sorted(options)), max_size=6, unique=True))
    for opt in chosen:
        strat = options[opt]
        args.append(opt)
        if strat is not None:
            args.append(draw(strat))
    if draw(st.booleans()):
        args.append("--json")
    return args


#: Exit codes each command may give (README, "Exit codes"; common practice, no source:
#: the command line's own table). Every command may exit 0 and 2.
EXIT_ONE = {"design", "check", "zero", "demonstrate", "next", "judge", "records", "batch",
            "sheet", "scheme"}
ALLOWED = {cmd: {0, 2} | ({1} if cmd in EXIT_ONE else set()) | ({3} if cmd == "next" else set())
           for cmd in list(COMMANDS) + list(FILE_COMMANDS)}


# --- the checks ----------------------------------------------------------------------

class Overrun(BaseException):  # not caught by the CLI's catch-all
    pass


def _alarm(signum, frame):
    raise Overrun()


def _reject_constant(name):
    raise ValueError(f"non-finite number {name} in JSON")


PROB = ("pa", "alpha", "beta")


def _walk(obj, path=""):
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield from _walk(v, f"{path}.{k}")
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from _walk(v, f"{path}[{i}]")
    else:
        yield path, obj


def check_json(out: str):
    obj = json.loads(out, parse_constant=_reject_constant)  # exactly one object
    assert isinstance(obj, dict), out[:200]
    for path, v in _walk(obj):
        key = path.rsplit(".", 1)[-1]
        if isinstance(v, float):
            assert math.isfinite(v), path
            if key.startswith(PROB) and "[" not in key and not key.endswith(("_ms", "_s")):
                if key in ("alpha", "beta") or key.startswith("pa"):
                    assert -1e-12 <= v <= 1 + 1e-12, (path, v)
    n, lot = obj.get("n"), obj.get("lot_size")
    if isinstance(n, int) and isinstance(lot, int) and not obj.get("full_inspection"):
        assert n <= lot, (n, lot)


def run_one(args, workdir: Path):
    out, err = io.StringIO(), io.StringIO()
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.alarm(LIMIT)
    cwd = os.getcwd()
    os.chdir(workdir)
    t0 = time.perf_counter()
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
                code = main(args)
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)
        os.chdir(cwd)
    elapsed = time.perf_counter() - t0
    return code, out.getvalue(), err.getvalue(), [str(w.message) for w in caught], elapsed


#: What the run went through, written to $LOTWISE_FUZZ_LOG (if set) after each
#: invocation: the figures the long profile's record in DEVELOPERS.md quotes.
TALLY = {"invocations": 0, "exit_codes": {}, "slowest_s": 0.0, "slowest": ""}


def _tally(args, code, elapsed):
    TALLY["invocations"] += 1
    TALLY["exit_codes"][str(code)] = TALLY["exit_codes"].get(str(code), 0) + 1
    if elapsed > TALLY["slowest_s"]:
        TALLY["slowest_s"], TALLY["slowest"] = round(elapsed, 2), " ".join(args)[:300]
    log = os.environ.get("LOTWISE_FUZZ_LOG")
    if log:
        Path(log).write_text(json.dumps(TALLY, indent=1))


def check_invocation(args, workdir: Path):
    try:
        code, out, err, warned, elapsed = run_one(args, workdir)
        _tally(args, code, elapsed)
    except Overrun:
        pytest.fail(f"lotwise {' '.join(args)}: no answer in {LIMIT} s")
    shown = "lotwise " + " ".join(repr(a) if " " in a or not a else a for a in args)
    assert code in ALLOWED[args[0]], (shown, code, err)
    assert "Traceback" not in err, (shown, err)
    assert "could not complete the request" not in err, (shown, err)
    if code == 2:
        assert err.count("\n") == 1, (shown, err)
    assert not warned, (shown, warned)
    if "--json" in args and code in (0, 1, 3) and out.strip():
        check_json(out)
    for text in (out, err):
        assert " nan" not in text.lower() and "inf %" not in text, (shown, text[:300])


@pytest.fixture(scope="module")
def workdir(tmp_path_factory):
    d = tmp_path_factory.mktemp("fuzz")
    for name in ("examples", "plans"):
        shutil.copytree(ROOT / name, d / name)
    return d


PROFILE = settings(
    max_examples=10_000 if LONG else 200, deadline=None, derandomize=not LONG,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                           HealthCheck.function_scoped_fixture])


@PROFILE
@given(args=invocation())
def test_any_invocation_keeps_the_promises(args, workdir):
    check_invocation(args, workdir)


@pytest.mark.parametrize("cmd", sorted(COMMANDS) + sorted(FILE_COMMANDS))
def test_every_command_is_in_the_table(cmd):
    # The fuzz table must cover every command the CLI registers.
    from lotwise.cli import COMMANDS as registered

    assert cmd in registered


def test_the_table_covers_every_command():
    from lotwise.cli import COMMANDS as registered

    missing = set(registered) - set(COMMANDS) - set(FILE_COMMANDS) - {"demo", "serve",
                                                                      "validate"}
    assert not missing  # demo, serve and validate take no input to fuzz
