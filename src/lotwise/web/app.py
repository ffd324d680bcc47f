"""The local web page and its JSON API (Flask, served by waitress).

Routes (all ``GET``):

``/``, ``/static/app.js``, ``/static/style.css``
    the page and its two assets, shipped inside the package (no network
    needed: no CDN, no web fonts);
``/api/design``, ``/api/check``, ``/api/oc``, ``/api/compare``, ``/api/tradeoff``
    exactly what ``lotwise design|check|oc|compare|tradeoff ... --json``
    prints for the same options (parameter = option name without ``--``,
    ``-`` written ``_``; flags as ``per_unit=1``);
``/api/outlook``
    lots rejected at the supplier's process average under each plan;
``/download/sheet.pdf``, ``/download/sheet.md``, ``/download/plan.toml``, ``/download/oc.csv``
    files built in a temporary folder that is removed before the answer leaves.

Answers: 200 with the JSON (header ``X-Lotwise-Exit`` holds the command
line's exit code: 1 when a checked plan falls short); 400 for bad input, with
``{"error", "message", "field", "value", "allowed"}`` where ``message`` is the
command line's error line; 422 with the command line's JSON when it exits 1
with one (no plan meets the targets); 503 when the request's time budget runs
out or both computing slots are taken; 500 with one line (never a traceback)
for anything unforeseen.

Limits: query string at most 4 KB (414 beyond), each value at most 256
characters, whole numbers as in :data:`lotwise.web.query.LIMITS` (lot size at
most 10^9, points at most 2,000, ...), plans of at most 10^6 units, at most
two computations at once, each with a time budget (default 10 s).
"""

from __future__ import annotations

import ipaddress
import json
import re
import threading
from importlib import resources

from flask import Flask, Response, request

from lotwise.analysis.outputs import json_safe
from lotwise.core.quantities import InputError
from lotwise.web import commands
from lotwise.web.query import MAX_QUERY, Query

__all__ = ["create_app", "is_loopback", "make_server", "ENDPOINTS"]

_COMMON = {"aql", "rql", "alpha", "beta", "lot_size", "model", "per_unit"}
_RATES = {"miss_rate", "false_alarm", "study"}  # inspection errors, as on the command line
_DESIGN_BASE = _COMMON | {"scheme", "c", "n", "max_n", "minimize", "process_average", "aoql",
                          "aoq_formula", "sigma", "sigma_value", "limit", "lower", "upper",
                          "ratio", "truncate", "f", "i"}
_DESIGN = _DESIGN_BASE | _RATES
_CHECK = _COMMON | _RATES | {"plan", "n", "c", "aoq_formula", "skip_lot", "at", "run_length"}
_OC_BASE = {"plan", "n", "c", "lot_size", "model", "per_unit", "max_p", "points", "at", "aql",
            "rql"}
_OC = _OC_BASE | _RATES
_COMPARE = _COMMON | _RATES | {"plan", "designed"}
_TRADEOFF = {"aql", "rql", "alpha", "beta", "lot_size", "model", "process_average",
             "deliveries_per_year"}
_OUTLOOK = {"plan", "process_average", "deliveries_per_year", "per_unit"}
_SHEET = _DESIGN_BASE | {"plan", "part", "supplier"}

#: ``name -> (task in lotwise.web.workers.TASKS, allowed parameters, repeatable ones)``.
ENDPOINTS = {
    "design": ("design", _DESIGN, ("f",)),
    "check": ("check", _CHECK, ("at",)),
    "oc": ("oc", _OC, ("at",)),
    "compare": ("compare", _COMPARE, ("plan",)),
    "tradeoff": ("tradeoff", _TRADEOFF, ()),
    "outlook": ("outlook", _OUTLOOK, ("plan",)),
}
DOWNLOADS = {
    "sheet.pdf": ("sheet.pdf", _SHEET, ("f",)),
    "sheet.md": ("sheet.md", _SHEET, ("f",)),
    "plan.toml": ("plan.toml", _SHEET, ("f",)),
    "oc.csv": ("oc.csv", _OC_BASE, ("at",)),
}
STATIC = {"app.js": "text/javascript; charset=utf-8", "style.css": "text/css; charset=utf-8",
          "index.html": "text/html; charset=utf-8"}
