"""Benchmarks of the web API (see benchmark.py): server time of a request,
measured through the framework's test client (the worker processes already
started), and the page's first load.

Goals: a single-plan design with its OC curve (two requests, as the page
makes them) under 30 ms median; a double-plan design under 1 s; the page and
its assets under 1 s.
"""

from __future__ import annotations

from lotwise.web.app import create_app

CLIENT = create_app(budget=60).test_client()


def _single_with_oc(lot=""):
    d = CLIENT.get(f"/api/design?aql=1%25&rql=6%25{lot}")
    plan = d.get_json()["notation"]
    CLIENT.get(f"/api/oc?plan={plan}{lot}&aql=1%25&rql=6%25&points=101")


def _page():
    for path in ("/", "/static/app.js", "/static/style.css"):
        CLIENT.get(path)


CASES = [
    {"name": "web: single design + OC curve (101 points), process", "func": _single_with_oc,
     "goal_ms": 30},
    # With a lot size the assessment adds AOQL and ATI under three models and the
    # hypergeometric Poisson verdict: the library's own cost (no goal set here).
    {"name": "web: single design + OC curve (101 points), lot of 2,000",
     "func": lambda: _single_with_oc("&lot_size=2000")},
    {"name": "web: double design, AQL 1 %/RQL 5 %",
     "func": lambda: CLIENT.get("/api/design?aql=1%25&rql=5%25&scheme=double"),
     "goal_ms": 1000, "repeat": 5},
    {"name": "web: page and assets", "func": _page, "goal_ms": 1000},
]
