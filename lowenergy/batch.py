"""Batches of expansions, serially or on a Dask cluster.

:func:`expand_many` expands several integrands to one order; with a
``distributed.Client`` (see :func:`lowenergy.cluster.cluster_client`) each
integrand is one task.  A worker computes with its *own* MZV tables: the
cache directory of its process (``LOWENERGY_CACHE_DIR`` where the worker was
started, else the user's cache), built there on first use.  Worker processes
of a local cluster inherit this process's environment, hence its tables,
which are built here before any task starts.  It sits on top of the layers
(it dispatches sphere integrands to :mod:`lowenergy.svpolylog`), beside the
command line.

>>> from lowenergy.integrand.reader import integrand_from_text
>>> beta = integrand_from_text('integrand = "x^(-s-1)*(1-x)^(-t)"', source="<beta>")
>>> [e.coefficient(-1, 0) for e in expand_many([beta, beta], order=1)]   # -1/s, A&S 6.1.33
[MZV('-1'), MZV('-1')]
"""

from __future__ import annotations

from typing import List, Sequence

__all__ = ["expand_many", "expand_one"]


def expand_one(integrand, order: int):
    """The expansion of one integrand (interval or sphere) with this process's tables."""
    if getattr(integrand, "domain", "interval") == "sphere":
        from .svpolylog.sphere import expand_sphere

        return expand_sphere(integrand, order)
    from .expansion.engine import expand

    return expand(integrand, order)


def expand_many(integrands: Sequence, order: int, *, client=None) -> List:
    """``[expand_one(i, order) for i in integrands]``, one task per integrand
    on ``client`` when given (results in the same order, identical to the
    serial ones).  The first failing integrand raises its error."""
    from .cluster import run_all
    from .expansion.engine import check_order
    from .zeta.table import default_store

    interval = [i for i in integrands if getattr(i, "domain", "interval") != "sphere"]
    if interval:
        # refuse an order beyond the buildable tables before any work, and
        # build what is missing once here rather than on every worker
        default_store().ensure(max(check_order(i, order) for i in interval))
    return run_all(client, expand_one, list(integrands), order)
