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


def test_small_primes_are_prime_and_small():
    assert all(sympy.isprime(p) and p < 2**26 for p in SMALL_PRIMES)


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
