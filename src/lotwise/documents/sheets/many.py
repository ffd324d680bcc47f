"""The sheets of several plan files at once, in worker processes.

Each plan file is loaded, resolved and written by itself (:func:`one_file`),
so :func:`write_many` can hand the files to a pool of processes: the sheets
are the same files with the same contents as written one after the other,
returned in the order of the files. A pool is used only when it pays: two or
more files and two or more processors.
"""

from __future__ import annotations

import os

__all__ = ["one_file", "write_many"]


def one_file(path, out, force: bool):
    """Load, resolve and write the sheets of one plan file: ``(pp, paths)``."""
    from lotwise.documents.partplan import resolve
    from lotwise.documents.planfile import load
    from lotwise.documents.sheets import write_sheets

    pp = resolve(load(path))
    return pp, write_sheets(pp, out, force=force)


def _preload() -> None:
    """Import what every sheet needs (the designers, the page, matplotlib's
    Agg and PDF backends) before the workers are forked."""
    import matplotlib.backends.backend_agg  # noqa: F401
    import matplotlib.backends.backend_pdf  # noqa: F401
    import matplotlib.figure  # noqa: F401

    import lotwise.documents.partplan  # noqa: F401
    import lotwise.documents.sheets.pdf  # noqa: F401


def write_many(files, out, *, force: bool = False, workers: int | None = None) -> list:
    """``[(pp, paths), ...]`` for ``files`` (plan file paths), in order.

    ``workers``: processes to use (default: the processors available, at
    most one per file); 1 writes in this process. Each worker writes its
    own files; the folder's record of written files is updated under a lock
    (:mod:`lotwise.data.files`).
    """
    files = list(files)
    if workers is None:
        workers = min(len(files), len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity")
                      else (os.cpu_count() or 1))
    if workers < 2 or len(files) < 2:
        return [one_file(f, out, force) for f in files]
    import multiprocessing as mp
    from concurrent.futures import ProcessPoolExecutor

    _preload()  # forked workers start with these: imported once, not once per worker

    from lotwise.documents.sheets import aside

    ctx = mp.get_context("fork") if "fork" in mp.get_all_start_methods() else None
    # the workers fill the processors: no second process each (aside.disable)
    with ProcessPoolExecutor(max_workers=workers, mp_context=ctx,
                             initializer=aside.disable) as pool:
        return list(pool.map(one_file, files, [out] * len(files), [force] * len(files)))
