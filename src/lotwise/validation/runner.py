"""Software validation: the tool's reference cases, run and reported.

A quality system that relies on this tool to justify sampling must show
that the tool computes what it claims (software validation). ``lotwise
validate`` runs a registry of *reference cases* -- published tables and
worked examples, facts of the trade and cross-checks computed at run time
against general-purpose reference libraries (mpmath, scipy.stats) -- and
writes a dated
report, in Markdown and PDF, of every case: what was expected, what the tool
computed, the tolerance and the verdict, with the versions of the tool and
of its dependencies.

Each case is a :class:`ReferenceCase`: an ``id``, a description, the
``source`` as the tests name it, the ``expected`` value (a number, a tuple,
a string, or a callable computing it at run time, as the mpmath
cross-checks do), an absolute ``tolerance`` (0 for exact agreement) and
``compute``, a callable returning what the tool gives.

``lotwise validate --json`` prints ``{"verdict" (PASSED, FAILED or
INCOMPLETE), "cases", "passed", "failed", "skipped", "date", "versions",
"results": [{"id", "area", "description", "source", "expected", "computed",
"tolerance", "difference", "verdict", "note"}], "report": {"markdown",
"pdf"}}``.

Adding cases
------------
Cases come from *providers*: functions with no arguments returning a list of
:class:`ReferenceCase`. :data:`PROVIDERS` lists them as ``"module:function"``
strings, imported when the report is made. A new plan type adds its cases
by appending one string, e.g.
``PROVIDERS.append("lotwise.double_cases:validation_cases")`` at the end of
this module (or in the provider's own module, imported before the run), and
writing the function beside its tests, with each case's ``source`` worded as
in the test that checks the same value. Ids must be unique; a duplicate
stops the run.

A case that cannot be computed (its callable raises) is reported as an
error, and a case whose reference needs mpmath when mpmath is not installed
is skipped; either way the validation is not passed (exit code 1).

Examples
--------
>>> cases = [c for c in all_cases() if c.id.startswith("zero-acceptance")]
>>> result = run_cases(cases)
>>> [(r.case.id, r.computed, r.verdict) for r in result.results][:1]
[('zero-acceptance-c0-95-95', 59, 'pass')]
"""

from __future__ import annotations

import importlib
import math
import platform
import sys
from dataclasses import dataclass, field
from datetime import datetime, timezone
from typing import Any, Callable

__all__ = ["ReferenceCase", "CaseResult", "Validation", "PROVIDERS", "all_cases",
           "run_cases", "versions", "markdown_report", "pdf_report"]


@dataclass(frozen=True, kw_only=True)
class ReferenceCase:
    """One reference value the tool must reproduce.

    Attributes
    ----------
    id : str
        Short unique name (letters, digits, hyphens).
    description : str
        What is computed, in words.
    source : str
        Where the expected value comes from: a published work (author, title,
        edition, year, section where known; "from memory" where so) or
        "independent computation" naming the method (mpmath at N digits,
        enumeration, quadrature, simulation), never an internal document.
    expected : number, tuple, str or callable
        The reference; a callable is evaluated at run time (cross-checks). With
        ``within=True`` a pair ``(lo, hi)`` the computed value must lie in.
    tolerance : float
        Largest absolute difference accepted (each element of a tuple).
    compute : callable
        Returns the tool's value.
    area : str
        Group heading in the report.
    needs : tuple of str
        Modules the reference needs (a missing one skips the case).
    requirement : str
        Id of the claim in :data:`lotwise.validation.requirements.REQUIREMENTS`
        the case covers (default: the area's).
    exercises : str
        The command or function exercised, when it is not simply the lotwise
        functions the case calls (those are recorded at run time).
    tolerance_reason : str
        Why the tolerance is what it is (default: by rule, see
        :func:`tolerance_reason`).
    published : number, optional
        A published value that is only an approximation (a nomograph reading,
        a table built on two-decimal z values, a misprint): recorded beside the
        exact ``expected`` value, which the case passes on; ``published_note``
        says how far apart they are and why.
    within : bool
        ``expected`` is an interval ``(lo, hi)``.
    """

    id: str
    description: str
    source: str
    expected: Any
    tolerance: float
    compute: Callable[[], Any]
    area: str = "single sampling"
    needs: tuple = ()
    requirement: str = ""
    exercises: str = ""
    tolerance_reason: str = ""
    published: Any = None
    published_note: str = ""
    within: bool = False


