"""What ``lotwise sheet``, ``demo`` and ``check PATH`` share: plan files resolved, the folder
audit behind ``check PATH``, the one-row-per-part summary."""

from __future__ import annotations

from pathlib import Path

import typer

from lotwise.core.quantities import format_pct

from . import common


def resolve_files(paths):
    """Every plan file of ``paths`` read and resolved, by the same rules for ``check``,
    ``sheet``, ``compare`` and ``demo``. The files are all read before any is
    resolved, so the errors of every bad file are reported together (one line)."""
    from lotwise.core.quantities import InputError
    from lotwise.documents.partplan import resolve
    from lotwise.documents.planfile import load, plan_files

    reqs, errors = [], []
    for f in plan_files(paths):
        try:
            reqs.append(load(f))
        except InputError as exc:
            errors.append(str(exc))
    if errors:
        raise InputError(errors[0] if len(errors) == 1 else
                         f"{len(errors)} plan files have errors: " + " | ".join(errors))
    return [resolve(req) for req in reqs]


def check_folder(paths, as_json: bool) -> int:
    """One summary row per characteristic; 1 if any falls short or has no plan."""
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
        more_rows, more_items = part_rows(pp)
        rows += more_rows
        items += more_items
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
            for i in items:  # every failure with its characteristic and its reason
                if not i["meets"]:
                    typer.echo(f"  {Path(i['file']).name} {i['characteristic'] or '-'}: "
                               + (f"NO PLAN: {i['problem']}" if "problem" in i else
                                  f"FALLS SHORT: {i['reason']}"))
            critical = [i for i in items if i.get("class") == "critical" and "safety" in i]
            for i in critical:  # where a plan guards a critical characteristic, say so
                typer.echo(f"  {Path(i['file']).name} {i['characteristic']}: {i['safety']}")
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


def part_rows(pp) -> tuple[list, list]:
    """The table rows and JSON items of one plan file's characteristics, in file order:
    each designed or audited one, each inspected on every item, each without a plan
    (with its reason)."""
    req = pp.request
    rows, items = [], []
    for f in pp.full:  # inspected on every item: no sample, no sampling risk
        ch = f["characteristic"]
        rows.append([Path(req.path).name, req.part_id, ch["id"], ch["class"],
                     "100 % inspection", "-", "-", "every item"])
        items.append({"file": req.path, "part": req.part_id, "characteristic": ch["id"],
                      "class": ch["class"], "inspection": "100%", "n": req.scope.lot_size,
                      "meets": True, "designed": False,
                      "note": "100 % inspection: every item inspected, no sample"})
    for f in pp.failed:  # no plan meets it: the reason beside its id
        ch, t = f["characteristic"], f["targets"]
        rows.append([Path(req.path).name, req.part_id, ch["id"], ch["class"], "no plan",
                     f"- / {format_pct(t['alpha'])}", f"- / {format_pct(t['beta'])}",
                     "NO PLAN"])
        items.append({"file": req.path, "part": req.part_id, "characteristic": ch["id"],
                      "class": ch["class"], "targets": t, "meets": False,
                      "designed": pp.designed, "problem": f["reason"],
                      "reason": f"no plan: {f['reason']}"})
    if not pp.failed and pp.n is None and not pp.full:  # (no characteristic to name)
        rows.append([Path(req.path).name, req.part_id, "-", "-", "no plan", "-", "-",
                     "NO PLAN"])
        items.append({"file": req.path, "part": req.part_id, "characteristic": None,
                      "meets": False, "problem": pp.problem,
                      "reason": f"no plan: {pp.problem}"})
    for rep in pp.reports:
        row, item = _report_row(pp, rep)
        rows.append(row)
        items.append(item)
    order = {ch.id: k for k, ch in enumerate(req.characteristics)}
    ranked = sorted(range(len(items)), key=lambda k: order.get(items[k]["characteristic"], -1))
    return [rows[k] for k in ranked], [items[k] for k in ranked]


