"""The reference cases of the plan families beyond single sampling: each one
passes, each provider is registered, and an altered reference value fails."""

from __future__ import annotations

import dataclasses
import time

import pytest

import lotwise.validation.runner as validation
import lotwise.validation.cases as plans
from lotwise.validation.runner import all_cases, markdown_report, run_cases

SPECS = [f"lotwise.validation.cases:{name}" for name in plans.__all__]


@pytest.fixture(scope="module")
def timed():
    start = time.perf_counter()
    val = run_cases(all_cases(SPECS), installation=False)
    return val, time.perf_counter() - start


def test_every_new_case_passes(timed):
    val, _ = timed
    bad = [(r.case.id, r.expected, r.computed, r.note) for r in val.results
           if r.verdict != "pass"]
    assert bad == [] and val.verdict == "PASSED"


def test_new_cases_are_fast(timed):
    # The whole `lotwise validate` must stay well under 30 s; these cases take
    # a few seconds (a generous bound for a shared machine).
    assert timed[1] < 20


def test_every_provider_is_registered_and_yields_cases():
    for spec in SPECS:
        assert spec in validation.PROVIDERS
    ids = {c.id for c in all_cases()}  # all registered providers: no duplicate id
    for name in plans.__all__:
        cases = getattr(plans, name)()
        assert cases, name
        assert len({c.area for c in cases}) == 1  # one area per provider
        for c in cases:
            assert c.id in ids and c.source and c.description and c.tolerance >= 0


def test_registry_covers_the_plan_family_references():
    ids = {c.id for c in all_cases(SPECS)}
    for needed in ("aoql-factor-c0", "aoql-factor-c5", "aoql-simple-n20-c1-N4000",
                   "demonstration-c95-r90-k0", "demonstration-c95-r90-k1",
                   "demonstration-c80-r80-k0", "demonstration-c70-r70-k0",
                   "demonstration-c95-r95-k0", "demonstration-finite-lot-N20",
                   "demonstration-finite-lot-N100", "zero-finite-lot-N20", "rule-of-three-n20",
                   "clopper-pearson-1-of-10-c95", "montgomery-double-pa",
                   "montgomery-double-asn", "montgomery-double-pa-first",
                   "montgomery-double-pa-second", "montgomery-sprt-h1", "montgomery-sprt-h2",
                   "montgomery-sprt-s", "nist-double-r1-c2-c4-pa95", "nist-double-r1-c2-c4-pa10",
                   "nist-double-r2-c1-c4-pa95", "known-sigma-closed-form-n-exact-z",
                   "known-sigma-closed-form-k-exact-z", "montgomery-variables-known-n",
                   "montgomery-variables-unknown-n", "noncentral-t-n42-k1_901-p6pct-mpmath",
                   "least-ati-N80-hypergeometric", "chain-design-aql1-rql15"):
        assert needed in ids, needed


def test_sources_name_published_works_or_independent_computations():
    # Sources: a published work (with "from memory" where so) or an independent
    # computation naming its method; no cross-check against the scipy routine the
    # tool itself calls (scipy.stats shares binom/nct/beta cores with scipy.special).
    by_id = {c.id: c for c in all_cases(SPECS)}
    assert by_id["aoql-factor-c3"].source.endswith("(from memory)")
    assert "independent computation" in by_id["demonstration-c95-r95-k0"].source
    assert "mpmath bisection" in by_id["clopper-pearson-3-of-1000-c80"].source
    assert "nctdtr" in by_id["noncentral-t-n10-k1_5-p5pct-quadrature"].source
    assert "NIST/SEMATECH" in by_id["nist-double-r1-c2-c4-pa10"].source
    for c in all_cases():
        assert "scipy.stats" not in c.source, c.id
        assert "computed at run time" not in c.source, c.id
    # published approximations: recorded beside the exact value, no widened tolerance
    nist, var_n = by_id["nist-double-r1-c2-c4-pa10"], by_id["montgomery-variables-unknown-n"]
    assert nist.published == 5.39 and "5.3847" in nist.published_note
    assert nist.tolerance < 1e-7 and callable(nist.expected)
    assert var_n.published == 40 and "nomograph" in var_n.published_note
    assert var_n.tolerance == 0


def test_report_lists_the_new_cases_with_sources(timed):
    md = markdown_report(timed[0])
    rows = {line.split(" | ")[0][2:]: line for line in md.splitlines() if line.startswith("| ")}
    for r in timed[0].results:
        row = rows[r.case.id]
        assert row.startswith(f"| {r.case.id} | {r.requirement} | "
                              f"{r.case.description.replace('|', '/')}")
        assert f" | {r.case.source.replace('|', '/')} | " in row
    for area in ("Rectifying inspection", "Double and multiple plans", "Variables plans",
                 "Sequential plans", "Chain and skip-lot plans"):
        assert f"## {area}" in md


# One literal, one tuple and one run-time reference, each moved just outside
# its tolerance.
@pytest.mark.parametrize("case_id, change", [
    ("montgomery-double-asn", lambda c: 98.20),
    ("nist-double-r1-c2-c4-pa10", lambda c: (lambda f=c.expected: f() + 1e-6)),
    ("chain-design-aql1-rql15", lambda c: (15, 3)),
    ("aoql-factor-c2-mpmath", lambda c: (lambda f=c.expected: f() + 1e-9)),
    ("montgomery-variables-unknown-n", lambda c: 41),
])
def test_an_altered_reference_value_fails_loudly(case_id, change):
    cases = [dataclasses.replace(c, expected=change(c)) if c.id == case_id else c
             for c in all_cases(SPECS)]
    val = run_cases(cases, installation=False)
    failed = [r for r in val.results if r.verdict != "pass"]
    assert [(r.case.id, r.verdict) for r in failed] == [(case_id, "FAIL")]
    assert val.verdict == "FAILED"
    md = markdown_report(val)
    assert "Verdict: **FAILED**" in md and f"| {case_id} |" in md
