"""The switching-scheme and plan-table section of a plan sheet.

A plan file with ``[switching]`` (or ``[[table]]``) gets, in its Markdown
sheet, the plans by severity, the rules in force, the scheme's long-run
acceptance at the file's AQL and RQL with the expected lots until tightened
inspection, and the figure of :mod:`lotwise.documents.plots.switching`
(``<stem>-scheme.png``) with its table (``<stem>-scheme.csv``). A file with no
characteristics gets a sheet of its own built from this section (PDF and
Markdown).
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import replace
from pathlib import Path

from lotwise.core.numbers import csv_number
from lotwise.core.quantities import format_level, format_pct

__all__ = ["scheme_section", "scheme_files", "write_scheme_sheet", "WHOLE_SCHEME"]

WHOLE_SCHEME = ("The protection a switching scheme gives is a property of the whole scheme: "
                "the long-run fraction of lots accepted depends on how often each plan is "
                "used, not on any one plan's OC.")

_RULE_TEXT = {
    "tighten_rejects": "to tightened when {tighten_rejects} lots are rejected within "
                       "{tighten_window} consecutive lots on normal",
    "relax_accepts": "back to normal after {relax_accepts} consecutive accepted lots on "
                     "tightened",
    "reduce_accepts": "to reduced after {reduce_accepts} consecutive accepted lots on normal",
    "restore_rejects": "back to normal when {restore_rejects} lot(s) are rejected during one "
                       "period of reduced",
    "stop_rejects": "discontinue inspection when {stop_rejects} lots are rejected in all "
                    "during one period of tightened",
}


def _rules(scheme) -> list:
    r = scheme.rules.as_dict()
    out = []
    for key, text in _RULE_TEXT.items():
        if key in ("tighten_rejects", "relax_accepts", "stop_rejects") and \
                scheme.tightened is None:
            continue
        if key in ("reduce_accepts", "restore_rejects") and scheme.reduced is None:
            continue
        if r[key] == 0:
            out.append(f"{key} = 0: never")
            continue
        line = text.format(**r)
        if key == "reduce_accepts" and r["reduce_limit"] is not None:
            line += f", finding at most {r['reduce_limit']} nonconforming in those lots in all"
        out.append(line)
    return out


def _share(x: float) -> str:
    return "below 0.01 %" if 0 < x < 1e-4 else format_pct(x)


def _levels(req) -> list:
    lim = req.limits
    ps = [x for x in ((lim.aql, "AQL"), (lim.rql, "RQL")) if lim and x[0] is not None]
    return ps


def scheme_section(req, png: str | None = None) -> str:
    """Markdown lines on the file's switching scheme and plan table."""
    from lotwise.analysis.switching import scheme_oc

    per = req.scope.per_unit
    lines = []
    sw = req.switching
    if sw is not None:
        lines += ["## Switching scheme", "", "| Severity | Plan |", "|---|---|"]
        lines += [f"| {s} | {p.label} |" for s, p in sw.plans().items()]
        lines += ["", "Rules (counts start afresh at every switch):", ""]
        lines += [f"- {x}" for x in _rules(sw)] + [""]
        levels = _levels(req)
        if levels:
            oc = scheme_oc(sw, [p for p, _ in levels], req.model, req.scope)
            for (p, name), lv in zip(levels, oc.levels):
                to_t = ("never" if lv.lots_to_tightened is None
                        else f"{lv.lots_to_tightened:,.1f}")
                lines.append(f"- At the {name} ({format_level(p, per)}): the scheme accepts "
                             f"{format_pct(lv.pa)} of lots in the long run (normal plan alone "
                             f"{format_pct(lv.plan_pa['normal'])}); average sample "
                             f"{lv.asn:.1f}; lots on normal/tightened/reduced "
                             + " / ".join(_share(lv.share[s]) for s in
                                          ("normal", "tightened", "reduced"))
                             + "; expected lots from a fresh "
                             f"start until tightened: {to_t}.")
            lines.append("")
        lines += [WHOLE_SCHEME, ""]
        if png:
            lines += [f"![Scheme OC beside each plan's, and lots until tightened]({png})", ""]
    if req.table:
        lines += ["## Plans by lot size", "", "| Lots | Normal | Tightened | Reduced |",
                  "|---|---|---|---|"]
        for r in req.table:
            cells = [r.plans[s].label if s in r.plans else "-"
                     for s in ("normal", "tightened", "reduced")]
            lines.append(f"| {r.lot_min:,} to {r.lot_max:,} | " + " | ".join(cells) + " |")
        lines += ["", "Audit: `lotwise check " + req.path + "` (alpha at the AQL, LTPD, AOQL "
                  "at the smallest and largest lot of each row).", ""]
    return "\n".join(lines)


