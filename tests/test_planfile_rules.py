"""Plan-file rules: every error of a file at once, enumerations without case,
critical characteristics given by their RQL and beta alone (c = 0) or inspected
on every item, the safety note, and the same rules for ``check`` and ``sheet``.

Sources: exact computation for numbers (the c = 0 plan's Pa(p) = (1 - p)^n for a
process, scipy.stats.hypergeom for a finite lot); the rest are the file format's
own conventions (common practice, no source) and the trade's caution that
sampling cannot guarantee a lot free of nonconforming items (e.g. Montgomery,
Introduction to Statistical Quality Control, 7th ed., 2013, ch. 15, from memory).
"""

from __future__ import annotations

import contextlib
import io
import json
import math

import pytest
from scipy import stats

from lotwise.cli import main
from lotwise.core.quantities import InputError
from lotwise.documents.partplan import resolve
from lotwise.documents.planfile import loads

F = "plans/p.toml"
HEAD = '[part]\nid = "P-1"\n'


def run(args):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main([str(a) for a in args])
    return code, out.getvalue(), err.getvalue()


def char(**keys) -> str:
    body = "".join(f"{k} = {json.dumps(v)}\n" for k, v in keys.items())
    return "[[characteristic]]\n" + body


# --- every error of a file at once ------------------------------------------------------

@pytest.mark.parametrize("text, parts", [
    (HEAD + "[lot]\nsize = 0\n" + char(id="M1", **{"class": "severe"}, aql="1%", rql="8%"),
     ["lot.size (0) must be at least 1", "characteristic[1].class ('severe')"]),
    (HEAD + char(id="M1", **{"class": "major"}, aql="1 percent", rql="8%", bogus=1)
     + char(id="M1", **{"class": "minor"}, aql="1%", rql="0.5%"),
     ["characteristic[1].bogus: unknown key", "characteristic[1].aql ('1 percent')",
      "characteristic[2].id ('M1') is used twice",
      "characteristic[2].rql (0.5%) must be above characteristic[2].aql (1%)"]),
    (HEAD + "[sampling]\nmax_n = -3\nseed = 1.5\n" + char(id="M1", **{"class": "major"},
                                                          aql="1%", rql="8%", c=-1),
     ["sampling.max_n (-3)", "sampling.seed (1.5)", "characteristic[1].c (-1)"]),
    # [switching] and [[table]] report every error too, beside the characteristics'
    ('aql = "1%"\nrql = "0.5%"\n' + HEAD + "[lot]\nsize = 500\n"
     '[switching]\nnormal = "n=80,c=2"\ntightened = "n=9000,c=1"\ncolour = "red"\n'
     "[switching.rules]\ntighten_window = 0\n"
     '[[table]]\nlot_min = 10\nlot_max = 5\nnormal = "n=5,c=0"\n'
     '[[table]]\nlot_max = 50\nnormal = "n=bad"\naql = "zz"\n'
     + char(id="M1", **{"class": "major"}, aql="2%", rql="1%"),
     ["rql (0.5%) must be above aql (1%)", "switching.colour: unknown key",
      "switching.tightened (n=9000,c=1) inspects up to 9000 units",
      "switching.rules.tighten_window (0)", "table[1].lot_min (10) must not be greater",
      "table[2].lot_min is missing", "table[2].normal ('n=bad')", "table[2].aql ('zz')",
      "characteristic[1].rql (1%) must be above characteristic[1].aql (2%)"]),
])
def test_every_error_of_a_file_in_one_line(text, parts):
    with pytest.raises(InputError) as e:
        loads(text, F)
    msg = str(e.value)
    assert msg.startswith(f"{F}: {len(parts)} errors: ") and "\n" not in msg
    for p in parts:
        assert p in msg, p


def test_one_error_keeps_its_message():
    with pytest.raises(InputError) as e:
        loads(HEAD + char(id="M1", **{"class": "major"}, aql="1%", rql="8%", alpha="150%"), F)
    assert str(e.value) == (f"{F}: characteristic[1].alpha (150%) must be a probability "
                            "between 0 and 1, exclusive")


