"""Shared fixtures (at the repository root so that the doctests in lowenergy/ get them too).

The MZV tables are built once per test session into a temporary cache
directory (weights <= 12 by double shuffle, 13-14 by the coaction route; about
15 s), so tests never touch the user's cache and always run against tables
built by the code under test.
"""

from __future__ import annotations

import os

import mpmath
import pytest

TEST_TABLE_WEIGHT = 14


@pytest.fixture(scope="session", autouse=True)
def mzv_tables(tmp_path_factory):
    from lowenergy.zeta.table import build_tables, default_store

    path = tmp_path_factory.mktemp("lowenergy-cache")
    os.environ["LOWENERGY_CACHE_DIR"] = str(path)
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
