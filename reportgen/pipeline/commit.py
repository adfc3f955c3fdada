"""The output folder: one build per package at a time (a lock file), and commits of
several files at once that a kill cannot leave half done (a journal).

A commit writes every file to a synced temporary beside its final name, then a journal
naming each temporary, its final name and its SHA-256, then renames them and deletes the
journal. A journal found later (its writer was killed) is completed if every temporary is
intact, or else discarded; :func:`recover` does that, under the journal's locks. Only the
command's own process commits: helper processes hand their bytes back.
"""

from __future__ import annotations

import contextlib
import errno
import glob
import hashlib
import json
import os
import signal
import stat
import tempfile
import threading
import time
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path

from reportgen.errors import JobError, Problem

JOURNAL_SUFFIX = ".reportgen-journal"
JOURNAL_FORMAT = "reportgen.commit/1"
LOCK_SUFFIX = ".lock"
#: temporary files older than this are left over from a killed build, not in progress
STALE_PART_SECONDS = 60.0

#: every final path this process has committed, in order (the Ctrl-C message names them)
committed: list[Path] = []
#: the lock files this process holds, by path
_held: dict[Path, object] = {}


# ---------------------------------------------------------------- names


def package_names(path: Path) -> tuple[str, str, str] | None:
    """(calc number, revision, file stem) read from a job file without validating the
    rest of it, or None if they cannot be read; :func:`reportgen.job.load.load_job` then
    reports why. Cheap (no units, no plugins): the command reads it before the build."""
    from reportgen.job.load import file_stem, parse_job_toml, read_job_bytes

    try:
        raw = parse_job_toml(str(path), read_job_bytes(path))
    except JobError:
        return None
    pkg = raw.get("package")
    if not isinstance(pkg, dict):
        return None
    calc, rev = pkg.get("calc_number"), pkg.get("revision")
    stem = file_stem(calc, rev)
    return None if stem is None else (str(calc), str(rev), stem)


def package_files(out_dir: Path, stem: str, html: bool = False) -> list[Path]:
    names = [f"{stem}.results.json", f"{stem}.pdf"] + ([f"{stem}.html"] if html else [])
    return [out_dir / n for n in names]


# ---------------------------------------------------------------- locks


def lock_path(out_dir: Path, name: str) -> Path:
    return out_dir / f".{name}{LOCK_SUFFIX}"


def try_lock(path: Path) -> bool:
    """Take the lock file ``path`` now, or return False if another process holds it.

    The lock is the kernel's (flock): a killed holder's lock is free at once.
    """
    if path in _held:
        return True
    from filelock import FileLock, Timeout

    for _ in range(3):  # the folder may be removed by a build that just ended
        path.parent.mkdir(parents=True, exist_ok=True)
        lock = FileLock(str(path), timeout=0)
        try:
            lock.acquire()
        except Timeout:
            return False
        except FileNotFoundError:
            continue
        if not _still_named(lock, path):  # its holder deleted it as we opened it
            lock.release()
            continue
        _held[path] = lock
        return True
    return False


def _still_named(lock, path: Path) -> bool:
    fd = getattr(getattr(lock, "_context", None), "lock_file_fd", None)
    if fd is None:
        return True  # not a descriptor lock: nothing to compare
    try:
        return os.path.samestat(os.fstat(fd), os.stat(path))
    except OSError:
        return False


def unlock(path: Path) -> None:
    """Release a lock and delete its file (deleted while still held, so a process that
    opened the old file finds it unlinked and opens a new one)."""
    lock = _held.pop(path, None)
    if lock is None:
        return
    with contextlib.suppress(OSError):
        path.unlink()
    lock.release()  # type: ignore[attr-defined]


@dataclass
class Claim:
    """The lock files one command holds in an output folder, and whether the command
    made that folder (removed again if it is left empty)."""

    out_dir: Path
    locks: list[Path] = field(default_factory=list)
    made_dir: bool = False
    #: what finishing a killed build's commits did (reportgen.cli prints them)
    notes: list[str] = field(default_factory=list)

    @classmethod
    def open(cls, out_dir: Path) -> Claim:
        return cls(out_dir, made_dir=not out_dir.exists())

    def package(self, job: Path, calc: str, rev: str, stem: str) -> Path:
        """Hold the package's lock, or raise (exit 2): another build is writing it."""
        path = lock_path(self.out_dir, stem)
        if path in self.locks:
            return path
        if not try_lock(path):
            raise JobError(Problem(str(job), f"another build of {calc} revision {rev} is"
                                   f" writing into {self.out_dir}{os.sep}; try again when it"
                                   " has finished"))
        self.locks.append(path)
        return path

    def wait(self, name: str, seconds: float = 120.0) -> Path:
        """Hold the lock ``name`` (the register's), waiting for another holder's commit."""
        path = lock_path(self.out_dir, name)
        end = time.monotonic() + seconds
        while path not in self.locks:
            if try_lock(path):
                self.locks.append(path)
            elif time.monotonic() > end:
                raise JobError(Problem(str(self.out_dir), f"another build has held the lock"
                                       f" {path.name} for {seconds:.0f} s", field="--out"))
            else:
                time.sleep(0.05)
        return path

    def release(self) -> None:
        for path in reversed(self.locks):
            unlock(path)
        self.locks.clear()
        if self.made_dir:
            with contextlib.suppress(OSError):
                self.out_dir.rmdir()  # only if nothing was committed into it


