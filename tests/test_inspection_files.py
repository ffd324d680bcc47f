"""Inspection errors stated in plan files: ``check`` and ``sheet`` judge every
characteristic at the true quality, and the sheet states the rates and shows the
error-free OC beside the true one.

References (named again beside each table):

* closed form: an item is flagged with probability p_e = p (1 - e2) + (1 - p) e1,
  so a single plan's binomial Pa at true p is the error-free binomial Pa at p_e --
  N. L. Johnson, S. Kotz and R. N. Rodriguez, J. Quality Technology 18 (1986), from
  memory; evaluated with mpmath (30 digits);
* Clopper-Pearson (Biometrika 26, 1934): the one-sided 95 % upper bound for x of m
  solves I_u(x + 1, m - x) = 0.95 (mpmath's regularised incomplete beta).
"""

from __future__ import annotations

import json

import mpmath
import pytest

from lotwise.cli import main

mpmath.mp.dps = 30

HEAD = '[part]\nid = "P-1"\n'
CHAR = '[[characteristic]]\nid = "M1"\nclass = "major"\naql = "1%"\nrql = "6%"\n'


def _binom_cdf(n, c, p):
    p = mpmath.mpf(p)
    return sum(mpmath.binomial(n, k) * p**k * (1 - p)**(n - k) for k in range(c + 1))


def _run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


# check of a folder: Pa at the true AQL and RQL equals the closed form at the apparent
# fraction (JKR 1986 from memory; mpmath), 1e-12; e2, e1 as written in [inspection].
FILE_RATES = [  # [inspection] body, e2, e1
    ('miss_rate = "10%"\nfalse_alarm = 0.02\n', 0.10, 0.02),
    ('miss_rate = 0.25\n', 0.25, 0.0),
    ('study = "missed 4 of 50 nonconforming; flagged 2 of 50 conforming"\n', 0.08, 0.04),
]


@pytest.mark.parametrize("body,e2,e1", FILE_RATES)
def test_check_folder_judges_at_true_quality(tmp_path, capsys, body, e2, e1):
    (tmp_path / "p.toml").write_text(HEAD + "[inspection]\n" + body + CHAR)
    code, out, _ = _run(capsys, "check", str(tmp_path), "--json")
    row = json.loads(out)["characteristics"][0]
    n, c = row["n"], row["c"]
    for level, key in ((0.01, "pa_aql"), (0.06, "pa_rql")):
        pe = mpmath.mpf(level) * (1 - mpmath.mpf(e2)) + (1 - mpmath.mpf(level)) * mpmath.mpf(e1)
        assert row[key] == pytest.approx(float(_binom_cdf(n, c, pe)), abs=1e-12)
    assert row["meets"] and code == 0
    assert row["inspection_error"]["miss_rate"] == e2
    assert row["inspection_error"]["false_alarm"] == e1


def test_zero_rates_in_a_file_change_nothing(tmp_path, capsys):
    # e1 = e2 = 0: every figure equals the file without [inspection] (common practice,
    # no source: a perfect inspection is today's model)
    (tmp_path / "a.toml").write_text(HEAD + CHAR)
    (tmp_path / "b.toml").write_text(HEAD + '[inspection]\nmiss_rate = 0\nfalse_alarm = 0\n'
                                     + CHAR)
    _, out, _ = _run(capsys, "check", str(tmp_path), "--json")
    a, b = json.loads(out)["characteristics"]
    for key in ("n", "c", "alpha", "beta", "pa_aql", "pa_rql"):
        assert a[key] == b[key]


# Bad [inspection] entries: one line naming the file and the key, exit 2 (rules of the
# project's command line: common practice, no source).
BAD = [
    ('miss_rate = "150%"\n', "inspection.miss_rate (150%)"),
    ('miss_rate = 0.6\nfalse_alarm = 0.5\n', "inspection.miss_rate (0.6) plus "
                                              "inspection.false_alarm"),
    ('study = "missed x of 5"\n', "inspection.study"),
    ('study = 4\n', "inspection.study (4)"),
    ('miss_rate = true\n', "inspection.miss_rate (True)"),
    ('miss_rat = 0.1\n', "inspection.miss_rat: unknown key; did you mean 'miss_rate'?"),
    ('study = "missed 1 of 5 nonconforming"\nmiss_rate = 0.1\n',
     "inspection.miss_rate (0.1) cannot be combined with inspection.study"),
]


