"""Reference cases of the workflow: plan file to sheet, judging, two-limit
variables plans, lot records and pick lists.

Providers for :mod:`lotwise.validation.runner` (listed in its ``PROVIDERS``).
The plan file and the measured sample are carried here as text (copies of
``plans/qp-1104-relief-spring.toml`` and ``examples/shafts.csv``), so the cases
run the same from a wheel, where the repository's folders are not installed.
Every reference is an independent computation: hypergeometric masses in
exact integers, Clopper-Pearson bounds and incomplete beta functions in
mpmath, sample statistics in exact rational arithmetic (``statistics`` on
``Fraction``), OC curves against seeded simulation.
"""

from __future__ import annotations

import math
import re
from fractions import Fraction
from functools import lru_cache

from lotwise.validation.runner import ReferenceCase

__all__ = ["sheet_cases", "judge_cases", "two_limit_cases", "records_ci_cases",
           "draw_cases", "PLAN_FILE", "SHAFTS"]

#: A copy of plans/qp-1104-relief-spring.toml (three characteristics, one sample).
PLAN_FILE = '''
[part]
id = "QP-1104"
description = "Relief-valve spring"
[lot]
size = 5000
counts = "items"
[[characteristic]]
id = "C1"
description = "Set force at working length"
class = "critical"
aql = "0.01%"
rql = "1.5%"
alpha = "5%"
beta = "5%"
c = 0
[[characteristic]]
id = "M1"
description = "Free length and wire diameter"
class = "major"
aql = "0.65%"
rql = "4%"
[[characteristic]]
id = "m1"
description = "Surface finish and coating"
class = "minor"
aql = "2.5%"
rql = "10%"
'''

#: Bearing-seat diameters of 42 drive shafts, mm (a copy of examples/shafts.csv).
SHAFTS = tuple(float(x) for x in """
24.9573 24.9487 24.9500 24.9257 24.9766 24.9687 24.9511 24.9643 24.9584 24.9484 24.9667
24.9513 24.9511 24.9455 24.9605 24.9538 24.9615 24.9477 24.9565 24.9443 24.9651 24.9573
24.9590 24.9599 24.9429 24.9644 24.9797 24.9353 24.9342 24.9369 24.9651 24.9565 24.9679
24.9637 24.9575 24.9584 24.9530 24.9654 24.9414 24.9499 24.9579 24.9766""".split())

_EXACT = ("independent computation: hypergeometric masses in exact integer arithmetic at the "
          "lot counts the sheet states (AQL rounded up, RQL down)")


# --- plan file -> sheet ---------------------------------------------------------

@lru_cache(maxsize=1)
def _sheet_markdown() -> str:
    from lotwise.documents import planfile
    from lotwise.documents.partplan import resolve
    from lotwise.documents.sheets import markdown
    from lotwise.documents.sheets.content import build_content

    pp = resolve(planfile.loads(PLAN_FILE, "qp-1104-relief-spring.toml"))
    return markdown.render(build_content(pp))


def _sheet_row(char: str) -> list[str]:
    """The hypergeometric row of ``char`` in the sheet's risk table."""
    for line in _sheet_markdown().splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) >= 9 and cells[0] == char and cells[1].startswith("hypergeometric"):
            return cells
    raise ValueError(f"no hypergeometric row for {char} in the sheet")


def _printed(text: str) -> tuple[float, float]:
    """A printed number (``0.9610`` or ``3.90 %``) as a fraction, with half a
    unit in its last printed digit."""
    m = re.fullmatch(r"([0-9.]+)\s*(%?)", text)
    if not m:
        raise ValueError(f"not a printed number: {text!r}")
    digits = len(m.group(1).split(".")[1]) if "." in m.group(1) else 0
    scale = 100.0 if m.group(2) else 1.0
    return float(m.group(1)) / scale, 0.5 * 10.0 ** -digits / scale


