"""MZV.to_sympy, the LaTeX display and the printed numeric value.

Numbers are compared with independent ones: mpmath's zeta for single zetas and
tests/reference.py (a separate Hölder-convolution evaluator) for depth ≥ 2.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
import sympy

from lowenergy.zeta.element import MZV, zeta
from lowenergy.zeta.symbolic import MultipleZeta
from tests.reference import reference_mzv

CASES = [
    # (indices, description)
    ((3,), "ζ(3)"),
    ((2,), "ζ(2) = π²/6"),
    ((5, 3), "ζ(5,3) ≈ 0.0377 in our index order"),
    ((3, 5), "ζ(3,5) ≈ 0.2047"),
    ((3, 1, 3, 1), "ζ(3,1,3,1)"),
    ((2, 2, 3, 5), "a weight-12 generator"),
    ((3, 3, 5), "ζ(3,3,5)"),
]


@pytest.mark.parametrize("indices, what", CASES)
@pytest.mark.parametrize("digits", [15, 40])
def test_to_sympy_evaluates_to_the_reference(indices, what, digits):
    expr = zeta(*indices).to_sympy()
    got = sympy.N(expr, digits + 5)
    ref = reference_mzv(indices, digits + 10)
    with mpmath.workdps(digits + 10):
        assert abs(mpmath.mpf(str(got)) - ref) <= abs(ref) * mpmath.mpf(10) ** -digits, what


def test_to_sympy_shapes():
    # single zetas are sympy's own; even ones become powers of pi (Euler: ζ(4) = π^4/90)
    assert zeta(3).to_sympy() == sympy.zeta(3)
    assert zeta(4).to_sympy() == sympy.pi ** 4 / 90
    expr = zeta(3, 5).to_sympy()
    assert isinstance(expr, MultipleZeta) and expr.args == (3, 5)
    assert str(expr) == "zeta(3, 5)"
    assert sympy.latex(expr) == "\\zeta(3,5)"
    assert MZV.rational(Fraction(-3, 7)).to_sympy() == sympy.Rational(-3, 7)
    assert MZV().to_sympy() == 0
    # products keep exact coefficients: ζ(3)ζ(5) = ζ(3,5) + ζ(5,3) + ζ(8) (stuffle)
    lhs = (zeta(5, 3) + zeta(3, 5) + zeta(8)).to_sympy()
    assert sympy.simplify(lhs - sympy.zeta(3) * sympy.zeta(5)) == 0


def test_repr_latex():
    assert zeta(5, 3)._repr_latex_() == "$-\\zeta(3,5) + \\zeta(3) \\zeta(5) - \\frac{24}{175}\\, \\zeta(2)^{4}$"


@pytest.mark.parametrize("digits", [20, 100, 250])
def test_numeric_prints_its_digits(digits):
    value = zeta(3, 5).numeric(digits)
    text = str(value)
    significant = text.lstrip("-0.").replace(".", "")
    assert len(significant) == digits
    ref = reference_mzv((3, 5), digits + 10)
    with mpmath.workdps(digits + 10):
        # the printed digits are right (rounded: error at most half a unit in the last place, + slack)
        assert abs(mpmath.mpf(text) - ref) <= abs(ref) * mpmath.mpf(10) ** (1 - digits)
        # and arithmetic keeps the full value
        assert abs((value + 1) - (ref + 1)) < mpmath.mpf(10) ** -digits
    assert repr(value).startswith("mpf('0.20466113")   # ζ(3,5) ≈ 0.2047 (README, rounded)
