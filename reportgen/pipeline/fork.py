"""Run the first half of a build (load, compute, verify, draw, HTML) in a forked child
while this process imports the PDF renderer; the layout then runs here, lean.

Why: the calc libraries (numpy, scipy, pint, matplotlib) and the drawing leave ~100 MB
in a process that WeasyPrint's layout (~3 MB a page) then adds to; in a child that exits
first they cost nothing at layout time, and WeasyPrint's import (~0.6 s) overlaps the
child's work. The child may go on sending items after its result (the figures it is
still drawing while the layout runs here): :func:`run_split_stream`.

Errors the core raises come back intact (type and fields); anything else in the child,
or a child that dies, falls back to doing the same work here.
"""

from __future__ import annotations

import os
import pickle
import select
import signal
import sys
import threading
from collections.abc import Callable, Iterable, Iterator
from typing import Any

from reportgen.errors import ReportgenError
from reportgen.pipeline.lifeline import bind_to_parent


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


class Later:
    """Items ``(key, value)`` that come after the first result; :meth:`get` waits for one.

    ``get`` returns None for a key that will not come (the sender stopped without it),
    so the caller can make that item itself.
    """

    def get(self, key: Any) -> Any | None:
        raise NotImplementedError

    def close(self) -> None:
        pass

    def kill(self) -> None:
        """Stop producing items at once (an interrupt or an error in the caller)."""
        self.close()


class _LocalLater(Later):
    """Items pulled on demand from an iterator in this process."""

    def __init__(self, items: Iterable[tuple[Any, Any]]):
        self._it: Iterator[tuple[Any, Any]] | None = iter(items)
        self._have: dict[Any, Any] = {}

    def get(self, key: Any) -> Any | None:
        while key not in self._have and self._it is not None:
            try:
                k, v = next(self._it)
            except StopIteration:
                self._it = None
                break
            self._have[k] = v
        return self._have.get(key)

    def close(self) -> None:
        if self._it is not None:
            close = getattr(self._it, "close", None)
            if close is not None:
                close()
            self._it = None


class _PipeLater(Later):
    """Frames from the child, read by a thread so the child never waits on the pipe."""

    def __init__(self, fd: int, pid: int):
        self._fd, self._pid = fd, pid
        self._cond = threading.Condition()
        self._first: tuple | None = None
        self._items: dict[Any, Any] = {}
        self._done = False
        self._thread = threading.Thread(target=self._read, name="reportgen-split",
                                        daemon=True)
        self._thread.start()

    def _read(self) -> None:
        buf = bytearray()
        exited = False
        try:
            while True:
                ready, _, _ = select.select([self._fd], [], [], 0.05)
                if ready:
                    chunk = os.read(self._fd, 1 << 20)
                    if not chunk:
                        break
                    buf += chunk
                    if not self._frames(buf):
                        break
                elif exited:
                    break
                else:
                    # Processes the child forked (its drawing workers) inherit the pipe,
                    # so EOF alone could wait on a process that is not the child.
                    try:
                        exited = os.waitpid(self._pid, os.WNOHANG)[0] != 0
                    except ChildProcessError:
                        exited = True
        except OSError:
            pass
        finally:
            with self._cond:
                self._done = True
                self._cond.notify_all()

    def _frames(self, buf: bytearray) -> bool:
        """Take the complete frames off ``buf``; False once the end frame has come."""
        while len(buf) >= 8:
            need = int.from_bytes(buf[:8], "big")
            if len(buf) < need + 8:
                return True
            data = bytes(buf[8:need + 8])
            del buf[:need + 8]
            try:
                frame = pickle.loads(data)
            except Exception:
                frame = ("retry",) if self._first is None else ("end",)
            with self._cond:
                if self._first is None:
                    self._first = frame
                elif frame[0] == "item":
                    self._items[frame[1]] = frame[2]
                self._cond.notify_all()
            if frame[0] == "end":
                return False
        return True

    def first(self) -> tuple:
        with self._cond:
            while self._first is None and not self._done:
                self._cond.wait()
            return self._first or ("retry",)

    def get(self, key: Any) -> Any | None:
        with self._cond:
            while key not in self._items and not self._done:
                self._cond.wait()
            return self._items.get(key)

    def kill(self) -> None:
        """Stop the child now (it ignores Ctrl-C; its own workers die with it)."""
        try:
            os.kill(self._pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
        self.close()

    def close(self) -> None:
        self._thread.join()
        try:
            os.close(self._fd)
        except OSError:
            pass
        try:
            os.waitpid(self._pid, 0)
        except ChildProcessError:
            pass  # already reaped by the reader


def _send(fh, message: tuple) -> None:
    try:
        data = pickle.dumps(message, protocol=pickle.HIGHEST_PROTOCOL)
    except Exception:
        data = pickle.dumps(("retry",) if message[0] != "item" else ("skip",))
    fh.write(len(data).to_bytes(8, "big") + data)
    fh.flush()


def run_split_stream(work: Callable[[], tuple[Any, Iterable[tuple[Any, Any]]]],
                     meanwhile: Callable[[], None]) -> tuple[Any, Later]:
    """``work()`` returns (result, items): run it in a forked child, ``meanwhile()`` here.

    Returns the result as soon as the child has it, and a :class:`Later` through which
    the items arrive while the child goes on producing them. Call its ``close()``.
    """
    parent = os.getpid()
    read_fd, write_fd = os.pipe()
    pid = os.fork()
    if pid == 0:  # the child: compute, send, leave without running the parent's cleanups
        code = 0
        items: Iterable[tuple[Any, Any]] | None = None
        try:
            bind_to_parent(parent)  # dies with the command; Ctrl-C is the command's
            os.close(read_fd)
            with os.fdopen(write_fd, "wb") as fh:
                try:
                    first, items = work()
                    message: tuple = ("ok", first)
                except ReportgenError as exc:
                    message = _encode_error(exc)
                except BaseException:  # a bug or an interrupt: the parent redoes or stops
                    message = ("retry",)
                _send(fh, message)  # a parent that has gone raises here: stop
                if items is not None:
                    try:
                        for key, value in items:
                            _send(fh, ("item", key, value))
                    except BrokenPipeError:
                        raise
                    except Exception:
                        pass  # the parent makes whatever did not come itself
                _send(fh, ("end",))
        except BaseException:
            code = 1
        finally:
            try:  # whatever happened, stop the workers the work started
                close = getattr(items, "close", None)
                if close is not None:
                    close()
            finally:
                os._exit(code)
    os.close(write_fd)
    later = _PipeLater(read_fd, pid)
    try:
        meanwhile()
        reply = later.first()
    except BaseException:
        later.kill()
        raise
    if reply[0] == "ok":
        return reply[1], later
    later.close()
    if reply[0] == "error":
        raise _decode_error(reply[1], reply[2], reply[3])
    first, items = work()  # same work here: its exception, if any, surfaces as usual
    return first, _LocalLater(items)


def local_later(items: Iterable[tuple[Any, Any]]) -> Later:
    """A :class:`Later` over items made in this process, pulled as they are asked for."""
    return _LocalLater(items)