def sheet_cases() -> list:
    """Pa(AQL), alpha, Pa(RQL) and beta of each characteristic on the sheet."""
    from lotwise.validation.independent import hyper_cdf

    N, n = 5000, 195  # the sheet's common sample (checked by the first case)
    chars = {"C1": (0, 0.0001, 0.015), "M1": (3, 0.0065, 0.04), "m1": (9, 0.025, 0.10)}
    cases = [ReferenceCase(
        id="sheet-qp1104-common-sample", area="plan files and sheets",
        description="plan file QP-1104 (three characteristics, lot 5,000): the sheet's "
                    "common sample and acceptance numbers",
        source="independent computation: enumeration with exact integer hypergeometric "
               "masses of the smallest n at which every characteristic has a c meeting both "
               "risks",
        expected=lambda: _common_sample(chars, N), tolerance=0,
        compute=lambda: _sheet_plan(chars), exercises="lotwise sheet (Markdown sheet)")]
    cols = {"pa-aql": 2, "alpha": 3, "pa-rql": 5, "beta": 6}
    for char, (c, aql, rql) in chars.items():
        d_aql, d_rql = math.ceil(aql * N - 1e-9), math.floor(rql * N + 1e-9)
        pa_aql, pa_rql = hyper_cdf(n, c, N, d_aql), hyper_cdf(n, c, N, d_rql)
        exact = {"pa-aql": pa_aql, "alpha": 1.0 - pa_aql, "pa-rql": pa_rql, "beta": pa_rql}
        for what, col in cols.items():
            tol, why = _print_tolerance(what, exact[what])
            cases.append(ReferenceCase(
                id=f"sheet-qp1104-{char}-{what}", area="plan files and sheets",
                description=f"plan file QP-1104, {char} (n = {n}, c = {c}): {what} as the "
                            f"sheet prints it (lot counts {d_aql} and {d_rql} of {N})",
                source=_EXACT, expected=exact[what], tolerance=tol, tolerance_reason=why,
                compute=lambda char=char, col=col: _printed(_sheet_row(char)[col])[0],
                exercises="lotwise sheet (Markdown sheet, risk table)"))
    return cases


def _print_tolerance(what: str, exact: float) -> tuple[float, str]:
    """The sheet's documented format: Pa to four decimals, risks in percent to
    three significant figures; half a unit in the last printed digit."""
    if what.startswith("pa"):
        return 5e-5, "half a unit in the fourth decimal (the sheet prints Pa to 4 decimals)"
    digit = 10.0 ** (math.floor(math.log10(exact)) - 2)
    return 0.5 * digit * (1 + 1e-9), ("half a unit in the third significant figure (the "
                                      "sheet prints risks in percent to 3 figures)")


def _sheet_plan(chars) -> tuple:
    import re as _re

    text = _sheet_markdown()
    n = int(_re.search(r"Inspect n = ([0-9,]+) units", text).group(1).replace(",", ""))
    return (n,) + tuple(int(_sheet_row_plan(char)[3]) for char in chars)


def _sheet_row_plan(char: str) -> list[str]:
    for line in _sheet_markdown().splitlines():
        cells = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells) == 7 and cells[0] == char and cells[2].startswith("n ="):
            return cells
    raise ValueError(f"no plan row for {char} in the sheet")


def _common_sample(chars, N) -> tuple:
    """Smallest ``n`` at which every characteristic has a ``c`` (its fixed one,
    else the smallest meeting alpha) that also meets beta, and those ``c``."""
    from lotwise.validation.independent import hyper_cdf

    risks = {"C1": (0.05, 0.05), "M1": (0.05, 0.10), "m1": (0.05, 0.10)}
    for n in range(1, N + 1):
        cs = []
        for char, (fixed, aql, rql) in chars.items():
            alpha, beta = risks[char]
            d1, d2 = math.ceil(aql * N - 1e-9), math.floor(rql * N + 1e-9)
            options = [0] if char == "C1" else range(0, n + 1)
            c = next((c for c in options if hyper_cdf(n, c, N, d1) >= 1 - alpha), None)
            if c is None or hyper_cdf(n, c, N, d2) > beta:
                break
            cs.append(c)
        else:
            return (n, *cs)
    return "infeasible"


