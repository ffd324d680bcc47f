"""Command line for variables plans: design JSON contract, judge, check/oc
dispatch and one-line errors (exit 2). Reference values as in
test_variables.py (Montgomery's example, from memory; exact computation)."""

from __future__ import annotations

import json
import math
import subprocess
import sys

import numpy as np
import pytest

from lotwise.cli import main


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def test_design_json_contract(capsys):
    # Source: Montgomery's variables example (from memory), exact answers
    # n = 42, k ~ 1.9 (sigma unknown); attributes plan n = 110, c = 3.
    code, out, err = run(capsys, "design", "--scheme", "variables", "--sigma", "unknown",
                         "--limit", "upper", "--aql", "1%", "--rql", "6%", "--json")
    assert code == 0 and err == ""
    d = json.loads(out)
    for key in ("scheme", "sigma", "n", "k", "pa_aql", "pa_rql", "approximation", "attributes"):
        assert key in d
    assert d["scheme"] == "variables" and d["sigma"] == "unknown"
    assert isinstance(d["n"], int) and isinstance(d["k"], float)
    assert d["n"] == 42 and abs(d["k"] - 1.9) < 0.02
    assert {"n", "k"} <= set(d["approximation"]) and d["approximation"]["n"] == 41
    assert {"n", "c"} <= set(d["attributes"]) and (d["attributes"]["n"], d["attributes"]["c"]) \
        == (110, 3)
    assert 1 - d["pa_aql"] <= 0.05 and d["pa_rql"] <= 0.10


def test_design_known_json(capsys):
    code, out, _ = run(capsys, "design", "--scheme", "variables", "--sigma", "known",
                       "--aql", "2%", "--rql", "10%", "--alpha", "10%", "--beta", "10%", "--json")
    d = json.loads(out)
    assert code == 0 and d["sigma"] == "known" and d["n"] == 12
    assert d["approximation"]["n_unrounded"] == pytest.approx(11.017, abs=1e-3)
    assert d["approximation"]["n"] == 12
    assert d["k_range"]["low"] <= d["k"] <= d["k_range"]["high"]


@pytest.mark.parametrize("extra", [
    ["--sigma", "known", "--limit", "both"],
    ["--sigma", "known", "--limit", "both", "--sigma-value", "0.05", "--lower", "24.7",
     "--upper", "25.0"],
    ["--sigma", "unknown", "--lower", "24.7", "--upper", "25.0"],
    ["--sigma", "known", "--limit", "lower", "--lower", "3.2", "--sigma-value", "0.1"],
])
def test_design_other_methods_text(capsys, extra):
    code, out, err = run(capsys, "design", "--scheme", "variables", "--aql", "1%", "--rql",
                         "6%", *extra)
    assert code == 0 and err == ""
    assert "attributes c = 3" in out and "100 % inspection" in out


@pytest.mark.parametrize("args, fragment", [
    (["--sigma", "sometimes"], "--sigma (sometimes)"),
    ([], "--sigma is required"),
    (["--sigma", "known", "--limit", "middle"], "--limit (middle)"),
    (["--sigma", "known", "--sigma-value", "-3"], "--sigma-value (-3)"),
    (["--sigma", "unknown", "--sigma-value", "3"], "--sigma-value (3)"),
    (["--sigma", "known", "--lower", "5", "--upper", "4"], "--lower (5)"),
    (["--sigma", "known", "--upper", "abc"], "--upper ('abc')"),
    (["--sigma", "known", "--c", "2"], "--c (2)"),
    (["--sigma", "known", "--per-unit"], "--per-unit"),
])
def test_design_bad_input_one_line_exit_2(capsys, args, fragment):
    code, out, err = run(capsys, "design", "--scheme", "variables", "--aql", "1%", "--rql",
                         "6%", *args)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and fragment in err


def test_design_infeasible_exit_1(capsys):
    code, out, err = run(capsys, "design", "--scheme", "variables", "--sigma", "unknown",
                         "--aql", "1%", "--rql", "6%", "--max-n", "20", "--json")
    assert code == 1
    d = json.loads(out)
    assert d["feasible"] is False and "n <= 20" in d["reason"]


# --- judge -------------------------------------------------------------------------

@pytest.fixture
def sample(tmp_path):
    """Demo data: 42 shaft diameters from a normal process (invented, seeded)."""
    rng = np.random.default_rng(3)
    x = rng.normal(24.9, 0.03, 42)
    path = tmp_path / "shafts.csv"
    path.write_text("diameter_mm\n" + "".join(f"{v:.4f}\n" for v in x) + "\n\n")
    return path, x


