"""Every plan family everywhere: the same plan gives the same numbers through
every command, plan files design any family, ``--plan FILE#CHAR`` works for
``next``, ``judge`` and ``draw``, and ``batch`` designs every family.

The consistency matrix runs each family (single, double, multiple,
sequential, chain, variables with one limit) in each scope it supports
(process, a finite lot whose AQL and RQL are whole counts, a finite lot
whose AQL is not a whole count, nonconformities per unit), designed and as a
fixed plan, through ``design --json``, ``check --plan --json``,
``check FILE --json``, the Markdown sheet, ``oc --at --json`` and
``compare --json``, and asks for identical ``Pa`` at the AQL and the RQL,
alpha, beta and verdict (1e-12 relative where a value is recomputed; at the
printed precision for the sheet).

Sources of the reference values beside the agreement itself:

* single, double, multiple and chain plans: ``Pa`` enumerated from
  ``scipy.stats`` (binom, hypergeom, poisson), which the code does not call
  on this path (its kernels use ``scipy.special``); the formulas are those of
  D. C. Montgomery, *Introduction to Statistical Quality Control*, 7th ed.
  (Wiley, 2013), sec. 15.2 (single and double plans, from memory) and
  H. F. Dodge, "Chain sampling inspection plan", *Industrial Quality
  Control* 11(4), 1955 (ChSP-1: ``Pa = P0 + P1 P0^i``, from memory);
* the variables s-method: ``scipy.stats.nct`` (the code calls
  ``scipy.special.nctdtr``), after G. J. Lieberman and G. J. Resnikoff,
  "Sampling plans for inspection by variables", *JASA* 50, 1955 (from memory);
* sequential plans: their OC is checked against independent sources in
  ``tests/test_sequential.py``; here only the agreement is checked.
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import re
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from lotwise.cli import main
from lotwise.families.base import parse_plan

ROOT = Path(__file__).resolve().parents[1]
REL = 1e-12  # relative tolerance where a value is recomputed (floating-point order only)
CSV_REL = 5e-10  # a value read back from CSV, written to 10 significant digits


def run(*args) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main([str(a) for a in args])
    return code, out.getvalue(), err.getvalue()


def run_json(*args) -> tuple[int, dict]:
    code, out, err = run(*args)
    assert "could not complete the request" not in err, err
    assert out.strip(), f"no JSON from {args}: {err}"
    return code, json.loads(out)


# --- the matrix ----------------------------------------------------------------

#: (family, targets per scope kind, fixed notation, designer options as
#: command-line options, the same as plan-file keys)
FAMILIES = {
    "single": dict(levels=("1%", "8%"), fixed="n=80,c=3", cli=[], keys={}),
    "double": dict(levels=("1%", "8%"), fixed="n1=40,c1=0,r1=3,n2=40,c2=3",
                   cli=["--ratio", "1"], keys={"ratio": 1.0}),
    "multiple": dict(levels=("1%", "8%"), fixed="multiple: n=20/20/20; c=-/1/3; r=2/3/4",
                     cli=None, keys=None),
    "sequential": dict(levels=("1%", "8%"),
                       fixed="sequential: h1=1.0458,h2=1.3426,s=0.03406,truncate=150",
                       cli=["--truncate", "150"], keys={"truncate": 150}),
    "chain": dict(levels=("0.5%", "8%"), fixed="chain: n=28,i=2", cli=[], keys={}),
    "variables": dict(levels=("1%", "8%"), fixed="variables: n=28,k=1.821,upper=10.0",
                      cli=["--sigma", "unknown", "--upper", "10"],
                      keys={"sigma": "unknown", "upper": 10.0}),
}

#: Scopes: lot size (None: process) and whether levels are per unit.
SCOPES = {
    "process": dict(lot=None, per_unit=False),
    "lot": dict(lot=2000, per_unit=False),       # AQL and RQL are whole counts of the lot
    "lot-odd": dict(lot=1250, per_unit=False),   # the AQL is not: conservative rounding shows
    "per-unit": dict(lot=None, per_unit=True),
}


def cells():
    for fam, spec in FAMILIES.items():
        for scope, sc in SCOPES.items():
            if fam == "variables" and sc["per_unit"]:
                continue  # a variables plan judges a fraction nonconforming
            for variant in ("fixed", "designed"):
                if variant == "designed" and spec["cli"] is None:
                    continue  # multiple plans have no designer
                yield pytest.param(fam, scope, variant, id=f"{fam}-{scope}-{variant}")


def levels(fam, scope):
    a, r = FAMILIES[fam]["levels"]
    if SCOPES[scope]["per_unit"]:  # the same numbers, per unit
        return str(float(a.rstrip("%")) / 100), str(float(r.rstrip("%")) / 100)
    return a, r


def scope_args(scope):
    sc = SCOPES[scope]
    return (["--lot-size", str(sc["lot"])] if sc["lot"] else []) + (
        ["--per-unit"] if sc["per_unit"] else [])


def numbers_of(rep: dict) -> dict:
    """Pa(AQL), Pa(RQL), alpha, beta, meets of a design/check report of any family."""
    src = rep["models"][rep["model"]] if "models" in rep else rep
    return {k: src[k] for k in ("pa_aql", "pa_rql", "alpha", "beta", "meets")}


def notation_of(rep: dict) -> str:
    if rep.get("notation"):
        return rep["notation"]
    if rep["scheme"] == "chain":
        return f"chain: n={rep['n']},i={rep['i']}"
    return f"n={rep['n']},c={rep['c']}"


def plan_file(tmp_path: Path, fam, scope, variant, plan=None) -> Path:
    a, r = levels(fam, scope)
    sc = SCOPES[scope]
    lines = ["[part]", 'id = "T-1"', "[lot]"]
    if sc["lot"]:
        lines.append(f"size = {sc['lot']}")
    if sc["per_unit"]:
        lines.append('counts = "nonconformities"')
    lines += ["[[characteristic]]", 'id = "C1"', 'class = "major"', f'aql = "{a}"',
              f'rql = "{r}"']
    if variant == "fixed":
        lines.append(f'plan = "{plan}"')
    else:
        lines.append(f'scheme = "{fam}"')
        lines += [f"{k} = {json.dumps(v)}" for k, v in FAMILIES[fam]["keys"].items()]
    path = tmp_path / f"{fam}-{scope}-{variant}.toml"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _printed(text: str) -> tuple[float, float]:
    """A number as printed ("0.9745" or "2.72 %") and half its last digit, as fractions."""
    t = text.strip()
    pct = t.endswith("%")
    num = t.rstrip("%").strip()
    decimals = len(num.split(".")[1]) if "." in num else 0
    scale = 0.01 if pct else 1.0
    return float(num) * scale, 0.5 * 10.0 ** -decimals * scale * (1 + 1e-9)


def sheet_numbers(md: str) -> dict:
    """The starred (judging-model) row of the sheet's risk table."""
    for line in md.splitlines():
        cells_ = [c.strip() for c in line.strip().strip("|").split("|")]
        if len(cells_) == 9 and cells_[1].endswith("*"):
            return {"pa_aql": _printed(cells_[2]), "alpha": _printed(cells_[3]),
                    "pa_rql": _printed(cells_[5]), "beta": _printed(cells_[6]),
                    "meets": cells_[8] == "meets"}
    raise AssertionError("no risk row for the judging model on the sheet:\n" + md)


