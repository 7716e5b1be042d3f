"""Exact structure of Brown's single-valued polylogarithms (lowenergy.svpolylog.construct).

F. Brown, "Single-valued multiple polylogarithms in one variable", C. R. Acad.
Sci. Paris 338 (2004); O. Schnetz, "Graphical functions and single-valued
multiple polylogarithms", Commun. Number Theory Phys. 8 (2014).
"""

from __future__ import annotations

from fractions import Fraction

import flint
import pytest

from lowenergy.errors import InputError
from lowenergy.svpolylog.construct import (
    build_sv_table,
    drinfeld_associator,
    real_line_restriction,
    sv_polylog,
    sv_table,
    sv_value_at_one,
    y1_series,
)
from lowenergy.svpolylog.svmap import sv
from lowenergy.words import all_words, shuffle
from lowenergy.zeta.element import MZV, g_value, zeta
from lowenergy.zeta.reduction import monomials_of_weight
from lowenergy.zeta.table import default_store

MAXW = 8


@pytest.fixture(scope="module")
def table():
    return sv_table(MAXW)


def test_number_of_functions(table):
    # one L_w per word: 2^w at weight w
    for k in range(MAXW + 1):
        assert sum(1 for w in all_words(k) if table.terms(w)) == 2 ** k


def test_powers_of_log(table):
    # L_{0^n} = log^n|z|^2 / n! = Σ_j G(0^j; z) G(0^(n-j); z̄) with G(0^j) = log^j/j!
    for n in range(MAXW + 1):
        assert table.terms((0,) * n) == {((0,) * j, (0,) * (n - j)): 1 for j in range(n + 1)}


def test_weight_one():
    # L_1 = G(1; z) + G(1; z̄) = log(1-z) + log(1-z̄) = log|1-z|^2 (G(1;z) = ∫_0^z dt/(t-1))
    assert sv_polylog((1,)) == {((1,), ()): 1, ((), (1,)): 1}
    assert sv_polylog((0,)) == {((0,), ()): 1, ((), (0,)): 1}


def test_holomorphic_derivative(table):
    # ∂_z L_{a w} = L_w / (z - a): the terms with a holomorphic word starting with a,
    # stripped of it, are exactly L_w; the others have u empty (antiholomorphic).
    for k in range(1, MAXW + 1):
        for w in all_words(k):
            stripped = {(u[1:], v): c for (u, v), c in table.terms(w).items() if u}
            assert all(u[0] == w[0] for (u, v) in table.terms(w) if u)
            assert stripped == table.terms(w[1:]), w


def test_leading_terms(table):
    # The MZV-free part is Σ_j G(w_1..w_j; z) G(w_n..w_(j+1); z̄) (y1 = x1 + O(ζ(3)))
    for k in range(MAXW + 1):
        for w in all_words(k):
            rational = {key: c for key, c in table.terms(w).items() if c.is_rational()}
            expected = {(w[:j], tuple(reversed(w[j:]))): 1 for j in range(k + 1)}
            assert rational == expected, w


def test_y1_first_correction_is_zeta3():
    # y1 = x1 + (terms of degree ≥ 4); the degree-4 part is a multiple of ζ(3) and the
    # coefficients of y1 are single-valued MZVs (sv-images): here odd zetas only
    y1 = y1_series(8)
    assert y1[(1,)] == 1
    assert all(len(w) >= 4 for w in y1 if w != (1,))
    assert all(c.weight == len(w) - 1 for w, c in y1.items())
    for w, c in y1.items():
        for mono, _ in c.terms():
            assert all(len(g) == 1 and g[0] % 2 for g in mono)
    assert any(len(w) == 4 and c for w, c in y1.items())


def test_associator_low_weight():
    # Z = 1 - ζ(2) x0x1 + ζ(2) x1x0 + ...: G(0,1;1) = -ζ(2), G_reg(1,0;1) = ζ(2)
    z = drinfeld_associator(3)
    assert z[()] == 1 and z[(0, 1)] == -zeta(2) and z[(1, 0)] == zeta(2)
    assert (0,) not in z and (1,) not in z
    # Z is group-like: coefficients satisfy the shuffle product G(u)G(v) = Σ G(w)
    z = drinfeld_associator(6)
    for u in all_words(2):
        for v in all_words(3):
            lhs = z.get(u, MZV()) * z.get(v, MZV())
            rhs = sum((z.get(w, MZV()) * m for w, m in shuffle(u, v).items()), MZV())
            assert lhs == rhs


@pytest.mark.parametrize("k", range(1, MAXW + 1))
def test_value_at_one_is_single_valued_map(k):
    # Brown (2004, 2014): the regularized value at z = 1 of L_w is the single-valued
    # MZV sv(G(w; 1)).  Two independent codes meet here: the f-alphabet map of
    # svmap.py and the y1 construction (from memory).
    for w in all_words(k):
        assert sv_value_at_one(w) == sv(g_value(w)), w