# ---------------------------------------------------------------- checks before writing


def refuse_existing(job: Path, targets: Iterable[Path]) -> None:
    """Without --force an existing package is never replaced."""
    for target in targets:
        if os.path.lexists(target):
            raise JobError(Problem(str(job), f"{target} already exists; a package of the same"
                                   " calc number and revision is replaced only with --force"))


def preflight(job: Path, targets: Iterable[Path]) -> None:
    """Refuse, before anything is written, a final name that a file cannot take."""
    for target in targets:
        try:
            st = os.lstat(target)
        except FileNotFoundError:
            continue
        except OSError as exc:
            raise JobError(Problem(str(job), f"cannot write {target}: {exc.strerror or exc}",
                                   field="--out")) from None
        if stat.S_ISDIR(st.st_mode):
            raise JobError(Problem(str(job), f"{target} is a folder; the package cannot be"
                                   " written there and nothing was written", field="--out"))


def sweep_stale_parts(out_dir: Path, targets: list[Path], *,
                      now: float | None = None) -> list[Path]:
    """Remove ``.NAME.*.part`` files a killed build left beside ``targets``; return them.

    Only old ones go: a younger one may belong to a build running at the same time.
    """
    if not out_dir.is_dir():
        return []
    now = time.time() if now is None else now
    removed = []
    for target in targets:
        for part in out_dir.glob(f".{glob.escape(target.name)}.*.part"):
            try:
                if part.is_file() and not part.is_symlink() and (
                        now - part.stat().st_mtime > STALE_PART_SECONDS):
                    part.unlink()
                    removed.append(part)
            except OSError:
                pass  # another build swept it first
    return removed


# ---------------------------------------------------------------- the commit


@dataclass(frozen=True)
class Staged:
    """One output written to a synced temporary, waiting for its rename."""

    temp: Path
    final: Path
    sha256: str


def stage(target: Path, data: bytes) -> Staged:
    temp = target.parent / Path(write_temp(target, data)).name  # (mkstemp makes it absolute)
    return Staged(temp, target, hashlib.sha256(data).hexdigest())


def commit_outputs(outputs: list[tuple[Path, bytes]], *, journal: Path | None = None,
                   locks: Iterable[Path] = ()) -> None:
    """Write every output to a synced temporary file, then commit them all together."""
    _check_targets([target for target, _ in outputs])
    staged: list[Staged] = []
    try:
        for target, data in outputs:
            staged.append(stage(target, data))
        commit_staged(staged, journal=journal, locks=locks)
    except BaseException:
        for s in staged:
            discard(s.temp)  # already renamed ones are simply gone
        raise


def _check_targets(targets: list[Path]) -> None:
    """A rename onto a folder fails half way through a commit: refuse it before."""
    for target in targets:
        if os.path.isdir(target) and not os.path.islink(target):
            raise IsADirectoryError(errno.EISDIR, "a folder has the file's name", str(target))


def journal_path(out_dir: Path, name: str) -> Path:
    return out_dir / f".{name}{JOURNAL_SUFFIX}"


def commit_staged(staged: list[Staged], *, journal: Path | None = None,
                  locks: Iterable[Path] = ()) -> None:
    """Rename staged outputs into their final names as one commit.

    The journal is written first (atomically), so a kill between two renames is completed
    by the next :func:`recover`. SIGINT and SIGTERM are held back from the journal to its
    removal: an interrupt lands before the commit (the folder as it was) or after it.
    """
    if not staged:
        return
    folder = staged[0].final.parent
    if journal is None:
        journal = journal_path(folder, staged[0].final.name)
    if any(s.final.parent != folder or s.temp.parent != folder for s in staged):
        raise ValueError("a commit stays in one folder")
    record = {"format": JOURNAL_FORMAT, "locks": sorted(p.name for p in locks),
              "files": [{"temp": s.temp.name, "final": s.final.name, "sha256": s.sha256}
                        for s in staged]}
    data = (json.dumps(record, indent=1) + "\n").encode("utf-8")
    _check_targets([s.final for s in staged])
    with interrupts_held():
        atomic_write(journal, data)
        for s in staged:  # a failure here leaves the journal: the next recover completes it
            os.replace(s.temp, s.final)
        fsync_dir(folder)
        journal.unlink()
        fsync_dir(folder)
        committed.extend(s.final for s in staged)


