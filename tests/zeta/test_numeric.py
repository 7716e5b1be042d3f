"""Tests of lowenergy.zeta.numeric and of the independent evaluator tests/reference.py.

Expected values come from mpmath's Riemann/Hurwitz zeta, from closed forms
in the literature (cited beside each check) and from the reference evaluator
(mpmath floats, path split at 1/3 instead of 1/2).  None is produced by the
code under test.  Tolerances follow the requested precision: a value asked for
to ``d`` digits must have relative error below ``10^-d``.
"""

from __future__ import annotations

import mpmath
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from lowenergy.errors import InputError, LowEnergyError, RegularizationError
from lowenergy.words import admissible_indices, indices_to_word, shuffle, stuffle
from lowenergy.zeta.numeric import word_numeric, zeta_numeric, zeta_numeric_many
from tests.reference import reference_mzv, reference_word


def assert_close(value, expected, digits, factor=1):
    """``|value - expected| ≤ factor · 10^-digits · |expected|``, checked at higher precision."""
    with mpmath.workdps(digits + 20):
        tol = factor * mpmath.mpf(10) ** (-digits) * abs(expected)
        err = abs(value - expected)
        assert err <= tol, f"{mpmath.nstr(value, digits + 5)} vs {mpmath.nstr(expected, digits + 5)}"


def zeta2n_closed(n):
    # ζ({2}^n) = π^(2n)/(2n+1)!  (Borwein, Bradley, Broadhurst, Lisoněk 2001,
    # "Special values of multiple polylogarithms", Trans. AMS 353; also
    # Hoffman 1992, "Multiple harmonic series", Pacific J. Math. 152)
    return mpmath.pi ** (2 * n) / mpmath.factorial(2 * n + 1)


def zeta31n_closed(n):
    # ζ({3,1}^n) = 2 π^(4n)/(4n+2)!  (conjectured by Zagier, proved in
    # Borwein, Bradley, Broadhurst, Lisoněk 2001, Trans. AMS 353; from memory)
    return 2 * mpmath.pi ** (4 * n) / mpmath.factorial(4 * n + 2)


def euler_n1(n):
    # Euler's formula ζ(n,1) = (n/2) ζ(n+1) - (1/2) Σ_{k=1}^{n-2} ζ(n-k) ζ(k+1), n ≥ 2
    # (Euler 1776; e.g. Borwein, Bradley, Broadhurst 1997, "Evaluations of
    # k-fold Euler/Zagier sums", Electron. J. Combin. 4(2); from memory)
    s = mpmath.mpf(n) / 2 * mpmath.zeta(n + 1)
    for k in range(1, n - 1):
        s -= mpmath.zeta(n - k) * mpmath.zeta(k + 1) / 2
    return s


# ==========================================================================
# the reference evaluator itself (Task 2 validation)
# ==========================================================================

@pytest.mark.parametrize("n", range(2, 13))
def test_reference_depth_one_vs_mpmath_zeta(n):
    with mpmath.workdps(70):
        expected = mpmath.zeta(n)
    assert_close(reference_mzv((n,), 50), expected, 50)


def test_reference_euler_and_closed_forms():
    with mpmath.workdps(70):
        # Euler: ζ(2,1) = ζ(3)  (Euler 1776; BBBL 2001)
        assert_close(reference_mzv((2, 1), 50), mpmath.zeta(3), 50)
        # ζ(3,1) = π^4/360  (BBBL 2001, Trans. AMS 353)
        assert_close(reference_mzv((3, 1), 50), mpmath.pi ** 4 / 360, 50)
        for n in range(1, 5):
            assert_close(reference_mzv((2,) * n, 50), zeta2n_closed(n), 50)
        for n in range(2, 8):
            assert_close(reference_mzv((n, 1), 50), euler_n1(n), 50)


def test_reference_method_values():
    # ζ(5,3) ≈ 0.03770767 and ζ(3,5) ≈ 0.20466114 (project METHOD notes;
    # values recalled from memory there): first index on the largest variable.
    assert abs(reference_mzv((5, 3), 30) - mpmath.mpf("0.03770767")) < 1e-8
    assert abs(reference_mzv((3, 5), 30) - mpmath.mpf("0.20466114")) < 1e-8


def test_reference_duality():
    # ζ(w) = ζ(dual w) (Zagier; Hoffman 1992, Pacific J. Math. 152).  The
    # reference splits at 1/3, so a word and its dual go through different
    # sums (1/3 versus 2/3): this checks the reference's sign conventions.
    from lowenergy.words import dual_indices

    for w in range(2, 8):
        for idx in admissible_indices(w):
            assert_close(reference_mzv(idx, 40), reference_mzv(dual_indices(idx), 40), 40, 2)


# ==========================================================================
# zeta_numeric against independent values
# ==========================================================================

