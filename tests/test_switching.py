"""Switching schemes: exact scheme OC, expected lots to a switch, records, plan files.

Sources, named beside each check:

* scipy.stats (binom, hypergeom): the plans' own OC, which lotwise computes
  with its own kernels;
* closed forms for simple rule sets: the geometric and negative binomial
  means, and the mean waiting time ``(1 - a^r) / ((1 - a) a^r)`` for a run of
  ``r`` successes of probability ``a`` (W. Feller, *An Introduction to
  Probability Theory and Its Applications*, vol. 1, 3rd ed., Wiley, 1968,
  ch. XIII; from memory);
* a recursion written in this file (survival probabilities over the last
  lots' results) for the waiting time for ``k`` failures within ``w``
  consecutive trials (computed);
* a seeded simulation written in this file, with its own copy of the rules
  (10**5 and 10**6 lots);
* the invented lot history ``examples/switching-lots.csv``, traced by hand.
"""

from __future__ import annotations

import contextlib
import io
import json
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from lotwise.analysis.switching import Scheme, SwitchRules, scheme_oc
from lotwise.cli import main
from lotwise.core.quantities import InputError
from lotwise.core.types import Scope
from lotwise.documents.planfile import loads
from lotwise.families.base import parse_plan
from lotwise.families.single import SinglePlan

ROOT = Path(__file__).resolve().parents[1]
N80_2, N80_1, N32_1 = SinglePlan(n=80, c=2), SinglePlan(n=80, c=1), SinglePlan(n=32, c=1)
PROCESS = Scope()


def run(*argv):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(list(argv))
    return code, out.getvalue(), err.getvalue()


# --- the scheme OC against each plan's own OC ------------------------------------

@pytest.mark.parametrize("plan_text, scope, model", [
    ("n=80,c=2", PROCESS, "binomial"),                       # scipy.stats.binom
    ("n=80,c=2", Scope(lot_size=1000), "hypergeometric"),    # scipy.stats.hypergeom
    ("n1=50,c1=1,r1=4,n2=100,c2=3", PROCESS, "binomial"),    # the plan's own exact OC
])
def test_same_plan_everywhere_is_that_plan(plan_text, scope, model):
    # Identity (computed): with one plan for every severity the switches change nothing.
    plan = parse_plan(plan_text)
    ps = np.array([0.0, 0.005, 0.01, 0.02, 0.04, 0.08])
    oc = scheme_oc(Scheme(normal=plan, tightened=plan, reduced=plan), ps, model, scope)
    got = np.array([lv.pa for lv in oc.levels])
    if plan_text == "n=80,c=2" and model == "binomial":
        want = stats.binom.cdf(2, 80, ps)
    elif plan_text == "n=80,c=2":
        want = stats.hypergeom.cdf(2, 1000, np.round(ps * 1000), 80)
    else:
        want = np.asarray(plan.pa(ps, model, scope))
    np.testing.assert_allclose(got, want, rtol=1e-10, atol=1e-13)


def test_rules_that_never_fire_give_the_normal_plan():
    # scipy.stats.binom; rules with a count of 0 never fire (tightened and reduced unused).
    rules = SwitchRules(tighten_rejects=0, reduce_accepts=0)
    sch = Scheme(normal=N80_2, tightened=N80_1, reduced=N32_1, rules=rules)
    ps = np.linspace(0.0, 0.1, 11)
    oc = scheme_oc(sch, ps, "binomial", PROCESS)
    np.testing.assert_allclose([lv.pa for lv in oc.levels], stats.binom.cdf(2, 80, ps),
                               rtol=1e-12, atol=1e-14)
    assert all(lv.share["normal"] == pytest.approx(1.0, abs=1e-12) for lv in oc.levels)
    assert all(lv.lots_to_tightened is None and lv.lots_to_discontinue is None
               for lv in oc.levels)