@dataclass(frozen=True, kw_only=True)
class CaseResult:
    case: ReferenceCase
    expected: Any
    computed: Any
    difference: float | None
    verdict: str  # pass, FAIL, ERROR, skipped
    note: str = ""
    exercised: tuple = ()
    reference_calls: tuple = ()

    @property
    def requirement(self) -> str:
        return requirement_of(self.case)

    @property
    def exercises(self) -> str:
        """The command or function exercised: as the case states it, else the
        lotwise functions its computation called (recorded at run time)."""
        return self.case.exercises or ", ".join(self.exercised) or "-"

    @property
    def tolerance_reason(self) -> str:
        return tolerance_reason(self.case)

    def as_dict(self) -> dict:
        return {"id": self.case.id, "area": self.case.area,
                "description": self.case.description, "source": self.case.source,
                "expected": _plain(self.expected), "computed": _plain(self.computed),
                "tolerance": self.case.tolerance, "difference": self.difference,
                "verdict": self.verdict, "note": self.note,
                "requirement": self.requirement, "exercises": self.exercises,
                "tolerance_reason": self.tolerance_reason,
                "published": _plain(self.case.published),
                "published_note": self.case.published_note,
                "reference_calls": list(self.reference_calls)}


@dataclass(frozen=True, kw_only=True)
class Validation:
    results: list
    started: datetime
    versions: dict = field(default_factory=dict)
    installation: Any = None  # an InstallationCheck, or None when not made

    @property
    def passed(self) -> int:
        return sum(r.verdict == "pass" for r in self.results)

    @property
    def failed(self) -> int:
        return sum(r.verdict in ("FAIL", "ERROR") for r in self.results)

    @property
    def skipped(self) -> int:
        return sum(r.verdict == "skipped" for r in self.results)

    @property
    def verdict(self) -> str:
        inst = self.installation.verdict if self.installation is not None else "pass"
        if self.failed or inst == "FAIL":
            return "FAILED"
        if self.skipped or inst != "pass":
            return "INCOMPLETE"
        return "PASSED"

    def requirement_table(self) -> list:
        """``[(id, claim, [case ids])]`` of every requirement, in order."""
        from lotwise.validation.requirements import REQUIREMENTS

        return [(rid, claim, [r.case.id for r in self.results if r.requirement == rid])
                for rid, claim in REQUIREMENTS.items()]

    def as_dict(self) -> dict:
        inst = self.installation.as_dict() if self.installation is not None else None
        return {"verdict": self.verdict, "cases": len(self.results), "passed": self.passed,
                "failed": self.failed, "skipped": self.skipped,
                "date": self.started.isoformat(timespec="seconds"),
                "versions": self.versions, "results": [r.as_dict() for r in self.results],
                "installation": inst,
                "requirements": [{"id": rid, "claim": claim, "cases": ids}
                                 for rid, claim, ids in self.requirement_table()]}


def requirement_of(case: ReferenceCase) -> str:
    """The case's requirement id: its own, else its area's."""
    from lotwise.validation.requirements import requirement_for

    return case.requirement or requirement_for(case.id, case.area)


def tolerance_reason(case: ReferenceCase) -> str:
    """Why the case's tolerance is what it is: the case's own words, else a
    rule (exact agreement for a tolerance of 0; rounding only for a reference
    computed at run time)."""
    if case.tolerance_reason:
        return case.tolerance_reason
    if case.tolerance == 0:
        return "exact agreement (an integer, a plan or a word)"
    if callable(case.expected):
        return ("floating-point rounding only: the tool's double-precision value against an "
                "independent evaluation")
    return ""


def _plain(v):
    if isinstance(v, tuple):
        return [_plain(x) for x in v]
    if hasattr(v, "item") and not isinstance(v, (str, bytes)):
        return v.item()
    return v


# --- the single-sampling cases -------------------------------------------------

def _scope(lot=None, per_unit=False):
    from lotwise.core.types import Scope

    return Scope(lot_size=lot, per_unit=per_unit)


