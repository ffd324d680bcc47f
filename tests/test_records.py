"""Lot records: reading, bad rows, process average, limits and the OC cross-check."""

from __future__ import annotations

import io
import json

import mpmath as mp
import numpy as np
import pandas as pd
import pytest
from scipy import stats

from generated import history
from lotwise.cli import main
from lotwise.families.single import SinglePlan
from lotwise.core.quantities import InputError
from lotwise.data.records import (accepted_tails, binomial_limits, clopper_pearson, read_records, resolve_plan_file, summarise)

HEADER = "date,supplier,part,lot_id,lot_size,sample_size,found,plan,disposition\n"


def _log(rows: list[str]) -> io.StringIO:
    return io.StringIO(HEADER + "".join(r + "\n" for r in rows))


# --- exact intervals and limits against outside references ---------------------

@pytest.mark.parametrize("x, m, conf", [(0, 59, 0.90), (5, 320, 0.95), (1, 10, 0.99),
                                        (37, 40, 0.95), (40, 40, 0.90), (120, 100_000, 0.95)])
def test_clopper_pearson_matches_scipy_exact_interval(x, m, conf):
    # Reference: scipy.stats.binomtest(...).proportion_ci(method="exact"), 1e-10.
    ref = stats.binomtest(x, m).proportion_ci(conf, method="exact")
    lo, hi = clopper_pearson(x, m, conf)
    assert lo == pytest.approx(ref.low, abs=1e-10) and hi == pytest.approx(ref.high, abs=1e-10)


def test_clopper_pearson_zero_found_closed_form():
    # Reference: for x = 0 the upper end solves (1 - p)^m = (1 - conf)/2 exactly (mpmath).
    with mp.workdps(30):
        ref = 1 - mp.mpf("0.025") ** (mp.mpf(1) / 299)
    assert clopper_pearson(0, 299, 0.95)[1] == pytest.approx(float(ref), abs=1e-13)


@pytest.mark.parametrize("n, p", [(80, 0.0156), (50, 0.02), (125, 0.1), (500, 0.003),
                                  (20, 0.5), (1000, 0.25)])
def test_binomial_limits_match_scipy_quantiles(n, p):
    # Reference: scipy.stats.binom.ppf at 0.135 % and 99.865 % (exact quantiles).
    lo, hi = binomial_limits(n, p)
    assert lo == stats.binom.ppf(0.00135, n, p) and hi == stats.binom.ppf(1 - 0.00135, n, p)
    assert stats.binom.cdf(lo - 1, n, p) <= 0.00135 and stats.binom.sf(hi, n, p) <= 0.00135


def test_accepted_tails_single_plan_matches_scipy():
    # Reference: scipy.stats.binom cdf and sf.
    low, high, exp = accepted_tails([(60, 0.9)], 48)
    assert low == pytest.approx(stats.binom.cdf(48, 60, 0.9), abs=1e-12)
    assert high == pytest.approx(stats.binom.sf(47, 60, 0.9), abs=1e-12)
    assert exp == pytest.approx(54.0)


def test_accepted_tails_several_plans_match_mpmath_convolution():
    # Reference: the exact distribution of a sum of two binomials, summed in mpmath.
    groups = [(30, 0.95), (12, 0.7)]
    obs = 33
    with mp.workdps(40):
        pmf = [mp.mpf(0)] * 43
        for a in range(31):
            pa = mp.binomial(30, a) * mp.mpf("0.95") ** a * mp.mpf("0.05") ** (30 - a)
            for b in range(13):
                pmf[a + b] += pa * mp.binomial(12, b) * mp.mpf("0.7") ** b * \
                    mp.mpf("0.3") ** (12 - b)
        low_ref = float(mp.fsum(pmf[:obs + 1]))
        high_ref = float(mp.fsum(pmf[obs:]))
    low, high, exp = accepted_tails(groups, obs)
    assert low == pytest.approx(low_ref, abs=1e-12) and high == pytest.approx(high_ref, abs=1e-12)
    assert exp == pytest.approx(30 * 0.95 + 12 * 0.7)


# --- recovering a known process average -------------------------------------------

def test_process_average_recovered_at_stated_coverage():
    # Simulated histories (seeded) with a known process average of 2 %: the 95 %
    # Clopper-Pearson interval must cover it in at least 95 % of histories (it is
    # conservative); 400 histories give a standard error of 1.1 %, so at least 93 %
    # is demanded. The estimate is unbiased: its mean lies within 3 standard errors.
    p = 0.02
    covered, estimates = 0, []
    for seed in range(400):
        h = history(40, p=p, seed=seed, plan=(50, 1))
        s = summarise(read_records(io.StringIO(h.to_csv(index=False))), charts=False)
        g = s.groups[0]
        covered += g.interval[0] <= p <= g.interval[1]
        estimates.append(g.process_average)
    assert covered / 400 >= 0.93
    se = np.sqrt(p * (1 - p) / (40 * 50)) / np.sqrt(400)
    assert abs(np.mean(estimates) - p) <= 3 * se


