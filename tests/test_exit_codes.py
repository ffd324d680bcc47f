"""One exit-code table for every command (README, "Exit codes").

0 meets / accept / every row designed; 1 falls short / reject / a row failed / a
recorded disposition disagrees with its plan; 2 bad input; 3 continue (``next``
only: more units are needed before the plan decides).

Source of the table: the command line's own convention (common practice, no
source: shells and CI jobs read 0 as success, a small positive code as a
result the caller must act on, 2 as a usage error). Source of each expected
verdict: exact computation beside the case (scipy.stats binomial sums, or the
decision rule of a single sampling plan: accept on c or fewer nonconforming
items, reject on c + 1 -- a fact of the trade), never lotwise itself.
"""

from __future__ import annotations

import contextlib
import io
import json
import re
import shutil
from pathlib import Path

import pytest
from scipy import stats

from lotwise.cli import COMMANDS, main

ROOT = Path(__file__).resolve().parent.parent
README = (ROOT / "README.md").read_text(encoding="utf-8")


def run(args, cwd=None):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        with contextlib.chdir(cwd or ROOT):
            code = main([str(a) for a in args])
    return code, out.getvalue(), err.getvalue()


def single_meets(n, c, aql, rql, alpha=0.05, beta=0.10):
    """Binomial verdict of n, c against the targets (scipy.stats.binom)."""
    return (1 - stats.binom.cdf(c, n, aql) <= alpha) and (stats.binom.cdf(c, n, rql) <= beta)


def single_decision(n_plan, c, inspected, found):
    """A single plan on the bench: reject as soon as c + 1 are found, accept once n are
    inspected with c or fewer, otherwise continue (fact of the trade)."""
    if found > c:
        return 1
    return 0 if inspected >= n_plan else 3


# --- design, check, zero: the verdict computed by scipy ----------------------------------

def _design_feasible(aql, rql, max_n):
    # Exhaustive over n <= max_n and c <= n: some single plan meets both risks?
    return any(single_meets(n, c, aql, rql) for n in range(1, max_n + 1)
               for c in range(n + 1))


@pytest.mark.parametrize("max_n", [20, 200])
def test_design(max_n):
    code, _, err = run(["design", "--aql", "1%", "--rql", "6%", "--model", "binomial",
                        "--max-n", max_n])
    assert code == (0 if _design_feasible(0.01, 0.06, max_n) else 1), err
    assert code == (0 if max_n == 200 else 1)  # the scipy search finds n = 110, c = 3 < 200


@pytest.mark.parametrize("n, c", [(89, 2), (110, 3), (32, 1), (200, 5)])
def test_check(n, c):
    code, out, _ = run(["check", "--n", n, "--c", c, "--aql", "1%", "--rql", "6%"])
    assert code == (0 if single_meets(n, c, 0.01, 0.06) else 1)
    assert ("FALLS SHORT" in out) == (code == 1)


@pytest.mark.parametrize("aql, expected", [
    (None, 0),      # no AQL: only the consumer's risk is a target, and it is met
    ("1%", 1),      # 1 - 0.99**45 = 36.4 % > 5 %: the producer's risk is not met
    ("0.1%", 0),    # 1 - 0.999**45 = 4.40 % <= 5 %
])
def test_zero(aql, expected):
    # The smallest c = 0 sample at RQL 5 %, beta 10 %: 0.95**n <= 0.1 first at n = 45.
    n = next(k for k in range(1, 1000) if 0.95 ** k <= 0.10)
    assert n == 45
    if aql is not None:
        a = float(aql.rstrip("%")) / 100
        assert (1 - (1 - a) ** n > 0.05) == (expected == 1)
    args = ["zero", "--rql", "5%", "--json"] + (["--aql", aql] if aql else [])
    code, out, _ = run(args)
    assert code == expected and json.loads(out)["n"] == n


# --- next and judge: the decision on the bench -----------------------------------------

@pytest.mark.parametrize("inspected, found", [(80, 2), (80, 0), (40, 3), (10, 3), (40, 1),
                                              (0, 0), (79, 2)])
def test_next_single(inspected, found):
    code, out, _ = run(["next", "--plan", "n=80,c=2", "--inspected", inspected,
                        "--found", found, "--json"])
    assert code == single_decision(80, 2, inspected, found)
    assert json.loads(out)["action"] == {0: "accept", 1: "reject", 3: "continue"}[code]


@pytest.mark.parametrize("inspected, found, expected", [
    # Double plan n1=50, c1=1, r1=4, n2=100, c2=3 (r2 = c2 + 1): the rule as published
    # for double sampling (accept at the first stage on <= c1, reject on >= r1, else a
    # second sample; after it accept on <= c2) -- fact of the trade.
    (50, 1, 0), (50, 4, 1), (50, 2, 3), (150, 3, 0), (150, 4, 1), (100, 3, 3),
])
def test_next_double(inspected, found, expected):
    code, _, _ = run(["next", "--plan", "n1=50,c1=1,r1=4,n2=100,c2=3",
                      "--inspected", inspected, "--found", found])
    assert code == expected


