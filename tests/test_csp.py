"""Continuous sampling plans CSP-1, CSP-2 and CSP-3: long-run figures against
Dodge's closed forms, an independently written Markov chain and unit-by-unit
simulation; Dodge's CSP-1 values (from memory); the AOQL against mpmath and a
dense grid; designs against brute force; short runs against enumeration and
matrix powers; the line's next units; the command line."""

from __future__ import annotations

import json
import math
import random
import time
from decimal import Decimal

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from lotwise.cli import main
from lotwise.core.quantities import InputError
from lotwise.core.types import Scope
from lotwise.families.base import family, parse_plan
from lotwise.families.csp import (FRACTIONS, Csp1Plan, Csp2Plan, Csp3Plan, design_csp,
                                  make_plan, next_units, parse_history)

DODGE = "Dodge, Annals of Mathematical Statistics 14(3), 1943"
TORREY = "Dodge and Torrey, Industrial Quality Control 7(5), 1951"


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


# --- an independent chain, written from the procedures ------------------------------

def _chain(scheme, i, f, p, k=None, burst=4):
    """Transition matrix per produced unit, built from the written rules of
    Dodge (1943) and Dodge and Torrey (1951): states full(j), sampling,
    probation(j), burst(j)."""
    k = i if k is None else k
    kk = 0 if scheme == "csp1" else k
    bb = burst if scheme == "csp3" else 0
    states = ([("full", j) for j in range(i)] + [("samp", 0)]
              + [("prob", j) for j in range(kk)] + [("burst", j) for j in range(bb)])
    idx = {s: n for n, s in enumerate(states)}
    P = np.zeros((len(states), len(states)))
    q = 1.0 - p

    def go(a, b, w):
        P[idx[a], idx[b]] += w

    for j in range(i):
        go(("full", j), ("full", j + 1) if j + 1 < i else ("samp", 0), q)
        go(("full", j), ("full", 0), p)
    after = {"csp1": ("full", 0), "csp2": ("prob", 0), "csp3": ("burst", 0)}[scheme]
    go(("samp", 0), ("samp", 0), 1.0 - f * p)
    go(("samp", 0), after, f * p)
    for j in range(kk):
        go(("prob", j), ("prob", j), 1.0 - f)
        go(("prob", j), ("prob", j + 1) if j + 1 < kk else ("samp", 0), f * q)
        go(("prob", j), ("full", 0), f * p)
    for j in range(bb):
        go(("burst", j), ("burst", j + 1) if j + 1 < bb else ("prob", 0), q)
        go(("burst", j), ("full", 0), p)
    insp = np.array([1.0 if s[0] in ("full", "burst") else f for s in states])
    under = np.array([1.0 if s[0] in ("samp", "prob") else 0.0 for s in states])
    return P, insp, under


def _stationary(P):
    n = P.shape[0]
    A = np.vstack([P.T - np.eye(n), np.ones(n)])
    b = np.zeros(n + 1)
    b[-1] = 1.0
    return np.linalg.lstsq(A, b, rcond=None)[0]


CHAIN_CASES = [
    ("csp1", 38, 0.1, None, 4, 0.02), ("csp1", 5, 0.5, None, 4, 0.2),
    ("csp1", 1, 0.25, None, 4, 0.4),
    ("csp2", 20, 0.2, None, 4, 0.04), ("csp2", 12, 1 / 7, 3, 4, 0.07), ("csp2", 1, 0.5, 1, 4, 0.3),
    ("csp3", 20, 0.2, None, 4, 0.04), ("csp3", 9, 1 / 3, 5, 2, 0.1), ("csp3", 2, 0.1, 1, 1, 0.5),
]


@pytest.mark.parametrize("scheme, i, f, k, burst, p", CHAIN_CASES)
def test_closed_forms_against_the_chain(scheme, i, f, k, burst, p):
    # Stationary law of the chain written above (numpy.linalg.lstsq): abs 1e-10.
    P, insp, under = _chain(scheme, i, f, p, k, burst)
    pi = _stationary(P)
    plan = make_plan(scheme, i=i, f=f, k=k if scheme != "csp1" else None,
                     burst=burst if scheme == "csp3" else None)
    assert plan.afi(p) == pytest.approx(pi @ insp, abs=1e-10)
    assert plan.pa(p) == pytest.approx(pi @ under, abs=1e-10)
    assert plan.aoq(p) == pytest.approx(p * (1 - f) * (pi @ under), abs=1e-12)


@pytest.mark.parametrize("i, f, p", [(38, 0.1, 0.02), (140, 0.5, 0.003), (5, 1 / 7, 0.15),
                                     (1, 0.01, 0.5), (1000, 0.05, 1e-4)])
def test_csp1_against_dodge_formulas(i, f, p):
    # Dodge (1943): u = (1 - q^i)/(p q^i), v = 1/(f p), AFI = (u + f v)/(u + v),
    # AOQ = p (1 - f) q^i / (f + (1 - f) q^i); mpmath 30 digits, rel 1e-12.
    with mp.workdps(30):
        P, q = mp.mpf(p), 1 - mp.mpf(p)
        u = (1 - q**i) / (P * q**i)
        v = 1 / (mp.mpf(f) * P)
        afi = (u + f * v) / (u + v)
        aoq = P * (1 - f) * q**i / (f + (1 - f) * q**i)
    plan = Csp1Plan(i=i, f=f)
    assert plan.afi(p) == pytest.approx(float(afi), rel=1e-12)
    assert plan.aoq(p) == pytest.approx(float(aoq), rel=1e-12)
    runs = plan.phase_runs(p)
    assert runs["full"] == pytest.approx(float(u), rel=1e-12)
    assert runs["sampling"] == pytest.approx(float(v), rel=1e-12)