def test_honest_history_is_consistent_and_a_doctored_one_is_not():
    # The cross-check: a history whose dispositions follow the plan is consistent with
    # the OC at its own process average; one where 40 rejected lots were booked as
    # accepted is not (and each of them is a finding).
    h = history(400, p=0.03, seed=7, plan=(80, 2))
    s = summarise(read_records(io.StringIO(h.to_csv(index=False))), charts=False)
    g = s.groups[0]
    assert g.consistent and g.disposition_mismatches == 0 and s.findings == []
    bad = h.copy()
    rej = bad.index[bad["disposition"] == "reject"][:40]
    bad.loc[rej, "disposition"] = "accept"
    s2 = summarise(read_records(io.StringIO(bad.to_csv(index=False))), charts=False)
    g2 = s2.groups[0]
    assert not g2.consistent and g2.two_sided < 0.01
    assert g2.disposition_mismatches == 40 and len(s2.findings) == 40
    assert "NOT consistent" in g2.sentence()


def test_dispositions_are_checked_against_the_plan():
    s = summarise(read_records(_log([
        '2024-01-02,Acme,H-1,L1,1000,80,2,"n=80,c=2",accept',
        '2024-01-03,Acme,H-1,L2,1000,80,3,"n=80,c=2",accept',   # should be rejected
        '2024-01-04,Acme,H-1,L3,1000,80,1,"n=80,c=2",reject',   # should be accepted
        '2024-01-05,Acme,H-1,L4,1000,75,0,"n=80,c=2",accept',   # short sample
        '2024-01-06,Acme,H-1,L5,60,60,0,"n=80,c=2",accept',     # lot below n: all inspected
    ])))
    f = {x["lot_id"]: x for x in s.findings}
    assert set(f) == {"L2", "L3", "L4"}
    assert f["L2"]["expected"] == "reject" and f["L3"]["expected"] == "accept"
    assert "sample_size (75) differs from the plan's n (80)" in f["L4"]["finding"]
    g = s.groups[0]
    assert (g.lots, g.accepted, g.disposition_mismatches, g.sample_deviations) == (5, 4, 2, 1)
    assert g.nonconforming == 6 and g.units_inspected == 375


# --- bad rows -------------------------------------------------------------------

BAD = [
    '2024-01-02,Acme,H-1,L1,1000,80,2,"n=80,c=2",accept',     # 2: good
    '2024-01-03,Acme,,L2,1000,80,0,"n=80,c=2",accept',        # 3: missing part
    '2024-01-04,Acme,H-1,L3,1000,80,81,"n=80,c=2",reject',    # 4: found above sample
    '2024-01-05,Acme,H-1,L4,50,80,0,"n=80,c=2",accept',       # 5: sample above lot
    '2024-01-06,Acme,H-1,L5,1000,80,2,"n=80,c=2"',            # 6: a field short
    '2024-13-07,Acme,H-1,L6,1000,80,2,"n=80,c=2",accept',     # 7: no such date
    '2024-01-08,Acme,H-1,L7,1000,80,2.5,"n=80,c=2",accept',   # 8: count not whole
    '2024-01-09,Acme,H-1,L8,1000,80,2,"n=80,c=x",accept',     # 9: bad plan
    '2024-01-10,Acme,H-1,L9,1000,80,2,"n=80,c=2",maybe',      # 10: bad disposition
    '',                                                       # 11: blank, ignored
    '2024-01-12,Acme,H-1,L10,1000,80,1,"n=80,c=2",accept',    # 12: good
    '2024-01-13,Acme,H-1,L11,1000,,1,"n=80,c=2",accept',      # 13: missing sample
]


def test_each_malformed_row_is_reported_with_its_line_and_skipped():
    r = read_records(_log(BAD))
    got = {b.line: b.reason for b in r.bad_rows}
    assert got == {
        3: "missing part",
        4: "found (81) is more than sample_size (80)",
        5: "sample_size (80) is more than lot_size (50)",
        6: "the line has 8 field(s), the header has 9",
        7: "date ('2024-13-07') must be a date written YYYY-MM-DD",
        8: "found ('2.5') must be a whole number",
        9: "plan c ('x') must be a whole number of at least 0",
        10: "disposition ('maybe') must be accept or reject",
        13: "missing sample_size",
    }
    assert r.frame["line"].tolist() == [2, 12]
    s = summarise(r)
    assert s.rows_read == 11 and s.rows_used == 2 and s.groups[0].lots == 2


