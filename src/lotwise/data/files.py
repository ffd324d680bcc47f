"""Safe output files: atomic writes, overwrite protection and the folder's record.

Every file the tool writes goes through :func:`write_bytes` (``write_text`` and
``save_figure`` call it).

Ownership
    Each folder the tool writes into keeps a record, ``.lotwise-files.json``,
    mapping the name of every file the tool wrote there to the SHA-256 of its
    content. A file at a target path that is not in the record, or whose
    content has changed since (somebody edited it), belongs to the user and is
    not overwritten unless ``force``.

Checks before writing (all or nothing)
    :func:`check_target` checks one output path without touching the disk:
    a file name (not a folder, not ``.png`` alone for a figure, which needs a
    ``.png``/``.svg``/``.pdf`` suffix), a name the file system accepts
    (``PC_NAME_MAX``), a folder that exists (or can be created) and is
    writable, and no file of the user's in the way. :func:`check_outputs`
    checks a command's paths at once, before any work; inside
    ``with all_or_nothing():`` every write is checked and kept in memory,
    and the files are written only when the block ends without an error, so a
    command that refuses its sixth file has written none of the first five.

File modes
    A new file gets the mode any program's new file gets: ``0666`` less the
    user's umask (the temporary file is created with ``0666`` and the kernel
    applies the umask and any default ACL of the folder). A file that is
    replaced, by a re-run or with ``force``, keeps its mode (and, where
    allowed, its group).

The write protocol (per folder, per command)
    1. Take the folder's lock: ``fcntl.flock`` on ``.lotwise-files.lock``
       beside the record (``msvcrt.locking`` on Windows; where neither
       exists, or the file system refuses locks, the protocol runs unlocked,
       as a single writer). The lock file is never removed. Everything below
       happens while the lock is held, so concurrent lotwise processes take
       turns and the record is a read-modify-write that loses no entry.
    2. Read the record and *settle* it: an entry left pending by a writer that
       died (see 5) becomes the digest of the file now on disk if that digest
       is one it lists, and is dropped otherwise.
    3. Sweep stale temporaries (see below), then re-check that no target is a
       file of the user's (unless ``force``).
    4. Write each file's content to a temporary file in the same folder,
       flush and ``fsync`` it. A failure here removes the temporaries and
       leaves targets and record untouched.
    5. *Intent*: record every target as pending, as the list of digests it
       may hold after a crash -- the new content, plus the old content when
       the old file was the tool's own (a user's file replaced with ``force``
       is not listed, so a crash never hands it to the tool). Write the record
       atomically (temporary file, ``fsync``, ``os.replace``, ``fsync`` of the
       folder).
    6. ``os.replace`` each temporary over its target, ``fsync`` the folder.
    7. *Confirm*: set each entry to its new digest, write the record
       atomically; release the lock.

    A ``kill -9`` at any moment therefore leaves each target either absent,
    the old complete file, or the new complete file, and in the last two cases
    the record lists it: a plain re-run never refuses a file the tool wrote,
    and never sees a half-written one. A crash before 5 changes nothing but a
    temporary; between 5 and 7 the pending entry covers both contents, and
    the next write into the folder settles it (step 2). Files of one command
    spread over several folders are committed folder by folder.

Temporary files
    Named ``.<name>.lotwise-<host>-<pid>-<random>.tmp`` (the target's name,
    shortened to fit the file system; a tag of the host name; the writer's
    process id). Step 3 removes such a file when its writer's process is gone
    (same host) or when it is older than :data:`STALE_AFTER` seconds; it
    also removes ``.<name>.<8 characters>.tmp`` files of earlier versions of
    the tool, when ``<name>`` is in the record and they are that old.
"""

from __future__ import annotations

import contextlib
import contextvars
import hashlib
import json
import os
import re
import secrets
import socket
import stat
import sys
import time
from pathlib import Path

from lotwise.core.quantities import InputError

__all__ = ["RECORD", "LOCK", "STALE_AFTER", "FIGURE_SUFFIXES", "write_bytes", "write_text",
           "save_figure", "check_writable", "check_target", "check_outputs", "check_folder",
           "all_or_nothing", "figure_bytes", "no_layout_engine",
           "is_temporary"]

