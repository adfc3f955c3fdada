"""Helper processes die with the command that started them and leave Ctrl-C to it.

Every child the core starts (the split child, drawing workers, set workers) calls
:func:`bind_to_parent` first thing; pools pass :func:`pool_initializer` to do that.
"""

from __future__ import annotations

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


def bind_to_parent(parent: int) -> None:
    """Make this child end when process ``parent`` ends, and ignore SIGINT.

    Ctrl-C reaches the whole process group; the command decides what it means (stop,
    then stop its helpers), so a helper neither dies half-way through a message to it
    nor prints a traceback. Where the kernel cannot send a death signal, a daemon
    thread polls for the parent instead.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    if not _set_death_signal():
        threading.Thread(target=_watch, args=(parent,), name="reportgen-lifeline",
                         daemon=True).start()
    if os.getppid() != parent:  # the parent died before the death signal was armed
        os._exit(1)


def pool_initializer(parent: int, then=None) -> None:
    """A ProcessPoolExecutor ``initializer``: bind the worker, then run ``then()``."""
    bind_to_parent(parent)
    if then is not None:
        then()
