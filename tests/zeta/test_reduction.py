"""The canonical MZV algebra against published identities.

Each check names its source.  Numbers for independent comparison come from
mpmath (``mpmath.zeta``, ``mpmath.pi``) or from ``tests/reference.py``, an
mpmath evaluator written separately from the package's numerics.
"""

from __future__ import annotations

from fractions import Fraction
from math import factorial

import mpmath
import pytest
import sympy

from lowenergy.words import admissible_indices, compositions, dual_indices, stuffle, shuffle
from lowenergy.zeta.element import MZV, g_value, zeta
from lowenergy.zeta.reduction import PRIMES, zagier_dimension
from lowenergy.zeta.table import default_store
from lowenergy.words import indices_to_word, word_to_indices

Z2 = lambda: zeta(2)  # noqa: E731


def pi_power(k: int) -> MZV:
    """π^(2k) = (6 ζ(2))^k."""
    return (zeta(2) * 6) ** k


def test_primes_are_prime():
    assert all(sympy.isprime(p) for p in PRIMES)


# Zagier, "Values of zeta functions and their applications" (1994): d_w from
# Σ d_w x^w = 1/(1 - x^2 - x^3); the sequence is printed there.
ZAGIER = [1, 0, 1, 1, 1, 2, 2, 3, 4, 5, 7, 9, 12]


@pytest.mark.parametrize("w", range(2, 13))
def test_dimension_equals_zagier(w):
    store = default_store()
    assert zagier_dimension(w) == ZAGIER[w]
    assert store.dimension(w) == ZAGIER[w]
    # the space of canonical forms of all words has that dimension too
    mats = {}
    for idx in admissible_indices(w):
        for mono in zeta(*idx).as_dict():
            mats[mono] = True
    assert len(mats) == ZAGIER[w]


def test_euler_z21():
    # Euler (1775): ζ(2,1) = ζ(3).
    assert zeta(2, 1) == zeta(3)


@pytest.mark.parametrize("n", range(1, 6))
def test_zeta_2_string(n):
    # ζ({2}^n) = π^(2n)/(2n+1)!  (Borwein, Bradley, Broadhurst, Lisoněk 2001, eq. for ζ({2}^n))
    assert zeta(*([2] * n)) == pi_power(n) * Fraction(1, factorial(2 * n + 1))


@pytest.mark.parametrize("n", range(1, 3))
def test_zeta_31_string(n):
    # ζ({3,1}^n) = 2 π^(4n)/(4n+2)!  (Borwein, Bradley, Broadhurst, Lisoněk 2001)
    assert zeta(*([3, 1] * n)) == pi_power(2 * n) * Fraction(2, factorial(4 * n + 2))


@pytest.mark.parametrize("w", range(3, 11))
def test_sum_theorem(w):
    # Granville (1997), Zagier: Σ over convergent lists of weight w and depth k of ζ = ζ(w).
    for k in range(1, w):
        total = MZV()
        for idx in admissible_indices(w):
            if len(idx) == k:
                total = total + zeta(*idx)
        assert total == zeta(w), (w, k)


@pytest.mark.parametrize("w", range(2, 11))
def test_duality(w):
    # Duality ζ(w) = ζ(τ w) (Zagier; a consequence of x -> 1-x in the iterated integral).
    for idx in admissible_indices(w):
        assert zeta(*idx) == zeta(*dual_indices(idx))


@pytest.mark.parametrize("w", [3, 5, 7, 9, 11])
def test_euler_depth_two_odd_weight(w):
    # Euler's theorem (Euler 1775; Borwein, Borwein, Girgensohn, Proc. Edinb. Math. Soc.
    # 38 (1995)): for odd a+b, ζ(a,b) is a rational combination of ζ(w) and
    # ζ(2k) ζ(w-2k).  So the canonical form has only monomials ζ(2)^k ζ(odd).
    for a in range(2, w):
        b = w - a
        x = zeta(a, b)
        for mono, _c in x.terms():
            odd = [g for g in mono if g != (2,)]
            assert len(odd) == 1 and len(odd[0]) == 1 and odd[0][0] % 2 == 1, (a, b, x)


def test_depth_two_known_values():
    # from memory (standard tables of double zeta values, e.g. Borwein-Bradley-Broadhurst
    # 1997): ζ(3,2) = 3ζ(2)ζ(3) - 11/2 ζ(5), ζ(2,3) = 9/2 ζ(5) - 2ζ(2)ζ(3),
    # ζ(4,1) = 2ζ(5) - ζ(2)ζ(3).  Checked against mpmath below as well.
    z2, z3, z5 = zeta(2), zeta(3), zeta(5)
    assert zeta(3, 2) == 3 * z2 * z3 - Fraction(11, 2) * z5
    assert zeta(2, 3) == Fraction(9, 2) * z5 - 2 * z2 * z3
    assert zeta(4, 1) == 2 * z5 - z2 * z3
    # numeric check of the remembered formulas themselves, independent of the
    # package: ζ(a,b) = Σ_{m≥2} m^-a H_{m-1}^(b) with H^(b)_{m-1} = ζ(b) - ζ(b,m)
    # (Hurwitz zeta) or the harmonic number for b = 1.
    def double_zeta(a, b):
        if b == 1:
            return mpmath.nsum(lambda m: mpmath.harmonic(m - 1) / m**a, [2, mpmath.inf])
        return mpmath.nsum(lambda m: (mpmath.zeta(b) - mpmath.zeta(b, m)) / m**a, [2, mpmath.inf])

    with mpmath.workdps(30):
        Z2, Z3, Z5 = mpmath.zeta(2), mpmath.zeta(3), mpmath.zeta(5)
        assert abs(double_zeta(3, 2) - (3 * Z2 * Z3 - mpmath.mpf(11) / 2 * Z5)) < mpmath.mpf(10) ** -20
        assert abs(double_zeta(2, 3) - (mpmath.mpf(9) / 2 * Z5 - 2 * Z2 * Z3)) < mpmath.mpf(10) ** -20
        # (nsum extrapolates the logarithmic tail of H_m to ~1e-12 only)
        assert abs(double_zeta(4, 1) - (2 * Z5 - Z2 * Z3)) < mpmath.mpf(10) ** -10


