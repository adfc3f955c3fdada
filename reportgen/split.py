"""Run the first half of a build (load, compute, verify, draw, HTML) in a forked child
while this process imports the PDF renderer; the layout then runs here, lean.

Why: the calc libraries (numpy, scipy, pint, matplotlib) and the drawing leave ~100 MB
in a process that WeasyPrint's layout (~3 MB a page) then adds to; in a child that exits
first they cost nothing at layout time, and WeasyPrint's import (~0.6 s) overlaps the
child's work. Errors the core raises come back intact (type and fields); anything else
in the child, or a child that dies, falls back to doing the same work here.
"""

from __future__ import annotations

import os
import pickle
import sys
from collections.abc import Callable
from typing import Any

from .errors import ReportgenError


def can_split() -> bool:
    # Only worth it (and only lean) while the renderer is not loaded in this process yet.
    return hasattr(os, "fork") and "weasyprint" not in sys.modules


def _encode_error(exc: ReportgenError) -> tuple:
    return ("error", type(exc), exc.args, dict(getattr(exc, "__dict__", {})))


def _decode_error(cls: type[ReportgenError], args: tuple, state: dict) -> ReportgenError:
    exc = cls.__new__(cls)
    Exception.__init__(exc, *args)
    exc.__dict__.update(state)
    return exc


def run_split(work: Callable[[], Any], meanwhile: Callable[[], None]) -> Any:
    """Return ``work()`` computed in a forked child; run ``meanwhile()`` here meanwhile."""
    read_fd, write_fd = os.pipe()
    pid = os.fork()
    if pid == 0:  # the child: compute, send, leave without running the parent's cleanups
        os.close(read_fd)
        code = 0
        try:
            try:
                message: tuple = ("ok", work())
            except ReportgenError as exc:
                message = _encode_error(exc)
            except BaseException:  # a bug or an interrupt: the parent redoes or stops
                message = ("retry",)
            try:
                data = pickle.dumps(message, protocol=pickle.HIGHEST_PROTOCOL)
            except Exception:
                data = pickle.dumps(("retry",))
            with os.fdopen(write_fd, "wb") as fh:
                fh.write(len(data).to_bytes(8, "big") + data)
        except BaseException:
            code = 1
        finally:
            os._exit(code)
    os.close(write_fd)
    try:
        meanwhile()
        data = _receive(read_fd, pid)
    finally:
        os.close(read_fd)
        try:
            os.waitpid(pid, 0)
        except ChildProcessError:
            pass  # already reaped while reading
    try:
        reply: tuple[Any, ...] = pickle.loads(data) if data else ("retry",)
    except Exception:
        reply = ("retry",)
    if reply[0] == "ok":
        return reply[1]
    if reply[0] == "error":
        raise _decode_error(reply[1], reply[2], reply[3])
    return work()  # same work here: its exception, if any, surfaces as usual


def _receive(fd: int, pid: int) -> bytes:
    """Read one length-prefixed message; stop when the child has gone, not at EOF.

    Processes the child forked (its drawing workers) inherit the pipe, so EOF alone
    could wait on a process that is not the child.
    """
    import select

    buf = bytearray()
    need: int | None = None
    exited = False
    while need is None or len(buf) < need + 8:
        ready, _, _ = select.select([fd], [], [], 0.05)
        if ready:
            chunk = os.read(fd, 1 << 20)
            if not chunk:
                break
            buf += chunk
        elif exited:
            break
        else:
            exited = os.waitpid(pid, os.WNOHANG)[0] != 0
            if exited:
                continue  # read whatever it wrote before leaving, then stop
        if need is None and len(buf) >= 8:
            need = int.from_bytes(buf[:8], "big")
    if need is None or len(buf) < need + 8:
        return b""
    return bytes(buf[8:need + 8])
