"""The bench procedure, the record form and the not-for-bench banner of plan sheets.

What the clerk reads on the sheet must be the plan the tool judged:

* double, multiple, sequential and chain plans: the printed procedure table,
  read the way its steps say, gives the same decision as ``lotwise next``
  (the plans' ``decide``) at every (inspected, found) pair the bench can
  reach, found by enumerating every path of conforming / nonconforming units
  from the first unit to the largest sample (exact enumeration, no sampling);
* variables plans: the worked line's mean, standard deviation, statistic and
  decision are those ``lotwise judge`` computes for measurements with that
  mean and standard deviation (the definitions of xbar, s with the n - 1
  divisor and Q = (U - xbar)/s, (xbar - L)/s: D. C. Montgomery, *Introduction to
  Statistical Quality Control*, the chapter on lot sentencing by variables,
  from memory; the estimate method: G. J. Lieberman and G. J. Resnikoff,
  JASA 50 (1955) 457-516);
* ChSP-1's rule (accept on 0; on 1 only after i clean samples; reject on 2):
  H. F. Dodge, "Chain sampling inspection plan", Industrial Quality Control
  11(4) (1955) 10-13.
"""

from __future__ import annotations

import csv
import io
import json
import re

import numpy as np
import pytest
from pypdf import PdfReader

from lotwise.cli import main

LOOSE = 'aql = "0.1%"\nrql = "40%"\n'  # targets every plan below meets


def plan_file(tmp_path, plan, name: str = "bench", extra: str = "", part: str = "") -> str:
    """A plan file of one characteristic with a given plan (``plan`` None: the
    characteristic's lines come in ``extra``'s last table)."""
    f = tmp_path / f"{name}.toml"
    char = f'[[characteristic]]\nid = "M1"\nclass = "major"\n{LOOSE}'
    char += f'plan = "{plan}"\n' if plan is not None else "c = 2\n"
    f.write_text(f'[part]\nid = "B-1"\ndescription = "Bench test part"\n{part}'
                 f'[lot]\nsize = 5000\n{extra}{char}', encoding="utf-8")
    return str(f)


def top_down(path, page: int = 0) -> list[str]:
    """The text pieces of a PDF page from the top of the page down (left to
    right on one line), as a reader sees them."""
    pieces = []

    def visit(text, cm, tm, font, size):
        if text.strip():
            pieces.append((-round(cm[5] + tm[5] * cm[3], 1), cm[4] + tm[4], text.strip()))
    PdfReader(str(path)).pages[page].extract_text(visitor_text=visit)
    return [t for _, _, t in sorted(pieces)]


def sheet_md(tmp_path, capsys, path) -> str:
    out = tmp_path / "out"
    code = main(["sheet", path, "--out", str(out)])
    _, err = capsys.readouterr()
    assert code == 0, err
    return (out / (re.sub(r".*/", "", path)[:-5] + ".md")).read_text(encoding="utf-8")


def procedure_table(md: str, cid: str = "M1") -> tuple[list, list]:
    """Header and rows of the first table under the bench procedure heading of ``cid``."""
    body = md.split("## Bench procedure", 1)[1].split("## Record form", 1)[0]
    sec = body.split(f"### {cid}: ", 1)[1].split("\n### ", 1)[0]
    lines = [ln for ln in sec.splitlines() if ln.startswith("|")]
    cells = [[c.strip() for c in ln.strip().strip("|").split("|")] for ln in lines]
    header, rows = cells[0], [r for r in cells[2:]]
    return header, rows


def next_action(capsys, notation, m, d, *state) -> str:
    code = main(["next", "--plan", notation, "--inspected", str(m), "--found", str(d),
                 *state, "--json"])
    out, err = capsys.readouterr()
    action = json.loads(out)["action"]
    # the exit-code table (README): 0 accept, 1 reject, 3 continue
    assert code == {"accept": 0, "reject": 1}.get(action.lower(), 3), (action, code, err)
    return action


# --- reading the printed tables as the steps say ---------------------------------

def read_stages(rows):
    """The stage table as numbers: sizes, cumulative, accept (None: '-'), reject."""
    sizes = [int(r[1]) for r in rows]
    cum = [int(r[2]) for r in rows]
    acc = [None if r[4] == "-" else int(r[4]) for r in rows]
    rej = [int(r[5]) for r in rows]
    return sizes, cum, acc, rej


