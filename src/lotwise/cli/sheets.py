"""``lotwise sheet``, ``compare``, ``demo`` and the folder audit behind ``check PATH``."""

from __future__ import annotations

from pathlib import Path
from typing import List, Optional

import typer

from . import app, common
from lotwise.core.quantities import InputError


def _resolve_files(paths):
    from lotwise.documents.partplan import resolve
    from lotwise.documents.planfile import load, plan_files

    out = []
    for f in plan_files(paths):
        out.append(resolve(load(f)))
    return out


def check_folder(paths, as_json: bool) -> int:
    """One summary row per characteristic; 1 if any falls short or has no plan."""
    from lotwise.core.quantities import format_pct

    rows, items, t_rows, t_items = [], [], [], []
    files_rates = {}
    for pp in _resolve_files(paths):
        req = pp.request
        if req.switching is not None or req.table:  # plan tables: see cli.scheme
            from .scheme import table_check

            more = table_check(req)
            t_rows += more[0]
            t_items += more[1]
            if not req.characteristics:
                continue
        if pp.n is None:
            rows.append([Path(req.path).name, req.part_id, "-", "-", "no plan", "-", "-",
                         "NO PLAN"])
            items.append({"file": req.path, "part": req.part_id, "characteristic": None,
                          "meets": False, "problem": pp.problem})
            continue
        for rep in pp.reports:
            ch = rep["characteristic"]
            r = rep["models"][rep["model"]]
            t = rep["targets"]
            rows.append([Path(req.path).name, req.part_id, ch["id"], ch["class"],
                         rep["label"] if rep.get("own_sample") else f"n={rep['n']}, c={rep['c']}",
                         f"{format_pct(r['alpha'])} / {format_pct(t['alpha'])}",
                         f"{format_pct(r['beta'])} / {format_pct(t['beta'])}",
                         "meets" if r["meets"] else "FALLS SHORT"])
            items.append({"file": req.path, "part": req.part_id, "characteristic": ch["id"],
                          "class": ch["class"], "n": rep["n"], "c": rep.get("c"),
                          "scheme": rep["scheme"], "plan": rep.get("plan"),
                          "model": rep["model"], "alpha": r["alpha"], "beta": r["beta"],
                          "targets": t, "meets": r["meets"],
                          "designed": pp.designed, "pa_aql": r["pa_aql"], "pa_rql": r["pa_rql"],
                          "notation": rep.get("notation") or f"n={rep['n']},c={rep['c']}",
                          "own_sample": bool(rep.get("own_sample")),
                          "note": rep.get("note", "")}
                         | ({"inspection_error": rep["inspection_error"]}
                            if "inspection_error" in rep else {}))
        if req.inspection is not None:
            files_rates[Path(req.path).name] = req.inspection.describe()
    ok = all(i["meets"] for i in items) and all(i["meets"] for i in t_items)
    if as_json:
        common.emit_json({"meets": ok, "characteristics": items}
                         | ({"tables": t_items} if t_items else {}))
    else:
        if items:
            typer.echo(common.table(rows, ["file", "part", "char.", "class", "plan",
                                           "alpha / target", "beta / target", "verdict"]))
            for i in items:
                if i.get("note"):
                    typer.echo(f"  {Path(i['file']).name} {i['characteristic']}: {i['note']}")
            for name, text in files_rates.items():
                typer.echo(f"  {name}: judged at the true quality with {text}")
            short = sum(not i["meets"] for i in items)
            typer.echo(f"\n  {len(items)} characteristic(s) checked; "
                       + ("all meet their targets." if all(i["meets"] for i in items)
                          else f"{short} fall(s) short."))
        if t_items:
            from .scheme import render_table_check

            typer.echo(("\n" if items else "") + render_table_check(t_rows, t_items))
            short = sum(not i["meets"] for i in t_items)
            typer.echo(f"\n  {len(t_items)} plan-table row(s) checked; "
                       + ("all hold the AQL." if not short else f"{short} flagged."))
    return 0 if ok else 1


