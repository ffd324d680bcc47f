"""Output files in one process: modes, the all-or-nothing check of a command's
paths, the record's intent entries and the sweep of stale temporaries.

Sources: POSIX.1-2017 (IEEE Std 1003.1), open(): a created file's mode is the
requested mode with the bits of the umask cleared; rename(): replaces the
target atomically and the new file keeps the mode it was created with (so a
writer that wants the old mode must set it). PC_NAME_MAX from pathconf() is
the longest file name the file system takes. The rest is the protocol of
lotwise.data.files (its module docstring); checks are exact.
"""

from __future__ import annotations

import json
import os
import stat
import subprocess
import sys
import time
from pathlib import Path

import pytest

from lotwise.cli import main
from lotwise.core.quantities import InputError
from lotwise.data import files

ROOT = Path(__file__).resolve().parents[1]
PLANS = ROOT / "plans"
POSIX = pytest.mark.skipif(os.name != "posix", reason="POSIX file modes")


def record(folder) -> dict:
    return json.loads((Path(folder) / files.RECORD).read_text())


def digest(path) -> str:
    import hashlib

    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def mode(path) -> int:
    return stat.S_IMODE(os.stat(path).st_mode)


def temporaries(folder) -> list:
    return sorted(p.name for p in Path(folder).iterdir() if p.name.endswith(".tmp"))


@pytest.fixture
def umask():
    """Set the process umask for one test, restored afterwards."""
    old = os.umask(0o022)
    os.umask(old)
    yield os.umask
    os.umask(old)


# --- modes ----------------------------------------------------------------------------

# POSIX open(): mode 0666 & ~umask (exact).
@POSIX
@pytest.mark.parametrize("mask, expected", [(0o022, 0o644), (0o077, 0o600), (0o002, 0o664),
                                            (0o027, 0o640), (0o000, 0o666)])
def test_new_file_takes_the_umask(tmp_path, umask, mask, expected):
    umask(mask)
    out = files.write_text(tmp_path / "plan.csv", "n,c\n80,2\n")
    assert mode(out) == expected
    assert mode(tmp_path / files.RECORD) == expected  # the record too


@POSIX
def test_sheet_files_take_the_umask(tmp_path, umask, capsys):
    umask(0o027)
    assert main(["sheet", str(PLANS / "qp-1104-relief-spring.toml"), "--out",
                 str(tmp_path)]) in (0, 1)
    written = [p for p in tmp_path.iterdir() if not p.name.startswith(".")]
    assert len(written) >= 4
    assert {oct(mode(p)) for p in written} == {oct(0o640)}


# POSIX rename(): the replacement keeps the mode it was created with, so the old
# mode must be carried over by the writer (exact).
@POSIX
@pytest.mark.parametrize("old_mode", [0o640, 0o600, 0o664, 0o444])
def test_force_keeps_the_mode_of_the_users_file(tmp_path, umask, old_mode):
    umask(0o022)
    target = tmp_path / "report.md"
    target.write_text("my notes\n")
    target.chmod(old_mode)
    with pytest.raises(InputError, match="--force"):
        files.write_text(target, "lotwise's\n")
    files.write_text(target, "lotwise's\n", force=True)
    assert target.read_text() == "lotwise's\n" and mode(target) == old_mode


@POSIX
def test_rerun_keeps_a_mode_the_user_set(tmp_path, umask):
    umask(0o077)
    target = files.write_text(tmp_path / "oc.csv", "first\n")
    assert mode(target) == 0o600
    target.chmod(0o644)  # shared by hand: still the tool's file (same content)
    files.write_text(target, "second\n")
    assert target.read_text() == "second\n" and mode(target) == 0o644


# --- checks before writing: all or nothing ----------------------------------------------

def _listing(folder):
    return sorted(p.name for p in Path(folder).iterdir())


