"""Private: run independent tasks in-process, in local processes or on a dask cluster.

Every task carries everything it needs (its inputs and, for random work, its own seed), so
the numbers do not depend on where or in which order the tasks run. Results are yielded
as ``(task index, result)`` in the order they finish; callers that need them in order
put them back by index.
"""

from __future__ import annotations

import multiprocessing
import os
import sys
from collections.abc import Callable, Iterator, Sequence
from typing import Any

from habit.errors import InputError, MissingDependencyError

__all__ = ["run_tasks", "choose_mode", "INLINE_SECONDS"]

#: Work estimated below this many seconds runs in-process (a worker pool costs more).
INLINE_SECONDS = 2.0


def choose_mode(scheduler: str | None, estimate_s: float, workers: int | None) -> str:
    """Decide where to run: 'inline', 'processes', 'dask' or 'address'.

    Parameters
    ----------
    scheduler : str or None
        None or 'auto' (in-process for small work, else local processes), 'inline',
        'processes', 'dask' (a local dask cluster), or the address of a running dask
        scheduler ('tcp://host:8786' or 'host:8786').
    estimate_s : float
        Estimated single-core time of the whole job, seconds.
    workers : int or None
        Number of local workers (default: the number of CPUs).
    """
    if scheduler in (None, "auto"):
        if estimate_s < INLINE_SECONDS or (workers or os.cpu_count() or 1) <= 1:
            return "inline"
        return "processes"
    if scheduler in ("inline", "processes", "dask"):
        return scheduler
    if "://" in scheduler or ":" in scheduler:
        return "address"
    raise InputError(
        f"unknown scheduler {scheduler!r}; use 'auto', 'inline', 'processes', 'dask' or the "
        "address of a dask scheduler such as tcp://127.0.0.1:8786."
    )


def _mp_context() -> Any:
    if sys.platform.startswith("linux") and sys.version_info < (3, 12):
        return multiprocessing.get_context("fork")
    return multiprocessing.get_context("forkserver" if sys.platform != "win32" else "spawn")


def _dask() -> Any:
    try:
        import dask.distributed as dd
    except ImportError:
        raise MissingDependencyError(
            "this needs dask.distributed; install the extra with: pip install 'habit[scale]'."
        ) from None
    return dd


def run_tasks(
    func: Callable[[Any], Any],
    tasks: Sequence[Any],
    *,
    mode: str,
    workers: int | None = None,
    scheduler: str | None = None,
) -> Iterator[tuple[int, Any]]:
    """Run ``func(task)`` for every task; yield ``(index, result)`` as each one finishes.

    ``func`` must be a module-level function and the tasks picklable (except inline).
    """
    if mode == "inline" or len(tasks) == 0:
        for i, task in enumerate(tasks):
            yield i, func(task)
        return
    n_workers = max(1, int(workers or os.cpu_count() or 1))
    if mode == "processes":
        from concurrent.futures import ProcessPoolExecutor, as_completed

        with ProcessPoolExecutor(max_workers=n_workers, mp_context=_mp_context()) as pool:
            futures = {pool.submit(func, task): i for i, task in enumerate(tasks)}
            try:
                for fut in as_completed(futures):
                    yield futures[fut], fut.result()
            except BaseException:
                for fut in futures:
                    fut.cancel()
                raise
        return
    dd = _dask()
    cluster = None
    if mode == "dask":
        cluster = dd.LocalCluster(
            n_workers=n_workers, threads_per_worker=1, processes=True, dashboard_address=None
        )
        client = dd.Client(cluster)
    else:
        if not scheduler:
            raise InputError("a dask scheduler address is needed, e.g. tcp://127.0.0.1:8786.")
        try:
            client = dd.Client(scheduler, timeout="10s")
        except OSError as exc:
            raise InputError(f"cannot reach the dask scheduler at {scheduler}: {exc}.") from None
    try:
        futures = client.map(func, list(tasks), pure=False)
        index = {fut.key: i for i, fut in enumerate(futures)}
        for fut in dd.as_completed(futures):
            yield index[fut.key], fut.result()
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
