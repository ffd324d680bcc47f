"""Files the page offers for download: the plan sheet (PDF or Markdown), the
plan file (TOML) and the OC table (CSV).

Nothing is written outside a temporary folder made for the one request and
removed before the answer leaves: the plan file is built from the page's
inputs (:func:`plan_file_text`), read back by the plan-file reader, resolved
and written by the sheet writer (:func:`lotwise.documents.sheets.write_sheets`)
into that folder; the requested file is read into memory and the folder is
deleted.
"""

from __future__ import annotations

import json
import re
import tempfile
from dataclasses import dataclass
from pathlib import Path

from lotwise.core.quantities import InputError
from lotwise.web import commands

__all__ = ["Download", "plan_file_text", "plan_file", "sheet", "oc_csv"]

#: The sheet is written for lot-by-lot plans; continuous sampling and the
#: side-by-side trade-off have no plan file.
_TEXT = re.compile(r"^[\w .,;:()/&+'#-]{0,80}$", re.UNICODE)


@dataclass(frozen=True, kw_only=True)
class Download:
    """A file for the browser to save."""

    filename: str
    data: bytes
    mimetype: str


def _text(q, name: str, default: str) -> str:
    value = q.get(name, default).strip() or default
    if not _TEXT.match(value):
        raise InputError(f"{name} ({value[:40]}) must be up to 80 letters, digits, spaces and "
                         "simple punctuation (. , ; : ( ) / & + ' # -)")
    return value


def _toml(value: str) -> str:
    """A TOML basic string (JSON string escapes are valid TOML)."""
    return json.dumps(value, ensure_ascii=False)


def _designed_plan(q):
    """The plan the page shows: the ``plan`` parameter, or the designed one."""
    from lotwise.families.base import families

    scheme = q.get("scheme", "single")
    sheets = [f.name for f in families()
              if f.design is not None and f.plan_class.evaluation != "flow"]
    if scheme in commands.DESIGNERS and scheme not in sheets:
        raise InputError(f"--scheme ({scheme}): a plan sheet is written for lot-by-lot plans "
                         f"({', '.join(sheets)})")
    if q.get("plan") is not None:
        return commands.plan_from(q.get("plan"), None, None), True
    body = commands.design(q).body
    from lotwise.families.base import parse_plan

    return parse_plan(body["notation"]), False


def plan_file_text(q) -> str:
    """A plan file (TOML) for the page's inputs.

    A designed single plan is written as its design request (targets, a
    fixed ``c``, ``n`` or ``max_n``), so the sheet designs the same plan; any
    other plan, and a plan given in notation (the supplier's proposal), is
    written as ``plan = "..."`` and the sheet audits it against the targets.
    """
    plan, given = _designed_plan(q)
    part = _text(q, "part", "PART-1")
    supplier = _text(q, "supplier", "")
    per_unit = q.flag("per_unit")
    lines = ["# Written by lotwise serve from the page's inputs.",
             "rationale = " + _toml("Targets agreed at the review; see the sheet for what the "
                                    "plan guarantees."), "", "[part]", f"id = {_toml(part)}"]
    if supplier:
        lines.append(f"supplier = {_toml(supplier)}")
    lines += ["", "[lot]"]
    lot = commands.lot_size_option(q.get("lot_size"))
    if lot is not None:
        lines.append(f"size = {lot}")
    lines.append(f"counts = {_toml('nonconformities' if per_unit else 'items')}")
    sampling = []
    if q.get("model") is not None:
        sampling.append(f"model = {_toml(q.get('model').strip().lower())}")
    # A plan judged on the part's common sample is written as its design request.
    single_request = plan.common_sample and not given and q.get("minimize") is None
    if single_request:
        for key in ("n", "max_n"):
            if q.get(key) is not None:
                sampling.append(f"{key} = {int(q.get(key).replace(',', '').replace('_', ''))}")
    if sampling:
        lines += ["", "[sampling]"] + sampling
    lines += ["", "[[characteristic]]", 'id = "C1"', 'class = "major"']
    for key, default in (("aql", None), ("rql", None), ("alpha", "5%"), ("beta", "10%")):
        value = q.get(key, default)
        if value is None:
            raise InputError(f"--{key} is required for a plan file (for example --{key} 1%)")
        lines.append(f"{key} = {_toml(value.strip())}")
    if single_request and q.get("c") is not None:
        lines.append(f"c = {int(q.get('c'))}")
    if not single_request:
        lines.append(f"plan = {_toml(plan.notation())}")
    return "\n".join(lines) + "\n"


def _resolved(q):
    from lotwise.documents.partplan import resolve
    from lotwise.documents.planfile import loads

    text = plan_file_text(q)
    stem = re.sub(r"[^A-Za-z0-9-]+", "-", _text(q, "part", "PART-1")).strip("-").lower()
    req = loads(text, f"{stem or 'plan'}.toml")
    return text, stem or "plan", resolve(req)


def plan_file(q) -> Download:
    text, stem, _pp = _resolved(q)  # resolved: a file the reader refuses is never offered
    return Download(filename=f"{stem}.toml", data=text.encode("utf-8"),
                    mimetype="application/toml")


def sheet(q, kind: str) -> Download:
    """The sheet as ``pdf`` or ``md``, written in a temporary folder."""
    from lotwise.documents.sheets import write_sheets

    _text_, stem, pp = _resolved(q)
    if pp.n is None:
        raise commands.Refused(f"no plan: {pp.problem}",
                               {"feasible": False, "reason": pp.problem})
    with tempfile.TemporaryDirectory(prefix="lotwise-web-") as tmp:
        paths = write_sheets(pp, tmp)
        data = Path(paths[kind]).read_bytes()
    mime = "application/pdf" if kind == "pdf" else "text/markdown; charset=utf-8"
    return Download(filename=f"{stem}-sheet.{kind}", data=data, mimetype=mime)


def oc_csv(q) -> Download:
    """The OC table of ``lotwise oc ... --csv -`` for the same parameters."""
    from lotwise.analysis.outputs import csv_text
    from lotwise.web import plans

    body = plans.oc(q).body
    name = re.sub(r"[^A-Za-z0-9]+", "-", body.get("scheme", "plan")).strip("-") or "plan"
    return Download(filename=f"oc-{name}.csv",
                    data=csv_text(body["columns"], body["rows"]).encode("utf-8"),
                    mimetype="text/csv; charset=utf-8")
