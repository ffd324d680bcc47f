"""Whole-catalogue batch design: every row agrees with the single designer."""

from __future__ import annotations

import io
import json

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from generated import catalogue
from lotwise.analysis.audit import risks_under
from lotwise.data.batch import OUTPUT, design_catalogue, read_catalogue
from lotwise.families.single_many import design_many
from lotwise.cli import main
from lotwise.families.single import design_single
from lotwise.core.quantities import Infeasible, InputError, parse_level, parse_risk


def _reference(row):
    """What lotwise.families.single.design_single says for one catalogue row."""
    lot = int(row["lot_size"]) if row["lot_size"] else None
    kw = dict(aql=parse_level(row["aql"], "aql"), rql=parse_level(row["rql"], "rql"),
              alpha=parse_risk(row["alpha"], "alpha") if row["alpha"] else 0.05,
              beta=parse_risk(row["beta"], "beta") if row["beta"] else 0.10, lot_size=lot)
    try:
        d = design_single(**kw)
    except Infeasible as exc:
        return None, str(exc)
    r = risks_under(d.plan, d.targets, d.scope, d.model)
    return (d.n, d.c, d.model, r.alpha, r.beta, d.full_inspection), ""


@pytest.fixture(scope="module")
def thousand():
    # Generated catalogue (seeded), lot sizes from 60 standard sizes so that the
    # reference designs can be cached; a share of the rows has no plan at all.
    cat = catalogue(1000, seed=11, distinct_lots=60)
    return cat, design_catalogue(cat)


def test_every_row_agrees_with_the_single_designer(thousand):
    # Reference: lotwise.families.single.design_single, row by row (exact agreement of
    # n, c and the model; risks to 1e-12; the same message for rows without a plan).
    cat, res = thousand
    out = res.table
    cache = {}
    infeasible = 0
    for i, row in cat.iterrows():
        key = tuple(row[["lot_size", "aql", "rql", "alpha", "beta"]])
        if key not in cache:
            cache[key] = _reference(row)
        ref, msg = cache[key]
        got = out.iloc[i]
        if ref is None:
            infeasible += 1
            assert got["error"] == msg, (i, got["error"], msg)
            assert pd.isna(got["n"]) and got["plan"] == ""
            continue
        n, c, model, a, b, full = ref
        assert got["error"] == ""
        assert (int(got["n"]), int(got["c"]), got["model_used"]) == (n, c, model), i
        assert got["plan"] == f"n={n},c={c}"
        assert abs(got["alpha_actual"] - a) <= 1e-12 and abs(got["beta_actual"] - b) <= 1e-12
        assert got["full_inspection"] == ("yes" if full else "no")
    # Both kinds of rows are present, and the counts add up.
    assert 0 < infeasible < len(cat)
    assert res.designed + res.failed == len(cat) and res.failed == infeasible


def test_output_columns_follow_the_input_columns(thousand):
    cat, res = thousand
    assert list(res.table.columns) == list(cat.columns) + list(OUTPUT)
    # Input values are copied through untouched.
    pd.testing.assert_frame_equal(res.table[list(cat.columns)].reset_index(drop=True),
                                  cat.astype(object).reset_index(drop=True),
                                  check_dtype=False)


def test_inspection_load_sums(thousand):
    # Common practice, no source: the load is one sample per lot, times the lots a year.
    cat, res = thousand
    t = res.table
    ok = t["error"] == ""
    assert res.units_per_lot == int(t.loc[ok, "n"].sum())
    rate = pd.to_numeric(cat["deliveries_per_year"], errors="coerce")
    per_year = (t.loc[ok, "n"].astype(float) * rate[ok]).sum()
    assert res.units_per_year == int(round(per_year))
    assert res.rows_without_deliveries == int((ok & rate.isna()).sum())


