"""Where the sites run: a Dask local cluster (default) or an existing Dask cluster.

The local cluster has one single-threaded worker process per core
(``LocalCluster(processes=True, threads_per_worker=1)``): a site is one task,
and its MCMC and sampling run inside that task. Worker processes are started
non-daemonic (Dask setting ``distributed.worker.daemon: False``) because PyMC
samples its chains in child processes, which a daemonic process may not have.
"""

from __future__ import annotations

import contextlib
import logging
import os

from assess.errors import InputError

#: Seconds to wait for an existing scheduler to answer.
CONNECT_TIMEOUT = 30


def default_workers() -> int:
    """One worker per core available to this process."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


@contextlib.contextmanager
def open_client(scheduler: str | None = None, workers: int | None = None):
    """Yield ``(client, description)``: a client of an existing or of a new local cluster.

    Parameters
    ----------
    scheduler : str, optional
        Address of a running Dask scheduler (``tcp://host:8786``).
    workers : int, optional
        Number of local worker processes (default: one per core); ignored
        with ``scheduler``.
    """
    import dask
    from distributed import Client, LocalCluster

    if scheduler:
        try:
            client = Client(scheduler, timeout=CONNECT_TIMEOUT)
        except (OSError, TimeoutError) as exc:
            raise InputError(f"cannot reach the Dask scheduler at {scheduler}: {exc}",
                             column="scheduler") from None
        with client:
            count = len(client.scheduler_info().get("workers", {}))
            yield client, f"Dask cluster at {scheduler} ({count} workers)"
        return
    count = workers or default_workers()
    # Kept for the cluster's whole life: a nanny reads it again when it restarts a worker.
    with dask.config.set({"distributed.worker.daemon": False}), \
            LocalCluster(n_workers=count, threads_per_worker=1, processes=True,
                         dashboard_address=None, silence_logs=logging.ERROR) as cluster, \
            Client(cluster) as client:
        yield client, f"local Dask cluster ({count} worker processes, 1 thread each)"