def stages_decision(rows, m, d, per_unit=False):
    """The decision the stage table and its steps give after ``m`` units with
    ``d`` found in all (items: curtailment both ways, as the steps state;
    nonconformities per unit: early rejection only)."""
    sizes, cum, acc, rej = read_stages(rows)
    if m == 0:
        return "continue"
    j = next(k for k, c in enumerate(cum) if m <= c)
    if m == cum[j]:
        if acc[j] is not None and d <= acc[j]:
            return "accept"
        if d >= rej[j]:
            return "reject"
        nxt = j + 1
        if not per_unit and acc[nxt] is not None and d + sizes[nxt] <= acc[nxt]:
            return "accept"  # step: the next stage could not change it
        return "continue"
    if d >= rej[j]:
        return "reject"
    if not per_unit and acc[j] is not None and d + (cum[j] - m) <= acc[j]:
        return "accept"
    return "continue"


def sequential_decision(rows, m, d):
    if m == 0:
        return "continue"
    for r in rows:
        lo, _, hi = r[0].partition("-")
        if int(lo) <= m <= int(hi or lo):
            if r[1] != "-" and d <= int(r[1]):
                return "accept"
            if d >= int(r[2]):
                return "reject"
            return "continue"
    raise AssertionError(f"no row of the printed table holds n = {m}")


def chain_decision(rows, n, i, clean, m, d):
    """The chain table: the row of d (and of the run of clean lots) at the
    sample's end; before it, stop once the table's answer is certain."""
    def at_end(dd):
        for r in rows:
            found = int(r[0].split()[0])
            if (r[0].endswith("or more") and dd >= found) or dd == found:
                cond = r[1]
                if cond == "any" or (cond.startswith(f"{i} or more") and clean >= i) or \
                        (cond.startswith("fewer than") and clean < i):
                    return r[2]
        raise AssertionError(f"no row of the printed table for d = {dd}")
    if m == n:
        return at_end(d)
    if all(at_end(dd) == "reject" for dd in range(d, d + n - m + 1)):
        return "reject"
    if all(at_end(dd) == "accept" for dd in range(d, d + n - m + 1)):
        return "accept"
    return "continue"


def reachable(decision, n_max, most_per_unit: int = 1):
    """Every (inspected, found) pair some sequence of conforming and
    nonconforming units reaches while the procedure says continue (per unit:
    each unit holding 0 .. ``most_per_unit`` nonconformities)."""
    seen, todo = {(0, 0)}, [(0, 0)]
    while todo:
        m, d = todo.pop()
        if decision(m, d) != "continue":
            continue
        assert m < n_max, f"the procedure is still undecided at its largest sample ({m}, {d})"
        for nxt in ((m + 1, d + k) for k in range(most_per_unit + 1)):
            if nxt not in seen:
                seen.add(nxt)
                todo.append(nxt)
    return sorted(seen)


@pytest.mark.parametrize("notation", [
    "n1=35,c1=0,r1=3,n2=35,c2=2",          # the demo's seal cartridge plan
    "n1=50,c1=1,r1=4,n2=100,c2=3",          # README's double plan
    "n1=20,c1=0,r1=4,n2=2,c2=3",            # a stage end accepts without the second stage
    "multiple: n=20/20/20; c=-/1/3; r=2/3/4",
    "multiple: n=8/8/8/8; c=0/1/2/4; r=3/4/5/5",
])
def test_stage_table_equals_next(tmp_path, capsys, notation):
    md = sheet_md(tmp_path, capsys, plan_file(tmp_path, notation))
    header, rows = procedure_table(md)
    assert header[:6] == ["After stage", "Units in stage", "Units in all", "Positions",
                          "Accept if d <=", "Reject if d >="]
    n_max = read_stages(rows)[1][-1]
    pairs = reachable(lambda m, d: stages_decision(rows, m, d), n_max)
    assert len(pairs) > n_max
    for m, d in pairs:
        assert stages_decision(rows, m, d) == next_action(capsys, notation, m, d), (m, d)