def recover(out_dir: Path) -> list[str]:
    """Complete or discard every commit a killed build left in ``out_dir``; say what.

    A journal whose locks another process holds is that process's commit in progress
    and is left alone.
    """
    notes: list[str] = []
    try:
        journals = sorted(out_dir.glob(f".*{JOURNAL_SUFFIX}"))
    except OSError:
        return notes
    for journal in journals:
        record = _read_journal(journal)
        if record is None:
            with contextlib.suppress(OSError):
                journal.unlink()
            notes.append(f"removed {journal}: not a commit journal this tool can read")
            continue
        taken: list[Path] = []
        try:
            for name in record["locks"]:
                path = out_dir / name
                if path in _held:
                    continue
                if not try_lock(path):
                    break
                taken.append(path)
            else:
                if _read_journal(journal) == record:  # still there: its writer is gone
                    notes.append(_finish(out_dir, journal, record))
        except OSError as exc:  # a read-only folder, say: the next writer will do it
            notes.append(f"could not finish the commit that a stopped build left in"
                         f" {out_dir} ({journal.name}): {exc.strerror or exc}")
        finally:
            for path in taken:
                unlock(path)
    return notes


def _plain(name: object) -> bool:
    return (isinstance(name, str) and name not in ("", ".", "..") and "/" not in name
            and "\\" not in name and "\0" not in name)


def _read_journal(journal: Path) -> dict | None:
    try:
        record = json.loads(journal.read_bytes())
    except (OSError, ValueError):
        return None
    try:
        ok = (record["format"] == JOURNAL_FORMAT
              and all(_plain(n) and n.endswith(LOCK_SUFFIX) for n in record["locks"])
              and all(_plain(f["temp"]) and f["temp"].startswith(".")
                      and f["temp"].endswith(".part") and _plain(f["final"])
                      and isinstance(f["sha256"], str) for f in record["files"]))
    except (KeyError, TypeError):
        return None
    return record if ok else None


def _sha256(path: Path) -> str | None:
    try:
        with path.open("rb") as fh:
            return hashlib.file_digest(fh, "sha256").hexdigest()
    except OSError:
        return None


def _finish(out_dir: Path, journal: Path, record: dict) -> str:
    todo, intact = [], True
    for f in record["files"]:
        temp, final = out_dir / f["temp"], out_dir / f["final"]
        if os.path.lexists(temp):
            if _sha256(temp) != f["sha256"]:
                intact = False
            todo.append((temp, final))
        elif _sha256(final) != f["sha256"]:
            intact = False  # neither the temporary nor the renamed file is there
    finals = ", ".join(f["final"] for f in record["files"])
    with interrupts_held():
        if intact:
            for temp, final in todo:
                os.replace(temp, final)
        else:
            for temp, _final in todo:
                discard(temp)
        fsync_dir(out_dir)
        journal.unlink()
        fsync_dir(out_dir)
    if intact:
        committed.extend(final for _temp, final in todo)
        return f"completed a commit that a stopped build left in {out_dir}: {finals}"
    return (f"discarded a commit that a stopped build left in {out_dir} (its temporary files"
            f" were missing or changed): {finals}")


# ---------------------------------------------------------------- files


@contextlib.contextmanager
def interrupts_held():
    """Hold SIGINT and SIGTERM back for the block, then act on them as usual.

    A Python-level handler, not a signal mask: the mask is per thread, and a signal sent
    to the process may land on any thread (the renderer's, the pool's).
    """
    if threading.current_thread() is not threading.main_thread():
        yield  # only the main thread may set handlers (and only it commits)
        return
    caught: list[int] = []
    held = (signal.SIGINT, signal.SIGTERM)
    previous = {s: signal.signal(s, lambda signum, frame: caught.append(signum)) for s in held}
    try:
        yield
    finally:
        for s, handler in previous.items():
            signal.signal(s, handler)
        if caught:
            handler = previous[caught[0]]
            if callable(handler):
                handler(caught[0], None)
            elif handler == signal.SIG_DFL:
                signal.raise_signal(caught[0])


def write_temp(target: Path, data: bytes) -> str:
    """``data`` in a synced temporary file ``.NAME.*.part`` beside ``target``."""
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    try:
        umask = os.umask(0)
        os.umask(umask)
        os.fchmod(fd, 0o666 & ~umask)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    except BaseException:
        discard(tmp)
        raise
    return tmp


def discard(tmp: str | Path) -> None:
    try:
        os.unlink(tmp)
    except OSError:
        pass


def fsync_dir(folder: Path) -> None:
    # the renames themselves reach the disk only once the folder is synced
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


def atomic_write(target: Path, data: bytes) -> None:
    """Write ``data`` to a temporary file beside ``target``, fsync, then rename over it."""
    tmp = write_temp(target, data)
    try:
        os.replace(tmp, target)
    except BaseException:
        discard(tmp)
        raise
    fsync_dir(target.parent)