def test_real_line_weight_two():
    # On 0 < x < 1: L_01 = L_10 (the Bloch-Wigner D vanishes on the real line)
    # = 2 G(0,1) + 2 G(1,0) = 2 log(x) log(1-x)
    assert real_line_restriction((0, 1)) == real_line_restriction((1, 0)) == {(0, 1): 2, (1, 0): 2}
    assert real_line_restriction((0,)) == {(0,): 2}
    assert real_line_restriction(()) == {(): 1}


def test_real_line_is_shuffle_of_terms(table):
    for w in [(0, 0, 1, 1), (1, 0, 1, 0, 0, 1), (0, 1, 1, 0, 1, 0, 1, 1)]:
        expected = {}
        for (u, v), c in table.terms(w).items():
            for x, m in shuffle(u, v).items():
                expected[x] = expected.get(x, MZV()) + c * m
        assert real_line_restriction(w) == {x: c for x, c in expected.items() if c}


def _rank(vectors):
    keys = {}
    for v in vectors:
        for key in v:
            keys.setdefault(key, len(keys))
    if not keys:
        return 0
    m = flint.fmpq_mat(len(vectors), len(keys))
    for i, v in enumerate(vectors):
        for key, c in v.items():
            c = Fraction(c)
            m[i, keys[key]] = flint.fmpq(c.numerator, c.denominator)
    return m.rank()


def _flatten(restriction, mono=()):
    out = {}
    for word, c in restriction.items():
        for m, q in (c * MZV({mono: 1})).as_dict().items():
            out[(m, word)] = q
    return out


def _odd_lyndon_algebra_dims(n):
    # dimension of the polynomial algebra on the Lyndon words of odd length over two
    # letters; Lyndon counts by Witt's necklace formula L_m = (1/m) Σ_{d|m} μ(d) 2^(m/d)
    def mobius(d):
        res, p, x = 1, 2, d
        while p * p <= x:
            if x % p == 0:
                x //= p
                if x % p == 0:
                    return 0
                res = -res
            p += 1
        return -res if x > 1 else res

    dims = [1] + [0] * n
    for m in range(1, n + 1, 2):
        lm = sum(mobius(d) * 2 ** (m // d) for d in range(1, m + 1) if m % d == 0) // m
        for _ in range(lm):  # multiply by 1/(1 - x^m)
            for k in range(m, n + 1):
                dims[k] += dims[k - m]
    return dims


def test_real_line_ranks(table):
    # Pure-weight Q-ranks of the 2^k real-line restrictions.
    ranks = [_rank([_flatten(table.real_line(w)) for w in all_words(k)]) for k in range(7)]
    # computed here (regression values, no published source): 1, 2, 3, 6, 10, 20, 36
    assert ranks == [1, 2, 3, 6, 10, 20, 36]
    # The MZV-free parts Σ_j w_1..w_j ш w_n..w_(j+1) have the shape of the sv formula;
    # their rank is the dimension of the polynomial algebra on odd-length Lyndon words
    # (the structure of single-valued images, Brown 2014; from memory).
    top = [_rank([{u: c.rational_value() for u, c in table.real_line(w).items() if len(u) == k}
                  for w in all_words(k)]) for k in range(MAXW + 1)]
    assert top == _odd_lyndon_algebra_dims(MAXW)


def test_ansatz_dimensions(table):
    # Q-span at total weight W of {m · L_w(x)} (m a basis monomial of MZVs) versus
    # {m · G(w; x)} (dimension Σ_k d_(W-k) 2^k, G-words being independent over MZVs).
    store = default_store()
    g_dims, l_dims = [], []
    for big_w in range(7):
        vectors, g_dim = [], 0
        for k in range(big_w + 1):
            mw = big_w - k
            monos = [()] if mw == 0 else ([] if mw == 1 else monomials_of_weight(store.all_generators(mw), mw))
            g_dim += len(monos) * 2 ** k
            for w in all_words(k):
                rl = table.real_line(w)
                vectors.extend(_flatten(rl, m) for m in monos)
        g_dims.append(g_dim)
        l_dims.append(_rank(vectors))
    assert g_dims == [1, 2, 5, 11, 23, 48, 98]
    assert l_dims == [1, 2, 4, 9, 15, 31, 54]  # computed here (regression)


def test_errors():
    with pytest.raises(InputError):
        sv_polylog((0, 2))
    with pytest.raises(InputError):
        build_sv_table(-1)
    with pytest.raises(InputError):
        build_sv_table(3).terms((0, 1, 0, 1))


def test_tables_agree_across_weights():
    small = build_sv_table(5)
    big = sv_table(MAXW)
    for k in range(6):
        for w in all_words(k):
            assert small.terms(w) == big.terms(w)


def test_disk_cache_round_trip(tmp_path):
    from lowenergy.svpolylog import construct as C

    store = default_store()
    built = build_sv_table(5, store)
    loaded = C._load_json(store, 5)
    if loaded is None:
        C._save_json(built, store)
        loaded = C._load_json(store, 5)
    assert loaded is not None
    assert loaded.parts == built.parts and loaded.y1 == built.y1
