"""A new plan family is one module plus one registry line.

The module below (written to a temporary folder at test time) defines a toy
family, ``zeroplan: n=..`` (accept on zero nonconforming in a sample of n), with
only the six members the plan interface asks for, a notation parser and a designer.
Registering it with one line in ``families.base.REGISTRY`` must make ``design``,
``check``, ``oc``, ``compare`` and ``next`` take it, with figures equal to the
closed forms: Pa = (1 - p)^n for a process (binomial), exp(-n u) for
nonconformities per unit, C(N - D, n) / C(N, n) for a lot (hypergeometric, zero
found), computed here with mpmath (general-purpose reference library, 30 digits;
tolerance 1e-9).
"""

from __future__ import annotations

import json
import sys
import textwrap

import mpmath
import pytest

from lotwise.cli import main
from lotwise.families import base

MODULE = textwrap.dedent('''
    from dataclasses import dataclass
    import numpy as np
    from scipy.special import gammaln

    from lotwise.core.quantities import InputError, Infeasible, parse_count
    from lotwise.families.base import Family, Plan


    @dataclass(frozen=True, kw_only=True)
    class ZeroPlan(Plan):
        n: int
        scheme = "zeroplan"

        def pa(self, p, model, scope, rounding="nearest"):
            p = np.asarray(p, dtype=float)
            if model == "poisson":
                return np.exp(-self.n * p)
            if model == "hypergeometric":
                N = scope.lot_size
                D = np.rint(p * N)
                return self.pa_count(D, scope)
            return (1.0 - p) ** self.n

        def pa_count(self, d, scope):
            N, n = scope.lot_size, self.n
            d = np.asarray(d, dtype=float)
            out = np.exp(gammaln(N - d + 1) - gammaln(N - d - n + 1)
                         - gammaln(N + 1) + gammaln(N - n + 1))
            return np.where(N - d >= n, out, 0.0)

        @property
        def max_sample(self):
            return self.n

        @property
        def label(self):
            return f"n={self.n}, zero found"

        def notation(self):
            return f"zeroplan: n={self.n}"

        def to_dict(self):
            return {"scheme": self.scheme, "n": self.n}


    def parse(pairs, text, option):
        if set(pairs) != {"n"}:
            raise InputError(f"{option} ({text!r}) takes n only")
        return ZeroPlan(n=parse_count(pairs["n"], f"{option} n", minimum=1))


    @dataclass(frozen=True, kw_only=True)
    class ZeroDesign:
        plan: ZeroPlan
        model: str

        def report_extra(self):
            return {}


    def design(*, aql, rql, alpha, beta, lot_size=None, model=None, per_unit=False):
        model = model or "binomial"
        # Pa at the RQL falls as n grows: the smallest n with (1 - rql)^n <= beta.
        n = 1
        while (1.0 - rql) ** n > beta:
            n += 1
        if (1.0 - aql) ** n < 1.0 - alpha:
            raise Infeasible(f"zero-acceptance needs n = {n}, which misses alpha")
        return ZeroDesign(plan=ZeroPlan(n=n), model=model)


    FAMILY = Family(name="zeroplan", plan_class=ZeroPlan, parse=parse, design=design)
''')


@pytest.fixture()
def zeroplan(tmp_path, monkeypatch):
    (tmp_path / "toy_zeroplan.py").write_text(MODULE)
    monkeypatch.syspath_prepend(str(tmp_path))
    monkeypatch.setitem(base.REGISTRY, "zeroplan", "toy_zeroplan")  # the one registry line
    yield
    sys.modules.pop("toy_zeroplan", None)


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def test_check_oc_compare_next_and_design(zeroplan, capsys):
    code, out, err = run(capsys, "check", "--plan", "zeroplan: n=45", "--aql", "0.1%",
                         "--rql", "5%", "--json")
    assert code == 0, err
    rep = json.loads(out)
    pa_aql = float(mpmath.power(1 - mpmath.mpf("0.001"), 45))
    pa_rql = float(mpmath.power(1 - mpmath.mpf("0.05"), 45))
    models = rep["models"]["binomial"]
    assert models["pa_aql"] == pytest.approx(pa_aql, abs=1e-9)
    assert models["pa_rql"] == pytest.approx(pa_rql, abs=1e-9)
    assert rep["notation"] == "zeroplan: n=45"

    code, out, err = run(capsys, "oc", "--plan", "zeroplan: n=45", "--lot-size", "500",
                         "--at", "2%", "--json")
    assert code == 0, err
    row = json.loads(out)["rows"][0]
    exact = mpmath.binomial(490, 45) / mpmath.binomial(500, 45)  # D = 10 of 500
    assert row[1] == pytest.approx(float(exact), abs=1e-9)

    code, out, err = run(capsys, "check", "--plan", "zeroplan: n=45", "--per-unit",
                         "--aql", "0.001", "--rql", "0.05", "--json")
    assert code == 1, err  # exp(-2.25) = 0.105 > beta 0.10: it falls short, exit 1
    assert json.loads(out)["models"]["poisson"]["pa_rql"] == pytest.approx(
        float(mpmath.exp(-45 * mpmath.mpf("0.05"))), abs=1e-9)

    code, out, err = run(capsys, "compare", "--plan", "zeroplan: n=45", "--plan", "n=45,c=0",
                         "--aql", "0.1%", "--rql", "5%", "--json")
    assert code == 0, err
    a, b = json.loads(out)["plans"]
    assert a["pa_rql"] == pytest.approx(b["pa_rql"], abs=1e-12)  # the same plan twice

    code, out, err = run(capsys, "design", "--scheme", "zeroplan", "--aql", "0.1%",
                         "--rql", "5%", "--json")
    assert code == 0, err
    # smallest n with 0.95^n <= 0.10 is 45 (ln 0.1 / ln 0.95 = 44.89)
    assert json.loads(out)["notation"] == "zeroplan: n=45"

    code, out, err = run(capsys, "design", "--scheme", "zeroplan", "--aql", "0.1%",
                         "--rql", "5%", "--ratio", "2")
    assert code == 2 and err.count("\n") == 1 and "--ratio (2)" in err


def test_next_without_a_bench_rule_is_one_line(zeroplan, capsys):
    code, out, err = run(capsys, "next", "--plan", "zeroplan: n=45", "--inspected", "45",
                         "--found", "0")
    assert code == 2 and err.count("\n") == 1 and "Traceback" not in err


def test_the_page_designs_it_as_the_command_line_does(zeroplan, capsys):
    from lotwise.web import commands
    from lotwise.analysis.outputs import json_safe
    from lotwise.web.query import Query

    code, out, err = run(capsys, "design", "--scheme", "zeroplan", "--aql", "0.1%",
                         "--rql", "5%", "--lot-size", "2000", "--json")
    assert code == 0, err
    q = Query(values={"scheme": ["zeroplan"], "aql": ["0.1%"], "rql": ["5%"],
                      "lot_size": ["2000"]})
    body = json_safe(commands.design(q).body)
    assert json.dumps(body, indent=2) + "\n" == out  # byte for byte, as tests/test_web.py
