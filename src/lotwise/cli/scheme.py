"""``lotwise scheme``: a switching scheme's exact OC, or where a lot history
leaves it; and the plan-table audits behind ``check FILE`` and ``batch --audit``."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import List, Optional

import typer

from . import app, common
from lotwise.core.numbers import probability
from lotwise.core.quantities import InputError, format_pct, parse_count, parse_level, parse_risk

WHOLE_SCHEME = ("A switching scheme's protection is a property of the whole scheme: the "
                "long-run fraction of lots accepted depends on how often each plan is used, "
                "not on any one plan's OC.")


def _load_scheme(path, lot=None):
    from lotwise.documents.planfile import load

    req = load(path)
    if lot is not None:  # the [[table]] row (or [switching]) for this lot size
        from lotwise.documents.schemefile import scheme_for_lot

        req = scheme_for_lot(req, common.lot_size(lot))
    if req.switching is None:
        raise InputError(f"{path}: no [switching] table; write the normal (and tightened, "
                         "reduced) plans under [switching], or give --lot-size to use a "
                         "[[table]] row")
    return req


def _levels(req, at, points, max_p):
    import numpy as np

    scope = req.scope
    if at:
        vals = [_level(part, scope) for item in at for part in str(item).split(",")
                if part.strip()]
        return np.array(vals, dtype=float)
    k = parse_count(points, "--points", minimum=2, maximum=10_000)
    if max_p is not None:
        top = parse_level(max_p, "--max-p", per_unit=scope.per_unit)
    else:
        top = _top(req)
    return np.linspace(0.0, top, k)


def _level(text, scope) -> float:
    """A quality level for --at; 0 (where no lot is ever rejected) is allowed."""
    from lotwise.core.quantities import parse_fraction

    if parse_fraction(text, "--at") == 0:
        return 0.0
    return parse_level(text, "--at", per_unit=scope.per_unit)


def _top(req) -> float:
    """Where the normal plan accepts 2 % of lots, a little beyond, rounded up."""
    import math

    scope = req.scope
    model = scope.check_model(req.model)
    top = 1.1 * float(req.switching.normal.quality_at(0.02, model, scope, "consumer"))
    if top <= 0:
        return 0.1
    e = math.floor(math.log10(top))
    for m in (1, 2, 2.5, 5, 10):
        if m * 10**e >= top * (1 - 1e-12):
            return min(m * 10**e, 1.0) if not scope.per_unit else m * 10**e
    return top


@app.command()
def scheme(
    path: str = typer.Argument(..., metavar="FILE", help="Plan file with a [switching] table."),
    at: Optional[List[str]] = typer.Option(None, "--at", help="Quality levels (repeatable, or comma-separated) instead of a grid."),
    points: str = typer.Option("21", "--points", help="Number of grid points."),
    max_p: Optional[str] = typer.Option(None, "--max-p", help="Largest quality level of the grid."),
    plot: Optional[str] = typer.Option(None, "--plot", help="Scheme OC beside each plan's, and lots to tightened, to PATH.png, .svg or .pdf."),
    records: Optional[str] = typer.Option(None, "--records", help="CSV of inspected lots: apply the rules and say which severity the next lot gets."),
    part: Optional[str] = typer.Option(None, "--part", help="With --records: the part (default the file's part id)."),
    plans: Optional[str] = typer.Option(None, "--plans", help="With --records: folder of plan files named in a plan_file column."),
    lot: Optional[str] = typer.Option(None, "--lot-size", "-N", help="Files with [[table]]: the scheme of the row for this lot size (also replaces lot.size)."),
    force: bool = typer.Option(False, "--force", help="Overwrite files not written by lotwise."),
    as_json: bool = common.JSON,
):
    """A switching scheme (normal, tightened, reduced): its exact OC, or its state from records.

    Without --records: the scheme's long-run acceptance, average sample,
    share of lots on each severity, and the expected lots from a fresh start
    until tightened inspection and until discontinuation, at each level.
    With --records: the rules applied to the part's lots in date order.
    """
    req = _load_scheme(path, lot)
    if records is not None:
        for opt, val in (("--at", at), ("--max-p", max_p), ("--plot", plot)):
            if val:
                raise InputError(f"{opt} cannot be combined with --records")
        return _records(req, records, part, plans, as_json)
    for opt, val in (("--part", part), ("--plans", plans)):
        if val is not None:
            raise InputError(f"{opt} ({val}) needs --records")
    common.plot_path(plot, force)
    from lotwise.analysis.switching import scheme_oc

    ps = _levels(req, at, points, max_p)
    oc = scheme_oc(req.switching, ps, req.model, req.scope)
    if plot is not None:
        from lotwise.data.files import save_figure
        from lotwise.documents.plots.switching import scheme_figure

        lim = req.limits
        fig = scheme_figure(req.switching, req.scope, model=oc.model,
                            max_p=float(ps.max()) if ps.size and ps.max() > 0 else None,
                            aql=lim.aql if lim else None, rql=lim.rql if lim else None,
                            title=f"Switching scheme {req.part_id}")
        save_figure(fig, plot, force=force, option="--plot")
    if as_json:
        d = oc.as_dict()
        out = {"scheme": d["scheme"], "model": d["model"], "levels": [
            {k: lv[k] for k in ("p", "pa", "asn", "share", "lots_to_tightened",
                                "lots_to_discontinue")} for lv in d["levels"]],
               "notes": d["notes"], "part": req.part_id, "lot_size": d["lot_size"],
               "plans": d["plans"], "rules": d["rules"], "plot": plot,
               "plan_pa": {s: [lv["plan_pa"][s] for lv in d["levels"]] for s in d["plans"]}}
        common.emit_json(out)
        return
    _render_oc(req, oc, plot)


def _render_oc(req, oc, plot) -> None:
    per = req.scope.per_unit
    sch = req.switching
    lot = f", lot of {req.scope.lot_size:,}" if req.scope.lot_size else ""
    typer.echo(f"Switching scheme for {req.part_id} ({Path(req.path).name}): model {oc.model}"
               f"{lot}, {oc.states} chain states")
    typer.echo("  plans: " + "; ".join(f"{s} {p.label}" for s, p in sch.plans().items()))
    typer.echo("  rules: " + ", ".join(f"{k} {'-' if v is None else v}"
                                       for k, v in sch.rules.as_dict().items()))
    rows = []
    for lv in oc.levels:
        pp = [probability(lv.plan_pa[s], 4) if s in lv.plan_pa else "-"
              for s in ("normal", "tightened", "reduced")]
        rows.append([common.fmt_level(lv.p, per), probability(lv.pa), *pp,
                     f"{lv.asn:.1f}", *(f"{100 * lv.share[s]:.1f}" for s in
                                        ("normal", "tightened", "reduced")),
                     _lots(lv.lots_to_tightened), _lots(lv.lots_to_discontinue)])
    typer.echo(common.table(rows, ["p", "scheme Pa", "normal Pa", "tight. Pa", "reduced Pa",
                                   "ASN", "% N", "% T", "% R", "lots to T", "lots to stop"]))
    for note in oc.notes:
        typer.echo(f"  note: {note}")
    typer.echo(f"  {WHOLE_SCHEME}")
    if plot:
        typer.echo(f"  wrote {plot}")


def _lots(x) -> str:
    if x is None:
        return "never"
    return f"{x:,.1f}" if x < 1e7 else f"{x:.3g}"


# --- state from records ----------------------------------------------------------

def _records(req, path, part, plans_dir, as_json):
    from lotwise.analysis.switching import track
    from lotwise.data.records import read_records

    if plans_dir is not None and not Path(plans_dir).is_dir():
        raise InputError(f"--plans ({plans_dir}) is not a folder")
    recs = read_records(path, plans_dir=plans_dir, option="--records")
    for b in recs.bad_rows:
        print(f"lotwise: {b.message(recs.source)}", file=sys.stderr)
    part = part or req.part_id
    df = recs.frame
    known = sorted(set(df["part"]))
    df = df[df["part"] == part]
    if not len(df):
        raise InputError(f"--part ({part}) has no usable lots in {recs.source}; parts there: "
                         + (", ".join(known[:10]) or "none"))
    lots, wrong = _lot_results(df.sort_values(["date", "line"], kind="stable"), recs.plans)
    tr = track(req.switching, lots)
    if as_json:
        out = tr.as_dict()
        out.update({"part": part, "source": recs.source, "lots_used": len(lots),
                    "bad_rows": [{"line": b.line, "reason": b.reason} for b in recs.bad_rows]})
        common.emit_json(out)
    else:
        _render_tracking(req, tr, part, recs.source, lots)
        if wrong:
            typer.echo(f"  {wrong} lot(s) with a recorded disposition that disagrees with its "
                       "plan (exit 1).")
    raise typer.Exit(1 if wrong else 0)  # README, "Exit codes"


def _lot_results(df, plans) -> tuple[list, int]:
    """Each lot's result, and how many lots carry a disposition their plan disagrees with."""
    from lotwise.analysis.switching import LotResult
    from lotwise.data.records import expected_disposition

    out, wrong = [], 0
    for row in df.itertuples(index=False):
        plan = plans.get(row.plan_key)
        notes = []
        if plan is not None:
            exp, why = expected_disposition(plan, int(row.lot_size), int(row.sample_size),
                                            int(row.found))
            if exp is not None and bool(exp) != bool(row.accepted):
                wrong += 1
                notes.append(f"recorded {'accept' if row.accepted else 'reject'} but "
                             f"{plan.label} with {row.found} found says "
                             f"{'accept' if exp else 'reject'}")
            if why:
                notes.append(why)
        out.append(LotResult(lot_id=str(row.lot_id) or f"line {row.line}",
                             date=row.date.date().isoformat(), accepted=bool(row.accepted),
                             found=int(row.found), plan=plan, line=int(row.line),
                             note="; ".join(notes)))
    return out, wrong