def _pa(n, c, p, model="binomial", lot=None):
    from lotwise.families.single import SinglePlan

    return float(SinglePlan(n=n, c=c).pa(p, model, _scope(lot)))


def _unity(c, prob):
    """``n p`` at which the Poisson ``Pa`` of an ``(n, c)`` plan equals ``prob``."""
    from lotwise.analysis.audit import quality_at
    from lotwise.families.single import SinglePlan

    n = 1_000_000
    return quality_at(SinglePlan(n=n, c=c), prob, "poisson", _scope()) * n


def _design(**kw):
    from lotwise.families.single import design_single

    d = design_single(**kw)
    return (d.n, d.c)


def _infeasible(**kw):
    from lotwise.families.single import design_single
    from lotwise.core.quantities import Infeasible

    try:
        d = design_single(**kw)
    except Infeasible:
        return "infeasible"
    return f"n={d.n},c={d.c}"


def _n50_c1_table() -> list:
    """Binomial Pa of n = 50, c = 1 at eight levels, against mpmath."""
    from lotwise.validation.independent import binomial_cdf

    return [ReferenceCase(
        id=f"textbook-n50-c1-p{p * 100:g}pct".replace(".", "_"),
        description=f"binomial Pa of n = 50, c = 1 at p = {p * 100:g} %",
        source="independent computation: binomial masses summed in mpmath at 50 digits",
        expected=lambda p=p: binomial_cdf(50, 1, p), tolerance=1e-12,
        compute=lambda p=p: _pa(50, 1, p), needs=("mpmath",))
        for p in (0.005, 0.01, 0.02, 0.03, 0.04, 0.05, 0.06, 0.08)]


def _cameron_cases() -> list:
    """Cameron's Poisson unity values, published and exact."""
    from lotwise.validation import independent as ind

    cases = []
    cameron = {0: (0.051, 2.303), 1: (0.355, 3.890), 2: (0.818, 5.322), 3: (1.366, 6.681),
               4: (1.970, 7.994), 5: (2.613, 9.275), 6: (3.286, 10.532), 7: (3.981, 11.771),
               8: (4.695, 12.995), 9: (5.426, 14.206), 10: (6.169, 15.407)}
    for c, (u95, u10) in cameron.items():
        for prob, val in ((0.95, u95), (0.10, u10)):
            cases.append(ReferenceCase(
                id=f"cameron-c{c}-pa{int(round(prob * 100)):02d}",
                description=f"Poisson unity value n*p at Pa = {prob:.2f} for c = {c}",
                source="J. M. Cameron, 'Tables for constructing and for computing the operating "
                       "characteristics of single-sampling plans', Industrial Quality Control "
                       "9(1), 1952, table of unity values (from memory); exact value by "
                       "independent computation: mpmath bisection at 50 digits",
                expected=lambda c=c, prob=prob: ind.poisson_unity(c, prob), tolerance=1e-7,
                tolerance_reason="the tool inverts the OC by a bracketed search to about "
                                 "1e-9 relative; 1e-7 absolute covers n*p up to 16",
                published=val,
                published_note="the table prints three decimals; two of the remembered "
                               "values (c = 6 and c = 9 at Pa = 0.95) are one unit off in the "
                               "third decimal, so the case passes on the exact value",
                compute=lambda c=c, prob=prob: _unity(c, prob), needs=("mpmath",)))
    return cases


def _success_run_cases() -> list:
    """Accept-on-zero (and c = 1) confidence/reliability sample sizes."""
    from lotwise.validation import independent as ind

    cases = []
    for cid, c, conf, rel, val in (("c0-95-95", 0, 0.95, 0.95, 59), ("c0-90-90", 0, 0.90, 0.90, 22),
                                   ("c0-95-99", 0, 0.95, 0.99, 299), ("c1-95-95", 1, 0.95, 0.95, 93)):
        cases.append(ReferenceCase(
            id=f"zero-acceptance-{cid}" if c == 0 else f"acceptance-{cid}",
            description=f"smallest n with c = {c} showing {rel:.0%} reliability at "
                        f"{conf:.0%} confidence",
            source="success-run confidence/reliability sizes (common practice, no source); "
                   "value by independent computation: enumeration of n with mpmath binomial "
                   "sums at 30 digits",
            expected=lambda c=c, conf=conf, rel=rel: ind.success_run_n(rel, conf, c),
            tolerance=0, published=val, published_note="the size as commonly quoted",
            needs=("mpmath",),
            compute=lambda c=c, conf=conf, rel=rel: _design(
                aql=1e-9, rql=1.0 - rel, beta=1.0 - conf, c=c, model="binomial")[0]))
    return cases