# --- judging a measured sample ----------------------------------------------------

def _judge(notation: str) -> dict:
    from lotwise.analysis.judge import judge_sample
    from lotwise.families.base import parse_plan

    return judge_sample(parse_plan(notation), list(SHAFTS))


def _exact_stats() -> tuple[Fraction, Fraction]:
    """Mean and sample standard deviation squared of the shafts, exact (Fractions
    of the decimal values as written)."""
    import statistics

    xs = [Fraction(str(x)) for x in SHAFTS]
    return statistics.mean(xs), statistics.variance(xs)


def _mp_estimate(q, n) -> float:
    """Lieberman-Resnikoff estimate beyond one limit, sigma unknown:
    ``I_x(n/2 - 1, n/2 - 1)``, ``x = max(0, 1/2 - q sqrt(n)/(2(n - 1)))`` (mpmath betainc)."""
    import mpmath as mp

    with mp.workdps(30):
        x = max(mp.mpf(0), mp.mpf(1) / 2 - mp.mpf(q) * mp.sqrt(n) / (2 * (n - 1)))
        b = mp.mpf(n) / 2 - 1
        return float(mp.betainc(b, b, 0, x, regularized=True))


def judge_cases() -> list:
    """The drive-shaft sample judged with a one-limit and a two-limit plan."""
    import mpmath as mp

    area = "judging a measured sample"
    upper = "variables: n=42,k=1.901,upper=25.0"
    both = "variables: n=42,m=0.02,upper=25.0,lower=24.94"

    def stats_ref():
        mean, var = _exact_stats()
        with mp.workdps(40):
            return (float(mean), float(mp.sqrt(mp.mpf(var.numerator) / var.denominator)))

    def q(limit):
        mean, var = _exact_stats()
        with mp.workdps(40):
            s = mp.sqrt(mp.mpf(var.numerator) / var.denominator)
            m = mp.mpf(mean.numerator) / mean.denominator
            return (mp.mpf("25.0") - m) / s if limit == "upper" else (m - mp.mpf("24.94")) / s

    def two_limit_ref():
        total = _mp_estimate(q("upper"), 42) + _mp_estimate(q("lower"), 42)
        return ("accept" if total <= 0.02 else "reject", total)

    src = ("the drive-shaft sample of 42 bearing-seat diameters (examples/shafts.csv); "
           "independent computation: mean and variance in exact rational arithmetic, "
           "square root and Q in mpmath at 40 digits")
    return [
        ReferenceCase(
            id="judge-shafts-mean-s", area=area,
            description="sample mean and standard deviation of the 42 diameters",
            source=src, expected=stats_ref, tolerance=1e-12,
            tolerance_reason="double-precision summation of 42 values near 25 (about 1e-14)",
            compute=lambda: (_judge(upper)["xbar"], _judge(upper)["s"]),
            exercises="lotwise judge (lotwise.analysis.judge.judge_sample)"),
        ReferenceCase(
            id="judge-shafts-upper-accept", area=area,
            description=f"{upper}: Q_U = (25.0 - xbar)/s against k = 1.901: verdict and Q_U",
            source=src, expected=lambda: ("accept" if q("upper") >= 1.901 else "reject",
                                          float(q("upper"))),
            tolerance=1e-10, tolerance_reason="Q_U near 3.8 from double-precision statistics",
            compute=lambda: (_judge(upper)["verdict"],
                             _judge(upper)["statistic"]["q"]["upper"]),
            exercises="lotwise judge (lotwise.analysis.judge.judge_sample)"),
        ReferenceCase(
            id="judge-shafts-two-limit-reject", area=area,
            description=f"{both}: the estimated fraction beyond both limits against M = 0.02: "
                        f"verdict and the estimate",
            source=src + "; estimates I_x(n/2 - 1, n/2 - 1) (G. J. Lieberman and G. J. "
                         "Resnikoff, JASA 50, 1955) with mpmath betainc",
            expected=two_limit_ref, tolerance=1e-10,
            tolerance_reason="an estimate of a few per cent from double-precision statistics",
            compute=lambda: (_judge(both)["verdict"], _judge(both)["p_hat"]["total"]),
            exercises="lotwise judge (lotwise.analysis.judge.judge_sample)", needs=("mpmath",)),
    ]


