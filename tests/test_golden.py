"""Golden snapshots of every command's ``--json`` output, compared with today's.

Source of the expected values: golden snapshots of lotwise 0.1 output, taken
before the plan-spine refactor (independent of later code). They are a safety
net for moving code, not a check of correctness: what the numbers should be is
checked against published tables, mpmath, scipy and enumeration elsewhere in
the suite.

Each case of ``tests/golden/cases.toml`` is run in-process through
``lotwise.cli.main`` and compared with ``tests/golden/snapshots/<name>.json``:

* the exit code must be the same;
* every key of the snapshot must be in the new output (new keys are allowed),
  with a value of the same kind (number, string, bool, null, list, object);
* numbers agree within a relative 1e-9 or an absolute 1e-12 (tolerance for
  floating-point reordering only); strings, bools and nulls are equal; lists
  have the same length and agree item by item;
* keys named in ``IGNORED_KEYS`` (dates, versions, fingerprints, dated file
  names) are skipped wherever they occur;
* nothing may end in an internal error ("could not complete the request").

A deliberate difference is named in ``CHANGED`` under ``"case:path"`` with the
reason; the entry covers that path and everything below it.

Only :func:`lotwise.cli.main` is imported from lotwise, so the test survives a
reorganisation of the package. ``tests/golden/make_golden.py`` (re)writes the
snapshots with the same runner.
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import os
import tempfile
import tomllib
from pathlib import Path

import pytest

from lotwise.cli import main

GOLDEN = Path(__file__).resolve().parent / "golden"
ROOT = GOLDEN.parents[1]  # the repository: cases name examples/ and plans/ relative to it
SNAPSHOTS = GOLDEN / "snapshots"
TMP = "{tmp}"

STRATUM_WORDS = ("stratum labels carry their index in words: 'carton 1 of 3' (was 'cartons "
                 "1'); the units drawn are unchanged")

#: Keys whose values depend on the day, the machine or the installed versions.
IGNORED_KEYS = frozenset({
    "date", "version", "versions", "fingerprint", "generated", "elapsed",
    "numpy",   # draw: the numpy version the pick list was drawn with
    "report",  # validate: report paths carry the date
})

VALIDATE_INSTALL = ("validate checks the installed files against the commit or build manifest: "
                    "FAILED (exit 1) while a working tree has uncommitted changes")

PER_UNIT_C = ("nonconformities per unit: c may exceed n, so AQL 0.5 / RQL 2 per unit needs "
              "n = 5, c = 5 (was n = 9, c = 8: the old search assumed n = c accepts every lot); "
              "checked by brute force with scipy.stats.poisson in test_design_single.py")

ATI_PER_UNIT = "least-ATI search per unit may now use c > n: n = 9, c = 12 (was n = 19, c = 18)"
DOUBLE_PER_UNIT = ("per unit the shared smallest-n search no longer assumes n >= c: same plan, "
                   "a different c2 stopping point and count of plans searched")
SEQ_TRUNCATE = ("the sequential plan's default truncation is 3 x the single n, now 5 "
                "(see design_single_defects)")
DOUBLE_R1 = ("the double designer now searches every r1 from c1 + 1 to c2 + 1, not only "
             "c2 + 1: smaller ASN (AQL 1 %, RQL 5 %: n1=80, c1=1, r1=3, n2=160, c2=6 at 103.09 "
             "against 108.56); minimality by brute force in test_design_double.py")
DOUBLE_SWEEP = ("the double designer searches n1 by n1 (every c1 < r1 <= c2 + 1 for each, from "
                "the single plan's n down): the search record and the reason for no plan name "
                "the n1 searched instead of the last c2; same plans (tests/"
                "test_double_speed_equivalence.py)")
MAX_AT = ("the largest ASN of a multiple or sequential plan is located at the vertex of "
          "interpolating polynomials through a refined grid (was: the best point of six "
          "successive grids). At its flat top the ASN's rounding error (about 1e-14) leaves the "
          "grid's best point uncertain by some 1e-8 relative; the vertex is not: the plan "
          "'multiple: n=20/20; c=0/1; r=2/2' now gives 0.05 to 1e-13, where the ASN 20 + 20 x "
          "20 p (1 - p)^19 peaks at p = 1/20 exactly (was 0.0499999994). The values agree "
          "within 1e-13")
AOQL_AT = ("the quality levels that bound the AOQ search are found by interpolation to 1e-13 "
           "(see invert_levels); the AOQL is unchanged, and where its flat peak lies moves by "
           "about 2e-8 relative, within the ASN's rounding error (see MAX_AT)")
SEQ_NOTATION = ("a sequential plan written with its risk points keeps them in its notation (p1, "
                "alpha, p2, beta; per_unit when said), so the lines follow the scope")
SEQ_PROMISE = ("sequential design keeps its promise: the exact truncated plan must meet both "
               "risks, so Wald's lines are adjusted (AQL 1 %, RQL 5 %) or the design is refused "
               "(truncate 10 cannot reach the targets: exit 1 with the nearest plan)")
VARIABLES_EXACT = ("two-limit variables plans with sigma unknown: the OC is exact (quadrature over "
                   "the law of s, band edges by a bounded search), no longer a seeded simulation; "
                   "model estimate-exact; the old designed plan n = 43, M = 0.02657 carries beta "
                   "10.07 % exactly, so the design is now n = 43, M = 0.02648 and the check of n = "
                   "43, k = 1.902 falls short")
INDIFFERENCE_COUNT = ("in a finite lot the indifference quality is the whole count D whose Pa "
                      "is nearest 0.5 (was the smallest D with Pa <= 0.5); plan_quality_counts "
                      "and plan_quality_pa give D and its true Pa; checked against "
                      "scipy.stats.hypergeom in tests/test_quality_counts.py")
#: Deliberate, named differences: "case_name:json.path" -> reason.
EXIT_TABLE = ("one exit-code table for every command (README, \"Exit codes\"): next exits 1 on "
              "REJECT and 3 on CONTINUE, zero exits 1 when the producer's risk at --aql is "
              "not met, batch exits 1 when a row is not designed (examples/catalogue.csv line "
              "10 holds an RQL below its AQL on purpose)")

CHANGED: dict[str, str] = {
    "zero_design:exit": EXIT_TABLE,
    "zero_design_lot:exit": EXIT_TABLE,
    "zero_design_defects:exit": EXIT_TABLE,
    "next_double_continue:exit": EXIT_TABLE,
    "next_double_reject_early:exit": EXIT_TABLE,
    "next_double_defects:exit": EXIT_TABLE,
    "next_multiple_continue:exit": EXIT_TABLE,
    "next_multiple_reject_mid_stage:exit": EXIT_TABLE,
    "next_sequential_continue:exit": EXIT_TABLE,
    "next_sequential_truncated:exit": EXIT_TABLE,
    "next_single_reject_early:exit": EXIT_TABLE,
    "next_single_defects_continue:exit": EXIT_TABLE,
    "batch_catalogue:exit": EXIT_TABLE,
    "design_sequential_defects:json.asn.max_at": "the unit walk now stops a level once its "
        "undecided probability is below 1e-15 (ASN low by at most truncation x 1e-15); the "
        "flat maximum of the ASN moves by about 1e-9 relative",
    "*:json.asn.max_at": MAX_AT,
    "check_chain_lot:json.rectifying.models.binomial.aoql_p": AOQL_AT,
    "check_chain_lot_aoq_simple:json.rectifying.models.binomial.aoql_p": AOQL_AT,
    "check_chain_lot:json.rectifying.models.poisson.aoql_p": AOQL_AT,
    "check_chain_lot_aoq_simple:json.rectifying.models.poisson.aoql_p": AOQL_AT,
    # Every plan now has notation() (the plan interface); a single plan's was null.
    # A key "*:PATH" excuses PATH in every case.
    "*:json.statements": "one plain-words builder for every family: the same sentences in "
                         "the same order, ending with the safety note",
    "*:json.poisson_verdict.max_abs_error": "the largest Poisson-exact difference is refined "
                                            "around the grid maximum for every family",
    "*:json.poisson_verdict.summary": "one Poisson-verdict wording for every family",
    "*:json.poisson_verdict.max_abs_error_at": "refined with the largest difference",
    "*:json.aoql": "aoql is a number (with aoql_p beside it) for every family; a double, "
                   "multiple or sequential plan's was {value, at}. The double plan's AOQL "
                   "under --aoq-formula simple now differs from the screened one (it was "
                   "passed into the rounding argument)",
    "design_double_defects:json.poisson_design": "for nonconformities per unit the Poisson "
                                                 "model is exact: the plan itself, as for "
                                                 "single plans",
    "check_variables_unknown_both:json": "two-limit plans with sigma unknown: check now uses the "
                                    "plan's own OC, as every other command does",
    "check_variables_unknown_both:exit": "see check_variables_unknown_both:json",
    "zero_equivalent_double:json.sample_sizes.plan": "every plan has a largest sample "
                                                     "(max_sample); a double plan's was null",
    "zero_equivalent_double:json.sample_saving": "follows from the double plan's largest sample",
    "next_single_accept:json.notation": "single plans now print their notation",
    "next_single_reject_early:json.notation": "single plans now print their notation",
    "next_single_defects_continue:json.notation": "single plans now print their notation",
    # lotwise validate gained the reference cases of continuous sampling plans (CSP-1/2/3).
    # It then gained the workflow cases (sheets, judge, two-limit OC, records, pick lists),
    # cross-checks by mpmath/enumeration instead of the scipy routines the tool calls, and the
    # installation check, which fails by design in a working tree with uncommitted changes
    # (tests/test_validation.py checks verdict and exit code on a clean copy).
    "validate_reference_cases:json.cases": "workflow and continuous sampling cases added",
    "validate_reference_cases:json.passed": "workflow and continuous sampling cases added",
    "validate_reference_cases:json.results": "cases added, renamed, sources rewritten",
    "validate_reference_cases:json.verdict": VALIDATE_INSTALL,
    "validate_reference_cases:json.failed": VALIDATE_INSTALL,
    "validate_reference_cases:exit": VALIDATE_INSTALL,
    # --aoq-formula simple was ignored for double and sequential plans (the screened AOQL
    # was printed); it now gives the p Pa AOQL, as it does for single and chain plans.
    "check_double_lot_aoq_simple:json.aoql": "--aoq-formula simple now reaches double plans",
    "check_double_lot_aoq_simple:json.statements":
        "the AOQL sentence states the simple-formula AOQL",
    "check_sequential_lot_aoq_simple:json.aoql":
        "--aoq-formula simple now reaches sequential plans",
    "check_sequential_lot_aoq_simple:json.statements":
        "the AOQL sentence states the simple-formula AOQL",
    # The demo scenario gained plans/qp-8850-seal-cartridge.toml (a designed double plan).
    "check_plans_folder:json.characteristics": "one more plan file in plans/ (QP-8850)",
    # Nonconformities per unit: acceptance numbers above the sample size.
    "design_single_defects:json.c": PER_UNIT_C,
    "design_single_defects:json.n": PER_UNIT_C,
    "design_single_defects:json.r": PER_UNIT_C,
    "design_single_defects:json.models": PER_UNIT_C,
    "design_single_defects:json.plan_quality": PER_UNIT_C,
    "design_single_defects:json.poisson_design": PER_UNIT_C,
    "design_single_defects:json.poisson_verdict": PER_UNIT_C,
    "design_single_defects:json.statements": PER_UNIT_C,
    "design_ati_defects:json.aoql": ATI_PER_UNIT,
    "design_ati_defects:json.aoql_p": ATI_PER_UNIT,
    "design_ati_defects:json.ati_process_average": ATI_PER_UNIT,
    "design_ati_defects:json.c": ATI_PER_UNIT,
    "design_ati_defects:json.n": ATI_PER_UNIT,
    "design_ati_defects:json.r": ATI_PER_UNIT,
    "design_ati_defects:json.models": ATI_PER_UNIT,
    "design_ati_defects:json.pa_process_average": ATI_PER_UNIT,
    "design_ati_defects:json.searched": ATI_PER_UNIT,
    "design_ati_defects:json.statements": ATI_PER_UNIT,
    "design_double_defects:json.search.c2_searched": DOUBLE_PER_UNIT,
    "design_double_defects:json.search.plans_evaluated": DOUBLE_PER_UNIT,
    "design_double_defects:json.search.stopped": DOUBLE_PER_UNIT,
    "design_sequential_defects:json.single_n":
        "the single plan it is compared with is smaller per unit (n = 5, c = 5, see "
        "design_single_defects)",
    "design_compare_all_defects:json.plans[0]": PER_UNIT_C,
    "compare_designed_defects:json.plans[0]": PER_UNIT_C,
    "design_compare_all_defects:json.plans[2]": SEQ_TRUNCATE,
    "compare_designed_defects:json.plans[2]": SEQ_TRUNCATE,
    "design_double_ratio2:json.asn": DOUBLE_R1,
    "design_double_ratio2:json.asn_curtailed": DOUBLE_R1,
    "design_double_ratio2:json.c2": DOUBLE_R1,
    "design_double_ratio2:json.label": DOUBLE_R1,
    "design_double_ratio2:json.models": DOUBLE_R1,
    "design_double_ratio2:json.n1": DOUBLE_R1,
    "design_double_ratio2:json.n2": DOUBLE_R1,
    "design_double_ratio2:json.n_max": DOUBLE_R1,
    "design_double_ratio2:json.notation": DOUBLE_R1,
    "design_double_ratio2:json.objective": DOUBLE_R1,
    "design_double_ratio2:json.plan_quality": DOUBLE_R1,
    "design_double_ratio2:json.poisson_design": DOUBLE_R1,
    "design_double_ratio2:json.poisson_verdict": DOUBLE_R1,
    "design_double_ratio2:json.r1": DOUBLE_R1,
    "design_double_ratio2:json.search": DOUBLE_R1,
    "design_double_ratio2:json.statements": DOUBLE_R1,
    "design_double_ratio1:json.poisson_design": DOUBLE_R1,
    "design_double_ratio1:json.search": DOUBLE_R1,
    "design_double_asn_max:json.asn": DOUBLE_R1,
    "design_double_asn_max:json.asn_curtailed": DOUBLE_R1,
    "design_double_asn_max:json.c1": DOUBLE_R1,
    "design_double_asn_max:json.c2": DOUBLE_R1,
    "design_double_asn_max:json.label": DOUBLE_R1,
    "design_double_asn_max:json.models": DOUBLE_R1,
    "design_double_asn_max:json.n1": DOUBLE_R1,
    "design_double_asn_max:json.n2": DOUBLE_R1,
    "design_double_asn_max:json.n_max": DOUBLE_R1,
    "design_double_asn_max:json.notation": DOUBLE_R1,
    "design_double_asn_max:json.objective": DOUBLE_R1,
    "design_double_asn_max:json.plan_quality": DOUBLE_R1,
    "design_double_asn_max:json.poisson_design": DOUBLE_R1,
    "design_double_asn_max:json.poisson_verdict": DOUBLE_R1,
    "design_double_asn_max:json.r1": DOUBLE_R1,
    "design_double_asn_max:json.search": DOUBLE_R1,
    "design_double_asn_max:json.statements": DOUBLE_R1,
    "design_double_lot:json.search": DOUBLE_R1,
    "design_double_lot_no_plan:json.reason": DOUBLE_SWEEP,
    "design_double_lot_no_plan:json.reachable": DOUBLE_SWEEP,
    "design_double_defects:json.asn": DOUBLE_R1,
    "design_double_defects:json.asn_curtailed": DOUBLE_R1,
    "design_double_defects:json.label": DOUBLE_R1,
    "design_double_defects:json.models": DOUBLE_R1,
    "design_double_defects:json.notation": DOUBLE_R1,
    "design_double_defects:json.objective": DOUBLE_R1,
    "design_double_defects:json.plan_quality": DOUBLE_R1,
    "design_double_defects:json.r1": DOUBLE_R1,
    "design_double_defects:json.search": DOUBLE_R1,
    "design_double_defects:json.statements": DOUBLE_R1,
    "design_compare_all:json.plans[1]": DOUBLE_R1,
    "design_compare_all_defects:json.plans[1]": DOUBLE_R1,
    "compare_designed_with_plan:json.plans[1]": DOUBLE_R1,
    "compare_designed_defects:json.plans[1]": DOUBLE_R1,
    "check_sequential_p:json.notation": SEQ_NOTATION,
    "check_sequential_lot:json.notation": SEQ_NOTATION,
    "check_sequential_lot_aoq_simple:json.notation": SEQ_NOTATION,
    "design_sequential_short_truncate:exit": SEQ_PROMISE,
    "design_sequential_short_truncate:json": SEQ_PROMISE,
    "design_compare_all:json.plans[2]": SEQ_PROMISE,
    "design_variables_unknown_both:json.alpha": VARIABLES_EXACT,
    "design_variables_unknown_both:json.beta": VARIABLES_EXACT,
    "design_variables_unknown_both:json.k": VARIABLES_EXACT,
    "design_variables_unknown_both:json.k_range": VARIABLES_EXACT,
    "design_variables_unknown_both:json.m": VARIABLES_EXACT,
    "design_variables_unknown_both:json.model": VARIABLES_EXACT,
    "design_variables_unknown_both:json.notation": VARIABLES_EXACT,
    "design_variables_unknown_both:json.pa_aql": VARIABLES_EXACT,
    "design_variables_unknown_both:json.pa_rql": VARIABLES_EXACT,
    "design_variables_unknown_both:json.plan": VARIABLES_EXACT,
    "design_variables_unknown_both:json.previous_n": VARIABLES_EXACT,
    "design_variables_unknown_both:json.statements[0]": VARIABLES_EXACT,
    "design_variables_unknown_both:json.statements[2]": VARIABLES_EXACT,
    "design_variables_unknown_both:json.statements[3]": VARIABLES_EXACT,
    "design_variables_unknown_both:json.statements[7]": VARIABLES_EXACT,
    "design_variables_unknown_both:json.statements[8]": VARIABLES_EXACT,
    "design_variables_unknown_both:json.two_limit": VARIABLES_EXACT,
    "check_variables_unknown_both:exit": VARIABLES_EXACT,
    "check_variables_unknown_both:json.alpha": VARIABLES_EXACT,
    "check_variables_unknown_both:json.beta": VARIABLES_EXACT,
    "check_variables_unknown_both:json.meets": VARIABLES_EXACT,
    "check_variables_unknown_both:json.model": VARIABLES_EXACT,
    "check_variables_unknown_both:json.pa_aql": VARIABLES_EXACT,
    "check_variables_unknown_both:json.pa_rql": VARIABLES_EXACT,
    "check_variables_unknown_both:json.simulated": VARIABLES_EXACT,
    "oc_variables_unknown_both:json.model": VARIABLES_EXACT,
    "oc_variables_unknown_both:json.rows[0]": VARIABLES_EXACT,
    "oc_variables_unknown_both:json.rows[1]": VARIABLES_EXACT,
    "oc_variables_unknown_both:json.simulation": VARIABLES_EXACT,
    "judge_unknown_both:json.plan": VARIABLES_EXACT,
    "judge_file_unknown_both:json.plan": VARIABLES_EXACT,
    # Whole counts in finite lots.
    "*:json.rectifying.aoq_expression": "the screened AOQ text names p Pa (N - n)/N as the "
                                        "binomial/Poisson form beside the exact finite-lot "
                                        "expression (it read as if it were the finite-lot AOQ)",
    "design_single_small_lot:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "design_double_lot:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "design_sequential_lot:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "check_single_lot:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "check_single_lot_aoq_simple:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "check_single_whole_lot:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "check_skiplot_lot:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "check_skiplot_lot_aoq_simple:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "check_double_lot:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "check_double_lot_aoq_simple:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "check_multiple_lot:json.plan_quality.indifference": INDIFFERENCE_COUNT,
    "compare_lot:json.plans[1].plan_quality.indifference": INDIFFERENCE_COUNT,
    "compare_plan_files:json.plans[0].plan_quality.indifference": INDIFFERENCE_COUNT,
    "compare_designed_lot:json.plans[0].plan_quality.indifference": INDIFFERENCE_COUNT,
    "compare_plan_files:json.plans[1].plan_quality.indifference": INDIFFERENCE_COUNT,
    "compare_designed_lot:json.plans[1].plan_quality.indifference": INDIFFERENCE_COUNT,
    "compare_designed_lot:json.plans[2].plan_quality.indifference": INDIFFERENCE_COUNT,
    "*:json.skip_lot.statements": "one number formatter (lotwise.core.numbers): a share is "
                                  "rounded to three significant figures before its decimals "
                                  "are chosen, so 0.99996 reads 100 %, not 100.0 %",
    "draw_strata_sizes:json.strata": STRATUM_WORDS,
    "draw_strata_sizes:json.picks": STRATUM_WORDS,
}

#: What ``main`` prints on stderr when a command failed with an internal error.
CRASH_MARK = "could not complete the request"


def load_cases() -> list[dict]:
    """The cases of ``cases.toml``: dicts with ``name`` and ``argv``."""
    with open(GOLDEN / "cases.toml", "rb") as fh:
        return tomllib.load(fh)["case"]


def _replace_strings(value, old: str, new: str):
    if isinstance(value, str):
        return value.replace(old, new)
    if isinstance(value, list):
        return [_replace_strings(v, old, new) for v in value]
    if isinstance(value, dict):
        return {k: _replace_strings(v, old, new) for k, v in value.items()}
    return value


def run_case(argv: list[str]) -> dict:
    """Run one invocation in-process from the repository root.

    ``{tmp}`` in an argument becomes a fresh scratch folder, written back as
    ``{tmp}`` in the output. Returns ``exit``, ``json`` (None when stdout is
    empty), ``stdout`` and ``stderr``; raises ValueError when stdout is not
    one JSON document.
    """
    out, err = io.StringIO(), io.StringIO()
    cwd = os.getcwd()
    with tempfile.TemporaryDirectory(prefix="lotwise-golden-") as tmp:
        args = [a.replace(TMP, tmp) for a in argv]
        try:
            os.chdir(ROOT)
            with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
                code = main(args)
        finally:
            os.chdir(cwd)
        text, stderr = out.getvalue(), err.getvalue()
        doc = json.loads(text) if text.strip() else None
        doc = _replace_strings(doc, tmp, TMP)
        stderr = stderr.replace(tmp, TMP)
    return {"exit": code, "json": doc, "stdout": text, "stderr": stderr}


def _kind(value) -> str:
    if value is None:
        return "null"
    if isinstance(value, bool):  # before numbers: bool is an int in Python
        return "bool"
    if isinstance(value, (int, float)):
        return "number"
    if isinstance(value, str):
        return "string"
    if isinstance(value, list):
        return "list"
    if isinstance(value, dict):
        return "object"
    raise TypeError(f"not a JSON value: {value!r}")


def _numbers_agree(old: float, new: float) -> bool:
    if math.isnan(old) or math.isnan(new):
        return math.isnan(old) and math.isnan(new)
    return math.isclose(old, new, rel_tol=1e-9, abs_tol=1e-12)


def _excused(case: str, path: str) -> bool:
    """True when CHANGED names this path or one above it."""
    here = (f"{case}:{path}", f"*:{path}")
    return any(h == key or h.startswith(key + sep)
               for h in here for key in CHANGED for sep in (".", "["))


def compare(case: str, old, new, path: str = "json") -> list[str]:
    """Differences of ``new`` from the snapshot ``old``, one line each."""
    if _excused(case, path):
        return []
    where = f"{case}: {path}"
    if _kind(old) != _kind(new):
        return [f"{where}: was {_kind(old)} {old!r:.200}, now {_kind(new)} {new!r:.200}"]
    if isinstance(old, dict):
        problems = []
        for key, value in old.items():
            if key in IGNORED_KEYS:
                continue
            sub = f"{path}.{key}"
            if key not in new:
                if not _excused(case, sub):
                    problems.append(f"{case}: {sub}: missing now (was {value!r:.200})")
                continue
            problems += compare(case, value, new[key], sub)
        return problems
    if isinstance(old, list):
        if len(old) != len(new):
            return [f"{where}: list of {len(old)} items, now {len(new)}: "
                    f"was {old!r:.200}, now {new!r:.200}"]
        problems = []
        for i, (a, b) in enumerate(zip(old, new)):
            problems += compare(case, a, b, f"{path}[{i}]")
        return problems
    if _kind(old) == "number":
        same = _numbers_agree(float(old), float(new))
    else:
        same = old == new
    return [] if same else [f"{where}: was {old!r}, now {new!r}"]


CASES = load_cases()


def test_cases_are_well_formed():
    names = [c["name"] for c in CASES]
    assert len(names) == len(set(names)), "case names must be unique"
    for c in CASES:
        assert set(c) == {"name", "argv"}, c
        assert "--json" in c["argv"], c["name"]
        assert (SNAPSHOTS / f"{c['name']}.json").is_file(), f"no snapshot for {c['name']}"


@pytest.mark.parametrize("case", CASES, ids=[c["name"] for c in CASES])
def test_golden(case):
    name = case["name"]
    snap = json.loads((SNAPSHOTS / f"{name}.json").read_text(encoding="utf-8"))
    assert snap["argv"] == case["argv"], f"{name}: cases.toml and the snapshot disagree on argv"
    now = run_case(case["argv"])
    assert CRASH_MARK not in now["stderr"], f"{name}: internal error: {now['stderr'].strip()}"
    problems = []
    if now["exit"] != snap["exit"] and not _excused(name, "exit"):
        problems.append(f"{name}: exit: was {snap['exit']}, now {now['exit']}")
    problems += compare(name, snap["json"], now["json"])
    assert not problems, "\n".join(problems[:40]) + (
        f"\n... and {len(problems) - 40} more" if len(problems) > 40 else "")


def test_changed_names_real_cases():
    """Every CHANGED entry names an existing case and gives a reason."""
    names = {c["name"] for c in CASES}
    for key, reason in CHANGED.items():
        case, _, path = key.partition(":")
        assert case == "*" or case in names, f"CHANGED names an unknown case: {key}"
        assert path == "exit" or path.startswith("json"), f"CHANGED path must be exit or json...: {key}"
        assert reason.strip(), f"CHANGED needs a reason: {key}"