def single_sampling_cases() -> list:
    """Reference cases of single sampling by attributes (those tests/test_design_single.py
    checks)."""
    from lotwise.validation import independent as ind

    cases = _cameron_cases()
    mont = (0.93969, 0.73658, 0.49848, 0.30416, 0.17208)
    for k, val in enumerate(mont, start=1):
        cases.append(ReferenceCase(
            id=f"montgomery-n89-c2-p{k}pct",
            description=f"binomial Pa of n = 89, c = 2 at p = {k} %",
            source="D. C. Montgomery, Introduction to Statistical Quality Control, 6th ed., Wiley, 2009, chapter on lot-by-lot acceptance plans for attributes, "
                   "OC curve example of n = 89, c = 2 (from memory; section not verified)",
            expected=val, tolerance=5e-6,
            tolerance_reason="half a unit in the fifth decimal, the digits published",
            compute=lambda p=k / 100: _pa(89, 2, p)))
    cases += [
        ReferenceCase(
            id="montgomery-n89-c2-alpha",
            description="producer's risk of the nomograph plan n = 89, c = 2 at AQL 1 %",
            source="D. C. Montgomery, Introduction to Statistical Quality Control, 6th ed., Wiley, 2009, chapter on lot-by-lot acceptance plans for attributes, "
                   "nomograph plan n = 89, c = 2, alpha about 6.0 % (from memory)",
            expected=0.060, tolerance=0.0005,
            tolerance_reason="half a unit in the last published digit (6.0 %)", compute=lambda: 1.0 - _pa(89, 2, 0.01)),
        ReferenceCase(
            id="montgomery-design-binomial",
            description="exact binomial design, AQL 1 %/alpha 5 %, RQL 6 %/beta 10 %: (n, c)",
            source="D. C. Montgomery, Introduction to Statistical Quality Control, 6th ed., Wiley, 2009, chapter on lot-by-lot acceptance plans for attributes, "
                   "single-plan design targets (from memory); the plan by independent "
                   "computation: enumeration of n with the smallest c meeting alpha, mpmath "
                   "binomial sums at 30 digits",
            expected=lambda: ind.single_design(0.01, 0.06), tolerance=0, needs=("mpmath",),
            compute=lambda: _design(aql=0.01, rql=0.06)),
        ReferenceCase(
            id="montgomery-design-poisson",
            description="Poisson-based design for the same targets: (n, c)",
            source="D. C. Montgomery, Introduction to Statistical Quality Control, 6th ed., Wiley, 2009, chapter on lot-by-lot acceptance plans for attributes, "
                   "same targets (from memory); the plan by independent computation: "
                   "enumeration with mpmath Poisson sums at 30 digits",
            expected=lambda: ind.single_design(0.01, 0.06, model="poisson"), tolerance=0,
            needs=("mpmath",),
            compute=lambda: _design(aql=0.01, rql=0.06, model="poisson")),
    ]
    cases += _n50_c1_table()
    cases.append(ReferenceCase(
        id="chisquare-design-c2-n54",
        description="two-point Poisson design, p1 1 %/alpha 5 %, p2 10 %/beta 10 %: (n, c)",
        source="two-point design by the chi-square/Poisson table method (E. G. Schilling "
               "and D. V. Neubauer, 2nd ed., CRC Press, 2009, ch. 5; from memory)",
        expected=(54, 2), tolerance=0,
        compute=lambda: _design(aql=0.01, rql=0.10, model="poisson")))
    for c, val in ((0, 44.89), (1, 10.95), (2, 6.51)):
        cases.append(ReferenceCase(
            id=f"chisquare-operating-ratio-c{c}",
            description=f"operating ratio np(Pa = 0.10) / np(Pa = 0.95) for c = {c}",
            source="operating ratios of the chi-square/Poisson table method (E. G. "
                   "Schilling and D. V. Neubauer, 2nd ed., CRC Press, 2009, ch. 5; from "
                   "memory), two decimals",
            expected=val, tolerance=0.005,
            tolerance_reason="half a unit in the second decimal, the digits published",
            compute=lambda c=c: _unity(c, 0.10) / _unity(c, 0.95)))
    cases += [
        ReferenceCase(
            id="binomial-design-n19-c1",
            description="exact binomial design, AQL 2 %/alpha 10 %, RQL 15 %/beta 20 %",
            source="independent computation: enumeration of n with the smallest c "
                   "meeting alpha, mpmath binomial sums at 30 digits",
            expected=lambda: ind.single_design(0.02, 0.15, 0.10, 0.20), tolerance=0,
            needs=("mpmath",),
            compute=lambda: _design(aql=0.02, rql=0.15, alpha=0.10, beta=0.20)),
        ReferenceCase(
            id="binomial-design-c0-infeasible",
            description="the same targets with c = 0 fixed have no plan",
            source="independent computation: enumeration of n up to 400 with c = 0, "
                   "mpmath binomial sums at 30 digits",
            expected=lambda: ind.single_design(0.02, 0.15, 0.10, 0.20, c=0), tolerance=0,
            needs=("mpmath",),
            compute=lambda: _infeasible(aql=0.02, rql=0.15, alpha=0.10, beta=0.20, c=0)),
    ]
    cases += _success_run_cases()
    cases.append(ReferenceCase(
        id="design-aql0_1-rql0_15",
        description="exact binomial design, AQL 0.1 %/alpha 5 %, RQL 0.15 %/beta 10 %",
        source=("independent computation: mpmath binomial sums at 30 digits show (42,399, 53) "
                "meets both risks, c = 52 misses alpha, and the smallest c meeting alpha at "
                "n = 42,398 misses beta"),
        expected=lambda: ind.design_is_smallest(42399, 53, 0.001, 0.0015), tolerance=0,
        needs=("mpmath",),
        compute=lambda: _design(aql=0.001, rql=0.0015)))
    cases += _mpmath_cases()
    return cases


