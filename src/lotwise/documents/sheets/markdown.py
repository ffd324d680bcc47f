"""Markdown rendering of a plan sheet (for wikis and version control)."""

from __future__ import annotations

from lotwise.documents.sheets.content import PLAN_HEADER, RISK_HEADER

__all__ = ["render"]


def _table(header, rows) -> str:
    out = ["| " + " | ".join(header) + " |", "|" + "|".join("---" for _ in header) + "|"]
    out += ["| " + " | ".join(str(v) for v in r) + " |" for r in rows]
    return "\n".join(out)


def render(content, png: str | None = None, extra_png: str | None = None) -> str:
    """The sheet as Markdown; ``png`` is the OC figure's file name beside it."""
    c = content
    lines = [f"# {c.title}", "", f"**{c.subtitle}**", "", "## Scope", ""]
    lines += [f"- **{k}:** {v}" for k, v in c.scope]
    lines += ["", "## Plan", "", c.plan_line, ""]
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
    lines += ["## Cautions", ""] + [f"- {x}" for x in c.cautions] + ["", "---", "", c.footer, ""]
    return "\n".join(lines)
