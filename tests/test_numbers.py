"""Numbers as every output writes them (lotwise.core.numbers): quality levels and
probabilities in the terminal, on sheets, in CSV files and on the page; the
seeds of pick lists; stratum labels."""

from __future__ import annotations

import csv
import io
import json
import re
import shutil
import subprocess
from pathlib import Path

import pytest

from lotwise.cli import main
from lotwise.core.numbers import csv_number, level, percent, probability, significant
from lotwise.data.draw import draw_units, singular, stratum_label

ROOT = Path(__file__).resolve().parents[1]

# --------------------------------------------------------------------------
# The formatter: display conventions, common practice, no source. The values
# are exact strings: the convention is the specification.
# --------------------------------------------------------------------------

PERCENT = [
    # (fraction, digits, text)
    (0.0123, 3, "1.23 %"),
    (0.1, 3, "10.0 %"),
    (0.05, 3, "5.00 %"),
    (1.0, 3, "100 %"),
    (0.001, 3, "0.100 %"),        # 0.1 % itself stays in percent
    (0.0009999, 3, "0.100 %"),    # rounds to 0.1 %: the unit follows the rounded value
    (0.000999, 3, "999 ppm"),     # below 0.1 %: parts per million
    (3.6e-4, 3, "360 ppm"),
    (2.5e-5, 3, "25.0 ppm"),
    (3.6e-8, 3, "0.0360 ppm"),    # formerly "0.00000360 %", wider than its column
    (3.6e-10, 3, "3.60e-04 ppm"),  # below 0.001 ppm: powers of ten, never a run of zeros
    (1e-15, 3, "1.00e-09 ppm"),   # the smallest quality level the parsers accept
    (0.0, 3, "0 %"),
    (None, 3, "-"),
    (float("nan"), 3, "-"),
    (0.01625, 4, "1.625 %"),
    (0.099999999999, 3, "10.0 %"),
]


@pytest.mark.parametrize("x,digits,text", PERCENT)
def test_percent(x, digits, text):
    assert percent(x, digits) == text


LEVEL = [
    # (fraction or per-unit rate, per_unit, text): quality levels, trailing zeros dropped
    (0.01, False, "1 %"),
    (0.0065, False, "0.65 %"),
    (0.0123456, False, "1.235 %"),
    (2.5e-4, False, "250 ppm"),
    (1e-6, False, "1 ppm"),
    (3.6e-10, False, "3.6e-04 ppm"),
    (0.0, False, "0 %"),
    (0.5, True, "0.5 per unit"),
    (3.0, True, "3 per unit"),
    (0.1 + 0.2, True, "0.3 per unit"),  # float noise never shown
]


@pytest.mark.parametrize("x,per_unit,text", LEVEL)
def test_level(x, per_unit, text):
    assert level(x, per_unit) == text


PROBABILITY = [
    # (probability, decimals, text): Pa as a decimal
    (0.953452, 4, "0.9535"),
    (1.0, 4, "1.0000"),
    (0.0, 4, "0.0000"),
    (0.00005, 4, "0.0001"),       # half a unit of the last place still rounds up
    (0.0000499, 4, "5e-05"),      # would print as 0.0000: two significant figures
    (3.6e-7, 4, "3.6e-07"),
    (0.123456, 5, "0.12346"),
    (None, 4, "-"),
]


@pytest.mark.parametrize("x,decimals,text", PROBABILITY)
def test_probability(x, decimals, text):
    assert probability(x, decimals) == text


CSV_CELLS = [
    # (value, cell): at most ten significant digits, whole numbers plainly
    (0.006500000000000001, "0.0065"),
    (0.1 + 0.2, "0.3"),
    (2 / 3, "0.6666666667"),
    (0.09938337193713838, "0.09938337194"),
    (-2.4880272078697807e-05, "-2.488027208e-05"),
    (1.0, "1"),
    (0.0, "0"),
    (80, "80"),
    (True, "True"),
    (None, ""),
    (float("nan"), ""),
    (123456789012.0, "123456789000"),
]


