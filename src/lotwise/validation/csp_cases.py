"""Reference cases of continuous sampling plans CSP-1, CSP-2 and CSP-3.

A provider for :mod:`lotwise.validation.runner` (registered in its
``PROVIDERS``); the plan family's record names it too
(``lotwise.families.csp.FAMILIES[...].cases``). It lives here rather than in
:mod:`lotwise.families.csp` because plan families sit below validation in
the package's layers. Each case reproduces a value that
``tests/test_csp.py`` checks, with the source worded as the test words it.

Examples
--------
>>> from lotwise.validation.runner import run_cases
>>> val = run_cases(c for c in validation_cases() if c.id == "csp1-dodge-afi-i38-f10-p2pct")
>>> [(r.case.id, r.verdict) for r in val.results]
[('csp1-dodge-afi-i38-f10-p2pct', 'pass')]
"""

from __future__ import annotations

from lotwise.validation.runner import ReferenceCase

__all__ = ["validation_cases"]

AREA = "continuous sampling (CSP)"
DODGE43 = ("H. F. Dodge, 'A sampling inspection plan for continuous production', Annals of "
           "Mathematical Statistics 14(3), 1943")
DODGE = DODGE43 + ", CSP-1 clearance numbers i by f and AOQL (from memory)"


def _plan(scheme, **kw):
    from lotwise.families.csp import make_plan

    return make_plan(scheme, **kw)


def _smallest_i(scheme, f, aoql):
    from lotwise.families.csp import design_csp

    return lambda: design_csp(scheme=scheme, aoql=aoql, f=f).plan.i


def _stationary_pa(plan, p):
    """Long-run fraction under sampling from the chain's stationary law (numpy)."""
    import numpy as np

    from lotwise.families.csp import transition_matrix

    P = transition_matrix(plan, p).toarray()
    n = P.shape[0]
    A = np.vstack([P.T - np.eye(n), np.ones(n)])
    rhs = np.zeros(n + 1)
    rhs[-1] = 1.0
    pi = np.linalg.lstsq(A, rhs, rcond=None)[0]
    return float(pi[plan.i:plan.i + 1 + plan.probation].sum())


def _csp1_stationarity(i, f):
    """AOQL of CSP-1 from ``q (f + (1 - f) q^i) = i f p`` (mpmath root)."""
    import mpmath as mp

    with mp.workdps(30):
        g = lambda p: (1 - p) * (f + (1 - f) * (1 - p) ** i) - i * f * p  # noqa: E731
        p = mp.findroot(g, (mp.mpf(1) / (i + 1), mp.mpf("0.999")), solver="anderson")
        return float(((i + 1) * p - 1) / i)


def _dodge_afi(i, f, p):
    q = 1.0 - p
    u = (1.0 - q**i) / (p * q**i)
    v = 1.0 / (f * p)
    return (u + f * v) / (u + v)


def _enumerate_afi(i, f, p, M):
    """Expected fraction inspected in the first ``M`` units of CSP-1, by
    walking every path of unit results (no merging of equal states)."""
    def inspected(depth, clear):  # expected units inspected from unit ``depth`` on
        if depth == M:
            return 0.0
        good, bad = inspected(depth + 1, min(clear + 1, i)), inspected(depth + 1, 0)
        if clear < i:  # 100 % inspection
            return 1.0 + p * bad + (1.0 - p) * good
        kept = inspected(depth + 1, i)
        return f * (1.0 + p * bad + (1.0 - p) * kept) + (1.0 - f) * kept

    return inspected(0, 0) / M


def validation_cases() -> list:
    """Reference cases of continuous sampling plans."""
    def afi(plan, p):
        return lambda: float(plan.afi(p))

    c1 = _plan("csp1", i=38, f=0.1)
    c2 = _plan("csp2", i=20, f=0.2)
    c3 = _plan("csp3", i=20, f=0.2, k=15, burst=4)
    return [
        ReferenceCase(
            id="dodge-csp1-f1_2-aoql0_198", area=AREA,
            description="CSP-1 smallest i with f = 1/2 and AOQL at most 0.198 %",
            source=DODGE, expected=140, tolerance=0,
            compute=_smallest_i("csp1", 0.5, 0.00198)),
        ReferenceCase(
            id="dodge-csp1-f1_10-aoql0_53", area=AREA,
            description="CSP-1 smallest i with f = 1/10 and AOQL at most 0.53 %",
            source=DODGE, expected=207, tolerance=0,
            compute=_smallest_i("csp1", 0.1, 0.0053)),
        ReferenceCase(
            id="dodge-csp1-f1_2-aoql1_22", area=AREA,
            description="CSP-1 smallest i with f = 1/2 and AOQL at most 1.22 %",
            source=DODGE, expected=23, tolerance=0,
            compute=_smallest_i("csp1", 0.5, 0.0122)),
        ReferenceCase(
            id="csp1-aoql-stationarity-i38-f10", area=AREA,
            description="CSP-1 i = 38, f = 1/10: AOQL against ((i + 1) p - 1)/i at the root "
                        "of q (f + (1 - f) q^i) = i f p (dAOQ/dp = 0 of Dodge's AOQ)",
            source="independent computation: mpmath root at 30 digits of the stationarity "
                   "condition of the AOQ of " + DODGE43,
            expected=lambda: _csp1_stationarity(38, 0.1), tolerance=1e-10,
            compute=lambda: c1.aoql()[0], needs=("mpmath",)),
        ReferenceCase(
            id="csp1-dodge-afi-i38-f10-p2pct", area=AREA,
            description="CSP-1 i = 38, f = 1/10: AFI at 2 % nonconforming",
            source="AFI = (u + f v)/(u + v) of " + DODGE43 + "; independent computation in "
                   "double precision",
            expected=lambda: _dodge_afi(38, 0.1, 0.02), tolerance=1e-12, compute=afi(c1, 0.02)),
        ReferenceCase(
            id="csp2-chain-i20-f1_5-p4pct", area=AREA,
            description="CSP-2 i = k = 20, f = 1/5: fraction passed under sampling at 4 %, "
                        "closed form against the chain's stationary law",
            source="independent computation: stationary law of the plan's Markov chain by a "
                   "dense least-squares solve (numpy.linalg); the chain's transition matrix is "
                   "the tool's own (lotwise.families.csp.transition_matrix)",
            expected=lambda: _stationary_pa(c2, 0.04), tolerance=1e-10,
            compute=lambda: float(c2.pa(0.04))),
        ReferenceCase(
            id="csp3-chain-i20-f1_5-k15-p4pct", area=AREA,
            description="CSP-3 i = 20, f = 1/5, k = 15, burst 4: fraction passed under "
                        "sampling at 4 %, closed form against the chain's stationary law",
            source="independent computation: stationary law of the plan's Markov chain by a "
                   "dense least-squares solve (numpy.linalg); the chain's transition matrix is "
                   "the tool's own (lotwise.families.csp.transition_matrix)",
            expected=lambda: _stationary_pa(c3, 0.04), tolerance=1e-10,
            compute=lambda: float(c3.pa(0.04))),
        ReferenceCase(
            id="csp1-short-run-enumeration-M8", area=AREA,
            description="CSP-1 i = 2, f = 1/2: expected fraction inspected in the first 8 "
                        "units at 10 % nonconforming",
            source="independent computation: enumeration of every path of unit results",
            expected=lambda: _enumerate_afi(2, 0.5, 0.1, 8), tolerance=1e-12,
            compute=lambda: _plan("csp1", i=2, f=0.5).run_figures(0.1, 8)[0]),
    ]

