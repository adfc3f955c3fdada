"""The one rule for every file or folder a job file (or a firm theme) names.

A name is a relative path inside a given folder: no '..', no absolute or drive path, no
control characters, and no symbolic link anywhere along it; reads are bounded.
"""

from __future__ import annotations

import os
import stat
from pathlib import Path
from typing import Literal

from reportgen.errors import JobError, Problem

Kind = Literal["file", "folder"]

_NOFOLLOW = getattr(os, "O_NOFOLLOW", 0)
_CLOEXEC = getattr(os, "O_CLOEXEC", 0)
_DIRECTORY = getattr(os, "O_DIRECTORY", 0)
_NONBLOCK = getattr(os, "O_NONBLOCK", 0)  # a FIFO swapped in must not block the open
#: the walk opens each component relative to its parent's descriptor, so nothing can
#: swap a link in between the check and the open
_AT_CALLS = os.open in os.supports_dir_fd and os.stat in os.supports_dir_fd


class UnsafePath(ValueError):
    """A name the rule refuses; the message says why, naming the text as written."""


class TooLarge(ValueError):
    """A file over its size limit; ``size`` is what it holds (at least limit + 1)."""

    def __init__(self, size: int, limit: int):
        self.size, self.limit = size, limit
        super().__init__(f"is {size} bytes; the limit is {limit} bytes")


def path_parts(text: object, *, kind: Kind = "file") -> tuple[str, ...]:
    """The components of ``text`` if it is a relative path that stays in its folder.

    Raises UnsafePath for anything else: not text, empty, an absolute POSIX path, a
    drive or UNC path, a ':' anywhere (drives, streams, URL schemes), a control
    character, or an empty, '.' or '..' component. '\\' separates like '/'.
    """
    if not isinstance(text, str):
        raise UnsafePath(f"expected a relative path as text, found {type(text).__name__}")
    clean = text[:-1] if kind == "folder" and text.endswith(("/", "\\")) else text
    parts = tuple(clean.replace("\\", "/").split("/"))
    if (not clean.strip() or any(ord(ch) < 32 or ord(ch) == 127 for ch in text)
            or clean.startswith(("/", "\\")) or ":" in clean
            or any(p in ("", ".", "..") for p in parts)):
        raise UnsafePath(f"{text!r} must be a relative path to a {kind} inside the"
                         " folder (no '..', no absolute path, no control characters)")
    return parts


def open_inside(root: Path, parts: tuple[str, ...], *, kind: Kind = "file",
                text: str | None = None) -> int:
    """Open ``root/parts`` without following a symbolic link anywhere in ``parts``.

    Returns a descriptor (read-only; a directory's for ``kind="folder"``) the caller
    closes. ``root`` itself is the caller's choice and may be reached through links.
    Raises FileNotFoundError when a component is missing, UnsafePath when one is a
    symbolic link, the last is not of ``kind``, or a middle one is not a folder.
    """
    shown = text if text is not None else "/".join(parts)
    if not parts or any(p in ("", ".", "..") or "/" in p or "\0" in p for p in parts):
        raise UnsafePath(f"{shown!r} must be a relative path to a {kind} inside the folder"
                         " (no '..', no absolute path)")
    if not _AT_CALLS:  # no *at() calls here: check each component by lstat, then open
        return _open_by_lstat(root, parts, kind, shown)
    fd = os.open(root, os.O_RDONLY | _DIRECTORY | _CLOEXEC)
    try:
        for i, part in enumerate(parts):
            last = i == len(parts) - 1
            st = os.stat(part, dir_fd=fd, follow_symlinks=False)
            _check_mode(st.st_mode, last, kind, shown)
            directory = not last or kind == "folder"
            flags = os.O_RDONLY | _NOFOLLOW | _CLOEXEC | (_DIRECTORY if directory
                                                          else _NONBLOCK)
            try:
                nfd = os.open(part, flags, dir_fd=fd)
            except OSError as exc:  # ELOOP: it became a link after the stat
                raise UnsafePath(f"{shown!r} changed while it was opened: {exc.strerror}"
                                 ) from None
            os.close(fd)
            fd = nfd
            _check_mode(os.fstat(fd).st_mode, last, kind, shown)
        return fd
    except BaseException:
        os.close(fd)
        raise


def _open_by_lstat(root: Path, parts: tuple[str, ...], kind: Kind, shown: str) -> int:
    path = root
    for i, part in enumerate(parts):
        path = path / part
        _check_mode(os.lstat(path).st_mode, i == len(parts) - 1, kind, shown)
    fd = os.open(path, os.O_RDONLY | _NOFOLLOW | _CLOEXEC | getattr(os, "O_BINARY", 0))
    _check_mode(os.fstat(fd).st_mode, True, kind, shown)
    return fd


