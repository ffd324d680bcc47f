"""Installation check: is the code that runs the code that was validated?

A validation report is evidence only for the files it ran. This module
hashes every file of the installed ``lotwise`` package (``*.py`` and the
package data: ``py.typed``, the web page's ``static/`` files) with SHA-256
and compares the hashes with a *reference*, so that one altered, missing or
added file makes the report fail. The reference is, in this order:

1. ``lotwise/validation/manifest.json``, written into the package when a
   wheel is built (``src/_build_manifest.py``, run by
   setuptools' ``build_py``): the files exactly as they were packed. An
   installed wheel (``pip install lotwise-*.whl`` or ``pip install .``)
   carries it.
2. Without a manifest (an editable install or a source checkout on
   ``PYTHONPATH``), the git commit the package directory is checked out
   at: each file's git blob hash (SHA-1 of ``"blob <size>\\0" + content``)
   against ``git ls-tree -r HEAD``. A file changed since the commit, or a
   file git does not track, fails the check: validate from a committed
   tree.
3. Neither: the check cannot be made, and the report says so (verdict
   INCOMPLETE, exit 1).

Nothing here imports numpy or the rest of lotwise, so the build step can
load this file on its own (see ``src/_build_manifest.py``).

Examples
--------
>>> import tempfile, pathlib
>>> root = pathlib.Path(tempfile.mkdtemp()) / "pkg"
>>> (root / "sub").mkdir(parents=True)
>>> _ = (root / "a.py").write_text("x = 1\\n")
>>> _ = (root / "sub" / "b.py").write_text("y = 2\\n")
>>> _ = write_manifest(root, root / MANIFEST_NAME)
>>> check_files(root).ok
True
>>> _ = (root / "a.py").write_text("x = 2\\n")
>>> chk = check_files(root)
>>> chk.ok, chk.changed
(False, ['a.py'])
"""

from __future__ import annotations

import hashlib
import json
import os
import subprocess
from dataclasses import dataclass, field
from pathlib import Path

__all__ = ["MANIFEST_NAME", "InstalledFile", "InstallationCheck", "package_root",
           "package_files", "write_manifest", "check_files", "check_installation"]

#: Where the build writes the manifest, relative to the package directory.
MANIFEST_NAME = "validation/manifest.json"

_SKIP_DIRS = {"__pycache__"}
_SKIP_SUFFIXES = {".pyc", ".pyo"}


@dataclass(frozen=True, kw_only=True)
class InstalledFile:
    """One file of the package: its path relative to the package directory,
    its SHA-256 and its verdict (``ok``, ``CHANGED``, ``NOT IN REFERENCE``)."""

    path: str
    sha256: str
    verdict: str


@dataclass(frozen=True, kw_only=True)
class InstallationCheck:
    """The package's files against the reference.

    Attributes
    ----------
    root : str
        The installed package directory.
    reference : str
        What the hashes were compared with (the manifest and its own SHA-256,
        or the git commit), or why no comparison was possible.
    kind : str
        ``manifest``, ``git`` or ``none``.
    files : list of InstalledFile
    changed, missing, unexpected : list of str
        Files whose content differs, files the reference lists but the
        installation lacks, and files the reference does not know.
    """

    root: str
    reference: str
    kind: str
    files: list = field(default_factory=list)
    changed: list = field(default_factory=list)
    missing: list = field(default_factory=list)
    unexpected: list = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return self.kind != "none" and not (self.changed or self.missing or self.unexpected)

    @property
    def verdict(self) -> str:
        if self.kind == "none":
            return "INCOMPLETE"
        return "pass" if self.ok else "FAIL"

    def as_dict(self) -> dict:
        return {"root": self.root, "reference": self.reference, "kind": self.kind,
                "verdict": self.verdict, "changed": self.changed, "missing": self.missing,
                "unexpected": self.unexpected,
                "files": [{"path": f.path, "sha256": f.sha256, "verdict": f.verdict}
                          for f in self.files]}


def package_root() -> Path:
    """The directory of the ``lotwise`` package that is running."""
    return Path(__file__).resolve().parent.parent


def package_files(root) -> list[str]:
    """Every file under ``root`` that the package consists of, as sorted
    POSIX paths relative to ``root``: all files except byte-code caches and
    the manifest itself."""
    root = Path(root)
    out = []
    for folder, dirs, names in os.walk(root):
        dirs[:] = sorted(d for d in dirs if d not in _SKIP_DIRS)
        for name in names:
            rel = (Path(folder) / name).relative_to(root).as_posix()
            if Path(name).suffix in _SKIP_SUFFIXES or rel == MANIFEST_NAME:
                continue
            out.append(rel)
    return sorted(out)


