"""The trade-off view and the figures for plans whose sample size varies."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest

from lotwise.core.types import Targets
from lotwise.families.single import design_single
from lotwise.families.double import DoublePlan
from lotwise.core.types import Scope
from lotwise.families.sequential import SequentialPlan
from lotwise.analysis.tradeoff import asn_tradeoff


@pytest.fixture(scope="module")
def result():
    return asn_tradeoff(Targets(aql=0.01, rql=0.05), Scope())


def test_rows_and_numbers(result):
    single, double, seq = result.rows
    assert (single.scheme, double.scheme, seq.scheme) == ("single", "double", "sequential")
    d = design_single(aql=0.01, rql=0.05)
    assert single.plan == d.plan and single.asn_aql == single.asn_rql == d.n
    # each row's numbers are its own plan's, under the same model
    assert double.pa_aql == pytest.approx(double.plan.pa(0.01, "binomial", Scope()), rel=1e-12)
    assert seq.asn_rql == pytest.approx(seq.plan.asn(0.05, "binomial", Scope()), rel=1e-12)
    # Fact of the trade: at the AQL the double and the
    # sequential plans inspect fewer units on average than the single one.
    assert single.asn_aql > double.asn_aql > seq.asn_aql
    assert seq.plan.truncate == 3 * d.n


def test_curves(result):
    assert len(result.asn_curves) == 3 and len(result.pa_curves) == 3
    for y in result.pa_curves.values():
        assert np.all(np.diff(y) <= 1e-12)
    out = result.as_dict(curves=True)
    assert out["scheme"] == "compare-all" and len(out["curves"]["p"]) == len(result.ps)


def test_infeasible_row_is_listed():
    t = asn_tradeoff(Targets(aql=0.01, rql=0.05), Scope(lot_size=60))
    by = {r.scheme: r for r in t.rows}
    assert by["double"].plan is None and by["double"].note


def test_figures():
    from lotwise.documents.plots.multistage import (asn_figure, oc_asn_figure, sequential_figure, tradeoff_figure)

    plan = DoublePlan(n1=50, c1=1, n2=100, c2=3)
    fig = asn_figure([(plan, Scope())], aql=0.01, rql=0.05, curtailed=True)
    assert len(fig.axes[0].lines) >= 3
    seq = SequentialPlan(h1=1.22, h2=1.57, s=0.0281, truncate=200)
    fig = sequential_figure(seq)
    assert fig.axes[0].get_xlabel() == "Units inspected n"
    fig = oc_asn_figure(plan, Scope(), aql=0.01, rql=0.05)
    assert len(fig.axes) == 2
    t = asn_tradeoff(Targets(aql=0.02, rql=0.10), Scope())
    fig = tradeoff_figure(t)
    assert len(fig.axes) == 2
    fig = asn_figure(t)
    assert len(fig.axes) == 1 and len(fig.axes[0].lines) >= 3


@pytest.mark.parametrize("args", [
    ["check", "--plan", "n1=50,c1=1,n2=100,c2=3", "--aql", "1%", "--rql", "5%", "--json"],
    ["oc", "--plan", "sequential: h1=1.22,h2=1.57,s=0.0281,truncate=100", "--json"],
    ["design", "--scheme", "double", "--aql", "1%", "--rql", "5%", "--json"],
])
def test_heavy_modules_stay_off_the_import_path(args):
    # Project rule: scipy.stats, pandas and matplotlib are not imported by
    # design, check and oc.
    code = ("import sys; from lotwise.cli import main; main(%r); "
            "bad = [m for m in ('scipy.stats', 'pandas', 'matplotlib') if m in sys.modules]; "
            "sys.stderr.write('HEAVY:' + ','.join(bad))" % (args,))
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert p.stderr.strip().endswith("HEAVY:"), p.stderr
