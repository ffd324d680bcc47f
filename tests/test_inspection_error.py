"""Imperfect inspection: misclassification in every attribute plan.

References used below (named again beside each table):

* closed forms: an item flagged with probability p_e = p (1 - e2) + (1 - p) e1
  (per unit u (1 - e2) + e1), so the binomial/Poisson OC at true p is the
  error-free OC at p_e -- N. L. Johnson, S. Kotz and R. N. Rodriguez, "Statistical
  effects of imperfect inspection sampling", J. Quality Technology 18 (1986),
  from memory; evaluated here with mpmath (30 digits);
* brute-force enumeration of every sample outcome (N <= 40): the true count
  drawn unit by unit without replacement, each unit misjudged independently, the
  plan's own bench rule (decide) sentencing the flagged count -- written here
  independently of the library's lot-level convolution;
* mpmath sums of the sample form: T ~ hypergeometric, observed count
  Bin(T, 1 - e2) + Bin(n - T, e1);
* a seeded simulation of rectifying inspection with misses, within 4 standard
  errors;
* Clopper-Pearson (Biometrika 26, 1934): the upper bound solves
  I_u(x + 1, m - x) = 0.95 (mpmath), and for x = 0 it is 1 - 0.05^(1/m)
  (closed form).
"""

from __future__ import annotations

import json
from math import comb

import mpmath
import numpy as np
import pytest

from lotwise.cli import main
from lotwise.core.inspection import (ErrorRates, clopper_pearson_upper, observed_cdf,
                                     parse_study)
from lotwise.core.types import Scope, Targets
from lotwise.families.base import parse_plan
from lotwise.families.misclassified import design_misclassified, wrap

mpmath.mp.dps = 30


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def _mp_binom_cdf(n, c, p):
    p = mpmath.mpf(p)
    return sum(mpmath.binomial(n, k) * p**k * (1 - p)**(n - k) for k in range(min(c, n) + 1))


def _mp_pois_cdf(c, lam):
    lam = mpmath.mpf(lam)
    return sum(mpmath.exp(-lam) * lam**k / mpmath.factorial(k) for k in range(c + 1))


# Closed forms (JKR 1986 from memory; mpmath 30 digits), tolerance 1e-12 absolute.
BINOMIAL = [  # n, c, p, e2 (miss), e1 (false alarm)
    (80, 2, 0.06, 0.20, 0.0),
    (80, 2, 0.01, 0.0, 0.02),
    (125, 3, 0.025, 0.15, 0.01),
    (20, 0, 0.10, 0.30, 0.05),
    (315, 7, 0.004, 0.05, 0.003),
]


@pytest.mark.parametrize("n,c,p,e2,e1", BINOMIAL)
def test_binomial_closed_form(n, c, p, e2, e1):
    plan = wrap(parse_plan(f"n={n},c={c}"), ErrorRates(miss_rate=e2, false_alarm=e1))
    pe = mpmath.mpf(p) * (1 - mpmath.mpf(e2)) + (1 - mpmath.mpf(p)) * mpmath.mpf(e1)
    assert plan.pa(p, "binomial", Scope()) == pytest.approx(float(_mp_binom_cdf(n, c, pe)),
                                                             abs=1e-12)
    # the Poisson approximation is taken at the apparent fraction too
    assert plan.pa(p, "poisson", Scope()) == pytest.approx(float(_mp_pois_cdf(c, n * pe)),
                                                            abs=1e-12)


# Nonconformities per unit: apparent rate u (1 - e2) + e1 (closed form; mpmath), 1e-12.
PER_UNIT = [(50, 2, 0.02, 0.1, 0.01), (13, 0, 0.05, 0.25, 0.0), (200, 10, 0.03, 0.0, 0.02)]


@pytest.mark.parametrize("n,c,u,e2,e1", PER_UNIT)
def test_per_unit_closed_form(n, c, u, e2, e1):
    plan = wrap(parse_plan(f"n={n},c={c}"), ErrorRates(miss_rate=e2, false_alarm=e1))
    lam = n * (mpmath.mpf(u) * (1 - mpmath.mpf(e2)) + mpmath.mpf(e1))
    got = plan.pa(u, "poisson", Scope(per_unit=True))
    assert got == pytest.approx(float(_mp_pois_cdf(c, lam)), abs=1e-12)


