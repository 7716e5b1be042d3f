"""MZV tables built on first use, and single zetas without any table.

Sources: Abramowitz & Stegun 23.2.16 (ζ(2n) through Bernoulli numbers) and
23.2 table values of B_2n; numbers from mpmath and tests/reference.py.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest

from lowenergy.errors import TableError
from lowenergy.zeta.element import zeta
from lowenergy.zeta.table import MAX_WEIGHT, TableStore, build_progress, default_store, single_zeta

from ..reference import reference_mzv


# ζ(2n)/π^(2n) for n = 1..4: 1/6, 1/90, 1/945, 1/9450 (A&S 23.2.16 with the
# Bernoulli numbers of A&S table 23.2; the first two from memory as well)
ZETA_EVEN_OVER_PI = {2: Fraction(1, 6), 4: Fraction(1, 90), 6: Fraction(1, 945), 8: Fraction(1, 9450)}


@pytest.mark.parametrize("n, ratio", sorted(ZETA_EVEN_OVER_PI.items()))
def test_even_zeta_is_a_rational_power_of_pi(n, ratio):
    # π^2 = 6 ζ(2), so ζ(2k) = ratio · 6^k ζ(2)^k
    k = n // 2
    assert single_zeta(n) == {((2,),) * k: ratio * 6**k}


@pytest.mark.parametrize("n", range(2, 31))
def test_single_zeta_numerically(n):
    store = TableStore("/nonexistent/lowenergy-never-created", auto_build=False)
    value = zeta(n, store=store)
    with mpmath.workdps(40):
        assert abs(value.numeric(35) - mpmath.zeta(n)) < mpmath.mpf(10) ** -33


@pytest.mark.parametrize("w", range(2, 13))
def test_single_zeta_agrees_with_the_double_shuffle_tables(w):
    # the session tables to weight 12 come from the double-shuffle linear algebra,
    # which knows nothing of Bernoulli numbers
    store = default_store()
    store._load(w)
    assert store._reductions[w][(w,)] == single_zeta(w)


def test_single_zetas_need_no_table(tmp_path):
    store = TableStore(tmp_path / "cache", auto_build=False)
    assert zeta(3, store=store) * 2 == zeta(3, store=store) + zeta(3, store=store)
    assert zeta(17, store=store).f_alphabet(store) == {(0, (17,)): 1}
    assert zeta(6, store=store).f_alphabet(store) == {(3, ()): Fraction(8, 35)}  # ζ(6) = 8/35 ζ(2)^3
    assert not (tmp_path / "cache").exists()


def test_tables_are_built_on_first_use(tmp_path):
    store = TableStore(tmp_path / "cache")
    events = []
    with build_progress(lambda w, target, msg: events.append((w, target, msg))):
        value = zeta(5, 3, store=store)
    assert events[0] == (2, 8, "start") and events[-1] == (8, 8, "finished")
    assert [w for w, _, msg in events if msg == "done"] == list(range(2, 9))
    assert store.built_weight() == 8 and store.path(8).exists()
    # ζ(5,3) from an mpmath nested sum (tests/reference.py)
    with mpmath.workdps(40):
        assert abs(value.numeric(30) - reference_mzv((5, 3), 40)) < mpmath.mpf(10) ** -28
    # second use: nothing to build
    events.clear()
    with build_progress(lambda w, target, msg: events.append(msg)):
        assert zeta(3, 5, store=TableStore(tmp_path / "cache")) - zeta(3, 5, store=store) == 0
    assert events == []


def test_on_demand_builds_are_logged(tmp_path, caplog):
    import logging

    with caplog.at_level(logging.INFO, logger="lowenergy.tables"):
        zeta(3, 2, store=TableStore(tmp_path))
    assert "building MZV tables of weights 2-5" in caplog.text


def test_beyond_the_limit_is_refused_before_building(tmp_path):
    store = TableStore(tmp_path / "cache")
    with pytest.raises(TableError, match=f"up to weight {MAX_WEIGHT} only"):
        store.ensure(MAX_WEIGHT + 1)
    assert not (tmp_path / "cache").exists()


@pytest.mark.parametrize("kind", ["file", "unwritable"])
def test_unusable_cache_directory(tmp_path, kind):
    import os

    if kind == "file":
        where = tmp_path / "cache"
        where.write_text("not a directory")
        store = TableStore(where / "mzv")
    else:
        if os.geteuid() == 0:
            pytest.skip("root can write anywhere")
        locked = tmp_path / "locked"
        locked.mkdir()
        locked.chmod(0o500)
        store = TableStore(locked / "mzv")
    with pytest.raises(TableError, match="cannot write MZV tables to the cache directory") as err:
        zeta(5, 3, store=store)
    assert "LOWENERGY_CACHE_DIR" in str(err.value)
