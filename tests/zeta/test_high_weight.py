"""Tables of weight 19 and 20 against direct summation (slow; needs built tables).

Building these weights takes tens of minutes (see README, "Limits"), so the
tests use the tables of the cache the user points ``LOWENERGY_CACHE_DIR`` at
when running pytest (the test session itself runs on a temporary cache of
its own; conftest.py keeps the user's setting) and skip, saying why, when
that cache does not hold the weight:

    LOWENERGY_CACHE_DIR=~/.cache/lowenergy-w20 .venv/bin/lowenergy tables build --weight 20
    LOWENERGY_CACHE_DIR=~/.cache/lowenergy-w20 .venv/bin/python -m pytest -m slow tests/zeta/test_high_weight.py

Independent values, in our convention ζ(n1, ..., nk) = Σ_{m1 > ... > mk ≥ 1}
m1^-n1 ... mk^-nk (first index on the largest summation variable):

* depth 2: ζ(a, b) = Σ_{n≥1} n^-b ζ_H(a, n + 1), with the Hurwitz zeta
  ζ_H(s, q) = Σ_{m≥0} (m + q)^-s (DLMF 25.11.1), the inner sum over m1 > n;
* depth 3: ζ(a, b, c) = Σ_{n≥1} n^-c Σ_{m>n} m^-b ζ_H(a, m + 1);

summed with mpmath ``nsum`` (Richardson/Levin acceleration, error estimate
checked).  The canonical forms from the tables are evaluated with
generator values from ``tests/reference.py`` (mpmath, Hölder convolution),
so the comparison covers every rational coefficient the table uses for
these words.
"""

from __future__ import annotations

import os
from pathlib import Path

import mpmath
import pytest

from lowenergy.zeta.table import FORMAT_VERSION, TableStore
from tests.reference import reference_mzv

DIGITS = 30

CASES = [
    # weight 19
    (10, 9), (14, 5), (4, 15), (8, 6, 5), (6, 7, 6),
    # weight 20
    (11, 9), (8, 12), (12, 8), (9, 6, 5), (6, 8, 6),
]


def _user_store(weight: int) -> TableStore:
    root = os.environ.get("LOWENERGY_USER_CACHE_DIR")
    if not root:
        pytest.skip("LOWENERGY_CACHE_DIR is not set: no cache with weight 19-20 tables to check")
    store = TableStore(Path(root) / f"mzv-v{FORMAT_VERSION}", auto_build=False)
    if store.built_weight() < weight:
        pytest.skip(
            f"the cache in LOWENERGY_CACHE_DIR={root} holds tables up to weight {store.built_weight()} only; "
            f"build weight {weight} with `lowenergy tables build --weight {weight}`"
        )
    return store


def _direct(idx) -> mpmath.mpf:
    """ζ(idx) by sums of Hurwitz zetas (module docstring).  Depth 3 uses
    Σ_{m>n} m^-b ζ_H(a, m+1) = ζ(a, b) - Σ_{m≤n} m^-b ζ_H(a, m+1), with the
    partial sums kept as n grows; the working precision covers the
    cancellation (the difference is about n^-(a+b-1))."""
    def term(a, b, m):
        return mpmath.mpf(m) ** (-b) * mpmath.zeta(a, m + 1)

    if len(idx) == 2:
        a, b = idx
        return mpmath.nsum(lambda m: term(a, b, int(m)), [1, mpmath.inf])
    a, b, c = idx
    with mpmath.workdps(mpmath.mp.dps + 40):
        zab = mpmath.nsum(lambda m: term(a, b, int(m)), [1, mpmath.inf])
        partial = [mpmath.mpf(0)]  # partial[n] = Σ_{m≤n} m^-b ζ_H(a, m+1)

        def outer(n):
            n = int(n)
            while len(partial) <= n:
                partial.append(partial[-1] + term(a, b, len(partial)))
            return mpmath.mpf(n) ** (-c) * (zab - partial[n])

        return +mpmath.nsum(outer, [1, mpmath.inf])


@pytest.mark.slow
@pytest.mark.parametrize("idx", CASES, ids=lambda i: "zeta" + ",".join(map(str, i)))
def test_high_weight_reduction_against_direct_sums(idx):
    store = _user_store(sum(idx))
    red = store.reduction(idx)
    assert red != {(tuple(idx),): 1}, "a generator: the check would not involve the table"
    with mpmath.workdps(DIGITS + 15):
        direct = _direct(idx)
        value = mpmath.mpf(0)
        for mono, c in red.items():
            term = mpmath.mpf(c.numerator) / c.denominator
            for g in mono:
                term *= reference_mzv(g, DIGITS + 15)
            value += term
        assert abs(value - direct) < mpmath.mpf(10) ** (-DIGITS) * abs(direct), (idx, value, direct)
