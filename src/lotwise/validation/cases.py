"""Reference cases of the plan families beyond single sampling.

Providers for :mod:`lotwise.validation.runner` (registered in its ``PROVIDERS``),
one function per area: rectifying inspection (AOQ, AOQL, ATI), least
inspection, accept-on-zero plans, confidence/reliability demonstration,
chain and skip-lot plans, double and multiple plans, item-by-item
sequential plans and variables plans. Each case reproduces a value that the
tests of that area check, with the source worded as the test words it and
the test's tolerance (a relative tolerance of a test is given here as the
absolute tolerance it amounts to at the reference value, and the
description says so). Cross-checks against mpmath and scipy.stats are
computed at run time; the tool's side always calls the same library
function the test calls.

The whole set runs in a few seconds (the slowest case, an mpmath
integration of the noncentral t density, takes about a quarter of one).

References
----------
.. [1] Dodge, H. F. and Romig, H. G., *Sampling Inspection Tables*, 2nd ed.,
   Wiley, 1959 (AOQL, ATI).
.. [2] Dodge, H. F., "Chain sampling inspection plan", *Industrial Quality
   Control* 11(4), 1955.
.. [3] Perry, R. L., *Journal of Quality
   Technology* 5(3), 1973.
.. [4] Wald, A., *Sequential Analysis*, Wiley, 1947.
.. [5] Montgomery, D. C., *Introduction to Statistical Quality Control*,
   Wiley (the chapters on lot acceptance).
.. [6] NIST/SEMATECH e-Handbook of Statistical Methods, section 6.2.4.

Examples
--------
An auditor preparing the software-validation file checks that the
sequential plan of the textbook example still comes out of the tool:

>>> from lotwise.validation.runner import run_cases
>>> val = run_cases(c for c in sequential_cases() if c.id == "montgomery-sprt-h1")
>>> [(r.case.id, r.verdict) for r in val.results]
[('montgomery-sprt-h1', 'pass')]
"""

from __future__ import annotations

import math

from lotwise.validation.runner import ReferenceCase

__all__ = ["rectifying_cases", "least_inspection_cases", "zero_acceptance_cases",
           "reliability_cases", "chain_skiplot_cases", "multistage_cases",
           "sequential_cases", "variables_cases"]


def _scope(lot=None, defects=False):
    from lotwise.core.types import Scope

    return Scope(lot_size=lot, defects=defects)


def _single(n, c):
    from lotwise.families.single import SinglePlan

    return SinglePlan(n=n, c=c)


# --- rectifying inspection (tests/test_rectifying.py) --------------------------

def _aoql(n, c, model, lot=None, formula="screened"):
    from lotwise.analysis import rectifying as R

    return R.aoql(_single(n, c), _scope(lot), model, formula)


def _mp_aoql_factor(c):
    """``y = max_x x Q(c + 1, x)`` (Poisson); the maximiser solves
    ``Q(c + 1, x) = x^(c+1) e^-x / c!`` (mpmath, 30 digits)."""
    import mpmath as mp

    with mp.workdps(30):
        f = lambda x: (mp.gammainc(c + 1, x, mp.inf, regularized=True)  # noqa: E731
                       - x ** (c + 1) * mp.e ** (-x) / mp.factorial(c))
        x = mp.findroot(f, c + 1.0)
        return float(x * mp.gammainc(c + 1, x, mp.inf, regularized=True))


def _mp_binomial_aoql(n, c, N):
    """Binomial AOQL ``p F(p) (N - n)/N`` at the root of
    ``F(p) = p n b(c; n - 1, p)`` (mpmath, 30 digits)."""
    import mpmath as mp

    with mp.workdps(30):
        def F(p):
            return mp.fsum(mp.binomial(n, k) * p ** k * (1 - p) ** (n - k) for k in range(c + 1))

        def g(p):
            return F(p) - p * n * mp.binomial(n - 1, c) * p ** c * (1 - p) ** (n - 1 - c)

        p = mp.findroot(g, (mp.mpf("0.01"), mp.mpf("0.2")), solver="illinois")
        return float(p * F(p) * (N - n) / N)