@pytest.mark.parametrize("rules, scope, model", [
    (SwitchRules(), PROCESS, "binomial"),
    (SwitchRules(reduce_limit=3), PROCESS, "binomial"),
    (SwitchRules(tighten_rejects=3, tighten_window=7, restore_rejects=2), Scope(lot_size=600),
     "hypergeometric"),
    (SwitchRules(reduce_limit=0, relax_accepts=3), Scope(lot_size=600), "hypergeometric"),
    (SwitchRules(), Scope(per_unit=True), "poisson"),
])
def test_shares_sum_to_one(rules, scope, model):
    # Probability (computed): every lot is on exactly one severity.
    sch = Scheme(normal=N80_2, tightened=N80_1, reduced=N32_1, rules=rules)
    oc = scheme_oc(sch, np.linspace(0.0, 0.12, 25), model, scope)
    for lv in oc.levels:
        assert sum(lv.share.values()) == pytest.approx(1.0, abs=1e-10)
        assert min(lv.share.values()) >= 0.0
        assert 0.0 <= lv.pa <= 1.0


def test_lots_to_tightened_null_at_zero_and_falling():
    # Common sense of the rule (computed): worse lots are rejected sooner.
    sch = Scheme(normal=N80_2, tightened=N80_1, reduced=N32_1)
    ps = np.linspace(0.0, 0.15, 31)
    oc = scheme_oc(sch, ps, "binomial", PROCESS)
    assert oc.levels[0].lots_to_tightened is None
    assert oc.levels[0].lots_to_discontinue is None
    assert any("p = 0" in n for n in oc.notes)
    t = np.array([lv.lots_to_tightened for lv in oc.levels[1:]])
    assert np.all(np.diff(t) < 0)
    assert t[-1] > 2.0  # at least two rejected lots are needed


# --- hand-computable cases ---------------------------------------------------------

def waiting_time_k_in_w(q: float, k: int, w: int) -> float:
    """Mean number of trials until ``k`` failures (probability ``q``) fall within
    ``w`` consecutive trials: ``E[T] = sum_t P(T > t)``, with the distribution of
    the last ``w - 1`` results carried forward trial by trial (computed)."""
    alive = {(): 1.0}  # tuple of the last w-1 results (1 = failure), oldest first
    total, t = 0.0, 0
    while True:
        mass = sum(alive.values())
        total += mass
        if mass < 1e-15 or t > 10**6:
            return total
        nxt = {}
        for hist, pr in alive.items():
            for fail, pq in ((1, q), (0, 1.0 - q)):
                window = hist + (fail,)
                if sum(window[-w:]) >= k:
                    continue  # stopped at this trial
                key = window[-(w - 1):] if w > 1 else ()
                nxt[key] = nxt.get(key, 0.0) + pr * pq
        alive, t = nxt, t + 1


@pytest.mark.parametrize("p, k, w", [(0.01, 2, 5), (0.03, 2, 5), (0.05, 3, 7), (0.02, 1, 1),
                                     (0.04, 2, 2)])
def test_lots_to_tightened_is_the_k_in_w_waiting_time(p, k, w):
    # Recursion above (computed), with q = 1 - Pa from scipy.stats.binom.
    q = 1.0 - stats.binom.cdf(2, 80, p)
    sch = Scheme(normal=N80_2, tightened=N80_1,
                 rules=SwitchRules(tighten_rejects=k, tighten_window=w))
    got = scheme_oc(sch, [p], "binomial", PROCESS).levels[0].lots_to_tightened
    assert got == pytest.approx(waiting_time_k_in_w(q, k, w), rel=1e-9)


@pytest.mark.parametrize("p, r", [(0.01, 5), (0.03, 4), (0.06, 2)])
def test_share_on_tightened_from_renewal_means(p, r):
    # Feller (1968), ch. XIII (from memory): a normal period lasts 1/q_N lots
    # (geometric, tighten on one rejection), a tightened one (1 - a^r)/((1 - a) a^r)
    # lots (a run of r accepted lots, a = Pa_T); the shares are their ratios.
    qn = 1.0 - stats.binom.cdf(2, 80, p)
    a = stats.binom.cdf(1, 80, p)
    en, et = 1.0 / qn, (1.0 - a**r) / ((1.0 - a) * a**r)
    sch = Scheme(normal=N80_2, tightened=N80_1,
                 rules=SwitchRules(tighten_rejects=1, tighten_window=1, relax_accepts=r))
    lv = scheme_oc(sch, [p], "binomial", PROCESS).levels[0]
    assert lv.share["tightened"] == pytest.approx(et / (en + et), rel=1e-9)
    assert lv.pa == pytest.approx((en * (1 - qn) + et * a) / (en + et), rel=1e-9)