def same(a, b, what):
    if isinstance(a, bool) or isinstance(b, bool):
        assert a == b, what
    else:
        assert math.isclose(a, b, rel_tol=REL, abs_tol=1e-15), f"{what}: {a!r} != {b!r}"


@pytest.mark.parametrize("fam,scope,variant", list(cells()))
def test_consistency_matrix(tmp_path, fam, scope, variant):
    a, r = levels(fam, scope)
    sa = scope_args(scope)
    results = {}
    if variant == "designed":
        code, rep = run_json("design", "--scheme", fam, "--aql", a, "--rql", r, *sa,
                             *FAMILIES[fam]["cli"], "--json")
        assert code == 0, rep
        notation = notation_of(rep)
        results["design"] = numbers_of(rep)
    else:
        notation = FAMILIES[fam]["fixed"]
    _, rep = run_json("check", "--plan", notation, "--aql", a, "--rql", r, *sa, "--json")
    results["check --plan"] = ref = numbers_of(rep)

    path = plan_file(tmp_path, fam, scope, variant, notation)
    _, doc = run_json("check", str(path), "--json")
    item = doc["characteristics"][0]
    # The file states (fixed) or designs (as design does) the same plan.
    assert parse_plan(item["notation"]) == parse_plan(notation), (item["notation"], notation)
    results["check FILE"] = {k: item[k] for k in ("pa_aql", "pa_rql", "alpha", "beta", "meets")}

    _, cmp_ = run_json("compare", "--plan", notation, "--plan", notation, "--aql", a,
                       "--rql", r, *sa, "--json")
    results["compare"] = {k: cmp_["plans"][0][k] for k in ("pa_aql", "pa_rql", "alpha", "beta",
                                                           "meets")}
    if scope != "lot-odd":  # oc rounds a level to the nearest whole count (its lot_count column)
        _, oc = run_json("oc", "--plan", notation, "--at", a, "--at", r, *sa, "--json")
        col = oc["columns"].index("pa" if fam == "variables" else rep["model"])
        pa_a, pa_r = oc["rows"][0][col], oc["rows"][1][col]
        results["oc"] = {"pa_aql": pa_a, "pa_rql": pa_r, "alpha": 1 - pa_a, "beta": pa_r}

    for name, got in results.items():
        for key, value in got.items():
            same(value, ref[key], f"{fam}/{scope}/{variant}: {name} {key}")

    code, _, err = run("sheet", str(path), "--out", str(tmp_path / "sheets"))
    assert code in (0, 1), err
    md = (tmp_path / "sheets" / f"{path.stem}.md").read_text(encoding="utf-8")
    printed = sheet_numbers(md)
    for key in ("pa_aql", "pa_rql", "alpha", "beta"):
        value, half = printed[key]
        assert abs(value - ref[key]) <= half, f"{fam}/{scope}/{variant}: sheet {key} " \
            f"{value} against {ref[key]}"
    assert printed["meets"] == ref["meets"]
    if fam != "single":  # the sheet says the characteristic keeps its own plan
        assert "not the common sample" in md

    expected = independent_pa(fam, notation, scope, a, r)
    if expected is not None:
        assert math.isclose(ref["pa_aql"], expected[0], rel_tol=1e-9, abs_tol=1e-12)
        assert math.isclose(ref["pa_rql"], expected[1], rel_tol=1e-9, abs_tol=1e-12)


