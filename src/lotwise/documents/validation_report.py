"""The validation report as a document: Markdown and a text-extractable PDF.

:func:`lotwise.validation.runner.run_cases` runs the reference cases; this
module renders its result (a ``Validation``: ``results``, ``started``,
``versions``, ``verdict``, ``passed``, ``failed``, ``skipped``; each result
with ``case``, ``expected``, ``computed``, ``difference``, ``verdict``,
``note``). It reads those attributes only and imports nothing from
:mod:`lotwise.validation`, which sits above the documents.
"""

from __future__ import annotations

import io
import textwrap

__all__ = ["INTRO", "SAFETY", "format_value", "markdown_report", "pdf_report"]

INTRO = ("Each case reproduces a published table value or worked example, a fact of the "
         "trade, or a cross-check computed at run time with a general-purpose reference "
         "library (mpmath for exact arithmetic, scipy.stats where our code does not call "
         "it). A case "
         "passes when the computed value lies within the stated absolute tolerance of the "
         "expected one (0 means exact agreement).")

SAFETY = ("Validation shows that the tool computes what it documents; it does not make a "
          "sampling plan adequate. Sampling cannot guarantee a lot free of nonconforming "
          "items; critical characteristics need 100 % inspection or stricter plans as "
          "contract and regulation require; defer to your applicable standards and qualified "
          "quality professionals.")


def format_value(v) -> str:
    """An expected or computed value as the report prints it (``-`` for none,
    floats to 10 significant digits, tuples element by element)."""
    if v is None:
        return "-"
    if isinstance(v, tuple):
        return "(" + ", ".join(format_value(x) for x in v) + ")"
    if isinstance(v, bool):
        return str(v)
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return f"{v:.10g}"
    return str(v)


def _rows(val):
    for r in val.results:
        diff = "-" if r.difference is None else f"{r.difference:.2e}"
        yield r, [r.case.id, format_value(r.expected), format_value(r.computed),
                  format_value(r.case.tolerance), diff,
                  r.verdict + (f" ({r.note})" if r.note else "")]


def _verdict_line(val) -> str:
    return (f"{val.verdict}: {len(val.results)} cases, {val.passed} passed, "
            f"{val.failed} failed, {val.skipped} skipped")


def markdown_report(val) -> str:
    """The report as Markdown."""
    when = val.started.strftime("%Y-%m-%d %H:%M UTC")
    lines = [f"# lotwise validation report, {val.started.date().isoformat()}", "",
             f"- Run: {when}",
             f"- Verdict: **{val.verdict}**: {len(val.results)} cases, {val.passed} passed, "
             f"{val.failed} failed, {val.skipped} skipped",
             "- Versions: " + ", ".join(f"{k} {v}" for k, v in val.versions.items()), "",
             INTRO, ""]
    areas: dict = {}
    for r, row in _rows(val):
        areas.setdefault(r.case.area, []).append((r, row))
    for area, items in areas.items():
        lines += [f"## {area[0].upper() + area[1:]}", "",
                  "| id | description | source | expected | computed | tolerance | "
                  "difference | verdict |",
                  "|---|---|---|---|---|---|---|---|"]
        for r, row in items:
            cells = [row[0], r.case.description, r.case.source] + row[1:]
            lines.append("| " + " | ".join(c.replace("|", "/") for c in cells) + " |")
        lines.append("")
    lines += ["## Note", "", SAFETY, ""]
    return "\n".join(lines)


# --- the PDF: blocks of styled lines, kept together on a page -------------------

_SIZE = {"title": 13, "heading": 10.5, "bold": 8.2, "body": 8.2, "small": 7.4}
_STEP = {"title": 0.03, "heading": 0.024, "bold": 0.0165, "body": 0.0165, "small": 0.0148}
_TOP, _BOTTOM = 0.95, 0.06


def _blocks(val) -> list:
    """The report as blocks of ``(style, text)`` lines, each kept on one page."""
    blocks: list[list[tuple[str, str]]] = []

    def block(*items):
        blocks.append(list(items))

    block(("title", f"lotwise validation report, {val.started.date().isoformat()}"),
          ("body", f"Run: {val.started.strftime('%Y-%m-%d %H:%M UTC')}"),
          ("bold", f"Verdict: {_verdict_line(val)}"),
          *[("body", t) for t in textwrap.wrap(
              "Versions: " + ", ".join(f"{k} {v}" for k, v in val.versions.items()), 105)],
          ("body", ""), *[("body", t) for t in textwrap.wrap(INTRO, 105)])
    area = None
    for r, row in _rows(val):
        head = []
        if r.case.area != area:
            area = r.case.area
            head = [("body", ""), ("heading", area[0].upper() + area[1:])]
        block(*head, ("bold", f"{row[0]}: {row[5]}"),
              *[("small", "    " + t) for t in textwrap.wrap(
                  f"{r.case.description}. Source: {r.case.source}.", 100)],
              ("small", f"    expected {row[1]}, computed {row[2]}, tolerance {row[3]}, "
                        f"difference {row[4]}"))
    block(("body", ""), ("heading", "Note"), *[("body", t) for t in textwrap.wrap(SAFETY, 105)])
    return blocks


def _paginate(blocks) -> list:
    """Blocks grouped into pages, top to bottom."""
    pages: list[list] = [[]]
    y = _TOP
    for blk in blocks:
        need = sum(_STEP[st] for st, _ in blk)
        if y - need < _BOTTOM and pages[-1]:
            pages.append([])
            y = _TOP
        pages[-1].append(blk)
        y -= need
    return pages


def pdf_report(val) -> bytes:
    """The report as a text-extractable PDF (fonts embedded as TrueType)."""
    import matplotlib
    from matplotlib.backends.backend_pdf import PdfPages

    from lotwise.documents.plots.style import mpl

    plt = mpl()
    pages = _paginate(_blocks(val))
    buf = io.BytesIO()
    with matplotlib.rc_context({"pdf.fonttype": 42, "font.family": "DejaVu Sans"}):
        with PdfPages(buf, metadata={"Creator": "lotwise", "Title": "lotwise validation report"}) \
                as pdf:
            for k, page in enumerate(pages, start=1):
                fig = plt.figure(figsize=(8.27, 11.69))  # A4
                y = _TOP
                for blk in page:
                    for style, text in blk:
                        fig.text(0.07, y, text, fontsize=_SIZE[style], va="top", ha="left",
                                 fontweight="bold" if style in ("title", "heading", "bold")
                                 else "normal")
                        y -= _STEP[style]
                fig.text(0.07, 0.03, f"lotwise validation report, "
                         f"{val.started.date().isoformat()}, page {k} of {len(pages)}",
                         fontsize=7, color="0.4")
                pdf.savefig(fig)
                plt.close(fig)
    return buf.getvalue()