def test_identical_designs_are_computed_once(monkeypatch):
    import lotwise.data.batch as batch

    sizes = []
    import lotwise.families.single_many as single_many

    real = single_many.design_many

    def counting(**kw):
        sizes.append(len(np.atleast_1d(kw["aql"])))
        return real(**kw)

    monkeypatch.setattr(single_many, "design_many", counting)
    cat = pd.DataFrame({"part": [f"P{i}" for i in range(500)], "lot_size": ["1000"] * 500,
                        "aql": ["1%"] * 250 + ["0.01"] * 250, "rql": ["6%"] * 500})
    res = batch.design_catalogue(cat)
    assert res.distinct == 1 and sum(sizes) == 1  # 1% and 0.01 are the same level
    assert set(res.table["plan"]) == {design_single(aql=0.01, rql=0.06, lot_size=1000)
                                      .plan.label.replace(" ", "")}


def test_bad_rows_carry_their_reason_and_the_rest_is_designed():
    cat = pd.DataFrame({
        "part": ["ok", "order", "lot", "level", "risk", "scheme", "model", "c", "small"],
        "lot_size": ["", "", "x1", "", "", "", "", "", "20"],
        "aql": ["1%", "7%", "1%", "1.5", "1%", "1%", "1%", "1%", "1%"],
        "rql": ["6%"] * 9,
        "alpha": ["", "", "", "", "95%", "", "", "", ""],
        "scheme": ["", "", "", "", "", "triple", "", "", ""],
        "model": ["", "", "", "", "", "", "hypergeometric", "", ""],
        "fixed_c": ["", "", "", "", "", "", "", "0", ""],
    })
    t = design_catalogue(cat).table.set_index("part")
    assert t.loc["ok", "error"] == "" and int(t.loc["ok", "n"]) == 110
    assert t.loc["order", "error"].startswith("the RQL (6 %) must be above the AQL (7 %)")
    assert t.loc["lot", "error"] == "lot_size ('x1') must be a whole number of at least 1"
    assert "aql (1.5)" in t.loc["level", "error"] and "1.5%" in t.loc["level", "error"]
    assert t.loc["risk", "error"].startswith("alpha + beta")
    assert t.loc["scheme", "error"] == ("scheme (triple) must be one of: single, double, "
                                        "sequential, chain, variables")
    assert "needs a lot size" in t.loc["model", "error"]
    assert t.loc["c", "error"].startswith("no sample size works with c = 0")
    assert "too small to tell the AQL from the RQL" in t.loc["small", "error"]


def test_per_unit_rows_match_the_single_designer():
    # Reference: design_single with per_unit=True (Poisson exact for nonconformities).
    cat = pd.DataFrame({"part": ["a", "b"], "lot_size": ["100", ""], "aql": ["0.5", "1%"],
                        "rql": ["2", "8%"], "per_unit": ["yes", "no"]})
    t = design_catalogue(cat).table
    d = design_single(aql=0.5, rql=2.0, lot_size=100, per_unit=True)
    assert (int(t["n"][0]), int(t["c"][0]), t["model_used"][0]) == (d.n, d.c, "poisson")
    assert int(t["n"][1]) == design_single(aql=0.01, rql=0.08).n


@settings(max_examples=40, deadline=None)
@given(model=st.sampled_from(["hypergeometric", "binomial", "poisson"]),
       aql=st.sampled_from([0.0004, 0.001, 0.004, 0.01, 0.025, 0.065]),
       ratio=st.sampled_from([1.4, 2, 3, 5, 10]),
       alpha=st.sampled_from([0.01, 0.05, 0.10]), beta=st.sampled_from([0.05, 0.10, 0.20]),
       lot=st.integers(30, 300_000), c=st.one_of(st.none(), st.integers(0, 6)))
def test_array_search_equals_the_single_designer(model, aql, ratio, alpha, beta, lot, c):
    # Reference: design_single (one problem at a time, plain bisection).
    rql = min(aql * ratio, 0.9)
    n_, c_, _, _ = design_many(model=model, aql=[aql], rql=[rql], alpha=[alpha], beta=[beta],
                               lot_size=[lot], fixed_c=[-1 if c is None else c])
    try:
        d = design_single(aql=aql, rql=rql, alpha=alpha, beta=beta, model=model, c=c,
                          lot_size=lot if model == "hypergeometric" else None)
        ref = (d.n, d.c)
    except (Infeasible, InputError):
        ref = None
    if ref is not None:
        assert (int(n_[0]), int(c_[0])) == ref
    else:
        assert n_[0] < 0  # left to design_single, which finds no plan either


