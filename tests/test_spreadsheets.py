"""Spreadsheets and locales: .xlsx workbooks in and out, CSV files written with a
decimal comma and semicolons, and quality levels typed with a decimal comma.

Sources: the decimal comma as the decimal sign of most of continental Europe, and
the semicolon as the list separator its spreadsheets then write to CSV (common
practice, no source; ISO 80000-1:2009, clause 7.3.2, allows either the comma or
the point as decimal sign, from memory); the Office Open XML workbook format
(ECMA-376, 5th edition, 2016, from memory) as openpyxl reads and writes it, a
sheet holding at most 1,048,576 rows. Each check compares a file in one form
with its twin in the plain form (comma-separated, decimal points): both must
give the same answers.
"""

from __future__ import annotations

import datetime
import io
import json
from pathlib import Path

import openpyxl
import pandas as pd
import pytest

from lotwise.cli import main
from lotwise.core.quantities import InputError, parse_count, parse_level, parse_risk

ROOT = Path(__file__).resolve().parent.parent
PLAN_COLUMNS = ["n", "c", "plan", "model_used", "alpha_actual", "beta_actual",
                "full_inspection", "error"]


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


# --- the decimal comma in quality levels and risks --------------------------------

@pytest.mark.parametrize("text, value", [
    ("0,65%", 0.65 / 100),    # a preferred AQL written with a decimal comma
    ("0,065%", 0.065 / 100),  # leading zero: cannot be a thousands separator
    ("1,5 %", 1.5 / 100),
    ("0,01", 0.01),
    (",5%", 0.5 / 100),
    ("2,5ppm", 2.5e-6),
    ("1,500%", 1.5 / 100),    # 1500 % is no level: the comma can only be decimal
    ("0.65%", 0.65 / 100),    # the decimal point as before
])
def test_level_with_decimal_comma(text, value):
    # Common practice, no source: "0,65 %" is how a decimal-comma locale writes 0.65 %.
    assert parse_level(text, "--aql") == value


@pytest.mark.parametrize("text, words", [
    ("1,500ppm", "ambiguous"),   # 1.5 ppm or 1500 ppm: both are levels
    ("1,2,3", "must be a number"),
    ("1.5,2", "must be a number"),
])
def test_level_comma_refused_where_ambiguous(text, words):
    with pytest.raises(InputError, match=words):
        parse_level(text, "--aql")


@pytest.mark.parametrize("text, value", [("1,000", 1000), ("12,500", 12500), ("1_000", 1000)])
def test_counts_keep_the_thousands_separator(text, value):
    # Common practice, no source: a count is whole, so "1,000" is one thousand.
    assert parse_count(text, "--lot-size") == value


def test_risk_with_decimal_comma():
    assert parse_risk("2,5%", "--alpha") == 2.5 / 100


@pytest.mark.parametrize("args", [
    ["design", "--aql", "0,65%", "--rql", "4%", "--lot-size", "5000", "--json"],
    ["check", "--plan", "n=164,c=3", "--aql", "0,65%", "--rql", "4,0%", "--json"],
])
def test_command_line_takes_decimal_comma_levels(capsys, args):
    code, out, err = run(capsys, *args)
    ref = [a.replace("0,65%", "0.65%").replace("4,0%", "4%") for a in args]
    code2, out2, _ = run(capsys, *ref)
    assert code == code2 and json.loads(out) == json.loads(out2), err


# --- CSV files with semicolons and decimal commas ---------------------------------

def _comma_twin(text: str, sep: str = ";", thousands: bool = False) -> str:
    """A plain catalogue rewritten as a decimal-comma spreadsheet exports it."""
    lines = []
    for line in text.splitlines():
        out = []
        for c in line.split(","):
            if thousands and c.isdigit() and len(c) > 3:
                out.append(f"{int(c):,}".replace(",", "."))  # 200000 -> 200.000
            else:
                out.append(c.replace(".", ","))  # 0.65% -> 0,65%
        lines.append(sep.join(out))
    return "\n".join(lines) + "\n"


