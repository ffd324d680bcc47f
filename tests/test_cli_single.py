"""The command line: JSON contract, exit codes, one-line errors, start-up hygiene."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest
from hypothesis import given, settings, strategies as st

from lotwise.cli import main


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def test_design_json_contract(capsys):
    code, out, err = run(capsys, "design", "--aql", "1%", "--rql", "6%", "--json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["scheme"] == "single" and (d["n"], d["c"]) == (110, 3)
    assert d["model"] == "binomial" and d["lot_size"] is None
    assert d["targets"] == {"aql": 0.01, "alpha": 0.05, "rql": 0.06, "beta": 0.1}
    assert set(d["models"]) == {"binomial", "poisson"}
    for m in d["models"].values():
        assert {"pa_aql", "pa_rql", "alpha", "beta", "meets"} <= set(m)
    assert d["poisson_design"]["n"] == 112 and d["poisson_design"]["c"] == 3


def test_design_json_with_lot(capsys):
    code, out, _ = run(capsys, "design", "--aql", "1%", "--rql", "8%", "--lot-size", "500", "--json")
    d = json.loads(out)
    assert code == 0 and d["model"] == "hypergeometric" and d["lot_size"] == 500
    assert list(d["models"]) == ["hypergeometric", "binomial", "poisson"]
    assert d["lot_counts"] == {"aql": 5, "rql": 40, "aql_rounding": "up", "rql_rounding": "down"}


def test_check_json_contract_and_exit(capsys):
    code, out, _ = run(capsys, "check", "--n", "80", "--c", "2", "--aql", "1%", "--rql", "8%", "--json")
    d = json.loads(out)
    assert code == 0 and d["meets"] is True
    assert set(d["plan_quality"]) == {"producer", "indifference", "consumer"}
    pq = d["plan_quality"]
    assert pq["producer"] < pq["indifference"] < pq["consumer"]
    code, out, _ = run(capsys, "check", "--plan", "n=89,c=2", "--aql", "1%", "--rql", "6%", "--json")
    assert code == 1 and json.loads(out)["meets"] is False  # alpha about 6 % > 5 %


def test_check_plain_words(capsys):
    code, out, _ = run(capsys, "check", "--plan", "n=80, c=2", "--aql", "1%", "--rql", "8%")
    assert "accepted 10.0 % of the time" in out and "half the time" in out


def test_oc_csv_header_and_values(capsys, tmp_path):
    path = tmp_path / "oc.csv"
    code, out, _ = run(capsys, "oc", "--n", "50", "--c", "1", "--at", "0.02", "--at", "5%",
                       "--csv", str(path))
    assert code == 0
    lines = path.read_text().splitlines()
    assert lines[0] == "p,binomial,poisson,poisson_minus_exact"
    p, b, po, diff = map(float, lines[1].split(","))
    # A textbook exercise table (n = 50, c = 1, binomial): Pa(2 %) = 0.73577.
    # Each cell carries 10 significant digits, so the difference agrees to about 1e-10.
    assert p == 0.02 and abs(b - 0.73577) < 5e-6 and abs(diff - (po - b)) < 2e-10


def test_oc_csv_stdout_with_lot(capsys):
    code, out, _ = run(capsys, "oc", "--plan", "n=80,c=2", "--lot-size", "500", "--points", "5",
                       "--csv", "-")
    assert out.splitlines()[0] == "p,hypergeometric,binomial,poisson,poisson_minus_exact,lot_count"
    assert len(out.splitlines()) == 6


def test_oc_plot(capsys, tmp_path):
    png = tmp_path / "oc.png"
    code, _, _ = run(capsys, "oc", "--n", "80", "--c", "2", "--aql", "1%", "--rql", "8%",
                     "--plot", str(png))
    assert code == 0 and png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_oc_does_not_overwrite_user_file(capsys, tmp_path):
    path = tmp_path / "mine.csv"
    path.write_text("my notes\n")
    code, _, err = run(capsys, "oc", "--n", "5", "--c", "0", "--csv", str(path))
    assert code == 2 and "--force" in err and path.read_text() == "my notes\n"
    code, _, _ = run(capsys, "oc", "--n", "5", "--c", "0", "--csv", str(path), "--force")
    assert code == 0 and path.read_text().startswith("p,")
    code, _, _ = run(capsys, "oc", "--n", "5", "--c", "0", "--csv", str(path))
    assert code == 0  # written by lotwise and unchanged since: may be replaced


@pytest.mark.parametrize("args,needle", [
    (["design", "--aql", "abc", "--rql", "5%"], "--aql ('abc')"),
    (["design", "--aql", "1.5", "--rql", "5%"], "write 1.5% for a percentage"),
    (["design", "--aql", "-1%", "--rql", "5%"], "--aql (-1%)"),
    (["design", "--aql", "1%", "--rql", "5%", "--alpha", "0"], "--alpha (0)"),
    (["design", "--aql", "1%", "--rql", "5%", "--beta", "150%"], "--beta (150%)"),
    (["design", "--aql", "1%", "--rql", "5%", "--lot-size", "12.5"], "--lot-size"),
    (["design", "--aql", "1%", "--rql", "5%", "--lot-size", "0"], "--lot-size (0)"),
    (["design", "--aql", "1%", "--rql", "5%", "--model", "normal"], "--model (normal)"),
    (["design", "--aql", "1%", "--rql", "5%", "--model", "hypergeometric"], "needs a lot size"),
    (["design", "--aql", "1%", "--rql", "5%", "--c", "-1"], "--c ('-1')"),
    (["design", "--aql", "1%", "--rql", "5%", "--max-n", "x"], "--max-n"),
    (["design", "--aql", "1%", "--rql", "5%", "--scheme", "triple"], "--scheme (triple)"),
    (["design", "--rql", "5%"], "--aql is required"),
    (["design", "--aql", "1%", "--rql", "5%", "--nope"], "No such option: --nope"),
    (["design", "--aql", "nan", "--rql", "5%"], "--aql"),
    (["design", "--aql", "inf", "--rql", "5%"], "--aql"),
    (["check", "--n", "10", "--aql", "1%", "--rql", "5%"], "--n and --c"),
    (["check", "--n", "10", "--c", "11", "--aql", "1%", "--rql", "5%"], "c (11) must not be greater than n (10) when counting nonconforming items"),
    (["check", "--plan", "n=10;c", "--aql", "1%", "--rql", "5%"], "--plan"),
    (["check", "--plan", "n=10,c=2,r=5", "--aql", "1%", "--rql", "5%"], "r (5) must be c + 1"),
    (["check", "--n", "600", "--c", "2", "--lot-size", "500", "--aql", "1%", "--rql", "5%"], "lot"),
    (["oc", "--n", "10", "--c", "1", "--points", "1"], "--points (1)"),
    (["oc", "--n", "10", "--c", "1", "--plot", "x.jpg"], "--plot (x.jpg)"),
    (["oc", "--n", "10", "--c", "1", "--at", "2%,zz"], "--at ('zz')"),
    (["frobnicate"], "No such command"),
])
def test_malformed_input_one_line_exit_2(capsys, args, needle):
    code, out, err = run(capsys, *args)
    assert code == 2
    assert out == ""
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    assert needle in err


@pytest.mark.parametrize("args,needle", [
    (["design", "--aql", "5%", "--rql", "1%"], "must be above the AQL"),
    (["design", "--aql", "1%", "--rql", "8%", "--lot-size", "10"], "too small"),
    (["design", "--aql", "1%", "--rql", "6%", "--max-n", "40"], "best at n = 40"),
    (["design", "--aql", "2%", "--rql", "15%", "--alpha", "10%", "--beta", "20%", "--c", "0"], "c = 0"),
])
def test_impossible_requests_exit_1(capsys, args, needle):
    code, out, err = run(capsys, *args)
    assert code == 1 and needle in err and len(err.strip().splitlines()) == 1
    code, out, err = run(capsys, *args, "--json")
    d = json.loads(out)
    assert code == 1 and d["feasible"] is False and needle in d["reason"]


TEXT = st.text(alphabet=st.characters(blacklist_categories=("Cs",)), max_size=12)


@settings(max_examples=60, deadline=None)
@given(aql=TEXT, rql=TEXT, lot=st.one_of(st.none(), TEXT), n=TEXT, c=TEXT)
def test_fuzzed_input_never_raises(aql, rql, lot, n, c):
    args = ["design", "--aql", aql, "--rql", rql] + (["--lot-size", lot] if lot is not None else [])
    for argv in (args, ["check", "--n", n, "--c", c, "--aql", aql, "--rql", rql],
                 ["oc", "--n", n, "--c", c]):
        code = main(argv)
        assert code in (0, 1, 2)


def test_console_script_and_import_hygiene():
    # The real entry point, cold: one JSON object, and neither scipy.stats,
    # pandas nor matplotlib loaded on the way.
    code = ("import sys, runpy; sys.argv = ['lotwise', 'design', '--aql', '1%', '--rql', '6%', "
            "'--lot-size', '2000', '--json'];\n"
            "try:\n    runpy.run_module('lotwise', run_name='__main__')\n"
            "except SystemExit:\n    pass\n"
            "bad = [m for m in ('scipy.stats', 'pandas', 'matplotlib') if m in sys.modules]\n"
            "sys.stderr.write('LOADED:' + ','.join(bad))")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert json.loads(r.stdout)["model"] == "hypergeometric"
    assert r.stderr.strip() == "LOADED:"


def test_check_plan_with_c_above_n_per_unit(capsys):
    # Reference: scipy.stats.poisson: n = 1, c = 5 at 2 and 10 nonconformities
    # per unit accepts 0.983 and 0.067 (1e-3); the same plan counting items is
    # refused with one line and exit 2.
    code, out, err = run(capsys, "check", "--plan", "n=1,c=5", "--per-unit", "--aql", "2",
                         "--rql", "10", "--json")
    assert code == 0, err
    rep = json.loads(out)["models"]["poisson"]
    assert rep["pa_aql"] == pytest.approx(0.983, abs=1e-3)
    assert rep["pa_rql"] == pytest.approx(0.067, abs=1e-3)
    code, out, err = run(capsys, "check", "--plan", "n=1,c=5", "--aql", "2%", "--rql", "10%")
    assert code == 2 and len(err.strip().splitlines()) == 1 and "c (5)" in err