def test_stage_table_per_unit_equals_next(tmp_path, capsys):
    # Nonconformities per unit: a unit may hold several, so only rejection is
    # certain before a stage ends (the steps say no more).
    notation = "n1=13,c1=1,r1=4,n2=13,c2=4"
    path = plan_file(tmp_path, notation)
    text = open(path, encoding="utf-8").read().replace("[lot]\nsize = 5000\n",
                                                       '[lot]\ncounts = "nonconformities"\n')
    text = text.replace('aql = "0.1%"\nrql = "40%"', "aql = 0.01\nrql = 0.6")
    open(path, "w", encoding="utf-8").write(text)
    md = sheet_md(tmp_path, capsys, path)
    assert "Count the nonconformities found" in md and "also stop and accept" not in md
    _, rows = procedure_table(md)
    pairs = reachable(lambda m, d: stages_decision(rows, m, d, per_unit=True), 26,
                      most_per_unit=3)
    for m, d in pairs:
        assert stages_decision(rows, m, d, True) == next_action(capsys, notation, m, d,
                                                                "--per-unit"), (m, d)


@pytest.mark.parametrize("notation", [
    "sequential: h1=0.9886,h2=1.269,s=0.08687,truncate=75",
    "sequential: p1=1%,alpha=5%,p2=6%,beta=10%,truncate=120",
    "sequential: h1=1.5,h2=1.8,s=0.2,truncate=40",   # a steep slope: many short ranges
])
def test_sequential_table_equals_next(tmp_path, capsys, notation):
    md = sheet_md(tmp_path, capsys, plan_file(tmp_path, notation))
    header, rows = procedure_table(md)
    assert header == ["Units inspected n", "Accept if d <=", "Reject if d >="]
    last = int(rows[-1][0].split("-")[-1])
    # the ranges cover 1 .. truncate once each, in order
    covered = []
    for r in rows:
        lo, _, hi = r[0].partition("-")
        covered += list(range(int(lo), int(hi or lo) + 1))
    assert covered == list(range(1, last + 1))
    pairs = reachable(lambda m, d: sequential_decision(rows, m, d), last)
    for m, d in pairs:
        assert sequential_decision(rows, m, d) == next_action(capsys, notation, m, d), (m, d)


@pytest.mark.parametrize("n,i", [(15, 2), (20, 3), (8, 1)])
def test_chain_table_equals_next(tmp_path, capsys, n, i):
    notation = f"chain: n={n},i={i}"
    md = sheet_md(tmp_path, capsys, plan_file(tmp_path, notation))
    header, rows = procedure_table(md)
    assert header == ["Found d", "Clean lots in a row before this one", "Decision"]
    for clean in range(0, i + 2):
        def dec(m, d, clean=clean):
            return chain_decision(rows, n, i, clean, m, d)
        for m, d in reachable(dec, n):
            got = next_action(capsys, notation, m, d, "--clean-lots", str(clean))
            assert dec(m, d) == got, (clean, m, d)
    # Dodge's rule at the sample's end (Dodge 1955): 0 accepts, 1 after i clean lots, 2 rejects
    assert chain_decision(rows, n, i, i, n, 1) == "accept"
    assert chain_decision(rows, n, i, i - 1, n, 1) == "reject"
    assert chain_decision(rows, n, i, 0, n, 0) == "accept"
    assert chain_decision(rows, n, i, i + 5, n, 2) == "reject"


# --- variables: the worked line against judge --------------------------------------

def values_with(n: int, mean: float, sd: float) -> list[float]:
    """``n`` values with exactly this mean and standard deviation (n - 1 divisor)."""
    z = np.linspace(-1.0, 1.0, n) ** 3 + np.linspace(0, 0.3, n)
    z = (z - z.mean()) / z.std(ddof=1)
    return list(mean + sd * z)