@pytest.mark.parametrize("body,named", BAD)
def test_bad_inspection_table(tmp_path, capsys, body, named):
    path = tmp_path / "p.toml"
    path.write_text(HEAD + "[inspection]\n" + body + CHAR)
    code, out, err = _run(capsys, "check", str(path))
    assert code == 2 and out == ""
    line = err.strip()
    assert "\n" not in line and "Traceback" not in line
    assert f"{path}: {named}" in line


def test_variables_characteristic_refused_with_the_file(tmp_path, capsys):
    path = tmp_path / "v.toml"
    path.write_text(HEAD + '[inspection]\nmiss_rate = 0.1\n' + CHAR
                    + 'scheme = "variables"\nsigma = "known"\nsigma_value = 1\nupper = 10\n')
    code, _, err = _run(capsys, "check", str(path))
    assert code == 2 and str(path) in err and "[inspection]" in err


# The sheet: rates and their source stated; the OC table has the error-free column,
# equal to the binomial closed form of the same plan at the true p (mpmath), 1e-12; the
# study's upper bounds are Clopper-Pearson's (mpmath's betaincinv-free check:
# I_u(x + 1, m - x) = 0.95 at the printed bound, to the printed digits).
def test_sheet_states_rates_and_error_free_curve(tmp_path, capsys):
    src = tmp_path / "s.toml"
    src.write_text(HEAD + '[inspection]\nstudy = "missed 4 of 50 nonconforming; flagged 2 of '
                   '50 conforming"\n' + CHAR)
    code, _, err = _run(capsys, "sheet", str(src), "--out", str(tmp_path / "out"))
    assert code == 0, err
    md = (tmp_path / "out" / "s.md").read_text()
    assert "**Inspection:** Miss rate 8.00 %, false-alarm rate 4.00 % (from a study: missed 4 " \
           "of 50 nonconforming; flagged 2 of 50 conforming; one-sided 95% upper bounds " \
           "17.4 % and 12.1 %" in md
    for x, m, shown in ((4, 50, 0.174), (2, 50, 0.121)):
        u = mpmath.findroot(lambda t: mpmath.betainc(x + 1, m - x, 0, t, regularized=True)
                            - mpmath.mpf("0.95"), (0.01, 0.6), solver="illinois")
        assert round(float(u), 3) == shown
    assert "| M1 | perfect insp. |" in md and "| M1 | upper bounds |" in md
    lines = (tmp_path / "out" / "s-oc.csv").read_text().splitlines()
    header = lines[0].split(",")
    assert header == ["p", "M1_binomial", "M1_error_free_binomial"]
    _, out, _ = _run(capsys, "check", str(src), "--json")
    row = json.loads(out)["characteristics"][0]
    for line in lines[1:]:
        p, true_pa, free_pa = map(float, line.split(","))
        # the CSV keeps 10 significant digits (lotwise.core.numbers.csv_number)
        assert free_pa == pytest.approx(float(_binom_cdf(row["n"], row["c"], p)), rel=5e-10)
        pe = mpmath.mpf(p) * (1 - mpmath.mpf("0.08")) + (1 - mpmath.mpf(p)) * mpmath.mpf("0.04")
        assert true_pa == pytest.approx(float(_binom_cdf(row["n"], row["c"], pe)), rel=5e-10)


# Scope (README): designs of double, sequential and chain plans with inspection errors
# in a finite lot are refused in one line that says what to do instead (project rule for
# bad input: common practice, no source).
@pytest.mark.parametrize("scheme", ["double", "sequential", "chain"])
def test_finite_lot_design_of_other_families_refused(capsys, scheme):
    code, out, err = _run(capsys, "design", "--scheme", scheme, "--aql", "1%", "--rql", "6%",
                          "--lot-size", "2000", "--miss-rate", "10%")
    assert code == 2 and out == ""
    assert f"--scheme ({scheme})" in err and "--model binomial" in err
    assert "check --lot-size" in err and "\n" not in err.strip()