def _render_tracking(req, tr, part, source, lots) -> None:
    typer.echo(f"Switching state of {part} from {source}: {len(lots)} lot(s), "
               f"{lots[0].date} to {lots[-1].date}")
    typer.echo(f"  next lot: {tr.next_severity.upper()}"
               + (f" ({req.switching.plan_for(tr.next_severity).label})"
                  if req.switching.plan_for(tr.next_severity) is not None else ""))
    typer.echo(f"  why: {tr.reason}")
    if tr.switches:
        rows = [[s.lot_id, s.date, s.source, s.target, s.rule, ", ".join(s.lots)]
                for s in tr.switches]
        typer.echo("\n  Switches:")
        typer.echo(common.table(rows, ["lot", "date", "from", "to", "rule", "lots behind it"]))
    else:
        typer.echo("  no switch so far")
    if tr.flags:
        typer.echo("\n  Flags:")
        for f in tr.flags:
            typer.echo(f"  - {f['lot_id']} ({f['date']}): {f['flag']}")
    typer.echo(f"\n  {WHOLE_SCHEME}")


# --- plan tables -------------------------------------------------------------------

def _pct(x) -> str:
    return "-" if x is None else format_pct(x)


def table_check(req) -> tuple[list, list]:
    """Audit rows (text) and items (JSON) of a file's [switching] and [[table]]."""
    from lotwise.analysis.table_audit import AuditLimits, TableRow, audit_row

    lim = req.limits or AuditLimits()
    per_unit = req.scope.per_unit
    rows, items = [], []
    targets = list(req.table)
    if req.switching is not None:
        n = req.scope.lot_size
        targets.insert(0, TableRow(index=None, lot_min=n, lot_max=n,
                                   plans=req.switching.plans(), label="switching"))
    for tr in targets:
        a = audit_row(tr, lim, per_unit=per_unit)
        a.update({"file": req.path, "part": req.part_id})
        if tr.index is None and lim.aql is not None:
            a["scheme_pa"] = _scheme_pa(req, lim)
        items.append(a)
        name = "switching" if tr.index is None else f"table[{tr.index}]"
        span = ("process" if tr.lot_min is None else str(tr.lot_min) if tr.lot_min == tr.lot_max
                else f"{tr.lot_min}-{tr.lot_max}")
        for sev, info in a["plans"].items():
            lots = info["lots"]
            verdict = "" if sev != "normal" else ("meets" if a["meets"] else "FLAGGED")
            rows.append([Path(req.path).name, name, span, sev, info["plan"],
                         " / ".join(_pct(x.get("alpha")) for x in lots),
                         " / ".join(_pct(x["ltpd"]) for x in lots),
                         " / ".join(_pct(x["aoql"]) for x in lots),
                         " / ".join(_pct(x.get("beta")) for x in lots), verdict])
    return rows, items