# --- two-limit variables plans: exact OC against simulation ----------------------

_DRAWS = 1_000_000


def _simulated_pa(n, zu, zl, seed, k=None, m=None) -> float:
    """Fraction of ``_DRAWS`` simulated normal samples of ``n`` (mean 0, sigma 1;
    limits ``zu`` above and ``zl`` below) that the rule accepts. The M-method's
    estimates use scipy.special.betainc on the simulated Q values."""
    import numpy as np
    from scipy import special

    rng = np.random.default_rng(seed)
    # The mean and standard deviation of a normal sample are independent, the mean
    # N(0, 1/n) and (n - 1) s^2 chi-square with n - 1 degrees of freedom: drawn directly.
    xbar = rng.standard_normal(_DRAWS) / math.sqrt(n)
    s = np.sqrt(rng.chisquare(n - 1, _DRAWS) / (n - 1))
    qu, ql = (zu - xbar) / s, (xbar + zl) / s
    if k is not None:
        ok = (qu >= k) & (ql >= k)
    else:
        b = n / 2 - 1
        est = sum(special.betainc(b, b, np.clip(0.5 - qq * math.sqrt(n) / (2 * (n - 1)),
                                                0.0, 1.0)) for qq in (qu, ql))
        ok = est <= m
    accepted = int(ok.sum())
    return accepted / _DRAWS


def two_limit_cases() -> list:
    """Exact two-limit OC (k- and M-method) within 4 standard errors of 10^6 draws."""
    from lotwise.validation.independent import z_upper

    area = "two-limit variables plans"
    out = []
    for cid, n, kw, pu, pl, seed in (
            ("k-method-n10-k1_5", 10, {"k": 1.5}, 0.03, 0.02, 20240601),
            ("m-method-n20-m0_05", 20, {"m": 0.05}, 0.02, 0.02, 20240602)):
        zu, zl = z_upper(pu), z_upper(pl)

        def exact(n=n, zu=zu, zl=zl, kw=kw):
            from lotwise.core.twolimit import pa_limits

            return float(pa_limits(n, zu, zl, **kw))

        pa = exact()  # the tolerance is 4 standard errors at the exact value
        se = math.sqrt(pa * (1 - pa) / _DRAWS)
        rule = ", ".join(f"{k} = {v:g}" for k, v in kw.items())
        out.append(ReferenceCase(
            id=f"two-limit-{cid}-simulation", area=area,
            description=f"two-limit plan n = {n}, {rule}, sigma unknown, {pu:.0%} beyond the "
                        f"upper and {pl:.0%} beyond the lower limit: exact Pa (quadrature)",
            source=f"independent computation: simulation of 10^6 normal samples of {n} "
                   f"(numpy default_rng, seed {seed}; the sample mean and s drawn from their "
                   f"exact laws), the acceptance rule applied to each",
            expected=lambda n=n, zu=zu, zl=zl, seed=seed, kw=kw: _simulated_pa(
                n, zu, zl, seed, **kw),
            tolerance=4 * se,
            tolerance_reason=f"4 standard errors of a simulated proportion "
                             f"(sqrt(Pa(1 - Pa)/10^6) = {se:.1e}); a correct OC fails about "
                             f"once in 16,000 runs, and the seed is fixed",
            compute=exact, needs=("scipy",)))
    return out


# --- lot records: Clopper-Pearson bounds -------------------------------------------