def _mp_binomial(n, c, p):
    """``P(X <= c)``, ``X ~ Binomial(n, p)``: the masses summed at 60 digits,
    each from the previous by the exact ratio ``(n - k + 1) p / (k (1 - p))``."""
    import mpmath as mp

    with mp.workdps(60):
        p = mp.mpf(p)
        term = (1 - p) ** n
        total = term
        r = p / (1 - p)
        for k in range(1, c + 1):
            term = term * (n - k + 1) * r / k
            total += term
        return float(total)


def _mp_poisson(lam, c):
    import mpmath as mp

    with mp.workdps(60):
        lam = mp.mpf(lam)
        term = mp.exp(-lam)
        total = term
        for k in range(1, c + 1):
            term = term * lam / k
            total += term
        return float(total)


def _mp_hyper(n, c, N, D):
    """Hypergeometric ``P(X <= c)`` from exact binomial coefficients (integers)."""
    import mpmath as mp

    with mp.workdps(80):
        tot = mp.binomial(N, n)
        return float(mp.fsum(mp.binomial(D, k) * mp.binomial(N - D, n - k)
                             for k in range(c + 1)) / tot)


def _mp_bisect(f, lo, hi, steps=200):
    """Root of a function that changes sign on ``[lo, hi]``, by bisection."""
    import mpmath as mp

    lo, hi = mp.mpf(lo), mp.mpf(hi)
    flo = f(lo)
    for _ in range(steps):
        mid = (lo + hi) / 2
        fm = f(mid)
        if (fm > 0) == (flo > 0):
            lo, flo = mid, fm
        else:
            hi = mid
    return (lo + hi) / 2