def scheme_files(req, out, *, force: bool = False) -> dict:
    """The scheme's figure and OC table beside the sheet."""
    import numpy as np

    from lotwise.analysis.switching import scheme_oc
    from lotwise.data.files import save_figure, write_text
    from lotwise.documents.plots.switching import scheme_figure

    if req.switching is None:
        return {}
    out = Path(out)
    lim = req.limits
    fig = scheme_figure(req.switching, req.scope, model=req.model,
                        aql=lim.aql if lim else None, rql=lim.rql if lim else None,
                        title=f"Switching scheme {req.part_id}")
    paths = {"scheme_png": save_figure(fig, out / f"{req.stem}-scheme.png", force=force,
                                       option="sheet", dpi=110)}
    top = fig.axes[0].get_xlim()[1]
    oc = scheme_oc(req.switching, np.linspace(0.0, top, 41), req.model, req.scope)
    head = ["p", "pa", "asn", "share_normal", "share_tightened", "share_reduced",
            "lots_to_tightened", "lots_to_discontinue"]
    text = ",".join(head) + "\n" + "".join(
        ",".join(csv_number(v) for v in (
            lv.p, lv.pa, lv.asn, lv.share["normal"], lv.share["tightened"],
            lv.share["reduced"], lv.lots_to_tightened, lv.lots_to_discontinue)) + "\n"
        for lv in oc.levels)
    paths["scheme_csv"] = write_text(out / f"{req.stem}-scheme.csv", text, force=force,
                                     option="sheet")
    return paths


def write_scheme_sheet(pp, out_dir, *, parts: dict, force: bool = False, today=None) -> dict:
    """Sheet of a plan file with a scheme or table but no characteristics.

    ``parts`` holds the sheet's building blocks from :mod:`lotwise.documents.sheets`
    (``content`` the SheetContent class, ``caution``, ``rejected``, ``markdown`` and
    ``pdf`` the renderers), handed in so that this module does not import its package.
    """
    from importlib.metadata import version

    from lotwise.data.files import write_bytes, write_text

    SheetContent, markdown, pdf = parts["content"], parts["markdown"], parts["pdf"]
    CAUTION, DEFAULT_REJECTED = parts["caution"], parts["rejected"]

    req = pp.request
    out = Path(out_dir)
    today = today or _dt.date.today()
    paths = scheme_files(req, out, force=force)
    lot = f"lot size {req.scope.lot_size:,}" if req.scope.lot_size else "no lot size (a process)"
    scope = [("Part", req.part_id + (f": {req.part_description}" if req.part_description
                                     else ""))]
    if req.supplier:
        scope.append(("Supplier", req.supplier))
    scope.append(("Lot", (req.lot_definition + "; " if req.lot_definition else "") + lot))
    content = SheetContent(
        title=f"Switching scheme: {req.part_id}", subtitle=f"Plans typed in {Path(req.path).name}",
        scope=scope, plan_line="Inspect each lot with the plan of its severity; the rules "
        "below say when to switch.", plan_rows=[], risk_rows=[],
        guarantees=[], poisson=[], model_note="", selection="Draw the units at random from the "
        "whole lot (every unit equally likely), for example with lotwise draw.",
        rejected=req.rejected_lot or DEFAULT_REJECTED, cautions=[CAUTION],
        rationale=req.rationale, verdict="",
        footer=f"Prepared {today.isoformat()} with lotwise {version('lotwise')}; input fingerprint "
        f"{req.fingerprint()}. Re-create with: lotwise sheet {req.path}")
    png = f"{req.stem}-scheme.png" if "scheme_png" in paths else None
    md = markdown(replace(content, alternatives=scheme_section(req, png=png)))
    paths["md"] = write_text(out / f"{req.stem}.md", md, force=force, option="sheet")
    content = replace(content, alternatives=_plain(scheme_section(req)))
    paths["pdf"] = write_bytes(out / f"{req.stem}.pdf", pdf(content, pp), force=force,
                               option="sheet")
    return paths


def _plain(md: str) -> str:
    """The Markdown section as plain lines for the PDF page."""
    out = []
    for line in md.splitlines():
        if line.startswith("|---") or line.startswith("!["):
            continue
        if line.startswith("|"):
            cells = [c.strip() for c in line.strip("|").split("|")]
            line = ": ".join(cells[:1]) + (" " + ", ".join(cells[1:]) if len(cells) > 1 else "")
        out.append(line.replace("## ", "").replace("`", ""))
    return "\n".join(x for x in out if x.strip())
