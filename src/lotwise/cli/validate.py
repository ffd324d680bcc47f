"""``lotwise validate``: run the reference cases and write the dated report."""

from __future__ import annotations

import sys
from typing import Optional

import typer

from . import app, common


@app.command()
def validate(
    out: Optional[str] = typer.Option(".", "--out", help="Folder for the report (validation-DATE.md and .pdf)."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """Run the built-in reference cases; write a dated Markdown and PDF report.

    Exit 0 when every case passes, 1 when any fails or cannot be run.
    """
    from pathlib import Path

    from lotwise.data.files import check_writable, write_bytes, write_text
    from lotwise.core.quantities import InputError
    from lotwise.validation.runner import markdown_report, pdf_report, run_cases
    from lotwise.documents.validation_report import fingerprint, report_body

    folder = Path(out)
    if folder.exists() and not folder.is_dir():
        raise InputError(f"--out ({out}) is a file; give a folder")
    val = run_cases()
    stem = f"validation-{val.started.date().isoformat()}"
    md_path, pdf_path = folder / f"{stem}.md", folder / f"{stem}.pdf"
    if folder.exists():
        check_writable(md_path, force=force, option="--out")
        check_writable(pdf_path, force=force, option="--out")
    digest = fingerprint(report_body(val))
    write_text(md_path, markdown_report(val), force=force, option="--out")
    write_bytes(pdf_path, pdf_report(val), force=force, option="--out")
    if as_json:
        d = val.as_dict()
        d["report"] = {"markdown": str(md_path), "pdf": str(pdf_path)}
        d["fingerprint"] = digest
        common.emit_json(d)
    else:
        rows = [[r.case.id, _short(r.expected), _short(r.computed), f"{r.case.tolerance:g}",
                 r.verdict + (f" ({r.note})" if r.note else "")] for r in val.results]
        typer.echo(f"Validation {val.started.date().isoformat()}: {val.verdict}: "
                   f"{len(val.results)} cases, {val.passed} passed, {val.failed} failed, "
                   f"{val.skipped} skipped; installation check "
                   f"{val.installation.verdict if val.installation else 'not made'}")
        typer.echo(common.table(rows, ["case", "expected", "computed", "tolerance", "verdict"]))
        typer.echo(f"  wrote {md_path}")
        typer.echo(f"  wrote {pdf_path}")
        typer.echo(f"  report fingerprint (SHA-256) {digest}")
    if val.verdict != "PASSED":
        bad = [r.case.id for r in val.results if r.verdict != "pass"]
        inst = val.installation
        if inst is not None and inst.verdict != "pass":
            bad.append("installation check (" + (", ".join(
                inst.changed + inst.missing + inst.unexpected) or inst.reference) + ")")
        print(f"lotwise: validation {val.verdict}: " + ", ".join(bad), file=sys.stderr)
        raise typer.Exit(1)


def _short(v) -> str:
    from lotwise.documents.validation_report import format_value

    s = format_value(v)
    return s if len(s) <= 40 else s[:37] + "..."