def test_cli_reports_bad_rows_on_stderr_and_processes_the_rest(tmp_path, capsys):
    path = tmp_path / "lots.csv"
    path.write_text(_log(BAD).getvalue())
    code = main(["records", str(path), "--json"])
    cap = capsys.readouterr()
    assert code == 0
    d = json.loads(cap.out)
    err = cap.err.strip().splitlines()
    assert len(err) == 9 and all(": line " in e and e.endswith("row skipped") for e in err)
    assert "line 4: found (81) is more than sample_size (80)" in cap.err
    assert {"source", "rows_read", "rows_used", "bad_rows", "groups", "findings"} <= set(d)
    g = d["groups"][0]
    assert {"supplier", "part", "lots", "accepted", "acceptance_rate", "process_average",
            "interval", "oc_check", "plans", "out_of_limits"} <= set(g)
    assert {"lower", "upper", "confidence", "method"} <= set(g["interval"])
    assert {"expected_acceptance_rate", "p_at_most_observed", "p_at_least_observed",
            "two_sided", "consistent"} <= set(g["oc_check"])


def test_cli_text_and_plot(tmp_path, capsys):
    path = tmp_path / "lots.csv"
    pd.concat([history(50, p=0.02, seed=1, suppliers=("Acme",), parts=("H-1",)),
               history(30, p=0.05, seed=2, suppliers=("Borg",), parts=("K-7",))]) \
        .to_csv(path, index=False)
    png = tmp_path / "run.png"
    code = main(["records", str(path), "--plot", str(png)])
    cap = capsys.readouterr()
    assert code == 0 and cap.err == ""
    assert "Acme" in cap.out and "Borg" in cap.out and "interval (exact)" in cap.out
    assert png.read_bytes()[:4] == b"\x89PNG"


@pytest.mark.parametrize("argv, needle", [
    (["records", "NOPE.csv"], "does not exist"),
    (["records", "LOTS", "--confidence", "2"], "--confidence (2)"),
    (["records", "LOTS", "--supplier", "Zed"], "--supplier (Zed) is not in"),
    (["records", "LOTS", "--plot", "x.jpg"], "--plot (x.jpg)"),
    (["records", "NOCOLS"], "lacks the column(s) found"),
    (["records", "ALLBAD"], "has no usable rows"),
    (["records", "LOTS", "--plans", "nowhere"], "--plans (nowhere) is not a folder"),
])
def test_cli_malformed_input_is_one_line_exit_2(tmp_path, capsys, monkeypatch, argv, needle):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "LOTS").write_text(_log(BAD[:1]).getvalue())
    (tmp_path / "NOCOLS").write_text("date,supplier,part,lot_size,sample_size,plan,"
                                     "disposition\n")
    (tmp_path / "ALLBAD").write_text(_log(BAD[1:2]).getvalue())
    code = main(argv)
    cap = capsys.readouterr()
    assert code == 2 and cap.out == ""
    last = cap.err.strip().splitlines()[-1]
    assert needle in last and "Traceback" not in cap.err


# --- plan files -----------------------------------------------------------------

def test_plan_files_are_looked_up_in_the_plans_folder(tmp_path):
    plans = tmp_path / "plans"
    plans.mkdir()
    (plans / "housing.plan").write_text("# incoming plan for housings\nn=80,c=2\n")
    assert resolve_plan_file("housing.plan", plans) == SinglePlan(n=80, c=2)
    assert resolve_plan_file("housing", plans) == SinglePlan(n=80, c=2)
    for name, needle in (("../x", "inside the plans folder"), ("other", "is not in")):
        with pytest.raises(InputError, match=needle):
            resolve_plan_file(name, plans)
    with pytest.raises(InputError, match="give --plans DIR"):
        resolve_plan_file("housing", None)
    text = ("date,supplier,part,lot_size,sample_size,found,plan_file,disposition\n"
            "2024-01-02,Acme,H-1,1000,80,2,housing.plan,accept\n"
            "2024-01-03,Acme,H-1,1000,80,2,missing.plan,accept\n")
    r = read_records(io.StringIO(text), plans_dir=plans)
    assert len(r.frame) == 1 and r.bad_rows[0].line == 3
    assert "missing.plan" in r.bad_rows[0].reason
