"""The coaction route against the double-shuffle route.

Two independent constructions of the canonical reduction: exact linear
algebra on regularized double shuffle relations (Ihara, Kaneko, Zagier 2006)
and Brown's coaction decomposition with one numerically fixed rational per
word (Brown, Adv. Stud. Pure Math. 63 (2012)).  They must give identical
tables, generators and f-alphabet images.
"""

from __future__ import annotations

import sympy
import pytest

from lowenergy.zeta.motivic import SMALL_PRIMES, f_monomials
from lowenergy.zeta.reduction import zagier_dimension
from lowenergy.zeta.table import TableStore, build_tables, default_store


def test_small_primes_are_the_largest_primes_below_2_26():
    expected, p = [], 2**26
    for _ in range(len(SMALL_PRIMES)):
        p = sympy.prevprime(p)
        expected.append(p)
    assert list(SMALL_PRIMES) == expected and len(SMALL_PRIMES) == 16


@pytest.mark.parametrize("w", range(0, 15))
def test_f_alphabet_dimension_is_zagier(w):
    # dim of Q[f2] ⊗ Q<f3, f5, ...> in weight w: Σ x^w / ... = 1/(1 - x^2 - x^3) (Brown 2012)
    assert len(f_monomials(w)) == zagier_dimension(w)


def test_motivic_route_reproduces_double_shuffle_tables(tmp_path):
    ref = default_store()
    store = TableStore(tmp_path)
    build_tables(12, store, method="auto", shuffle_max_weight=4)
    for w in range(5, 13):
        assert store.stats(w).get("method") == "motivic"
        assert store.generators(w) == ref.generators(w), w
        ref.reduction((2,) * (w // 2) if w % 2 == 0 else (w,))  # load the weight
        assert store._reductions[w] == ref._reductions[w], w
        for g in store.generators(w):
            assert store.falphabet_of_generator(g) == ref.falphabet_of_generator(g)


@pytest.mark.slow
def test_motivic_weight_15_dimension(tmp_path):
    # Zagier (1994): d_13 = 16, d_14 = 21, d_15 = 28.  Motivic route above weight 12.
    store = build_tables(15, TableStore(tmp_path))
    assert [store.dimension(w) for w in (13, 14, 15)] == [16, 21, 28]


def test_word_values_by_class_equal_all_rows_at_once():
    # The class-by-class rows (fixed number of ones) are the rows of the
    # all-at-once computation, and every word is in exactly one class.
    import numpy as np

    from lowenergy.zeta.motivic import _PrimeData

    p = SMALL_PRIMES[0]
    data = _PrimeData(p, default_store())
    for k in (1, 5, 10):
        full = data.word_values(k)
        seen = np.zeros(1 << k, dtype=np.int64)
        for ones in range(k + 1):
            idx, vals = data.word_values_of_class(k, ones)
            assert np.array_equal(vals, full[idx])
            seen[idx] += 1
        assert (seen == 1).all()
        assert full.any() or k == 1  # G(0;1) = G(1;1) = 0


def test_streamed_row_cache_equals_in_memory_rows(tmp_path):
    # ModularWordValues writes its disk cache class by class into a memory map;
    # the file must hold exactly the rows of the in-memory computation.
    import numpy as np

    from lowenergy.expansion.values import ModularWordValues
    from lowenergy.zeta.motivic import _PrimeData

    store = TableStore(tmp_path)
    build_tables(11, store)
    p = SMALL_PRIMES[1]
    rows = ModularWordValues(11, store)._rows(p)
    assert (tmp_path / "rows" / f"weight-11-p{p}.npy").exists()
    assert np.array_equal(np.asarray(rows), _PrimeData(p, store).word_values(11).astype(np.int32))
