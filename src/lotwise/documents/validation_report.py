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

__all__ = ["INTRO", "SAFETY", "FINGERPRINT_RULE", "format_value", "fingerprint", "report_body",
           "markdown_report", "pdf_report"]

INTRO = ("The installation check hashes every installed program file (SHA-256) and compares "
         "it with the build manifest or the git commit: one altered file fails the report. "
         "Each case then covers a numbered requirement (table at the end) and reproduces a "
         "published table value or worked example, or an independent computation made at run "
         "time (mpmath, exact integers, enumeration, quadrature, simulation) that does not call "
         "the routine the tool uses. A case passes when the computed value lies within the "
         "stated absolute tolerance of the expected one (0 means exact agreement); each "
         "tolerance states its reason. Where a published value is only an approximation, it is "
         "shown beside the exact value, which the case passes on. The functions a case "
         "exercised are recorded as it runs.")

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
            f"{val.failed} failed, {val.skipped} skipped; installation check "
            f"{_inst_verdict(val)}")


def _inst_verdict(val) -> str:
    inst = getattr(val, "installation", None)
    return "not made" if inst is None else inst.verdict


def _published(r) -> str:
    """The published value beside the exact one, and how far apart they are."""
    pub = r.case.published
    if pub is None:
        return ""
    gap = ""
    if isinstance(pub, (int, float)) and isinstance(r.expected, (int, float)) \
            and not isinstance(r.expected, bool):
        gap = f", published - exact = {pub - r.expected:+.4g}"
    return (f"published {format_value(pub)} (exact {format_value(r.expected)}{gap}): "
            f"{r.case.published_note}")


def _installation_lines(val) -> list:
    """The installation section as Markdown lines."""
    inst = getattr(val, "installation", None)
    lines = ["## Installation check", ""]
    lines += [f"- {k}: {v}" for k, v in val.versions.items()]
    if inst is None:
        return lines + ["", "The installation check was not made.", ""]
    bad = inst.changed + inst.missing + inst.unexpected
    lines += [f"- Package directory: {inst.root}", f"- Reference: {inst.reference}",
              f"- Verdict: **{inst.verdict}**: {len(inst.files)} files hashed; "
              f"{len(inst.changed)} changed, {len(inst.missing)} missing, "
              f"{len(inst.unexpected)} not in the reference", ""]
    if bad:
        lines += ["Files that differ from the reference: " + ", ".join(bad), ""]
    lines += ["| file | SHA-256 | verdict |", "|---|---|---|"]
    lines += [f"| {f.path} | {f.sha256} | {f.verdict} |" for f in inst.files]
    return lines + [""]


def _requirement_lines(val) -> list:
    lines = ["## Requirements and the cases that cover them", "",
             "| requirement | claim | covered by |", "|---|---|---|"]
    for rid, claim, ids in val.requirement_table():
        cover = "installation check" if rid == "R-INST" else (
            f"{len(ids)} cases: " + ", ".join(ids) if ids else "NO CASE")
        lines.append(f"| {rid} | {claim} | {cover} |")
    return lines + [""]


def fingerprint(text: str) -> str:
    """SHA-256 (hex) of the report's text above its fingerprint line."""
    import hashlib

    return hashlib.sha256(text.encode("utf-8")).hexdigest()


FINGERPRINT_RULE = ("Fingerprint: SHA-256 of this Markdown file's text above this line "
                    "(UTF-8; check with: sed '$d' FILE | sha256sum)")


def report_body(val) -> str:
    """The Markdown report without its fingerprint line."""
    when = val.started.strftime("%Y-%m-%d %H:%M UTC")
    lines = [f"# lotwise validation report, {val.started.date().isoformat()}", "",
             f"- Run: {when}",
             f"- Verdict: **{val.verdict}**: {len(val.results)} cases, {val.passed} passed, "
             f"{val.failed} failed, {val.skipped} skipped; installation check "
             f"{_inst_verdict(val)}",
             "- Versions: " + ", ".join(f"{k} {v}" for k, v in val.versions.items()), "",
             INTRO, ""]
    lines += _installation_lines(val)
    areas: dict = {}
    for r, row in _rows(val):
        areas.setdefault(r.case.area, []).append((r, row))
    for area, items in areas.items():
        lines += [f"## {area[0].upper() + area[1:]}", "",
                  "| id | requirement | description | exercises | source | expected | "
                  "computed | tolerance | tolerance reason | difference | verdict |",
                  "|---|---|---|---|---|---|---|---|---|---|---|"]
        for r, row in items:
            desc = r.case.description + (f". {_published(r)}" if r.case.published is not None
                                         else "")
            if r.reference_calls:
                desc += ". The reference uses lotwise's " + ", ".join(r.reference_calls)
            cells = [row[0], r.requirement, desc, r.exercises, r.case.source, row[1], row[2],
                     row[3], r.tolerance_reason, row[4], row[5]]
            lines.append("| " + " | ".join(c.replace("|", "/") for c in cells) + " |")
        lines.append("")
    lines += _requirement_lines(val)
    lines += ["## Note", "", SAFETY, ""]
    return "\n".join(lines) + "\n"


