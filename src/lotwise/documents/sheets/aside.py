"""Work done in a second process beside this one: a plan sheet's PNG figures
drawn while the page is laid out.

:func:`start` forks a child that calls ``func()`` and sends back its result
(pickled, through a pipe); :meth:`Aside.result` waits for it. The child
writes no file: it returns bytes, and the parent writes them (inside
:func:`lotwise.data.files.all_or_nothing` when the caller holds its writes
back), so the write protocol is the parent's alone. Where ``os.fork`` is
missing, only one processor is available, other threads run in this
process, or :data:`ENABLED` is off (a
worker of :mod:`lotwise.documents.sheets.many`, whose processors are
already busy), ``func`` runs in this process when the result is asked for;
likewise when the child fails in any way, so an error is raised by the
parent as without the child.
"""

from __future__ import annotations

import os
import pickle

__all__ = ["Aside", "start", "disable", "ENABLED"]

#: Whether :func:`start` may fork (set off in the sheet workers' processes).
ENABLED = True


def disable() -> None:
    """Run every later :func:`start` in this process (a worker's initializer)."""
    global ENABLED
    ENABLED = False


def _threaded() -> bool:
    """Whether other threads run here (a fork copies none of them, and a lock one of
    them holds stays held in the child)."""
    import sys

    threading = sys.modules.get("threading")
    return threading is not None and threading.active_count() > 1


def _processors() -> int:
    if hasattr(os, "sched_getaffinity"):
        return len(os.sched_getaffinity(0))
    return os.cpu_count() or 1


class Aside:
    """The pending result of ``func()``: in a child process, or to be computed here."""

    def __init__(self, func, pid=None, fd=None):
        self._func, self._pid, self._fd = func, pid, fd

    def result(self):
        """``func()``'s result, from the child when it succeeded, else computed here."""
        if self._pid is None:
            return self._func()
        data = b""
        try:
            with os.fdopen(self._fd, "rb") as pipe:
                self._fd = None
                data = pipe.read()
        finally:
            _, status = os.waitpid(self._pid, 0)
            self._pid = None
        if os.waitstatus_to_exitcode(status) == 0 and data:
            try:
                return pickle.loads(data)
            except Exception:  # noqa: BLE001 -- a damaged answer: computed here instead
                pass
        return self._func()

    def cancel(self) -> None:
        """Stop the child (the caller failed before asking for the result)."""
        if self._pid is None:
            return
        import signal

        if self._fd is not None:
            os.close(self._fd)
            self._fd = None
        try:
            os.kill(self._pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
        os.waitpid(self._pid, 0)
        self._pid = None


def start(func) -> Aside:
    """Begin ``func()`` (no arguments; returns picklable data) in a forked child
    when that can run beside this process; see the module docstring."""
    if not ENABLED or not hasattr(os, "fork") or _processors() < 2 or _threaded():
        return Aside(func)
    read_fd, write_fd = os.pipe()
    try:
        pid = os.fork()
    except OSError:
        os.close(read_fd)
        os.close(write_fd)
        return Aside(func)
    if pid == 0:  # the child: compute, send, leave without running the parent's exit code
        code = 1
        try:
            os.close(read_fd)
            data = pickle.dumps(func(), protocol=pickle.HIGHEST_PROTOCOL)
            view = memoryview(data)
            while view:
                view = view[os.write(write_fd, view):]
            code = 0
        except BaseException:  # noqa: BLE001 -- the parent computes it again and reports
            pass
        finally:
            os._exit(code)
    os.close(write_fd)
    return Aside(func, pid, read_fd)