# --- independent acceptance probabilities -------------------------------------

def _level(text, per_unit):
    return float(text.rstrip("%")) / (1 if per_unit else 100)


def _counts(scope, a, r):
    """Lot counts rounded up at the AQL and down at the RQL (the documented
    conservative convention), or the levels themselves without a lot."""
    N = SCOPES[scope]["lot"]
    if N is None:
        return None, None
    return math.ceil(a * N - 1e-9), math.floor(r * N + 1e-9)


def _stage(dist, n, x):
    """P(X = x) for one stage of n units (dist is 'binom' p, 'poisson' p or a
    (N, D) lot for the hypergeometric)."""
    kind, q = dist
    if kind == "binom":
        return stats.binom.pmf(x, n, q)
    if kind == "poisson":
        return stats.poisson.pmf(x, n * q)
    N, D = q
    return stats.hypergeom.pmf(x, N, D, n)


def _after(dist, n, x):
    """The distribution left for the next stage after n units held x."""
    kind, q = dist
    if kind == "hyper":
        N, D = q
        return kind, (N - n, D - x)
    return dist


def staged_pa(ns, cs, rs, dist) -> float:
    """Pa of a plan in stages by enumeration: accept on a cumulative count at
    most c_k, reject at r_k or more, else the next stage."""
    def go(k, total, dist):
        pa = 0.0
        for x in range(0, rs[k] - total):
            p = _stage(dist, ns[k], x)
            t = total + x
            if cs[k] is not None and t <= cs[k]:
                pa += p
            elif k + 1 < len(ns):
                pa += p * go(k + 1, t, _after(dist, ns[k], x))
        return pa
    return go(0, 0, dist)