def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _git_blob(path: Path) -> str:
    data = path.read_bytes()
    return hashlib.sha1(b"blob %d\0" % len(data) + data).hexdigest()


def write_manifest(root, target) -> Path:
    """Write the SHA-256 of every package file under ``root`` to ``target``
    (JSON ``{"algorithm": "sha256", "files": {path: hash}}``)."""
    root, target = Path(root), Path(target)
    files = {rel: _sha256(root / rel) for rel in package_files(root)}
    target.parent.mkdir(parents=True, exist_ok=True)
    target.write_text(json.dumps({"algorithm": "sha256", "files": files}, indent=1,
                                 sort_keys=True) + "\n", encoding="utf-8")
    return target


def _compare(root: Path, want: dict, hasher) -> tuple[list, list, list, list]:
    """``(files, changed, missing, unexpected)`` of ``root`` against the
    reference hashes ``want`` (computed by ``hasher``)."""
    files, changed, unexpected = [], [], []
    have = package_files(root)
    for rel in have:
        sha = _sha256(root / rel)
        if rel not in want:
            verdict = "NOT IN REFERENCE"
            unexpected.append(rel)
        elif hasher(root / rel) != want[rel]:
            verdict = "CHANGED"
            changed.append(rel)
        else:
            verdict = "ok"
        files.append(InstalledFile(path=rel, sha256=sha, verdict=verdict))
    missing = sorted(set(want) - set(have))
    return files, changed, missing, unexpected


def _git(args: list, cwd: Path) -> str | None:
    try:
        out = subprocess.run(["git", *args], cwd=cwd, capture_output=True, text=True,
                             timeout=30, check=False)
    except (OSError, subprocess.SubprocessError):
        return None
    return out.stdout if out.returncode == 0 else None


def _git_reference(root: Path) -> tuple[str, dict] | None:
    """``(commit, {path: blob hash})`` of the package directory at HEAD, or
    None when ``root`` is not inside a git checkout."""
    top = _git(["rev-parse", "--show-toplevel"], root)
    commit = _git(["rev-parse", "HEAD"], root)
    if not top or not commit:
        return None
    listing = _git(["ls-tree", "-r", "HEAD", "--", "."], root)
    if listing is None:
        return None
    want = {}
    prefix = root.resolve().relative_to(Path(top.strip()).resolve()).as_posix()
    for line in listing.splitlines():
        meta, _, path = line.partition("\t")
        parts = meta.split()
        if len(parts) == 3 and parts[1] == "blob":
            rel = path[len(prefix) + 1:] if path.startswith(prefix + "/") else path
            if rel != MANIFEST_NAME:
                want[rel] = parts[2]
    return commit.strip(), want


def check_files(root, *, manifest=None, use_git: bool = True) -> InstallationCheck:
    """Hash the files under ``root`` and compare them with ``manifest``
    (default ``root/validation/manifest.json``) or, without one, with the
    git commit ``root`` is checked out at."""
    root = Path(root).resolve()
    manifest = Path(manifest) if manifest is not None else root / MANIFEST_NAME
    if manifest.is_file():
        raw = manifest.read_bytes()
        want = json.loads(raw.decode("utf-8")).get("files", {})
        files, changed, missing, unexpected = _compare(root, want, _sha256)
        ref = (f"build manifest {manifest.name} ({len(want)} files; SHA-256 of the manifest "
               f"{hashlib.sha256(raw).hexdigest()})")
        return InstallationCheck(root=str(root), reference=ref, kind="manifest", files=files,
                                 changed=changed, missing=missing, unexpected=unexpected)
    git = _git_reference(root) if use_git else None
    if git is not None:
        commit, want = git
        files, changed, missing, unexpected = _compare(root, want, _git_blob)
        ref = (f"git commit {commit} ({len(want)} tracked files; each file's git blob hash "
               f"against the commit's tree)")
        return InstallationCheck(root=str(root), reference=ref, kind="git", files=files,
                                 changed=changed, missing=missing, unexpected=unexpected)
    files = [InstalledFile(path=rel, sha256=_sha256(root / rel), verdict="no reference")
             for rel in package_files(root)]
    return InstallationCheck(
        root=str(root), kind="none", files=files,
        reference="none: no build manifest in the package and not a git checkout; install "
                  "from a wheel or validate from a committed checkout")


def check_installation() -> InstallationCheck:
    """:func:`check_files` on the running ``lotwise`` package."""
    return check_files(package_root())