def rectifying_cases() -> list:
    """AOQL factors, the homework AOQL, ATI and binomial AOQL cross-checks."""
    area = "rectifying inspection"
    cases = []
    # Printed to 4 significant figures: half a unit in the last printed place.
    factors = {0: (0.3679, 5e-5), 1: (0.8400, 5e-5), 2: (1.371, 5e-4), 3: (1.942, 5e-4),
               4: (2.544, 5e-4), 5: (3.168, 5e-4)}
    for c, (y, tol) in factors.items():
        cases.append(ReferenceCase(
            id=f"aoql-factor-c{c}", area=area,
            description=f"AOQL factor y = n AOQL of a c = {c} plan, Poisson OC, large lot "
                        f"(n = 400; published to 4 significant figures)",
            source="Dodge-Romig / Schilling AOQL factors y for single sampling with a "
                   "Poisson OC curve; from memory",
            expected=y, tolerance=tol,
            compute=lambda c=c: _aoql(400, c, "poisson").value * 400))
    for c in range(6):
        approx = factors[c][0]
        cases.append(ReferenceCase(
            id=f"aoql-factor-c{c}-mpmath", area=area,
            description=f"AOQL factor y for c = {c} (n = 1,000), tolerance 1e-12 relative",
            source="mpmath root of d/dx [x Q(c + 1, x)] = 0 at 30 digits, computed at run time",
            expected=lambda c=c: _mp_aoql_factor(c), tolerance=1e-12 * approx,
            compute=lambda c=c: _aoql(1000, c, "poisson").value * 1000, needs=("mpmath",)))
    cases += [
        ReferenceCase(
            id="homework-aoql-n20-c1-N4000", area=area,
            description="AOQL of n = 20, c = 1, N = 4,000, AOQ = p Pa (no (N - n)/N factor); "
                        "a value read off a printed table at p = 0.08 would be 0.0413, the "
                        "exact maximum is 0.041381 at p = 0.07747",
            source="independent computation: bounded maximisation (scipy.optimize) of "
                   "p B(1; 20, p) with scipy.stats.binom",
            expected=0.041380829, tolerance=1e-8,
            compute=lambda: _aoql(20, 1, "binomial", 4000, "simple").value),
        ReferenceCase(
            id="homework-aoql-n20-c1-N4000-at", area=area,
            description="where that AOQL occurs (a table read gives p = 0.08)",
            source="independent computation: bounded maximisation (scipy.optimize) of "
                   "p B(1; 20, p) with scipy.stats.binom",
            expected=0.0774659, tolerance=1e-6,
            compute=lambda: _aoql(20, 1, "binomial", 4000, "simple").at),
        ReferenceCase(
            id="binomial-aoql-n50-c2-N1000-mpmath", area=area,
            description="binomial AOQL of n = 50, c = 2, N = 1,000 (AOQL about 0.026; "
                        "tolerance 1e-12 relative)",
            source="mpmath root of F(p) = p n b(c; n - 1, p) at 30 digits, computed at run time",
            expected=lambda: _mp_binomial_aoql(50, 2, 1000), tolerance=1e-12 * 0.02,
            compute=lambda: _aoql(50, 2, "binomial", 1000).value, needs=("mpmath",)),
    ]
    for p in (0.001, 0.02, 0.1):
        def want(p=p):
            from scipy.stats import binom

            return 50 + (1 - float(binom.cdf(1, 50, p))) * 1950

        def got(p=p):
            from lotwise.analysis import rectifying as R

            return float(R.ati(_single(50, 1), p, "binomial", _scope(2000)))

        cases.append(ReferenceCase(
            id=f"ati-n50-c1-N2000-p{p * 100:g}pct".replace(".", "_"), area=area,
            description=f"ATI of n = 50, c = 1, N = 2,000 at p = {p * 100:g} % "
                        f"(tolerance 1e-12 relative, as 1e-10 units)",
            source="Dodge-Romig definition ATI = n + (1 - Pa)(N - n), Pa from "
                   "scipy.stats.binom, computed at run time",
            expected=want, tolerance=1e-10, compute=got, needs=("scipy",)))
    return cases


# --- least inspection (tests/test_least_ati.py) ---------------------------------

def _brute_least_ati(N, pbar, rql, model, beta=0.10):
    """Every plan 1 <= n <= N, 0 <= c <= n evaluated with scipy.stats: the
    smallest ATI at the process average among plans meeting beta at the RQL
    (ties: smaller n, then smaller c), as ``(ati, n, c)``."""
    import numpy as np
    from scipy.stats import binom, hypergeom

    dbar, drql = round(pbar * N), math.floor(rql * N + 1e-9)
    best = None
    for n in range(1, N + 1):
        cs = np.arange(0, n + 1)
        if model == "hypergeometric":
            pa_bar, pa_rql = hypergeom.cdf(cs, N, dbar, n), hypergeom.cdf(cs, N, drql, n)
        else:
            pa_bar, pa_rql = binom.cdf(cs, n, pbar), binom.cdf(cs, n, rql)
        atis = n + (1 - pa_bar) * (N - n)
        for c in cs[pa_rql <= beta + 1e-12]:
            if best is None or atis[c] < best[0] - 1e-9:
                best = (float(atis[c]), n, int(c))
    return best


def least_inspection_cases() -> list:
    """Least-ATI designs against a brute-force search with scipy.stats."""
    def design(model):
        from lotwise.analysis.least_ati import design_least_ati

        d = design_least_ati(lot_size=80, process_average=0.03, rql=0.10, model=model)
        return (float(d.ati_process_average), d.n, d.c)

    return [ReferenceCase(
        id=f"least-ati-N80-{model}", area="least inspection",
        description=f"least-ATI plan for N = 80, process average 3 %, RQL 10 %/beta 10 %, "
                    f"{model}: (ATI, n, c); ATI to 1e-9",
        source="brute force over every (n, c) with n <= N, scipy.stats."
               f"{'hypergeom' if model == 'hypergeometric' else 'binom'}, computed at run time",
        expected=lambda model=model: _brute_least_ati(80, 0.03, 0.10, model), tolerance=1e-9,
        compute=lambda model=model: design(model), needs=("scipy",))
        for model in ("hypergeometric", "binomial")]


# --- accept-on-zero plans (tests/test_zero.py) -----------------------------------

