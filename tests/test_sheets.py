"""Plan sheets: the numbers on the PDF and Markdown equal the --json results,
the sheet is one page (followed by the bench procedure and record form for a
plan that meets its targets), writes are atomic and never clobber a user's file."""

from __future__ import annotations

import json
import os
import re
import time
from pathlib import Path

import pytest
from pypdf import PdfReader

from lotwise.data import files
from lotwise.cli import main
from lotwise.core.quantities import InputError, format_pct

ROOT = Path(__file__).resolve().parents[1]
PLANS = ROOT / "plans"


def pdf_text(path, page: int = 0) -> str:
    """The text of one page of a sheet (the first: the sheet itself)."""
    r = PdfReader(str(path))
    return " ".join(r.pages[page].extract_text().split())


def pdf_all(path) -> list[str]:
    return [" ".join(p.extract_text().split()) for p in PdfReader(str(path)).pages]


def cli_json(capsys, *args):
    code = main(list(args) + ["--json"])
    out, _ = capsys.readouterr()
    return code, json.loads(out)


def targets_args(t):
    return ["--aql", repr(t["aql"]), "--rql", repr(t["rql"]), "--alpha", repr(t["alpha"]),
            "--beta", repr(t["beta"])]


@pytest.mark.parametrize("name", ["qp-2210-manifold-block", "qp-6630-gasket-proposal",
                                  "qp-3305-housing-finish", "qp-1104-relief-spring"])
def test_sheet_numbers_equal_json(tmp_path, capsys, name):
    src = PLANS / f"{name}.toml"
    code = main(["sheet", str(src), "--out", str(tmp_path)])
    capsys.readouterr()
    assert code in (0, 1)
    text = pdf_text(tmp_path / f"{name}.pdf")
    md = " ".join((tmp_path / f"{name}.md").read_text().split())
    from lotwise.documents.planfile import load

    req = load(src)
    _, sheet_json = cli_json(capsys, "sheet", str(src), "--out", str(tmp_path))
    n = sheet_json["sheets"][0]["n"]
    for ch in req.characteristics:
        t = ch.targets.as_dict()
        lot = ["--lot-size", str(req.scope.lot_size)] if req.scope.lot_size else []
        extra = ["--per-unit"] if req.scope.per_unit else []
        # The same characteristic through `check` with the sheet's plan.
        c = re.search(rf"\| {re.escape(ch.id)} \| {ch.klass} \| n = \d+ \| (\d+) \|", md).group(1)
        _, rep = cli_json(capsys, "check", "--n", str(n), "--c", c, *targets_args(t), *lot, *extra)
        if ch.c is None and not req.fixed:
            # and it is what `design --n` picks for that sample size
            _, d = cli_json(capsys, "design", "--n", str(n), *targets_args(t), *lot, *extra)
            assert d["c"] == int(c)
        for doc in (text, md):
            assert f"n = {n}" in doc
            for m, r in rep["models"].items():
                for key in ("pa_aql", "pa_rql"):
                    assert f"{r[key]:.4f}" in doc, (m, key)
                for key in ("alpha", "beta"):
                    assert format_pct(r[key]) in doc, (m, key)
            q = rep["plan_quality"]
            from lotwise.core.quantities import format_level

            counts = rep.get("plan_quality_counts")
            for key in ("producer", "indifference", "consumer"):
                if counts is None:
                    assert format_level(q[key], req.scope.per_unit) in doc, key
                else:  # a finite lot: the whole count, its share and its true Pa
                    pa = format_pct(round(rep["plan_quality_pa"][key], 12))
                    assert (f"{counts[key]} of {rep['lot_size']} nonconforming "
                            f"({format_pct(q[key], 3)}) {pa} of the time") in doc, key


