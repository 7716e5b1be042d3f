"""The exact linear-algebra front (lowenergy.linalg) against sympy and
against the defining congruences."""

from __future__ import annotations

from fractions import Fraction

import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from lowenergy.linalg import DependentColumn, crt_rational, rational_reconstruct, solve_gram, to_mod

PRIMES = [2**61 - 1, 2**31 - 1, 1_000_000_007]  # primes (Mersenne M61, M31; 10^9+7)


@settings(max_examples=200, deadline=None)
@given(st.integers(-10**8, 10**8), st.integers(1, 10**8))
def test_crt_recovers_small_fractions(n, d):
    q = Fraction(n, d)
    # |n|, d < sqrt(M/2) for M the product of the three primes: unique recovery
    assert crt_rational([to_mod(q, p) for p in PRIMES], PRIMES) == q


@settings(max_examples=200, deadline=None)
@given(st.integers(0, 10**9 + 6))
def test_reconstruction_satisfies_its_congruence(a):
    m = 1_000_000_007
    q = rational_reconstruct(a, m)
    if q is not None:
        assert (q.numerator - a * q.denominator) % m == 0
        assert abs(q.numerator) ** 2 <= m // 2 and q.denominator ** 2 <= m // 2


@settings(max_examples=60, deadline=None)
@given(st.lists(st.lists(st.integers(-3, 3), min_size=4, max_size=4), min_size=1, max_size=4))
def test_gram_solve_against_sympy(vectors):
    """Gram matrix of integer vectors: solution equals sympy's where the
    vectors are independent; otherwise the first dependent vector and its
    combination match sympy's rank and nullspace."""
    n = len(vectors)
    V = sympy.Matrix(vectors).T  # columns = vectors
    G = V.T * V
    gram = [[Fraction(int(G[i, j])) for j in range(n)] for i in range(n)]
    rhs = [{"a": Fraction(i + 1), "b": Fraction(1, i + 2)} for i in range(n)]
    try:
        x = solve_gram(gram, rhs)
    except DependentColumn as dep:
        k = dep.index
        assert V[:, :k].rank() == k and V[:, : k + 1].rank() == k  # first dependent column
        combo = sum((V[:, i] * sympy.Rational(c.numerator, c.denominator) for i, c in dep.combination.items()),
                    sympy.zeros(V.rows, 1))
        assert combo == V[:, k]
        return
    assert V.rank() == n
    for key in ("a", "b"):
        b = sympy.Matrix([sympy.Rational(r[key].numerator, r[key].denominator) for r in rhs])
        sol = G.LUsolve(b)
        assert [x[i].get(key, Fraction(0)) for i in range(n)] == [Fraction(int(v.p), int(v.q)) for v in sol]