def _scheme_pa(req, lim) -> dict:
    """The whole scheme's long-run acceptance at the file's AQL (and RQL)."""
    from lotwise.analysis.switching import scheme_oc

    ps = [lim.aql] + ([lim.rql] if lim.rql is not None else [])
    oc = scheme_oc(req.switching, ps, req.model, req.scope)
    out = {"aql": oc.levels[0].pa}
    if lim.rql is not None:
        out["rql"] = oc.levels[1].pa
    return out


TABLE_HEADER = ["file", "row", "lots", "severity", "plan", "alpha (min/max lot)",
                "LTPD (min/max)", "AOQL (min/max)", "beta (min/max)", "verdict"]


def render_table_check(rows, items) -> str:
    """The plan-table audit as text (after ``check``'s characteristics)."""
    text = common.table(rows, TABLE_HEADER)
    for it in items:
        for f in it["flags"]:
            text += f"\n  - {Path(it['file']).name} {it['label'] or 'row ' + str(it['row'])}: {f}"
        if "scheme_pa" in it:
            sp = it["scheme_pa"]
            text += (f"\n  {Path(it['file']).name}: the whole scheme accepts "
                     f"{format_pct(sp['aql'])} of lots at the AQL in the long run"
                     + (f", {format_pct(sp['rql'])} at the RQL" if "rql" in sp else "") + ".")
    return text


# --- batch --audit -------------------------------------------------------------------