@pytest.mark.parametrize("notation", [
    "variables: n=42,k=1.901,upper=25.0",                       # s-method, upper limit
    "variables: n=20,k=2.1,sigma=0.5,lower=10",                  # sigma known, lower limit
    "variables: n=30,k=1.8,lower=9.9,upper=10.1",                # estimate method, two limits
    "variables: n=25,k=2,sigma=0.02,lower=9.9,upper=10.1",       # sigma known, two limits
    "variables: n=30,k=1.8,lower=9.9,upper=10.1,method=k",       # two-limit k-method
])
def test_variables_worked_line_equals_judge(tmp_path, capsys, notation):
    md = sheet_md(tmp_path, capsys, plan_file(tmp_path, notation))
    body = md.split("## Bench procedure", 1)[1].split("## Record form", 1)[0]
    line = next(ln for ln in body.splitlines() if "Worked line" in ln)
    m = re.search(r"n = (\d+), xbar = ([-\d.e]+), (s|sigma) = ([-\d.e]+)", line)
    n, xbar, dev = int(m.group(1)), float(m.group(2)), float(m.group(4))
    qs = dict(re.findall(r"Q_([UL]) = [^;]*= (-?[\d.]+)", line))
    verdict = "accept" if line.rstrip("*").endswith("ACCEPT.") else "reject"
    assert verdict in ("accept", "reject") and ("ACCEPT" in line) != ("REJECT" in line)
    code = main(["judge", "--plan", notation, "--values",
                 ",".join(repr(float(v)) for v in values_with(n, xbar, dev)), "--json"])
    out, err = capsys.readouterr()
    rep = json.loads(out)
    assert code == (0 if rep["accept"] else 1), err
    assert rep["verdict"] == verdict
    assert rep["xbar"] == pytest.approx(xbar, rel=1e-12, abs=1e-12)
    assert rep["sigma_used"] == pytest.approx(dev, rel=1e-9)
    for side, printed in qs.items():
        key = "upper" if side == "U" else "lower"
        assert f"{rep['statistic']['q'][key]:.4f}" == printed, side
    if "estimate_total" in rep["statistic"]:
        total = re.search(r"p_U \+ p_L = ([\d.]+)", line).group(1)
        assert f"{rep['statistic']['estimate_total']:.6f}" == total
    # the steps state the rule the plan judges by
    assert "Mean: xbar" in body and ("Spread: s = " in body or "known process sigma" in body)


# --- a plan that falls short is not a work instruction --------------------------------

def test_failing_plan_gets_the_banner_and_no_instruction(tmp_path, capsys):
    # The demo's gasket proposal falls short (beta 26 % against 10 %; exit 1 of check).
    # A rule of the project's own (no outside source): a plan that falls short is
    # never laid out as a work instruction.
    from pathlib import Path

    src = str(Path(__file__).resolve().parents[1] / "plans" / "qp-6630-gasket-proposal.toml")
    out = tmp_path / "out"
    assert main(["sheet", src, "--out", str(out)]) == 1
    capsys.readouterr()
    md = (out / "qp-6630-gasket-proposal.md").read_text(encoding="utf-8")
    pages = [" ".join(p.extract_text().split())
             for p in PdfReader(str(out / "qp-6630-gasket-proposal.pdf")).pages]
    assert len(pages) == 1  # the sheet only: no procedure, no record form
    # the banner, the verdict and the reason come first on the page (above the title)
    seen = top_down(out / "qp-6630-gasket-proposal.pdf")
    assert seen[0] == "NOT FOR USE AT THE BENCH: this plan falls short of its targets"
    title = next(j for j, t in enumerate(seen) if t.startswith("Sampling plan"))
    assert "beta 26.0 % against the target 10.0 %" in " ".join(seen[1:title])
    assert md.lstrip("> *").upper().startswith("NOT FOR USE AT THE BENCH: THIS PLAN FALLS SHORT")
    assert md.index("beta 26.0 % against the target 10.0 %") < md.index("# Sampling plan")
    first = pages[0]
    for doc in (first, md):
        assert "At the bench" not in doc and "Bench procedure" not in doc
        assert "Inspect n = " not in doc and "Record form" not in doc
        assert "not an inspection instruction" in doc
    assert not (out / "qp-6630-gasket-proposal-record.csv").exists()


def test_no_plan_gets_the_banner(tmp_path, capsys):
    # AQL 1 %, RQL 2 % needs hundreds of units; a cap of 10 leaves no plan
    # (the project's own rule for the banner, as above).
    f = tmp_path / "none.toml"
    f.write_text('[part]\nid = "N-1"\n[sampling]\nmax_n = 10\n[[characteristic]]\nid = "M1"\n'
                 'class = "major"\naql = "1%"\nrql = "2%"\n', encoding="utf-8")
    main(["sheet", str(f), "--out", str(tmp_path / "out")])
    capsys.readouterr()
    seen = top_down(tmp_path / "out" / "none.pdf")
    assert seen[0] == "NOT FOR USE AT THE BENCH: no plan meets these targets"
    assert "no plan with n <= 10" in seen[1]  # the reason, next
    assert "At the bench" not in " ".join(seen)