@pytest.mark.parametrize("p, k", [(0.02, 5), (0.05, 3)])
def test_lots_to_discontinue_geometric_plus_negative_binomial(p, k):
    # Geometric mean 1/q_N to the first rejection, then the negative binomial
    # mean k/q_T for k rejections on tightened when it never relaxes (from memory).
    qn = 1.0 - stats.binom.cdf(2, 80, p)
    qt = 1.0 - stats.binom.cdf(1, 80, p)
    sch = Scheme(normal=N80_2, tightened=N80_1,
                 rules=SwitchRules(tighten_rejects=1, tighten_window=1, relax_accepts=0,
                                   stop_rejects=k))
    lv = scheme_oc(sch, [p], "binomial", PROCESS).levels[0]
    assert lv.lots_to_discontinue == pytest.approx(1.0 / qn + k / qt, rel=1e-9)
    assert lv.lots_to_tightened == pytest.approx(1.0 / qn, rel=1e-9)


# --- simulation -------------------------------------------------------------------

def simulate(p, lots, seed, limit=None, rules=(2, 5, 5, 10, 1)):
    """Seeded simulation with its own copy of the rules (no discontinuation).

    Returns per-lot arrays: accepted, severity (0 N, 1 T, 2 R), and the list of
    waiting times from each fresh start on normal to tightened."""
    tighten_k, tighten_w, relax, reduce, restore = rules
    plans = [(80, 2), (80, 1), (32, 1)]
    rng = np.random.default_rng(seed)
    found = [rng.binomial(n, p, size=lots) for n, _ in plans]
    acc_out = np.zeros(lots, dtype=bool)
    sev_out = np.zeros(lots, dtype=np.int8)
    sev, window, run, total, trun, rrej = 0, [], 0, 0, 0, 0
    waits, since = [], 0
    for i in range(lots):
        n, c = plans[sev]
        x = found[sev][i]
        ok = x <= c
        acc_out[i], sev_out[i] = ok, sev
        since += 1
        if sev == 0:
            window = (window + [not ok])[-tighten_w:]
            if not ok:
                run, total = 0, 0
                if sum(window) >= tighten_k:
                    sev, trun, waits, since = 1, 0, waits + [since], 0
                continue
            run += 1
            total += x
            if run >= reduce:
                if limit is None or total <= limit:
                    sev, rrej = 2, 0
                else:
                    run, total = 0, 0
        elif sev == 1:
            trun = trun + 1 if ok else 0
            if trun >= relax:
                sev, window, run, total, since = 0, [], 0, 0, 0
        else:
            rrej += 0 if ok else 1
            if rrej >= restore:
                sev, window, run, total = 0, [], 0, 0
    return acc_out, sev_out, waits


def batch_se(x, exact, batches=50):
    """Mean and standard error by batch means; never below the independent-lots
    error at the exact value (rare severities leave batches all zero)."""
    m = len(x) // batches
    means = np.asarray(x[:m * batches], dtype=float).reshape(batches, m).mean(axis=1)
    naive = np.sqrt(max(exact * (1.0 - exact), 0.0) / (m * batches))
    return means.mean(), max(means.std(ddof=1) / np.sqrt(batches), naive)