def test_csp2_phase_runs_against_dodge_torrey_form():
    # Dodge and Torrey (1951), CSP-2 with k = i: v = (2 - q^k)/(f p (1 - q^k))
    # (from memory), and pa = v/(u + v) against the chain above; rel 1e-12.
    i, f, p = 30, 0.1, 0.03
    q = 1 - p
    u = (1 - q**i) / (p * q**i)
    v = (2 - q**i) / (f * p * (1 - q**i))
    plan = Csp2Plan(i=i, f=f)
    assert plan.phase_runs(p)["sampling"] == pytest.approx(v, rel=1e-12)
    assert plan.pa(p) == pytest.approx(v / (u + v), rel=1e-12)


# --- unit-by-unit simulation -------------------------------------------------------

def _simulate(scheme, i, f, p, units, seed, k=None, burst=4):
    """Run the written procedure unit by unit (Python's random, fixed seed).

    Every return to full(0) starts a new regenerative cycle; the ratio
    estimators over whole cycles and their delta-method standard errors give
    AFI, pa and AOQ (nonconforming units passed uninspected per unit)."""
    rng = random.Random(seed)
    k = i if k is None else k
    phase, count = "full", 0
    cyc, cur = [], [0, 0, 0, 0]  # units, inspected, under sampling, bad passed
    for _ in range(units):
        bad = rng.random() < p
        full = phase in ("full", "burst")
        insp = full or rng.random() < f
        cur[0] += 1
        cur[1] += insp
        cur[2] += not full
        cur[3] += bad and not insp
        restart = False
        if phase == "full":
            if bad:
                restart = True
            else:
                count += 1
                if count == i:
                    phase = "samp"
        elif insp and bad:
            if phase == "samp" and scheme == "csp2":
                phase, count = "prob", 0
            elif phase == "samp" and scheme == "csp3":
                phase, count = "burst", 0
            else:
                restart = True
        elif insp and phase == "prob":
            count += 1
            if count == k:
                phase = "samp"
        elif insp and phase == "burst":
            count += 1
            if count == burst:
                phase, count = "prob", 0
        if restart:
            phase, count = "full", 0
            cyc.append(cur)
            cur = [0, 0, 0, 0]
    c = np.array(cyc, dtype=float)
    n = c[:, 0]
    out = {}
    for col, name in ((1, "afi"), (2, "pa"), (3, "aoq")):
        r = c[:, col].sum() / n.sum()
        se = math.sqrt(((c[:, col] - r * n) ** 2).sum()) / n.sum()
        out[name] = (r, se)
    return out


SIM_CASES = [("csp1", 38, 0.1, None, 4, 0.03), ("csp2", 20, 0.2, None, 4, 0.04),
             ("csp3", 20, 0.2, 15, 4, 0.05), ("csp2", 10, 1 / 3, 4, 4, 0.08)]


@pytest.mark.parametrize("scheme, i, f, k, burst, p", SIM_CASES)
def test_long_run_against_simulation_1e5(scheme, i, f, k, burst, p):
    # Seeded unit-by-unit simulation of 10^5 units: within 4 standard errors.
    sim = _simulate(scheme, i, f, p, 100_000, seed=20240611, k=k, burst=burst)
    plan = make_plan(scheme, i=i, f=f, k=k if scheme != "csp1" else None,
                     burst=burst if scheme == "csp3" else None)
    for name, exact in (("afi", plan.afi(p)), ("pa", plan.pa(p)), ("aoq", plan.aoq(p))):
        est, se = sim[name]
        assert abs(est - exact) <= 4 * se, (name, est, exact, se)


def test_csp1_against_simulation_1e6():
    # Seeded unit-by-unit simulation of 10^6 units, CSP-1 i = 38, f = 1/10 at
    # 2 %: within 4 standard errors (runs in about 1-2 s, so not marked slow).
    sim = _simulate("csp1", 38, 0.1, 0.02, 1_000_000, seed=1943)
    plan = Csp1Plan(i=38, f=0.1)
    for name, exact in (("afi", plan.afi(0.02)), ("pa", plan.pa(0.02)),
                        ("aoq", plan.aoq(0.02))):
        est, se = sim[name]
        assert abs(est - exact) <= 4 * se, (name, est, exact, se)


# --- Dodge's CSP-1 values (from memory) ---------------------------------------------

def _half_unit(text: str) -> float:
    """Half a unit in the last printed digit of a percentage, as a fraction."""
    return float(Decimal(1).scaleb(Decimal(text).as_tuple().exponent)) / 2 / 100


# (f, AOQL % as printed, i as printed). Dodge (1943)'s CSP-1 clearance
# numbers as reproduced in textbooks, from memory. "Within the table's
# rounding": the printed i lies between the exact smallest i for the AOQL
# heading plus and minus half a unit of its last digit.
DODGE_I = [
    (1 / 2, "0.018", 1540), (1 / 2, "0.143", 194), (1 / 2, "0.33", 84), (1 / 2, "1.22", 23),
    (1 / 3, "0.033", 1390), (1 / 3, "0.53", 87), (1 / 5, "0.074", 965), (1 / 5, "0.33", 217),
    (1 / 10, "0.018", 6050), (1 / 10, "0.046", 2370), (1 / 10, "0.53", 207),
    (1 / 10, "0.79", 138), (1 / 25, "0.33", 500), (1 / 25, "0.79", 210),
    (1 / 50, "0.033", 6400), (1 / 50, "0.53", 400), (1 / 100, "0.018", 14320),
    (1 / 100, "0.79", 330), (1 / 200, "0.018", 17420), (1 / 200, "0.074", 4235),
    (1 / 200, "0.53", 590),
]