def _mpmath_cases() -> list:
    src = "independent computation: mpmath sums at 60 digits (exact binomial coefficients " \
          "at 80 digits for the hypergeometric)"
    pts = [
        ("mpmath-binomial-n1e7", "binomial Pa, n = 10,000,000, c = 9,950, p = 0.001",
         lambda: _mp_binomial(10_000_000, 9_950, 0.001),
         lambda: _pa(10_000_000, 9_950, 0.001)),
        ("mpmath-binomial-small-p", "binomial Pa, n = 1,000, c = 0, p = 1e-9",
         lambda: _mp_binomial(1000, 0, 1e-9), lambda: _pa(1000, 0, 1e-9)),
        ("mpmath-binomial-n80-c2", "binomial Pa, n = 80, c = 2, p = 3 %",
         lambda: _mp_binomial(80, 2, 0.03), lambda: _pa(80, 2, 0.03)),
        ("mpmath-poisson-n125-c3", "Poisson Pa, n = 125, c = 3, p = 2.5 %",
         lambda: _mp_poisson(125 * 0.025, 3), lambda: _pa(125, 3, 0.025, "poisson")),
        ("mpmath-poisson-large", "Poisson Pa, n = 200,000, c = 480, p = 0.25 %",
         lambda: _mp_poisson(200_000 * 0.0025, 480),
         lambda: _pa(200_000, 480, 0.0025, "poisson")),
        ("mpmath-hypergeometric-lot500", "hypergeometric Pa, N = 500, D = 25, n = 50, c = 2",
         lambda: _mp_hyper(50, 2, 500, 25),
         lambda: _pa(50, 2, 25 / 500, "hypergeometric", 500)),
        ("mpmath-hypergeometric-lot1e9", "hypergeometric Pa, N = 1e9, D = 1e6, n = 2,000, c = 3",
         lambda: _mp_hyper(2000, 3, 10**9, 10**6),
         lambda: _pa(2000, 3, 10**6 / 10**9, "hypergeometric", 10**9)),
    ]
    return [ReferenceCase(id=i, description=d, source=src, expected=e, tolerance=1e-10,
                          compute=f, area="exact arithmetic cross-checks", needs=("mpmath",))
            for i, d, e, f in pts]


# --- cases of the lot records and supplier view --------------------------------

def records_cases() -> list:
    """Reference cases of lot records and the supplier view."""
    def cp_upper():
        from lotwise.data.records import clopper_pearson

        return clopper_pearson(0, 59, 0.90)[1]

    def cp_interval():
        from lotwise.data.records import clopper_pearson

        lo, hi = clopper_pearson(5, 320, 0.95)
        return (lo, hi)

    def mp_cp():
        import mpmath as mp

        # Clopper-Pearson ends solve P(X >= 5 | p) = 0.025 and P(X <= 5 | p) = 0.025.
        with mp.workdps(40):
            def cdf(p, c):
                return mp.fsum(mp.binomial(320, k) * p**k * (1 - p)**(320 - k)
                               for k in range(c + 1))
            lo = _mp_bisect(lambda p: (1 - cdf(p, 4)) - mp.mpf("0.025"), 1e-6, 0.2)
            hi = _mp_bisect(lambda p: cdf(p, 5) - mp.mpf("0.025"), 1e-6, 0.2)
        return (float(lo), float(hi))

    def bb():
        from lotwise.families.single import SinglePlan
        from lotwise.analysis.supplier import Posterior, rejection_outlook

        return rejection_outlook(SinglePlan(n=80, c=2), Posterior.from_counts(14, 3200)).p_reject

    def mp_bb():
        import mpmath as mp

        with mp.workdps(40):
            a, b = mp.mpf(14.5), mp.mpf(3186.5)
            acc = mp.fsum(mp.binomial(80, k) * mp.beta(k + a, 80 - k + b) / mp.beta(a, b)
                          for k in range(3))
        return float(1 - acc)

    def quad():
        from lotwise.families.single import SinglePlan
        from lotwise.analysis.supplier import Posterior

        post = Posterior.from_counts(14, 3200)
        return 1.0 - post.expect(lambda p: SinglePlan(n=80, c=2).pa(p, "binomial", _scope()))

    def _mp_cp0():
        import mpmath as mp

        with mp.workdps(40):
            return float(1 - mp.mpf("0.05") ** (mp.mpf(1) / 59))

    return [
        ReferenceCase(
            id="clopper-pearson-0-of-59", area="lot records and supplier view",
            description="upper end of the 90 % Clopper-Pearson interval for 0 found in 59",
            source="independent computation: closed form 1 - 0.05^(1/59) for x = 0 "
                   "(C. J. Clopper and E. S. Pearson, Biometrika 26(4), 1934), mpmath at 40 "
                   "digits",
            expected=_mp_cp0, tolerance=1e-12, compute=cp_upper, needs=("mpmath",)),
        ReferenceCase(
            id="clopper-pearson-5-of-320", area="lot records and supplier view",
            description="95 % Clopper-Pearson interval for 5 found in 320",
            source="independent computation: mpmath bisection at 40 digits on the binomial "
                   "tail equations (C. J. Clopper and E. S. Pearson, Biometrika 26(4), 1934)",
            expected=mp_cp, tolerance=1e-10, compute=cp_interval, needs=("mpmath",)),
        ReferenceCase(
            id="predictive-rejection-beta-binomial", area="lot records and supplier view",
            description="predictive P(reject) of n = 80, c = 2, Jeffreys posterior from "
                        "14 in 3,200",
            source="independent computation: beta-binomial sum with mpmath at 40 digits",
            expected=mp_bb, tolerance=1e-10, compute=bb, needs=("mpmath",)),
        ReferenceCase(
            id="predictive-rejection-quadrature", area="lot records and supplier view",
            description="the same by the quadrature other plan types use",
            source="independent computation: beta-binomial sum with mpmath at 40 digits",
            expected=mp_bb, tolerance=1e-9, compute=quad, needs=("mpmath",)),
    ]


