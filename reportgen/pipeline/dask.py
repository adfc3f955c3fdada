"""Run a calc set's per-package work on a Dask distributed cluster (``--executor dask``).

With ``--scheduler ADDRESS`` the work goes to that cluster; without one, a LocalCluster
of ``--jobs`` worker processes is started here and closed afterwards. Needs the optional
extra ``reportgen[dask]``; outcomes, failures and progress are reported as for local
workers (one outcome dict per item, in item order, ``on_done`` as each one finishes).
"""

from __future__ import annotations

import uuid
from collections.abc import Callable
from typing import Any

from reportgen.errors import ExitCode, JobError


def require_dask():
    """The ``dask.distributed`` module, or exit 2 with the install hint."""
    try:
        import dask.distributed
    except ImportError:  # not installed, or installed without its distributed part
        raise JobError("--executor dask needs dask.distributed: pip install 'reportgen[dask]'"
                       ) from None
    return dask.distributed


def _client(scheduler: str | None, workers: int):
    dd = require_dask()
    Client, LocalCluster = dd.Client, dd.LocalCluster
    if scheduler:
        try:
            return Client(scheduler, timeout="20s"), None
        except (OSError, TimeoutError) as exc:
            raise JobError(f"cannot reach the Dask scheduler at {scheduler}: {exc}") from None
    # One thread a worker: a package build is CPU-bound Python, so threads would only
    # queue on the interpreter lock; processes give real parallelism.
    # The workers end with this process even when it is killed, and leave Ctrl-C to it
    # (reportgen.pipeline.lifeline): forked from a forkserver that preloads the lifeline, each is
    # bound from its first instant; the preload binds it to this process once it runs.
    import os

    import dask
    from distributed.utils import get_mp_context

    from reportgen.pipeline.lifeline import PARENT_ENV

    before = os.environ.get(PARENT_ENV)
    os.environ[PARENT_ENV] = str(os.getpid())  # for the forkserver started below
    try:
        with dask.config.set({"distributed.worker.multiprocessing-method": "forkserver"}):
            get_mp_context().set_forkserver_preload(
                ["reportgen.pipeline.lifeline", "distributed", "reportgen.pipeline.sets",
                 "reportgen.package.verify"])
            cluster = LocalCluster(n_workers=max(1, workers), threads_per_worker=1,
                                   processes=True, dashboard_address=None,
                                   preload=["reportgen.pipeline.lifeline"])
    finally:
        if before is None:
            os.environ.pop(PARENT_ENV, None)
        else:
            os.environ[PARENT_ENV] = before
    return Client(cluster), cluster


def _failure(item: tuple, exc: BaseException) -> dict[str, Any]:
    # The per-package function never raises; this is a worker that died or was lost.
    return {"job": str(item[0]) if item else "?", "ok": False,
            "exit_code": int(ExitCode.FAILURE),
            "error": f"the Dask worker failed: {type(exc).__name__}: {exc}"}


def run_on_dask(func: Callable[..., dict[str, Any]], items: list[tuple], *,
                scheduler: str | None = None, on_done: Callable[[dict[str, Any]], None] | None
                = None, workers: int = 1) -> list[dict[str, Any]]:
    """Run ``func(*item)`` for each item on Dask; return outcomes in item order."""
    as_completed = require_dask().as_completed
    client, cluster = _client(scheduler, workers)
    outcomes: dict[int, dict[str, Any]] = {}
    try:
        # pure=False: two identical items are still two builds (and two outcomes).
        run = uuid.uuid4().hex[:12]  # keys unique on a scheduler other clients share
        futures = {client.submit(func, *item, pure=False, key=f"reportgen-{run}-{i}"): i
                   for i, item in enumerate(items)}
        for fut in as_completed(futures):
            i = futures[fut]
            try:
                outcomes[i] = fut.result()
            except Exception as exc:  # noqa: BLE001 - reported as that package's failure
                outcomes[i] = _failure(items[i], exc)
            if on_done:
                on_done(outcomes[i])
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    return [outcomes[i] for i in range(len(items))]