@app.command()
def sheet(
    files: List[str] = typer.Argument(..., help="Plan files (or folders of them)."),
    out: str = typer.Option("sheets", "--out", "-o", help="Folder for the sheets."),
    lot: Optional[str] = typer.Option(None, "--lot-size", "-N", help="Files with [[table]] or [switching]: the sheet for this lot size (the row's plans as a switching scheme)."),
    force: bool = typer.Option(False, "--force", help="Overwrite files lotwise did not write."),
    as_json: bool = common.JSON,
):
    """Write the plan sheet (PDF, Markdown, OC plot and table, pick list) per plan file."""
    from lotwise.documents.sheets import write_sheets

    results = []
    if lot is not None:  # a user's plan table: the row for this lot size (see cli.scheme)
        from lotwise.documents.partplan import resolve
        from lotwise.documents.planfile import load, plan_files
        from .scheme import requests_for_lot

        pps = [resolve(r) for r in requests_for_lot([load(f) for f in plan_files(files)], lot)]
    for pp in _resolve_files(files) if lot is None else pps:
        paths = write_sheets(pp, out, force=force)
        results.append((pp, paths))
    if as_json:
        common.emit_json({"sheets": [{"file": pp.request.path, "part": pp.request.part_id,
                                      "n": pp.n, "meets": pp.meets,
                                      "paths": {k: str(v) for k, v in paths.items()}}
                                     for pp, paths in results]})
    else:
        _summary(results)
    raise typer.Exit(0 if all(pp.meets for pp, _ in results) else 1)


def _summary(results):
    rows = []
    for pp, paths in results:
        cs = ", ".join(f"{r['characteristic']['id']}:" + (f"c={r['c']}" if "c" in r else
                                                         r["label"]) for r in pp.reports) or "-"
        rows.append([pp.request.part_id, "-" if pp.n is None else str(pp.n), cs, pp.model or "-",
                     "meets" if pp.meets else ("NO PLAN" if pp.n is None else "FALLS SHORT"),
                     str(paths.get("pdf", ""))])
    typer.echo(common.table(rows, ["part", "n", "acceptance numbers", "model", "verdict",
                                   "sheet"]))


@app.command()
def compare(
    files: Optional[List[str]] = typer.Argument(None, help="Plan files whose plans to include."),
    plan: Optional[List[str]] = typer.Option(None, "--plan", help='Plan notation (repeatable), e.g. "n=80,c=2".'),
    aql: Optional[str] = common.AQL,
    rql: Optional[str] = common.RQL,
    alpha: str = common.ALPHA,
    beta: str = common.BETA,
    lot: Optional[str] = common.LOT,
    model: Optional[str] = common.MODEL,
    defects: bool = common.DEFECTS,
    designed: bool = typer.Option(False, "--designed", help="Add the single, double and sequential plans designed for --aql/--rql (the trade-off view)."),
    plot: Optional[str] = typer.Option(None, "--plot", help="OC curves of all plans to PATH.png/.svg."),
    force: bool = typer.Option(False, "--force", help="Overwrite files lotwise did not write."),
    miss_rate: Optional[str] = common.MISS_RATE,
    false_alarm: Optional[str] = common.FALSE_ALARM,
    study: Optional[str] = common.STUDY,
    as_json: bool = common.JSON,
):
    """Several plans side by side: risks, quality levels, ASN, one OC plot."""
    from lotwise.core.types import Targets
    from lotwise.core.types import Scope
    from lotwise.families.base import parse_plan
    from lotwise.core.quantities import format_level, format_pct
    rates = common.error_rates(miss_rate, false_alarm, study)
    if rates is not None and (designed or files):
        raise InputError("--miss-rate/--false-alarm/--study apply to the --plan entries of "
                         "compare, not to --designed or plan files (a plan file states its "
                         "rates in its [inspection] table)")
    entries = []  # (label, plan, targets, scope, model)
    for pp in _resolve_files(files or []):
        for rep, p in zip(pp.reports, pp.plans):
            entries.append((f"{pp.request.part_id}/{rep['characteristic']['id']}", p,
                            Targets(**rep["targets"]), pp.request.scope, pp.request.model))
    if plan or designed:
        a, r = common.levels(aql, rql, defects)
        al, be = common.risks(alpha, beta)
        scope = Scope(lot_size=common.lot_size(lot), defects=defects)
        mdl = scope.check_model(model)
        if designed:
            from lotwise.analysis.tradeoff import asn_tradeoff

            tr = asn_tradeoff(Targets(aql=a, rql=r, alpha=al, beta=be), scope, model=mdl)
            for row in tr.rows:
                if row.plan is not None:
                    entries.append((f"designed {row.scheme}: {row.label}", row.plan,
                                    Targets(aql=a, rql=r, alpha=al, beta=be), scope, mdl))
        for i, text in enumerate(plan or [], 1):
            p = parse_plan(text, f"--plan #{i}")
            if scope.lot_size and p.max_sample > scope.lot_size:
                raise InputError(f"--plan #{i} ({text}): the plan inspects up to "
                                 f"{p.max_sample} units, more than --lot-size ({scope.lot_size})")
            if rates is not None:
                p = common.with_errors(p.for_scope(scope), rates, scope)
            entries.append((p.label, p, Targets(aql=a, rql=r, alpha=al, beta=be), scope, mdl))
    if len(entries) < 2:
        raise InputError("compare needs at least two plans: give --plan twice or more, or plan "
                         "files")
    if plot is not None and not plot.lower().endswith((".png", ".svg", ".pdf")):
        raise InputError(f"--plot ({plot}) must end in .png, .svg or .pdf")
    from lotwise.analysis.compare import compare_plans

    rows_ = compare_plans(entries)
    if plot is not None:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.style import oc_figure

        t0 = entries[0][2]
        fig = oc_figure([(p, s) for _, p, _, s, _ in entries], models=[rows_[0]["model"]],
                        aql=t0.aql, rql=t0.rql, labels=[e[0] for e in entries],
                        max_p=max(1.3 * e[2].rql for e in entries))
        save_figure(fig, plot, force=force)
    if as_json:
        common.emit_json(common.add_rates({"plans": rows_}, rates) if rates else {"plans": rows_})
        return
    rows = []
    for r in rows_:
        q = r["plan_quality"]
        per = r["defects"]
        asn = r.get("asn")
        counts = r.get("plan_quality_counts")

        def level(side):
            if counts is None:
                return format_level(q[side], per)
            return f"D = {counts[side]} (Pa {r['plan_quality_pa'][side]:.3f})"

        rows.append([r["label"], r["model"], f"{r['pa_aql']:.4f}", format_pct(r["alpha"]),
                     f"{r['pa_rql']:.4f}", format_pct(r["beta"]), level("producer"),
                     level("indifference"), level("consumer"),
                     f"{asn['aql']:.1f} / {asn['rql']:.1f}" if asn else "fixed",
                     "yes" if r["meets"] else "NO"])
    typer.echo(common.table(rows, ["plan", "model", "Pa(AQL)", "alpha", "Pa(RQL)", "beta",
                                   "Pa=1-alpha at", "Pa=0.5 at", "Pa=beta at",
                                   "ASN (AQL/RQL)", "meets"]))
    if plot:
        typer.echo(f"  wrote {plot}")


