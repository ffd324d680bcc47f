"""The validation report: every case listed, and a loud failure when a value, a
tolerance or an installed file changes."""

from __future__ import annotations

import dataclasses
import hashlib
import io
import json
import shutil
import subprocess

import pypdf
import pytest

import lotwise.validation.runner as validation
from lotwise.cli import main
import lotwise.validation.installation as installation
from lotwise.documents.validation_report import fingerprint, report_body
from lotwise.validation.requirements import REQUIREMENTS
from lotwise.validation.runner import (ReferenceCase, all_cases, markdown_report, pdf_report, run_cases)


@pytest.fixture(scope="module")
def clean_copy(tmp_path_factory):
    """A copy of the package with a build manifest, as a wheel installs it."""
    root = tmp_path_factory.mktemp("site") / "lotwise"
    shutil.copytree(installation.package_root(), root,
                    ignore=shutil.ignore_patterns("__pycache__", "*.pyc", "manifest.json"))
    installation.write_manifest(root, root / installation.MANIFEST_NAME)
    return root


@pytest.fixture(scope="module")
def result(clean_copy):
    mp = pytest.MonkeyPatch()
    mp.setattr(installation, "package_root", lambda: clean_copy)
    try:
        yield run_cases()
    finally:
        mp.undo()


@pytest.fixture
def installed_clean(clean_copy, monkeypatch):
    monkeypatch.setattr(installation, "package_root", lambda: clean_copy)
    return clean_copy


def test_every_case_passes(result):
    bad = [(r.case.id, r.expected, r.computed, r.note) for r in result.results
           if r.verdict != "pass"]
    assert bad == [] and result.verdict == "PASSED"


def test_registry_covers_the_single_sampling_references():
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
    val = run_cases(_perturbed(), installation=False)
    failed = [r for r in val.results if r.verdict != "pass"]
    assert [r.case.id for r in failed] == ["zero-acceptance-c0-95-95"]
    assert failed[0].verdict == "FAIL" and failed[0].computed == 59
    assert val.verdict == "FAILED"
    md = markdown_report(val)
    assert "Verdict: **FAILED**" in md and "| zero-acceptance-c0-95-95 |" in md
    assert "| FAIL |" in md


@pytest.mark.slow
def test_cli_exits_1_when_a_value_is_altered(tmp_path, capsys, monkeypatch, installed_clean):
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


def test_cli_passes_and_writes_dated_reports(tmp_path, capsys, installed_clean):
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
    val = run_cases(_broken(), installation=False)
    verdicts = {r.case.id: r.verdict for r in val.results}
    assert verdicts == {"ok": "pass", "boom": "ERROR", "needs": "skipped", "tuple": "pass"}
    assert val.verdict == "FAILED"
    val = run_cases([c for c in _broken() if c.id != "boom"], installation=False)
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


# --- requirements, tolerances, installation, fingerprint --------------------------

def test_every_case_states_requirement_exercise_and_tolerance_reason(result):
    covered = set()
    for r in result.results:
        assert r.requirement in REQUIREMENTS, r.case.id
        assert r.tolerance_reason, r.case.id
        assert r.exercises != "-" and "lotwise" in r.exercises, r.case.id
        covered.add(r.requirement)
    assert covered == set(REQUIREMENTS) - {"R-INST"}
    md = markdown_report(result)
    assert "## Requirements and the cases that cover them" in md
    for rid in REQUIREMENTS:
        assert f"| {rid} |" in md
    assert "NO CASE" not in md


def test_published_approximations_pass_on_the_exact_value(result):
    by_id = {r.case.id: r for r in result.results}
    nist = by_id["nist-double-r1-c2-c4-pa10"]
    assert nist.verdict == "pass" and abs(nist.expected - 5.3847) < 1e-4
    assert abs(nist.case.published - nist.computed) > nist.case.tolerance  # would not pass
    md = markdown_report(result)
    assert "published 5.39 (exact 5.384721385" in md


def test_an_altered_tolerance_fails_loudly():
    # n50 at 5 %: the tool agrees with mpmath to about 1e-16; a tolerance of 0
    # against a reference nudged by 1e-13 must fail (a tolerance narrowed below the
    # difference is a failure, not a silent pass).
    cases = [dataclasses.replace(c, tolerance=0.0, expected=(lambda f=c.expected: f() + 1e-13))
             if c.id == "textbook-n50-c1-p5pct" else c for c in all_cases()
             if c.id.startswith("textbook-n50")]
    val = run_cases(cases, installation=False)
    assert [r.case.id for r in val.results if r.verdict == "FAIL"] == ["textbook-n50-c1-p5pct"]
    assert val.verdict == "FAILED"


