"""The web API against the command line, its limits, its downloads, and the
notebook view.

Source of truth for the API: the command line's own ``--json`` output and
error lines (``lotwise.cli.main`` run in-process here, in the test; the web
layer never imports the CLI). Equality is exact (byte for byte). Independent
checks: scipy.stats' binomial and Poisson CDFs for the outlook (a different
code path from lotwise's kernels), the PDF header (ISO 32000-1:2008, 7.5.2:
a PDF file begins with ``%PDF-``).
"""

from __future__ import annotations

import json
import os
from urllib.parse import urlencode

import pytest

from lotwise.cli import main
from lotwise.web.app import create_app, input_error_body, is_loopback, make_server

FLAGS = {"per_unit": "--per-unit", "per_unit": "--per-unit", "designed": "--designed"}


@pytest.fixture(scope="module")
def client():
    app = create_app(budget=60)
    return app.test_client()


def _url(endpoint, params):
    return f"/api/{endpoint}?" + urlencode(params, doseq=True)


def _argv(endpoint, params):
    args = [endpoint]
    for k, v in params:
        if k in FLAGS:
            if v in ("1", "true"):
                args.append(FLAGS[k])
            continue
        args += ["--" + k.replace("_", "-"), v]
    return args + ["--json"]


def _cli(capsys, endpoint, params):
    code = main(_argv(endpoint, params))
    out = capsys.readouterr()
    return code, out.out, out.err


P = lambda **kw: list(kw.items())  # noqa: E731  (parameters in order)

