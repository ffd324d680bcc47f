"""The validation report: every case listed, and a loud failure when a value changes."""

from __future__ import annotations

import dataclasses
import io
import json

import pypdf
import pytest

import lotwise.validation.runner as validation
from lotwise.cli import main
from lotwise.validation.runner import (ReferenceCase, all_cases, markdown_report, pdf_report, run_cases)


@pytest.fixture(scope="module")
def result():
    return run_cases()


def test_every_case_passes(result):
    bad = [(r.case.id, r.expected, r.computed, r.note) for r in result.results
           if r.verdict != "pass"]
    assert bad == [] and result.verdict == "PASSED"


def test_registry_covers_the_issue_2_references():
    ids = {c.id for c in all_cases()}
    for needed in ("cameron-c0-pa95", "cameron-c10-pa10", "montgomery-n89-c2-p1pct",
                   "montgomery-n89-c2-alpha", "montgomery-design-binomial",
                   "montgomery-design-poisson", "textbook-n50-c1-p0_5pct",
                   "textbook-n50-c1-p8pct", "chisquare-design-c2-n54",
                   "chisquare-operating-ratio-c2", "binomial-design-n19-c1",
                   "binomial-design-c0-infeasible", "zero-acceptance-c0-95-95",
                   "zero-acceptance-c0-90-90", "zero-acceptance-c0-95-99", "acceptance-c1-95-95",
                   "design-aql0_1-rql0_15", "mpmath-hypergeometric-lot1e9"):
        assert needed in ids
    for c in all_cases():
        assert c.source and c.description and c.tolerance >= 0


def test_reports_list_every_case(result):
    md = markdown_report(result)
    pdf = pdf_report(result)
    text = "".join(p.extract_text() for p in pypdf.PdfReader(io.BytesIO(pdf)).pages)
    for r in result.results:
        assert f"| {r.case.id} |" in md
        assert r.case.id in text
    for key in ("lotwise", "numpy", "scipy", "mpmath", "python"):
        assert key in result.versions and f"{key} {result.versions[key]}" in md
    assert "Verdict: PASSED" in text and "Verdict: **PASSED**" in md


REGISTERED = list(validation.PROVIDERS)


def _perturbed():
    """The registered cases with one reference value altered (n = 59 made 60)."""
    out = []
    for c in all_cases(REGISTERED):
        if c.id == "zero-acceptance-c0-95-95":
            c = dataclasses.replace(c, expected=60)
        out.append(c)
    return out


def test_an_altered_reference_value_fails_loudly():
    val = run_cases(_perturbed())
    failed = [r for r in val.results if r.verdict != "pass"]
    assert [r.case.id for r in failed] == ["zero-acceptance-c0-95-95"]
    assert failed[0].verdict == "FAIL" and failed[0].computed == 59
    assert val.verdict == "FAILED"
    md = markdown_report(val)
    assert "Verdict: **FAILED**" in md and "| zero-acceptance-c0-95-95 |" in md
    assert "| FAIL |" in md


def test_cli_exits_1_when_a_value_is_altered(tmp_path, capsys, monkeypatch):
    monkeypatch.setitem(validation.__dict__, "PROVIDERS", [f"{__name__}:_perturbed"])
    code = main(["validate", "--out", str(tmp_path), "--json"])
    cap = capsys.readouterr()
    assert code == 1, cap.err
    d = json.loads(cap.out)
    assert d["verdict"] == "FAILED" and d["failed"] == 1
    assert "validation FAILED: zero-acceptance-c0-95-95" in cap.err
    md = tmp_path / d["report"]["markdown"].split("/")[-1]
    assert md.exists() and "FAIL" in md.read_text()
    assert (tmp_path / d["report"]["pdf"].split("/")[-1]).read_bytes()[:5] == b"%PDF-"


def test_cli_passes_and_writes_dated_reports(tmp_path, capsys):
    code = main(["validate", "--out", str(tmp_path / "val")])
    cap = capsys.readouterr()
    assert code == 0 and cap.err == ""
    files = sorted(p.name for p in (tmp_path / "val").iterdir() if not p.name.startswith("."))
    assert len(files) == 2 and files[0].startswith("validation-20") and files[0].endswith(".md")
    assert "PASSED" in cap.out


def _broken():
    ok = ReferenceCase(id="ok", description="one", source="arithmetic", expected=2,
                       tolerance=0, compute=lambda: 1 + 1)
    boom = ReferenceCase(id="boom", description="raises", source="none", expected=1,
                         tolerance=0, compute=lambda: 1 / 0)
    skip = ReferenceCase(id="needs", description="needs a module", source="none", expected=1,
                         tolerance=0, compute=lambda: 1, needs=("no_such_module_here",))
    tup = ReferenceCase(id="tuple", description="pairs", source="none", expected=(1, 2.0),
                        tolerance=0.1, compute=lambda: (1, 2.05))
    return [ok, boom, skip, tup]


def test_errors_and_skips_are_not_passes():
    val = run_cases(_broken())
    verdicts = {r.case.id: r.verdict for r in val.results}
    assert verdicts == {"ok": "pass", "boom": "ERROR", "needs": "skipped", "tuple": "pass"}
    assert val.verdict == "FAILED"
    val = run_cases([c for c in _broken() if c.id != "boom"])
    assert val.verdict == "INCOMPLETE"


def test_duplicate_ids_are_refused(monkeypatch):
    with pytest.raises(ValueError, match="registered twice"):
        all_cases([f"{__name__}:_broken", f"{__name__}:_broken"])


def test_cli_out_must_be_a_folder(tmp_path, capsys):
    f = tmp_path / "file.txt"
    f.write_text("x")
    code = main(["validate", "--out", str(f)])
    cap = capsys.readouterr()
    assert code == 2 and "--out" in cap.err and len(cap.err.strip().splitlines()) == 1