def zero_acceptance_cases() -> list:
    """c = 0 designs: the closed form, finite lots, the c = 0 equivalent."""
    area = "accept-on-zero plans"

    def zero_n(**kw):
        from lotwise.analysis.zero import design_zero

        return design_zero(**kw).n

    cases = []
    for rql, beta in ((0.05, 0.10), (0.01, 0.05), (0.2, 0.1), (0.001, 0.1)):
        cases.append(ReferenceCase(
            id=f"zero-closed-form-rql{rql * 100:g}-beta{beta * 100:g}".replace(".", "_"),
            area=area,
            description=f"c = 0 sample size for RQL {rql * 100:g} %, beta {beta * 100:g} % "
                        f"(process)",
            source="textbook closed form n = ceil(ln beta / ln(1 - RQL)), common practice",
            expected=lambda rql=rql, beta=beta: math.ceil(math.log(beta) / math.log1p(-rql)
                                                          - 1e-12),
            tolerance=0, compute=lambda rql=rql, beta=beta: zero_n(rql=rql, beta=beta)))
    for N, n in ((20, 19), (100, 45)):
        cases.append(ReferenceCase(
            id=f"zero-finite-lot-N{N}", area=area,
            description=f"c = 0 sample size to find a 5 % nonconforming lot of {N} with 95 % "
                        f"confidence",
            source="finite lot, computed, common practice",
            expected=n, tolerance=0,
            compute=lambda N=N: zero_n(rql=0.05, beta=0.05, lot_size=N)))
    cases.append(ReferenceCase(
        id="zero-full-inspection-N10", area=area,
        description="a lot of 10 at RQL 10 % (1 item), beta 5 %: P(X = 0) = (10 - n)/10 "
                    "<= 0.05 only at n = 10 (100 % inspection)",
        source="direct calculation",
        expected=10, tolerance=0,
        compute=lambda: zero_n(rql=0.10, beta=0.05, lot_size=10)))

    def equivalent():
        from lotwise.analysis.zero import zero_equivalent

        return zero_equivalent(_single(125, 3), _scope(), aql=0.01)

    def point_pa():
        from scipy.stats import binom

        return float(binom.cdf(3, 125, equivalent().point))

    cases += [
        ReferenceCase(
            id="zero-equivalent-n125-c3", area=area,
            description="c = 0 plan with the consumer point of n = 125, c = 3 (Pa = 0.10 at "
                        "p = 5.266 %): n with 0.9473^n <= 0.10",
            source="direct calculation",
            expected=43, tolerance=0, compute=lambda: equivalent().zero_plan.n),
        ReferenceCase(
            id="zero-equivalent-n125-c3-point", area=area,
            description="Pa of n = 125, c = 3 at that consumer point (tolerance 1e-9 relative)",
            source="scipy.stats.binom, computed at run time",
            expected=0.10, tolerance=1e-10, compute=point_pa, needs=("scipy",)),
    ]
    return cases


# --- confidence/reliability demonstration (tests/test_reliability.py) -----------

def reliability_cases() -> list:
    """Demonstration sample sizes, the rule of three, Clopper-Pearson bounds."""
    area = "confidence and reliability"

    def size(**kw):
        from lotwise.analysis.reliability import demonstration_size

        return demonstration_size(**kw).n

    def upper(n, k, C):
        from lotwise.analysis.reliability import clopper_pearson_upper

        return clopper_pearson_upper(n, k, C)

    cases = []
    for C, R, k, n in ((0.95, 0.90, 0, 29), (0.95, 0.90, 1, 46), (0.80, 0.80, 0, 8),
                       (0.70, 0.70, 0, 4), (0.95, 0.95, 0, 59)):
        cases.append(ReferenceCase(
            id=f"demonstration-c{C * 100:g}-r{R * 100:g}-k{k}", area=area,
            description=f"sample size showing {R:.0%} reliability at {C:.0%} confidence "
                        f"with {k} failure(s) allowed",
            source="confidence/reliability sample sizes; common practice, no source",
            expected=n, tolerance=0,
            compute=lambda C=C, R=R, k=k: size(confidence=C, reliability=R, failures=k)))
    for N, n in ((20, 19), (100, 45)):
        cases.append(ReferenceCase(
            id=f"demonstration-finite-lot-N{N}", area=area,
            description=f"the same, 95 % reliability at 95 % confidence, 0 failures, lot of {N}",
            source="finite lot, computed, common practice",
            expected=n, tolerance=0,
            compute=lambda N=N: size(confidence=0.95, reliability=0.95, lot_size=N)))
    for n in (20, 1000):
        cases.append(ReferenceCase(
            id=f"rule-of-three-n{n}", area=area,
            description=f"n times the 95 % upper bound for 0 failures in {n}: close to 3, "
                        f"within 8 % (0.24) for n >= 20",
            source="rule of three; common practice, no source",
            expected=3.0, tolerance=0.24, compute=lambda n=n: upper(n, 0, 0.95) * n))
    cases.append(ReferenceCase(
        id="clopper-pearson-k0-n1e6", area=area,
        description="95 % upper bound for 0 failures in 1,000,000 (tolerance 1e-13 relative)",
        source="closed form 1 - (1 - C)^(1/n), mpmath at 40 digits, computed at run time",
        expected=lambda: _mp_k0_upper(10**6, "0.05"), tolerance=1e-13 * 3e-6,
        compute=lambda: upper(10**6, 0, 0.95), needs=("mpmath",)))
    # (n, k, C, the bound to one significant figure, for the relative tolerance)
    for n, k, C, approx in ((10, 1, 0.95, 0.3), (1000, 3, 0.8, 0.005), (59, 0, 0.95, 0.04),
                            (10, 5, 0.8, 0.6), (10, 9, 0.999, 0.9)):
        def ref(n=n, k=k, C=C):
            from scipy.stats import binomtest

            return float(binomtest(k, n, alternative="less").proportion_ci(
                confidence_level=C).high)

        cases.append(ReferenceCase(
            id=f"clopper-pearson-{k}-of-{n}-c{C * 100:g}".replace(".", "_"), area=area,
            description=f"one-sided {C * 100:g} % Clopper-Pearson upper bound for {k} in {n} "
                        f"(tolerance 1e-10 relative)",
            source="scipy.stats.binomtest exact interval, alternative='less', computed at "
                   "run time",
            expected=ref, tolerance=1e-10 * approx,
            compute=lambda n=n, k=k, C=C: upper(n, k, C), needs=("scipy",)))
    return cases