def test_next_continuous_sampling_exits_0():
    # A CSP has no lot to accept or reject: it says what to do with the next units.
    code, _, _ = run(["next", "--plan", "csp1: i=5,f=0.1", "--history", "ok ok bad",
                      "--seed", "1"])
    assert code == 0


@pytest.mark.parametrize("values", ["24.95,24.97,24.96,24.94,24.98",
                                    "24.99,25.01,24.995,25.0,24.98"])
def test_judge(values):
    # Known sigma 0.02, upper limit 25.0, k = 1.5: accept when (U - xbar)/sigma >= k.
    xs = [float(v) for v in values.split(",")]
    accept = (25.0 - sum(xs) / len(xs)) / 0.02 >= 1.5
    code, _, _ = run(["judge", "--plan", "variables: n=5,k=1.5,upper=25.0,sigma=0.02",
                      "--values", values])
    assert code == (0 if accept else 1)


# --- records, scheme --records: a recorded disposition against its plan ----------------

HEAD = "date,lot_id,supplier,part,lot_size,sample_size,found,plan,disposition\n"


def _lots(tmp_path, wrong: bool) -> Path:
    rows = [f"2026-03-0{i},L{i},S,QP-8840,1500,80,{f},\"n=80,c=2\",{d}\n"
            for i, (f, d) in enumerate([(0, "accept"), (1, "accept"), (3, "reject"),
                                        (2, "accept")], 1)]
    if wrong:  # 3 found with c = 2: the plan rejects; the record says accept
        rows.append("2026-03-09,L9,S,QP-8840,1500,80,3,\"n=80,c=2\",accept\n")
    p = tmp_path / ("wrong.csv" if wrong else "right.csv")
    p.write_text(HEAD + "".join(rows))
    return p


@pytest.mark.parametrize("wrong", [False, True])
def test_records(tmp_path, wrong):
    code, out, _ = run(["records", _lots(tmp_path, wrong), "--json"])
    assert code == (1 if wrong else 0)
    assert sum(g["disposition_mismatches"] for g in json.loads(out)["groups"]) == int(wrong)
    code, out, _ = run(["records", _lots(tmp_path, wrong)])
    assert code == (1 if wrong else 0) and ("disagrees" in out) == wrong


def test_records_of_the_demo_exit_0():
    code, _, _ = run(["records", "examples/lots.csv", "--plans", "plans/"])
    assert code == 0


@pytest.mark.parametrize("wrong", [False, True])
def test_scheme_records(tmp_path, wrong):
    code, _, _ = run(["scheme", ROOT / "plans/qp-8840-switching.toml", "--records",
                      _lots(tmp_path, wrong)])
    assert code == (1 if wrong else 0)


def test_scheme_oc_exit_0():
    code, _, _ = run(["scheme", "plans/qp-8840-switching.toml", "--at", "1%"])
    assert code == 0


# --- batch: every row designed, or not ------------------------------------------------

@pytest.mark.parametrize("bad_row, expected", [(False, 0), (True, 1)])
def test_batch(tmp_path, bad_row, expected):
    src = tmp_path / "cat.csv"
    # Line 3 (when present): RQL 3 % below AQL 4 % -- no plan can meet it.
    src.write_text("part,lot_size,aql,rql\nA,,1%,6%\n" + ("B,800,4%,3%\n" if bad_row else ""))
    out = tmp_path / "plans.csv"
    code, text, _ = run(["batch", src, "--out", out])
    assert code == expected
    assert out.exists() and "n=110,c=3" in out.read_text()  # written even when exit 1
    assert ("line 3 (B)" in text) == bad_row


def test_batch_audit(tmp_path):
    # alpha of n=80, c=2 at AQL 1 %: 1 - binom.cdf(2, 80, 0.01) = 4.7 % <= 10 %; of n=13,
    # c=0 at AQL 2.5 %: 1 - 0.975**13 = 28.0 % > 10 % (the limit --max-alpha).
    assert 1 - stats.binom.cdf(2, 80, 0.01) <= 0.10 < 1 - 0.975 ** 13
    src = tmp_path / "table.csv"
    src.write_text("lot_min,lot_max,n,c,aql\n500,1200,80,2,1%\n")
    code, _, _ = run(["batch", "--audit", src, "--out", tmp_path / "a.csv"])
    assert code == 0
    src.write_text("lot_min,lot_max,n,c,aql\n500,1200,80,2,1%\n91,150,13,0,2.5%\n")
    code, _, _ = run(["batch", "--audit", src, "--out", tmp_path / "b.csv"])
    assert code == 1


# --- sheet and demo --------------------------------------------------------------------

@pytest.mark.parametrize("name, expected", [
    # QP-2210: n = 27, c = 1 in a lot of 60 meets both (check plans/ shows it); QP-6630:
    # the supplier's n = 32, c = 1 carries beta 26 % at RQL 8 % (binomial about
    # binom.cdf(1, 32, 0.08) = 0.26 > 0.10), so it falls short.
    ("qp-2210-manifold-block.toml", 0), ("qp-6630-gasket-proposal.toml", 1)])