def _brute(decide, N, D, e1, e2):
    """Exact Pa and AOQ of ``plan`` for a lot of N holding D, by enumerating the
    unit-by-unit draw (each unit's true state and verdict) and sentencing with the
    plan's bench rule (independent of the library's lot-level convolution)."""
    # (inspected, truly bad inspected, flagged, bad and flagged) -> probability
    states = {(0, 0, 0, 0): 1.0}
    pa = out = 0.0
    while states:
        nxt = {}
        for (m, t, o, bf), pr in states.items():
            act = decide(m, o)
            if act != "continue":
                missed = t - bf  # stay in the lot whatever the sentence
                if act == "accept":
                    pa += pr
                    out += pr * (missed + (D - t))
                else:  # the rest screened, each nonconforming item missed with e2
                    out += pr * (missed + e2 * (D - t))
                continue
            bad = (D - t) / (N - m)
            for is_bad, pb in ((1, bad), (0, 1.0 - bad)):
                if pb == 0:
                    continue
                flag_p = (1 - e2) if is_bad else e1
                for flag, pf in ((1, flag_p), (0, 1.0 - flag_p)):
                    if pf == 0:
                        continue
                    key = (m + 1, t + is_bad, o + flag, bf + (is_bad and flag))
                    nxt[key] = nxt.get(key, 0.0) + pr * pb * pf
        states = nxt
    return pa, out / N


# Brute-force enumeration, N <= 40 (every outcome of the draw and the verdicts);
# tolerance 1e-12 absolute. Pa: any plan. AOQ: the bench rules stop once the decision is
# certain, which changes the outgoing items only through the sample, so AOQ is compared
# for the single plan alone (its decided sample is the whole sample only when not
# curtailed; the single plan's rule is compared with curtailment off, below).
FINITE = [  # plan, N, e2, e1
    ("n=8,c=1", 30, 0.15, 0.07),
    ("n=12,c=0", 40, 0.3, 0.0),
    ("n=5,c=2", 20, 0.0, 0.1),
    ("double: n1=6,c1=0,r1=3,n2=8,c2=3", 30, 0.15, 0.07),
    ("multiple: n=4/4/4; c=-/0/2; r=2/3/3", 25, 0.2, 0.05),
    ("sequential: h1=0.8,h2=1.2,s=0.1,truncate=16", 36, 0.1, 0.04),
]


