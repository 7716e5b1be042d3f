"""Sparse polynomials (lowenergy.poly): ring axioms with Fraction coefficients
(hypothesis) and products, powers and truncations against sympy's ``Poly``
over QQ, an implementation independent of ours."""

from __future__ import annotations

from fractions import Fraction

import flint
import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from lowenergy import poly as P
from lowenergy.zeta.element import MZV

NVARS = 3
X = sympy.symbols("x0:3")

fractions = st.fractions(min_value=-5, max_value=5, max_denominator=6)
exponents = st.tuples(*[st.integers(0, 3)] * NVARS)
# raw dicts may hold zeros: clean them the way every function of the module must
polys = st.dictionaries(exponents, fractions, max_size=6).map(lambda d: {k: v for k, v in d.items() if v})


def to_sympy(p) -> sympy.Poly:
    expr = sympy.Add(*[sympy.Rational(v.numerator, v.denominator) * sympy.Mul(*[x**e for x, e in zip(X, k)])
                       for k, v in p.items()])
    return sympy.Poly(expr, *X, domain="QQ")


def from_sympy(q: sympy.Poly) -> dict:
    return {k: Fraction(int(c.p), int(c.q)) for k, c in q.terms() if c}


def clean(p) -> bool:
    return all(v for v in p.values())


# ---------------------------------------------------------------------------
# ring axioms (Fraction coefficients)
# ---------------------------------------------------------------------------

@settings(max_examples=150, deadline=None)
@given(polys, polys, polys)
def test_ring_axioms(a, b, c):
    assert P.add(a, b) == P.add(b, a)
    assert P.add(P.add(a, b), c) == P.add(a, P.add(b, c))
    assert P.add(a, {}) == a
    assert P.add(a, a, -1) == {}
    assert P.mul(a, b) == P.mul(b, a)
    assert P.mul(P.mul(a, b), c) == P.mul(a, P.mul(b, c))
    assert P.mul(a, P.add(b, c)) == P.add(P.mul(a, b), P.mul(a, c))
    one = {(0,) * NVARS: Fraction(1)}
    assert P.mul(a, one) == a
    assert P.mul(a, {}) == {}
    for r in (P.add(a, b), P.add(a, b, Fraction(-2, 3)), P.mul(a, b), P.scale(a, Fraction(3, 7)), P.scale(a, 0)):
        assert clean(r)


@settings(max_examples=100, deadline=None)
@given(polys, polys, fractions)
def test_scale_and_add_into(a, b, q):
    assert P.scale(P.add(a, b), q) == P.add(P.scale(a, q), P.scale(b, q))
    assert P.add(a, b, q) == P.add(a, P.scale(b, q))
    target = dict(a)
    assert P.add_into(target, b, q) is target and target == P.add(a, b, q)
    acc: dict = {}
    for k, v in b.items():
        P.add_term(acc, k, v)
        P.add_term(acc, k, q * v)
    assert acc == P.scale(b, 1 + q)


# ---------------------------------------------------------------------------
# against sympy
# ---------------------------------------------------------------------------

@settings(max_examples=150, deadline=None)
@given(polys, polys)
def test_product_matches_sympy(a, b):
    assert P.mul(a, b) == from_sympy(to_sympy(a) * to_sympy(b))


@settings(max_examples=60, deadline=None)
@given(polys, st.integers(0, 4), st.one_of(st.none(), st.integers(0, 8)))
def test_power_and_truncation_match_sympy(a, n, order):
    expected = from_sympy(to_sympy(a) ** n)
    if order is not None:
        expected = {k: v for k, v in expected.items() if sum(k) <= order}
    assert P.power(a, n, NVARS, truncate=order) == expected
    if order is not None:
        assert P.truncated(P.power(a, n, NVARS), order) == expected
        assert P.total_degree(P.truncated(a, order)) <= order


@settings(max_examples=80, deadline=None)
@given(st.dictionaries(st.tuples(st.integers(0, 4), st.integers(0, 4)), fractions, max_size=6),
       st.dictionaries(st.tuples(st.integers(0, 4), st.integers(0, 4)), fractions, max_size=6),
       st.one_of(st.none(), st.integers(0, 6)))
def test_two_variable_path_matches_sympy(a, b, order):
    """The two-variable fast path of ``mul`` (exponent pairs) against sympy."""
    a = {k: v for k, v in a.items() if v}
    b = {k: v for k, v in b.items() if v}
    s, t = sympy.symbols("s t")

    def sp(p):
        return sympy.Poly(sum((sympy.Rational(v.numerator, v.denominator) * s**i * t**j for (i, j), v in p.items()),
                              sympy.Integer(0)), s, t, domain="QQ")

    expected = {k: Fraction(int(c.p), int(c.q)) for k, c in (sp(a) * sp(b)).terms() if c}
    if order is not None:
        expected = {k: v for k, v in expected.items() if sum(k) <= order}
    assert P.mul(a, b, truncate=order) == expected


# ---------------------------------------------------------------------------
# named cases: other coefficient rings, zero-dropping, order of terms
# ---------------------------------------------------------------------------

def test_binomial_theorem_handbook():
    """(s + t)^5 has the binomial coefficients 1, 5, 10, 10, 5, 1
    (Abramowitz & Stegun 3.1.1 and Table 24.1)."""
    p = P.power({(1, 0): 1, (0, 1): 1}, 5, 2)
    assert p == {(5 - k, k): c for k, c in enumerate([1, 5, 10, 10, 5, 1])}


def test_mzv_coefficients_cancel_and_are_dropped():
    z2 = MZV({((2,),): 1})
    z3 = MZV({((3,),): 1})
    a = {(1,): z2, (0,): z3}
    b = {(1,): z3, (0,): -z2}
    # (z2 x + z3)(z3 x - z2) = z2 z3 x^2 + (z3^2 - z2^2) x - z2 z3
    assert P.mul(a, b) == {(2,): z2 * z3, (1,): z3 * z3 - z2 * z2, (0,): -(z2 * z3)}
    assert P.add(a, a, -1) == {}
    assert P.scale(a, MZV()) == {}


def test_flint_coefficients():
    a = {(1, 0): flint.fmpq(1, 2), (0, 1): flint.fmpq(1, 3)}
    assert P.power(a, 2, 2, one=flint.fmpq(1)) == {(2, 0): flint.fmpq(1, 4), (1, 1): flint.fmpq(1, 3),
                                                   (0, 2): flint.fmpq(1, 9)}


def test_linear_combinations_with_any_keys():
    acc = P.add({"a": 1, "b": 2}, {"b": -2, "c": Fraction(1, 2)})
    assert acc == {"a": 1, "c": Fraction(1, 2)}
    P.add_term(acc, "a", -1)
    assert acc == {"c": Fraction(1, 2)}


def test_term_order_follows_the_loops():
    """Outputs list terms in dict order: a key that cancels is removed and,
    when it comes back, appended at the end."""
    acc = {(0,): 1, (1,): 1}
    P.add_term(acc, (0,), -1)
    P.add_term(acc, (0,), 2)
    assert list(acc) == [(1,), (0,)]
    assert list(P.mul({(1, 0): 1, (0, 1): 1}, {(0, 1): 1, (1, 0): 1})) == [(1, 1), (2, 0), (0, 2)]


def test_negative_power_is_refused():
    with pytest.raises(ValueError):
        P.power({(1,): 1}, -1, 1)