def independent_pa(fam, notation, scope, a_text, r_text):
    per_unit = SCOPES[scope]["per_unit"]
    a, r = _level(a_text, per_unit), _level(r_text, per_unit)
    N = SCOPES[scope]["lot"]
    da, dr = _counts(scope, a, r)

    def dist(level, d):
        if N is not None:
            return ("hyper", (N, d))
        return ("poisson", level) if per_unit else ("binom", level)

    nums = dict(re.findall(r"([a-z]+\d?)=([-\d./]+)", notation))
    if fam == "single":
        n, c = int(nums["n"]), int(nums["c"])
        return tuple(staged_pa([n], [c], [c + 1], dist(lv, d)) for lv, d in ((a, da), (r, dr)))
    if fam == "double":
        ns = [int(nums["n1"]), int(nums["n2"])]
        cs = [int(nums["c1"]), int(nums["c2"])]
        rs = [int(nums["r1"]), cs[1] + 1]
        return tuple(staged_pa(ns, cs, rs, dist(lv, d)) for lv, d in ((a, da), (r, dr)))
    if fam == "multiple":
        ns = [int(v) for v in nums["n"].split("/")]
        cs = [None if v == "-" else int(v) for v in re.search(r"c=([-\d/]+)", notation)
              .group(1).split("/")]
        rs = [int(v) for v in nums["r"].split("/")]
        return tuple(staged_pa(ns, cs, rs, dist(lv, d)) for lv, d in ((a, da), (r, dr)))
    if fam == "chain":  # ChSP-1: Pa = P0 + P1 P0^i (one sample of n from each lot)
        n, i = int(nums["n"]), int(nums["i"])
        out = []
        for lv, d in ((a, da), (r, dr)):
            p0, p1 = (_stage(dist(lv, d), n, x) for x in (0, 1))
            out.append(p0 + p1 * p0 ** i)
        return tuple(out)
    if fam == "variables":  # s-method, upper limit: Pa = P(T >= k sqrt(n)), T ~ nct(n-1, sqrt(n) z_p)
        n, k = int(nums["n"]), float(nums["k"])
        return tuple(float(stats.nct.sf(k * np.sqrt(n), n - 1, np.sqrt(n) * stats.norm.isf(lv)))
                     for lv in (a, r))
    return None


# --- three failures seen before, now passing ------------------------------------

@pytest.mark.parametrize("plan,needle", [
    ("chain: n=20,i=3", "--clean-lots"),  # a bench rule that needs the earlier lots' record
    ("variables: n=28,k=1.821,upper=10", "bench rule"),
    ("skiplot: n=20,c=0,i=4,f=0.25", "bench rule")])
def test_next_without_a_bench_rule_is_one_line_exit_2(plan, needle):
    # The command-line contract (README, bad input): one line on stderr, exit 2,
    # nothing on stdout. Common practice, no source.
    code, out, err = run("next", "--plan", plan, "--inspected", "20", "--found", "0")
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and needle in err