@pytest.mark.parametrize("value,cell", CSV_CELLS)
def test_csv_number(value, cell):
    assert csv_number(value) == cell


def test_significant_digits_bound():
    # The number of significant digits of significant(x, d) never exceeds d.
    for x in (1 / 7, 1e-300 / 3, 2**0.5 * 1e12, 0.006500000000000001, 123.456789012345):
        for d in (1, 3, 10):
            assert _digits(significant(x, d)) <= d


# --------------------------------------------------------------------------
# The page's mirror (web/static/app.js) writes what Python writes
# --------------------------------------------------------------------------

def _js_functions() -> str:
    text = (ROOT / "src/lotwise/web/static/app.js").read_text()
    start = text.index("function g(")
    end = text.index("const fmtUnits")
    return text[start:end]


@pytest.mark.skipif(shutil.which("node") is None, reason="node is not installed")
def test_page_mirror_matches_python():
    cases = ([("fmtPct", [x, d], percent(x, d)) for x, d, _ in PERCENT
              if x is not None and x == x]
             + [("fmtLevel", [x, pu], level(x, pu)) for x, pu, _ in LEVEL]
             + [("fmtPa", [x, d], probability(x, d)) for x, d, _ in PROBABILITY if x is not None])
    script = _js_functions() + "\nconst cases = " + json.dumps(
        [[f, a] for f, a, _ in cases]) + ";\nconsole.log(JSON.stringify(cases.map(" \
        "([f, a]) => ({fmtPct, fmtLevel, fmtPa})[f](...a))));\n"
    out = subprocess.run(["node", "-e", script], capture_output=True, text=True, timeout=60)
    assert out.returncode == 0, out.stderr
    got = json.loads(out.stdout)
    assert got == [want for _, _, want in cases]


# --------------------------------------------------------------------------
# No CSV written by the tool carries float noise (at most 10 significant digits)
# --------------------------------------------------------------------------

def _digits(text: str) -> int:
    """Significant digits of a number written in decimal or e-notation
    (zeros at either end of the digits do not count)."""
    return len(text.lstrip("-").split("e")[0].replace(".", "").strip("0")) or 1


def _numeric_cells(path: Path):
    for row in csv.reader(io.StringIO(path.read_text())):
        for cell in row:
            try:
                float(cell)
            except ValueError:
                continue
            yield cell


def _check_csv(path: Path) -> int:
    cells = list(_numeric_cells(path))
    assert cells, path
    long = [c for c in cells if _digits(c) > 10]
    assert not long, (path.name, long[:5])
    return len(cells)


def test_csv_files_of_oc_tradeoff_batch_and_sheet_have_at_most_10_digits(tmp_path, capsys):
    # 0.013 / 6 steps: the grid 0.0065 came out as 0.006500000000000001 before.
    oc = tmp_path / "oc.csv"
    assert main(["oc", "--plan", "n=80,c=2", "--max-p", "0.013", "--points", "7",
                 "--csv", str(oc)]) == 0
    assert "0.0065," in oc.read_text()
    _check_csv(oc)
    lot = tmp_path / "oc-lot.csv"
    assert main(["oc", "--plan", "n1=50,c1=1,n2=100,c2=3", "--lot-size", "700",
                 "--csv", str(lot)]) == 0
    _check_csv(lot)
    tr = tmp_path / "tradeoff.csv"
    assert main(["tradeoff", "--aql", "0.65%,1%", "--rql", "2%..8%:1.5%",
                 "--process-average", "0.3%", "--csv", str(tr)]) == 0
    _check_csv(tr)
    out = tmp_path / "plans.csv"
    assert main(["batch", str(ROOT / "examples/catalogue.csv"), "--out", str(out)]) == 1  # line 10 fails on purpose
    _check_csv(out)
    sheets = tmp_path / "sheets"
    assert main(["sheet", str(ROOT / "plans/qp-1104-relief-spring.toml"), "-o",
                 str(sheets)]) == 0
    for f in sheets.glob("*.csv"):
        if not f.name.endswith("-record.csv"):  # the blank record form holds no numbers
            _check_csv(f)
    sw = tmp_path / "sw"
    assert main(["sheet", str(ROOT / "plans/qp-8840-switching.toml"), "-o", str(sw)]) == 0
    assert list(sw.glob("*.csv"))
    for f in sw.glob("*.csv"):
        _check_csv(f)
    capsys.readouterr()