def test_sheet_refusing_its_last_file_writes_none(tmp_path, capsys):
    plan = PLANS / "qp-2210-manifold-block.toml"
    mine = tmp_path / "qp-2210-manifold-block.pdf"  # the last file a sheet writes
    mine.write_bytes(b"my own pdf")
    assert main(["sheet", str(plan), "--out", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert "qp-2210-manifold-block.pdf" in err and "--force" in err
    assert _listing(tmp_path) == ["qp-2210-manifold-block.pdf"]
    assert mine.read_bytes() == b"my own pdf"


def test_sheet_of_two_files_refusing_the_second_writes_none(tmp_path, capsys):
    (tmp_path / "qp-4410-o-ring.md").write_text("mine\n")
    code = main(["sheet", str(PLANS / "qp-1104-relief-spring.toml"),
                 str(PLANS / "qp-4410-o-ring.toml"), "--out", str(tmp_path)])
    assert code == 2
    assert _listing(tmp_path) == ["qp-4410-o-ring.md"]


@pytest.mark.parametrize("args, option, says", [
    # a bare extension is not a file name
    (["--csv", "{d}/oc.csv", "--plot", ".png"], "--plot", "ending in .png"),
    (["--csv", "{d}/oc.csv", "--plot", "{d}/oc.jpg"], "--plot", "ending in .png"),
    (["--csv", "{d}/oc.csv", "--plot", "{d}"], "--plot", "is a folder"),
    (["--csv", "{d}/oc.png", "--plot", "{d}/oc.png"], "--plot", "same file"),
    (["--csv", "{d}/oc.csv", "--plot", "{d}/mine.txt/oc.png"], "--plot", "not a folder"),
    (["--csv", "{d}/" + "x" * 300 + ".csv", "--plot", "{d}/oc.png"], "--csv", "at most"),
    (["--csv", "{d}/oc.csv", "--plot", "{d}/user.png"], "--plot", "--force"),
])
def test_oc_checks_every_path_before_writing(tmp_path, capsys, args, option, says):
    (tmp_path / "mine.txt").write_text("a user's file\n")
    (tmp_path / "user.png").write_bytes(b"a user's figure")
    before = _listing(tmp_path)
    argv = ["oc", "--n", "50", "--c", "1"] + [a.format(d=tmp_path) for a in args]
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and option in err and says in err
    assert _listing(tmp_path) == before


def test_name_longer_than_the_file_system_allows(tmp_path):
    limit = os.pathconf(tmp_path, "PC_NAME_MAX") if hasattr(os, "pathconf") else 255
    ok = "a" * (limit - 4) + ".csv"
    files.write_text(tmp_path / ok, "fits\n")  # the temporary's name is shortened to fit
    assert (tmp_path / ok).read_text() == "fits\n" and temporaries(tmp_path) == []
    with pytest.raises(InputError, match=f"at most {limit}"):
        files.check_target(tmp_path / ("a" * (limit + 1)), option="--csv")


@pytest.mark.parametrize("argv, option", [
    (["design", "--scheme", "double", "--aql", "1%", "--rql", "8%", "--plot", ".png"], "--plot"),
    (["compare", "--plan", "n=50,c=1", "--plan", "n=80,c=2", "--aql", "1%", "--rql", "8%",
      "--plot", ".svg"], "--plot"),
    (["zero", "--rql", "5%", "--plot", "png"], "--plot"),
    (["check", "--n", "50", "--c", "1", "--aql", "1%", "--rql", "8%", "--lot-size", "500",
      "--aoq-plot", ".pdf"], "--aoq-plot"),
])
def test_plot_options_need_a_name_with_an_extension(tmp_path, capsys, monkeypatch, argv,
                                                    option):
    monkeypatch.chdir(tmp_path)
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert option in err and ".png, .svg or .pdf" in err
    assert _listing(tmp_path) == []


def test_batch_refuses_before_designing(tmp_path, capsys, monkeypatch):
    out = tmp_path / "plans.csv"
    out.write_text("mine\n")
    import lotwise.data.batch as batch

    monkeypatch.setattr(batch, "design_catalogue",
                        lambda *a, **k: pytest.fail("designed before checking --out"))
    assert main(["batch", str(ROOT / "examples" / "catalogue.csv"), "--out", str(out)]) == 2
    assert "--out" in capsys.readouterr().err and out.read_text() == "mine\n"


def test_validate_refuses_before_running_the_cases(tmp_path, capsys, monkeypatch):
    import datetime as dt

    import lotwise.validation.runner as runner

    day = dt.datetime.now(dt.timezone.utc).date().isoformat()
    (tmp_path / f"validation-{day}.pdf").write_bytes(b"mine")
    monkeypatch.setattr(runner, "run_cases", lambda: pytest.fail("ran before checking --out"))
    assert main(["validate", "--out", str(tmp_path)]) == 2
    assert "--force" in capsys.readouterr().err
    assert _listing(tmp_path) == [f"validation-{day}.pdf"]


def test_all_or_nothing_writes_nothing_when_the_block_fails(tmp_path):
    with pytest.raises(RuntimeError):
        with files.all_or_nothing():
            files.write_text(tmp_path / "a.csv", "a\n")
            files.write_text(tmp_path / "b.csv", "b\n")
            raise RuntimeError("the command failed after its first writes")
    assert _listing(tmp_path) == []
    with files.all_or_nothing():
        files.write_text(tmp_path / "a.csv", "a\n")
        assert _listing(tmp_path) == []  # held back until the block ends
    assert (tmp_path / "a.csv").read_text() == "a\n"


def test_bookkeeping_names_are_not_outputs(tmp_path):
    for name in (files.RECORD, files.LOCK):
        with pytest.raises(InputError, match="bookkeeping"):
            files.write_text(tmp_path / name, "{}")


# --- the record: intent entries ---------------------------------------------------------

def test_pending_entry_accepts_old_and_new_content(tmp_path):
    """A record left between intent and confirmation (a writer killed there):
    either content is the tool's; the next write settles the entry."""
    a = files.write_text(tmp_path / "a.csv", "old\n")
    old = digest(a)
    a.write_text("new\n")
    rec = record(tmp_path)
    rec["a.csv"] = sorted([old, digest(a)])
    (tmp_path / files.RECORD).write_text(json.dumps(rec))
    files.check_target(a)  # accepted without --force
    files.write_text(tmp_path / "b.csv", "b\n")  # any write into the folder settles
    assert record(tmp_path) == {"a.csv": digest(a), "b.csv": digest(tmp_path / "b.csv")}


def test_pending_entry_of_a_changed_file_is_dropped(tmp_path):
    a = files.write_text(tmp_path / "a.csv", "old\n")
    rec = record(tmp_path)
    rec["a.csv"] = [digest(a)]
    (tmp_path / files.RECORD).write_text(json.dumps(rec))
    a.write_text("edited by the user\n")
    files.write_text(tmp_path / "b.csv", "b\n")
    assert "a.csv" not in record(tmp_path)
    with pytest.raises(InputError, match="--force"):
        files.write_text(a, "again\n")


def test_concurrent_threads_lose_no_entry(tmp_path):
    """The read-modify-write of the record under the lock, from 8 threads (each
    opens the lock file itself, so flock keeps them apart as it does processes)."""
    from concurrent.futures import ThreadPoolExecutor

    def work(i):
        for k in range(5):
            files.write_text(tmp_path / f"t{i}-{k}.csv", f"{i},{k}\n")

    with ThreadPoolExecutor(8) as ex:
        list(ex.map(work, range(8)))
    rec = record(tmp_path)
    assert len(rec) == 40
    assert all(rec[p.name] == digest(p) for p in tmp_path.glob("t*.csv"))


# --- stale temporaries --------------------------------------------------------------------

def _dead_pid() -> int:
    p = subprocess.Popen([sys.executable, "-c", "pass"])
    p.wait()
    return p.pid


def test_temporary_names_carry_the_writer(tmp_path):
    name = files._temp_name(tmp_path / "plan.csv")
    assert files.is_temporary(name) and f"-{os.getpid()}-" in name
    assert name.startswith(".plan.csv.lotwise-") and name.endswith(".tmp")


def test_sweep_removes_stale_temporaries_only(tmp_path):
    host = files._HOST
    dead = tmp_path / f".a.csv.lotwise-{host}-{_dead_pid()}-0a0b0c.tmp"
    alive = tmp_path / f".b.csv.lotwise-{host}-{os.getppid()}-0a0b0c.tmp"
    old_alive = tmp_path / f".c.csv.lotwise-{host}-{os.getppid()}-0d0e0f.tmp"
    other_host = tmp_path / ".d.csv.lotwise-ffffff-1-0a0b0c.tmp"
    legacy = tmp_path / ".a.csv.k3j_9x2q.tmp"  # an earlier version's mkstemp name
    legacy_fresh = tmp_path / ".a.csv.zz11yy22.tmp"
    users = [tmp_path / ".notes.tmp", tmp_path / ".b.csv.abcdefgh.tmp"]  # b.csv not ours
    files.write_text(tmp_path / "a.csv", "a\n")
    for p in [dead, alive, old_alive, other_host, legacy, legacy_fresh, *users]:
        p.write_text("partial")
    hour_ago = time.time() - 3600
    for p in (old_alive, legacy, users[1]):
        os.utime(p, (hour_ago, hour_ago))
    files.write_text(tmp_path / "e.csv", "e\n")  # the next write into the folder sweeps
    left = set(temporaries(tmp_path))
    assert left == {alive.name, other_host.name, legacy_fresh.name} | {u.name for u in users}
