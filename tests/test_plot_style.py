"""How every figure reads: legends outside the data area and clear of the ticks,
eight curves told apart in grey print, titles in words, plain decimal labels on
log axes. Conventions of technical graphics (common practice, no source); the
checks measure the drawn figure (matplotlib's renderer), not our intentions."""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

from lotwise.core.types import Scope, Targets
from lotwise.families.double import DoublePlan
from lotwise.families.single import SinglePlan

ROOT = Path(__file__).resolve().parents[1]
EIGHT = [SinglePlan(n=80, c=2), SinglePlan(n=125, c=3), SinglePlan(n=50, c=1),
         DoublePlan(n1=50, c1=1, n2=100, c2=3), SinglePlan(n=200, c=5), SinglePlan(n=32, c=0),
         SinglePlan(n=100, c=2), SinglePlan(n=150, c=4)]


# --------------------------------------------------------------------------
# Every figure kind
# --------------------------------------------------------------------------

def _oc():
    from lotwise.documents.plots.style import oc_figure

    return oc_figure([(SinglePlan(n=80, c=2), Scope())], aql=0.01, rql=0.06)


def _oc_lot():
    from lotwise.documents.plots.style import oc_figure

    return oc_figure([(SinglePlan(n=80, c=2), Scope(lot_size=500))], aql=0.01, rql=0.06)


def _compare8():
    from lotwise.documents.plots.style import oc_figure

    return oc_figure([(p, Scope()) for p in EIGHT], models=["binomial"], aql=0.01, rql=0.06)


def _asn():
    from lotwise.documents.plots.multistage import asn_figure

    return asn_figure([(DoublePlan(n1=50, c1=1, n2=100, c2=3), Scope())], aql=0.01, rql=0.05,
                      curtailed=True)


def _oc_asn():
    from lotwise.documents.plots.multistage import oc_asn_figure

    return oc_asn_figure(DoublePlan(n1=80, c1=1, n2=160, c2=6), Scope(), aql=0.01, rql=0.05)


def _design_tradeoff():
    from lotwise.analysis.tradeoff import asn_tradeoff
    from lotwise.documents.plots.multistage import tradeoff_figure

    return tradeoff_figure(asn_tradeoff(Targets(aql=0.01, rql=0.05), Scope(), model="binomial"))


def _sequential():
    from lotwise.documents.plots.multistage import sequential_figure
    from lotwise.families.sequential import design_sequential

    return sequential_figure(design_sequential(aql=0.01, rql=0.05, model="binomial").plan)


def _rectifying():
    from lotwise.documents.plots.rectifying import rectifying_figure

    return rectifying_figure(SinglePlan(n=80, c=2), Scope(lot_size=1000), aql=0.01, rql=0.06)


def _aoq():
    from lotwise.documents.plots.rectifying import aoq_figure

    return aoq_figure(SinglePlan(n=50, c=1), Scope(lot_size=1000))


def _zero():
    from lotwise.analysis.zero import zero_equivalent
    from lotwise.documents.plots.zero import equivalent_figure

    return equivalent_figure(zero_equivalent(SinglePlan(n=125, c=3), Scope(), aql=0.01))


def _scheme():
    from lotwise.analysis.switching import Scheme
    from lotwise.documents.plots.switching import scheme_figure

    s = Scheme(normal=SinglePlan(n=80, c=2), tightened=SinglePlan(n=80, c=1),
               reduced=SinglePlan(n=32, c=1))
    return scheme_figure(s, Scope(), points=41, aql=0.01, rql=0.08)


def _variables():
    from lotwise.documents.plots.variables import variables_oc_figure
    from lotwise.families.variables import VariablesPlan

    return variables_oc_figure(VariablesPlan(n=42, k=1.901, limit="upper"), aql=0.01, rql=0.06,
                               attributes_plan=SinglePlan(n=110, c=3))


def _normal():
    from lotwise.documents.plots.variables import normal_probability_figure

    return normal_probability_figure([20.1, 21.3, 19.8, 22.0, 20.5, 21.1, 23.0, 20.0],
                                     upper=25.0, title="Normal probability plot")


def _records():
    from lotwise.data.records import read_records, summarise
    from lotwise.documents.plots.charts import run_charts_figure

    lots = read_records(ROOT / "examples/lots.csv", plans_dir=ROOT / "plans")
    return run_charts_figure(sorted(summarise(lots).groups, key=lambda g: -g.lots))


def _tradeoff_rows():
    from lotwise.analysis.supplier import tradeoff

    return tradeoff([0.00065, 0.001, 0.0025, 0.005, 0.01, 0.02, 0.03, 0.04],
                [r / 100 for r in range(1, 11)], alpha=0.05, beta=0.10, lot_size=None,
                model="binomial", process_average=0.008)


def _tradeoff():
    from lotwise.documents.plots.charts import tradeoff_figure

    return tradeoff_figure(_tradeoff_rows())


FIGURES = {"oc": _oc, "oc lot": _oc_lot, "compare 8": _compare8, "asn": _asn,
           "oc+asn": _oc_asn, "design trade-off": _design_tradeoff, "sequential": _sequential,
           "rectifying": _rectifying, "aoq": _aoq, "zero": _zero, "scheme": _scheme,
           "variables": _variables, "normal plot": _normal, "records": _records,
           "tradeoff": _tradeoff}


def _overlap(a, b, tol=0.5) -> bool:
    return (min(a.x1, b.x1) - max(a.x0, b.x0) > tol) and (min(a.y1, b.y1) - max(a.y0, b.y0) > tol)


