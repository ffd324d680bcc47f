"""Terminal text of an assessment (see :mod:`lotwise.analysis.assess`, which
owns the JSON object every output reads).
"""

from __future__ import annotations

from lotwise.core.quantities import format_level, format_pct
from lotwise.core.numbers import probability

__all__ = ["render_assessment", "context_lines", "verdict_word", "table"]


_MODEL_WORDS = {
    "hypergeometric": "hypergeometric (finite lot, type A)",
    "binomial": "binomial (process or large lot, type B)",
    "poisson": "Poisson",
}


def context_lines(rep: dict, pct=format_pct) -> list[str]:
    """The "judged by ..." and "targets ..." lines of a report."""
    per_unit = rep["per_unit"]
    t = rep["targets"]
    counted = "nonconformities per unit" if per_unit else "fraction nonconforming"
    lot = f"lot of {rep['lot_size']}" if rep["lot_size"] else "no lot size (process)"
    return [f"  judged by {_MODEL_WORDS.get(rep['model'], rep['model'])}; {counted}; {lot}",
            f"  targets   AQL {format_level(t['aql'], per_unit)} at alpha {pct(t['alpha'])}, "
            f"RQL {format_level(t['rql'], per_unit)} at beta {pct(t['beta'])}"]


def verdict_word(r: dict) -> str:
    """"yes", or "NO (alpha, beta)" naming the risks a model's row misses."""
    if r["meets"]:
        return "yes"
    short = [w for w, ok in (("alpha", r["meets_alpha"]), ("beta", r["meets_beta"])) if not ok]
    return "NO (" + ", ".join(short) + ")"


def table(rows: list[list[str]], header: list[str], indent: str = "  ") -> str:
    """A compact left-aligned text table (see :func:`lotwise.core.text.table`)."""
    from lotwise.core.text import table as _table

    return _table(rows, header, indent)


def render_assessment(rep: dict, title: str) -> str:
    """Terminal text for an assessment's JSON object (any family)."""
    from lotwise.core.quantities import format_risk_vs as pct_vs
    from lotwise.families.base import parse_plan

    t = rep["targets"]
    lines = [title]
    if rep.get("full_inspection"):
        lines.append(f"  100 % inspection: no sample smaller than the lot of {rep['lot_size']} "
                     "meets both risks; inspect every item.")
    lines += ["  " + s for s in parse_plan(rep["notation"]).describe()]
    lines += context_lines(rep)
    varying = "asn" in rep
    rows = []
    for m, r in rep["models"].items():
        mark = " *" if m == rep["model"] else ""
        row = [m + mark, probability(r['pa_aql'], 5), pct_vs(r["alpha"], t["alpha"]),
               probability(r['pa_rql'], 5), pct_vs(r["beta"], t["beta"])]
        if varying:
            row += [f"{r['asn_aql']:.1f}", f"{r['asn_rql']:.1f}"]
        rows.append(row + [verdict_word(r)])
    if "wald" in rep:
        w = rep["wald"]
        rows.append(["Wald approx.", probability(w['pa_aql'], 5), format_pct(1 - w["pa_aql"]),
                     probability(w['pa_rql'], 5), format_pct(w["pa_rql"]), f"{w['asn_aql']:.1f}",
                     f"{w['asn_rql']:.1f}", "(untruncated)"])
    header = ["model", "Pa(AQL)", "alpha", "Pa(RQL)", "beta"]
    if varying:
        header += ["ASN(AQL)", "ASN(RQL)"]
    lines += ["", table(rows, header + ["meets"]), "  (* the model the plan is judged by)", ""]
    lines += [f"  - {s}" for s in rep["statements"]]
    if "poisson_verdict" in rep:
        lines += ["", "  Poisson approximation: " + rep["poisson_verdict"]["summary"]]
    return "\n".join(lines)
