"""The second process a plan sheet draws its figures in
(lotwise.documents.sheets.aside): the same result as computed in this process,
the parent's own error when the child fails, no child left behind, and the
same sheet files either way (common practice, no source: a parallel path must
give the serial path's output)."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from lotwise.data.files import all_or_nothing
from lotwise.documents.sheets import aside

ROOT = Path(__file__).resolve().parents[1]

needs_fork = pytest.mark.skipif(not hasattr(os, "fork"), reason="no os.fork here")


def _big():
    return {"text": "x" * 1_000_000, "pid": os.getpid()}  # more than a pipe's buffer


@needs_fork
@pytest.mark.parametrize("enabled, in_child", [(True, True), (False, False)])
def test_result_from_child_or_here(monkeypatch, enabled, in_child):
    monkeypatch.setattr(aside, "ENABLED", enabled)
    monkeypatch.setattr(aside, "_processors", lambda: 2)
    got = aside.start(_big).result()
    assert got["text"] == "x" * 1_000_000
    assert (got["pid"] != os.getpid()) is in_child


@needs_fork
def test_child_failure_raises_in_parent(monkeypatch):
    monkeypatch.setattr(aside, "_processors", lambda: 2)
    calls = []

    def bad():
        calls.append(os.getpid())
        raise ValueError("no figure")

    job = aside.start(bad)
    with pytest.raises(ValueError, match="no figure"):
        job.result()
    assert calls == [os.getpid()]  # computed again here (the child's append is its own)


@needs_fork
def test_cancel_reaps_the_child(monkeypatch):
    import time

    monkeypatch.setattr(aside, "_processors", lambda: 2)
    job = aside.start(lambda: time.sleep(30))
    pid = job._pid
    job.cancel()
    with pytest.raises(ChildProcessError):
        os.waitpid(pid, os.WNOHANG)  # already waited for: no zombie, no running child


def test_sheet_files_same_either_way(tmp_path, monkeypatch):
    import datetime

    from lotwise.cli.sheets import resolve_files
    from lotwise.documents.sheets import write_sheets

    out = {}
    for flag in (True, False):
        monkeypatch.setattr(aside, "ENABLED", flag)
        folder = tmp_path / str(flag)
        pp = resolve_files([str(ROOT / "plans" / "qp-1104-relief-spring.toml")])[0]
        with all_or_nothing():
            paths = write_sheets(pp, folder, today=datetime.date(2026, 1, 1))
        out[flag] = {k: Path(v).read_bytes() for k, v in paths.items() if k != "pdf"}
    assert out[True].keys() == out[False].keys() >= {"png", "rectifying_png", "md", "csv"}
    assert b"same two risk points with a varying sample" in out[True]["md"]  # (computed aside)
    assert out[True] == out[False]


def test_resolved_beside_the_drawing_import(tmp_path, monkeypatch):
    # The plan file resolved (and its trade-off sentence computed) in a forked child
    # while the parent imports matplotlib gives the same files as resolving here.
    import datetime

    from lotwise.cli.sheets import resolve_files
    from lotwise.documents.sheets import resolve_beside_drawing, write_sheets

    monkeypatch.setattr(aside, "_processors", lambda: 2)
    path = str(ROOT / "plans" / "qp-1104-relief-spring.toml")
    out = {}
    for beside in (True, False):
        folder = tmp_path / str(beside)
        if beside:
            pps, texts = resolve_beside_drawing(lambda: resolve_files([path]))
            assert texts is not None and "varying sample" in texts[0]
        else:
            pps, texts = resolve_files([path]), [None]
        with all_or_nothing():
            paths = write_sheets(pps[0], folder, today=datetime.date(2026, 1, 1),
                                 alternatives_text=texts[0])
        out[beside] = {k: Path(v).read_bytes() for k, v in paths.items() if k != "pdf"}
    assert out[True] == out[False]


def test_resolve_beside_drawing_raises_the_error_here(tmp_path):
    from lotwise.core.quantities import InputError
    from lotwise.documents.sheets import resolve_beside_drawing

    def bad():
        raise InputError("plan.toml: not valid TOML")

    with pytest.raises(InputError, match="not valid TOML"):
        resolve_beside_drawing(bad)


def test_one_draw_per_saved_figure():
    """A figure laid out by ``tight_layout`` is saved to the same pixels with the
    placeholder layout engine removed, and drawn once instead of twice (common
    practice, no source: an optimisation must not change the output)."""
    import matplotlib.figure

    from lotwise.data.files import figure_bytes, no_layout_engine

    def made():
        fig = matplotlib.figure.Figure(figsize=(3, 2), dpi=80)
        ax = fig.add_subplot()
        ax.plot([0, 1, 2], [0, 1, 4], label="curve")
        ax.set_xlabel("level")
        ax.legend()
        fig.tight_layout()
        return fig

    with_engine = made()
    assert with_engine.get_layout_engine() is not None  # the placeholder tight_layout leaves
    import io

    buf = io.BytesIO()
    with_engine.savefig(buf, format="png", metadata={"Software": "lotwise"})

    draws = []
    fig = made()
    real = fig.draw
    fig.draw = lambda renderer: (draws.append(1), real(renderer))[1]
    assert figure_bytes(fig, "png") == buf.getvalue()
    assert fig.get_layout_engine() is None and draws == [1]
    no_layout_engine(fig)  # nothing left to remove
    assert fig.get_layout_engine() is None