@pytest.mark.parametrize("f, aoql, i", DODGE_I)
def test_dodge_csp1_clearance_numbers(f, aoql, i):
    # DODGE (from memory), within the rounding of the printed AOQL heading.
    a, h = float(aoql) / 100, _half_unit(aoql)
    lo = design_csp(scheme="csp1", aoql=a + h, f=f).plan.i
    hi = design_csp(scheme="csp1", aoql=a - h, f=f).plan.i
    assert lo <= i <= hi


def _stationarity_aoql(i, f):
    """CSP-1 AOQL at the root of q (f + (1 - f) q^i) = i f p, the zero of
    d ln AOQ / dp of Dodge's AOQ (our derivation); mpmath 30 digits."""
    with mp.workdps(30):
        g = lambda p: (1 - p) * (f + (1 - f) * (1 - p) ** i) - i * f * p  # noqa: E731
        p = mp.findroot(g, (mp.mpf(1) / (i + 1), mp.mpf("0.999")), solver="anderson")
        return float(((i + 1) * p - 1) / i), float(p)


@pytest.mark.parametrize("i, f", [(38, 0.1), (1540, 0.5), (17420, 1 / 200), (3, 1 / 3),
                                  (1, 0.5), (207, 0.1)])
def test_csp1_aoql_against_the_stationarity_root(i, f):
    # mpmath root of the derivative condition: value rel 1e-9, level rel 1e-6.
    value, at = _stationarity_aoql(i, f)
    got, where = Csp1Plan(i=i, f=f).aoql()
    assert got == pytest.approx(value, rel=1e-9)
    assert where == pytest.approx(at, rel=1e-6)


def test_recorded_disagreements_with_published_values():
    # DODGE (from memory) prints i = 38 for f = 1/10 under the AOQL heading
    # 2.90 %. Exact computation (checked against the mpmath stationarity root)
    # gives 2.819 %, and the smallest i for 2.90 % is 37: we keep the exact
    # value. The exponential approximation q^i ~ exp(-i p) reproduces the
    # printed 2.90 % (maximised here with scipy.optimize), which suggests the
    # printed value rests on it (our inference).
    from scipy.optimize import minimize_scalar

    value, _ = _stationarity_aoql(38, 0.1)
    assert Csp1Plan(i=38, f=0.1).aoql()[0] == pytest.approx(value, rel=1e-9)
    assert abs(value - 0.029) > _half_unit("2.90")
    assert design_csp(scheme="csp1", aoql=0.029, f=0.1).plan.i == 37

    def neg(p):
        e = math.exp(-38 * p)
        return -p * 0.9 * e / (0.1 + 0.9 * e)

    approx = -minimize_scalar(neg, bounds=(1e-6, 0.5), method="bounded",
                              options={"xatol": 1e-12}).fun
    assert abs(approx - 0.029) <= _half_unit("2.90")
    # DODGE (from memory) prints i = 550 for f = 1/10 under 0.198 %; exactly,
    # i = 550 gives 0.1998 % (outside the heading's rounding) and the smallest
    # i is a little larger. Reason not known to us (perhaps read from Dodge's
    # chart, perhaps our memory); we keep the exact value.
    value, _ = _stationarity_aoql(550, 0.1)
    assert value - 0.00198 > _half_unit("0.198")
    assert design_csp(scheme="csp1", aoql=0.00198, f=0.1).plan.i > 550


# --- properties -------------------------------------------------------------------------

PLANS = [Csp1Plan(i=38, f=0.1), Csp1Plan(i=1, f=0.5), Csp2Plan(i=20, f=0.2),
         Csp2Plan(i=50, f=0.02, k=5), Csp3Plan(i=20, f=0.2), Csp3Plan(i=300, f=1 / 200, k=40),
         Csp3Plan(i=3, f=0.5, k=1, burst=1)]

GRID = np.unique(np.concatenate([np.geomspace(1e-7, 1, 20001), np.linspace(0, 1, 20001)]))


@pytest.mark.parametrize("plan", PLANS, ids=lambda p: p.notation())
def test_aoq_never_exceeds_the_aoql_and_the_peak_is_found(plan):
    # Dense grid of 40,000 levels (enumeration; common practice, no source):
    # AOQ <= AOQL everywhere, and the grid maximum is within rel 1e-6 of it.
    value, at = plan.aoql()
    aoq = plan.aoq(GRID)
    assert aoq.max() <= value * (1 + 1e-12)
    assert aoq.max() == pytest.approx(value, rel=1e-6)
    assert plan.aoq(at) == pytest.approx(value, rel=1e-12)


@pytest.mark.parametrize("plan", PLANS, ids=lambda p: p.notation())
def test_afi_between_f_and_1_and_rising(plan):
    # Dense grid (enumeration; common practice, no source): f <= AFI <= 1,
    # non-decreasing in p; AFI(0) = f and AFI(1) = 1; pa falls from 1 to 0.
    afi = plan.afi(GRID)
    assert np.all(afi >= plan.f - 1e-15) and np.all(afi <= 1 + 1e-15)
    assert np.all(np.diff(afi) >= -1e-13)
    assert plan.afi(0.0) == pytest.approx(plan.f, abs=1e-15)
    assert plan.afi(1.0) == pytest.approx(1.0, abs=1e-15)
    assert np.all(np.diff(plan.pa(GRID)) <= 1e-13)
    assert plan.pa(0.0) == 1.0 and plan.pa(1.0) == 0.0