def test_meeting_plan_has_box_procedure_and_form(tmp_path, capsys):
    path = plan_file(tmp_path, "n1=35,c1=0,r1=3,n2=35,c2=2")
    sheet_md(tmp_path, capsys, path)
    pages = [" ".join(p.extract_text().split())
             for p in PdfReader(str(tmp_path / "out" / "bench.pdf")).pages]
    assert "NOT FOR USE" not in pages[0] and "At the bench" in pages[0]
    # the blank record form is the second page, the procedure follows
    assert pages[1].startswith("Inspection record (blank form, one per lot)")
    assert pages[2].startswith("Bench procedure") and "take stage 2 (35 units)" in pages[2]
    assert "Blank record form (one per lot): page 2" in pages[0]
    assert "procedure for each characteristic: page 3." in pages[0]
    for field in ("Lot number", "Date received", "Positions", "Found in all d",
                  "Inspector", "Signature"):
        assert field in pages[1], field
    rows = list(csv.DictReader(io.StringIO(
        (tmp_path / "out" / "bench-record.csv").read_text(encoding="utf-8"))))
    assert [r["step"] for r in rows[:2]] == ["stage 1", "stage 2"]
    assert [r["positions"] for r in rows[:2]] == ["1-35", "36-70"]
    for key in ("lot", "date", "found", "found_in_all", "decision", "signature"):
        assert key in rows[0] and rows[0][key] == ""
    # The stages' units: the pick list's 70 units, each once, in the inspection
    # order the procedure prints (a permutation of the sorted pick list).
    picks = [int(r["unit"]) for r in csv.DictReader(io.StringIO(
        (tmp_path / "out" / "bench-picklist.csv").read_text(encoding="utf-8")))]
    staged = [int(u) for r in rows[:2] for u in r["units"].split()]
    assert sorted(staged) == picks and staged != picks
    md = (tmp_path / "out" / "bench.md").read_text(encoding="utf-8")
    printed = [int(x) for ln in md.split("### Inspection order", 1)[1].split("## Record", 1)[0]
               .splitlines() if ln.startswith("| ") and "-" in ln.split("|")[1]
               for x in ln.strip(" |").split("|")[1:] if x.strip()]
    assert printed == staged


def test_long_sequential_table_continues_on_more_pages(tmp_path, capsys):
    # Layout only (common practice, no source): a table never runs off a page.
    # A steep slope and a far truncation point: hundreds of ranges, laid out
    # three abreast and continued on the next page with the header repeated.
    notation = "sequential: h1=2.5,h2=3.1,s=0.25,truncate=900"
    path = plan_file(tmp_path, notation, extra="")
    md = sheet_md(tmp_path, capsys, path)
    _, rows = procedure_table(md)
    assert len(rows) > 300
    pages = [" ".join(p.extract_text().split())
             for p in PdfReader(str(tmp_path / "out" / "bench.pdf")).pages]
    cont = [p for p in pages if p.startswith("Bench procedure") and "(continued)" in p]
    # each continued page repeats the header of the table it continues: the
    # sequential numbers, then the inspection order of the 900 units
    assert cont and all(("Units inspected n" in p) or p.split("(continued) ")[1]
                        .startswith("Positions") for p in cont)
    assert sum("Units inspected n" in p for p in cont) >= 1
    assert pages[1].startswith("Inspection record")
    assert f"page 3-{len(pages)}." in pages[0]  # where the procedure runs
    # every printed range is on some page of the PDF
    text = " ".join(pages)
    for r in rows[::37]:
        assert f"{r[0]} {r[1]} {r[2]}" in text, r


# --- plan-file keys: drawing, revision, approvals, cost ----------------------------