#: (endpoint, parameters): every family the CLI designs, checks or tabulates,
#: passing and failing plans, finite lots, nonconformities per unit, models.
CASES = [
    ("design", P(aql="1%", rql="6%")),
    ("design", P(aql="1%", rql="8%", lot_size="500")),
    ("design", P(aql="0.5", rql="2", per_unit="1")),
    ("design", P(aql="1%", rql="6%", c="0")),
    ("design", P(aql="1%", rql="6%", max_n="80")),
    ("design", P(aql="1%", rql="6%", n="150")),
    ("design", P(aql="0.65%", rql="4%", alpha="0.05", beta="0.05", lot_size="2000")),
    ("design", P(aql="1%", rql="6%", lot_size="60")),
    ("design", P(aql="250ppm", rql="0.5%", lot_size="100000", model="binomial")),
    ("design", P(aql="1%", rql="5%", model="poisson")),
    ("design", P(aql="1%", rql="1.01%", max_n="10")),
    ("design", P(aql="1%", rql="5%", scheme="double")),
    ("design", P(aql="1%", rql="6%", scheme="double", lot_size="500", ratio="1")),
    ("design", P(aql="1%", rql="6%", scheme="double", minimize="asn-max")),
    ("design", P(aql="0.5", rql="3", scheme="double", per_unit="1")),
    ("design", P(aql="1%", rql="6%", scheme="sequential")),
    ("design", P(aql="1%", rql="6%", scheme="sequential", truncate="300", lot_size="5000")),
    ("design", P(aql="1%", rql="5%", scheme="compare-all")),
    ("design", P(aql="1%", rql="15%", scheme="chain")),
    ("design", P(aql="1%", rql="6%", scheme="chain")),
    ("design", P(aql="1%", rql="6%", scheme="variables", sigma="unknown", upper="25")),
    ("design", P(aql="1%", rql="6%", scheme="variables", sigma="known", sigma_value="0.02",
                 upper="25.00", lot_size="30")),
    ("design", P(aql="1%", rql="6%", scheme="variables", sigma="known", sigma_value="0.1",
                 lower="9", upper="11")),
    ("design", P(scheme="csp1", aoql="0.79%", f="1/10")),
    ("design", P(scheme="csp2", aoql="2%", i="50")),
    ("design", P(scheme="csp3", aoql="2%", f="1/5")),
    ("design", P(minimize="ati", process_average="0.5%", lot_size="100000", rql="2%")),
    ("design", P(minimize="ati", process_average="1%", lot_size="5000", aoql="2%")),
    ("check", P(plan="n=89,c=2", aql="1%", rql="6%")),
    ("check", P(n="80", c="2", aql="1%", rql="8%")),
    ("check", P(plan="n=89,c=2", aql="1%", rql="6%", lot_size="1000")),
    ("check", P(n="20", c="1", aql="1%", rql="10%", lot_size="4000", aoq_formula="simple")),
    ("check", P(plan="n=80,c=2", aql="1%", rql="8%", skip_lot="i=4,f=0.25")),
    ("check", P(plan="n1=50,c1=1,r1=4,n2=100,c2=3", aql="1%", rql="5%")),
    ("check", P(plan="multiple: n=20/20/20; c=-/1/3; r=2/3/4", aql="1%", rql="8%")),
    ("check", P(plan="sequential: p1=1%,p2=6%,truncate=300", aql="1%", rql="6%")),
    ("check", P(plan="chain: n=20,i=3", aql="1%", rql="10%")),
    ("check", P(plan="skiplot: n=80,c=2,i=4,f=0.25", aql="1%", rql="8%")),
    ("check", P(plan="variables: n=42,k=1.901,upper=25", aql="1%", rql="6%")),
    ("check", P(plan="csp1: i=38,f=1/10", at="1%,3%", run_length="500")),
    ("check", P(plan="n=50,c=1", aql="0.2", rql="3", per_unit="1")),
    ("check", P(plan="n=80,c=2", aql="8%", rql="1%")),
    ("oc", P(plan="n=80,c=2")),
    ("oc", P(n="80", c="2", lot_size="500", aql="1%", rql="8%")),
    ("oc", P(plan="n=50,c=1", at="1%", **{"at ": "2%"})),
    ("oc", P(plan="n1=50,c1=1,n2=100,c2=3", lot_size="2000", points="11")),
    ("oc", P(plan="sequential: p1=1%,p2=6%,truncate=300", points="6")),
    ("oc", P(plan="variables: n=42,k=1.901,upper=25", points="6")),
    ("oc", P(plan="csp2: i=38,f=0.1", points="5")),
    ("oc", P(plan="n=13,c=0", per_unit="1", max_p="0.5", points="6")),
    ("compare", P(plan="n=32,c=1", aql="1%", rql="8%", **{"plan ": "n=50,c=1"})),
    ("compare", P(designed="1", plan="n=89,c=2", aql="1%", rql="6%")),
    ("tradeoff", P(aql="0.65%,1%", rql="2%..6%:2%", process_average="0.8%",
                   deliveries_per_year="52")),
    # inspection errors, read as --miss-rate, --false-alarm and --study
    ("design", P(aql="1%", rql="6%", miss_rate="10%", false_alarm="2%", lot_size="2000")),
    ("design", P(aql="1%", rql="8%", scheme="double",
                 study="missed 4 of 50 nonconforming; flagged 2 of 50 conforming")),
    ("design", P(aql="1%", rql="2%", miss_rate="10%", max_n="100")),
    ("check", P(plan="n=80,c=2", aql="1%", rql="6%", miss_rate="0.1", lot_size="1000")),
    ("oc", P(plan="n=80,c=2", lot_size="500", miss_rate="10%", false_alarm="1%", points="6")),
    ("compare", P(plan="n=32,c=1", aql="1%", rql="8%", false_alarm="1%",
                  **{"plan ": "n=50,c=1"})),
]


def _norm(params):
    """Keys written with a trailing space repeat a parameter (``at``, ``plan``)."""
    return [(k.strip(), v) for k, v in params]


@pytest.mark.parametrize("endpoint, params", CASES,
                         ids=[f"{e}-{i}" for i, (e, _p) in enumerate(CASES)])