def _simulation_check(lots, limit):
    sch = Scheme(normal=N80_2, tightened=N80_1, reduced=N32_1,
                 rules=SwitchRules(reduce_limit=limit))
    ps = [0.005, 0.01, 0.015, 0.025, 0.04]
    oc = scheme_oc(sch, ps, "binomial", PROCESS)
    for k, (p, lv) in enumerate(zip(ps, oc.levels)):
        acc, sev, waits = simulate(p, lots, seed=20261202 + k, limit=limit)
        m, se = batch_se(acc, exact=lv.pa)
        assert abs(m - lv.pa) <= 4 * se, (p, m, lv.pa, se)
        for s, name in enumerate(("normal", "tightened", "reduced")):
            m, se = batch_se(sev == s, exact=lv.share[name])
            assert abs(m - lv.share[name]) <= 4 * se, (p, name, m, lv.share[name], se)
        if len(waits) >= 30:
            w = np.asarray(waits, dtype=float)
            se = w.std(ddof=1) / np.sqrt(len(w))
            assert abs(w.mean() - lv.lots_to_tightened) <= 4 * se, (p, w.mean(), se)


@pytest.mark.parametrize("limit", [None, 2])
def test_simulation_agrees_1e5(limit):
    # Seeded simulation (this file's own rules), 10**5 lots, 4 standard errors
    # (batch means over 50 batches for the long-run figures).
    _simulation_check(100_000, limit)


@pytest.mark.parametrize("limit", [None, 2])
def test_simulation_agrees_1e6(limit):
    # As above with 10**6 lots (about 8 s each on the project machine, under the
    # 20 s that would make it a slow test).
    _simulation_check(1_000_000, limit)


# --- records ------------------------------------------------------------------------

def test_examples_history_every_switch():
    # examples/switching-lots.csv traced by hand against the plan file's rules.
    code, out, err = run("scheme", str(ROOT / "plans/qp-8840-switching.toml"), "--records",
                         str(ROOT / "examples/switching-lots.csv"), "--json")
    assert code == 0, err
    d = json.loads(out)
    assert d["next_severity"] == "discontinued"
    got = [(s["lot_id"], s["from"], s["to"], s["rule"]) for s in d["switches"]]
    assert got == [
        ("L8810", "normal", "reduced", "reduce_accepts"),      # L8801-L8810 accepted, 5 found
        ("L8814", "reduced", "normal", "restore_rejects"),     # one rejection on reduced
        ("L8818", "normal", "tightened", "tighten_rejects"),   # L8816, L8818 within 5 lots
        ("L8823", "tightened", "normal", "relax_accepts"),     # L8819-L8823 accepted
        ("L8827", "normal", "tightened", "tighten_rejects"),   # L8824, L8827
        ("L8834", "tightened", "discontinued", "stop_rejects"),  # 5 rejections on tightened
    ]
    assert [s["date"] for s in d["switches"]][0] == "2026-05-04"
    assert all(set(s) >= {"lot_id", "date", "from", "to", "rule"} for s in d["switches"])
    assert [f["lot_id"] for f in d["flags"]] == ["L8820"]  # normal plan used on tightened
    assert d["part"] == "QP-8840" and d["lots_used"] == 34


def test_records_text_and_part_filter():
    code, out, _ = run("scheme", str(ROOT / "plans/qp-8840-switching.toml"), "--records",
                       str(ROOT / "examples/switching-lots.csv"))
    assert code == 0 and "next lot: DISCONTINUED" in out and "stop_rejects" in out
    code, _, err = run("scheme", str(ROOT / "plans/qp-8840-switching.toml"), "--records",
                       str(ROOT / "examples/switching-lots.csv"), "--part", "QP-9999")
    assert code == 2 and err.count("\n") == 1 and "QP-9999" in err


def test_reduce_limit_over_starts_afresh(tmp_path):
    # The rule as documented: a run of 10 accepted lots finding more than the limit
    # does not reduce; counting starts afresh (traced by hand).
    rows = ["date,lot_id,supplier,part,lot_size,sample_size,found,plan,disposition"]
    founds = [2] * 10 + [0] * 10
    for i, f in enumerate(founds):
        rows.append(f"2026-01-{i + 1:02d},X{i + 1},S,P-1,1000,80,{f},\"n=80,c=2\",accept")
    (tmp_path / "lots.csv").write_text("\n".join(rows) + "\n")
    (tmp_path / "s.toml").write_text('[part]\nid = "P-1"\n[switching]\nnormal = "n=80,c=2"\n'
                                     'reduced = "n=32,c=1"\n[switching.rules]\n'
                                     'reduce_limit = 5\n')
    code, out, err = run("scheme", str(tmp_path / "s.toml"), "--records",
                         str(tmp_path / "lots.csv"), "--json")
    d = json.loads(out)
    assert [(s["lot_id"], s["to"]) for s in d["switches"]] == [("X20", "reduced")]
    assert d["next_severity"] == "reduced"