def test_drawing_approvals_and_cost_on_the_sheet(tmp_path, capsys):
    # Expected inspection per lot under rectifying inspection is the ATI,
    # n + (1 - Pa)(N - n) (E. G. Schilling and D. V. Neubauer, 2nd ed., CRC Press,
    # 2009, rectifying inspection; from memory); the cost is that
    # times the cost per unit, taken here from check --plan's own ATI.
    part = 'drawing = "QD-77"\nrevision = "B"\n'
    extra = ('[sampling]\nn = 80\ncost_per_unit = 2.5\ndeliveries_per_year = 52\n'
             '[approvals]\nprepared_by = "P. Writer"\ndate = 2026-11-30\n')
    path = plan_file(tmp_path, None, part=part, extra=extra)  # audited: n = 80, c = 2
    md = sheet_md(tmp_path, capsys, path)
    assert "QD-77, revision B" in md and "P. Writer" in md and "2026-11-30" in md
    assert "| P. Writer | " + "." * 24 + " | 2026-11-30 |" in md  # approved by: a line to sign
    code = main(["check", path, "--json"])
    item = json.loads(capsys.readouterr()[0])["characteristics"][0]
    cost = item["inspection_cost"]
    # the same plan through check --plan: its ATI at the AQL (rejected lots screened)
    main(["check", "--plan", "n=80,c=2", "--aql", "0.1%", "--rql", "40%", "--lot-size", "5000",
          "--json"])
    ati = json.loads(capsys.readouterr()[0])["ati"]["aql"]
    assert cost["basis"] == "ati" and cost["units_per_lot"] == pytest.approx(ati, rel=1e-12)
    assert cost["per_lot"] == pytest.approx(2.5 * ati, rel=1e-12)
    assert cost["per_year"] == pytest.approx(52 * 2.5 * ati, rel=1e-12)
    assert f"{2.5 * ati:,.2f} per lot" in md and f"{52 * 2.5 * ati:,.2f} per year" in md


def test_cost_of_a_varying_sample_is_its_asn(tmp_path, capsys):
    # A plan judged on its own sample (not screened on the sheet) costs its
    # expected sample, the ASN (same source as above).
    extra = '[sampling]\ncost_per_unit = 10\n'
    path = plan_file(tmp_path, "n1=35,c1=0,r1=3,n2=35,c2=2", extra=extra)
    main(["check", path, "--json"])
    cost = json.loads(capsys.readouterr()[0])["characteristics"][0]["inspection_cost"]
    main(["check", "--plan", "n1=35,c1=0,r1=3,n2=35,c2=2", "--aql", "0.1%", "--rql", "40%",
          "--lot-size", "5000", "--json"])
    asn = json.loads(capsys.readouterr()[0])["asn"]["aql"]
    assert cost["basis"] == "asn" and cost["per_lot"] == pytest.approx(10 * asn, rel=1e-12)
    assert cost["per_year"] is None


@pytest.mark.parametrize("extra,needles", [
    ('[sampling]\ndeliveries_per_year = 0\n', ["sampling.deliveries_per_year", "(0)", "above 0"]),
    ('[approvals]\napproved = "X"\n', ["approvals.approved", "approved_by"]),
    ('[approvals]\nprepared_by = 3\n', ["approvals.prepared_by", "(3)", "text in quotes"]),
])
def test_bad_new_keys_one_line(tmp_path, capsys, extra, needles):
    path = plan_file(tmp_path, "n=80,c=2", extra=extra)
    code = main(["check", path])
    _, err = capsys.readouterr()
    assert code == 2 and len(err.strip().splitlines()) == 1
    for n in needles:
        assert n in err, (n, err)


def test_deliveries_without_a_cost_give_the_yearly_load(tmp_path, capsys):
    # Units inspected a year = expected units per lot x lots a year (the ATI at
    # the AQL where rejected lots are screened: same source as above); with no
    # cost per unit the money fields are null and the sheet states the load.
    extra = '[sampling]\nn = 80\ndeliveries_per_year = 52\n'
    path = plan_file(tmp_path, None, extra=extra)
    md = sheet_md(tmp_path, capsys, path)
    main(["check", path, "--json"])
    cost = json.loads(capsys.readouterr()[0])["characteristics"][0]["inspection_cost"]
    main(["check", "--plan", "n=80,c=2", "--aql", "0.1%", "--rql", "40%", "--lot-size", "5000",
          "--json"])
    ati = json.loads(capsys.readouterr()[0])["ati"]["aql"]
    assert cost["per_unit"] is None and cost["per_lot"] is None and cost["per_year"] is None
    assert cost["units_per_year"] == pytest.approx(52 * ati, rel=1e-12)
    assert "## Inspection load and cost" in md
    assert f"= {52 * ati:,.0f} units inspected per year" in md