@pytest.mark.parametrize("scheme", ["csp1", "csp2", "csp3"])
def test_f_one_means_every_unit_inspected(scheme):
    # Definition (Dodge 1943): with f = 1 every unit is inspected, nothing
    # nonconforming goes out; exact.
    plan = make_plan(scheme, i=10, f=1.0)
    assert np.all(plan.aoq(GRID) == 0.0)
    assert np.allclose(plan.afi(GRID), 1.0, atol=1e-15)
    assert plan.aoql()[0] == 0.0
    assert plan.run_figures(0.05, 200)[0] == pytest.approx(1.0, abs=1e-12)


def _reference_aoql(plan):
    """Independent AOQL: the best of a dense grid polished with
    scipy.optimize.minimize_scalar (bounded; not what the code calls)."""
    from scipy.optimize import minimize_scalar

    aoq = plan.aoq(GRID)
    j = int(np.argmax(aoq))
    res = minimize_scalar(lambda x: -float(plan.aoq(x)), method="bounded",
                          bounds=(GRID[max(j - 1, 0)], GRID[min(j + 1, len(GRID) - 1)]),
                          options={"xatol": 1e-14})
    return max(-res.fun, aoq[j])


@pytest.mark.parametrize("scheme, f, limit", [
    ("csp1", 0.1, 0.0079), ("csp1", 0.5, 0.03), ("csp1", 1 / 50, 0.005),
    ("csp2", 0.1, 0.01), ("csp2", 1 / 3, 0.02), ("csp3", 0.2, 0.015), ("csp3", 1 / 7, 0.004),
])
def test_design_finds_the_smallest_i(scheme, f, limit):
    # Brute force at i and i - 1 with an independent maximisation (dense grid +
    # scipy bounded search): i meets the limit, i - 1 exceeds it.
    d = design_csp(scheme=scheme, aoql=limit, f=f)
    i = d.plan.i
    assert _reference_aoql(make_plan(scheme, i=i, f=f)) <= limit * (1 + 1e-9)
    assert _reference_aoql(make_plan(scheme, i=i - 1, f=f)) > limit
    assert d.aoql <= limit and d.plan.f == f


@pytest.mark.parametrize("scheme, i, limit", [("csp1", 100, 0.01), ("csp2", 60, 0.012),
                                              ("csp3", 200, 0.004)])
def test_design_finds_the_smallest_f_of_the_ladder(scheme, i, limit):
    # Brute force over the ladder with the independent maximisation.
    d = design_csp(scheme=scheme, aoql=limit, i=i)
    ok = [f for f in FRACTIONS if _reference_aoql(make_plan(scheme, i=i, f=f)) <= limit]
    assert d.plan.f == min(ok) and d.plan.i == i


def test_least_afi_design_against_brute_force():
    # Brute force (common practice, no source): every f of a short ladder and
    # i from 1 to 400; the least AFI at 0.4 % among plans with AOQL <= 1 %.
    fs = (0.5, 0.25, 0.1, 0.04)
    best = None
    for f in fs:
        for i in range(1, 401):
            plan = Csp1Plan(i=i, f=f)
            if _reference_aoql(plan) <= 0.01:
                afi = float(plan.afi(0.004))
                if best is None or afi < best[0]:
                    best = (afi, i, f)
                break  # AFI rises with i: the first i meeting the limit is best for this f
    d = design_csp(scheme="csp1", aoql=0.01, minimize="afi", process_average=0.004,
                   fractions=fs)
    assert (d.plan.i, d.plan.f) == best[1:]
    assert d.afi_process_average == pytest.approx(best[0], rel=1e-12)


# --- short runs --------------------------------------------------------------------------

def _walk(scheme, i, f, p, M, k, burst):
    """Expected units inspected and under sampling in the first M units, by
    walking every path of unit results (no merging; 2 or 3 branches a unit)."""
    def go(depth, phase, count):
        if depth == M:
            return 0.0, 0.0
        q = 1 - p
        if phase == "full":
            a = go(depth + 1, "samp", 0) if count + 1 == i else go(depth + 1, "full", count + 1)
            b = go(depth + 1, "full", 0)
            return 1 + q * a[0] + p * b[0], q * a[1] + p * b[1]
        if phase == "burst":
            a = (go(depth + 1, "prob", 0) if count + 1 == burst
                 else go(depth + 1, "burst", count + 1))
            b = go(depth + 1, "full", 0)
            return 1 + q * a[0] + p * b[0], q * a[1] + p * b[1]
        stay = go(depth + 1, phase, count)
        if phase == "samp":
            ok = stay
            bad = go(depth + 1, {"csp1": "full", "csp2": "prob", "csp3": "burst"}[scheme], 0)
        else:
            ok = go(depth + 1, "samp", 0) if count + 1 == k else go(depth + 1, "prob", count + 1)
            bad = go(depth + 1, "full", 0)
        ins = f * (1 + q * ok[0] + p * bad[0]) + (1 - f) * stay[0]
        und = 1 + f * (q * ok[1] + p * bad[1]) + (1 - f) * stay[1]
        return ins, und

    return go(0, "full", 0)


