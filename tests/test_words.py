"""Words, shuffle and stuffle products, duality and regularization."""

from __future__ import annotations

from fractions import Fraction
from math import comb

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from lowenergy.errors import InputError
from lowenergy.words import (
    add_into,
    admissible_indices,
    dual_indices,
    dual_word,
    indices_to_word,
    regularize_indices,
    regularize_word,
    shuffle,
    shuffle_many,
    stuffle,
    word_to_indices,
)

words = st.lists(st.integers(0, 1), max_size=6).map(tuple)
index_lists = st.lists(st.integers(1, 4), max_size=4).map(tuple)


def combine(*pairs):
    out = {}
    for factor, comb_ in pairs:
        add_into(out, comb_, factor)
    return out


def product3(prod, a, b, c, left=True):
    out = {}
    first = prod(a, b) if left else prod(b, c)
    for w, m in first.items():
        add_into(out, prod(w, c) if left else prod(a, w), m)
    return out


@settings(max_examples=200, deadline=None)
@given(words, words)
def test_shuffle_commutative(u, v):
    assert shuffle(u, v) == shuffle(v, u)


@settings(max_examples=150, deadline=None)
@given(words, words, words)
def test_shuffle_associative(u, v, w):
    assert product3(shuffle, u, v, w, True) == product3(shuffle, u, v, w, False)


@settings(max_examples=200, deadline=None)
@given(index_lists, index_lists)
def test_stuffle_commutative(u, v):
    assert stuffle(u, v) == stuffle(v, u)


@settings(max_examples=150, deadline=None)
@given(index_lists.map(lambda x: x[:3]), index_lists.map(lambda x: x[:3]), index_lists.map(lambda x: x[:3]))
def test_stuffle_associative(u, v, w):
    assert product3(stuffle, u, v, w, True) == product3(stuffle, u, v, w, False)


@given(words, words)
@settings(max_examples=100, deadline=None)
def test_shuffle_counts(u, v):
    # |u ш v| counted with multiplicity is the binomial coefficient.
    assert sum(shuffle(u, v).values()) == comb(len(u) + len(v), len(u))


def test_shuffle_and_stuffle_small_cases():
    # By hand: 01 ш 1 = 011 + 011 + 101 ; ζ(2)*ζ(2) = 2 ζ(2,2) + ζ(4).
    assert shuffle((0, 1), (1,)) == {(0, 1, 1): 2, (1, 0, 1): 1}
    assert stuffle((2,), (2,)) == {(2, 2): 2, (4,): 1}
    assert shuffle_many((0,), (0,), (0,)) == {(0, 0, 0): 6}


@pytest.mark.parametrize("indices", [(2,), (2, 1), (3, 1, 2), (5, 3), (2, 2, 2)])
def test_index_word_round_trip(indices):
    assert word_to_indices(indices_to_word(indices)) == indices


def test_bad_indices():
    with pytest.raises(InputError):
        indices_to_word((0, 2))
    with pytest.raises(InputError):
        word_to_indices((0, 2, 1))


def test_admissible_count():
    # 2^(w-2) convergent index lists of weight w (compositions with first part ≥ 2).
    for w in range(2, 12):
        assert len(admissible_indices(w)) == 2 ** (w - 2)


def test_duality_small():
    # ζ(2,1) = ζ(3) and ζ(3,1) = ζ(4)'s dual partner ζ(2,2)? No: ζ(3,1) is self-dual
    # (Zagier's duality: word 0011 -> reverse+flip = 0011).
    assert dual_indices((2, 1)) == (3,)
    assert dual_indices((3, 1)) == (3, 1)
    assert dual_indices((2, 1, 1)) == (4,)
    for w in range(2, 9):
        for idx in admissible_indices(w):
            assert dual_indices(dual_indices(idx)) == idx
            assert dual_word(dual_word(indices_to_word(idx))) == indices_to_word(idx)


def test_regularization_by_hand():
    # G(1,0;1) = -G(0,1;1) (by hand from 0 ш 1 = 01 + 10 and G(0;1) = 0)
    assert regularize_word((1, 0)) == {(0, 1): Fraction(-1)}
    # words of only one letter regularize to 0
    assert regularize_word((0, 0, 0)) == {}
    assert regularize_word((1, 1)) == {}
    # ζ_ш(1,2) = -2 ζ(2,1) (from 1 ш 01 = 101 + 011 + 011)
    assert regularize_indices((1, 2)) == {(2, 1): Fraction(-2)}
    # stuffle: ζ_*(1)ζ(2) = ζ_*(1,2) + ζ(2,1) + ζ(3)
    assert regularize_indices((1, 2), "stuffle") == {(2, 1): Fraction(-1), (3,): Fraction(-1)}
    # ζ_*(1,1) = (T^2 - ζ(2))/2 at T = 0 (Ihara-Kaneko-Zagier 2006, §2)
    assert regularize_indices((1, 1), "stuffle") == {(2,): Fraction(-1, 2)}
    assert regularize_indices((1, 1), "shuffle") == {}


@settings(max_examples=200, deadline=None)
@given(st.lists(st.integers(0, 1), min_size=1, max_size=7).map(tuple))
def test_regularized_words_are_convergent(word):
    for w in regularize_word(word):
        assert w[0] == 0 and w[-1] == 1


