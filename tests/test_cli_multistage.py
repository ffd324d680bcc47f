"""The command line for double, multiple and sequential plans."""

from __future__ import annotations

import json

import pytest

from lotwise.cli import main

DOUBLE = "n1=50,c1=1,r1=4,n2=100,c2=3"
SINGLE_KEYS = {"scheme", "model", "lot_size", "targets", "models", "meets", "plan_quality"}
MODEL_KEYS = {"pa_aql", "pa_rql", "alpha", "beta", "meets"}


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def run_json(capsys, *args):
    code, out, err = run(capsys, *args, "--json")
    return code, json.loads(out), err


# The documented JSON keys (README), checked exactly.
def test_check_double_json(capsys):
    code, rep, err = run_json(capsys, "check", "--plan", DOUBLE, "--aql", "1%", "--rql", "5%")
    assert code == 1 and err == ""  # beta 29 % misses 10 %
    assert rep["scheme"] == "double"
    assert {k: rep[k] for k in ("n1", "c1", "r1", "n2", "c2")} == dict(n1=50, c1=1, r1=4,
                                                                      n2=100, c2=3)
    assert SINGLE_KEYS <= set(rep)
    assert set(rep["models"]) == {"binomial", "poisson"}
    assert MODEL_KEYS <= set(rep["models"]["binomial"])
    assert set(rep["asn"]) >= {"aql", "rql", "max"}
    # Montgomery example (from memory): ASN at p = 0.05 (the RQL here) is 98.10
    assert rep["asn"]["rql"] == pytest.approx(98.10, abs=5e-3)
    assert rep["models"]["binomial"]["pa_rql"] == pytest.approx(0.2904, abs=5e-5)


def test_check_double_lot_json(capsys):
    code, rep, _ = run_json(capsys, "check", "--plan", DOUBLE, "--aql", "1%", "--rql", "8%",
                            "--lot-size", "1000")
    assert rep["model"] == "hypergeometric" and rep["lot_counts"]["rql"] == 80
    assert set(rep["models"]) == {"hypergeometric", "binomial", "poisson"}
    assert "aoql" in rep and rep["aoql"] > 0 and 0 < rep["aoql_p"] < 1


def test_design_double_json(capsys):
    code, rep, err = run_json(capsys, "design", "--scheme", "double", "--aql", "1%", "--rql",
                              "5%", "--ratio", "2")
    assert code == 0 and err == ""
    assert rep["scheme"] == "double"
    assert {"n1", "c1", "r1", "n2", "c2", "models", "asn"} <= set(rep)
    assert set(rep["asn"]) >= {"aql", "rql", "max"}
    for m in rep["models"].values():
        assert MODEL_KEYS <= set(m)
    assert rep["n2"] == 2 * rep["n1"] and rep["c1"] < rep["r1"] <= rep["c2"] + 1
    assert rep["models"]["binomial"]["meets"] is True


def test_design_sequential_json(capsys):
    code, rep, err = run_json(capsys, "design", "--scheme", "sequential", "--aql", "1%",
                              "--rql", "6%", "--truncate", "300")
    assert code == 0 and err == ""
    assert rep["scheme"] == "sequential"
    for k in ("h1", "h2", "s", "truncate", "wald", "exact"):
        assert k in rep
    for part in ("wald", "exact"):
        assert {"pa_aql", "pa_rql", "asn_aql", "asn_rql"} <= set(rep[part])
    # Montgomery example (from memory): h1 = 1.22, h2 = 1.57, s = 0.0281
    assert (round(rep["h1"], 2), round(rep["h2"], 2), round(rep["s"], 4)) == (1.22, 1.57,
                                                                             0.0281)
    assert rep["truncate"] == 300
    assert len(rep["numbers"]["n"]) == 300 and rep["numbers"]["accept"][43] == 0


def test_design_compare_all_json_and_plot(capsys, tmp_path):
    png = tmp_path / "tradeoff.png"
    code, rep, _ = run_json(capsys, "design", "--scheme", "compare-all", "--aql", "1%",
                            "--rql", "5%", "--plot", str(png))
    assert code == 0
    assert [p["scheme"] for p in rep["plans"]] == ["single", "double", "sequential"]
    for p in rep["plans"]:
        assert {"pa_aql", "pa_rql", "asn_aql", "asn_rql"} <= set(p)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_design_sequential_terminal_and_plot(capsys, tmp_path):
    png = tmp_path / "chart.png"
    code, out, err = run(capsys, "design", "--scheme", "sequential", "--aql", "1%", "--rql",
                         "6%", "--truncate", "200", "--plot", str(png))
    assert code == 0 and err == ""
    assert "accept on <=" in out and "44-50" in out and "midpoint line" in out
    assert png.exists()
    # not overwritten unless lotwise wrote it; a user's file needs --force
    user = tmp_path / "mine.png"
    user.write_bytes(b"user data")
    code, _, err = run(capsys, "design", "--scheme", "sequential", "--aql", "1%", "--rql",
                       "6%", "--truncate", "200", "--plot", str(user))
    assert code == 2 and "--force" in err and user.read_bytes() == b"user data"


def test_oc_csv_adds_asn_columns(capsys, tmp_path):
    code, out, err = run(capsys, "oc", "--plan", DOUBLE, "--points", "5", "--csv", "-")
    assert code == 0
    header = out.splitlines()[0].split(",")
    assert header[-2:] == ["asn", "asn_curtailed"]
    rows = [list(map(float, line.split(","))) for line in out.splitlines()[1:]]
    assert all(r[-1] <= r[-2] + 1e-9 for r in rows)  # curtailed <= full
    code, out, _ = run(capsys, "oc", "--plan", DOUBLE, "--points", "5", "--csv", "-",
                       "--lot-size", "1000")
    assert out.splitlines()[0].endswith("asn,asn_curtailed,aoq,ati")
    code, out, _ = run(capsys, "oc", "--plan", "sequential: h1=1.22,h2=1.57,s=0.0281,"
                       "truncate=200", "--at", "1%,6%", "--csv", "-")
    assert "wald_pa" in out.splitlines()[0]