def test_compare_multiple_and_single_plans_in_a_lot():
    code, doc = run_json("compare", "--plan", "multiple: n=20/20/20; c=-/1/3; r=2/3/4",
                         "--plan", "n=50,c=1", "--aql", "1%", "--rql", "8%",
                         "--lot-size", "500", "--json")
    assert code in (0, 1)
    multi, single = doc["plans"]
    assert multi["scheme"] == "multiple" and single["scheme"] == "single"
    # Lot of 500: AQL 1 % -> 5, RQL 8 % -> 40 nonconforming; Pa by enumeration of the
    # stages with scipy.stats.hypergeom (Montgomery, 7th ed., 2013, sec. 15.2, from memory).
    for row, (ns, cs, rs) in ((multi, ([20, 20, 20], [None, 1, 3], [2, 3, 4])),
                              (single, ([50], [1], [2]))):
        assert math.isclose(row["pa_aql"], staged_pa(ns, cs, rs, ("hyper", (500, 5))),
                            rel_tol=1e-9)
        assert math.isclose(row["pa_rql"], staged_pa(ns, cs, rs, ("hyper", (500, 40))),
                            rel_tol=1e-9)


def test_double_plan_aoql_follows_the_aoq_formula():
    base = ["check", "--plan", "n1=50,c1=1,n2=100,c2=3", "--aql", "1%", "--rql", "5%",
            "--lot-size", "2000", "--json"]
    _, simple = run_json(*base, "--aoq-formula", "simple")
    _, screened = run_json(*base)
    assert simple["rectifying"]["formula"] == "simple"
    assert screened["rectifying"]["formula"] == "screened"
    s = {"value": simple["aoql"], "at": simple["aoql_p"]}
    d = {"value": screened["aoql"], "at": screened["aoql_p"]}
    # Screening the sample removes what it finds, so the simple p Pa is the larger.
    assert s["value"] > d["value"]
    # The simple AOQ is p Pa(p) (E. G. Schilling and D. V. Neubauer, 2nd ed., CRC Press,
    # 2009, ch. 11, from memory): at the reported level it equals
    # D/N Pa(D) enumerated with scipy.stats.hypergeom, and no count does much better
    # (the report searches a grid of about 200 levels).
    N = 2000
    D = round(s["at"] * N)
    pa = lambda k: staged_pa([50, 100], [1, 3], [4, 4], ("hyper", (N, k)))  # noqa: E731
    assert math.isclose(s["value"], D / N * pa(D), rel_tol=1e-9)
    best = max(k / N * pa(k) for k in range(D - 15, D + 16))
    assert s["value"] >= best * (1 - 1e-12)  # the AOQL is the maximum over whole counts


# --- plan files: any family with a designer ---------------------------------------

GOOD = '''[part]
id = "P-1"
[lot]
size = 2000
[[characteristic]]
id = "M1"
class = "major"
aql = "1%"
rql = "8%"
'''


def _write(tmp_path, text, name="p.toml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.parametrize("extra,message", [
    ('scheme = "double"\nratoi = 1.0\n', "characteristic[1].ratoi: unknown key; did you mean "
     "'ratio'?"),
    ('scheme = "double"\ntruncate = 100\n',
     'characteristic[1].truncate needs characteristic[1].scheme = "sequential" (it is '
     "'double')"),
    ('scheme = "double"\nratio = 20\n',
     "characteristic[1].ratio (20) must be a number from 0.1 to 10"),
    ('scheme = "double"\nminimize = "asn"\n',
     "characteristic[1].minimize ('asn') must be one of: asn-aql, asn-max"),
    ('scheme = "sequential"\ntruncate = 1.5\n',
     "characteristic[1].truncate (1.5) must be a whole number of at least 1"),
    ('scheme = "multiple"\n', "characteristic[1].scheme ('multiple') must be one of: single, "
     "double, sequential, chain, variables"),
    ('scheme = "double"\nplan = "n=80,c=2"\n',
     "characteristic[1].scheme ('double') does not match characteristic[1].plan (a single "
     "plan); give one of them"),
    ('plan = "n1=50,c1=1,n2=100,c2=3"\nratio = 1.0\n',
     "characteristic[1].plan cannot be combined with characteristic[1].ratio"),
    ('scheme = "chain"\nc = 1\n', "characteristic[1].c (1) applies to scheme single"),
    ('scheme = "variables"\nsigma = "known"\nupper = 10.0\n',
     "characteristic[1].sigma (known) needs characteristic[1].sigma_value"),
    ('scheme = "variables"\n', "characteristic[1].scheme (variables) needs "
     "characteristic[1].upper and/or characteristic[1].lower"),
])
def test_plan_file_scheme_keys_are_checked(tmp_path, extra, message):
    # The plan-file contract (README): file, key path, value and what is allowed.
    path = _write(tmp_path, GOOD + extra)
    code, out, err = run("check", str(path))
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert f"{path}: " in err and message in err, err


