"""Independent pieces of work on a Dask cluster (``dask.distributed``).

lowenergy never schedules work itself: when asked for more than one process
it hands independent tasks to a :class:`distributed.Client` and collects the
results in submission order, so that every result is identical to the
serial one.  What is distributed:

* table builds of the coaction route (weights above 12, or every weight with
  ``method="motivic"``): the coaction matrix of each prime is one task, and
  the numerical top coefficients of the words of a weight are split into
  chunks of words (:mod:`lowenergy.zeta.motivic`);
* batches of expansions (:func:`lowenergy.expansion.batch.expand_many`):
  one task per integrand.

:func:`cluster_client` opens either a local cluster of worker *processes*
(one thread each: the work is pure Python and numpy, which the GIL would
serialize in threads) or connects to a running scheduler.  With neither it
yields ``None`` and callers run serially, in this process.

>>> with cluster_client() as client:
...     print(client)
None
>>> with cluster_client(workers=0):
...     pass
Traceback (most recent call last):
...
lowenergy.cluster.ClusterError: --workers must be at least 1, got 0
"""

from __future__ import annotations

import logging
from contextlib import contextmanager
from typing import Any, Callable, Iterator, List, Optional, Sequence

from .errors import LowEnergyError

__all__ = ["ClusterError", "cluster_client", "worker_count", "run_all", "CONNECT_TIMEOUT_S"]

#: Seconds to wait for a scheduler given with ``--scheduler``.
CONNECT_TIMEOUT_S = 10


class ClusterError(LowEnergyError):
    """The cluster cannot be used: scheduler unreachable, no workers, or
    workers running another lowenergy version."""


def _lowenergy_version() -> str:
    """The lowenergy version of this process (run on every worker to compare)."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("lowenergy")
    except PackageNotFoundError:  # pragma: no cover - a bare checkout
        return "unknown"


def _check_versions(client) -> None:
    mine = _lowenergy_version()
    theirs = client.run(_lowenergy_version)
    if not theirs:
        raise ClusterError("the Dask cluster has no workers", hint="start some with `dask worker ADDRESS`")
    other = sorted({v for v in theirs.values() if v != mine})
    if other:
        raise ClusterError(
            f"the Dask workers run lowenergy {', '.join(other)}, this process runs {mine}",
            hint="install the same lowenergy version on every worker",
        )


@contextmanager
def cluster_client(
    workers: Optional[int] = None, scheduler: Optional[str] = None, *, connect_timeout: float = CONNECT_TIMEOUT_S
) -> Iterator[Any]:
    """A :class:`distributed.Client`, or ``None`` for serial work.

    Parameters
    ----------
    workers:
        Start a local cluster of this many worker processes (one thread
        each), closed again on leaving the block.
    scheduler:
        Address of a running Dask scheduler, e.g. ``tcp://host:8786``.
    connect_timeout:
        Seconds to wait for that scheduler.

    Giving both, a worker count below 1, an unreachable scheduler, a cluster
    without workers or workers with another lowenergy version raise
    :class:`ClusterError` (a user error).
    """
    if workers is None and scheduler is None:
        yield None
        return
    if workers is not None and scheduler is not None:
        raise ClusterError("give --workers (a local cluster) or --scheduler (a running one), not both")
    if workers is not None and workers < 1:
        raise ClusterError(f"--workers must be at least 1, got {workers}")
    try:
        from distributed import Client, LocalCluster
    except ImportError:  # pragma: no cover - declared as a dependency
        raise ClusterError(
            "--workers and --scheduler need dask.distributed", hint="pip install 'dask[distributed]'"
        ) from None
    cluster = None
    if scheduler is not None:
        try:
            client = Client(scheduler, timeout=connect_timeout, set_as_default=False)
        except (OSError, TimeoutError, ValueError, TypeError) as err:
            reason = " ".join(str(err).split()) or type(err).__name__
            raise ClusterError(
                f"cannot reach the Dask scheduler at {scheduler}: {reason}",
                hint="start one with `dask scheduler` and give its address, e.g. --scheduler tcp://host:8786",
            ) from None
    else:
        cluster = LocalCluster(
            n_workers=workers,
            threads_per_worker=1,
            processes=True,
            dashboard_address=None,  # no dashboard; the scheduler's small HTTP
            scheduler_kwargs={"dashboard_address": ":0"},  # server takes any free port
            silence_logs=logging.CRITICAL,  # a failed task is reported once, by the client
        )
        client = Client(cluster, set_as_default=False)
    try:
        _check_versions(client)
        yield client
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


def worker_count(client) -> int:
    """Number of worker threads of the cluster (1 for ``None``)."""
    if client is None:
        return 1
    return max(sum(client.nthreads().values()), 1)


def run_all(client, func: Callable, items: Sequence, *args: Any, **kwargs: Any) -> List[Any]:
    """``[func(item, *args, **kwargs) for item in items]``, on the cluster if given.

    Results come back in the order of ``items``.  The first task that fails
    re-raises its exception here (a user error stays a user error), and the
    remaining tasks are cancelled.  Large arguments shared by all tasks are
    best scattered once beforehand (``client.scatter(x, broadcast=True)``).
    """
    if client is None:
        return [func(item, *args, **kwargs) for item in items]
    futures = [client.submit(func, item, *args, pure=False, **kwargs) for item in items]
    try:
        return client.gather(futures)
    finally:
        client.cancel(futures)