#: Providers of reference cases, ``"module:function"``; see the module notes.
PROVIDERS: list[str] = [
    "lotwise.validation.runner:single_sampling_cases",
    "lotwise.validation.runner:records_cases",
    "lotwise.validation.cases:rectifying_cases",
    "lotwise.validation.cases:least_inspection_cases",
    "lotwise.validation.cases:zero_acceptance_cases",
    "lotwise.validation.cases:reliability_cases",
    "lotwise.validation.cases:chain_skiplot_cases",
    "lotwise.validation.cases:multistage_cases",
    "lotwise.validation.cases:sequential_cases",
    "lotwise.validation.cases:variables_cases",
    "lotwise.validation.csp_cases:validation_cases",
    "lotwise.validation.workflow_cases:records_ci_cases",
    "lotwise.validation.workflow_cases:sheet_cases",
    "lotwise.validation.workflow_cases:judge_cases",
    "lotwise.validation.workflow_cases:two_limit_cases",
    "lotwise.validation.workflow_cases:draw_cases",
]


def all_cases(providers=None) -> list:
    """Every registered case, in provider order; raises ValueError on a
    duplicate id."""
    out, seen = [], set()
    for spec in providers or PROVIDERS:
        mod, func = spec.split(":")
        for case in getattr(importlib.import_module(mod), func)():
            if case.id in seen:
                raise ValueError(f"reference case id {case.id!r} is registered twice")
            seen.add(case.id)
            out.append(case)
    return out


def _compare(expected, computed, tol, within=False):
    """``(ok, difference)``; numbers and tuples of numbers within ``tol``,
    an interval ``(lo, hi)`` containing the number (``within``), everything
    else equal."""
    if within:
        lo, hi = expected
        try:
            x = float(computed)
        except (TypeError, ValueError):
            return False, None
        d = max(lo - x, x - hi, 0.0)
        return bool(math.isfinite(x) and d <= tol), d
    if isinstance(expected, tuple):
        if not isinstance(computed, tuple) or len(computed) != len(expected):
            return False, None
        diffs = []
        for e, c in zip(expected, computed):
            ok, d = _compare(e, c, tol)
            if not ok:
                return False, d
            diffs.append(d or 0.0)
        return True, max(diffs) if diffs else 0.0
    if isinstance(expected, (int, float)) and not isinstance(expected, bool):
        try:
            d = abs(float(computed) - float(expected))
        except (TypeError, ValueError):
            return False, None
        return bool(math.isfinite(d) and d <= tol), d
    return expected == computed, None


def _available(mod: str) -> bool:
    try:
        importlib.import_module(mod)
    except ImportError:
        return False
    return True