def test_oc_single_unchanged(capsys):
    code, out, _ = run(capsys, "oc", "--plan", "n=80,c=2", "--points", "3", "--csv", "-")
    assert out.splitlines()[0] == "p,binomial,poisson,poisson_minus_exact"


def test_oc_plot(capsys, tmp_path):
    png = tmp_path / "oc.png"
    code, out, _ = run(capsys, "oc", "--plan", "multiple: n=20/20/20; c=-/1/3; r=2/3/4",
                       "--plot", str(png))
    assert code == 0 and png.exists()


@pytest.mark.parametrize("plan, n, d, action", [
    (DOUBLE, "50", "2", "continue"),
    (DOUBLE, "50", "4", "reject"),
    (DOUBLE, "150", "3", "accept"),
    ("multiple: n=20/20/20; c=-/1/3; r=2/3/4", "20", "0", "continue"),
    ("sequential: h1=1.22,h2=1.57,s=0.0281,truncate=300", "44", "0", "accept"),
    ("n=80,c=2", "10", "3", "reject"),
])
def test_next(capsys, plan, n, d, action):
    # Exit codes: README, "Exit codes" (accept 0, reject 1, continue 3; common practice, no
    # source).
    code, rep, err = run_json(capsys, "next", "--plan", plan, "--inspected", n, "--found", d)
    assert code == {"accept": 0, "reject": 1, "continue": 3}[action] and err == ""
    assert rep["action"] == action
    code2, out, _ = run(capsys, "next", "--plan", plan, "--inspected", n, "--found", d)
    assert code2 == code
    assert out.startswith({"accept": "ACCEPT", "reject": "REJECT",
                           "continue": "CONTINUE"}[action])


def test_next_continue_says_how_many(capsys):
    code, rep, _ = run_json(capsys, "next", "--plan", DOUBLE, "--inspected", "50", "--found", "2")
    assert rep["more_to_next"] == 100 and rep["more_at_most"] == 100
    code, rep, _ = run_json(capsys, "next", "--plan",
                            "sequential: h1=1.22,h2=1.57,s=0.0281,truncate=300",
                            "--inspected", "10", "--found", "0")
    assert rep["action"] == "continue" and rep["more_at_most"] == 290


# Bad input: one line on stderr naming the option or key and the value, exit 2.
@pytest.mark.parametrize("args, words", [
    (["check", "--plan", "n1=50,c1=1,n2=100", "--aql", "1%", "--rql", "5%"], "lacks c2"),
    (["check", "--plan", "n1=50,c1=1,r1=9,n2=100,c2=3", "--aql", "1%", "--rql", "5%"], "r1 (9)"),
    (["check", "--plan", DOUBLE, "--aql", "1%", "--rql", "5%", "--lot-size", "100"],
     "more than --lot-size (100)"),
    (["check", "--plan", "multiple: n=20/20/20; c=-/1/3", "--aql", "1%", "--rql", "5%"],
     "lacks r1"),
    (["check", "--plan", "sequential: h1=1,h2=1,s=0.03", "--aql", "1%", "--rql", "5%"],
     "lacks truncate"),
    (["design", "--scheme", "double", "--aql", "1%", "--rql", "5%", "--ratio", "20"],
     "--ratio (20)"),
    (["design", "--scheme", "double", "--aql", "1%", "--rql", "5%", "--ratio", "x"],
     "--ratio (x)"),
    (["design", "--scheme", "double", "--aql", "1%", "--rql", "5%", "--minimize", "asn"],
     "--minimize (asn)"),
    (["design", "--scheme", "double", "--aql", "1%", "--rql", "5%", "--truncate", "9"],
     "--truncate (9) does not apply"),
    (["design", "--scheme", "sequential", "--aql", "1%", "--rql", "5%", "--truncate", "0"],
     "--truncate (0)"),
    (["design", "--scheme", "triple", "--aql", "1%", "--rql", "5%"], "--scheme (triple)"),
    (["design", "--aql", "1%", "--rql", "5%", "--truncate", "9"], "--truncate (9) applies"),
    (["design", "--scheme", "double", "--aql", "1%", "--rql", "5%", "--plot", "a.gif"],
     "--plot (a.gif)"),
    (["next", "--plan", DOUBLE, "--inspected", "151", "--found", "0"], "--inspected (151)"),
    (["next", "--plan", DOUBLE, "--inspected", "10", "--found", "11"], "--found (11)"),
    (["next", "--plan", DOUBLE, "--found", "0"], "--inspected is required"),
    (["next", "--plan", DOUBLE, "--inspected", "x", "--found", "0"], "--inspected ('x')"),
])
def test_bad_input_one_line_exit_2(capsys, args, words):
    code, out, err = run(capsys, *args)
    assert code == 2
    assert out == ""
    assert len(err.strip().splitlines()) == 1 and words in err


def test_infeasible_exit_1_with_json(capsys):
    code, out, err = run(capsys, "design", "--scheme", "double", "--aql", "1%", "--rql", "5%",
                         "--lot-size", "20", "--json")
    assert code == 1
    rep = json.loads(out)
    assert rep["feasible"] is False and "reason" in rep
    assert len(err.strip().splitlines()) == 1