CATALOGUE = ("part,lot_size,aql,rql,alpha,beta\n"
             "P-1,5000,0.65%,4%,5%,10%\n"
             "P-2,1060,1.5%,12%,0.05,0.1\n"
             "P-3,200000,0.065%,0.4%,2.5%,5%\n"
             "P-4,60,2.5%,25%,,\n")


@pytest.mark.parametrize("name, sep, thousands", [
    ("semicolons, decimal commas", ";", False),
    ("tabs, decimal commas", "\t", False),
    ("semicolons, decimal commas, thousands dots", ";", True),
])
def test_decimal_comma_catalogue_equals_its_twin(tmp_path, capsys, name, sep, thousands):
    (tmp_path / "plain.csv").write_text(CATALOGUE)
    twin = _comma_twin(CATALOGUE, sep, thousands)
    assert "0,65%" in twin and (not thousands or "200.000" in twin)
    (tmp_path / "twin.csv").write_text(twin)
    _, ref, _ = run(capsys, "batch", str(tmp_path / "plain.csv"), "--out", "-")
    code, out, err = run(capsys, "batch", str(tmp_path / "twin.csv"), "--out", "-")
    assert code == 0, (name, err)
    a, b = pd.read_csv(io.StringIO(out)), pd.read_csv(io.StringIO(ref))
    pd.testing.assert_frame_equal(a[PLAN_COLUMNS], b[PLAN_COLUMNS])
    assert "numbers with a decimal comma" in err, err
    assert ("semicolons" if sep == ";" else "tabs") in err


def test_mixed_decimal_marks_are_refused(tmp_path, capsys):
    (tmp_path / "c.csv").write_text("part;lot_size;aql;rql\nP-1;500;0,65%;4%\nP-2;500;1.5%;12%\n")
    code, out, err = run(capsys, "batch", str(tmp_path / "c.csv"), "--out", "-")
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert "'0,65%'" in err and "'1.5%'" in err


def test_semicolons_without_decimals_keep_points(tmp_path, capsys):
    (tmp_path / "c.csv").write_text(CATALOGUE.replace(",", ";"))
    (tmp_path / "p.csv").write_text(CATALOGUE)
    _, ref, _ = run(capsys, "batch", str(tmp_path / "p.csv"), "--out", "-")
    code, out, err = run(capsys, "batch", str(tmp_path / "c.csv"), "--out", "-")
    assert code == 0 and out == ref
    assert "decimal point" in err


def test_records_with_decimal_comma_file(tmp_path, capsys):
    # The lot log as a decimal-comma spreadsheet writes it: semicolons and thousands
    # dots (the O-ring lots of 200.000). A lot log holds no decimals, so the file is
    # decimal-comma only if a thousands dot is read as such: 200.000 is 200000.
    text = (ROOT / "examples" / "lots.csv").read_text()
    twin = "\n".join(";".join(f"{int(c):,}".replace(",", ".") if c.isdigit() and len(c) > 3
                              else c for c in line.split(","))
                     for line in text.splitlines()) + "\n"
    assert ";200.000;" in twin
    (tmp_path / "lots.csv").write_text(twin)
    args = ["--plans", str(ROOT / "plans"), "--json"]
    _, ref, _ = run(capsys, "records", str(ROOT / "examples" / "lots.csv"), *args)
    code, out, err = run(capsys, "records", str(tmp_path / "lots.csv"), *args)
    a, b = json.loads(out), json.loads(ref)
    assert "skipped" not in err, err
    assert (a["rows_used"], a["groups"], a["findings"]) == (b["rows_used"], b["groups"],
                                                            b["findings"])