# --- JSON contract and command line -------------------------------------------------

def test_scheme_json_contract():
    code, out, err = run("scheme", str(ROOT / "plans/qp-8840-switching.toml"), "--at", "0",
                         "--at", "1%,3%", "--json")
    assert code == 0, err
    d = json.loads(out)
    assert d["scheme"] == "switching" and d["model"] == "hypergeometric"
    assert [lv["p"] for lv in d["levels"]] == [0.0, 0.01, 0.03]
    for lv in d["levels"]:
        assert set(lv) == {"p", "pa", "asn", "share", "lots_to_tightened",
                           "lots_to_discontinue"}
        assert set(lv["share"]) == {"normal", "tightened", "reduced"}
    assert d["levels"][0]["lots_to_tightened"] is None and d["notes"]
    assert d["levels"][1]["lots_to_tightened"] > d["levels"][2]["lots_to_tightened"]


def test_scheme_without_discontinuation_reports_null(tmp_path):
    (tmp_path / "s.toml").write_text('[part]\nid = "P-1"\n[switching]\nnormal = "n=80,c=2"\n'
                                     'tightened = "n=80,c=1"\n[switching.rules]\n'
                                     'stop_rejects = 0\n')
    code, out, _ = run("scheme", str(tmp_path / "s.toml"), "--at", "2%", "--json")
    d = json.loads(out)
    assert d["levels"][0]["lots_to_discontinue"] is None
    assert d["levels"][0]["lots_to_tightened"] is not None


def test_scheme_plot(tmp_path):
    code, out, err = run("scheme", str(ROOT / "plans/qp-8840-switching.toml"), "--points", "11",
                         "--plot", str(tmp_path / "s.png"))
    assert code == 0, err
    assert (tmp_path / "s.png").read_bytes()[:4] == b"\x89PNG"


@pytest.mark.parametrize("text, needle", [
    ('[switching]\nnormal = "n=80,c=2"\n[switching.rules]\ntighten_reject = 2\n',
     "did you mean 'tighten_rejects'"),
    ('[switching]\nnormal = "n=80,c=2"\n[switching.rules]\nreduce_acepts = 9\n',
     "did you mean 'reduce_accepts'"),
    ('[switching]\nnormall = "n=80,c=2"\n', "did you mean 'normal'"),
    ('[switching]\ntightened = "n=80,c=1"\n', "switching.normal is missing"),
    ('[switching]\nnormal = "n=80,c=2"\ntightened = "n=80,c=1"\n[switching.rules]\n'
     'tighten_rejects = 6\n', "tighten_rejects (6) must not be greater than tighten_window (5)"),
    ('[switching]\nnormal = "n1=50,c1=1,r1=4,n2=100,c2=3"\nreduced = "n=32,c=1"\n'
     '[switching.rules]\nreduce_limit = 3\n', "needs a single normal plan"),
    ('[switching]\nnormal = "n=80,c=2"\n[switching.rules]\nreduce_limit = 3\n',
     "needs a reduced plan"),
    ('[switching]\nnormal = "n=80,c=2"\n[switching.rules]\nstop_rejects = -1\n',
     "stop_rejects (-1) must be a whole number of at least 0"),
    ('[switching]\nnormal = "chain: n=10,i=2"\n', "chain and skip-lot"),
])
def test_bad_switching_tables(text, needle):
    with pytest.raises(InputError) as exc:
        loads('[part]\nid = "P"\n' + text, "p.toml")
    assert needle in str(exc.value) and str(exc.value).startswith("p.toml: ")