RECORD = ".lotwise-files.json"
LOCK = ".lotwise-files.lock"
#: Seconds after which a temporary file of the tool is stale whoever wrote it.
STALE_AFTER = 600.0
#: Seconds to wait for another lotwise process to release a folder's lock.
LOCK_WAIT = 120.0
FIGURE_SUFFIXES = (".png", ".svg", ".pdf")

_HOST = hashlib.sha256(socket.gethostname().encode("utf-8", "replace")).hexdigest()[:6]
_TMP = re.compile(r"^\..*\.lotwise-(?P<host>[0-9a-f]{6})-(?P<pid>\d+)-[0-9a-f]{6}\.tmp$",
                  re.DOTALL)
_LEGACY = re.compile(r"^\.(?P<name>.+)\.[a-z0-9_]{8}\.tmp$", re.DOTALL)
_PENDING: contextvars.ContextVar = contextvars.ContextVar("lotwise_pending_writes",
                                                          default=None)


def _digest(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _file_digest(path: Path) -> str | None:
    try:
        return _digest(path.read_bytes())
    except OSError:
        return None


def _read_record(folder: Path) -> dict:
    try:
        rec = json.loads((folder / RECORD).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    return rec if isinstance(rec, dict) else {}


def _accepted(entry) -> set:
    """Digests a record entry accepts: one when confirmed, a list while pending."""
    if isinstance(entry, str):
        return {entry}
    if isinstance(entry, list):
        return {d for d in entry if isinstance(d, str)}
    return set()


def _owned(path: Path, record: dict) -> bool:
    ok = _accepted(record.get(path.name))
    return bool(ok) and _file_digest(path) in ok


def is_temporary(name: str) -> bool:
    """True for the name of one of the tool's temporary files."""
    return _TMP.match(name) is not None


# --- checks before writing -------------------------------------------------------------

def _stat(path):
    """``os.stat`` of ``path``, or None where there is nothing (or a name too long)."""
    try:
        return os.stat(path)
    except (OSError, ValueError):
        return None


def _existing_ancestor(folder: Path) -> Path:
    folder = Path(os.path.abspath(folder))
    while _stat(folder) is None and folder.parent != folder:
        folder = folder.parent
    return folder


def _name_max(folder: Path) -> int:
    try:
        return int(os.pathconf(folder, "PC_NAME_MAX"))
    except (AttributeError, OSError, ValueError):
        return 255


def _check_base(base: Path, option: str, path) -> None:
    if not base.is_dir():
        raise InputError(f"{option} ({path}): {base} is a file, not a folder")
    if not os.access(base, os.W_OK | os.X_OK):
        raise InputError(f"{option} ({path}): the folder {base} is not writable")


def check_folder(path, *, option: str = "--out") -> Path:
    """Raise :class:`InputError` unless ``path`` is a writable folder or can be made one."""
    path = Path(path)
    st = _stat(path)
    if st is not None and not stat.S_ISDIR(st.st_mode):
        raise InputError(f"{option} ({path}) is a file; give a folder")
    _check_base(_existing_ancestor(path), option, path)
    return path


def check_target(path, *, force: bool = False, option: str = "output",
                 figure: bool = False) -> Path:
    """Raise :class:`InputError` unless ``path`` can be written; nothing is written.

    Checks that ``path`` names a file (not a folder, not a special file), with
    a ``.png``/``.svg``/``.pdf`` suffix after a name when ``figure``; that its
    name fits the file system (``PC_NAME_MAX``); that its folder exists, or
    the nearest existing ancestor is a writable folder; and, unless ``force``,
    that no file the tool did not write (or that was changed since) is there.
    """
    raw, path = os.fspath(path), Path(path)
    name = path.name
    if not name or name in (".", "..") or raw.endswith(("/", os.sep)):
        raise InputError(f"{option} ({path}) is not a file name; give one, e.g. out.csv")
    if name in (RECORD, LOCK) or is_temporary(name):
        raise InputError(f"{option} ({path}): {name} is the name of lotwise's own "
                         "bookkeeping file; choose another name")
    base = _existing_ancestor(path.parent)
    _check_base(base, option, path)
    size, limit = len(os.fsencode(name)), _name_max(base)
    if size > limit:
        raise InputError(f"{option} ({path}): the file name is {size} bytes long; this file "
                         f"system allows at most {limit}")
    st = _stat(path)
    if st is not None and stat.S_ISDIR(st.st_mode):
        raise InputError(f"{option} ({path}) is a folder; give a file name")
    if figure and path.suffix.lower() not in FIGURE_SUFFIXES:
        raise InputError(f"{option} ({path}) must be a file name ending in .png, .svg or .pdf "
                         "(for example oc.png)")
    if st is not None and not stat.S_ISREG(st.st_mode):
        raise InputError(f"{option} ({path}) exists and is not a regular file")
    if st is not None and not force and not _owned(path, _read_record(path.parent)):
        raise InputError(f"{option} ({path}) exists and was not written by lotwise "
                         "(or was changed since); use --force to overwrite it")
    return path


def check_writable(path, *, force: bool = False, option: str = "output") -> Path:
    """Raise :class:`InputError` if ``path`` cannot be written (see :func:`check_target`)."""
    return check_target(path, force=force, option=option)


def check_outputs(*targets, force: bool = False) -> list:
    """Check a command's output paths together, before anything is written.

    Each target is ``(option, path)`` or ``(option, path, "figure")``; a path
    of None (option not given) or ``-`` (standard output) is skipped. Two
    targets naming one file are refused too. Returns the checked paths.
    """
    seen: dict = {}
    out = []
    for option, path, *kind in targets:
        if path is None or str(path) == "-":
            continue
        p = check_target(path, force=force, option=option, figure="figure" in kind)
        key = os.path.normcase(os.path.abspath(p))
        if key in seen:
            raise InputError(f"{option} ({path}) is the same file as {seen[key]}; give "
                             "each output its own name")
        seen[key] = f"{option} ({path})"
        out.append(p)
    return out


# --- writing ---------------------------------------------------------------------------

class _Pending:
    """Writes held back by :func:`all_or_nothing` until its block ends."""

    def __init__(self):
        self.items: list = []  # (path, data, force, option)
        self.where: dict = {}

    def add(self, path: Path, data: bytes, force: bool, option: str) -> None:
        key = os.path.normcase(os.path.abspath(path))
        if key in self.where:
            raise InputError(f"{option} ({path}): this command would write the file twice "
                             f"(also as {self.where[key]}); give each output its own name")
        self.where[key] = f"{option} ({path})"
        self.items.append((path, data, force, option))


@contextlib.contextmanager
def all_or_nothing():
    """Hold back every write made in the block; write them all when it ends.

    Each write is checked when it is made (:func:`check_target`), so the first
    refusal ends the block with nothing written. Nested blocks join the
    outer one.
    """
    if _PENDING.get() is not None:
        yield
        return
    pending = _Pending()
    token = _PENDING.set(pending)
    try:
        yield
    finally:
        _PENDING.reset(token)
    _commit(pending.items)


def write_bytes(path, data, *, force: bool = False, option: str = "output") -> Path:
    """Write ``data`` to ``path`` atomically, respecting overwrite protection.

    ``data`` is bytes, or an iterable of bytes written one piece after the other
    (a large catalogue is never held whole); inside :func:`all_or_nothing` the
    pieces are joined, since the write is held back until the block ends.
    """
    path = check_target(path, force=force, option=option)
    pending = _PENDING.get()
    chunked = not isinstance(data, (bytes, bytearray, memoryview))
    if pending is not None:
        pending.add(path, b"".join(data) if chunked else bytes(data), force, option)
    else:
        _commit([(path, data if chunked else bytes(data), force, option)])
    return path


def write_text(path, text: str, *, force: bool = False, option: str = "output") -> Path:
    return write_bytes(path, text.encode("utf-8"), force=force, option=option)


def save_figure(fig, path, *, force: bool = False, option: str = "--plot", **kwargs) -> Path:
    """Render a matplotlib figure to PNG/SVG/PDF bytes and write them safely."""
    import sys

    try:
        check_target(path, force=force, option=option, figure=True)
        data = figure_bytes(fig, Path(path).suffix.lower().lstrip("."), **kwargs)
    finally:
        if "matplotlib.pyplot" in sys.modules:  # a pyplot figure of the caller's: release it
            sys.modules["matplotlib.pyplot"].close(fig)
    return write_bytes(path, data, force=force, option=option)


def figure_bytes(fig, fmt: str, **kwargs) -> bytes:
    """A matplotlib figure rendered as ``fmt`` (``png``, ``svg`` or ``pdf``), the
    bytes :func:`save_figure` writes (nothing is written here)."""
    import io

    buf = io.BytesIO()
    meta = {"png": {"Software": "lotwise"}, "svg": {"Creator": "lotwise"},
            "pdf": {"Creator": "lotwise"}}[fmt]
    no_layout_engine(fig)
    fig.savefig(buf, format=fmt, metadata=meta, **kwargs)
    return buf.getvalue()


def no_layout_engine(fig) -> None:
    """Drop the placeholder layout engine a finished ``tight_layout`` leaves.

    ``Figure.tight_layout`` lays the figure out once and leaves a placeholder
    engine that does nothing; ``savefig`` seeing any engine first draws the
    whole figure without output "to make sure the layout works", then draws it
    again for the file. With the placeholder removed the file is drawn once, to
    the same pixels and text (the placeholder lays nothing out). A real engine
    (constrained or tight layout set on the figure) is kept.
    """
    import matplotlib
    from matplotlib.layout_engine import PlaceHolderLayoutEngine

    rc = matplotlib.rcParams
    if (isinstance(fig.get_layout_engine(), PlaceHolderLayoutEngine)
            and not rc["figure.autolayout"] and not rc["figure.constrained_layout.use"]):
        fig.set_layout_engine(None)  # (with both settings off this removes the engine)


def _commit(items: list) -> None:
    """Write held-back files, folder by folder, by the protocol of the module docstring."""
    folders: dict = {}
    for item in items:
        folders.setdefault(Path(os.path.abspath(item[0].parent)), []).append(item)
    for folder, group in folders.items():
        option = group[0][3]
        try:
            folder.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise InputError(f"{option} ({group[0][0]}): cannot create folder {folder} "
                             f"({exc.strerror or exc})") from None
        try:
            with _locked(folder):
                _commit_folder(folder, group)
        except OSError as exc:
            raise InputError(f"{option} ({group[0][0]}) cannot be written: "
                             f"{exc.strerror or exc}") from None


def _commit_folder(folder: Path, group: list) -> None:
    record = _read_record(folder)
    changed = _settle(folder, record)
    _sweep(folder, record)
    old = {}
    for path, _data, force, option in group:
        target = folder / path.name
        mine = target.exists() and _owned(target, record)
        if target.exists() and not force and not mine:
            raise InputError(f"{option} ({path}) exists and was not written by lotwise "
                             "(or was changed since); use --force to overwrite it")
        old[path.name] = _file_digest(target) if mine else None
    digests = {}
    temps = []
    try:  # step 4
        for path, data, _force, _option in group:
            tmp, digests[path.name] = _write_temp(folder / path.name, data)
            temps.append(tmp)
    except BaseException:
        _remove(temps)
        if changed:
            _write_record(folder, record)
        raise
    for name, digest in digests.items():  # step 5: the intent
        record[name] = sorted({digest} | ({old[name]} - {None}))
    _write_record(folder, record)
    done = False
    try:
        for (path, _data, _force, _option), tmp in zip(group, temps):  # step 6
            os.replace(tmp, folder / path.name)
        _sync_folder(folder)
        done = True
    finally:
        _remove(temps)  # those not renamed (after a failure)
        if done:  # step 7: confirm
            record.update(digests)
        else:
            _settle(folder, record)
        _write_record(folder, record)


def _settle(folder: Path, record: dict) -> bool:
    """Resolve pending entries from the files on disk; True if any changed."""
    changed = False
    for name, entry in list(record.items()):
        if isinstance(entry, str):
            continue
        digest = _file_digest(folder / name)
        if digest is not None and digest in _accepted(entry):
            record[name] = digest
        else:
            del record[name]
        changed = True
    return changed


def _alive(pid: int) -> bool:
    if sys.platform == "win32":  # os.kill would end the process: trust the age alone
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:
        return True
    return True


def _sweep(folder: Path, record: dict) -> None:
    """Remove the tool's stale temporary files in ``folder``."""
    now = time.time()
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return
    for e in entries:
        if not e.name.endswith(".tmp") or not e.name.startswith("."):
            continue
        try:
            old = now - e.stat(follow_symlinks=False).st_mtime > STALE_AFTER
            if not e.is_file(follow_symlinks=False):
                continue
        except OSError:
            continue
        m = _TMP.match(e.name)
        if m is not None:
            dead = m["host"] == _HOST and int(m["pid"]) != os.getpid() and not _alive(
                int(m["pid"]))
            stale = dead or old
        else:
            legacy = _LEGACY.match(e.name)
            stale = old and legacy is not None and legacy["name"] in record
        if stale:
            _remove([e.path])


def _temp_name(target: Path) -> str:
    tail = f".lotwise-{_HOST}-{os.getpid()}-{secrets.token_hex(3)}.tmp"
    room = max(_name_max(target.parent) - len(tail) - 1, 1)
    head = os.fsencode(target.name)[:room].decode("utf-8", "ignore") or "f"
    return "." + head + tail


def _write_temp(target: Path, data) -> tuple[str, str]:
    """``data`` (bytes or an iterable of bytes) in a new temporary file beside
    ``target``, on disk; returns its path and the SHA-256 of what was written."""
    tmp = str(target.parent / _temp_name(target))
    fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0),
                 0o666)  # the umask applies, as for any new file
    try:
        try:
            st = os.stat(target)
        except OSError:
            st = None
        if st is not None and stat.S_ISREG(st.st_mode) and hasattr(os, "fchmod"):
            os.fchmod(fd, stat.S_IMODE(st.st_mode))  # a replaced file keeps its mode
            if hasattr(os, "fchown") and st.st_gid != os.fstat(fd).st_gid:
                with contextlib.suppress(OSError):
                    os.fchown(fd, -1, st.st_gid)  # ... and its group, where allowed
        h = hashlib.sha256()
        with os.fdopen(fd, "wb") as fh:
            for part in [data] if isinstance(data, (bytes, bytearray)) else data:
                fh.write(part)
                h.update(part)
            fh.flush()
            os.fsync(fh.fileno())
    except BaseException:
        _remove([tmp])
        raise
    return tmp, h.hexdigest()