@pytest.fixture(scope="module")
def drawn():
    out = {}
    for name, make in FIGURES.items():
        fig = make()
        fig.canvas.draw()
        out[name] = fig
    return out


@pytest.mark.parametrize("name", list(FIGURES))
def test_legends_outside_data_area_and_ticks(drawn, name):
    fig = drawn[name]
    r = fig.canvas.get_renderer()
    legends = [ax.get_legend() for ax in fig.axes if ax.get_legend() is not None]
    assert legends, f"{name}: no legend"
    page = fig.bbox
    for leg in legends:
        box = leg.get_window_extent(r)
        # inside the figure (not cut off)
        assert box.x0 >= page.x0 - 1 and box.x1 <= page.x1 + 1, name
        assert box.y0 >= page.y0 - 1 and box.y1 <= page.y1 + 1, name
        for ax in fig.axes:
            assert not _overlap(box, ax.bbox), f"{name}: legend over a data area"
            for axis in (ax.xaxis, ax.yaxis):
                for t in axis.get_ticklabels() + axis.get_ticklabels(minor=True):
                    if t.get_visible() and t.get_text():
                        assert not _overlap(box, t.get_window_extent(r)), \
                            f"{name}: legend over tick label {t.get_text()!r}"
                if axis.label.get_text():
                    assert not _overlap(box, axis.label.get_window_extent(r)), \
                        f"{name}: legend over the axis label"


def test_eight_curves_differ_in_dash_and_marker_in_grey(drawn):
    from lotwise.documents.plots.style import CYCLE

    fig = drawn["compare 8"]
    curves = [ln for ln in fig.axes[0].get_lines()
              if any(p.label in ln.get_label() for p in EIGHT)]
    assert len(curves) == 8
    markers = [ln.get_marker() for ln in curves]
    assert len(set(markers)) == 8 and not {"o", "s"} & set(markers)  # o, s: AQL and RQL
    dashes = [str(c["linestyle"]) for c in CYCLE]
    assert len(set(dashes)) == 8
    # each curve drawn with its own dash pattern (matplotlib keeps the pattern it was given)
    patterns = {str(ln._unscaled_dash_pattern) for ln in curves}
    assert len(patterns) == 8
    for ln in curves:  # greys only: grey print loses nothing
        r, g, b, _ = ln.get_color() if not isinstance(ln.get_color(), str) else \
            (*[float(ln.get_color())] * 3, 1)
        assert r == g == b


def test_titles_in_words(drawn):
    for name, fig in drawn.items():
        for ax in fig.axes:
            for title in (ax.get_title("left"), ax.get_title()):
                # no single letters standing for marker shapes ("AQL o, RQL s")
                assert not re.search(r"\b(AQL|RQL) [a-z]\b", title), (name, title)
    assert drawn["design trade-off"].axes[0].get_title("left") == \
        "Average sample number, binomial model"


@pytest.mark.parametrize("name,axis", [("tradeoff", "y"), ("tradeoff", "x"), ("scheme", "y")])
def test_log_axes_labelled_in_plain_decimals(drawn, name, axis):
    fig = drawn[name]
    log_axes = [ax for ax in fig.axes
                if (ax.get_yscale() if axis == "y" else ax.get_xscale()) == "log"]
    assert log_axes
    for ax in log_axes:
        a = ax.yaxis if axis == "y" else ax.xaxis
        texts = [t.get_text() for t in a.get_ticklabels() + a.get_ticklabels(minor=True)
                 if t.get_text()]
        assert texts
        for t in texts:
            assert re.fullmatch(r"[0-9,]+(\.[0-9]+)?", t), (name, t)


def test_plain_log_labels_over_less_than_a_decade():
    # A span of 300 to 900: matplotlib would write "6 x 10^2"; we write 600.
    from lotwise.documents.plots.style import new_axes, plain_log_axis

    fig, ax = new_axes()
    ax.plot([1, 2], [300, 900])
    ax.set_yscale("log")
    plain_log_axis(ax.yaxis)
    fig.canvas.draw()
    texts = [t.get_text() for t in ax.yaxis.get_ticklabels(minor=True) if t.get_text()]
    assert texts and all(re.fullmatch(r"[0-9]+", t) for t in texts), texts
    assert "600" in texts or "500" in texts


@pytest.mark.parametrize("value,text", [
    (600.0, "600"), (0.002, "0.002"), (1000.0, "1,000"), (12000.0, "12,000"), (1.25, "1.25"),
    (1e-5, "0.00001"), (0.0, "0"),
])
def test_plain_decimal(value, text):
    from lotwise.documents.plots.style import plain_decimal

    assert plain_decimal(value) == text


def test_axes_on_a_page_make_room_for_their_legend():
    # A sheet places the OC axes in a fixed block of the page; the axes are
    # shortened so the legend below them ends above the block's bottom.
    from lotwise.documents.plots.style import legend_above, legend_outside, mpl, oc_figure

    fig = mpl().figure(figsize=(8.5, 11))
    floor = 0.50
    ax = fig.add_axes([0.1, floor + 0.03, 0.45, 0.2])
    oc_figure([(p, Scope()) for p in EIGHT[:5]], models=["binomial"], aql=0.01, rql=0.06,
              ax=ax)
    legend_outside(ax, fontsize=6, ncol=2)
    r = fig.canvas.get_renderer()
    assert ax.get_legend().get_window_extent(r).y0 < floor * fig.bbox.height  # it overflowed
    legend_above(ax, floor)
    fig.canvas.draw()
    box = ax.get_legend().get_window_extent(r)
    assert box.y0 >= floor * fig.bbox.height - 0.5
    assert not _overlap(box, ax.bbox)
    assert ax.get_position().height > 0.05