def test_bad_file_exits_2_one_line(tmp_path):
    f = tmp_path / "s.toml"
    f.write_text('[part]\nid = "P"\n[switching]\nnormal = "n=80,c=2"\n[switching.rules]\n'
                 'relax_acepts = 4\n')
    code, out, err = run("scheme", str(f))
    assert code == 2 and out == "" and err.count("\n") == 1 and "relax_accepts" in err


# --- plan tables ---------------------------------------------------------------------

TABLE = '''aql = "1%"
rql = "10%"
[part]
id = "P-T"
[[table]]
lot_min = 91
lot_max = 150
normal = "n=20,c=0"
tightened = "n=32,c=0"
[[table]]
lot_min = 501
lot_max = 1200
normal = "n=80,c=2"
tightened = "n=80,c=1"
reduced = "n=32,c=1"
'''


def test_table_check_values_and_flags(tmp_path):
    f = tmp_path / "t.toml"
    f.write_text(TABLE)
    code, out, err = run("check", str(f), "--json")
    d = json.loads(out)
    assert code == 1  # the first row's c = 0 plan carries alpha above 10 %
    rows = d["tables"]
    assert [r["meets"] for r in rows] == [False, True]
    # scipy.stats.hypergeom: alpha at the AQL (count rounded up) and beta at the RQL
    # (rounded down) at both ends of each range.
    for r, (n, c) in zip(rows, [(20, 0), (80, 2)]):
        for lot in r["plans"]["normal"]["lots"]:
            N = lot["lot_size"]
            d1, d2 = int(np.ceil(0.01 * N - 1e-9)), int(np.floor(0.10 * N + 1e-9))
            assert lot["alpha"] == pytest.approx(1 - stats.hypergeom.cdf(c, N, d1, n),
                                                 rel=1e-9)
            assert lot["beta"] == pytest.approx(stats.hypergeom.cdf(c, N, d2, n), rel=1e-9)
            # LTPD: the smallest D/N with Pa <= 10 % (scipy.stats.hypergeom, scanned)
            D = next(D for D in range(N + 1) if stats.hypergeom.cdf(c, N, D, n) <= 0.10)
            assert lot["ltpd"] == pytest.approx(D / N, abs=1e-12)
    assert "max_alpha" in rows[0]["flags"][0]
    assert d["characteristics"] == []


def test_table_aoql_against_enumeration(tmp_path):
    # AOQL for a lot of 150, n=20, c=0: max over D of (D/N)((N-n)/N) Pa(n, 0 | N-1, D-1),
    # enumerated with scipy.stats.hypergeom (the exact finite-lot expression).
    f = tmp_path / "t.toml"
    f.write_text(TABLE)
    d = json.loads(run("check", str(f), "--json")[1])
    lot = d["tables"][0]["plans"]["normal"]["lots"][1]
    N, n = 150, 20
    want = max(D / N * (N - n) / N * stats.hypergeom.cdf(0, N - 1, D - 1, n)
               for D in range(1, N + 1))
    assert lot["lot_size"] == 150 and lot["aoql"] == pytest.approx(want, rel=1e-9)


@pytest.mark.parametrize("text, needle", [
    (TABLE + "[[table]]\nlot_min = 1000\nlot_max = 3000\nnormal = \"n=125,c=3\"\n", "overlaps"),
    (TABLE.replace("lot_min = 91", "lot_min = 15"), "more than lot_min (15)"),
    (TABLE.replace("lot_max = 150", "lot_max = 90"), "must not be greater than"),
    (TABLE.replace("normal = \"n=20,c=0\"", "normal = \"n=20,c=0\"\nnormall = 1"),
     "did you mean 'normal'"),
])
def test_bad_tables(text, needle):
    with pytest.raises(InputError) as exc:
        loads(text, "t.toml")
    assert needle in str(exc.value)


def test_top_level_levels_need_a_scheme_or_table():
    with pytest.raises(InputError, match="applies to"):
        loads('aql = "1%"\n[part]\nid = "P"\n[[characteristic]]\nid = "M"\nclass = "major"\n'
              'aql = "1%"\nrql = "8%"\n', "p.toml")


