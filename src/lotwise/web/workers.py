"""Worker processes that compute the web API's answers.

Each :class:`Worker` is a separate process (started with ``spawn``, so it
shares no threads or locks with the server) that loads lotwise once and then
answers ``(task, parameters)`` messages over a pipe. The server kills a
worker that overruns a request's time budget and starts another; a hostile
request can therefore cost at most its budget of one core. The worker's
address space is capped at :data:`WORKER_MEMORY` bytes where the platform
allows it.
"""

from __future__ import annotations

import multiprocessing

from lotwise.core.quantities import InputError

__all__ = ["Worker", "Overrun", "Lost", "TASKS", "run_task", "unpack", "WORKER_MEMORY"]

#: Modules a worker loads before it says it is ready (the sheet writer, with
#: matplotlib, takes the longest).
WARM = ("lotwise.analysis.assess", "lotwise.families.single", "lotwise.families.double",
        "lotwise.analysis.approximation", "lotwise.documents.sheets",
        "lotwise.documents.sheets.pdf")

#: Largest address space of a worker process (bytes).
WORKER_MEMORY = 8 * 1024**3


class Overrun(Exception):
    """The request ran past its time budget."""


class Lost(Exception):
    """The worker process ended without answering."""


def _tasks() -> dict:
    from lotwise.web import commands, downloads, plans

    return {
        "design": commands.design, "check": plans.check, "oc": plans.oc,
        "compare": plans.compare, "tradeoff": plans.tradeoff, "outlook": plans.outlook,
        "sheet.pdf": lambda q: downloads.sheet(q, "pdf"),
        "sheet.md": lambda q: downloads.sheet(q, "md"),
        "plan.toml": downloads.plan_file, "oc.csv": downloads.oc_csv,
    }


#: Task names the server may send.
TASKS = ("design", "check", "oc", "compare", "tradeoff", "outlook", "sheet.pdf", "sheet.md",
         "plan.toml", "oc.csv")


def run_task(task: str, values: dict, table: dict | None = None):
    """Run one task and return a picklable outcome ``(kind, ...)``."""
    from lotwise.web.commands import Refused
    from lotwise.web.query import Query

    table = table or _tasks()
    try:
        return ("ok", table[task](Query(values=values)))
    except InputError as exc:
        return ("input", str(exc))
    except Refused as exc:
        return ("refused", exc.message, exc.payload)
    except Exception as exc:  # reported as one line, never a traceback
        return ("error", f"could not complete the request ({type(exc).__name__}: {exc})")


def unpack(outcome):
    """The result of :func:`run_task`, or its exception raised again."""
    from lotwise.web.commands import Refused

    kind = outcome[0]
    if kind == "ok":
        return outcome[1]
    if kind == "input":
        raise InputError(outcome[1])
    if kind == "refused":
        raise Refused(outcome[1], outcome[2])
    raise RuntimeError(outcome[1])


def _limit_memory() -> None:
    try:
        import resource
    except ImportError:  # not on this platform
        return
    try:
        soft, hard = resource.getrlimit(resource.RLIMIT_AS)
        cap = WORKER_MEMORY if hard == resource.RLIM_INFINITY else min(WORKER_MEMORY, hard)
        resource.setrlimit(resource.RLIMIT_AS, (cap, hard))
    except (ValueError, OSError):
        pass


def _main(conn) -> None:
    """The worker's loop: load lotwise, say ready, answer until the pipe closes."""
    _limit_memory()
    table = _tasks()
    import importlib

    for name in WARM:  # load the library before the first request
        importlib.import_module(name)

    conn.send("ready")
    while True:
        try:
            task, values = conn.recv()
        except (EOFError, OSError):
            return
        conn.send(run_task(task, values, table))


class Worker:
    """One worker process and its end of the pipe."""

    def __init__(self):
        ctx = multiprocessing.get_context("spawn")
        self.conn, child = ctx.Pipe()
        self.proc = ctx.Process(target=_main, args=(child,), daemon=True,
                                name="lotwise-web-worker")
        self.proc.start()
        child.close()

    def ready(self, timeout: float) -> bool:
        """Wait until the worker has loaded lotwise."""
        try:
            return self.conn.poll(timeout) and self.conn.recv() == "ready"
        except (EOFError, OSError):
            return False

    def call(self, task: str, values: dict, budget: float):
        """Send one task; its outcome, or :class:`Overrun` / :class:`Lost`."""
        if task not in TASKS:
            raise Lost(f"unknown task {task!r}")
        try:
            self.conn.send((task, values))
            if not self.conn.poll(budget):
                raise Overrun(task)
            return self.conn.recv()
        except (EOFError, OSError, BrokenPipeError) as exc:
            raise Lost(f"the worker process ended ({type(exc).__name__})") from None

    def kill(self) -> None:
        """End the process (it is ours: started by :meth:`__init__`)."""
        try:
            self.proc.kill()
            self.proc.join(5)
        finally:
            self.conn.close()