def test_sheet_has_required_parts(tmp_path, capsys):
    main(["sheet", str(PLANS / "qp-1104-relief-spring.toml"), "--out", str(tmp_path)])
    capsys.readouterr()
    text = pdf_text(tmp_path / "qp-1104-relief-spring.pdf")
    for needle in ("Scope", "Targets against achieved risks", "OC curve", "Selecting the sample",
                   "A rejected lot", "Cautions", "CRITICAL", "fingerprint", "lotwise 0.1.0",
                   "hypergeometric", "rounded up at the AQL and down at the RQL", "seed 110401",
                   "100 % inspection"):
        assert needle in text, needle
    assert (tmp_path / "qp-1104-relief-spring-oc.png").read_bytes()[:4] == b"\x89PNG"
    assert (tmp_path / "qp-1104-relief-spring-oc.csv").read_text().startswith("p,C1_hypergeometric")
    assert (tmp_path / "qp-1104-relief-spring-picklist.csv").exists()


def test_sheet_refuses_to_overwrite_user_file(tmp_path, capsys):
    mine = tmp_path / "qp-2210-manifold-block.md"
    mine.write_text("my own notes")
    code = main(["sheet", str(PLANS / "qp-2210-manifold-block.toml"), "--out", str(tmp_path)])
    _, err = capsys.readouterr()
    assert code == 2 and "--force" in err and mine.read_text() == "my own notes"
    code = main(["sheet", str(PLANS / "qp-2210-manifold-block.toml"), "--out", str(tmp_path),
                 "--force"])
    assert code == 0 and mine.read_text().startswith("# Sampling plan")
    # Re-running over its own, unchanged output needs no --force.
    assert main(["sheet", str(PLANS / "qp-2210-manifold-block.toml"), "--out", str(tmp_path)]) == 0