@pytest.mark.parametrize("scheme, i, f, k, burst, p, M", [
    ("csp1", 2, 0.5, None, 4, 0.1, 8), ("csp2", 2, 0.4, 2, 4, 0.2, 8),
    ("csp3", 1, 0.5, 2, 2, 0.3, 8), ("csp3", 3, 1 / 3, 1, 1, 0.15, 7),
])
def test_short_run_against_enumeration(scheme, i, f, k, burst, p, M):
    # Enumeration of every path of unit results: abs 1e-13.
    ins, und = _walk(scheme, i, f, p, M, k if k else i, burst)
    plan = make_plan(scheme, i=i, f=f, k=k if scheme != "csp1" else None,
                     burst=burst if scheme == "csp3" else None)
    for method in ("doubling", "stepping"):
        afi, pa, aoq = plan.run_figures(p, M, method=method)
        assert afi == pytest.approx(ins / M, abs=1e-13)
        assert pa == pytest.approx(und / M, abs=1e-13)
        assert aoq == pytest.approx(p * (1 - f) * und / M, abs=1e-13)


@pytest.mark.parametrize("scheme, i, f, k, burst", [("csp1", 38, 0.1, None, 4),
                                                    ("csp2", 10, 1 / 3, 6, 4),
                                                    ("csp3", 12, 0.25, 5, 3)])
def test_short_run_against_matrix_powers(scheme, i, f, k, burst):
    # Sum of e0 P^t, t < M, with the chain written above (numpy, unit by
    # unit): abs 1e-12, for both of the code's methods and several levels.
    ps = np.array([0.01, 0.05, 0.2])
    M = 777
    plan = make_plan(scheme, i=i, f=f, k=k if scheme != "csp1" else None,
                     burst=burst if scheme == "csp3" else None)
    for method in ("doubling", "stepping"):
        afi, pa, _ = plan.run_figures(ps, M, method=method)
        for n, p in enumerate(ps):
            P, insp, under = _chain(scheme, i, f, p, k, burst)
            x = np.zeros(P.shape[0])
            x[0] = 1.0
            total = np.zeros_like(x)
            for _ in range(M):
                total += x
                x = x @ P
            assert afi[n] == pytest.approx(total @ insp / M, abs=1e-12)
            assert pa[n] == pytest.approx(total @ under / M, abs=1e-12)


@pytest.mark.parametrize("plan", PLANS[:6], ids=lambda p: p.notation())
def test_short_run_tends_to_long_run(plan):
    # Renewal-reward theorem (common practice, no source): the short-run AFI
    # tends to the long-run one, the gap falling like 1/M once M is well above
    # a cycle (at least 50-fold from M = 10^4 to 10^6).
    p = 0.01
    gaps = [abs(plan.run_figures(p, M)[0] - plan.afi(p)) for M in (100, 10_000, 1_000_000)]
    assert gaps[0] > gaps[1] > gaps[2]
    assert gaps[2] <= gaps[1] / 50


# --- notation and the plan interface -------------------------------------------------

@pytest.mark.parametrize("text, expected", [
    ("csp1: i=38,f=0.1", Csp1Plan(i=38, f=0.1)),
    ("csp1: i=38, f=1/10", Csp1Plan(i=38, f=0.1)),
    ("CSP1: i=38; f=10%", Csp1Plan(i=38, f=0.1)),
    ("csp2: i=38,f=1/7", Csp2Plan(i=38, f=1 / 7, k=38)),
    ("csp2: i=38,f=1/7,k=12", Csp2Plan(i=38, f=1 / 7, k=12)),
    ("csp3: i=20,f=0.2", Csp3Plan(i=20, f=0.2, k=20, burst=4)),
    ("csp3: i=20,f=0.2,k=5,burst=3", Csp3Plan(i=20, f=0.2, k=5, burst=3)),
])
def test_notation_reads_and_round_trips(text, expected):
    # Definition of the notation (DODGE; TORREY for k and the burst): exact.
    plan = parse_plan(text)
    assert plan == expected
    assert parse_plan(plan.notation()) == plan


@settings(max_examples=60, deadline=None)
@given(scheme=st.sampled_from(["csp1", "csp2", "csp3"]), i=st.integers(1, 10**6),
       m=st.integers(1, 1000), x=st.floats(1e-6, 1.0), k=st.integers(1, 500),
       b=st.integers(1, 20), whole=st.booleans())
def test_notation_round_trip_property(scheme, i, m, x, k, b, whole):
    # Round trip of any plan through its notation (common practice, no source).
    f = 1 / m if whole else x
    plan = make_plan(scheme, i=i, f=f, k=k if scheme != "csp1" else None,
                     burst=b if scheme == "csp3" else None)
    assert parse_plan(plan.notation()) == plan


@pytest.mark.parametrize("text, fragment", [
    ("csp1: i=0,f=0.1", "i"), ("csp1: f=0.1", "lacks i"), ("csp1: i=5", "lacks f"),
    ("csp1: i=5,f=0", "f"), ("csp1: i=5,f=1.5", "f"), ("csp1: i=5,f=1/0", "f"),
    ("csp1: i=5,f=0.1,k=3", "unknown key 'k'"), ("csp2: i=5,f=0.1,burst=3", "'burst'"),
    ("csp2: i=5,f=abc", "f"), ("csp3: i=5,f=0.1,burst=0", "burst"),
])
def test_bad_notation_names_the_key(text, fragment):
    # Project rule (errors repeat the bad value and name the key): exact.
    with pytest.raises(InputError) as exc:
        parse_plan(text)
    assert fragment in str(exc.value)