def test_batch_audit(tmp_path):
    csv = tmp_path / "plans.csv"
    csv.write_text("label,lot_min,lot_max,n,c,aql,rql\n"
                   "small,91,150,20,0,1%,10%\n"
                   "mid,501,1200,80,2,1%,\n"
                   "bad,501,1200,80,x,1%,\n"
                   "over,1000,3000,125,3,1%,\n")
    code, out, err = run("batch", "--audit", str(csv), "--json", "--out", str(tmp_path / "o.csv"))
    assert code == 1, err
    d = json.loads(out)
    assert [r["verdict"] for r in d["rows"]] == ["flagged", "meets", "error", "flagged"]
    assert "overlap" in d["rows"][3]["reason"]
    # scipy.stats.hypergeom: alpha of n=80, c=2 at 1 % of 501 (6 items) and of 1200 (12)
    a = d["rows"][1]["audit"]["plans"]["normal"]["lots"]
    assert a[0]["alpha"] == pytest.approx(1 - stats.hypergeom.cdf(2, 501, 6, 80), rel=1e-9)
    assert a[1]["alpha"] == pytest.approx(1 - stats.hypergeom.cdf(2, 1200, 12, 80), rel=1e-9)
    text = (tmp_path / "o.csv").read_text().splitlines()
    assert text[0].startswith("label,lot_min,lot_max,n,c,aql,rql,plan,model,alpha_at_lot_min")
    assert len(text) == 5


def test_check_plans_folder_includes_the_scheme():
    code, out, _ = run("check", str(ROOT / "plans"), "--json")
    d = json.loads(out)
    sw = [t for t in d["tables"] if t["label"] == "switching"]
    assert len(sw) == 1 and sw[0]["meets"] and 0.9 < sw[0]["scheme_pa"]["aql"] < 1.0


def test_sheet_of_a_scheme_file(tmp_path):
    code, out, err = run("sheet", str(ROOT / "plans/qp-8840-switching.toml"), "--out",
                         str(tmp_path), "--json")
    assert code == 0, err
    md = (tmp_path / "qp-8840-switching.md").read_text()
    assert "## Switching scheme" in md and "property of the whole scheme" in md
    assert (tmp_path / "qp-8840-switching.pdf").read_bytes()[:4] == b"%PDF"
    assert (tmp_path / "qp-8840-switching-scheme.png").exists()


def test_next_picks_the_table_row(tmp_path):
    # Decision rule of a single plan (accept on c or fewer, reject at c + 1): by hand.
    f = tmp_path / "t.toml"
    f.write_text(TABLE)
    code, out, _ = run("next", "--plan-file", str(f), "--lot-size", "800", "--severity",
                       "tightened", "--inspected", "80", "--found", "2", "--json")
    d = json.loads(out)
    assert code == 1 and d["notation"] == "n=80,c=1" and d["action"] == "reject"
    code, out, _ = run("next", "--plan-file", str(f), "--lot-size", "120", "--inspected", "20",
                       "--found", "0", "--json")
    assert json.loads(out)["notation"] == "n=20,c=0" and json.loads(out)["action"] == "accept"
    code, _, err = run("next", "--plan-file", str(f), "--lot-size", "300", "--inspected", "20",
                       "--found", "0")
    assert code == 2 and "falls in no row" in err and err.count("\n") == 1
    code, _, err = run("next", "--plan-file", str(f), "--lot-size", "120", "--severity",
                       "reduced", "--inspected", "20", "--found", "0")
    assert code == 2 and "has no reduced plan" in err


def test_sheet_for_one_lot_size(tmp_path):
    f = tmp_path / "t.toml"
    f.write_text(TABLE)
    code, out, err = run("sheet", str(f), "--lot-size", "800", "--out", str(tmp_path / "s"))
    assert code == 0, err
    md = (tmp_path / "s" / "t.md").read_text()
    assert "n=80, c=1" in md and "lot size 800" in md