# --- the command line ------------------------------------------------------------

def _run(argv, capsys):
    code = main(argv)
    out = capsys.readouterr()
    return code, out.out, out.err


def test_cli_sample_of_rows_agrees_with_lotwise_design(tmp_path, capsys):
    # Reference: `lotwise design --json` for a sample of catalogue rows.
    cat = catalogue(200, seed=5, distinct_lots=40)
    src = tmp_path / "cat.csv"
    cat.to_csv(src, index=False)
    out = tmp_path / "plans.csv"
    code, text, err = _run(["batch", str(src), "--out", str(out)], capsys)
    assert err == ""
    assert "inspection load" in text and "Sampling cannot guarantee" in text
    plans = pd.read_csv(out, dtype=str, keep_default_na=False)
    # README, "Exit codes" (common practice, no source): 1 when a row is not designed.
    assert code == (1 if (plans["error"] != "").any() else 0)
    for i in range(0, 200, 9):
        row = cat.iloc[i]
        argv = ["design", "--aql", row["aql"], "--rql", row["rql"], "--json"]
        if row["lot_size"]:
            argv += ["--lot-size", row["lot_size"]]
        if row["alpha"]:
            argv += ["--alpha", row["alpha"]]
        if row["beta"]:
            argv += ["--beta", row["beta"]]
        code, js, _ = _run(argv, capsys)
        got = plans.iloc[i]
        if code == 0:
            d = json.loads(js)
            assert (int(got["n"]), int(got["c"]), got["model_used"]) == \
                (d["n"], d["c"], d["model"])
            assert float(got["beta_actual"]) == pytest.approx(
                d["models"][d["model"]]["beta"], rel=1e-9)  # the CSV keeps 10 significant digits
        else:
            assert code == 1 and got["error"] == json.loads(js)["reason"]


def test_cli_refuses_to_overwrite_a_users_file(tmp_path, capsys):
    src = tmp_path / "cat.csv"
    src.write_text("part,lot_size,aql,rql\nA,,1%,6%\n")
    mine = tmp_path / "mine.csv"
    mine.write_text("my notes\n")
    code, out, err = _run(["batch", str(src), "--out", str(mine)], capsys)
    assert code == 2 and out == "" and len(err.strip().splitlines()) == 1
    assert "--force" in err and mine.read_text() == "my notes\n"
    code, out, err = _run(["batch", str(src), "--out", str(mine), "--force"], capsys)
    assert code == 0 and "n=110,c=3" in mine.read_text()
    # A file written by lotwise may be rewritten without --force.
    code, _, _ = _run(["batch", str(src), "--out", str(mine)], capsys)
    assert code == 0


def test_cli_json_and_stdout(tmp_path, capsys):
    src = tmp_path / "cat.csv"
    src.write_text("part,lot_size,aql,rql,deliveries_per_year\nA,,1%,6%,52\n"
                   "B,20,1%,6%,12\nC,5000,0.65%,5%,\n")
    code, out, err = _run(["batch", str(src), "--out", str(tmp_path / "p.csv"), "--json"],
                          capsys)
    d = json.loads(out)
    assert code == 1 and err == ""  # row B (lot of 20) cannot be designed: exit 1
    assert {"rows", "designed", "failed", "distinct_designs", "units_per_lot",
            "units_per_year", "errors", "out"} <= set(d)
    assert d["rows"] == 3 and d["failed"] == 1 and d["errors"][0]["line"] == 3
    assert d["units_per_year"] == 110 * 52
    code, out, err = _run(["batch", str(src), "--out", "-"], capsys)
    assert code == 1 and out.startswith("part,lot_size,aql,rql,deliveries_per_year,n,c,")
    assert "inspection load" in err  # the summary goes to stderr when the CSV is on stdout