def markdown_report(val) -> str:
    """The report as Markdown, ending with its fingerprint line."""
    body = report_body(val)
    return body + f"{FINGERPRINT_RULE}: {fingerprint(body)}\n"


# --- the PDF: blocks of styled lines, kept together on a page -------------------

_SIZE = {"title": 13, "heading": 10.5, "bold": 8.2, "body": 8.2, "small": 7.4, "mono": 6.2}
_STEP = {"title": 0.03, "heading": 0.024, "bold": 0.0165, "body": 0.0165, "small": 0.0148,
         "mono": 0.0115}
_TOP, _BOTTOM = 0.95, 0.06


def _wrap(style, text, width=100, indent=""):
    return [(style, indent + t) for t in textwrap.wrap(text, width)] or [(style, "")]


def _installation_blocks(val) -> list:
    inst = getattr(val, "installation", None)
    out = [[("body", ""), ("heading", "Installation check")]
           + _wrap("body", "Versions: " + ", ".join(f"{k} {v}" for k, v in val.versions.items()),
                   105)]
    if inst is None:
        return out + [[("body", "The installation check was not made.")]]
    out.append(_wrap("body", f"Package directory: {inst.root}", 105)
               + _wrap("body", f"Reference: {inst.reference}", 105)
               + [("bold", f"Verdict: {inst.verdict}: {len(inst.files)} files hashed; "
                           f"{len(inst.changed)} changed, {len(inst.missing)} missing, "
                           f"{len(inst.unexpected)} not in the reference")])
    bad = inst.changed + inst.missing + inst.unexpected
    if bad:
        out.append(_wrap("bold", "Differ from the reference: " + ", ".join(bad), 100))
    for f in inst.files:
        out.append([("mono", f"{f.sha256}  {f.path}" + ("" if f.verdict == "ok"
                                                       else f"  [{f.verdict}]"))])
    return out


def _case_block(r, row, head) -> list:
    lines = [*head, ("bold", f"{row[0]} [{r.requirement}]: {row[5]}")]
    lines += _wrap("small", f"{r.case.description}.", 100, "    ")
    if r.case.published is not None:
        lines += _wrap("small", _published(r), 100, "    ")
    lines += _wrap("small", f"Exercises: {r.exercises}.", 100, "    ")
    lines += _wrap("small", f"Source: {r.case.source}.", 100, "    ")
    if r.reference_calls:
        lines += _wrap("small", "The reference uses lotwise's " + ", ".join(r.reference_calls)
                       + ".", 100, "    ")
    lines += _wrap("small", f"expected {row[1]}, computed {row[2]}, tolerance {row[3]} "
                            f"({r.tolerance_reason}), difference {row[4]}", 100, "    ")
    return lines


def _blocks(val, digest: str) -> list:
    """The report as blocks of ``(style, text)`` lines, each kept on one page."""
    blocks: list[list[tuple[str, str]]] = [
        [("title", f"lotwise validation report, {val.started.date().isoformat()}"),
         ("body", f"Run: {val.started.strftime('%Y-%m-%d %H:%M UTC')}"),
         ("bold", f"Verdict: {_verdict_line(val)}"),
         *_wrap("body", f"Report fingerprint (SHA-256 of the Markdown report's content): "
                        f"{digest}", 105),
         ("body", ""), *_wrap("body", INTRO, 105)]]
    blocks += _installation_blocks(val)
    area = None
    for r, row in _rows(val):
        head = []
        if r.case.area != area:
            area = r.case.area
            head = [("body", ""), ("heading", area[0].upper() + area[1:])]
        blocks.append(_case_block(r, row, head))
    blocks.append([("body", ""), ("heading", "Requirements and the cases that cover them")])
    for rid, claim, ids in val.requirement_table():
        cover = "installation check" if rid == "R-INST" else (
            f"{len(ids)} cases: " + ", ".join(ids) if ids else "NO CASE")
        blocks.append([("bold", f"{rid}: "), *_wrap("small", claim, 100, "    "),
                       *_wrap("small", f"Covered by {cover}", 100, "    ")])
    blocks.append([("body", ""), ("heading", "Note"), *_wrap("body", SAFETY, 105)])
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
    digest = fingerprint(report_body(val))
    pages = _paginate(_blocks(val, digest))
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
                                 else "normal",
                                 **({"family": "DejaVu Sans Mono"} if style == "mono" else {}))
                        y -= _STEP[style]
                fig.text(0.07, 0.03, f"lotwise validation report, "
                         f"{val.started.date().isoformat()}, fingerprint {digest[:16]}..., "
                         f"page {k} of {len(pages)}", fontsize=7, color="0.4")
                pdf.savefig(fig)
                plt.close(fig)
    return buf.getvalue()
