"""Exact functions of x* (lowenergy.spectrum.xfunctions): canonical forms, derivatives, text."""

from __future__ import annotations

import random
from fractions import Fraction

import mpmath
import sympy

from lowenergy.integrand.reader import terms_from_expression
from lowenergy.spectrum.xfunctions import XFunction
from lowenergy.zeta.element import MZV, zeta

X = sympy.Symbol("x")


def to_sympy(f: XFunction):
    """Rational parts only (empty word)."""
    if not f.parts:
        return sympy.Integer(0)
    i, j, num = f.parts[()]
    return X ** i * (1 - X) ** j * sum(sympy.Rational(c.rational_value().numerator, c.rational_value().denominator)
                                       * X ** p for p, c in enumerate(num))


def random_rational(rng):
    f = XFunction()
    for _ in range(rng.randint(1, 4)):
        f = f + XFunction.monomial(rng.randint(-3, 3), rng.randint(-3, 3), Fraction(rng.randint(-5, 5), rng.randint(1, 4)))
    return f


def test_rational_arithmetic_and_derivative_against_sympy():
    rng = random.Random(7)
    for _ in range(30):
        f, g = random_rational(rng), random_rational(rng)
        assert sympy.cancel(to_sympy(f + g) - (to_sympy(f) + to_sympy(g))) == 0
        assert sympy.cancel(to_sympy(f * g) - to_sympy(f) * to_sympy(g)) == 0
        assert sympy.cancel(to_sympy(f.derivative()) - sympy.diff(to_sympy(f), X)) == 0


def test_canonical_zero_and_identities():
    x, y = XFunction.monomial(1, 0), XFunction.monomial(0, 1)
    assert not (x + y - XFunction.constant(1))
    assert XFunction.monomial(-1, -1) == XFunction.monomial(-1, 0) + XFunction.monomial(0, -1)
    # log(x)^2 = 2 G(0,0; x) (G(0^n; x) = log^n x/n!, README conventions); G(0;x) G(1;x) = G(0,1) + G(1,0) (shuffle)
    assert XFunction.word((0,)) ** 2 == XFunction.word((0, 0)) * 2
    assert XFunction.word((0,)) * XFunction.word((1,)) == XFunction.word((0, 1)) + XFunction.word((1, 0))


def test_word_derivative_numerically():
    # d/dx G(0,1; x) = G(1; x)/x = log(1-x)/x; G(0,1; x) = -Li2(x): mpmath's polylog, central difference
    f = XFunction.word((0, 1)) * XFunction.monomial(2, -1, 3)
    with mpmath.workdps(30):
        x0 = mpmath.mpf(1) / 3
        h = mpmath.mpf(10) ** -10
        F = lambda x: -mpmath.polylog(2, x) * 3 * x ** 2 / (1 - x)  # noqa: E731
        want = (F(x0 + h) - F(x0 - h)) / (2 * h)
    got = f.derivative().numeric(Fraction(1, 3), 25)
    assert abs(got - want) < 1e-15


def test_text_reads_back_through_the_integrand_reader():
    rng = random.Random(3)
    coefs = [MZV.rational(Fraction(3, 2)), MZV.rational(-1), MZV.one(), zeta(3), zeta(2) - 2 * zeta(3), -zeta(2)]
    words = [(), (0,), (1,), (0, 1), (1, 0, 1)]
    for _ in range(150):
        f = XFunction()
        for _ in range(rng.randint(1, 4)):
            f = f + XFunction.monomial(rng.randint(-3, 3), rng.randint(-3, 3), rng.choice(coefs), rng.choice(words))
        if not f:
            continue
        back = XFunction()
        for term in terms_from_expression(f.text()):
            for _k, c in term.coefficient.items():
                back = back + XFunction.monomial(term.x_exp.shift, term.y_exp.shift, c, term.word)
        assert back == f, f.text()
