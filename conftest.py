"""Shared fixtures (at the repository root so that the doctests in lowenergy/ get them too).

The MZV tables are built once per test session into a temporary cache
directory, set before collection and removed at the end (weights <= 12 by
double shuffle, 13-14 by the coaction route; about 15 s), so tests never touch
the user's cache and always run against tables built by the code under test.
"""

from __future__ import annotations

import os

import mpmath
import pytest

TEST_TABLE_WEIGHT = 14


_SESSION_CACHE = []


def pytest_configure(config):
    """Point LOWENERGY_CACHE_DIR at a temporary directory *before collection*:
    test modules that compute MZVs at import time (parametrize lists) would
    otherwise build tables on demand in the user's own cache."""
    import tempfile

    path = tempfile.mkdtemp(prefix="lowenergy-test-cache-")
    _SESSION_CACHE.append(path)
    # kept for the slow checks of high-weight tables the user has built
    # (tests/zeta/test_high_weight.py); nothing else reads it
    if "LOWENERGY_CACHE_DIR" in os.environ and "LOWENERGY_USER_CACHE_DIR" not in os.environ:
        os.environ["LOWENERGY_USER_CACHE_DIR"] = os.environ["LOWENERGY_CACHE_DIR"]
    os.environ["LOWENERGY_CACHE_DIR"] = path


def pytest_unconfigure(config):
    import shutil

    while _SESSION_CACHE:
        shutil.rmtree(_SESSION_CACHE.pop(), ignore_errors=True)


@pytest.fixture(scope="session", autouse=True)
def mzv_tables():
    from lowenergy.zeta.table import build_tables, default_store

    assert os.environ["LOWENERGY_CACHE_DIR"] == _SESSION_CACHE[0]
    store = build_tables(TEST_TABLE_WEIGHT)
    assert store is default_store()
    # A test that needs a weight above 14 gets a TableError rather than a
    # silent on-demand build of several minutes; tests of on-demand builds
    # use stores of their own (tests/zeta/test_table_on_demand.py).
    store.auto_build = False
    yield store


@pytest.fixture(autouse=True)
def _reset_mpmath_precision():
    """No test may leak a changed global precision (house rule)."""
    dps = mpmath.mp.dps
    yield
    assert mpmath.mp.dps == dps, "a test or the package changed mpmath's global precision"
    mpmath.mp.dps = dps