@pytest.mark.parametrize("weight", range(2, 11))
def test_against_reference_all_admissible(weight):
    # every admissible index list of weight ≤ 10 (511 MZVs) at 50 digits
    lists = admissible_indices(weight)
    assert len(lists) == 2 ** (weight - 2)
    many = zeta_numeric_many(lists, 50)
    for idx in lists:
        expected = reference_mzv(idx, 50)
        assert_close(many[idx], expected, 50, 2)
        if weight <= 8:
            assert_close(zeta_numeric(idx, 50), expected, 50, 2)


@pytest.mark.parametrize("digits", [100, 500])
@pytest.mark.parametrize("n", range(2, 21))
def test_depth_one_vs_mpmath_zeta(n, digits):
    with mpmath.workdps(digits + 20):
        expected = mpmath.zeta(n)
    assert_close(zeta_numeric((n,), digits), expected, digits)


def test_closed_forms_100_digits():
    d = 100
    with mpmath.workdps(d + 20):
        assert_close(zeta_numeric((2, 1), d), mpmath.zeta(3), d)  # Euler 1776
        assert_close(zeta_numeric((3, 1), d), mpmath.pi ** 4 / 360, d)  # BBBL 2001
        # duality ζ(2,1,1) = ζ(4) (Hoffman 1992; BBBL 2001)
        assert_close(zeta_numeric((2, 1, 1), d), mpmath.zeta(4), d)
        for n in range(1, 8):  # up to ζ({2}^7) ≈ 6.9e-6: relative accuracy of small values
            assert_close(zeta_numeric((2,) * n, d), zeta2n_closed(n), d)
        for n in range(1, 4):
            assert_close(zeta_numeric((3, 1) * n, d), zeta31n_closed(n), d)
        for n in range(2, 13):
            assert_close(zeta_numeric((n, 1), d), euler_n1(n), d)


def test_method_values():
    # project METHOD notes (from memory): ζ(5,3) ≈ 0.03770767, ζ(3,5) ≈ 0.20466114
    assert abs(zeta_numeric((5, 3), 20) - mpmath.mpf("0.03770767")) < 1e-8
    assert abs(zeta_numeric((3, 5), 20) - mpmath.mpf("0.20466114")) < 1e-8


@pytest.mark.parametrize("a,b", [(5, 3), (3, 5), (2, 2), (4, 3)])
def test_depth_two_vs_hurwitz_sum(a, b):
    # ζ(a,b) = Σ_{m≥1} m^-a (ζ(b) - ζ(b,m)) with the Hurwitz zeta ζ(b,m) =
    # Σ_{j≥m} j^-b (definition; DLMF 25.11.1), summed by mpmath.nsum.
    with mpmath.workdps(40):
        expected = mpmath.nsum(
            lambda m: (mpmath.zeta(b) - mpmath.zeta(b, m)) / m ** a, [1, mpmath.inf]
        )
    assert_close(zeta_numeric((a, b), 30), expected, 30)


@pytest.mark.parametrize("weight", range(2, 10))
def test_sum_theorem(weight):
    # Σ_{admissible, weight w, depth d} ζ = ζ(w) for each 1 ≤ d ≤ w-1
    # (Granville 1997, "A decomposition of Riemann's zeta-function", LMS Lecture
    # Note Ser. 247; Zagier; from memory)
    d = 60
    values = zeta_numeric_many(admissible_indices(weight), d)
    with mpmath.workdps(d + 20):
        expected = mpmath.zeta(weight)
        for depth in range(1, weight):
            total = mpmath.fsum(v for k, v in values.items() if len(k) == depth)
            assert_close(total, expected, d, 2 ** (weight - 2))


def test_small_value_relative_accuracy():
    # ζ(8,1,1,1,1,1,1) ≈ 1e-9: relative, not absolute, accuracy is required
    idx = (8,) + (1,) * 6
    expected = reference_mzv(idx, 50)
    assert expected < 1e-8
    assert_close(zeta_numeric(idx, 50), expected, 50, 2)


# ==========================================================================
# algebraic relations (independent of the numerics: words.py products)
# ==========================================================================

admissible = st.integers(2, 5).flatmap(
    lambda first: st.lists(st.integers(1, 3), max_size=2).map(lambda rest: (first, *rest))
)


@settings(max_examples=25, deadline=None, derandomize=True)
@given(admissible, admissible)
def test_stuffle_relation(u, v):
    # ζ(u) ζ(v) = Σ_{w ∈ u * v} ζ(w)  (Hoffman 1997, "The algebra of multiple
    # harmonic series", J. Algebra 194)
    d = 40
    prod = stuffle(u, v)
    vals = zeta_numeric_many([u, v, *prod], d)
    with mpmath.workdps(d + 20):
        lhs = vals[u] * vals[v]
        rhs = mpmath.fsum(c * vals[w] for w, c in prod.items())
        assert_close(lhs, rhs, d, 4 * sum(prod.values()))