def _mp_k0_upper(n, one_minus_c):
    import mpmath as mp

    with mp.workdps(40):
        return float(1 - mp.power(mp.mpf(one_minus_c), mp.mpf(1) / n))


# --- chain and skip-lot plans (tests/test_chain_skiplot.py) ------------------

def _mp_chain(n, i, p, model):
    """ChSP-1: ``Pa = P0 + P1 P0^i`` (binomial or Poisson masses, mpmath)."""
    import mpmath as mp

    with mp.workdps(30):
        p = mp.mpf(p)
        if model == "binomial":
            P0, P1 = (1 - p) ** n, n * p * (1 - p) ** (n - 1)
        else:
            lam = n * p
            P0, P1 = mp.e ** -lam, lam * mp.e ** -lam
        return float(P0 + P1 * P0 ** i)


def _brute_chain(aql, rql, alpha=0.05, beta=0.10):
    """Smallest n (<= 200) and then smallest i (<= 40) meeting both risks,
    the ChSP-1 OC evaluated in plain floats from the binomial masses."""
    def pa(n, i, p):
        P0, P1 = (1 - p) ** n, n * p * (1 - p) ** (n - 1)
        return P0 + P1 * P0 ** i

    for n in range(1, 201):
        for i in range(1, 41):
            if pa(n, i, rql) <= beta + 1e-12 and pa(n, i, aql) >= 1 - alpha - 1e-12:
                return (n, i)
    return None


def chain_skiplot_cases() -> list:
    """ChSP-1 and SkSP-2 OC formulas, and the chain designer."""
    area = "chain and skip-lot plans"

    def chain_pa(n, i, p, model):
        from lotwise.families.chain import ChainPlan

        return float(ChainPlan(n=n, i=i).pa(p, model, _scope()))

    def chain_hyper():
        from lotwise.families.chain import ChainPlan

        return float(ChainPlan(n=30, i=3).pa_count(25, _scope(500)))

    def scipy_chain_hyper():
        from scipy.stats import hypergeom

        h0, h1 = hypergeom.pmf(0, 500, 25, 30), hypergeom.pmf(1, 500, 25, 30)
        return float(h0 + h1 * h0 ** 3)

    def skip_pa():
        from lotwise.families.skiplot import SkipLotPlan

        return float(SkipLotPlan(reference=_single(80, 2), i=4, f=0.25).pa(
            0.03, "binomial", _scope()))

    def mp_skip():
        import mpmath as mp

        with mp.workdps(30):
            n, c, i, f, p = 80, 2, 4, mp.mpf(1) / 4, mp.mpf("0.03")
            P = mp.fsum(mp.binomial(n, k) * p ** k * (1 - p) ** (n - k) for k in range(c + 1))
            return float((f * P + (1 - f) * P ** i) / (f + (1 - f) * P ** i))

    def chain_design():
        from lotwise.families.chain import design_chain

        d = design_chain(aql=0.01, rql=0.15)
        return (d.plan.n, d.plan.i)

    cases = []
    for n, i, p, model, approx in ((20, 3, 0.02, "binomial", 0.8), (200, 4, 0.003, "binomial", 0.7),
                                   (20, 3, 0.02, "poisson", 0.8)):
        cases.append(ReferenceCase(
            id=f"chain-n{n}-i{i}-p{p * 100:g}pct-{model}".replace(".", "_"), area=area,
            description=f"ChSP-1 Pa of n = {n}, i = {i} at p = {p * 100:g} %, {model} "
                        f"(tolerance 1e-12 relative)",
            source="Pa = P0 + P1 P0^i (Dodge 1955), mpmath at 30 digits, computed at run time",
            expected=lambda n=n, i=i, p=p, model=model: _mp_chain(n, i, p, model),
            tolerance=1e-12 * approx,
            compute=lambda n=n, i=i, p=p, model=model: chain_pa(n, i, p, model),
            needs=("mpmath",)))
    cases += [
        ReferenceCase(
            id="chain-n30-i3-N500-D25-hypergeometric", area=area,
            description="ChSP-1 Pa of n = 30, i = 3 in a lot of 500 holding 25 nonconforming "
                        "(tolerance 1e-10 relative)",
            source="scipy.stats.hypergeom masses in P0 + P1 P0^i (Dodge 1955), computed at "
                   "run time",
            expected=scipy_chain_hyper, tolerance=1e-10 * 0.2, compute=chain_hyper,
            needs=("scipy",)),
        ReferenceCase(
            id="skiplot-n80-c2-i4-f0_25-p3pct", area=area,
            description="SkSP-2 Pa of reference plan n = 80, c = 2 with i = 4, f = 1/4 at "
                        "p = 3 % (tolerance 1e-12 relative)",
            source="Pa = (f P + (1 - f) P^i)/(f + (1 - f) P^i) (Perry 1973), mpmath at 30 "
                   "digits, computed at run time",
            expected=mp_skip, tolerance=1e-12 * 0.5, compute=skip_pa, needs=("mpmath",)),
        ReferenceCase(
            id="chain-design-aql1-rql15", area=area,
            description="ChSP-1 design for AQL 1 %/alpha 5 %, RQL 15 %/beta 10 %, binomial: "
                        "(n, i)",
            source="brute force over every n up to 200 and i up to 40 (Dodge 1955 OC), "
                   "computed at run time",
            expected=lambda: _brute_chain(0.01, 0.15), tolerance=0, compute=chain_design),
    ]
    return cases


