"""Plan sheets: the document handed to the supplier and the auditor.

For each plan file :func:`write_sheets` writes, into one folder,

* ``<stem>.pdf`` -- the sheet on one A4 page; for a plan that meets its
  targets followed by the bench procedure and the blank record form;
* ``<stem>.md`` -- the same content and numbers as Markdown;
* ``<stem>-oc.png`` -- the OC curves (exact and Poisson);
* ``<stem>-oc.csv`` -- the OC table under every model;
* ``<stem>-picklist.csv`` -- the seeded random selection of units, when the
  lot size is known;
* ``<stem>-record.csv`` -- the record form as a CSV template (a plan that
  meets its targets only).

Both documents are rendered from one :class:`SheetContent`, built by
:func:`build_content` (in :mod:`lotwise.documents.sheets.content`) from the
same result dictionaries as ``--json``, so a number on the sheet is the
number the command line reports. Every write is atomic and never replaces a
file the tool did not write (see :mod:`lotwise.data.files`).
"""

from __future__ import annotations

from pathlib import Path

from lotwise.core.numbers import csv_number
from lotwise.documents.sheets import aside

from lotwise.documents.sheets.content import (CAUTION, DEFAULT_REJECTED, SheetContent,
                                              alternatives, build_content, fmt_pa, oc_rows)

__all__ = ["CAUTION", "SheetContent", "build_content", "write_sheets", "fmt_pa",
           "resolve_beside_drawing"]


def resolve_beside_drawing(resolve):
    """``(pps, texts)``: ``resolve()`` (the plan files, resolved) computed in a
    second process while this one imports what the sheets draw with
    (matplotlib; see :mod:`~lotwise.documents.sheets.aside`), with the
    trade-off sentence of each sheet (:func:`alternatives`) when there is one
    plan file, else ``texts`` is ``None``. Where no second process can run,
    or it fails, ``resolve()`` runs here afterwards (and raises as it would)."""
    job = aside.start(lambda: _resolved(resolve))
    try:
        _drawing_imports()
        return job.result()
    finally:
        job.cancel()


def _resolved(resolve):
    pps = resolve()
    if len(pps) != 1:
        return pps, None
    return pps, [alternatives(pp) if pp.request.characteristics else None for pp in pps]


def _drawing_imports() -> None:
    """What the sheets draw and lay out with, imported once (before any figure
    process is forked, so the figures' processes share it)."""
    import matplotlib.backends.backend_agg  # noqa: F401
    import matplotlib.figure  # noqa: F401

    import lotwise.documents.plots.rectifying  # noqa: F401
    import lotwise.documents.sheets.figures  # noqa: F401
    from lotwise.documents.sheets import markdown, pdf  # noqa: F401


def write_sheets(pp, out_dir, *, force: bool = False, today=None,
                 alternatives_text: str | None = None) -> dict:
    """Write the PDF, Markdown, PNG and CSV files for one resolved plan file.

    ``alternatives_text``: the trade-off sentence when already computed
    (:func:`resolve_beside_drawing`). Returns ``{kind: path}``.
    """
    # the trade-off sentence (designs of other schemes, no drawing) computed in a second
    # process while this one imports matplotlib (see aside)
    if alternatives_text is not None:
        others = aside.Aside(lambda: alternatives_text)
    else:
        others = aside.start(lambda: alternatives(pp)) if pp.request.characteristics else None
    try:
        from lotwise.documents.plots.style import font_lookups

        with font_lookups():
            return _write_sheets(pp, out_dir, others, force=force, today=today)
    finally:
        if others is not None:
            others.cancel()