def test_judge_accept_and_numbers(capsys, sample):
    path, x = sample
    x = np.round(x, 4)
    code, out, err = run(capsys, "judge", "--plan", "variables: n=42,k=1.901,upper=25.0",
                         str(path), "--json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["verdict"] == "accept" and d["n"] == 42
    assert d["xbar"] == pytest.approx(x.mean(), rel=1e-12)
    assert d["s"] == pytest.approx(x.std(ddof=1), rel=1e-12)
    q = (25.0 - x.mean()) / x.std(ddof=1)
    assert d["statistic"]["q"]["upper"] == pytest.approx(q, rel=1e-12)
    assert d["normality"]["test"] == "Shapiro-Wilk" and not d["normality"]["doubtful"]
    assert 0 <= d["p_hat"]["total"] < 0.01


def test_judge_reject_exit_1(capsys):
    vals = ",".join(["24.99", "25.01", "24.98", "25.00", "24.97"])
    code, out, _ = run(capsys, "judge", "--plan", "variables: n=5,k=1.5,upper=25.0,sigma=0.02",
                       "--values", vals)
    assert code == 1 and "REJECT" in out


def test_judge_normality_warning(capsys, tmp_path):
    # Strongly skewed data (exponential, invented): Shapiro-Wilk must flag it.
    rng = np.random.default_rng(11)
    x = 24.0 + rng.exponential(0.2, 42)
    path = tmp_path / "skew.txt"
    path.write_text("".join(f"{v:.5f}\n" for v in x))
    png = tmp_path / "np.png"
    code, out, _ = run(capsys, "judge", "--plan", "variables: n=42,k=1.901,upper=26.0",
                       str(path), "--plot", str(png))
    assert "WARNING: Normality is doubtful" in out
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_judge_two_limits(capsys, sample):
    path, _ = sample
    code, out, _ = run(capsys, "judge", "--plan",
                       "variables: n=42,m=0.0266,lower=24.8,upper=25.0", str(path), "--json")
    d = json.loads(out)
    assert set(d["p_hat"]["by_limit"]) == {"upper", "lower"}
    assert d["accept"] == (d["p_hat"]["total"] <= 0.0266)


@pytest.mark.parametrize("content, fragment", [
    ("d\n24.9\n24.8\n\n24.9\n", "row 4 is a missing value"),
    ("d\n24.9\nabc\n24.9\n", "row 3 ('abc') is not a number"),
    ("24.9\nNA\n24.9\n", "row 2 is a missing value"),
    ("24.9,1\n", "row 1 ('24.9,1') holds 2 fields"),
    ("d\n24.9\n24.8\n", "holds 2 values; the plan needs n = 4"),
    ("", "holds no numbers"),
])
def test_judge_bad_file(capsys, tmp_path, content, fragment):
    path = tmp_path / "m.csv"
    path.write_text(content)
    code, out, err = run(capsys, "judge", "--plan", "variables: n=4,k=1.5,upper=25", str(path))
    assert code == 2 and out == "" and err.count("\n") == 1 and fragment in err


@pytest.mark.parametrize("args, fragment", [
    (["--values", "1,2,,3"], "--values value 3 is missing"),
    (["--values", "1,2,x,3"], "--values value 3 ('x') is not a number"),
    (["--values", "1,1,1,1"], "s = 0"),
    (["--plan", "n=80,c=2", "--values", "1,2,3,4"], "must be a variables plan"),
    (["--plan", "variables: n=4,k=1.5,limit=upper", "--values", "1,2,3,4"], "lacks upper="),
    (["--plan", "variables: n=4,k=1.5,upper=5,sigma=known", "--values", "1,2,3,4"],
     "lacks sigma="),
    (["--values", "1,2,3,4", "--plot", "x.jpg"], "--plot (x.jpg)"),
    ([], "either as a FILE or as --values"),
    (["/no/such/file.csv"], "does not exist"),
])
def test_judge_bad_input(capsys, args, fragment):
    if not any(a == "--plan" for a in args):
        args = ["--plan", "variables: n=4,k=1.5,upper=25", *args]
    code, out, err = run(capsys, "judge", *args)
    assert code == 2 and out == "" and err.count("\n") == 1 and fragment in err


# --- check and oc dispatch ------------------------------------------------------------

def test_check_variables_plan(capsys):
    code, out, _ = run(capsys, "check", "--plan", "variables: n=42,k=1.901,upper=25",
                       "--aql", "1%", "--rql", "6%", "--json")
    d = json.loads(out)
    assert code == 0 and d["meets"] and d["scheme"] == "variables"
    # Wallis's plan for the same targets falls short on beta (exact noncentral t).
    code, out, _ = run(capsys, "check", "--plan", "variables: n=41,k=1.8927,upper=25",
                       "--aql", "1%", "--rql", "6%")
    assert code == 1 and "FALLS SHORT" in out


def test_oc_variables_csv_and_plot(capsys, tmp_path):
    png = tmp_path / "oc.png"
    code, out, _ = run(capsys, "oc", "--plan", "variables: n=42,k=1.901,upper=25", "--csv", "-",
                       "--points", "11", "--max-p", "10%", "--plot", str(png))
    lines = out.strip().splitlines()
    assert code == 0 and lines[0] == "p,pa" and len(lines) == 12
    pa = [float(x.split(",")[1]) for x in lines[1:]]
    assert all(a >= b for a, b in zip(pa, pa[1:]))
    assert png.exists()


def test_design_path_keeps_heavy_imports_off():
    # Project rule: scipy.stats, pandas and matplotlib stay off the design path.
    code = ("import sys; from lotwise.cli import main; "
            "main(['design','--scheme','variables','--sigma','unknown','--aql','1%',"
            "'--rql','6%','--json']); "
            "bad=[m for m in ('scipy.stats','pandas','matplotlib') if m in sys.modules]; "
            "sys.stderr.write(repr(bad))")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert r.stderr.strip() == "[]", r.stderr
    assert json.loads(r.stdout)["n"] == 42
    assert math.isfinite(json.loads(r.stdout)["k"])