def test_process_plans_refuse_lot_models():
    # Definition: CSP plans judge a flow of units; the binomial model per unit
    # is the model, lot counts and the Poisson model are refused.
    plan = Csp1Plan(i=38, f=0.1)
    with pytest.raises(InputError, match="hypergeometric"):
        plan.pa_count(3, Scope(lot_size=500))
    with pytest.raises(InputError, match="hypergeometric"):
        plan.pa(0.01, "hypergeometric", Scope(lot_size=500))
    with pytest.raises(InputError, match="Poisson"):
        plan.pa(0.01, "poisson", Scope())
    with pytest.raises(InputError, match="lot"):
        plan.check_scope(Scope(lot_size=500))
    assert plan.pa(0.01, "binomial", Scope()) == pytest.approx(float(plan.pa(0.01)))


def test_each_family_is_registered():
    # The registry (families/base.py): one module, three families.
    for name, cls in (("csp1", Csp1Plan), ("csp2", Csp2Plan), ("csp3", Csp3Plan)):
        fam = family(name)
        assert fam.name == name and fam.plan_class is cls
        assert fam.cases == "lotwise.validation.csp_cases:validation_cases"


# --- on the line ---------------------------------------------------------------------------

@pytest.mark.parametrize("notation, history, phase, more", [
    ("csp1: i=3,f=1/2", "", "full", 3),
    ("csp1: i=3,f=1/2", "ok ok", "full", 1),
    ("csp1: i=3,f=1/2", "ok ok bad ok", "full", 2),
    ("csp1: i=3,f=1/2", "ok ok ok", "sampling", None),
    ("csp1: i=3,f=1/2", "ok,ok,ok,-,ok,-,bad", "full", 3),
    ("csp2: i=3,f=1/2,k=2", "ok ok ok - bad", "probation", 2),
    ("csp2: i=3,f=1/2,k=2", "ok ok ok - bad - ok", "probation", 1),
    ("csp2: i=3,f=1/2,k=2", "ok ok ok - bad - ok ok", "sampling", None),
    ("csp2: i=3,f=1/2,k=2", "ok ok ok - bad - ok bad", "full", 3),
    ("csp3: i=2,f=1/2,k=2,burst=3", "ok ok bad", "burst", 3),
    ("csp3: i=2,f=1/2,k=2,burst=3", "ok ok bad ok ok ok", "probation", 2),
    ("csp3: i=2,f=1/2,k=2,burst=3", "ok ok bad ok bad", "full", 2),
])
def test_next_replays_the_procedure(notation, history, phase, more):
    # The written procedures (DODGE; TORREY), replayed by hand: exact.
    res = next_units(parse_plan(notation), history, seed=5)
    assert res.phase.value == phase and res.more_to_clear == more
    assert res.inspect_every_unit == (phase in ("full", "burst"))


def test_next_units_systematic_and_random():
    # Every m-th unit after the last fully inspected one (common practice, no
    # source); random picks depend only on the seed and the unit number.
    plan = parse_plan("csp1: i=3,f=1/4")
    res = next_units(plan, "ok ok", systematic=True)
    assert res.next_units == (3, 7, 11, 15, 19, 23, 27, 31, 35, 39)
    res = next_units(plan, "ok ok ok - ok -", systematic=True)
    assert res.next_units[:2] == (7, 11)
    first = next_units(plan, "ok ok ok", seed=11)
    picks = first.next_units
    # record the scheduled results: the later picks stay the same
    marks = ["ok", "ok", "ok"] + ["ok" if u in picks else "-" for u in range(4, picks[2] + 1)]
    again = next_units(plan, " ".join(marks), seed=11)
    assert again.next_units[:len(picks) - 3] == picks[3:]
    assert next_units(plan, "ok ok ok", seed=12).next_units != picks


def test_random_picks_have_rate_f():
    # 1,000 picks over 100 seeds at f = 1/10: the fraction of units picked is
    # within 4 binomial standard errors of f (common practice, no source).
    plan = parse_plan("csp1: i=1,f=1/10")
    picks = units = 0
    for seed in range(100):
        nxt = next_units(plan, ["ok"], seed=seed).next_units
        picks += len(nxt)
        units += nxt[-1] - 1
    assert abs(picks / units - 0.1) <= 4 * math.sqrt(0.1 * 0.9 / units)


def test_history_errors():
    # Project rule: one clear message naming the unit and the token.
    with pytest.raises(InputError, match=r"unit 3 \('maybe'\)"):
        parse_history("ok ok maybe")
    with pytest.raises(InputError, match="unit 2"):
        next_units(parse_plan("csp1: i=3,f=1/2"), "ok -", seed=1)
    with pytest.raises(InputError, match="--systematic"):
        next_units(parse_plan("csp1: i=3,f=0.3"), "", systematic=True)
    with pytest.raises(InputError, match="--seed"):
        next_units(parse_plan("csp1: i=3,f=0.3"), "")
    assert parse_history("# line A\nok, bad\n-  ok # end\n") == tuple(
        parse_history("ok bad - ok"))


# --- command line ---------------------------------------------------------------------

@pytest.mark.parametrize("scheme, extra", [("csp1", set()), ("csp2", {"k"}),
                                           ("csp3", {"k", "burst"})])