@pytest.mark.parametrize("name, transform", [
    ("decimal comma", lambda v: v.replace(".", ",")),
    ("decimal comma, trailing semicolon", lambda v: v.replace(".", ",") + ";"),
])
def test_judge_reads_decimal_comma_measurements(tmp_path, capsys, name, transform):
    lines = (ROOT / "examples" / "shafts.csv").read_text().splitlines()
    (tmp_path / "m.csv").write_text(lines[0] + "\n" + "\n".join(transform(v) for v in lines[1:])
                                    + "\n")
    plan = "variables: n=42,k=1.901,upper=25.0"
    _, ref, _ = run(capsys, "judge", "--plan", plan, str(ROOT / "examples" / "shafts.csv"),
                    "--json")
    code, out, err = run(capsys, "judge", "--plan", plan, str(tmp_path / "m.csv"), "--json")
    a, b = json.loads(out), json.loads(ref)
    a.pop("source"), b.pop("source")
    assert a == b, (name, err)
    assert "decimal comma" in err


def test_judge_refuses_mixed_marks(tmp_path, capsys):
    (tmp_path / "m.csv").write_text("x\n24,95\n24.97\n")
    code, _, err = run(capsys, "judge", "--plan", "variables: n=2,k=1.0,upper=25.0",
                       str(tmp_path / "m.csv"))
    assert code == 2 and "mixes decimal commas" in err and len(err.strip().splitlines()) == 1


# --- CSV written for a decimal-comma spreadsheet ----------------------------------

@pytest.mark.parametrize("flags, sep", [
    (["--decimal-comma"], ";"),
    (["--decimal-comma", "--csv-sep", "tab"], "\t"),
    (["--csv-sep", ";"], ";"),
])
def test_batch_output_for_a_comma_spreadsheet(tmp_path, capsys, flags, sep):
    cat = str(ROOT / "examples" / "catalogue.csv")
    ref_code, ref, _ = run(capsys, "batch", cat, "--out", "-")
    code, out, err = run(capsys, "batch", cat, "--out", "-", *flags)
    assert code == ref_code == 1, err  # line 10 of the example fails on purpose (exit 1)
    dec = "," if "--decimal-comma" in flags else "."
    a = pd.read_csv(io.StringIO(out), sep=sep, decimal=dec)
    b = pd.read_csv(io.StringIO(ref))
    pd.testing.assert_frame_equal(a, b)
    if dec == ",":
        assert "0,0217" in out and "n=164,c=3" in out  # numbers changed, plan notation not


@pytest.mark.parametrize("args", [
    ["oc", "--plan", "n=80,c=2", "--points", "5"],
    ["oc", "--plan", "n=80,c=2", "--lot-size", "500", "--points", "5"],
    ["oc", "--plan", "variables: n=42,k=1.901,upper=25.0,sigma=unknown", "--points", "5"],
    ["oc", "--plan", "csp1: i=139,f=0.1", "--points", "5"],
])
def test_oc_csv_with_decimal_comma(capsys, args):
    _, ref, _ = run(capsys, *args, "--csv", "-")
    code, out, err = run(capsys, *args, "--csv", "-", "--decimal-comma")
    assert code == 0, err
    a = pd.read_csv(io.StringIO(out), sep=";", decimal=",")
    pd.testing.assert_frame_equal(a, pd.read_csv(io.StringIO(ref)))


@pytest.mark.parametrize("flags, words", [
    (["--decimal-comma", "--csv-sep", ","], "--csv-sep"),
    (["--csv-sep", "|"], "--csv-sep"),
])
def test_bad_csv_style_refused(capsys, flags, words):
    code, out, err = run(capsys, "oc", "--plan", "n=80,c=2", "--csv", "-", *flags)
    assert code == 2 and words in err and len(err.strip().splitlines()) == 1


# --- workbooks -------------------------------------------------------------------

def _workbook(path, text: str, *, numbers: bool = True, dates: bool = False) -> None:
    """``text`` (CSV) as a workbook a user would keep: plain numbers as number
    cells, dates as date cells, the rest as text."""
    wb = openpyxl.Workbook()
    ws = wb.active
    for line in pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False).pipe(
            lambda d: [list(d.columns)] + d.values.tolist()):
        row = []
        for v in line:
            if numbers and v.isdigit():
                v = int(v)
            elif dates and len(v) == 10 and v[4] == "-" and v[7] == "-":
                v = datetime.datetime.fromisoformat(v)
            row.append(v if v != "" else None)
        ws.append(row)
    wb.save(path)