def test_errors_of_several_files_together(tmp_path):
    a, b = tmp_path / "a.toml", tmp_path / "b.toml"
    a.write_text(HEAD + char(id="M1", **{"class": "major"}, aql="1%", rql="8%", ratio=50,
                             scheme="double"))
    b.write_text(HEAD + char(id="M1", **{"class": "maj"}, aql="1%", rql="8%"))
    for cmd in (["check", a, b], ["sheet", a, b, "--out", tmp_path / "s"]):
        code, _, err = run(cmd)
        assert code == 2 and err.count("\n") == 1
        assert "2 plan files have errors" in err and "a.toml: characteristic[1].ratio" in err
        assert "b.toml: characteristic[1].class ('maj')" in err


# --- check and sheet: the same rules, the file's key named ------------------------------

BAD = [
    (char(id="M1", **{"class": "major"}, aql="1%", rql="8%", scheme="double", ratio=50),
     "characteristic[1].ratio (50)"),
    (char(id="M1", **{"class": "major"}, aql="1%", rql="8%", scheme="variables"),
     "characteristic[1].upper"),
    (char(id="M1", **{"class": "major"}, aql="1%", rql="8%", scheme="sequential", truncate=0),
     "characteristic[1].truncate (0)"),
    (char(id="M1", **{"class": "major"}, rql="8%"), "characteristic[1].aql is missing"),
    (char(id="C1", **{"class": "critical"}, rql="8%", c=1), "characteristic[1].aql is missing"),
    (char(id="C1", **{"class": "critical"}, inspection="100%", aql="1%"),
     "characteristic[1].aql does not apply with characteristic[1].inspection"),
    (char(id="C1", **{"class": "critical"}, inspection="most"),
     "characteristic[1].inspection ('most') must be one of"),
]


@pytest.mark.parametrize("body, words", BAD)
def test_check_and_sheet_refuse_alike(tmp_path, body, words):
    f = tmp_path / "p.toml"
    f.write_text(HEAD + "[lot]\nsize = 500\n" + body)
    got = []
    for cmd in (["check", f], ["sheet", f, "--out", tmp_path / "s"]):
        code, _, err = run(cmd)
        assert code == 2 and err.count("\n") == 1 and words in err, err
        got.append(err)
    assert got[0] == got[1]


# --- enumerations without case ----------------------------------------------------------

@pytest.mark.parametrize("key, value, attr, expected", [
    ("class", "Major", "klass", "major"), ("class", "CRITICAL", "klass", "critical"),
    ("class", " minor ", "klass", "minor"), ("scheme", "Double", "scheme", "double"),
    ("inspection", "100 %", "full_inspection", True),
    ("inspection", "Sampling", "full_inspection", False),
])
def test_characteristic_enumerations_ignore_case(key, value, attr, expected):
    keys = {"id": "M1", "class": "major", "aql": "1%", "rql": "8%"}
    keys[key] = value
    if attr == "full_inspection" and expected:
        keys = {"id": "M1", "class": "major", "inspection": value}
    req = loads(HEAD + char(**keys), F)
    assert getattr(req.characteristics[0], attr) == expected


@pytest.mark.parametrize("counts, per_unit", [("Items", False), ("NONCONFORMITIES", True)])
def test_lot_counts_ignore_case(counts, per_unit):
    req = loads(HEAD + f'[lot]\ncounts = "{counts}"\n'
                + char(id="M1", **{"class": "major"}, aql="1%", rql="8%"), F)
    assert req.scope.per_unit is per_unit


# --- critical characteristics: RQL and beta only, c = 0 ---------------------------------

@pytest.mark.parametrize("rql, beta, lot", [(0.015, 0.05, None), (0.05, 0.10, None),
                                            (0.015, 0.05, 2000), (0.02, 0.10, 500)])
def test_rql_only_gives_the_smallest_c0_sample(rql, beta, lot):
    text = HEAD + (f"[lot]\nsize = {lot}\n" if lot else "") + char(
        id="C1", **{"class": "critical"}, rql=f"{100 * rql:g}%", beta=f"{100 * beta:g}%", c=0)
    pp = resolve(loads(text, F))
    rep = pp.reports[0]
    if lot is None:  # Pa(p) = (1 - p)^n: smallest n with (1 - rql)^n <= beta
        n = math.ceil(math.log(beta) / math.log(1 - rql) - 1e-12)
        # producer's level: Pa = 0.95 at p = 1 - 0.95^(1/n)
        assert rep["plan_quality"]["producer"] == pytest.approx(1 - 0.95 ** (1 / n), rel=1e-6)
    else:  # hypergeometric, the RQL's count rounded down
        d2 = math.floor(rql * lot + 1e-9)
        n = next(k for k in range(1, lot + 1) if stats.hypergeom(lot, d2, k).pmf(0) <= beta)
    assert (pp.n, rep["c"], rep["rql_only"], rep["meets"]) == (n, 0, True, True)
    assert rep["targets"]["aql"] == 0.0