def test_records_writes_no_csv_and_its_text_has_no_float_noise(capsys):
    # `lotwise records` writes no CSV of its own; its text uses the same formatter.
    assert main(["records", str(ROOT / "examples/lots.csv"), "--plans",
                 str(ROOT / "plans")]) == 0
    out = capsys.readouterr().out
    assert not re.search(r"\d\.\d{11,}", out), "a number with more than 10 decimals"
    assert not re.search(r"0\.0000+\d", out.replace("0.0000 ", "")), "a run of zeros"


# --------------------------------------------------------------------------
# Seeds of automatic pick lists: at most 10 digits
# --------------------------------------------------------------------------

def test_fresh_draw_seeds_have_at_most_10_digits(capsys):
    seeds = {draw_units(lot_size=1000, n=20).seed for _ in range(200)}
    assert all(0 <= s < 10**10 for s in seeds) and len(seeds) > 190
    assert main(["draw", "--lot-size", "500", "--n", "13", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert len(str(d["seed"])) <= 10
    # the text tells how to re-create the list with that seed
    assert main(["draw", "--lot-size", "500", "--n", "13"]) == 0
    text = capsys.readouterr().out
    assert re.search(r"--seed \d{1,10}\b", text) and re.search(r"Seed: \d{1,10} ", text)


def test_a_39_digit_seed_of_an_earlier_version_is_still_read():
    # Lists drawn before fresh seeds were shortened must be re-created.
    old = 231987268135574674582160703481454675424
    assert draw_units(lot_size=200, n=10, seed=old).seed == old


def test_sheet_pick_list_seed_has_at_most_10_digits(tmp_path, capsys):
    # A plan file without sampling.seed draws with a seed from its fingerprint.
    from lotwise.documents.partplan import pick_seed
    from lotwise.documents.planfile import load

    for f in sorted((ROOT / "plans").glob("*.toml")):
        req = load(f)
        assert len(str(pick_seed(req))) <= 10, f.name
    # the largest seed from a fingerprint: eight hex digits
    assert len(str(int("f" * 8, 16))) == 10


# --------------------------------------------------------------------------
# Stratum labels: the index in words. English plural rules for regular nouns
# (common practice, no source).
# --------------------------------------------------------------------------

@pytest.mark.parametrize("name,word", [
    ("trays", "tray"), ("cartons", "carton"), ("pallets", "pallet"), ("boxes", "box"),
    ("batches", "batch"), ("bodies", "body"), ("Pallets", "Pallet"), ("reels", "reel"),
    ("glass", "glass"), ("stratum", "stratum"), ("crate", "crate"), ("bus", "bus"),
])
def test_singular(name, word):
    assert singular(name) == word


@pytest.mark.parametrize("strata,labels", [
    ("trays=3", ["tray 1 of 3", "tray 2 of 3", "tray 3 of 3"]),
    ("boxes=10,20", ["box 1 of 2", "box 2 of 2"]),
    ("4", ["stratum 1 of 4", "stratum 2 of 4", "stratum 3 of 4", "stratum 4 of 4"]),
])
def test_stratum_labels(strata, labels):
    d = draw_units(lot_size=30 if "," in strata else 40, n=8, seed=1, strata=strata)
    assert [s.label for s in d.strata] == labels
    assert {p.stratum for p in d.picks} <= set(labels)
    assert stratum_label("trays", 1, 20) == "tray 1 of 20"


def test_draw_text_shows_stratum_of_count(capsys):
    assert main(["draw", "--lot-size", "200", "--n", "10", "--strata", "trays=20",
                 "--seed", "7"]) == 0
    out = capsys.readouterr().out
    assert re.search(r"tray \d+ of 20", out) and "trays 1 " not in out