def test_api_equals_cli_json(client, capsys, endpoint, params):
    params = _norm(params)
    code, out, err = _cli(capsys, endpoint, params)
    r = client.get(_url(endpoint, params))
    assert code in (0, 1), err
    assert r.headers["X-Lotwise-Exit"] == str(code)
    assert r.get_data(as_text=True) == out  # byte for byte what --json prints
    if code == 1 and json.loads(out).get("feasible") is False:
        assert r.status_code == 422
    else:
        assert r.status_code == 200


def test_fifty_cases_over_every_family():
    assert len(CASES) >= 50
    schemes = {dict(p).get("scheme", "single") for e, p in CASES if e == "design"}
    assert {"single", "double", "sequential", "chain", "variables", "csp1", "csp2",
            "csp3"} <= schemes


#: Bad input: every one answers 400 with the command line's error line.
BAD = [
    ("design", P(aql="abc", rql="6%")),
    ("design", P(aql="1%")),
    ("design", P(aql="150", rql="200")),
    ("design", P(aql="1%", rql="6%", alpha="2")),
    ("design", P(aql="1%", rql="6%", lot_size="0")),
    ("design", P(aql="1%", rql="6%", lot_size="-5")),
    ("design", P(aql="1%", rql="6%", model="gaussian")),
    ("design", P(aql="1%", rql="6%", model="hypergeometric")),
    ("design", P(aql="1%", rql="6%", scheme="quadruple")),
    ("design", P(aql="1%", rql="6%", scheme="double", c="1")),
    ("design", P(aql="1%", rql="6%", scheme="double", ratio="50")),
    ("design", P(aql="1%", rql="6%", scheme="double", minimize="fast")),
    ("design", P(aql="1%", rql="6%", scheme="sequential", truncate="0")),
    ("design", P(aql="1%", rql="6%", scheme="variables")),
    ("design", P(aql="1%", rql="6%", scheme="variables", sigma="maybe")),
    ("design", P(aql="1%", rql="6%", scheme="variables", sigma="known", lower="5",
                 upper="1")),
    ("design", P(scheme="csp1", aoql="2%")),
    ("design", P(scheme="csp1", aoql="2%", f="1/10", aql="1%")),
    ("design", P(aql="1%", rql="6%", c="x")),
    ("design", P(aql="1%", rql="6%", process_average="1%")),
    ("design", P(aql="1%", rql="6%", scheme="chain", c="1")),
    ("design", P(aql="1%", rql="6%", per_unit="1", model="binomial")),
    ("check", P(aql="1%", rql="6%")),
    ("check", P(plan="n=80,c=90", aql="1%", rql="6%")),
    ("check", P(plan="n=80,c=2", n="80", aql="1%", rql="6%")),
    ("check", P(plan="quintuple: n=5", aql="1%", rql="6%")),
    ("check", P(plan="../../etc/passwd", aql="1%", rql="6%")),
    ("check", P(plan="n=80,c=2", aql="1%", rql="6%", lot_size="50")),
    ("check", P(plan="n=80,c=2", aql="1%", rql="6%", at="1%")),
    ("check", P(plan="n=80,c=2", aql="1%", rql="6%", aoq_formula="simple")),
    ("oc", P(plan="n=80,c=2", points="1")),
    ("oc", P(plan="n=80,c=2", at="abc")),
    ("oc", P(plan="n=80,c=2", max_p="2")),
    ("oc", P(plan="csp1: i=38,f=1/10", lot_size="100")),
    ("compare", P(plan="n=80,c=2", aql="1%", rql="6%")),
    ("tradeoff", P(aql="1%..90%:0.01%", rql="2%")),
    ("design", P(aql="1%", rql="6%", miss_rate="60%", false_alarm="50%")),
    ("design", P(aql="1%", rql="6%", miss_rate="0.1", study="missed 1 of 5 nonconforming")),
    ("design", P(aql="1%", rql="6%", scheme="variables", miss_rate="10%")),
    ("check", P(plan="variables: n=42,k=1.901,upper=25", aql="1%", rql="6%",
                miss_rate="10%")),
    ("oc", P(plan="n=80,c=2", study="missed 4 of 3 nonconforming")),
]