def _project_root() -> Path:
    return Path(__file__).resolve().parents[3]


@app.command()
def demo(
    out: str = typer.Option("lotwise-demo", "--out", "-o", help="Folder for the demo's sheets."),
    force: bool = typer.Option(False, "--force", help="Overwrite files lotwise did not write."),
):
    """Run the main job end to end on the invented demo scenario in plans/."""
    plans = _project_root() / "plans"
    if not plans.is_dir():
        raise InputError(f"demo: the scenario folder {plans} is missing; run lotwise from a "
                         "clone of the project (pip install -e .)")
    typer.echo("lotwise demo: receiving inspection at Quillmoor Pumps (an invented company), "
               f"{len(list(plans.glob('*.toml')))} purchased parts from {plans}\n")
    from lotwise.documents.planfile import plan_files
    from lotwise.documents.sheets.many import write_many

    results = write_many(plan_files([plans]), out, force=force)
    _summary(results)
    short = [pp.request.part_id for pp, _ in results if not pp.meets]
    typer.echo(f"\n  Sheets written to {out}/ (PDF, Markdown, OC plot and table, pick list).")
    if short:
        typer.echo("  Falls short on audit (as the scenario intends): " + ", ".join(short))
    ex = _project_root() / "examples"
    typer.echo("  Next, on the same invented scenario:")
    for cmd in (f"lotwise check {plans}   # re-verify every plan file",
                f"lotwise records {ex / 'lots.csv'} --plans {plans}",
                f"lotwise scheme {plans / 'qp-8840-switching.toml'} --records "
                f"{ex / 'switching-lots.csv'}",
                f"lotwise batch {ex / 'catalogue.csv'} --out {out}/catalogue-plans.csv",
                f"lotwise judge --plan \"variables: n=42,k=1.901,upper=25.0\" {ex / 'shafts.csv'}",
                "lotwise validate --out " + out):
        typer.echo("    " + cmd)