@pytest.mark.parametrize("argv, needle", [
    (["batch", "MISSING.csv", "--out", "p.csv"], "does not exist"),
    (["batch", "CAT", "--out", "p.csv", "--deliveries-per-year", "lots"], "--deliveries-per-year"),
    (["batch", "CAT"], "--out is required"),
    (["batch", "NOCOL", "--out", "p.csv"], "lacks the column(s) rql"),
    (["batch", "EMPTY", "--out", "p.csv"], "is empty"),
])
def test_cli_malformed_input_is_one_line_exit_2(tmp_path, capsys, monkeypatch, argv, needle):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "CAT").write_text("part,lot_size,aql,rql\nA,,1%,6%\n")
    (tmp_path / "NOCOL").write_text("part,lot_size,aql\nA,,1%\n")
    (tmp_path / "EMPTY").write_text("")
    code, out, err = _run(argv, capsys)
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and needle in err and "Traceback" not in err


def test_catalogue_reader_keeps_line_numbers():
    text = "Part,Lot Size,AQL,RQL\nA,,1%,6%\n\nB,500,1%\nC,500,1%,6%,extra\n"
    df = read_catalogue(io.StringIO(text))
    assert df["_line"].tolist() == [2, 4, 5]
    t = design_catalogue(df).table
    assert t["error"].tolist()[1:] == ["the line has 3 field(s), the header has 4",
                                       "the line has 5 field(s), the header has 4"]


def test_progress_is_reported_and_the_bar_stays_off_without_a_terminal():
    from lotwise.data.batch import progress_bar

    calls = []
    cat = catalogue(300, seed=2)
    res = design_catalogue(cat, progress=lambda done, total: calls.append((done, total)),
                           chunk=50)
    assert calls[0] == (0, res.distinct) and calls[-1] == (res.distinct, res.distinct)
    assert all(a[0] <= b[0] for a, b in zip(calls, calls[1:]))
    cb, close = progress_bar(300, stream=io.StringIO())
    assert cb is None
    close()


def test_a_rerun_of_the_output_replaces_the_old_plan_columns(tmp_path, capsys):
    src = tmp_path / "cat.csv"
    src.write_text("part,lot_size,aql,rql\nA,,1%,6%\n")
    out = tmp_path / "plans.csv"
    assert main(["batch", str(src), "--out", str(out)]) == 0
    again = tmp_path / "again.csv"
    assert main(["batch", str(out), "--out", str(again)]) == 0
    capsys.readouterr()
    assert again.read_text() == out.read_text()


def test_classes_of_rows_give_the_rows_designed_one_by_one():
    # Reference: design_catalogue on each row alone (a one-row catalogue: no
    # classes, no sharing), for a seeded random catalogue of 300 rows in which
    # texts repeat in different spellings (5% and 0.05, "" and the default) and
    # bad rows carry their reason in the error column.
    import random

    rng = random.Random(20)
    cols = {"lot_size": ["", "500", "2000", "x1", "20", "1_000"],
            "aql": ["1%", "0.01", "0.65%", "7%", "1.5", "0.5"],
            "rql": ["6%", "0.06", "5%", "8%", "2"],
            "alpha": ["", "5%", "0.05", "95%", "bad"],
            "beta": ["", "10%", "0.1", "0.2"],
            "scheme": ["", "single", "Single", "double", "triple"],
            "fixed_c": ["", "", "1", "-1"],
            "per_unit": ["", "no", "yes", "maybe"],
            "deliveries_per_year": ["", "12", "52", "x", "-3"]}
    cat = pd.DataFrame({"part": [f"R{i}" for i in range(300)],
                        **{c: [rng.choice(v) for _ in range(300)] for c, v in cols.items()}})
    res = design_catalogue(cat, deliveries_per_year=7)
    assert res.distinct < 300 and (res.table["error"] != "").any()
    assert (res.table["error"] == "").any()
    for i in range(300):
        one = design_catalogue(cat.iloc[[i]], deliveries_per_year=7).table.iloc[0]
        got = res.table.iloc[i]
        for col in OUTPUT:
            a, b = got[col], one[col]
            assert (pd.isna(a) and pd.isna(b)) or a == b, (i, col, a, b)