def test_rql_only_in_check_json_and_sheet(tmp_path):
    f = tmp_path / "c.toml"
    f.write_text(HEAD + char(id="C1", **{"class": "critical"}, rql="1.5%", beta="5%", c=0))
    code, out, _ = run(["check", f, "--json"])
    item = json.loads(out)["characteristics"][0]
    n = math.ceil(math.log(0.05) / math.log(0.985))  # 199
    assert code == 0 and item["n"] == n and item["rql_only"] is True
    assert item["producer_level"] == pytest.approx(1 - 0.95 ** (1 / n), rel=1e-6)
    assert "RQL and beta only" in item["note"]
    code, out, _ = run(["check", f])
    assert "- (no AQL)" in out
    code, _, _ = run(["sheet", f, "--out", tmp_path / "s"])
    md = (tmp_path / "s" / "c.md").read_text()
    assert code == 0 and "none stated (c = 0)" in md and "only the RQL and beta" in md


# --- critical characteristics: inspection = "100%" -------------------------------------

@pytest.mark.parametrize("others", [False, True])
def test_full_inspection(tmp_path, others):
    f = tmp_path / "f.toml"
    body = char(id="C1", **{"class": "critical"}, inspection="100%")
    if others:
        body += char(id="M1", **{"class": "major"}, aql="1%", rql="6%")
    f.write_text(HEAD + "[lot]\nsize = 800\n" + body)
    code, out, _ = run(["check", f, "--json"])
    items = {i["characteristic"]: i for i in json.loads(out)["characteristics"]}
    assert code == 0 and items["C1"]["inspection"] == "100%" and items["C1"]["n"] == 800
    code, out, _ = run(["check", f])
    assert "100 % inspection" in out and "every item" in out
    code, _, _ = run(["sheet", f, "--out", tmp_path / "s"])
    md = (tmp_path / "s" / "f.md").read_text()
    assert code == 0 and "| C1 | critical | every item |" in md
    assert "C1: 100 % inspection: every item of the lot is inspected" in md
    # No sample for a part inspected only 100 %: no pick list is written.
    assert (tmp_path / "s" / "f-picklist.csv").exists() == others


def test_full_inspection_has_no_plan_to_reference(tmp_path):
    f = tmp_path / "f.toml"
    f.write_text(HEAD + char(id="C1", **{"class": "critical"}, inspection="100%")
                 + char(id="M1", **{"class": "major"}, aql="1%", rql="6%"))
    code, _, err = run(["next", "--plan", f"{f}#C1", "--inspected", "1", "--found", "0"])
    assert code == 2 and "every item" in err and err.count("\n") == 1


# --- the safety note where a plan guards a critical characteristic ----------------------

@pytest.mark.parametrize("klass, said", [("critical", True), ("major", False)])
def test_safety_note(tmp_path, klass, said):
    f = tmp_path / "s.toml"
    f.write_text(HEAD + char(id="X1", **{"class": klass}, aql="0.1%", rql="2%"))
    code, out, _ = run(["check", f])
    assert ("sampling cannot guarantee a lot free of nonconforming items" in out) == said
    code, out, _ = run(["check", f, "--json"])
    assert ("safety" in json.loads(out)["characteristics"][0]) == said
    run(["sheet", f, "--out", tmp_path / "o"])
    md = (tmp_path / "o" / "s.md").read_text()
    assert ("X1: a plan guards a critical characteristic" in md) == said


def test_no_plan_reason_names_the_files_key(tmp_path, capsys):
    # A plan file has keys, not options: the cap is sampling.max_n (the file's own word).
    from lotwise.cli import main

    f = tmp_path / "cap.toml"
    f.write_text('[part]\nid = "T-1"\n[lot]\nsize = 5000\n[sampling]\nmax_n = 20\n'
                 '[[characteristic]]\nid = "A"\nclass = "Major"\naql = "0.1%"\nrql = "1%"\n')
    for cmd in (["check", str(f)], ["sheet", str(f), "-o", str(tmp_path / "s")]):
        assert main(cmd) == 1
        out = capsys.readouterr().out
        assert "(sampling.max_n)" in out and "--max-n" not in out