def _report_row(pp, rep) -> tuple[list, dict]:
    """The table row and JSON item of one characteristic with a plan."""
    req = pp.request
    ch = rep["characteristic"]
    r = rep["models"][rep["model"]]
    t = rep["targets"]
    note = rep.get("note", "")
    if rep.get("rql_only"):  # no AQL: the level accepted 1 - alpha of the time
        note = ((note + "; ") if note else "") + _rql_only_note(rep)
    row = [Path(req.path).name, req.part_id, ch["id"], ch["class"],
           rep["label"] if rep.get("own_sample") else f"n={rep['n']}, c={rep['c']}",
           "- (no AQL)" if rep.get("rql_only") else
           f"{format_pct(r['alpha'])} / {format_pct(t['alpha'])}",
           f"{format_pct(r['beta'])} / {format_pct(t['beta'])}",
           "meets" if r["meets"] else "FALLS SHORT"]
    item = ({"file": req.path, "part": req.part_id, "characteristic": ch["id"],
             "class": ch["class"], "n": rep["n"], "c": rep.get("c"),
             "scheme": rep["scheme"], "plan": rep.get("plan"),
             "model": rep["model"], "alpha": r["alpha"], "beta": r["beta"],
             "targets": t, "meets": r["meets"],
             "designed": pp.designed, "pa_aql": r["pa_aql"], "pa_rql": r["pa_rql"],
             "notation": rep.get("notation") or f"n={rep['n']},c={rep['c']}",
             "own_sample": bool(rep.get("own_sample")),
             "note": note, "reason": short_reason(r, t)}
            | ({"rql_only": True, "producer_level": rep["plan_quality"]["producer"]}
               if rep.get("rql_only") else {})
            | ({"safety": rep["safety"]} if "safety" in rep else {})
            | ({"inspection_error": rep["inspection_error"]}
               if "inspection_error" in rep else {})
            | ({"inspection_cost": rep["inspection_cost"]}
               if "inspection_cost" in rep else {}))
    return row, item


def _rql_only_note(rep) -> str:
    """What ``check`` says of a characteristic given only its RQL and beta (c = 0)."""
    from lotwise.core.quantities import format_level

    t = rep["targets"]
    counts = rep.get("plan_quality_counts")
    if counts:
        where = (f"the largest count of the lot of {rep['lot_size']:,} accepted at least "
                 f"{format_pct(1 - t['alpha'])} of the time is D = {counts['producer']}")
    else:
        level = format_level(rep["plan_quality"]["producer"], rep.get("per_unit", False))
        where = f"lots at {level} are accepted {format_pct(1 - t['alpha'])} of the time"
    return f"RQL and beta only (c = 0, no AQL): {where} (Pa = 1 - alpha)"


def short_reason(r: dict, t: dict) -> str:
    """Why a characteristic's plan falls short ('' when it meets): the risk above its
    target."""
    from lotwise.core.quantities import format_pct

    out = []
    if not r.get("meets_alpha", r["alpha"] <= t["alpha"] + 1e-12):
        out.append(f"alpha {format_pct(r['alpha'])} is above its target "
                   f"{format_pct(t['alpha'])}")
    if not r.get("meets_beta", r["beta"] <= t["beta"] + 1e-12):
        out.append(f"beta {format_pct(r['beta'])} is above its target {format_pct(t['beta'])}")
    return "; ".join(out)


def summary(results):
    rows, why = [], []
    for pp, paths in results:
        cs = ", ".join([f"{r['characteristic']['id']}:" + (f"c={r['c']}" if "c" in r else
                                                           r["label"]) for r in pp.reports]
                       + [f"{f['characteristic']['id']}:no plan" for f in pp.failed]) or "-"
        verdict = ("meets" if pp.meets else "NO PLAN" if pp.n is None or pp.failed
                   else "FALLS SHORT")
        rows.append([pp.request.part_id, "-" if pp.n is None else str(pp.n), cs, pp.model or "-",
                     verdict, str(paths.get("pdf", ""))])
        for f in pp.failed:  # each characteristic without a plan, with its reason
            why.append(f"  {pp.request.part_id} {f['characteristic']['id']}: NO PLAN: "
                       f"{f['reason']}")
        if pp.n is None and not pp.failed and pp.problem:
            why.append(f"  {pp.request.part_id}: NO PLAN: {pp.problem}")
        for r in pp.reports:
            if not r["meets"]:
                m = r["models"][r["model"]]
                why.append(f"  {pp.request.part_id} {r['characteristic']['id']}: FALLS SHORT: "
                           + short_reason(m, r["targets"]))
    typer.echo(common.table(rows, ["part", "n", "acceptance numbers", "model", "verdict",
                                   "sheet"]))
    for line in why:
        typer.echo(line)


def project_root() -> Path:
    return Path(__file__).resolve().parents[3]