def test_design_json_contract(capsys, scheme, extra):
    # JSON contract of the task (exact keys); values as the library designs.
    code, out, err = run(capsys, "design", "--scheme", scheme, "--aoql", "0.79%", "--f", "1/10",
                         "--json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert set(d) == {"scheme", "i", "f", "aoql", "aoql_p"} | extra
    lib = design_csp(scheme=scheme, aoql=0.0079, f=0.1)
    assert (d["scheme"], d["i"], d["f"]) == (scheme, lib.plan.i, 0.1)
    assert d["aoql"] == pytest.approx(lib.aoql, rel=1e-12) and d["aoql"] <= 0.0079
    code, out, _ = run(capsys, "design", "--scheme", scheme, "--aoql", "0.79%", "--f", "1/10",
                       "--process-average", "0.3%", "--json")
    d = json.loads(out)
    assert set(d) == {"scheme", "i", "f", "aoql", "aoql_p", "afi_process_average"} | extra
    assert d["afi_process_average"] == pytest.approx(
        float(make_plan(scheme, i=d["i"], f=0.1).afi(0.003)), rel=1e-12)


def test_design_other_modes(capsys):
    # The library's designs behind --i and --minimize afi (exact agreement).
    code, out, _ = run(capsys, "design", "--scheme", "csp1", "--aoql", "1%", "--i", "100",
                       "--json")
    assert code == 0 and json.loads(out)["f"] == design_csp(scheme="csp1", aoql=0.01,
                                                             i=100).plan.f
    code, out, _ = run(capsys, "design", "--scheme", "csp1", "--aoql", "1%", "--minimize", "afi",
                       "--process-average", "0.4%", "--f", "1/2", "--f", "1/4,1/10", "--json")
    d = json.loads(out)
    lib = design_csp(scheme="csp1", aoql=0.01, minimize="afi", process_average=0.004,
                     fractions=(0.5, 0.25, 0.1))
    assert code == 0 and (d["i"], d["f"]) == (lib.plan.i, lib.plan.f)
    code, out, _ = run(capsys, "design", "--scheme", "csp2", "--aoql", "1%", "--minimize", "afi",
                       "--process-average", "0.4%")
    assert code == 0 and "AOQL" in out and "100 % inspection" in out


def test_check_and_oc_json(capsys):
    # JSON contract of the task; the numbers are the library's (exact).
    code, out, err = run(capsys, "check", "--plan", "csp1: i=38,f=1/10", "--at", "1%",
                         "--at", "2%,3%", "--json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert set(d) == {"scheme", "i", "f", "aoql", "aoql_p", "levels"}
    assert [lv["p"] for lv in d["levels"]] == [0.01, 0.02, 0.03]
    plan = Csp1Plan(i=38, f=0.1)
    for lv in d["levels"]:
        assert {"p", "afi", "aoq", "pa"} <= set(lv)
        assert lv["afi"] == pytest.approx(float(plan.afi(lv["p"])), rel=1e-12)
        assert lv["aoq"] == pytest.approx(float(plan.aoq(lv["p"])), rel=1e-12)
    code, out, _ = run(capsys, "check", "--plan", "csp3: i=20,f=0.2", "--at", "4%",
                       "--run-length", "500", "--json")
    d = json.loads(out)
    assert d["run_length"] == 500 and d["k"] == 20 and d["burst"] == 4
    afi, pa, aoq = Csp3Plan(i=20, f=0.2).run_figures(0.04, 500)
    assert d["levels"][0]["run_afi"] == pytest.approx(afi, rel=1e-12)
    assert d["levels"][0]["run_aoq"] == pytest.approx(aoq, rel=1e-12)
    code, out, _ = run(capsys, "oc", "--plan", "csp2: i=38,f=0.1", "--points", "11", "--json")
    d = json.loads(out)
    assert code == 0 and d["columns"] == ["p", "afi", "aoq", "pa"] and len(d["rows"]) == 11
    p = d["rows"][5][0]
    assert d["rows"][5][1:] == pytest.approx([float(Csp2Plan(i=38, f=0.1).afi(p)),
                                             float(Csp2Plan(i=38, f=0.1).aoq(p)),
                                             float(Csp2Plan(i=38, f=0.1).pa(p))], rel=1e-12)
    code, out, _ = run(capsys, "check", "--plan", "csp2: i=38,f=0.1", "--at", "1%",
                       "--run-length", "1000")
    assert code == 0 and "AFI (1000 units)" in out and "100 % inspection" in out


def test_next_json(capsys, tmp_path):
    # Keys documented in README.md; the file and the list read the same.
    hist = tmp_path / "line.txt"
    hist.write_text("# shift 1\nok ok ok\nok - - bad\n", encoding="utf-8")
    code, out, err = run(capsys, "next", "--plan", "csp2: i=4,f=1/3", "--history", str(hist),
                         "--seed", "9", "--json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert set(d) == {"scheme", "plan", "notation", "units", "inspected", "found", "phase",
                      "inspect_every_unit", "more_to_clear", "next_units", "selection", "seed",
                      "reason"}
    assert (d["units"], d["inspected"], d["found"], d["phase"], d["more_to_clear"]) == \
        (7, 5, 1, "probation", 4)
    code, out2, _ = run(capsys, "next", "--plan", "csp2: i=4,f=1/3", "--history",
                        "ok,ok,ok,ok,-,-,bad", "--seed", "9", "--json")
    assert json.loads(out2) == d
    code, out, _ = run(capsys, "next", "--plan", "csp1: i=4,f=1/3", "--history", "ok ok",
                       "--systematic")
    assert code == 0 and "INSPECT EVERY UNIT" in out


@pytest.mark.parametrize("args, fragment", [
    (["design", "--scheme", "csp1", "--aoql", "1%"], "--f"),
    (["design", "--scheme", "csp1", "--aoql", "1%", "--f", "0"], "--f"),
    (["design", "--scheme", "csp1", "--aoql", "1%", "--f", "2"], "--f"),
    (["design", "--scheme", "csp1", "--aoql", "1%", "--f", "0.1", "--i", "5"], "not both"),
    (["design", "--scheme", "csp1", "--aoql", "150%", "--f", "0.1"], "--aoql"),
    (["design", "--scheme", "csp1", "--f", "0.1"], "--aoql"),
    (["design", "--scheme", "csp1", "--aoql", "1%", "--f", "0.1", "--lot-size", "500"],
     "--lot-size"),
    (["design", "--scheme", "csp1", "--aoql", "1%", "--f", "0.1", "--model", "poisson"],
     "--model"),
    (["design", "--scheme", "csp1", "--aoql", "1%", "--minimize", "ati",
      "--process-average", "1%"], "--minimize"),
    (["design", "--scheme", "csp1", "--aoql", "1%", "--minimize", "afi"], "--process-average"),
    (["design", "--scheme", "csp1", "--aoql", "1%", "--f", "0.1", "--f", "0.2"], "--f"),
    (["design", "--aql", "1%", "--rql", "5%", "--f", "0.1"], "--f"),
    (["check", "--plan", "csp1: i=0,f=0.1"], "i"),
    (["check", "--plan", "csp1: i=5,f=0.1", "--lot-size", "100"], "--lot-size"),
    (["check", "--plan", "csp1: i=5,f=0.1", "--model", "hypergeometric"], "--model"),
    (["check", "--plan", "csp1: i=5,f=0.1", "--run-length", "0"], "--run-length"),
    (["check", "--plan", "csp1: i=5,f=0.1", "--at", "2"], "--at"),
    (["check", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "5%", "--at", "1%"], "--at"),
    (["oc", "--plan", "csp1: i=5,f=0.1", "--plot", "x.png"], "--plot"),
    (["next", "--plan", "csp1: i=5,f=0.1", "--seed", "1"], "--history"),
    (["next", "--plan", "csp1: i=5,f=0.1", "--history", "ok good", "--seed", "1"], "good"),
    (["next", "--plan", "csp1: i=5,f=0.1", "--history", "ok -", "--seed", "1"], "unit 2"),
    (["next", "--plan", "csp1: i=5,f=0.3", "--history", "ok", "--systematic"], "1/m"),
    (["next", "--plan", "csp1: i=5,f=0.1", "--history", "ok", "--inspected", "3"],
     "--inspected"),
    (["next", "--plan", "n=80,c=2", "--inspected", "3", "--found", "0", "--seed", "1"],
     "--seed"),
])
def test_bad_input_one_line_exit_2(capsys, args, fragment):
    # Project rule: one line on stderr naming the option, exit 2, no traceback.
    code, out, err = run(capsys, *args)
    assert code == 2, (code, out, err)
    assert err.count("\n") == 1 and fragment in err and "Traceback" not in err


# --- speed (the benchmark has the medians; these are generous guards) -------------------

def test_design_is_fast():
    # Speed goal of the task: designing i under 20 ms (median of 5; generous x3
    # for a shared machine).
    times = []
    for _ in range(5):
        t = time.perf_counter()
        design_csp(scheme="csp1", aoql=0.00018, f=1 / 200)
        times.append(time.perf_counter() - t)
    assert sorted(times)[2] < 0.060


@pytest.mark.parametrize("argv, scheme", [
    (["design", "--scheme", "csp2", "--aoql", "1%", "--f", "1/10", "--json"], "csp2"),
    (["check", "--plan", "csp3: i=20,f=0.2", "--at", "1%", "--json"], "csp3"),
    (["oc", "--plan", "csp1: i=38,f=0.1", "--json"], "csp1"),
])
def test_import_hygiene(argv, scheme):
    # Project rule: scipy.stats, pandas and matplotlib stay off the
    # design/check/oc path (a cold process, as test_cli_single checks).
    import subprocess
    import sys

    code = (f"import sys, runpy; sys.argv = ['lotwise'] + {argv!r}\n"
            "try:\n    runpy.run_module('lotwise', run_name='__main__')\n"
            "except SystemExit:\n    pass\n"
            "bad = [m for m in ('scipy.stats', 'pandas', 'matplotlib') if m in sys.modules]\n"
            "sys.stderr.write('LOADED:' + ','.join(bad))")
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert json.loads(r.stdout)["scheme"] == scheme
    assert r.stderr.strip() == "LOADED:"


def test_every_json_key_is_in_the_readme(capsys, tmp_path):
    # Project rule: every JSON key is documented in README.md (exact match of
    # the key in backticks).
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    runs = [["design", "--scheme", "csp3", "--aoql", "1%", "--f", "1/10",
             "--process-average", "0.2%", "--json"],
            ["check", "--plan", "csp3: i=20,f=0.2", "--at", "1%", "--run-length", "50",
             "--json"],
            ["oc", "--plan", "csp3: i=20,f=0.2", "--points", "3", "--json"],
            ["next", "--plan", "csp3: i=20,f=0.2", "--history", "ok", "--seed", "1", "--json"]]
    keys = set()

    def walk(x):
        if isinstance(x, dict):
            for k, v in x.items():
                keys.add(k)
                walk(v)
        elif isinstance(x, list):
            for v in x:
                walk(v)

    for argv in runs:
        code, out, _ = run(capsys, *argv)
        assert code == 0
        walk(json.loads(out))
    missing = sorted(k for k in keys if f"`{k}`" not in readme)
    assert missing == []
