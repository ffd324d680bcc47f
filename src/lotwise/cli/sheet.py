"""``lotwise sheet``: the plan sheet (PDF, Markdown, OC plot and table, pick list) of
each plan file."""

from __future__ import annotations

from typing import List, Optional

import typer

from . import app, common, sheets

@app.command()
def sheet(
    files: List[str] = typer.Argument(..., help="Plan files (or folders of them)."),
    out: str = typer.Option("sheets", "--out", "-o", help="Folder for the sheets."),
    lot: Optional[str] = typer.Option(None, "--lot-size", "-N", help="Files with [[table]] or [switching]: the sheet for this lot size (the row's plans as a switching scheme)."),
    force: bool = typer.Option(False, "--force", help="Overwrite files lotwise did not write."),
    as_json: bool = common.JSON,
):
    """Write the plan sheet (PDF, Markdown, OC plot and table, pick list) per plan file."""
    from lotwise.documents.sheets import resolve_beside_drawing, write_sheets

    from lotwise.data.files import all_or_nothing, check_folder

    check_folder(out, option="--out")
    results = []
    texts = None
    if lot is not None:  # a user's plan table: the row for this lot size (see cli.scheme)
        from lotwise.documents.partplan import resolve
        from lotwise.documents.planfile import load, plan_files
        from .scheme import requests_for_lot

        pps = [resolve(r) for r in requests_for_lot([load(f) for f in plan_files(files)], lot)]
    else:  # resolved beside the import of matplotlib
        pps, texts = resolve_beside_drawing(lambda: sheets.resolve_files(files))
    with all_or_nothing():  # every sheet's files, or none when one cannot be written
        for i, pp in enumerate(pps):
            paths = write_sheets(pp, out, force=force,
                                 alternatives_text=None if texts is None else texts[i])
            results.append((pp, paths))
    if as_json:
        common.emit_json({"sheets": [{"file": pp.request.path, "part": pp.request.part_id,
                                      "n": pp.n, "meets": pp.meets,
                                      "paths": {k: str(v) for k, v in paths.items()}}
                                     for pp, paths in results]})
    else:
        sheets.summary(results)
    raise typer.Exit(0 if all(pp.meets for pp, _ in results) else 1)
