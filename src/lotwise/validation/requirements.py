"""What the tool claims, as numbered requirements the reference cases cover.

The validation report closes with a table of these claims and the ids of the
cases that cover each. A case names its requirement (``ReferenceCase.requirement``)
or takes its area's (:data:`AREA_REQUIREMENTS`); single sampling is split by
the case id's prefix (:data:`SINGLE_PREFIXES`). ``R-INST`` is covered by the
installation check, not by a case.
"""

from __future__ import annotations

__all__ = ["REQUIREMENTS", "AREA_REQUIREMENTS", "SINGLE_PREFIXES", "INSTALLATION",
           "requirement_for"]

INSTALLATION = "R-INST"

#: Requirement id -> the claim, in report order.
REQUIREMENTS: dict[str, str] = {
    "R-INST": "The installed program files are the ones released: every package file's "
              "SHA-256 matches the build manifest (or the git commit of a checkout).",
    "R-OC": "Pa of an attributes plan is exact under the hypergeometric, binomial and "
            "Poisson models, from tiny to very large samples and lots.",
    "R-QUALITY": "The quality level at which an OC curve takes a given Pa (AQL, "
                 "indifference quality, RQL) is found to the precision shown.",
    "R-DESIGN": "A designed single plan is the smallest meeting both risks; targets no "
                "plan meets are reported as infeasible.",
    "R-ZERO": "Accept-on-zero and confidence/reliability sample sizes and their exact "
              "bounds are correct, for a process and for a finite lot.",
    "R-RECT": "AOQ, AOQL and ATI under rectifying inspection, and the least-ATI plan, "
              "are correct.",
    "R-MULTI": "Double and multiple plans: Pa by stage and ASN, curtailed and not, "
               "under every model.",
    "R-SEQ": "Item-by-item sequential plans: Wald's lines, OC and ASN.",
    "R-CHAIN": "Chain (ChSP-1) and skip-lot (SkSP-2) plans: OC and design.",
    "R-CSP": "Continuous sampling plans CSP-1, CSP-2, CSP-3: clearance numbers, AOQL, "
             "AFI and the fraction passed under sampling.",
    "R-VAR": "Variables plans (one limit, sigma known or unknown): OC and design.",
    "R-VAR2": "Two-limit variables plans with sigma unknown (k- and M-method): the exact OC.",
    "R-JUDGE": "lotwise judge accepts or rejects a measured sample as the plan's rule "
               "says, with the statistics and estimates it prints.",
    "R-REC": "Lot records and the supplier view: Clopper-Pearson bounds and the "
             "predictive probability of rejection.",
    "R-SHEET": "A plan file's sheet prints the Pa, alpha and beta of each characteristic "
               "correctly to the digits shown.",
    "R-DRAW": "A pick list is reproducible: the same lot, sample size and seed give the "
              "same units, by the documented algorithm.",
}

#: Report area -> requirement id.
AREA_REQUIREMENTS: dict[str, str] = {
    "exact arithmetic cross-checks": "R-OC",
    "rectifying inspection": "R-RECT",
    "least inspection": "R-RECT",
    "accept-on-zero plans": "R-ZERO",
    "confidence and reliability": "R-ZERO",
    "chain and skip-lot plans": "R-CHAIN",
    "double and multiple plans": "R-MULTI",
    "sequential plans": "R-SEQ",
    "variables plans": "R-VAR",
    "continuous sampling (CSP)": "R-CSP",
    "lot records and supplier view": "R-REC",
    "two-limit variables plans": "R-VAR2",
    "judging a measured sample": "R-JUDGE",
    "plan files and sheets": "R-SHEET",
    "pick lists": "R-DRAW",
}

#: Single-sampling case id prefix -> requirement id (first match wins; else R-OC).
SINGLE_PREFIXES: tuple = (
    ("cameron-", "R-QUALITY"), ("chisquare-operating-ratio", "R-QUALITY"),
    ("montgomery-design", "R-DESIGN"), ("chisquare-design", "R-DESIGN"),
    ("binomial-design", "R-DESIGN"), ("design-", "R-DESIGN"),
    ("zero-acceptance", "R-ZERO"), ("acceptance-", "R-ZERO"),
)


def requirement_for(case_id: str, area: str) -> str:
    """The requirement a case of ``area`` covers by default ("" if none)."""
    if area == "single sampling":
        for prefix, rid in SINGLE_PREFIXES:
            if case_id.startswith(prefix):
                return rid
        return "R-OC"
    return AREA_REQUIREMENTS.get(area, "")