def test_atomic_write_survives_failure_mid_write(tmp_path, monkeypatch):
    target = tmp_path / "sheet.md"
    files.write_text(target, "first version\n")

    real_fdopen = os.fdopen

    class Boom:
        def __init__(self, fh):
            self.fh = fh

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            self.fh.close()
            return False

        def write(self, data):
            self.fh.write(data[: len(data) // 2])  # half written, then the disk "fails"
            raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fdopen", lambda fd, mode: Boom(real_fdopen(fd, mode)))
    with pytest.raises(InputError, match="cannot be written"):
        files.write_text(target, "second version, much longer than the first\n")
    monkeypatch.undo()
    assert target.read_text() == "first version\n"  # the old file is intact
    assert [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")] == []


def test_check_folder_summary_and_exit(capsys):
    code = main(["check", str(PLANS)])
    out, _ = capsys.readouterr()
    assert code == 1  # the supplier's gasket proposal falls short, by design of the scenario
    assert "QP-6630" in out and "FALLS SHORT" in out and "QP-1104" in out
    code, d = cli_json(capsys, "check", str(PLANS / "qp-2210-manifold-block.toml"))
    assert code == 0 and d["meets"] and d["characteristics"][0]["n"] > 0


def test_compare_table_and_plot(tmp_path, capsys):
    png = tmp_path / "cmp.png"
    code = main(["compare", "--plan", "n=32,c=1", "--plan", "n=50,c=1", "--plan", "n=29,c=0",
                 "--aql", "1%", "--rql", "8%", "--plot", str(png)])
    out, _ = capsys.readouterr()
    assert code == 0 and "n=32, c=1" in out and png.exists()
    code, d = cli_json(capsys, "compare", "--plan", "n=32,c=1", "--plan", "n=29,c=0",
                       "--aql", "1%", "--rql", "8%")
    assert [p["label"] for p in d["plans"]] == ["n=32, c=1", "n=29, c=0"]


def test_demo_runs_fast_and_writes_six_sheets(tmp_path, capsys):
    t = time.perf_counter()
    code = main(["demo", "--out", str(tmp_path)])
    elapsed = time.perf_counter() - t
    out, _ = capsys.readouterr()
    assert code == 0
    pdfs = sorted(tmp_path.glob("*.pdf"))
    assert len(pdfs) >= 6
    for p in pdfs:
        assert str(p) in out or p.name in out
        pages = pdf_all(p)
        # the sheet on page 1; a plan for the bench adds the blank record form
        # (page 2) and its procedure; the proposal that falls short has page 1 only
        if "FALLS SHORT" in pages[0] or "-switching" in p.name:
            assert len(pages) == 1, p.name
        else:
            assert len(pages) >= 3 and pages[1].startswith("Inspection record (blank form")
            assert pages[-1].startswith("Bench procedure"), p.name
    assert elapsed < 30


def test_variables_characteristic_on_the_sheet(tmp_path, capsys):
    # A measured characteristic designed as a variables plan sits beside an
    # attributes characteristic; the sheet's numbers equal `check --json` of
    # the same variables plan.
    name = "qp-7730-drive-shaft"
    assert main(["sheet", str(PLANS / f"{name}.toml"), "--out", str(tmp_path)]) == 0
    capsys.readouterr()
    text = pdf_text(tmp_path / f"{name}.pdf")
    md = (tmp_path / f"{name}.md").read_text()
    _, d = cli_json(capsys, "design", "--scheme", "variables", "--sigma", "unknown", "--upper",
                    "25", "--aql", "1%", "--rql", "6%")
    _, rep = cli_json(capsys, "check", "--plan", f"variables: n={d['n']},k={d['k']},upper=25",
                      "--aql", "1%", "--rql", "6%")
    for doc in (text, " ".join(md.split())):
        assert f"n={d['n']}, k={d['k']:g}" in doc
        assert f"{rep['pa_aql']:.4f}" in doc and f"{rep['pa_rql']:.4f}" in doc
        assert f"n = {d['attributes']['n']}, c = {d['attributes']['c']}" in doc
    # the attributes characteristic is judged on the same, larger sample
    assert "| m1 | minor | n = 42 |" in md


def test_double_plan_in_a_plan_file_is_audited(tmp_path, capsys):
    # A characteristic may carry a given plan of any type; the sheet audits it
    # with the same numbers as `check --json` (ASN included).
    f = tmp_path / "dbl.toml"
    f.write_text('[part]\nid = "X-1"\n[lot]\nsize = 2000\n[[characteristic]]\nid = "M1"\n'
                 'class = "major"\naql = "1%"\nrql = "5%"\nplan = "n1=50,c1=1,r1=4,n2=100,c2=3"\n')
    code = main(["sheet", str(f), "--out", str(tmp_path / "out")])
    capsys.readouterr()
    assert code == 1  # beta is 28.5 % against 10 %
    text = pdf_text(tmp_path / "out" / "dbl.pdf")
    _, rep = cli_json(capsys, "check", "--plan", "n1=50,c1=1,r1=4,n2=100,c2=3", "--aql", "1%",
                      "--rql", "5%", "--lot-size", "2000")
    r = rep["models"]["hypergeometric"]
    assert f"{r['pa_aql']:.4f}" in text and f"{r['pa_rql']:.4f}" in text
    assert f"{rep['asn']['aql']:.1f} at the AQL" in text


def test_sheet_shows_the_tradeoff_view(tmp_path, capsys):
    main(["sheet", str(PLANS / "qp-2210-manifold-block.toml"), "--out", str(tmp_path)])
    capsys.readouterr()
    md = (tmp_path / "qp-2210-manifold-block.md").read_text()
    assert "same two risk points with a varying sample: double" in md and "sequential" in md


def test_compare_designed_tradeoff(capsys):
    # The trade-off view in compare: single, double and sequential plans for
    # the same two points, each meeting them (exact), with the ASN of the
    # varying-sample plans below the single plan's fixed n at the AQL.
    code, d = cli_json(capsys, "compare", "--designed", "--aql", "1%", "--rql", "6%")
    assert code == 0
    by = {p["scheme"]: p for p in d["plans"]}
    assert set(by) == {"single", "double", "sequential"}
    assert (by["single"]["plan"]["n"], by["single"]["plan"]["c"]) == (110, 3)
    for s in ("double", "sequential"):
        assert by[s]["meets"] and by[s]["asn"]["aql"] < 110