def _write_record(folder: Path, record: dict) -> None:
    """Replace the record atomically and make the rename durable."""
    data = (json.dumps(record, indent=1, sort_keys=True) + "\n").encode("utf-8")
    tmp, _ = _write_temp(folder / RECORD, data)
    try:
        os.replace(tmp, folder / RECORD)
    except BaseException:
        _remove([tmp])
        raise
    _sync_folder(folder)


def _sync_folder(folder: Path) -> None:
    if sys.platform == "win32":
        return
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def _remove(paths) -> None:
    for p in paths:
        with contextlib.suppress(OSError):
            os.unlink(p)


@contextlib.contextmanager
def _locked(folder: Path):
    """Hold the folder's lock (see the module docstring, step 1)."""
    fd = os.open(folder / LOCK, os.O_RDWR | os.O_CREAT | getattr(os, "O_BINARY", 0), 0o666)
    try:
        unlock = _acquire(fd, folder / LOCK)
        try:
            yield
        finally:
            unlock()
    finally:
        os.close(fd)


def _acquire(fd: int, path: Path):
    """Lock ``fd`` exclusively, waiting up to :data:`LOCK_WAIT`; returns the unlock."""
    try:
        import fcntl
    except ImportError:
        fcntl = None
    if fcntl is not None:
        def attempt():
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)

        def release():
            fcntl.flock(fd, fcntl.LOCK_UN)
    else:
        try:
            import msvcrt
        except ImportError:  # no locking on this platform: a single writer is assumed
            return lambda: None

        def attempt():
            os.lseek(fd, 0, os.SEEK_SET)
            try:
                msvcrt.locking(fd, msvcrt.LK_NBLCK, 1)
            except OSError as exc:  # held by another process (EACCES or EDEADLOCK)
                raise BlockingIOError(*exc.args) from None

        def release():
            os.lseek(fd, 0, os.SEEK_SET)
            msvcrt.locking(fd, msvcrt.LK_UNLCK, 1)
    deadline = time.monotonic() + LOCK_WAIT
    while True:
        try:
            attempt()
            return release
        except (BlockingIOError, PermissionError):
            if time.monotonic() > deadline:
                raise InputError(f"another lotwise process holds {path} for more than "
                                 f"{LOCK_WAIT:.0f} s; try again when it has finished") from None
            time.sleep(0.01)
        except OSError:  # the file system refuses locks: proceed as a single writer
            return lambda: None