def batch_audit(path, out, force, as_json, max_alpha, max_beta) -> int:
    """One verdict per row of a plan-table CSV (``lotwise batch --audit``)."""
    from lotwise.analysis.table_audit import AuditLimits, audit_row
    from lotwise.data.table_audit import audit_csv_text, read_audit_csv

    lim = AuditLimits(max_alpha=parse_risk(max_alpha, "--max-alpha"),
                      max_beta=parse_risk(max_beta, "--max-beta"))
    if out is not None and out != "-":
        common.outputs(force, ("--out", out))
    items = read_audit_csv(path, "PLANS")
    for it in items:
        row = it["row"]
        if row is None:
            it.update({"verdict": "error", "reason": it["error"]})
            continue
        a = audit_row(row, lim)
        lots = a["plans"]["normal"]["lots"]
        lo, hi = lots[0], lots[-1]
        it.update({"plan": a["plans"]["normal"]["plan"], "model": lo["model"],
                   "alpha_at_lot_min": lo["alpha"], "alpha_at_lot_max": hi["alpha"],
                   "ltpd_at_lot_min": lo["ltpd"], "ltpd_at_lot_max": hi["ltpd"],
                   "aoql_at_lot_min": lo["aoql"], "aoql_at_lot_max": hi["aoql"],
                   "beta_at_lot_min": lo.get("beta"), "beta_at_lot_max": hi.get("beta"),
                   "verdict": "meets" if a["meets"] else "flagged",
                   "reason": "; ".join(a["flags"]), "audit": a})
    _overlaps(items)
    header = items[0]["header"] if items else []
    if out is not None:
        text = audit_csv_text(items, header)
        if out == "-":
            sys.stdout.write(text)
        else:
            from lotwise.data.files import write_text

            write_text(out, text, force=force, option="--out")
    ok = all(it["verdict"] == "meets" for it in items)
    if as_json:
        common.emit_json({"source": path, "meets": ok, "max_alpha": lim.max_alpha,
                          "max_beta": lim.max_beta, "out": out, "rows": [
                              {k: it.get(k) for k in ("line", "plan", "verdict", "reason")}
                              | {"label": it["row"].label if it["row"] else "",
                                 "lot_min": it["row"].lot_min if it["row"] else None,
                                 "lot_max": it["row"].lot_max if it["row"] else None,
                                 "audit": it.get("audit")} for it in items]})
    elif out != "-":
        _render_audit(items, path, out, lim)
    return 0 if ok else 1


def _overlaps(items) -> None:
    spans = sorted((it["row"].lot_min, it["row"].lot_max, k) for k, it in enumerate(items)
                   if it["row"] is not None)
    for (a0, a1, i), (b0, b1, j) in zip(spans, spans[1:]):
        if b0 <= a1:
            it = items[j]
            msg = (f"lots {b0}-{b1} overlap the row on line {items[i]['line']} "
                   f"(lots {a0}-{a1})")
            it["verdict"] = "flagged"
            it["reason"] = "; ".join(x for x in (it.get("reason"), msg) if x)


def _render_audit(items, path, out, lim) -> None:
    rows = []
    for it in items:
        r = it["row"]
        rows.append([str(it["line"]), "-" if r is None else f"{r.lot_min}-{r.lot_max}",
                     it.get("plan") or "-",
                     f"{_pct(it.get('alpha_at_lot_min'))} / {_pct(it.get('alpha_at_lot_max'))}",
                     f"{_pct(it.get('ltpd_at_lot_min'))} / {_pct(it.get('ltpd_at_lot_max'))}",
                     f"{_pct(it.get('aoql_at_lot_min'))} / {_pct(it.get('aoql_at_lot_max'))}",
                     it["verdict"].upper() if it["verdict"] != "meets" else "meets"])
    typer.echo(f"Plan table {path}: {len(items)} row(s); max_alpha {format_pct(lim.max_alpha)}")
    typer.echo(common.table(rows, ["line", "lots", "plan", "alpha (min/max lot)",
                                   "LTPD (min/max)", "AOQL (min/max)", "verdict"]))
    for it in items:
        if it["verdict"] != "meets":
            typer.echo(f"  - line {it['line']}: {it['reason']}")
    if out:
        typer.echo(f"  wrote {out}")


# --- next --plan-file and sheet --lot-size ----------------------------------------

def plan_from_file(path, plan, lot, severity) -> str:
    """Plan notation for ``next --plan-file FILE --lot-size N --severity S``."""
    from lotwise.documents.planfile import load
    from lotwise.documents.schemefile import pick_plan

    if plan is not None:
        raise InputError("--plan-file cannot be combined with --plan")
    req = load(path)
    return pick_plan(req, common.lot_size(lot), severity).notation()


def requests_for_lot(reqs, lot) -> list:
    """``sheet --lot-size N``: each file as the switching scheme for that lot size."""
    from lotwise.documents.schemefile import scheme_for_lot

    n = common.lot_size(lot)
    return [scheme_for_lot(req, n) for req in reqs]
