"""``lotwise demo``: the invented receiving-inspection scenario in ``plans/`` run end to
end."""

from __future__ import annotations

import typer

from . import app, sheets
from lotwise.core.quantities import InputError


@app.command()
def demo(
    out: str = typer.Option("lotwise-demo", "--out", "-o", help="Folder for the demo's sheets."),
    force: bool = typer.Option(False, "--force", help="Overwrite files lotwise did not write."),
):
    """Run the main job end to end on the invented demo scenario in plans/."""
    from lotwise.data.files import check_folder

    check_folder(out, option="--out")
    plans = sheets.project_root() / "plans"
    if not plans.is_dir():
        raise InputError(f"demo: the scenario folder {plans} is missing; run lotwise from a "
                         "clone of the project (pip install -e .)")
    typer.echo("lotwise demo: receiving inspection at Quillmoor Pumps (an invented company), "
               f"{len(list(plans.glob('*.toml')))} purchased parts from {plans}\n")
    from lotwise.documents.planfile import plan_files
    from lotwise.documents.sheets.many import write_many

    results = write_many(plan_files([plans]), out, force=force)
    sheets.summary(results)
    short = [pp.request.part_id for pp, _ in results if not pp.meets]
    typer.echo(f"\n  Sheets written to {out}/ (PDF, Markdown, OC plot and table, pick list).")
    if short:
        typer.echo("  Falls short on audit (as the scenario intends): " + ", ".join(short))
    ex = sheets.project_root() / "examples"
    typer.echo("  Next, on the same invented scenario:")
    for cmd in (f"lotwise check {plans}   # re-verify every plan file",
                f"lotwise records {ex / 'lots.csv'} --plans {plans}",
                f"lotwise scheme {plans / 'qp-8840-switching.toml'} --records "
                f"{ex / 'switching-lots.csv'}",
                f"lotwise batch {ex / 'catalogue.csv'} --out {out}/catalogue-plans.csv",
                f"lotwise judge --plan \"variables: n=42,k=1.901,upper=25.0\" {ex / 'shafts.csv'}",
                "lotwise validate --out " + out):
        typer.echo("    " + cmd)