def _traced(fn) -> tuple[Any, tuple]:
    """``(fn(), calls)``: the lotwise functions (outside this validation
    package) that the validation code called directly while ``fn`` ran, as
    ``module.qualname``, in first-call order. Exceptions propagate."""
    from pathlib import Path

    pkg = str(Path(__file__).resolve().parent.parent)
    here = str(Path(__file__).resolve().parent)
    calls: dict = {}

    def hook(frame, event, arg):
        if event != "call":
            return
        name = frame.f_code.co_filename
        if not name.startswith(pkg) or name.startswith(here):
            return
        back = frame.f_back
        if back is not None and back.f_code.co_filename.startswith(here):
            qual = getattr(frame.f_code, "co_qualname", frame.f_code.co_name)
            calls.setdefault(f"{frame.f_globals.get('__name__', '?')}.{qual}", None)

    old = sys.getprofile()
    sys.setprofile(hook)
    try:
        value = fn()
    finally:
        sys.setprofile(old)
    return value, tuple(calls)


def _run_one(case: ReferenceCase) -> CaseResult:
    missing = [m for m in case.needs if not _available(m)]
    if missing:
        return CaseResult(case=case, expected=None, computed=None, difference=None,
                          verdict="skipped",
                          note=f"needs {', '.join(missing)} (pip install {' '.join(missing)})")
    try:
        if callable(case.expected):
            expected, ref_calls = _traced(case.expected)
        else:
            expected, ref_calls = case.expected, ()
    except Exception as exc:  # a reference that cannot be had is not a pass
        return CaseResult(case=case, expected=None, computed=None, difference=None,
                          verdict="ERROR", note=f"reference failed: {type(exc).__name__}: {exc}")
    try:
        computed, calls = _traced(case.compute)
    except Exception as exc:
        return CaseResult(case=case, expected=expected, computed=None, difference=None,
                          verdict="ERROR", note=f"{type(exc).__name__}: {exc}",
                          reference_calls=ref_calls)
    ok, diff = _compare(expected, computed, case.tolerance, case.within)
    return CaseResult(case=case, expected=expected, computed=computed, difference=diff,
                      verdict="pass" if ok else "FAIL", exercised=calls,
                      reference_calls=ref_calls)


def run_cases(cases=None, *, installation: bool = True) -> Validation:
    """Run ``cases`` (default :func:`all_cases`) and collect the verdicts;
    with ``installation`` also check the installed files
    (:func:`lotwise.validation.installation.check_installation`)."""
    started = datetime.now(timezone.utc)
    cases = all_cases() if cases is None else list(cases)
    results = [_run_one(case) for case in cases]
    inst = None
    if installation:
        from lotwise.validation.installation import check_installation

        inst = check_installation()
    return Validation(results=results, started=started, versions=versions(),
                      installation=inst)


def dependencies() -> list[str]:
    """The distributions lotwise requires (its metadata), plus mpmath and
    pypdf, which the reference cases and their tests use."""
    import re
    from importlib import metadata

    names = []
    try:
        reqs = metadata.requires("lotwise") or []
    except metadata.PackageNotFoundError:
        reqs = []
    for req in reqs:
        if "extra ==" in req:
            continue
        m = re.match(r"[A-Za-z0-9_.\-]+", req)
        if m and m.group(0).lower() not in names:
            names.append(m.group(0).lower())
    for extra in ("numpy", "scipy", "pandas", "matplotlib", "typer", "mpmath"):
        if extra not in names:
            names.append(extra)
    return names


def versions() -> dict:
    """Versions of the tool, Python, the platform and every dependency
    (``importlib.metadata``)."""
    from lotwise.core.version import __version__

    out = {"lotwise": __version__, "python": platform.python_version(),
           "platform": platform.platform()}
    for dist in dependencies():
        out[dist] = _version(dist)
    return out


def _version(dist: str) -> str:
    from importlib import metadata

    try:
        return metadata.version(dist)
    except metadata.PackageNotFoundError:
        return "not installed"


# --- the report: rendered by the documents layer ------------------------------

def markdown_report(val: Validation) -> str:
    """The report as Markdown; see :func:`lotwise.documents.validation_report.markdown_report`."""
    from lotwise.documents.validation_report import markdown_report as render

    return render(val)


def pdf_report(val: Validation) -> bytes:
    """The report as a text-extractable PDF (fonts embedded as TrueType); see
    :func:`lotwise.documents.validation_report.pdf_report`."""
    from lotwise.documents.validation_report import pdf_report as render

    return render(val)