# --- double and multiple plans (tests/test_multistage.py) -----------------------

def _mp_double_hyper(n1, c1, r1, n2, c2, N, D):
    """Double-plan Pa and ASN from exact hypergeometric masses (mpmath)."""
    import mpmath as mp

    def h(k, n, N, D):
        if k < 0 or k > n or k > D or n - k > N - D:
            return mp.mpf(0)
        return mp.binomial(D, k) * mp.binomial(N - D, n - k) / mp.binomial(N, n)

    with mp.workdps(30):
        pa = mp.fsum(h(k, n1, N, D) for k in range(c1 + 1))
        asn = mp.mpf(n1)
        for d1 in range(c1 + 1, r1):
            f = h(d1, n1, N, D)
            pa += f * mp.fsum(h(k, n2, N - n1, D - d1) for k in range(c2 - d1 + 1))
            asn += n2 * f
        return float(pa), float(asn)


def _mp_nist_root():
    """``p n1`` where the Poisson OC of the double plan c1 = 2, c2 = 4,
    n2 = n1 equals 0.10 (mpmath, 30 digits)."""
    import mpmath as mp

    with mp.workdps(30):
        def pa(lam):
            P = lambda k: mp.e ** -lam * lam ** k / mp.factorial(k)  # noqa: E731
            F = lambda c: mp.fsum(P(k) for k in range(c + 1))  # noqa: E731
            return F(2) + P(3) * F(1) + P(4) * F(0)

        return float(mp.findroot(lambda lam: pa(lam) - mp.mpf("0.1"), 5.4))


def _mp_semicurtailed(n1, c1, n2, c2, p):
    """ASN of a double plan curtailed on rejection in the second sample
    (Montgomery's formula, P_M read as 'at least c2 - j + 2 in n2 + 1')."""
    import mpmath as mp

    with mp.workdps(30):
        pm = mp.mpf(p)
        b = lambda k, m: mp.binomial(m, k) * pm ** k * (1 - pm) ** (m - k)  # noqa: E731
        F = lambda c, m: mp.fsum(b(k, m) for k in range(0, c + 1))  # noqa: E731
        asn = mp.mpf(n1)
        for j in range(c1 + 1, c2 + 1):
            k = c2 - j + 1
            asn += b(j, n1) * (n2 * F(c2 - j, n2) + k / pm * (1 - F(k, n2 + 1)))
        return float(asn)


_DOUBLE_AREA = "double and multiple plans"
_MONT_DOUBLE = dict(n1=50, c1=1, n2=100, c2=3)


def _double(**kw):
    from lotwise.families.double import DoublePlan

    return DoublePlan(**kw)


def multistage_cases() -> list:
    """The textbook double example, the handbook table, mpmath sums."""
    return _double_published_cases() + _double_exact_cases()