@pytest.mark.parametrize("endpoint, params", BAD, ids=[f"{e}-{i}" for i, (e, _p) in enumerate(BAD)])
def test_bad_input_answers_400_with_the_cli_message(client, capsys, endpoint, params):
    code, out, err = _cli(capsys, endpoint, params)
    assert code == 2 and out == ""
    line = err.strip()
    assert line.startswith("lotwise: error: ")
    r = client.get(_url(endpoint, params))
    assert r.status_code == 400
    body = r.get_json()
    assert body["message"] == line[len("lotwise: error: "):]
    assert "Traceback" not in r.get_data(as_text=True)
    if body["field"] is not None:
        assert body["allowed"]


def test_error_body_names_field_value_and_what_is_allowed():
    b = input_error_body("--aql ('abc') must be a number such as 0.01, 1% or 250ppm",
                         {"aql": ["abc"]})
    assert b["field"] == "aql" and b["value"] == "abc"
    assert b["allowed"] == "must be a number such as 0.01, 1% or 250ppm"
    b = input_error_body("--lot-size (0) must be at least 1", {})
    assert (b["field"], b["value"], b["allowed"]) == ("lot_size", "0", "must be at least 1")


# --- limits and hostile requests (the limits stated in lotwise.web.app) -------------------

@pytest.mark.parametrize("url, status, field", [
    ("/api/oc?plan=n=80,c=2&points=2001", 400, "points"),
    ("/api/oc?plan=n=80,c=2&points=2000", 200, None),
    ("/api/design?aql=1%25&rql=6%25&lot_size=1000000001", 400, "lot_size"),
    ("/api/design?aql=1%25&rql=6%25&lot_size=1000000000", 200, None),
    ("/api/check?plan=n=10000000,c=5&aql=1%25&rql=6%25", 400, "plan"),
    ("/api/check?n=10000000&c=5&aql=1%25&rql=6%25", 400, "n"),
    ("/api/design?aql=1%25&rql=6%25&max_n=99999999999999999999999", 400, "max_n"),
    ("/api/design?aql=1e999&rql=6%25", 400, "aql"),
    ("/api/design?aql=1%25&rql=6%25&bogus=1", 400, None),
    ("/api/design?aql=" + "1" * 300 + "&rql=6%25", 400, None),
    ("/api/oc?plan=n=80,c=2" + "&at=1%25" * 201, 400, None),
    ("/api/compare?aql=1%25&rql=6%25" + "&plan=n=80,c=2" * 9, 400, None),
    ("/api/design?aql=1%25&rql=6%25&per_unit=maybe", 400, "per_unit"),
])
def test_limits(client, url, status, field):
    r = client.get(url)
    assert r.status_code == status, r.get_data(as_text=True)[:300]
    if status == 400:
        body = r.get_json()
        assert body["message"]
        if field:
            assert body["field"] == field


def test_long_query_string_refused(client):
    r = client.get("/api/design?aql=1%25&rql=6%25&" + "x" * 5000)
    assert r.status_code == 414


@pytest.mark.parametrize("path", ["/static/../../etc/passwd", "/static/..%2f..%2fetc%2fpasswd",
                                  "/static/app.py", "/download/..%2fapp.py", "/etc/passwd",
                                  "/api/../static/app.js.map"])
def test_no_route_reads_outside_its_responses(client, path):
    r = client.get(path)
    assert r.status_code == 404
    assert b"root:" not in r.get_data()


def test_only_get_and_only_this_machine(client):
    assert client.post("/api/design?aql=1%25&rql=6%25").status_code == 405
    r = client.get("/api/design?aql=1%25&rql=6%25", headers={"Host": "attacker.example:8765"})
    assert r.status_code == 403
    ok = client.get("/api/design?aql=1%25&rql=6%25", headers={"Host": "127.0.0.1:8765"})
    assert ok.status_code == 200