HEADERS = {
    "Content-Security-Policy": ("default-src 'none'; script-src 'self'; style-src 'self'; "
                                "img-src 'self' data:; connect-src 'self'; form-action 'none'; "
                                "frame-ancestors 'none'; base-uri 'none'"),
    "X-Content-Type-Options": "nosniff",
    "Referrer-Policy": "no-referrer",
    "Cache-Control": "no-store",
}
_OPTION = re.compile(r"--([a-z][a-z0-9-]*)")


class Busy(Exception):
    """No computing slot, or the time budget ran out."""


def is_loopback(host: str) -> bool:
    """``host`` is this machine only (127.0.0.0/8, ::1 or localhost)."""
    h = str(host).strip().strip("[]").lower()
    if h == "localhost":
        return True
    try:
        return ipaddress.ip_address(h).is_loopback
    except ValueError:
        return False


def _json(obj, status: int = 200, exit_code: int | None = None) -> Response:
    body = json.dumps(json_safe(obj), indent=2) + "\n"  # byte for byte what --json prints
    resp = Response(body, status=status, mimetype="application/json")
    if exit_code is not None:
        resp.headers["X-Lotwise-Exit"] = str(exit_code)
    return resp


def input_error_body(message: str, q_values: dict) -> dict:
    """The 400 body: the command line's message, the field it names, the value
    given and what is allowed."""
    m = _OPTION.search(message)
    field = m.group(1).replace("-", "_") if m else None
    if field == "ltpd":
        field = "rql"
    value = None
    if field and q_values.get(field):
        value = q_values[field][-1]
    allowed = message
    if m:
        rest = message[m.end():].lstrip()
        if rest.startswith("("):
            depth, i = 0, 0
            for i, ch in enumerate(rest):
                depth += ch == "("
                depth -= ch == ")"
                if depth == 0:
                    break
            if value is None:
                value = rest[1:i]
            rest = rest[i + 1:]
        allowed = rest.lstrip(" :") or message
    return {"error": "bad input", "message": message, "field": field, "value": value,
            "allowed": allowed}


class _Runner:
    """Computations run in ``slots`` worker processes, each request with a
    time budget.

    A worker that overruns the budget is killed (its request is answered 503)
    and a fresh one takes its place, so no request can hold the machine
    longer than its budget; a request that finds every worker busy for
    ``wait`` seconds is answered 503. Each worker's address space is capped
    at :data:`WORKER_MEMORY` bytes.
    """

    def __init__(self, slots: int = 2, budget: float = 10.0, wait: float = 5.0):
        import queue

        self.budget, self.wait, self.slots = budget, wait, slots
        self.idle: queue.Queue = queue.Queue()
        self.started = False
        self.lock = threading.Lock()

    def _spawn(self) -> None:
        """Start a worker; it joins the idle queue once it has loaded lotwise."""
        from lotwise.web import workers

        def start():
            w = workers.Worker()
            if w.ready(timeout=60):
                self.idle.put(w)
            else:  # could not start: try again later
                w.kill()
                threading.Timer(1.0, self._spawn).start()

        threading.Thread(target=start, daemon=True).start()

    def run(self, task: str, values: dict):
        import queue

        from lotwise.web import workers

        with self.lock:
            if not self.started:
                self.started = True
                for _ in range(self.slots):
                    self._spawn()
        try:
            w = self.idle.get(timeout=self.wait)
        except queue.Empty:
            raise Busy("the server is busy with other requests; try again in a moment") \
                from None
        try:
            result = w.call(task, values, self.budget)
        except workers.Overrun:
            w.kill()
            self._spawn()
            raise Busy(f"the request needs more than its time budget of {self.budget:g} s; "
                       "ask for less (a smaller lot, fewer points, a looser RQL/AQL "
                       "ratio)") from None
        except workers.Lost as exc:
            w.kill()
            self._spawn()
            raise RuntimeError(str(exc)) from None
        self.idle.put(w)
        return workers.unpack(result)


def _static(name: str) -> bytes:
    return resources.files("lotwise.web").joinpath("static", name).read_bytes()