def test_installation_check_passes_on_a_clean_copy_and_fails_on_one_altered_file(clean_copy,
                                                                                   tmp_path):
    assert installation.check_files(clean_copy).verdict == "pass"
    altered = tmp_path / "lotwise"
    shutil.copytree(clean_copy, altered)
    target = altered / "core" / "kernels.py"
    target.write_text(target.read_text() + "\n# changed\n")
    chk = installation.check_files(altered)
    assert chk.verdict == "FAIL" and chk.changed == ["core/kernels.py"]
    (altered / "extra.py").write_text("x = 1\n")
    (altered / "py.typed").unlink()
    chk = installation.check_files(altered)
    assert chk.unexpected == ["extra.py"] and chk.missing == ["py.typed"]


def test_an_altered_installed_file_fails_the_report(clean_copy, tmp_path, monkeypatch, capsys):
    altered = tmp_path / "site" / "lotwise"
    shutil.copytree(clean_copy, altered)
    target = altered / "families" / "single.py"
    target.write_bytes(target.read_bytes().replace(b"c", b"c", 1) + b" ")
    monkeypatch.setattr(installation, "package_root", lambda: altered)
    cases = [c for c in all_cases() if c.id == "cameron-c0-pa95"]
    val = run_cases(cases)
    assert val.results[0].verdict == "pass" and val.verdict == "FAILED"
    md = markdown_report(val)
    assert "Verdict: **FAILED**" in md and "| families/single.py |" in md and "| CHANGED |" in md
    monkeypatch.setitem(validation.__dict__, "PROVIDERS", [f"{__name__}:_one_case"])
    code = main(["validate", "--out", str(tmp_path / "out"), "--json"])
    cap = capsys.readouterr()
    d = json.loads(cap.out)
    assert code == 1 and d["verdict"] == "FAILED"
    assert d["installation"]["changed"] == ["families/single.py"]
    assert "installation check (families/single.py)" in cap.err


def _one_case():
    return [c for c in all_cases(REGISTERED) if c.id == "cameron-c0-pa95"]


def test_git_checkout_reference(clean_copy, tmp_path):
    if shutil.which("git") is None:
        pytest.skip("git is not installed")
    repo = tmp_path / "repo"
    pkg = repo / "src" / "lotwise"
    shutil.copytree(clean_copy, pkg, ignore=shutil.ignore_patterns("manifest.json"))
    git = ["git", "-c", "user.name=t", "-c", "user.email=t@example.invalid"]
    subprocess.run(["git", "init", "-q", str(repo)], check=True)
    subprocess.run(git + ["-C", str(repo), "add", "-A"], check=True)
    subprocess.run(git + ["-C", str(repo), "commit", "-qm", "x"], check=True)
    chk = installation.check_files(pkg)
    assert chk.kind == "git" and chk.verdict == "pass" and len(chk.files) > 50
    (pkg / "api.py").write_text((pkg / "api.py").read_text() + "\n")
    chk = installation.check_files(pkg)
    assert chk.verdict == "FAIL" and chk.changed == ["api.py"]


def test_no_reference_is_not_a_pass(tmp_path):
    root = tmp_path / "lotwise"
    root.mkdir()
    (root / "a.py").write_text("x = 1\n")
    chk = installation.check_files(root, use_git=False)
    assert chk.verdict == "INCOMPLETE" and not chk.ok


def test_fingerprint_is_stated_verifiable_and_follows_content(result):
    md = markdown_report(result)
    body, last = md.rstrip("\n").rsplit("\n", 1)
    digest = last.rsplit(": ", 1)[1]
    assert digest == hashlib.sha256((body + "\n").encode()).hexdigest()
    assert markdown_report(result) == md  # the same content, the same fingerprint
    pdf = pdf_report(result)
    text = "".join(p.extract_text() for p in pypdf.PdfReader(io.BytesIO(pdf)).pages)
    assert digest in text.replace("\n", "")
    changed = dataclasses.replace(result, results=result.results[:-1])
    assert fingerprint(report_body(changed)) != digest
    first = result.results[0]
    other = dataclasses.replace(first, computed=first.computed + 1e-9)
    again = dataclasses.replace(result, results=[other] + result.results[1:])
    assert fingerprint(report_body(again)) != digest