@pytest.mark.parametrize("numbers", [True, False])
def test_batch_xlsx_round_trip_equals_the_csv_path(tmp_path, capsys, numbers):
    cat = ROOT / "examples" / "catalogue.csv"
    _workbook(tmp_path / "cat.xlsx", cat.read_text(), numbers=numbers)
    code, _, err = run(capsys, "batch", str(cat), "--out", str(tmp_path / "plans.csv"))
    assert code in (0, 1), err
    code, _, err = run(capsys, "batch", str(tmp_path / "cat.xlsx"), "--out",
                       str(tmp_path / "plans.xlsx"))
    assert code in (0, 1), err
    a = pd.read_excel(tmp_path / "plans.xlsx", engine="openpyxl")
    b = pd.read_csv(tmp_path / "plans.csv")
    pd.testing.assert_frame_equal(a, b, check_dtype=False)


def test_records_from_a_workbook_with_date_cells(tmp_path, capsys):
    lots = ROOT / "examples" / "lots.csv"
    _workbook(tmp_path / "lots.xlsx", lots.read_text(), dates=True)
    args = ["--plans", str(ROOT / "plans"), "--json"]
    _, ref, _ = run(capsys, "records", str(lots), *args)
    code, out, err = run(capsys, "records", str(tmp_path / "lots.xlsx"), *args)
    a, b = json.loads(out), json.loads(ref)
    assert "skipped" not in err, err
    assert (a["rows_used"], a["groups"], a["findings"]) == (b["rows_used"], b["groups"],
                                                            b["findings"])


def test_workbook_rows_are_numbered_as_the_sheet_shows(tmp_path, capsys):
    _workbook(tmp_path / "c.xlsx", "part,lot_size,aql,rql\nP-1,500,1%,8%\nP-2,abc,1%,8%\n")
    code, out, err = run(capsys, "batch", str(tmp_path / "c.xlsx"), "--out",
                         str(tmp_path / "p.xlsx"), "--json")
    assert json.loads(out)["errors"][0]["line"] == 3  # the sheet's row 3


@pytest.mark.parametrize("args", [
    ["oc", "--plan", "n=80,c=2", "--points", "5", "--csv"],
    ["draw", "--lot-size", "1000", "--n", "20", "--seed", "7", "--strata", "boxes=10",
     "--csv"],
])
def test_xlsx_tables_hold_the_csv_numbers(tmp_path, capsys, args):
    code, _, err = run(capsys, *args, str(tmp_path / "t.csv"))
    assert code == 0, err
    code, _, err = run(capsys, *args, str(tmp_path / "t.xlsx"))
    assert code == 0, err
    pd.testing.assert_frame_equal(pd.read_excel(tmp_path / "t.xlsx", engine="openpyxl"),
                                  pd.read_csv(tmp_path / "t.csv"))


@pytest.mark.parametrize("content, words", [
    (b"not a workbook", "not a readable .xlsx workbook"),
    (None, "does not exist"),
])
def test_bad_workbook_is_one_line(tmp_path, capsys, content, words):
    if content is not None:
        (tmp_path / "c.xlsx").write_bytes(content)
    code, out, err = run(capsys, "batch", str(tmp_path / "c.xlsx"), "--out", "-")
    assert code == 2 and words in err and len(err.strip().splitlines()) == 1


def test_xlsx_output_refuses_csv_options(tmp_path, capsys):
    code, _, err = run(capsys, "oc", "--plan", "n=80,c=2", "--csv", str(tmp_path / "t.xlsx"),
                       "--decimal-comma")
    assert code == 2 and "CSV files only" in err and not (tmp_path / "t.xlsx").exists()