def _check_mode(mode: int, last: bool, kind: Kind, shown: str) -> None:
    if stat.S_ISLNK(mode):
        raise UnsafePath(f"{shown!r} is a symbolic link (or lies under one); name the"
                         f" {kind} itself")
    if not last and not stat.S_ISDIR(mode):
        raise UnsafePath(f"{shown!r} goes through something that is not a folder")
    if last and kind == "folder" and not stat.S_ISDIR(mode):
        raise UnsafePath(f"{shown!r} is not a folder")
    if last and kind == "file" and not stat.S_ISREG(mode):
        raise UnsafePath(f"{shown!r} is not a regular file")


def read_fd(fd: int, limit: int) -> bytes:
    """Read a whole regular file from ``fd`` (and close it), never more than ``limit``.

    Raises TooLarge without reading when the file says it is larger, and stops reading
    at ``limit + 1`` bytes if it grows meanwhile (a sparse or growing file costs nothing).
    """
    try:
        size = os.fstat(fd).st_size
        if size > limit:
            raise TooLarge(size, limit)
        chunks, got = [], 0
        while got <= limit:
            chunk = os.read(fd, min(1 << 20, limit + 1 - got))
            if not chunk:
                break
            chunks.append(chunk)
            got += len(chunk)
        if got > limit:
            raise TooLarge(got, limit)
        return b"".join(chunks)
    finally:
        os.close(fd)


def read_inside(root: Path, text: str, limit: int) -> bytes:
    """The bytes of the regular file ``text`` names inside ``root`` (see the module rule).

    Raises UnsafePath, TooLarge, FileNotFoundError (also for a missing folder on the way)
    or another OSError.
    """
    try:
        fd = open_inside(root, path_parts(text), text=text)
    except NotADirectoryError:
        raise FileNotFoundError(text) from None
    return read_fd(fd, limit)


def job_relative_path(job_folder: Path, text: object, field: str, *, kind: Kind = "file",
                      file: str = "", what: str = "") -> Path:
    """The file or folder a job names, checked by the one rule; JobError otherwise.

    ``job_folder`` is the folder of the job file; ``text`` is the value as written in
    the job; ``field`` names it in messages (``package.template_dir``,
    ``package.attachments[2]``), ``file`` the job file and ``what`` the thing ("previous
    package"). Returns the absolute path (the job folder resolved, then ``text``'s
    components). The JobError's one problem says what was wrong: not a relative path
    inside the job's folder, not found, a symbolic link on the way, or not a regular
    file (``kind="file"``) / a folder (``kind="folder"``).
    """
    root, parts, fd = _job_open(job_folder, text, field, kind, file, what)
    os.close(fd)
    return root.joinpath(*parts)


def read_job_file(job_folder: Path, text: object, field: str, *, limit: int,
                  file: str = "", what: str = "file") -> bytes:
    """The bytes of the regular file a job names (the rule of :func:`job_relative_path`).

    A file over ``limit`` bytes is a JobError ("the limit for one WHAT is ..."), found
    before it is read.
    """
    _, _, fd = _job_open(job_folder, text, field, "file", file, what)
    try:
        return read_fd(fd, limit)
    except TooLarge as exc:
        raise JobError(Problem(file, f"{text!r} is {exc.size} bytes; the limit for one"
                                     f" {what} is {limit} bytes", field=field)) from None
    except OSError as exc:
        raise JobError(Problem(file, f"cannot read {what} {text!r}: {exc.strerror}",
                               field=field)) from None


def _job_open(job_folder: Path, text: object, field: str, kind: Kind, file: str,
              what: str) -> tuple[Path, tuple[str, ...], int]:
    label = what or ("folder" if kind == "folder" else "file")

    def refuse(message: str) -> JobError:
        return JobError(Problem(file, message, field=field))

    try:
        parts = path_parts(text, kind=kind)
    except UnsafePath as exc:
        raise refuse(str(exc).replace("inside the folder", "inside the job's folder")
                     ) from None
    assert isinstance(text, str)
    root = job_folder.resolve()
    try:
        fd = open_inside(root, parts, kind=kind, text=text)
    except UnsafePath as exc:
        raise refuse(str(exc)) from None
    except (FileNotFoundError, NotADirectoryError):
        raise refuse(f"{label} {text!r} not found beside the job file") from None
    except OSError as exc:
        raise refuse(f"cannot open {label} {text!r}: {exc.strerror}") from None
    return root, parts, fd