def test_plan_file_designer_error_names_the_key(tmp_path):
    path = _write(tmp_path, GOOD + 'scheme = "sequential"\ntruncate = 5000\n')
    code, _, err = run("check", str(path))
    assert code == 2
    assert f"{path}: characteristic[1].scheme (sequential): characteristic[1].truncate (5000) " \
           "must not be greater than the lot size (2000)" in err, err


def test_plan_file_mixes_families_and_keeps_own_plans(tmp_path):
    text = GOOD + '''scheme = "double"
ratio = 1.0
[[characteristic]]
id = "M2"
class = "major"
aql = "1%"
rql = "8%"
scheme = "sequential"
truncate = 120
[[characteristic]]
id = "m1"
class = "minor"
aql = "2.5%"
rql = "15%"
'''
    path = _write(tmp_path, text)
    code, doc = run_json("check", str(path), "--json")
    by = {i["characteristic"]: i for i in doc["characteristics"]}
    # Each designed characteristic carries the plan its family's designer gives alone.
    for cid, args in (("M1", ["--scheme", "double", "--ratio", "1"]),
                      ("M2", ["--scheme", "sequential", "--truncate", "120"])):
        _, rep = run_json("design", *args, "--aql", "1%", "--rql", "8%", "--lot-size", "2000",
                          "--json")
        assert by[cid]["notation"] == rep["notation"] and by[cid]["own_sample"]
        assert "not the common sample" in by[cid]["note"]
    # The single characteristic shares the common sample: at least the largest own plan.
    assert by["m1"]["scheme"] == "single" and not by["m1"]["own_sample"]
    assert by["m1"]["n"] >= 120
    code, out, _ = run("check", str(path))
    assert "M2: own sequential plan (designed), not the common sample" in out


# --- --plan FILE#CHAR -----------------------------------------------------------

SHAFT = ROOT / "plans" / "qp-7730-drive-shaft.toml"


def test_next_takes_a_plan_file_characteristic(tmp_path):
    path = _write(tmp_path, GOOD + 'scheme = "double"\nratio = 1.0\n')
    _, doc = run_json("check", str(path), "--json")
    notation = doc["characteristics"][0]["notation"]
    for inspected, found in ((35, 0), (35, 1), (70, 2), (35, 3)):
        by_file = run_json("next", "--plan", f"{path}#M1", "--inspected", inspected,
                           "--found", found, "--json")
        by_notation = run_json("next", "--plan", notation, "--inspected", inspected,
                               "--found", found, "--json")
        assert by_file == by_notation


def test_judge_takes_a_plan_file_characteristic():
    _, doc = run_json("check", str(SHAFT), "--json")
    notation = next(i for i in doc["characteristics"] if i["characteristic"] == "M1")["notation"]
    assert notation.startswith("variables:")
    values = ",".join(f"{24.90 + 0.002 * k:.3f}" for k in range(42))
    a = run_json("judge", "--plan", f"{SHAFT}#M1", "--values", values, "--json")
    b = run_json("judge", "--plan", notation, "--values", values, "--json")
    assert a == b


