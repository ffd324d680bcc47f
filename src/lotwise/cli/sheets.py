"""What ``lotwise sheet``, ``demo`` and ``check PATH`` share: plan files resolved, the folder
audit behind ``check PATH``, the one-row-per-part summary."""

from __future__ import annotations

from pathlib import Path

import typer

from . import common


def resolve_files(paths):
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
    for pp in resolve_files(paths):
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
                            if "inspection_error" in rep else {})
                         | ({"inspection_cost": rep["inspection_cost"]}
                            if "inspection_cost" in rep else {}))
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


def summary(results):
    rows = []
    for pp, paths in results:
        cs = ", ".join(f"{r['characteristic']['id']}:" + (f"c={r['c']}" if "c" in r else
                                                         r["label"]) for r in pp.reports) or "-"
        rows.append([pp.request.part_id, "-" if pp.n is None else str(pp.n), cs, pp.model or "-",
                     "meets" if pp.meets else ("NO PLAN" if pp.n is None else "FALLS SHORT"),
                     str(paths.get("pdf", ""))])
    typer.echo(common.table(rows, ["part", "n", "acceptance numbers", "model", "verdict",
                                   "sheet"]))


def project_root() -> Path:
    return Path(__file__).resolve().parents[3]