def _double_published_cases() -> list:
    """The textbook double example and the handbook's double-sampling table."""
    area = _DOUBLE_AREA
    double, mont = _double, _MONT_DOUBLE

    def stages():
        return tuple(float(x) for x in double(**mont).pa_stages(0.05, "binomial", _scope()))

    def nist(ratio, c1, c2, pa):
        plan = double(n1=1000, c1=c1, n2=ratio * 1000, c2=c2)
        return 1000 * plan.quality_at(pa, "poisson", _scope(defects=True), "x")

    src_mont = ("Montgomery, Introduction to Statistical Quality Control, double-sampling "
                "example; from memory")
    src_nist = ("NIST/SEMATECH e-Handbook of Statistical Methods, section 6.2.4 (double "
                "sampling table, Poisson)")
    cases = [
        ReferenceCase(
            id="montgomery-double-pa-first", area=area,
            description="Pa on the first sample of n1 = 50, c1 = 1, n2 = 100, c2 = 3 at p = 5 % "
                        "(binomial; published to 4 decimals)",
            source=src_mont, expected=0.2794, tolerance=5e-5, compute=lambda: stages()[0]),
        ReferenceCase(
            id="montgomery-double-pa-second", area=area,
            description="Pa on the second sample, same plan and p",
            source=src_mont, expected=0.0110, tolerance=5e-5, compute=lambda: stages()[1]),
        ReferenceCase(
            id="montgomery-double-pa", area=area,
            description="Pa = 0.2794 + 0.0110, same plan and p",
            source=src_mont, expected=0.2904, tolerance=5e-5,
            compute=lambda: float(double(**mont).pa(0.05, "binomial", _scope()))),
        ReferenceCase(
            id="montgomery-double-asn", area=area,
            description="ASN, same plan and p (published to 2 decimals)",
            source=src_mont, expected=98.10, tolerance=5e-3,
            compute=lambda: float(double(**mont).asn(0.05, "binomial", _scope()))),
        ReferenceCase(
            id="nist-double-r1-c2-c4-pa95", area=area,
            description="p n1 at Pa = 0.95, n2 = n1, c1 = 2, c2 = 4 (published to 2 decimals)",
            source=src_nist, expected=1.16, tolerance=0.005, compute=lambda: nist(1, 2, 4, 0.95)),
        ReferenceCase(
            id="nist-double-r1-c2-c4-pa10", area=area,
            description="p n1 at Pa = 0.10, n2 = n1, c1 = 2, c2 = 4. The exact value is 5.3847 "
                        "(mpmath, next case), which would round to 5.38; the handbook prints 5.39, "
                        "so this row allows 0.006 instead of half a unit (0.005)",
            source=src_nist, expected=5.39, tolerance=0.006, compute=lambda: nist(1, 2, 4, 0.10)),
        ReferenceCase(
            id="nist-double-r1-c2-c4-pa10-mpmath", area=area,
            description="the same point solved exactly (tolerance 1e-9 relative)",
            source="mpmath root of the Poisson double-sampling OC equation at 30 digits, "
                   "computed at run time",
            expected=_mp_nist_root, tolerance=1e-9 * 5, compute=lambda: nist(1, 2, 4, 0.10),
            needs=("mpmath",)),
        ReferenceCase(
            id="nist-double-r2-c1-c4-pa95", area=area,
            description="p n1 at Pa = 0.95, n2 = 2 n1, c1 = 1, c2 = 4 (published to 2 decimals)",
            source=src_nist, expected=0.77, tolerance=0.005, compute=lambda: nist(2, 1, 4, 0.95)),
    ]
    return cases


def _double_exact_cases() -> list:
    """A double plan in a finite lot and the semi-curtailed ASN, against mpmath."""
    area = _DOUBLE_AREA
    double, mont = _double, _MONT_DOUBLE
    hyp = dict(n1=50, c1=1, r1=4, n2=100, c2=3)

    def hyper(which):
        plan, sc = double(**hyp), _scope(1000)
        if which == "pa":
            return float(plan.pa_count(50, sc))
        return float(plan.asn(50 / 1000, "hypergeometric", sc))

    def semi():
        return float(double(**mont).asn_curtailed(0.05, "binomial", _scope(), stages="last",
                                                  accept=False))

    return [
        ReferenceCase(
            id="double-hypergeometric-N1000-D50-pa-mpmath", area=area,
            description="Pa of n1 = 50, c1 = 1, r1 = 4, n2 = 100, c2 = 3 in a lot of 1,000 "
                        "holding 50 (tolerance 1e-12 relative)",
            source="mpmath exact binomial-coefficient sums at 30 digits, computed at run time",
            expected=lambda: _mp_double_hyper(50, 1, 4, 100, 3, 1000, 50)[0],
            tolerance=1e-12 * 0.2, compute=lambda: hyper("pa"), needs=("mpmath",)),
        ReferenceCase(
            id="double-hypergeometric-N1000-D50-asn-mpmath", area=area,
            description="ASN of the same plan and lot (tolerance 1e-12 relative)",
            source="mpmath exact binomial-coefficient sums at 30 digits, computed at run time",
            expected=lambda: _mp_double_hyper(50, 1, 4, 100, 3, 1000, 50)[1],
            tolerance=1e-12 * 90, compute=lambda: hyper("asn"), needs=("mpmath",)),
        ReferenceCase(
            id="montgomery-semicurtailed-asn-p5pct", area=area,
            description="ASN of n1 = 50, c1 = 1, n2 = 100, c2 = 3 curtailed on rejection in the "
                        "second sample, p = 5 % (ASN about 65; tolerance 1e-10 relative)",
            source="Montgomery, section 15.3, semi-curtailed ASN formula; from memory; "
                   "evaluated with mpmath at run time",
            expected=lambda: _mp_semicurtailed(50, 1, 100, 3, 0.05), tolerance=1e-10 * 50,
            compute=semi, needs=("mpmath",)),
    ]


# --- item-by-item sequential plans (tests/test_sequential.py) -------------------