def _write_sheets(pp, out_dir, others, *, force: bool, today) -> dict:
    from lotwise.documents.sheets import markdown, pdf

    out = Path(out_dir)
    req = pp.request
    if not req.characteristics:  # a switching scheme or plan table only
        from lotwise.documents.sheets.switching import write_scheme_sheet

        parts = {"content": SheetContent, "caution": CAUTION, "rejected": DEFAULT_REJECTED,
                 "markdown": markdown.render, "pdf": pdf.render}
        return write_scheme_sheet(pp, out, parts=parts, force=force, today=today)
    stem = req.stem
    paths = {}
    figures = {}
    try:
        # the PNG figures drawn in further processes while the page is laid out; what
        # both draw with is imported first, so it is imported once
        _drawing_imports()

        # one process a figure: the OC curves, and the AOQ and ATI curves when the lot
        # size is known
        if pp.n is not None:
            for kind in ("png", "rectifying_png") if "aoql" in pp.reports[0] else ("png",):
                figures[kind] = aside.start(lambda kind=kind: _figure(pp, kind))
        _write_files(pp, out, stem, paths, figures, others, force=force, today=today)
    finally:
        for figure in figures.values():
            figure.cancel()
    return paths


def _figure(pp, kind: str) -> bytes:
    """One of the sheet's PNG figures as bytes: the OC curves (``"png"``) or the
    AOQ and ATI curves of the first plan (``"rectifying_png"``)."""
    from lotwise.data.files import figure_bytes

    if kind == "png":
        from lotwise.documents.sheets.figures import oc_plot

        return figure_bytes(oc_plot(pp), "png", dpi=150)
    from lotwise.documents.plots.rectifying import rectifying_figure

    rep = pp.reports[0]
    return figure_bytes(rectifying_figure(pp.plans[0], pp.request.scope,
                                          aql=rep["targets"]["aql"], rql=rep["targets"]["rql"]),
                        "png", dpi=110)


def _write_files(pp, out, stem, paths, figures, others, *, force: bool, today) -> None:
    from lotwise.data.files import check_target, write_bytes, write_text
    from lotwise.documents.sheets import markdown, pdf

    req = pp.request
    picks = None
    from lotwise.data.draw import MAX_N

    if pp.n is not None and req.scope.lot_size and pp.n <= MAX_N:  # else no pick list
        from lotwise.data.draw import draw_units
        from lotwise.documents.partplan import pick_seed

        seed = pick_seed(req)
        picks = draw_units(lot_size=req.scope.lot_size, n=pp.n, seed=seed, strata=req.strata)
    content = build_content(pp, picks=picks, today=today, alternatives_text=others.result())
    if pp.n is not None:
        header, rows = oc_rows(pp)
        csv = ",".join(header) + "\n" + "".join(
            ",".join(csv_number(v) for v in row) + "\n" for row in rows)
        paths["csv"] = write_text(out / f"{stem}-oc.csv", csv, force=force, option="sheet")
        names = {"png": f"{stem}-oc.png", "rectifying_png": f"{stem}-oc-aoq-ati.png"}
        for kind in figures:  # checked here, written when drawn (below)
            paths[kind] = check_target(out / names[kind], force=force, option="sheet",
                                       figure=True)
        if picks is not None:
            paths["picklist"] = write_text(out / f"{stem}-picklist.csv", picks.to_csv(),
                                           force=force, option="sheet")
    if content.procedures:  # the blank record form as a CSV template
        from lotwise.documents.sheets.bench import record_csv

        paths["record"] = write_text(out / content.record_csv,
                                     record_csv(content.records, req.part_id, content.order,
                                                picks=picks is not None),
                                     force=force,
                                     option="sheet")
    md = markdown.render(content, png=f"{stem}-oc.png" if pp.n is not None else None,
                         extra_png=f"{stem}-oc-aoq-ati.png" if "rectifying_png" in paths else None)
    if req.switching is not None or req.table:  # the scheme's section and figure
        from lotwise.documents.sheets.switching import scheme_files, scheme_section

        paths.update(scheme_files(req, out, force=force))
        md += "\n" + scheme_section(req, png=f"{stem}-scheme.png" if "scheme_png" in paths
                                     else None)
    paths["md"] = write_text(out / f"{stem}.md", md, force=force, option="sheet")
    paths["pdf"] = write_bytes(out / f"{stem}.pdf", pdf.render(content, pp), force=force,
                               option="sheet")
    for kind, figure in figures.items():
        write_bytes(paths[kind], figure.result(), force=force, option="sheet")
