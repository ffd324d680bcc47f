"""Markdown rendering of a plan sheet (for wikis and version control)."""

from __future__ import annotations

from lotwise.documents.sheets.content import ORDER_NOTE, PLAN_HEADER, RISK_HEADER, order_rows

__all__ = ["render"]


def _table(header, rows) -> str:
    out = ["| " + " | ".join(header) + " |", "|" + "|".join("---" for _ in header) + "|"]
    out += ["| " + " | ".join(str(v) for v in r) + " |" for r in rows]
    return "\n".join(out)


def render(content, png: str | None = None, extra_png: str | None = None) -> str:
    """The sheet as Markdown; ``png`` is the OC figure's file name beside it."""
    c = content
    lines = []
    if c.banner:  # first in the document: what this sheet is not, and why
        lines += [f"> **{c.banner.upper()}**", ">"] + [f"> **{r}**  " for r in c.reasons] + [""]
    lines += [f"# {c.title}", "", f"**{c.subtitle}**", "", "## Scope", ""]
    lines += [f"- **{k}:** {v}" for k, v in c.scope]
    lines += ["", "## Plan", ""]
    if c.procedures:  # a work instruction: the plan meets its targets
        lines += ["> **At the bench.** " + c.plan_line, ">",
                  "> Step-by-step procedure: see *Bench procedure* below; blank record form: "
                  f"*Record form* below and {c.record_csv}.", ""]
    else:
        lines += [c.plan_line, ""]
    if c.plan_rows:
        lines += [_table(PLAN_HEADER, c.plan_rows), ""]
    if c.alternatives:
        lines += [c.alternatives, ""]
    if c.risk_rows:
        lines += ["## Targets against achieved risks", "", _table(RISK_HEADER, c.risk_rows), "",
                  c.model_note, ""]
    if c.guarantees:
        lines += ["## What the plan guarantees", ""] + [f"- {g}" for g in c.guarantees] + [""]
    if png:
        lines += [f"![OC curves: exact model solid, Poisson approximation dashed]({png})", ""]
    if extra_png:
        lines += [f"![OC, AOQ and ATI under rectifying inspection]({extra_png})", ""]
    if c.poisson:
        lines += ["## The Poisson approximation", ""] + [f"- {p}" for p in c.poisson] + [""]
    lines += ["## Selecting the sample", "", c.selection, "",
              "## A rejected lot", "", c.rejected, ""]
    if c.rationale:
        lines += ["## Rationale", "", c.rationale.strip(), ""]
    if c.cost:
        lines += ["## Inspection load and cost", ""] + [f"- {x}" for x in c.cost] + [""]
    lines += ["## Cautions", ""] + [f"- {x}" for x in c.cautions] + [""]
    if c.approvals:
        lines += ["## Approvals", "", _table([k for k, _ in c.approvals],
                                             [[v or "." * 24 for _, v in c.approvals]]),
                  ""]
    if c.procedures:
        lines += ["## Bench procedure", ""]
        for p in c.procedures:
            lines += _procedure(p, 3)
        if c.order:
            lines += ["### Inspection order", "", ORDER_NOTE, "",
                      _table(["Positions"] + [""] * 10, order_rows(c.order)), ""]
        lines += _record(c)
    lines += ["---", "", c.footer, ""]
    return "\n".join(lines)


def _procedure(p, level: int) -> list:
    out = ["#" * level + " " + p.heading, ""]
    out += [f"{j}. {s}" for j, s in enumerate(p.steps, 1)] + [""]
    if p.header:
        out += [_table(p.header, p.rows), ""]
    out += [(f"**{n}**" if n.startswith("Worked line") else n) + "\n" for n in p.notes]
    if p.reference is not None:
        out += ["The plan an inspected lot is judged by:", ""]
        out += [f"{j}. {s}" for j, s in enumerate(p.reference.steps, 1)] + [""]
        if p.reference.header:
            out += [_table(p.reference.header, p.reference.rows), ""]
    return out


def _record(c) -> list:
    """The blank record form (one per lot); the same fields as the CSV template."""
    out = ["## Record form (blank, one per lot)", "",
           f"The same fields as the CSV template {c.record_csv}.", "",
           _table(["Field", "Entry"], [[k, v or "&nbsp;"] for k, v in c.record_head]), ""]
    for b in c.records:
        out += [f"### {b.heading}", ""]
        if b.boxes:
            per = 10
            cells = [f"x{j} =" for j in range(1, b.boxes + 1)]
            out += [_table([""] * per, [cells[j:j + per] + [""] * (per - len(cells[j:j + per]))
                                        for j in range(0, len(cells), per)]), ""]
        out += [_table(b.header, [[v or "&nbsp;" for v in r] for r in b.rows]), ""]
        out += [ln + "\n" for ln in b.lines]
    out += ["### Lot decision", "",
            _table(["Lot accepted / rejected", "Inspector", "Signature", "Date"],
                   [["&nbsp;"] * 4]), ""]
    return out