@pytest.mark.parametrize("text,N,e2,e1", FINITE)
def test_finite_lot_against_enumeration(text, N, e2, e1):
    inner = parse_plan(text)
    scope = Scope(lot_size=N)
    inner = inner.for_scope(scope)
    plan = wrap(inner, ErrorRates(miss_rate=e2, false_alarm=e1))
    for D in sorted({0, 1, 2, N // 5, N // 2, N - 1, N}):
        pa, _ = _brute(lambda m, o: inner.decide(m, o).action, N, D, e1, e2)
        assert float(plan.pa_count(D, scope)) == pytest.approx(pa, abs=1e-12), D


def _stage_rule(sizes, acc, rej):
    """Sentence only at the end of each stage (no curtailment): the rule whose
    remainder the AOQ formulas describe."""
    ends = np.cumsum(sizes)

    def decide(m, o):
        for end, a, r in zip(ends, acc, rej):
            if m == end:
                return "accept" if o <= a else ("reject" if o >= r else "continue")
        return "continue"
    return decide


# AOQ with imperfect screening against enumeration (N <= 40), full stages, 1e-12.
FINITE_AOQ = [  # notation, stages (sizes, acc, rej), N, e2, e1
    ("n=8,c=1", ((8,), (1,), (2,)), 30, 0.15, 0.07),
    ("n=12,c=0", ((12,), (0,), (1,)), 40, 0.3, 0.0),
    ("double: n1=6,c1=0,r1=3,n2=8,c2=3", ((6, 8), (0, 3), (3, 4)), 30, 0.15, 0.07),
]


@pytest.mark.parametrize("text,stages,N,e2,e1", FINITE_AOQ)
def test_finite_lot_aoq_against_enumeration(text, stages, N, e2, e1):
    scope = Scope(lot_size=N)
    plan = wrap(parse_plan(text), ErrorRates(miss_rate=e2, false_alarm=e1))
    for D in sorted({0, 1, 3, N // 3, N - 2, N}):
        _, aoq = _brute(_stage_rule(*stages), N, D, e1, e2)
        assert float(plan.aoq_count(D, scope)) == pytest.approx(aoq, abs=1e-12), D


# mpmath sums of the sample form (hypergeometric true count, two binomials), 1e-10.
SAMPLE_FORM = [(50, 2, 500, 20, 0.1, 0.02), (200, 5, 10_000, 300, 0.15, 0.01),
               (32, 1, 1000, 60, 0.05, 0.0)]


@pytest.mark.parametrize("n,c,N,D,e2,e1", SAMPLE_FORM)
def test_finite_lot_against_mpmath_sample_form(n, c, N, D, e2, e1):
    e1m, e2m = mpmath.mpf(e1), mpmath.mpf(e2)
    total = mpmath.mpf(0)
    for t in range(max(0, n - (N - D)), min(n, D) + 1):
        h = mpmath.binomial(D, t) * mpmath.binomial(N - D, n - t) / mpmath.binomial(N, n)
        if h < mpmath.mpf(10)**-40:
            continue
        inner = mpmath.mpf(0)
        for j1 in range(min(t, c) + 1):
            p1 = mpmath.binomial(t, j1) * (1 - e2m)**j1 * e2m**(t - j1)
            inner += p1 * _mp_binom_cdf(n - t, c - j1, e1m) if e1 > 0 else p1
        total += h * inner
    plan = wrap(parse_plan(f"n={n},c={c}"), ErrorRates(miss_rate=e2, false_alarm=e1))
    assert float(plan.pa_count(D, Scope(lot_size=N))) == pytest.approx(float(total), abs=1e-10)
    # the designer's own sample-form kernel, every c up to this one at once
    cdf = observed_cdf([n, n + 1], D, N, e2, e1, c)
    assert cdf[0][c] == pytest.approx(float(total), abs=1e-10)


# Seeded simulation of rectifying inspection with misses and false alarms (lots drawn
# from a process at p, every item misjudged independently, rejected lots screened with
# the same misses, flagged items replaced by conforming ones): the mean outgoing
# fraction agrees with AOQ = p [e2 n + Pa (N - n) + (1 - Pa) e2 (N - n)] / N within
# 4 standard errors.
SIMULATION = [(50, 1, 400, 0.03, 0.2, 0.02), (80, 2, 1000, 0.05, 0.1, 0.0)]


@pytest.mark.parametrize("n,c,N,p,e2,e1", SIMULATION)
def test_aoq_against_simulation(n, c, N, p, e2, e1):
    rng = np.random.default_rng(20261202)
    lots = 20_000
    bad = rng.random((lots, N)) < p
    flagged = np.where(bad, rng.random((lots, N)) < 1 - e2, rng.random((lots, N)) < e1)
    accept = flagged[:, :n].sum(axis=1) <= c
    # outgoing: sample keeps its missed items; remainder as is (accepted) or screened
    keep_sample = (bad[:, :n] & ~flagged[:, :n]).sum(axis=1)
    rest_all = bad[:, n:].sum(axis=1)
    rest_missed = (bad[:, n:] & ~flagged[:, n:]).sum(axis=1)
    out = (keep_sample + np.where(accept, rest_all, rest_missed)) / N
    plan = wrap(parse_plan(f"n={n},c={c}"), ErrorRates(miss_rate=e2, false_alarm=e1))
    scope = Scope(lot_size=N)
    aoq = float(plan.aoq(p, "binomial", scope))
    se = out.std(ddof=1) / np.sqrt(lots)
    assert abs(out.mean() - aoq) < 4 * se
    pa = float(plan.pa(p, "binomial", scope))
    closed = p * (e2 * n + pa * (N - n) + (1 - pa) * e2 * (N - n)) / N
    assert aoq == pytest.approx(closed, rel=1e-12)


# Direction of the effect (JKR 1986, from memory): misses raise Pa at every level
# (the consumer's risk grows), false alarms lower it (the producer's risk grows).
@pytest.mark.parametrize("text", ["n=80,c=2", "double: n1=50,c1=1,r1=4,n2=100,c2=4",
                                  "sequential: h1=1.5,h2=2.0,s=0.03,truncate=300"])
def test_direction_of_the_effect(text):
    plan = parse_plan(text)
    ps = np.linspace(0.005, 0.1, 12)
    free = np.asarray(plan.pa(ps, "binomial", Scope()))
    missed = np.asarray(wrap(plan, ErrorRates(miss_rate=0.2, false_alarm=0)).pa(
        ps, "binomial", Scope()))
    alarmed = np.asarray(wrap(plan, ErrorRates(miss_rate=0, false_alarm=0.02)).pa(
        ps, "binomial", Scope()))
    assert np.all(missed > free) and np.all(alarmed < free)


# Clopper-Pearson upper bounds: x = 0 closed form 1 - 0.05^(1/m); otherwise the bound u
# solves I_u(x + 1, m - x) = 0.95 (mpmath betainc, regularized); 1e-10.
@pytest.mark.parametrize("x,m", [(0, 30), (0, 59), (4, 50), (2, 50), (10, 40), (40, 40)])
def test_clopper_pearson(x, m):
    u = clopper_pearson_upper(x, m)
    if x == 0:
        assert u == pytest.approx(1 - 0.05 ** (1 / m), abs=1e-10)
    if x == m:
        assert u == 1.0
    else:
        got = mpmath.betainc(x + 1, m - x, 0, u, regularized=True)
        assert float(got) == pytest.approx(0.95, abs=1e-10)


def test_study_text():
    # the worked form of the option's help text (point estimates are x/m)
    r = parse_study("missed 4 of 50 nonconforming; flagged 2 of 50 conforming")
    assert (r.miss_rate, r.false_alarm) == (0.08, 0.04)
    assert r.miss_rate_upper == clopper_pearson_upper(4, 50)
    assert r.as_dict()["false_alarm_upper"] == clopper_pearson_upper(2, 50)


# Designs hold the true risks and are the smallest: every c at n - 1 misses a risk
# (evaluated with the wrapped plan, itself checked above against closed forms and
# enumeration).
DESIGNS = [  # aql, rql, lot, e2, e1
    (0.01, 0.06, None, 0.1, 0.01),
    (0.01, 0.06, 2000, 0.1, 0.01),
    (0.01, 0.06, 10_000, 0.1, 0.02),
    (0.02, 0.10, 500, 0.2, 0.0),
    (0.005, 0.05, None, 0.0, 0.005),
]


@pytest.mark.parametrize("aql,rql,lot,e2,e1", DESIGNS)
def test_design_holds_true_risks_and_is_smallest(aql, rql, lot, e2, e1):
    rates = ErrorRates(miss_rate=e2, false_alarm=e1)
    d = design_misclassified("single", rates, aql=aql, rql=rql, lot_size=lot)
    scope = Scope(lot_size=lot)
    model = scope.exact_model
    t = Targets(aql=aql, rql=rql)
    r = d.plan.risks(t, scope, model)
    assert r.meets
    n = d.plan.inner.n
    for c in range(n):
        smaller = wrap(parse_plan(f"n={n - 1},c={c}"), rates)
        assert not smaller.risks(t, scope, model).meets, c


def test_design_other_families_hold_true_risks():
    # binomial: the family's designer at the apparent levels (exact, see module notes)
    rates = ErrorRates(miss_rate=0.1, false_alarm=0.01)
    t = Targets(aql=0.01, rql=0.06)
    for scheme in ("double", "sequential"):
        d = design_misclassified(scheme, rates, aql=0.01, rql=0.06)
        assert d.plan.risks(t, Scope(), "binomial").meets


def test_zero_rates_change_nothing(capsys):
    # e1 = e2 = 0: the plan is not wrapped and every figure equals today's output
    plan = parse_plan("n=80,c=2")
    assert wrap(plan, ErrorRates(miss_rate=0, false_alarm=0)) is plan
    base = ["check", "--n", "80", "--c", "2", "--aql", "1%", "--rql", "6%", "--lot-size",
            "1000", "--json"]
    _, plain, _ = run(capsys, *base)
    _, zero, _ = run(capsys, *base, "--miss-rate", "0", "--false-alarm", "0%")
    zero = json.loads(zero)
    assert zero.pop("inspection_error") == {"miss_rate": 0.0, "false_alarm": 0.0,
                                            "source": "stated"}
    assert zero == json.loads(plain)


def test_check_json_contract_with_study(capsys):
    code, out, err = run(capsys, "check", "--n", "80", "--c", "2", "--aql", "1%", "--rql",
                         "6%", "--study", "missed 4 of 50 nonconforming", "--json")
    d = json.loads(out)
    ie = d["inspection_error"]
    assert {"miss_rate", "false_alarm", "miss_rate_upper", "false_alarm_upper"} <= set(ie)
    assert ie["false_alarm_upper"] == 0.0 and ie["miss_rate"] == 0.08
    # figures under models are at the true levels: the closed form at p_e (mpmath)
    pe = 0.06 * (1 - 0.08)
    assert d["models"]["binomial"]["pa_rql"] == pytest.approx(
        float(_mp_binom_cdf(80, 2, pe)), abs=1e-12)
    assert ie["at_upper"]["beta"] > d["beta"]  # a higher miss rate accepts more bad lots


BAD = [  # args, the option named in the one-line message
    (["--miss-rate", "1.5"], "--miss-rate"),
    (["--false-alarm", "-1%"], "--false-alarm"),
    (["--miss-rate", "60%", "--false-alarm", "40%"], "--miss-rate"),
    (["--study", "missed 4 of 3 nonconforming"], "--study"),
    (["--study", "lost 4 of 50"], "--study"),
    (["--study", "missed 1 of 50 nonconforming", "--miss-rate", "1%"], "--miss-rate"),
]


@pytest.mark.parametrize("args,option", BAD)
def test_bad_rates_one_line_exit_2(capsys, args, option):
    # project rule (bad input: one line naming the option, exit 2)
    code, out, err = run(capsys, "check", "--n", "80", "--c", "2", "--aql", "1%", "--rql",
                         "6%", *args)
    assert code == 2 and option in err and err.count("\n") == 1


def test_no_sample_reaches_targets(capsys):
    # false alarms of 5 % in a lot of 200 at AQL 1 %/RQL 3 %: even 100 % inspection
    # flags about 11 items at the AQL and 15 at the RQL (common practice, no source:
    # the arithmetic of expected counts); the design says what the best reaches.
    code, out, err = run(capsys, "design", "--aql", "1%", "--rql", "3%", "--lot-size", "200",
                         "--false-alarm", "5%", "--miss-rate", "10%", "--json")
    d = json.loads(out)
    assert code == 1 and d["feasible"] is False and "best at n = 200" in d["reason"]


def test_other_options_refused(capsys):
    code, _, err = run(capsys, "design", "--aql", "1%", "--rql", "6%", "--scheme",
                       "variables", "--miss-rate", "1%")
    assert code == 2 and "--measurement-sd" in err
    code, _, err = run(capsys, "check", "--plan", "chain: n=50,i=3", "--aql", "1%", "--rql",
                       "6%", "--lot-size", "500", "--miss-rate", "5%")
    assert code == 2 and "chain" in err and err.count("\n") == 1


# The error-free column of a finite-lot OC table is taken at the table's own whole
# counts (up at and below the AQL, down at and above the RQL): each row equals the
# hypergeometric sum at that row's lot_count (mpmath, 30 digits), 1e-12.
ERROR_FREE_ROWS = [  # plan, N, aql, rql, levels
    ("n=50,c=1", 1000, "1%", "7%", "0.0105,0.0335,0.07,0.0715"),
    ("n=20,c=0", 75, "2%", "10%", "0.01,0.02,0.05,0.1,0.13"),
]


@pytest.mark.parametrize("plan,N,aql,rql,levels", ERROR_FREE_ROWS)
def test_error_free_column_at_the_tables_counts(capsys, plan, N, aql, rql, levels):
    code, out, _ = run(capsys, "oc", "--plan", plan, "-N", str(N), "--aql", aql, "--rql", rql,
                       "--at", levels, "--miss-rate", "0.1", "--false-alarm", "0.02", "--json")
    assert code == 0
    rep = json.loads(out)
    cols = rep["columns"]
    n, c = (int(kv.split("=")[1]) for kv in plan.split(","))
    for row in rep["rows"]:
        D = row[cols.index("lot_count")]
        exact = sum(mpmath.binomial(D, k) * mpmath.binomial(N - D, n - k)
                    for k in range(c + 1)) / mpmath.binomial(N, n)
        assert row[cols.index("error_free_pa")] == pytest.approx(float(exact), abs=1e-12)


@pytest.mark.parametrize("extra", [[], ["--lot-size", "2000"]])
def test_cli_design_with_rates_holds_the_true_risks(capsys, extra):
    # The designed plan's Pa at the true AQL and RQL, recomputed here from the
    # closed form Pa = B(c; n, p(1 - e2) + (1 - p) e1) with mpmath (30 digits) for
    # the process; both risks met (tolerance 1e-9).
    import json

    import mpmath

    from lotwise.cli import main

    code = main(["design", "--aql", "1%", "--rql", "6%", "--miss-rate", "10%",
                 "--false-alarm", "1%", "--json", *extra])
    out, err = capsys.readouterr()
    assert code == 0, err
    d = json.loads(out)
    assert d["inspection_error"]["miss_rate"] == 0.1 and d["meets"]
    if not extra:
        n, c = d["n"], d["c"]

        def pa(p):
            pe = mpmath.mpf(p) * (1 - mpmath.mpf("0.1")) + (1 - mpmath.mpf(p)) * mpmath.mpf("0.01")
            return sum(mpmath.binomial(n, k) * pe ** k * (1 - pe) ** (n - k) for k in range(c + 1))

        assert float(pa("0.01")) >= 0.95 - 1e-9 and float(pa("0.06")) <= 0.10 + 1e-9
        assert d["models"]["binomial"]["pa_rql"] == pytest.approx(float(pa("0.06")), abs=1e-9)