def create_app(*, budget: float = 10.0, slots: int = 2, remote: bool = False,
               wait: float = 5.0) -> Flask:
    """The Flask application.

    Parameters
    ----------
    budget : float
        Seconds one request may compute before it is answered 503.
    slots : int
        Computations running at once.
    remote : bool
        Accept requests whose ``Host`` is not this machine (only when the
        server was bound to a non-loopback address on purpose); otherwise
        such requests are refused (403), which keeps other web pages from
        reaching the API through a renamed host.
    """
    app = Flask("lotwise.web", static_folder=None)
    app.config["MAX_CONTENT_LENGTH"] = 1024
    runner = _Runner(slots=slots, budget=budget, wait=wait)
    app.extensions["lotwise_runner"] = runner
    assets = {name: _static(name) for name in STATIC}

    @app.before_request
    def _guard():
        if len(request.query_string) > MAX_QUERY:
            return _json({"error": "query too long", "message": f"the query string is "
                          f"{len(request.query_string):,} bytes; at most {MAX_QUERY:,}"}, 414)
        if not remote and not is_loopback(request.host.rsplit(":", 1)[0]
                                          if not request.host.startswith("[")
                                          else request.host.split("]")[0] + "]"):
            return _json({"error": "forbidden", "message": "this server answers requests to "
                          "this machine only (127.0.0.1 or localhost)"}, 403)
        return None

    @app.after_request
    def _headers(resp):
        for k, v in HEADERS.items():
            resp.headers.setdefault(k, v)
        return resp

    @app.get("/")
    def index():
        return Response(assets["index.html"], mimetype=STATIC["index.html"])

    @app.get("/static/<name>")
    def static_file(name):
        if name not in STATIC or name == "index.html":
            return _json({"error": "not found", "message": f"no such file: {name[:40]}"}, 404)
        return Response(assets[name], mimetype=STATIC[name])

    def _call(table, name):
        if name not in table:
            return None, _json({"error": "not found", "message": f"no such endpoint: "
                                f"{name[:40]}; known: {', '.join(table)}"}, 404)
        task, allowed, repeatable = table[name]
        q_values = {}
        try:
            q = Query.parse(list(request.args.items(multi=True)), allowed, repeatable,
                            request.path)
            q_values = q.values
            return runner.run(task, q.values), None
        except InputError as exc:
            return None, _json(input_error_body(str(exc), q_values or
                                                request.args.to_dict(flat=False)), 400, 2)
        except commands.Refused as exc:
            resp = _json(exc.payload, 422, 1)
            resp.headers["X-Lotwise-Message"] = exc.message.encode("ascii",
                                                                   "replace").decode()
            return None, resp
        except Busy as exc:
            return None, _json({"error": "busy", "message": str(exc)}, 503)
        except Exception as exc:  # never a traceback, whatever the input
            return None, _json({"error": "could not complete the request",
                                "message": f"could not complete the request "
                                           f"({type(exc).__name__}: {exc})"}, 500, 2)

    @app.get("/api/<name>")
    def api(name):
        reply, err = _call(ENDPOINTS, name)
        return err if err is not None else _json(reply.body, reply.status, reply.exit_code)

    @app.get("/download/<name>")
    def download(name):
        got, err = _call(DOWNLOADS, name)
        if err is not None:
            return err
        resp = Response(got.data, mimetype=got.mimetype)
        resp.headers["Content-Disposition"] = f'attachment; filename="{got.filename}"'
        return resp

    @app.errorhandler(404)
    def _not_found(_e):
        return _json({"error": "not found", "message": "no such page"}, 404)

    @app.errorhandler(405)
    def _not_allowed(_e):
        return _json({"error": "method not allowed", "message": "only GET is served"}, 405)

    return app


def make_server(host: str = "127.0.0.1", port: int = 8765, *, remote: bool = False,
                budget: float = 10.0):
    """A waitress server for the app (call ``.run()``; ``.effective_port``
    tells the port when ``port`` is 0). A non-loopback ``host`` is refused
    unless ``remote`` is True."""
    from waitress import create_server

    if not is_loopback(host) and not remote:
        raise InputError(f"--host ({host}) is not this machine; give --host explicitly to "
                         "serve other machines")
    app = create_app(budget=budget, remote=not is_loopback(host))
    return create_server(app, host=host, port=port, threads=4, connection_limit=32,
                         channel_timeout=30, max_request_header_size=16384,
                         max_request_body_size=1024, ident="lotwise")
