"""A part whose characteristic no plan can meet: the others are still designed, the
part is flagged, and every failure is printed with its characteristic and reason.

Sources: exact hypergeometric sums by scipy.stats.hypergeom (independent of
lotwise's kernels); the rounding rule (the AQL's count rounded up, the RQL's
down: the conservative way for each risk) is the README's; that a c = 0 sample
of n from a lot of N holding one nonconforming item misses it with probability
1 - n/N is exact counting (C(N-1, n)/C(N, n) = (N - n)/N).
"""

from __future__ import annotations

import contextlib
import io
import json
import math

import pytest
from scipy import stats

from lotwise.cli import main
from lotwise.documents.partplan import resolve
from lotwise.documents.planfile import loads


def run(args):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main([str(a) for a in args])
    return code, out.getvalue(), err.getvalue()


PART = """
[part]
id = "P-2"
[lot]
size = {N}
[[characteristic]]
id = "C1"
class = "critical"
aql = "{aql}"
rql = "1.5%"
c = 0
[[characteristic]]
id = "M1"
class = "major"
aql = "1%"
rql = "6%"
{extra}
"""


def smallest_c0(N, d2, beta):
    """Smallest n with Pa(0 found | N, D = d2, n) <= beta (scipy.stats.hypergeom)."""
    return next(n for n in range(1, N + 1) if stats.hypergeom(N, d2, n).pmf(0) <= beta)


def smallest_single(N, d1, d2, alpha=0.05, beta=0.10):
    """Smallest (n, c) meeting both risks at whole counts d1, d2 (brute force, scipy)."""
    for n in range(1, N + 1):
        h1, h2 = stats.hypergeom(N, d1, n), stats.hypergeom(N, d2, n)
        for c in range(0, n + 1):
            if h1.cdf(c) < 1 - alpha - 1e-12:
                continue
            if h2.cdf(c) <= beta + 1e-12:
                return n, c
            break  # a larger c only raises Pa at the RQL
    raise AssertionError("no plan")


@pytest.mark.parametrize("N, aql", [(2000, "0.01%"), (1000, "0.02%"), (5000, "0.001%")])
def test_rounding_infeasibility_names_the_rounding_and_n_over_N(N, aql):
    # AQL p*N is a fraction of an item, so its count rounds up to 1; the c = 0 sample
    # meeting beta at the RQL count floor(0.015 N) then rejects that lot with
    # probability n/N (exact counting).
    a = float(aql.rstrip("%")) / 100
    assert 0 < a * N < 1
    n = smallest_c0(N, math.floor(0.015 * N + 1e-9), 0.10)
    pp = resolve(loads(PART.format(N=N, aql=aql, extra=""), "p.toml"))
    if n / N <= 0.05:  # the rounding leaves alpha within its target: C1 is designed
        assert not pp.failed
        return
    assert [f["characteristic"]["id"] for f in pp.failed] == ["C1"]
    why = pp.failed[0]["reason"]
    assert f"rounds up to 1 nonconforming item" in why and "n/N" in why
    assert f"{n:,}/{N:,}" in why
    # M1 is still designed, on its own, as if C1 were not in the file.
    m1 = smallest_single(N, math.ceil(0.01 * N - 1e-9), math.floor(0.06 * N + 1e-9))
    assert [r["characteristic"]["id"] for r in pp.reports] == ["M1"]
    assert (pp.n, pp.reports[0]["c"]) == m1
    assert not pp.meets


def test_check_prints_every_failure_with_id_and_reason(tmp_path):
    f = tmp_path / "two.toml"
    f.write_text(PART.format(N=2000, aql="0.01%", extra=""))
    code, out, _ = run(["check", f])
    assert code == 1
    assert "two.toml C1: NO PLAN: no sample size works with c = 0" in out
    assert "147/2,000 = 7.35 %" in out  # smallest_c0(2000, 30, 0.1) = 147; 147/2000
    assert smallest_c0(2000, 30, 0.10) == 147
    line = next(ln for ln in out.splitlines() if ln.strip().startswith("two.toml") and " M1 " in ln)
    assert "meets" in line
    code, out, _ = run(["check", f, "--json"])
    items = json.loads(out)["characteristics"]
    c1 = next(i for i in items if i["characteristic"] == "C1")
    assert code == 1 and c1["meets"] is False and "rounds up" in c1["problem"]
    assert next(i for i in items if i["characteristic"] == "M1")["meets"] is True


def test_falls_short_reason_beside_the_characteristic():
    # The gasket proposal n = 32, c = 1 in a lot of 2,000 at RQL 8 %: D2 = 160,
    # beta = hypergeom(2000, 160, 32).cdf(1) = 26.0 % > 10 %.
    beta = stats.hypergeom(2000, 160, 32).cdf(1)
    assert round(100 * beta, 1) == 26.0
    code, out, _ = run(["check", "plans/qp-6630-gasket-proposal.toml"])
    assert code == 1
    assert "qp-6630-gasket-proposal.toml M1: FALLS SHORT: beta 26.0 % is above its target" in out


@pytest.mark.parametrize("truncate", [5, 10])
def test_own_sample_failure_leaves_the_others(truncate):
    # Common practice, no source: a part is flagged, not dropped, when one of its
    # characteristics has no plan. A sequential plan stopped at `truncate` units sees at
    # most that many; by the Neyman-Pearson lemma no rule on them beats the single plan on
    # all of them, and no such plan holds alpha 5 % at 1 % and beta 10 % at 6 % (scipy):
    assert not any(stats.binom.cdf(c, truncate, 0.01) >= 0.95
                   and stats.binom.cdf(c, truncate, 0.06) <= 0.10 for c in range(truncate + 1))
    text = PART.format(N=2000, aql="0.01%", extra=(
        f'[[characteristic]]\nid = "S1"\nclass = "minor"\naql = "1%"\nrql = "6%"\n'
        f'scheme = "sequential"\ntruncate = {truncate}\n'))
    pp = resolve(loads(text, "p.toml"))
    assert [f["characteristic"]["id"] for f in pp.failed] == ["C1", "S1"]
    assert "sequential design" in pp.failed[1]["reason"]
    assert [r["characteristic"]["id"] for r in pp.reports] == ["M1"]
    assert not pp.meets


def test_sheet_lists_the_characteristic_without_a_plan(tmp_path):
    f = tmp_path / "two.toml"
    f.write_text(PART.format(N=2000, aql="0.01%", extra=""))
    code, out, _ = run(["sheet", f, "--out", tmp_path / "s"])
    assert code == 1 and "P-2 C1: NO PLAN:" in out
    md = (tmp_path / "s" / "two.md").read_text()
    assert "NO PLAN for C1" in md and "| C1 | critical | no plan |" in md