@pytest.mark.parametrize("w", [4, 6, 8])
def test_double_shuffle_agrees_after_reduction(w):
    # Products of convergent MZVs expanded by shuffle and by stuffle reduce to
    # the same canonical element, which is the product of the reductions.
    for a in range(2, w - 1):
        for u in admissible_indices(a):
            for v in admissible_indices(w - a):
                prod = zeta(*u) * zeta(*v)
                st = MZV()
                for idx, c in stuffle(u, v).items():
                    st = st + zeta(*idx) * c
                sh = MZV()
                for word, c in shuffle(indices_to_word(u), indices_to_word(v)).items():
                    idx = word_to_indices(word)
                    sh = sh + zeta(*idx) * (c * (-1) ** (len(u) + len(v) + len(idx)))
                assert st == prod == sh


def test_conventional_basis_generators():
    store = default_store()
    gens = store.all_generators(12)
    assert gens[:8] == [(2,), (3,), (5,), (7,), (3, 5), (9,), (3, 7), (11,)]
    assert (3, 3, 5) in gens and (3, 9) in gens
    assert len(gens) == 11


def test_canonical_form_is_unique_for_equal_numbers():
    # ζ(3)ζ(5) built as a product and from its stuffle expansion (Hoffman 1997).
    lhs = zeta(3) * zeta(5)
    rhs = zeta(3, 5) + zeta(5, 3) + zeta(8)
    assert lhs == rhs and hash(lhs) == hash(rhs)
    assert {lhs: 1}[rhs] == 1


def test_mixed_weight_and_pi():
    x = zeta(2) + zeta(3) * 2 + 1
    assert x.weights() == {0, 2, 3}
    assert x.weight is None
    assert x.homogeneous_part(3) == 2 * zeta(3)
    # π^2 = 6 ζ(2) exactly (Euler)
    assert pi_power(1) == 6 * zeta(2)


def test_regularized_values():
    # ζ_ш(1,2) = -2ζ(2,1) = -2ζ(3) (shuffle 1 ш 01); ζ_*(1,1) = -ζ(2)/2.
    assert zeta(1, 2, regularize="shuffle") == -2 * zeta(3)
    assert zeta(1, 1, regularize="stuffle") == -zeta(2) / 2
    # G(1,0;1) = ∫_0^1 log t/(t-1) dt = ζ(2)  (Abramowitz & Stegun 27.7.6 with x=1)
    assert g_value((1, 0)) == zeta(2)


def test_weight_beyond_table_message(tmp_path):
    from lowenergy.errors import TableError
    from lowenergy.zeta.table import TableStore

    # a store that may not build names the command that builds the weight
    with pytest.raises(TableError) as err:
        zeta(5, 3, store=TableStore(tmp_path, auto_build=False))
    assert "lowenergy tables build --weight 8" in str(err.value)
    assert not list(tmp_path.iterdir())
    # beyond the buildable weights: the limit, and no command that would refuse
    with pytest.raises(TableError) as err:
        zeta(11, 10)
    assert "up to weight 20" in str(err.value) and "tables build" not in str(err.value)


# --- property tests (hypothesis) -------------------------------------------

from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@st.composite
def admissible(draw, max_weight):
    w = draw(st.integers(2, max_weight))
    lists = admissible_indices(w)
    return lists[draw(st.integers(0, len(lists) - 1))]


@settings(max_examples=150, deadline=None)
@given(admissible(6), admissible(6))
def test_double_shuffle_random(u, v):
    # Regularized double shuffle (Ihara-Kaneko-Zagier 2006): the shuffle and the stuffle
    # expansions of ζ(u)ζ(v) reduce to the same canonical element.
    if sum(u) + sum(v) > 12:
        return
    st_ = MZV()
    for idx, c in stuffle(u, v).items():
        st_ = st_ + zeta(*idx) * c
    sh = MZV()
    for word, c in shuffle(indices_to_word(u), indices_to_word(v)).items():
        idx = word_to_indices(word)
        sh = sh + zeta(*idx) * (c * (-1) ** (len(u) + len(v) + len(idx)))
    assert st_ == sh == zeta(*u) * zeta(*v)


@settings(max_examples=100, deadline=None)
@given(st.lists(st.integers(0, 1), min_size=1, max_size=9).map(tuple),
       st.lists(st.integers(0, 1), min_size=1, max_size=3).map(tuple))
def test_regularized_shuffle_of_words_is_multiplicative(u, v):
    # Shuffle regularization is an algebra homomorphism: G(u)G(v) = Σ G(u ш v) at 1.
    if len(u) + len(v) > 12:
        return
    lhs = g_value(u) * g_value(v)
    rhs = MZV()
    for word, c in shuffle(u, v).items():
        rhs = rhs + g_value(word) * c
    assert lhs == rhs


@pytest.mark.slow
def test_weights_13_and_14_match_zagier(tmp_path):
    # Zagier (1994): d_13 = 16, d_14 = 21.  Builds the tables from scratch (~40 s, 1.4 GB).
    from lowenergy.zeta.table import TableStore, build_tables

    store = build_tables(14, TableStore(tmp_path))
    assert store.dimension(13) == 16 and store.dimension(14) == 21
    assert store.generators(14) == [(3, 11), (5, 9), (3, 3, 3, 5)]