def test_draw_takes_a_plan_file_characteristic(tmp_path):
    # The pick list of draw --plan FILE#CHAR is the sheet's (same lot, size and seed).
    code, _, _ = run("sheet", str(SHAFT), "--out", str(tmp_path))
    sheet_units = [int(line.split(",")[1]) for line in (tmp_path / "qp-7730-drive-shaft-"
                   "picklist.csv").read_text().splitlines()[1:]]
    _, d = run_json("draw", "--plan", f"{SHAFT}#m1", "--json")
    assert d["lot_size"] == 1500 and d["seed"] == 773001 and d["units"] == sheet_units
    _, plain = run_json("draw", "--lot-size", 1500, "--n", d["n"], "--seed", 773001, "--json")
    assert plain["units"] == d["units"]


@pytest.mark.parametrize("ref,message", [
    (f"{SHAFT}#M9", "no characteristic 'M9'"),
    (f"{SHAFT}", "the file holds 2 characteristics (M1, m1); name one"),
    ("plans/none.toml#M1", "no such plan file"),
])
def test_plan_reference_errors_are_one_line(ref, message):
    for cmd in (["next", "--plan", ref, "--inspected", "1", "--found", "0"],
                ["judge", "--plan", ref, "--values", "1,2,3"],
                ["draw", "--plan", ref]):
        code, out, err = run(*cmd)
        assert code == 2 and out == "" and len(err.strip().splitlines()) == 1
        assert f"--plan ({ref})" in err and message in err, err


def test_draw_plan_notation_needs_a_lot_size():
    code, _, err = run("draw", "--plan", "n1=50,c1=1,n2=100,c2=3")
    assert code == 2 and "--lot-size is required" in err
    _, d = run_json("draw", "--plan", "n1=50,c1=1,n2=100,c2=3", "--lot-size", 500,
                    "--seed", 3, "--json")
    assert d["n"] == 150  # the most units the double plan may inspect


# --- batch: the scheme column -------------------------------------------------------

def test_batch_designs_every_family_as_design_does(tmp_path):
    cat = tmp_path / "cat.csv"
    cat.write_text(
        "part,lot_size,aql,rql,scheme,ratio,truncate,sigma,upper\n"
        "S,2000,1%,8%,single,,,,\n"
        "D,2000,1%,8%,double,1,,,\n"
        "Q,2000,1%,8%,sequential,,150,,\n"
        "C,2000,0.5%,8%,chain,,,,\n"
        "V,,1%,8%,variables,,,unknown,10\n"
        "X,2000,1%,8%,single,2,,,\n"
        "Y,2000,1%,8%,multiple,,,,\n", encoding="utf-8")
    out = tmp_path / "out.csv"
    code, doc = run_json("batch", str(cat), "--out", str(out), "--json")
    assert doc["designed"] == 5 and doc["failed"] == 2
    import csv

    rows = {r["part"]: r for r in csv.DictReader(out.open(encoding="utf-8"))}
    design = {"S": ["--scheme", "single"], "D": ["--scheme", "double", "--ratio", "1"],
              "Q": ["--scheme", "sequential", "--truncate", "150"], "C": ["--scheme", "chain"],
              "V": ["--scheme", "variables", "--sigma", "unknown", "--upper", "10"]}
    for part, args in design.items():
        r = rows[part]
        lot = ["--lot-size", r["lot_size"]] if r["lot_size"] else []
        _, rep = run_json("design", *args, "--aql", r["aql"], "--rql", r["rql"], *lot, "--json")
        assert r["plan"] == notation_of(rep), part
        got = numbers_of(rep)
        # the CSV keeps 10 significant digits (lotwise.core.numbers.csv_number)
        assert math.isclose(float(r["alpha_actual"]), got["alpha"], rel_tol=CSV_REL), part
        assert math.isclose(float(r["beta_actual"]), got["beta"], rel_tol=CSV_REL), part
        assert r["error"] == ""
    assert rows["D"]["n"] == "70" and rows["D"]["c"] == ""  # n1 + n2, no single c
    assert rows["V"]["model_used"] == "noncentral-t"
    assert rows["X"]["error"] == "ratio (2) applies to scheme double, not to single"
    assert rows["Y"]["error"].startswith("scheme (multiple) must be one of: single, double")