def sequential_cases() -> list:
    """Wald's lines of the textbook example and Wald's OC/ASN points."""
    area = "sequential plans"

    def lines():
        from lotwise.families.sequential import sprt_lines

        return sprt_lines(0.01, 0.05, 0.06, 0.10)

    def first_acceptance():
        from lotwise.families.sequential import SequentialPlan

        h1, h2, s = lines()
        return SequentialPlan(h1=h1, h2=h2, s=s, truncate=300).first_acceptance

    def wald(what, p):
        from lotwise.families.sequential import wald_asn, wald_pa

        h1, h2, s = lines()
        p = s if p == "s" else p
        return float((wald_pa if what == "pa" else wald_asn)(p, h1, h2, s))

    def designed_h1():
        from lotwise.families.sequential import design_sequential

        return design_sequential(aql=0.01, rql=0.06).plan.h1

    src = ("Montgomery, Introduction to Statistical Quality Control, sequential sampling "
           "example; from memory")
    out = [ReferenceCase(id=f"montgomery-sprt-{name}", area=area,
                         description=f"Wald's {name} for p1 = 1 %/alpha 5 %, p2 = 6 %/beta 10 % "
                                     f"(published to the digits shown)",
                         source=src, expected=val, tolerance=tol,
                         compute=lambda j=j: lines()[j])
           for j, (name, val, tol) in enumerate((("h1", 1.22, 0.005), ("h2", 1.57, 0.005),
                                                 ("s", 0.0281, 0.00005)))]
    out += [
        ReferenceCase(
            id="montgomery-sprt-first-acceptance", area=area,
            description="first possible acceptance: after ceil(h1 / s) = 44 conforming units",
            source=src, expected=44, tolerance=0, compute=first_acceptance),
        ReferenceCase(
            id="montgomery-sequential-design-h1", area=area,
            description="h1 of the designed sequential plan for the same targets",
            source="Montgomery (from memory) lines", expected=1.2211, tolerance=1e-4,
            compute=designed_h1),
        ReferenceCase(
            id="wald-pa-at-p1", area=area,
            description="Wald's approximate OC at p1 = 1 % for the same lines: 1 - alpha",
            source="Wald, Sequential Analysis (1947), ch. 3; from memory",
            expected=0.95, tolerance=1e-9, compute=lambda: wald("pa", 0.01)),
        ReferenceCase(
            id="wald-pa-at-p2", area=area,
            description="Wald's approximate OC at p2 = 6 %: beta",
            source="Wald, Sequential Analysis (1947), ch. 3; from memory",
            expected=0.10, tolerance=1e-9, compute=lambda: wald("pa", 0.06)),
        ReferenceCase(
            id="wald-asn-at-s", area=area,
            description="Wald's ASN at p = s: h1 h2 / (s (1 - s)) (tolerance 1e-9 relative)",
            source="Wald, Sequential Analysis (1947), ch. 3; from memory",
            expected=lambda: (lambda h1, h2, s: h1 * h2 / (s * (1 - s)))(*lines()),
            tolerance=1e-9 * 70, compute=lambda: wald("asn", "s")),
    ]
    return out


# --- variables plans (tests/test_variables.py) ---------------------------------

def _z(p):
    """Standard normal quantile of ``1 - p`` (mpmath)."""
    import mpmath as mp

    with mp.workdps(30):
        return float(-mp.sqrt(2) * mp.erfinv(2 * mp.mpf(p) - 1))


def _nct_sf_mpmath(df, nc, t):
    """``P(T > t)`` for the noncentral t by integration over the chi-square
    variable (mpmath, 30 digits)."""
    import mpmath as mp

    with mp.workdps(30):
        df, nc, t = mp.mpf(df), mp.mpf(nc), mp.mpf(t)
        f = lambda v: (mp.ncdf(t * mp.sqrt(v / df) - nc) * v ** (df / 2 - 1)  # noqa: E731
                       * mp.exp(-v / 2) / (2 ** (df / 2) * mp.gamma(df / 2)))
        return float(1 - mp.quad(f, [0, df / 4, df, 2 * df, 4 * df, mp.inf]))


_VARIABLES_AREA = "variables plans"


def _pa_unknown(n, k, p):
    from lotwise.families import variables as V

    return float(V.pa_unknown(n, k, p))


def _pa_known(n, k, p):
    from lotwise.families import variables as V

    return float(V.pa_known(n, k, p))


def variables_cases() -> list:
    """Known-sigma closed forms, the textbook example, noncentral t OC."""
    return _variables_design_cases() + _noncentral_t_cases() + _known_sigma_oc_cases()