def test_time_budget_answers_503_and_the_server_recovers():
    app = create_app(budget=0.5, slots=1, wait=60)
    c = app.test_client()
    assert c.get("/api/design?aql=1%25&rql=6%25").status_code == 200  # worker up
    slow = c.get("/api/design?aql=0.1%25&rql=0.15%25&scheme=double")  # many seconds
    assert slow.status_code == 503
    assert "time budget" in slow.get_json()["message"]
    again = c.get("/api/design?aql=1%25&rql=6%25")  # a fresh worker answers
    assert again.status_code == 200 and again.get_json()["n"] == 110


def test_page_and_assets_served_with_safe_headers(client):
    r = client.get("/")
    assert r.status_code == 200 and b'<form id="inputs"' in r.data
    assert "script-src 'self'" in r.headers["Content-Security-Policy"]
    for name in ("app.js", "style.css"):
        assert client.get(f"/static/{name}").status_code == 200
    text = r.get_data(as_text=True) + client.get("/static/app.js").get_data(as_text=True) \
        + client.get("/static/style.css").get_data(as_text=True)
    assert "http://" not in text.replace("http://www.w3.org/2000/svg", "")
    assert "https://" not in text  # no CDN, no web fonts


def test_loopback_rules():
    assert is_loopback("127.0.0.1") and is_loopback("localhost") and is_loopback("::1")
    assert is_loopback("127.5.6.7") and not is_loopback("0.0.0.0")
    assert not is_loopback("192.168.1.10") and not is_loopback("example.com")
    from lotwise.core.quantities import InputError

    with pytest.raises(InputError, match="--host"):
        make_server("0.0.0.0", 0)


def test_serve_command_warns_for_a_non_loopback_host(monkeypatch, capsys):
    import lotwise.web.app as web_app

    seen = {}

    class Dummy:
        effective_port = 4321

        def run(self):
            seen["ran"] = True

        def close(self):
            seen["closed"] = True

    def fake(host, port, *, remote=False, budget=10.0):
        seen.update(host=host, port=port, remote=remote)
        return Dummy()

    monkeypatch.setattr(web_app, "make_server", fake)
    assert main(["serve", "--host", "0.0.0.0", "--port", "0"]) == 0
    out = capsys.readouterr()
    assert "warning" in out.err and "0.0.0.0" in out.err
    assert seen == {"host": "0.0.0.0", "port": 0, "remote": True, "ran": True, "closed": True}
    assert main(["serve", "--port", "0"]) == 0
    out = capsys.readouterr()
    assert out.err == "" and "http://127.0.0.1:4321/" in out.out and seen["remote"] is False
    assert main(["serve", "--port", "70000"]) == 2


# --- downloads --------------------------------------------------------------------

def _empty_dirs(tmp_path, monkeypatch):
    import tempfile

    work, tmp = tmp_path / "cwd", tmp_path / "tmp"
    work.mkdir()
    tmp.mkdir()
    monkeypatch.chdir(work)
    monkeypatch.setenv("TMPDIR", str(tmp))
    monkeypatch.setattr(tempfile, "tempdir", None)
    return work, tmp


