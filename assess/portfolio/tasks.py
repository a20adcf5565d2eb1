"""The task that runs one site: on a Dask worker, or in this process.

`site_task` takes the site folder and plain settings and returns plain data:
the site's summary numbers, or the reason it failed. It never raises for a
site's own failure, so one broken site cannot stop the others. While it runs it
reports each step of the main job: on a Dask worker as a worker event on the
topic `STEP_TOPIC` (the client subscribes to it), in this process through the
``step`` callback.
"""

from __future__ import annotations

import contextlib
import os
import socket
import time
import traceback
import warnings
from collections.abc import Callable, Iterator

from assess.errors import AnalysisError, InputError

#: Topic of the worker events that carry the per-site step.
STEP_TOPIC = "assess-portfolio-step"

#: Library notes that say nothing about the structure (as the CLI drops them).
QUIET_WARNINGS = ("could not link to a BLAS",)

#: Lines of traceback kept for an unexpected error.
TRACEBACK_LINES = 12

#: Environment of a site task on a Dask worker: one task per core, so the MCMC chains run one
#: after another in the worker (`assess.updating.models.CORES_VARIABLE`; the draws are the same)
#: and every BLAS / OpenMP pool has one thread (a child process inherits these too).
WORKER_ENVIRONMENT = {"ASSESS_MCMC_CORES": "1", "OMP_NUM_THREADS": "1", "MKL_NUM_THREADS": "1",
                      "OPENBLAS_NUM_THREADS": "1"}


@contextlib.contextmanager
def one_core_per_task() -> Iterator[None]:
    """Limit a task on a Dask worker to one core: `WORKER_ENVIRONMENT` and one BLAS thread.

    Values already set in the worker's environment are kept (a user who starts workers with
    ``ASSESS_MCMC_CORES=2`` gets two chain processes). The thread pools of the BLAS and
    OpenMP libraries already loaded are set to one thread for the task (threadpoolctl) and
    restored after it: Dask's nanny sets the same variables before it starts a worker, but
    a worker started without a nanny, or a library that read its thread count before, would
    otherwise run as many threads as cores in every worker at once.
    """
    from threadpoolctl import threadpool_limits

    for name, value in WORKER_ENVIRONMENT.items():
        os.environ.setdefault(name, value)
    with threadpool_limits(limits=1):
        yield


def _worker_step(key: str) -> Callable[[str], None] | None:
    """A step reporter that sends worker events, or None outside a Dask worker."""
    try:
        from distributed import get_worker

        worker = get_worker()
    except (ImportError, ValueError):
        return None

    def step(text: str) -> None:
        worker.log_event(STEP_TOPIC, {"site": key, "step": str(text)})

    return step


def site_task(key: str, folder: str, settings: dict, job: Callable | None = None,
              step: Callable[[str], None] | None = None) -> dict:
    """Run ``job(folder, settings, step=...)`` and return its outcome as plain data.

    Parameters
    ----------
    key : str
        The site's key in the portfolio (its folder name).
    folder : str
        The site folder, as the worker sees it.
    settings : dict
        Main-job settings (`assess.portfolio.site_job.SETTING_KEYS`).
    job : callable, optional
        ``job(folder, settings, step=callable) -> dict``; default
        `assess.portfolio.site_job.run_one_site`.
    step : callable, optional
        Called with the text of each step (default: worker events on a Dask
        worker, nothing elsewhere).

    Returns
    -------
    dict
        ``status`` ("done" or "failed"), ``summary`` (the job's dict, done
        only), ``error_kind`` ("input", "analysis" or "error") and ``message``
        (failed only), ``warnings`` (distinct warning texts), ``seconds`` [s],
        ``cpu_seconds`` (CPU time of this process during the task, all its threads,
        not its child processes) [s], ``steps`` ([step text, seconds] in order),
        ``worker`` ("host:pid").
    """
    if job is None:
        from assess.portfolio.site_job import run_one_site as job
    on_worker = _worker_step(key)
    report = step or on_worker or (lambda _text: None)
    # inside a Dask worker, one task per core (see one_core_per_task); in this process the
    # job runs as `assess run` would, its chains in parallel processes
    limits = one_core_per_task() if on_worker is not None else contextlib.nullcontext()
    started = time.perf_counter()
    cpu_started = time.process_time()
    marks: list = []

    def step(text: str) -> None:
        marks.append((str(text), time.perf_counter()))
        report(text)

    outcome: dict = {"status": "failed"}
    with limits, warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            outcome = {"status": "done", "summary": job(folder, settings, step=step)}
        except InputError as exc:
            outcome = {"status": "failed", "error_kind": "input", "message": str(exc)}
        except AnalysisError as exc:
            outcome = {"status": "failed", "error_kind": "analysis", "message": str(exc)}
        except Exception as exc:  # noqa: BLE001 - reported with its reason, the others go on
            lines = traceback.format_exception(type(exc), exc, exc.__traceback__)
            outcome = {"status": "failed", "error_kind": "error",
                       "message": f"{type(exc).__name__}: {exc}",
                       "traceback": "".join(lines[-TRACEBACK_LINES:])}
    ended = time.perf_counter()
    cpu_seconds = time.process_time() - cpu_started
    texts = []
    for item in caught:
        text = str(item.message)
        if (text not in texts and not issubclass(item.category, (DeprecationWarning, FutureWarning))
                and not any(part in text for part in QUIET_WARNINGS)):
            texts.append(text)
    outcome["warnings"] = texts
    outcome["seconds"] = ended - started
    outcome["cpu_seconds"] = cpu_seconds
    outcome["steps"] = [[text, (marks[i + 1][1] if i + 1 < len(marks) else ended) - at]
                        for i, (text, at) in enumerate(marks)]
    outcome["worker"] = f"{socket.gethostname()}:{os.getpid()}"
    return outcome