def test_sheet(tmp_path, name, expected):
    if name.startswith("qp-6630"):
        assert stats.binom.cdf(1, 32, 0.08) > 0.10
    code, _, _ = run(["sheet", ROOT / "plans" / name, "--out", tmp_path / "s"])
    assert code == expected
    assert list((tmp_path / "s").glob("*.pdf"))  # written whatever the verdict


def test_demo_exits_0_though_its_gasket_audit_falls_short(tmp_path):
    code, out, _ = run(["demo", "--out", tmp_path / "demo"])
    assert code == 0 and "Falls short on audit (as the scenario intends): QP-6630" in out


# --- commands that only show: 0, or 2 on bad input ----------------------------------------

@pytest.mark.parametrize("args", [
    ["oc", "--plan", "n=32,c=1", "--at", "8%"],
    ["compare", "--plan", "n=32,c=1", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "8%"],
    ["draw", "--lot-size", "500", "--n", "13", "--seed", "2718"],
    ["tradeoff", "--aql", "1%", "--rql", "4%,8%"],
    ["supplier", "--found", "14", "--inspected", "3200", "--plan", "n=80,c=2"],
    ["demonstrate", "--confidence", "95%", "--reliability", "90%", "--failures", "0"],
])
def test_showing_commands_exit_0(args):
    # compare: n=32, c=1 falls short (beta 26 %), yet the comparison itself succeeded.
    code, _, err = run(args)
    assert code == 0, err


@pytest.mark.parametrize("args", [
    ["design", "--aql", "x", "--rql", "6%"], ["check", "--n", "-1", "--c", "0"],
    ["oc", "--plan", "n=0,c=0"], ["compare", "--plan", "n=1,c=0"], ["zero", "--rql", "abc"],
    ["demonstrate", "--confidence", "120%"], ["next", "--plan", "n=80,c=2", "--inspected", "x",
                                              "--found", "0"],
    ["judge", "--plan", "n=80,c=2", "--values", "1"], ["records", "MISSING.csv"],
    ["batch", "MISSING.csv", "--out", "x.csv"], ["sheet", "MISSING.toml"],
    ["draw", "--lot-size", "0", "--n", "1"], ["tradeoff", "--aql", "x", "--rql", "6%"],
    ["supplier", "--found", "x", "--inspected", "1", "--plan", "n=1,c=0"],
    ["scheme", "MISSING.toml"], ["demo", "--out", "/dev/null/x"],
])
def test_bad_input_exits_2_with_one_line(tmp_path, args):
    code, _, err = run(args, cwd=tmp_path)
    assert code == 2 and err.count("\n") == 1, err


# --- the README's table ----------------------------------------------------------------

def _readme_table() -> str:
    start = README.index("## Exit codes")
    return README[start:README.index("\n## ", start + 1)]


@pytest.mark.parametrize("cmd", sorted(COMMANDS))
def test_readme_table_names_every_command(cmd):
    assert re.search(rf"`{cmd}`", _readme_table()), cmd


def test_readme_states_four_codes():
    table = _readme_table()
    for code in ("| 0 |", "| 1 |", "| 2 |", "| 3 |"):
        assert code in table


# The program itself (a process, not main() called from Python): it ends through
# sys.exit after gc.freeze(), which must keep the exit code, everything printed and
# every file written. Verdicts: the single plan n = 110, c = 3 at AQL 1 % / RQL 6 %
# (scipy.stats.binom: Pa(1 %) = 0.9742 >= 0.95, Pa(6 %) = 0.0909 <= 0.10); RQL below
# the AQL has no plan (exit 1, a fact of the trade); a misspelt option is bad input.
@pytest.mark.parametrize("args, code", [
    (["design", "--aql", "1%", "--rql", "6%", "--json"], 0),
    (["design", "--aql", "1%", "--rql", "0.5%", "--json"], 1),
    (["design", "--aql", "1%", "--rql-typo", "6%"], 2),
])
def test_program_exit_keeps_code_and_output(args, code, tmp_path):
    import subprocess
    import sys

    assert stats.binom.cdf(3, 110, 0.01) >= 0.95 and stats.binom.cdf(3, 110, 0.06) <= 0.10
    done = subprocess.run([sys.executable, "-m", "lotwise", *args],
                          capture_output=True, text=True, cwd=tmp_path)
    assert done.returncode == code, done.stderr
    if code == 0:
        rep = json.loads(done.stdout)  # complete: flushed before the exit
        assert (rep["n"], rep["c"]) == (110, 3)
        plot, table = tmp_path / "oc.png", tmp_path / "oc.csv"
        done = subprocess.run([sys.executable, "-m", "lotwise", "oc", "--plan", "n=110,c=3",
                               "--plot", str(plot), "--csv", str(table)],
                              capture_output=True, text=True, cwd=tmp_path)
        assert done.returncode == 0, done.stderr
        assert plot.stat().st_size > 1000 and plot.read_bytes()[:4] == b"\x89PNG"
        assert table.read_text(encoding="utf-8").count("\n") > 10
    elif code == 2:
        assert done.stderr.count("\n") == 1 and "--rql-typo" in done.stderr