def test_downloads_leave_no_file_behind(tmp_path, monkeypatch, capsys):
    work, tmp = _empty_dirs(tmp_path, monkeypatch)
    c = create_app(budget=60).test_client()  # workers start here, with this TMPDIR
    q = "aql=1%25&rql=6%25&lot_size=2000&part=QP-1104&supplier=Brenna+Coil"
    pdf = c.get("/download/sheet.pdf?" + q)
    assert pdf.status_code == 200 and pdf.data.startswith(b"%PDF-")
    assert 'filename="qp-1104-sheet.pdf"' in pdf.headers["Content-Disposition"]
    md = c.get("/download/sheet.md?" + q).get_data(as_text=True)
    assert "n = 108" in md or "108" in md
    toml = c.get("/download/plan.toml?" + q).get_data(as_text=True)
    from lotwise.documents.partplan import resolve
    from lotwise.documents.planfile import loads

    pp = resolve(loads(toml, "qp.toml"))
    assert pp.n == c.get("/api/design?aql=1%25&rql=6%25&lot_size=2000").get_json()["n"]
    csv = c.get("/download/oc.csv?plan=n=108,c=3&lot_size=2000&aql=1%25&rql=6%25")
    assert main(["oc", "--plan", "n=108,c=3", "--lot-size", "2000", "--aql", "1%", "--rql",
                 "6%", "--csv", "-"]) == 0
    assert csv.get_data(as_text=True) == capsys.readouterr().out
    prop = c.get("/download/sheet.pdf?aql=1%25&rql=6%25&plan=n=89,c=2&lot_size=1000")
    assert prop.data.startswith(b"%PDF-")
    dbl = c.get("/download/plan.toml?aql=1%25&rql=6%25&scheme=double").get_data(as_text=True)
    assert 'plan = "n1=' in dbl
    assert list(work.iterdir()) == [] and list(tmp.iterdir()) == []


def test_download_of_a_continuous_plan_is_refused(client):
    r = client.get("/download/sheet.pdf?scheme=csp1&aoql=2%25&f=1/10")
    assert r.status_code == 400 and r.get_json()["field"] == "scheme"
    r = client.get("/download/plan.toml?aql=1%25&rql=6%25&part=%3Cscript%3E")
    assert r.status_code == 400 and r.get_json()["message"].startswith("part (<script>)")


# --- the outlook at a process average (independent: scipy.stats) ----------------------

@pytest.mark.parametrize("plan, pbar, per_unit", [
    ("n=80,c=2", 0.008, False), ("n=125,c=3", 0.012, False), ("n=32,c=1", 0.5, True),
])
def test_outlook_against_scipy(client, plan, pbar, per_unit):
    from scipy import stats

    from lotwise.families.base import parse_plan

    p = parse_plan(plan)
    if per_unit:
        pa = stats.poisson.cdf(p.c, p.n * pbar)
    else:
        pa = stats.binom.cdf(p.c, p.n, pbar)
    q = {"plan": plan, "process_average": str(pbar), "deliveries_per_year": "52"}
    if per_unit:
        q["per_unit"] = "1"
    body = client.get("/api/outlook?" + urlencode(q)).get_json()
    row = body["plans"][0]
    assert row["pa"] == pytest.approx(pa, rel=1e-9)  # scipy.stats, exact CDFs
    assert row["rejected_per_year"] == pytest.approx(52 * (1 - pa), rel=1e-9)


def test_outlook_refuses_a_continuous_plan(client):
    r = client.get("/api/outlook?plan=csp1:+i=38,f=1/10&process_average=1%25")
    assert r.status_code == 400 and "continuous" in r.get_json()["message"]


# --- the notebook view ---------------------------------------------------------------

@pytest.mark.parametrize("kwargs", [
    dict(aql=0.01, rql=0.06),
    dict(aql=0.01, rql=0.05, scheme="double"),
    dict(aql=0.01, rql=0.06, lot_size=500),
])
def test_result_html_view(kwargs):
    import lotwise

    r = lotwise.design(**kwargs)
    html = r._repr_html_()
    rep = r.to_json()
    assert html.startswith("<div>") and html.endswith("</div>")
    assert rep["label"] in html and "data:image/png;base64," in html
    for m, risks in rep["models"].items():
        assert f"<td>{m}" in html and f"{risks['pa_aql']:.5f}" in html
    assert html.count("<li>") == len(rep["statements"])
    assert ("meets both targets" in html) == rep["meets"]