def _variables_design_cases() -> list:
    """Known-sigma closed forms and the textbook k- and s-method designs."""
    area = _VARIABLES_AREA

    def closed(za, zb, z1, z2):
        from lotwise.families.variables import closed_form_known

        return closed_form_known(za, zb, z1, z2)

    def exact_closed():
        return closed(_z(0.10), _z(0.10), _z(0.02), _z(0.10))

    def design(sigma):
        from lotwise.families.variables import design_variables

        return design_variables(aql=0.01, rql=0.06, sigma=sigma, attributes=False)

    closed_src = ("closed-form known-sigma design (Schilling and Neubauer, 2nd ed., CRC Press, "
              "2009, variables chapter; from memory) with two-decimal table z values, "
              "alpha = beta = 0.10, p1 = 0.02, p2 = 0.10")
    mont = ("Montgomery, Introduction to Statistical Quality Control, variables example; "
            "from memory, read from a nomograph")
    cases = [
        ReferenceCase(
            id="known-sigma-closed-form-n-two-decimal-z", area=area,
            description="closed-form n = ((z_a + z_b)/(z_p1 - z_p2))^2 with the two-decimal z "
                        "values 1.28, 1.28, 2.06 (first table entry at or above 0.98), 1.28",
            source=closed_src, expected=10.77, tolerance=0.005,
            compute=lambda: closed(1.28, 1.28, 2.06, 1.28)[0]),
        ReferenceCase(
            id="known-sigma-closed-form-n-nearest-z", area=area,
            description="the same with the nearest two-decimal z_0.02 = 2.05",
            source=closed_src, expected=11.05, tolerance=0.005,
            compute=lambda: closed(1.28, 1.28, 2.05, 1.28)[0]),
        ReferenceCase(
            id="known-sigma-closed-form-n-exact-z", area=area,
            description="closed-form n with exact z values (z from mpmath; printed to 2 "
                        "decimals)",
            source="independent computation: the same closed form with mpmath normal "
                   "quantiles at 50 digits",
            expected=11.02, tolerance=0.005, compute=lambda: exact_closed()[0]),
        ReferenceCase(
            id="known-sigma-closed-form-k-exact-z", area=area,
            description="closed-form k = (z_p1 z_b + z_p2 z_a)/(z_a + z_b) with exact z",
            source="independent computation: the same closed form with mpmath normal "
                   "quantiles at 50 digits",
            expected=1.668, tolerance=0.0005, compute=lambda: exact_closed()[1]),
        ReferenceCase(
            id="montgomery-variables-known-n", area=area,
            description="k-method design, sigma known, p1 = 1 %/alpha 5 %, p2 = 6 %/beta 10 %: n",
            source=mont, expected=15, tolerance=0, compute=lambda: design("known").n),
        ReferenceCase(
            id="montgomery-variables-known-k", area=area,
            description="the same design's k (about 1.9; tolerance 0.02)",
            source=mont, expected=1.9, tolerance=0.02, compute=lambda: design("known").k),
        ReferenceCase(
            id="montgomery-variables-unknown-n", area=area,
            description="s-method design, sigma unknown, same targets: n. The book's 40 is a "
                        "nomograph reading; the exact noncentral-t search gives 42, so the "
                        "tolerance is 3 units as in the test",
            source=mont, expected=40, tolerance=3, compute=lambda: design("unknown").n),
        ReferenceCase(
            id="montgomery-variables-unknown-k", area=area,
            description="the same design's k (about 1.9; tolerance 0.02)",
            source=mont, expected=1.9, tolerance=0.02, compute=lambda: design("unknown").k),
    ]
    return cases


def _noncentral_t_cases() -> list:
    """The s-method OC (noncentral t) against scipy.stats and mpmath."""
    area, pa_unknown = _VARIABLES_AREA, _pa_unknown
    cases = []
    for n, k, p in ((42, 1.901, 0.01), (42, 1.901, 0.06), (10, 1.5, 0.05), (100, 2.3, 0.005)):
        def ref(n=n, k=k, p=p):
            from scipy import stats

            return float(stats.nct.sf(k * math.sqrt(n), n - 1, math.sqrt(n) * _z(p)))

        cases.append(ReferenceCase(
            id=f"noncentral-t-n{n}-k{k:g}-p{p * 100:g}pct-scipy".replace(".", "_"), area=area,
            description=f"s-method Pa of n = {n}, k = {k:g} at p = {p * 100:g} % "
                        f"(tolerance 1e-9)",
            source="scipy.stats.nct survival function (general-purpose library; it shares "
                   "its numerical core with scipy.special.nctdtr), computed at run time",
            expected=ref, tolerance=1e-9,
            compute=lambda n=n, k=k, p=p: pa_unknown(n, k, p), needs=("scipy", "mpmath")))
    cases.append(ReferenceCase(
        id="noncentral-t-n42-k1_901-p6pct-mpmath", area=area,
        description="s-method Pa of n = 42, k = 1.901 at p = 6 % (tolerance 1e-9)",
        source="the noncentral t distribution (Owen 1968) integrated with mpmath, independent "
               "of scipy, computed at run time",
        expected=lambda: _nct_sf_mpmath(41, math.sqrt(42) * _z(0.06), 1.901 * math.sqrt(42)),
        tolerance=1e-9, compute=lambda: pa_unknown(42, 1.901, 0.06), needs=("mpmath",)))
    return cases


def _known_sigma_oc_cases() -> list:
    """The k-method OC against the normal distribution in mpmath."""
    area, pa_known = _VARIABLES_AREA, _pa_known
    cases = []
    for n, k, p in ((15, 1.894, 0.01), (15, 1.894, 0.06)):
        def ref(n=n, k=k, p=p):
            import mpmath as mp

            with mp.workdps(30):
                return float(mp.ncdf(math.sqrt(n) * (_z(p) - k)))

        cases.append(ReferenceCase(
            id=f"known-sigma-oc-n{n}-k{k:g}-p{p * 100:g}pct".replace(".", "_"), area=area,
            description=f"k-method Pa of n = {n}, k = {k:g} at p = {p * 100:g} % "
                        f"(tolerance 1e-12)",
            source="the k-method OC Phi(sqrt(n)(z_p - k)) (textbook formula, from memory), "
                   "mpmath normal distribution, computed at run time",
            expected=ref, tolerance=1e-12,
            compute=lambda n=n, k=k, p=p: pa_known(n, k, p), needs=("mpmath",)))
    return cases
