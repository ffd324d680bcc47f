"""The two-limit k-method with sigma unknown, reachable from plan notation
(``method=k``): accept when (U - xbar)/s >= k and (xbar - L)/s >= k.

Reference: an independent double integral in mpmath (20 digits) over the
sample standard deviation W = s/sigma ((n - 1) W^2 chi-square with n - 1
degrees of freedom, density written out here) and the standardised sample
mean Z = sqrt(n)(xbar - mu)/sigma (standard normal, independent of W; the
inner integral is a numerical quadrature of the normal density, not a call to
a distribution function). The law of (xbar, s) for a normal sample is
textbook fact (e.g. G. J. Lieberman and G. J. Resnikoff, JASA 50, 1955,
457-516, from memory). Tolerance 1e-8 absolute on Pa.
"""

from __future__ import annotations

import mpmath as mp
import numpy as np
import pytest

from lotwise.core.quantities import InputError
from lotwise.core.twolimit import band
from lotwise.core.types import Scope, Targets
from lotwise.families.base import parse_plan

mp.mp.dps = 20


def mp_pa_k_two(n: int, k: float, zu, zl):
    """Pa = P(sqrt(n) (k W - zL) <= Z <= sqrt(n) (zU - k W)) as a double integral."""
    nu = n - 1
    zu, zl, k = mp.mpf(zu), mp.mpf(zl), mp.mpf(k)
    rn = mp.sqrt(n)
    const = 2 * nu / (mp.power(2, mp.mpf(nu) / 2) * mp.gamma(mp.mpf(nu) / 2))

    def f_w(w):  # density of W = s / sigma
        x = nu * w * w
        return const * w * mp.power(x, mp.mpf(nu) / 2 - 1) * mp.exp(-x / 2)

    def inner(w):
        a, b = rn * (k * w - zl), rn * (zu - k * w)
        if b <= a:
            return mp.mpf(0)
        return mp.quad(lambda z: mp.exp(-z * z / 2), [a, b]) / mp.sqrt(2 * mp.pi)

    w_end = (zu + zl) / (2 * k)  # the window closes here
    mode = mp.sqrt(mp.mpf(nu - 1) / nu)
    pts = sorted({mp.mpf(0), min(mode, w_end), w_end})
    return mp.quad(lambda w: f_w(w) * inner(w), pts)


def z_of(q):
    return -mp.sqrt(2) * mp.erfinv(2 * mp.mpf(q) - 1)  # upper-tail normal quantile


@pytest.mark.slow
@pytest.mark.parametrize("level", [0.06])
def test_exact_oc_matches_mpmath_double_integral(level):
    plan = parse_plan("variables: n=30,k=1.9,lower=9.9,upper=10.1,method=k")
    for envelope in ("upper", "lower"):
        pa = float(plan.pa(level, envelope=envelope))
        # the split of the level between the tails where the band edge lies
        _, share = band(30, np.array([level]), k=1.9, which=envelope, shares=True)
        share = float(share[0])
        zl = z_of(share * level) if share > 0 else mp.inf
        zu = z_of((1 - share) * level)
        if zl == mp.inf:
            ref = mp_pa_k_two(30, 1.9, zu, mp.mpf(40))  # a lower limit 40 sigma away
        else:
            ref = mp_pa_k_two(30, 1.9, zu, zl)
        assert abs(pa - float(ref)) < 1e-8, (level, envelope, share, pa, ref)
    # the band's edges bracket the OC at other splits (checked in mpmath)
    lo, hi = float(plan.pa(level, envelope="lower")), float(plan.pa(level))
    for share in (0.3,):
        ref = float(mp_pa_k_two(30, 1.9, z_of((1 - share) * level), z_of(share * level)))
        assert lo - 1e-8 <= ref <= hi + 1e-8


@pytest.mark.parametrize("text", [
    "variables: n=30,k=1.9,lower=9.9,upper=10.1,method=k",
    "variables: n=12,k=1.5,limit=both,method=k",
    "variables: n=12,k=1.5,limit=both,sigma=unknown,method=K",
])
def test_notation_round_trips(text):
    plan = parse_plan(text)
    assert plan.rule == "k" and plan.m is None and plan.exact_model == "k-two-limit-exact"
    assert "method=k" in plan.notation()
    assert parse_plan(plan.notation()) == plan
    assert plan.to_dict()["two_limit_rule"] == "k"


def test_estimate_method_is_still_the_default():
    plan = parse_plan("variables: n=30,k=1.9,lower=9.9,upper=10.1")
    assert plan.rule == "estimate" and plan.exact_model == "estimate-exact"
    assert "method" not in plan.notation()


@pytest.mark.parametrize("text,word", [
    ("variables: n=30,k=1.9,upper=10.1,method=k", "two limits with sigma unknown"),
    ("variables: n=30,k=1.9,lower=9.9,upper=10.1,sigma=0.02,method=k", "two limits"),
    ("variables: n=30,m=0.02,lower=9.9,upper=10.1,method=k", "needs k"),
    ("variables: n=30,k=1.9,lower=9.9,upper=10.1,method=z", "estimate, k"),
])
def test_bad_method_is_refused(text, word):
    with pytest.raises(InputError, match=word):
        parse_plan(text)


def test_check_judges_the_k_method_band():
    rep_json = __import__("lotwise.analysis.assess", fromlist=["assess"]).assess(
        parse_plan("variables: n=30,k=1.9,limit=both,method=k"), Targets(aql=0.01, rql=0.06),
        Scope()).to_json()
    assert rep_json["model"] == "k-two-limit-exact"
    plan = parse_plan("variables: n=30,k=1.9,limit=both,method=k")
    assert rep_json["pa_aql"] == pytest.approx(float(plan.pa(0.01, envelope="lower")), abs=1e-12)
    assert rep_json["pa_rql"] == pytest.approx(float(plan.pa(0.06)), abs=1e-12)