def records_ci_cases() -> list:
    """Clopper-Pearson intervals of lot records against mpmath."""
    from lotwise.validation.independent import cp_interval

    out = []
    for x, m, conf in ((12, 1500, 0.90), (0, 250, 0.95), (37, 400, 0.99)):
        def tool(x=x, m=m, conf=conf):
            from lotwise.data.records import clopper_pearson

            lo, hi = clopper_pearson(x, m, conf)
            return (float(lo), float(hi))

        out.append(ReferenceCase(
            id=f"records-clopper-pearson-{x}-of-{m}-c{conf * 100:g}", area="lot records and "
            "supplier view", requirement="R-REC",
            description=f"{conf:.0%} Clopper-Pearson interval of the process average from "
                        f"{x} nonconforming in {m} inspected",
            source="independent computation: mpmath bisection at 40 digits on the binomial "
                   "tail equations (C. J. Clopper and E. S. Pearson, Biometrika 26(4), 1934)",
            expected=lambda x=x, m=m, conf=conf: cp_interval(x, m, conf), tolerance=1e-12,
            tolerance_reason="double-precision rounding of bounds below 0.12",
            compute=tool, exercises="lotwise records (lotwise.data.records.clopper_pearson)",
            needs=("mpmath",)))
    return out


# --- pick lists ---------------------------------------------------------------------

def draw_cases() -> list:
    """Same seed, same units; the units follow the documented algorithm."""
    area = "pick lists"

    def units(**kw):
        from lotwise.data.draw import draw_units

        return tuple(int(u) for u in draw_units(**kw).units)

    def documented(N, n, seed):
        import numpy as np

        return tuple(int(u) for u in sorted(np.random.default_rng(seed).choice(
            N, n, replace=False) + 1))

    strata = "cartons=400,350,250"
    return [
        ReferenceCase(
            id="draw-same-seed-same-units", area=area,
            description="lotwise draw --lot-size 500 --n 13 --seed 2718, twice: the same units",
            source="the documented promise of reproducibility (README, lotwise draw): the first "
                   "draw is the reference for the second",
            expected=lambda: units(lot_size=500, n=13, seed=2718), tolerance=0,
            compute=lambda: units(lot_size=500, n=13, seed=2718),
            exercises="lotwise draw (lotwise.data.draw.draw_units)"),
        ReferenceCase(
            id="draw-documented-algorithm", area=area,
            description="the same pick list re-created by anyone from the algorithm the tool "
                        "prints: sorted(numpy.random.default_rng(seed).choice(N, n, "
                        "replace=False)) + 1",
            source="independent computation: the printed algorithm run directly with numpy",
            expected=lambda: documented(500, 13, 2718), tolerance=0,
            compute=lambda: units(lot_size=500, n=13, seed=2718),
            exercises="lotwise draw (lotwise.data.draw.draw_units)"),
        ReferenceCase(
            id="draw-stratified-same-seed", area=area,
            description=f"lotwise draw --lot-size 1000 --n 32 --strata {strata} --seed 4711, "
                        f"twice: the same units",
            source="the documented promise of reproducibility: the first draw is the "
                   "reference for the second",
            expected=lambda: units(lot_size=1000, n=32, seed=4711, strata=strata), tolerance=0,
            compute=lambda: units(lot_size=1000, n=32, seed=4711, strata=strata),
            exercises="lotwise draw (lotwise.data.draw.draw_units)"),
        ReferenceCase(
            id="draw-distinct-units-in-lot", area=area,
            description="a pick list of 195 from 5,000: 195 distinct units, all from 1 to 5,000",
            source="definition of a simple random sample without replacement (independent "
                   "check of the list)",
            expected=(195, True), tolerance=0,
            compute=lambda: (lambda u: (len(set(u)), min(u) >= 1 and max(u) <= 5000))(
                units(lot_size=5000, n=195, seed=110401)),
            exercises="lotwise draw (lotwise.data.draw.draw_units)"),
    ]