@settings(max_examples=100, deadline=None)
@given(words, words)
def test_regularization_is_a_shuffle_homomorphism(u, v):
    # reg(u ш v) = reg(u) ш reg(v) projected back: both sides regularized.
    lhs = {}
    for w, m in shuffle(u, v).items():
        add_into(lhs, regularize_word(w), m)
    rhs = {}
    for a, ca in regularize_word(u).items():
        for b, cb in regularize_word(v).items():
            for w, m in shuffle(a, b).items():
                add_into(rhs, regularize_word(w), ca * cb * m)
    assert lhs == rhs


# -- the closed forms of the shuffle regularization (issue 15) ----------------


def _reference_regularize(word, memo={}):
    """The defining recursion of the shuffle regularization, written out
    separately from lowenergy.words: G(0;1) = G(1;1) = 0 and
    0 ш (u 0^(m-1)) = m u 0^m + (words with m-1 trailing zeros),
    1 ш (1^(m-1) u) = m 1^m u + (words with m-1 leading ones)."""
    if word in memo:
        return memo[word]
    n = len(word)
    if not word or (word[0] == 0 and word[-1] == 1):
        return {word: Fraction(1)}
    out = {}
    if word[-1] == 0:
        m = next(k for k in range(n + 1) if k == n or word[n - 1 - k] != 0)
        if m < n:
            u, tail = word[: n - m], (0,) * (m - 1)
            for i in range(len(u)):
                add_into(out, _reference_regularize(u[:i] + (0,) + u[i:] + tail), Fraction(-1, m))
    else:
        m = next(k for k in range(n + 1) if k == n or word[k] != 1)
        if m < n:
            u, head = word[m:], (1,) * (m - 1)
            for i in range(1, len(u) + 1):
                add_into(out, _reference_regularize(head + u[:i] + (1,) + u[i:]), Fraction(-1, m))
    memo[word] = out
    return out


def test_closed_form_regularization_matches_the_defining_recursion():
    from lowenergy.words import all_words

    for length in range(11):
        for word in all_words(length):
            assert regularize_word(word) == _reference_regularize(word), word


def test_level_by_level_recursion_matches_the_defining_recursion():
    # the fallback used beyond CLOSED_FORM_BUDGET
    from lowenergy.words import _reduce_by_levels, _shuffle_level, _shuffle_step, all_words

    for length in range(1, 10):
        for word in all_words(length):
            assert dict(_reduce_by_levels(word, _shuffle_level, _shuffle_step)) == _reference_regularize(word), word


def test_regularization_of_one_ones_block_and_one_zeros_block():
    # reg(1^m 0^n) = -(-1)^(m+n) 0^n 1^m; e.g. G(1,0;1) = -G(0,1;1) (shuffle
    # product G(1)G(0) = G(1,0) + G(0,1) with G(0;1) = G(1;1) = 0)
    assert regularize_word((1, 0)) == {(0, 1): Fraction(-1)}
    assert regularize_word((1,) * 9 + (0,) * 9) == {(0,) * 9 + (1,) * 9: Fraction(-1)}
    assert regularize_word((1,) * 9 + (0,) * 8) == {(0,) * 8 + (1,) * 9: Fraction(1)}


def test_stuffle_regularization_by_the_stuffle_product():
    # ζ(1)ζ(2) = ζ(1,2) + ζ(2,1) + ζ(3) (stuffle, Hoffman 1997) with ζ_*(1) = 0:
    # ζ_*(1,2) = -ζ(2,1) - ζ(3)
    assert regularize_indices((1, 2), "stuffle") == {(2, 1): Fraction(-1), (3,): Fraction(-1)}
    # ζ(1)ζ(1,2) = 2ζ(1,1,2) + ζ(1,2,1) + ζ(2,2) + ζ(1,3) with ζ_*(1) = 0
    expected = {}
    for key, c in ((1, 2, 1), 1), ((2, 2), 1), ((1, 3), 1):
        add_into(expected, regularize_indices(key, "stuffle"), Fraction(-c, 2))
    assert regularize_indices((1, 1, 2), "stuffle") == expected


@settings(max_examples=40, deadline=None)
@given(st.lists(st.integers(0, 1), min_size=7, max_size=9).map(tuple),
       st.lists(st.integers(0, 1), min_size=1, max_size=3).map(tuple))
def test_closed_form_is_a_shuffle_homomorphism_on_longer_words(u, v):
    lhs = {}
    for w, m in shuffle(u, v).items():
        add_into(lhs, regularize_word(w), m)
    rhs = {}
    for a, ca in regularize_word(u).items():
        for b, cb in regularize_word(v).items():
            for w, m in shuffle(a, b).items():
                add_into(rhs, regularize_word(w), ca * cb * m)
    assert lhs == rhs


def test_ones_relaxed_is_the_transpose_of_phi():
    # φ: x0 -> -x0 - x1, x1 -> x1 applied letter by letter to x_v; the
    # coefficient of x_w in φ(x_v) must be the sign ones_relaxed(w) gives v.
    from itertools import product

    from lowenergy.words import all_words, ones_relaxed

    for n in range(5):
        image = {}
        for v in all_words(n):
            expansion = {(): 1}
            for letter in v:
                choices = ((0, -1), (1, -1)) if letter == 0 else ((1, 1),)
                expansion = {w + (a,): c * s for (w, c), (a, s) in product(expansion.items(), choices)}
            for w, c in expansion.items():
                image[(w, v)] = c
        for w in all_words(n):
            got = dict(ones_relaxed(w))
            want = {v: c for (ww, v), c in image.items() if ww == w}
            assert got == want
