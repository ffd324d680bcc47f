"""Safe output files: atomic writes and overwrite protection.

Every file the tool writes goes through :func:`write_bytes`:

* the content is written to a temporary file in the target folder, flushed
  to disk and then renamed over the target (``os.replace`` is atomic on one
  file system), so an interrupted run never leaves a half-written file;
* the folder keeps a small record, ``.lotwise-files.json``, of the files the
  tool wrote there and a SHA-256 of their content. A file at the target path
  that is not in that record, or whose content has changed since (somebody
  edited it), belongs to the user and is not overwritten unless ``force``.
"""

from __future__ import annotations

import contextlib
import hashlib
import json
import os
import tempfile
from pathlib import Path

from lotwise.core.quantities import InputError

__all__ = ["RECORD", "write_bytes", "write_text", "save_figure", "check_writable"]

RECORD = ".lotwise-files.json"


def _digest(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _read_record(folder: Path) -> dict:
    try:
        return json.loads((folder / RECORD).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}


def _atomic(path: Path, data) -> str:
    """Write ``data`` (bytes or an iterable of bytes) to ``path`` through a
    temporary file renamed over it; returns the SHA-256 of what was written."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    h = hashlib.sha256()
    try:
        with os.fdopen(fd, "wb") as fh:
            for part in [data] if isinstance(data, bytes) else data:
                fh.write(part)
                h.update(part)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return h.hexdigest()


@contextlib.contextmanager
def _folder_lock(folder: Path):
    """An exclusive lock on ``folder`` (``flock`` on the folder itself, where
    the system has it) while its record is read and rewritten."""
    try:
        import fcntl

        fd = os.open(folder, os.O_RDONLY)
    except (ImportError, OSError):
        yield
        return
    try:
        fcntl.flock(fd, fcntl.LOCK_EX)
        yield
    finally:
        os.close(fd)


def check_writable(path, *, force: bool = False, option: str = "output") -> Path:
    """Raise :class:`InputError` if ``path`` holds a file the tool did not write."""
    path = Path(path)
    if path.is_dir():
        raise InputError(f"{option} ({path}) is a folder; give a file name")
    if path.exists() and not force:
        rec = _read_record(path.parent).get(path.name)
        try:
            same = rec is not None and _digest(path.read_bytes()) == rec
        except OSError:
            same = False
        if not same:
            raise InputError(f"{option} ({path}) exists and was not written by lotwise "
                             "(or was changed since); use --force to overwrite it")
    return path


def write_bytes(path, data, *, force: bool = False, option: str = "output") -> Path:
    """Write ``data`` (bytes, or an iterable of bytes written one after the
    other, never all held at once) to ``path`` atomically, respecting
    overwrite protection."""
    path = Path(path)
    if not path.parent.exists():
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise InputError(f"{option} ({path}): cannot create folder {path.parent} "
                             f"({exc.strerror})") from None
    check_writable(path, force=force, option=option)
    try:
        digest = _atomic(path, data)
        with _folder_lock(path.parent):  # several processes may write into one folder
            record = _read_record(path.parent)
            record[path.name] = digest
            _atomic(path.parent / RECORD,
                    (json.dumps(record, indent=1, sort_keys=True) + "\n").encode("utf-8"))
    except OSError as exc:
        raise InputError(f"{option} ({path}) cannot be written: {exc.strerror or exc}") from None
    return path


def write_text(path, text: str, *, force: bool = False, option: str = "output") -> Path:
    return write_bytes(path, text.encode("utf-8"), force=force, option=option)


def save_figure(fig, path, *, force: bool = False, option: str = "--plot", **kwargs) -> Path:
    """Render a matplotlib figure to PNG/SVG/PDF bytes and write them safely."""
    import io

    fmt = Path(path).suffix.lower().lstrip(".")
    buf = io.BytesIO()
    meta = {"png": {"Software": "lotwise"}, "svg": {"Creator": "lotwise"},
            "pdf": {"Creator": "lotwise"}}.get(fmt)
    fig.savefig(buf, format=fmt, metadata=meta, **kwargs)
    import sys

    if "matplotlib.pyplot" in sys.modules:  # a pyplot figure of the caller's: release it
        sys.modules["matplotlib.pyplot"].close(fig)
    return write_bytes(path, buf.getvalue(), force=force, option=option)
