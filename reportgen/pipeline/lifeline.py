"""Helper processes die with the command that started them and leave Ctrl-C to it; the
command itself leaves without the interpreter's teardown (:func:`leave_now`).

Every child the core starts (the split child, drawing workers, set workers) calls
:func:`bind_to_parent` first thing; pools pass :func:`pool_initializer` to do that.
"""

from __future__ import annotations

import contextlib
import os
import signal
import sys
import threading
import time

PR_SET_PDEATHSIG = 1
#: how often the portable watcher looks for its parent (s); a kill is noticed within this
WATCH_INTERVAL = 0.25


def _set_death_signal() -> bool:
    """Ask Linux to SIGKILL this process when its parent dies; False where it cannot."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        return libc.prctl(PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0) == 0
    except (OSError, AttributeError):
        return False


def _watch(parent: int) -> None:
    while True:
        time.sleep(WATCH_INTERVAL)
        if os.getppid() != parent:  # re-parented: the command is gone
            os._exit(1)


def _ignore_sigint() -> None:
    try:
        signal.signal(signal.SIGINT, signal.SIG_IGN)
    except ValueError:
        return  # not the main thread (a Dask preload): the nanny's start-up did it
    if hasattr(signal, "pthread_sigmask"):
        # one held back while this child started (children_start_deaf) is dropped now
        signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGINT})


@contextlib.contextmanager
def children_start_deaf():
    """Hold SIGINT back in this thread while it starts children.

    They inherit the mask across fork and exec, so a Ctrl-C during their start-up waits
    in them until :func:`bind_to_parent` ignores it (a spawned child runs seconds of
    imports before that); this process gets its own copy when the block ends.
    """
    if not hasattr(signal, "pthread_sigmask"):
        yield
        return
    old = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)


def bind_to_parent(parent: int) -> None:
    """Make this child end when process ``parent`` ends, and ignore SIGINT.

    Ctrl-C reaches the whole process group; the command decides what it means (stop,
    then stop its helpers), so a helper neither dies half-way through a message to it
    nor prints a traceback. Where the kernel cannot send a death signal, a daemon
    thread polls for the parent instead.
    """
    _ignore_sigint()
    if not _set_death_signal():
        threading.Thread(target=_watch, args=(parent,), name="reportgen-lifeline",
                         daemon=True).start()
    if os.getppid() != parent:  # the parent died before the death signal was armed
        os._exit(1)


_forking: list[int] = []


def _before_fork() -> None:
    _forking.append(os.getpid())


def _after_fork_in_child() -> None:
    parent = _forking.pop() if _forking else None
    if parent is not None:
        _ignore_sigint()
        if _set_death_signal() and os.getppid() != parent:
            os._exit(1)


def _after_fork_in_parent() -> None:
    if _forking:
        _forking.pop()


#: the command's pid, for a forkserver it starts (see _bind_forkserver)
PARENT_ENV = "REPORTGEN_LIFELINE_PARENT"


def _bind_forkserver() -> None:
    """In a multiprocessing forkserver the command started (it preloads this module
    first): bind it to the command. Its fork children are bound to it in turn (below),
    so Dask's workers are bound from their first instant, even while they start."""
    parent = os.environ.get(PARENT_ENV, "")
    if (parent.isdigit() and "multiprocessing.forkserver" in sys.modules
            and sys.argv[:1] == ["-c"]):
        bind_to_parent(int(parent))
        install_fork_hook()


_installed: list[bool] = []


def install_fork_hook() -> None:
    """From now on, bind every fork child of this process at once, before any of its
    own code runs: the death signal then covers the moments before bind_to_parent too,
    and children of a forkserver (Dask's LocalCluster workers) die with the forkserver,
    which ends with the command. The command installs it; importing reportgen as a
    library does not."""
    if _installed or not hasattr(os, "register_at_fork"):
        return
    _installed.append(True)
    os.register_at_fork(before=_before_fork, after_in_parent=_after_fork_in_parent,
                        after_in_child=_after_fork_in_child)


def pool_initializer(parent: int, then=None) -> None:
    """A ProcessPoolExecutor ``initializer``: bind the worker, then run ``then()``."""
    bind_to_parent(parent)
    if then is not None:
        then()


_bind_forkserver()


def dask_setup(worker) -> None:
    """Dask's preload hook, run in each worker of a LocalCluster the command starts:
    the worker process is the command's child (its nanny lives in the command)."""
    bind_to_parent(os.getppid())


def leave_now(code: int) -> None:
    """Flush what was printed (a pipe is block-buffered) and end the process at once,
    skipping the interpreter's teardown: freeing a laid-out document is one cyclic
    collection over millions of objects (~0.7 s for 78 pages)."""
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):
            pass
    os._exit(code)