@settings(max_examples=25, deadline=None, derandomize=True)
@given(admissible, admissible)
def test_shuffle_relation(u, v):
    # G(a; 1) G(b; 1) = Σ_{c ∈ a ш b} G(c; 1) for convergent words (iterated
    # integrals: Ree 1958, "Lie elements and an algebra associated with shuffles",
    # Ann. of Math. 68)
    d = 40
    a, b = indices_to_word(u), indices_to_word(v)
    prod = shuffle(a, b)
    with mpmath.workdps(d + 20):
        lhs = word_numeric(a, d) * word_numeric(b, d)
        rhs = mpmath.fsum(c * word_numeric(w, d) for w, c in prod.items())
        assert_close(lhs, rhs, d, 4 * sum(prod.values()))


# ==========================================================================
# word_numeric and zeta_numeric_many
# ==========================================================================

@pytest.mark.parametrize("idx", [(2,), (2, 1), (3, 1, 2), (2, 2, 1, 1), (4, 1, 1, 2)])
def test_word_numeric_sign_and_value(idx):
    word = indices_to_word(idx)
    expected = reference_word(word, 40)
    assert (expected > 0) == (len(idx) % 2 == 0)  # G = (-1)^depth ζ with ζ > 0
    assert_close(word_numeric(word, 40), expected, 40, 2)


def test_empty():
    assert zeta_numeric((), 30) == 1
    assert word_numeric((), 30) == 1
    assert zeta_numeric_many([()], 30) == {(): 1}


def test_many_matches_single_and_normalizes_keys():
    lists = [list(i) for w in range(2, 8) for i in admissible_indices(w)]
    lists += [[3, 5], (3, 5), ()]  # duplicates and the empty list
    many = zeta_numeric_many(lists, 45)
    assert set(many) == {tuple(i) for i in lists}
    for idx, value in many.items():
        if idx:
            assert_close(value, zeta_numeric(idx, 45), 45, 2)


def test_many_rejects_divergent_entry():
    with pytest.raises(RegularizationError):
        zeta_numeric_many([(2,), (1, 2)], 20)
    with pytest.raises(InputError):
        zeta_numeric_many([(2,), (2, 0)], 20)


# ==========================================================================
# errors and precision hygiene
# ==========================================================================

@pytest.mark.parametrize("idx", [(1,), (1, 2), (1, 1, 3)])
def test_divergent_raises(idx):
    with pytest.raises(RegularizationError):
        zeta_numeric(idx, 20)


@pytest.mark.parametrize(
    "idx", [(0, 2), (2, 0), (-3,), (2.0,), ("3",), (2, True), (2, None), "35", None, 5, (1, 0)]
)
def test_bad_indices_raise_input_error(idx):
    with pytest.raises(InputError):
        zeta_numeric(idx, 20)


@pytest.mark.parametrize("digits", [0, -5, 2.5, True, "30", None])
def test_bad_digits(digits):
    with pytest.raises(InputError):
        zeta_numeric((2,), digits)


@pytest.mark.parametrize("word", [(1,), (1, 0, 1), (0, 1, 0), (0,), (0, 2, 1), (0, 1, True)])
def test_bad_words(word):
    with pytest.raises(LowEnergyError) as info:
        word_numeric(word, 20)
    bad_letter = any(a not in (0, 1) or isinstance(a, bool) for a in word)
    assert isinstance(info.value, InputError if bad_letter else RegularizationError)


def test_global_precision_untouched():
    before = (mpmath.mp.dps, mpmath.mp.prec)
    zeta_numeric((3,), 15)
    zeta_numeric((5, 3), 100)
    word_numeric((0, 1, 1), 60)
    zeta_numeric_many([(2,), (3, 2)], 80)
    assert (mpmath.mp.dps, mpmath.mp.prec) == before


def test_result_independent_of_ambient_precision():
    with mpmath.workdps(5):
        low_ambient = zeta_numeric((3, 2), 60)
    with mpmath.workdps(300):
        high_ambient = zeta_numeric((3, 2), 60)
    with mpmath.workdps(80):
        # ζ(3,2) = 3ζ(2)ζ(3) - (11/2)ζ(5)  (Euler's double-sum evaluation; e.g.
        # Borwein, Bradley, Broadhurst 1997, Electron. J. Combin. 4(2); from memory)
        expected = 3 * mpmath.zeta(2) * mpmath.zeta(3) - mpmath.mpf(11) / 2 * mpmath.zeta(5)
        assert_close(low_ambient, expected, 60)
        assert_close(high_ambient, expected, 60)

