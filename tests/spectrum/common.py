"""Integrands and converters shared by the spectrum tests.

The integrands are built directly from the term model (no file reader), so
these tests depend only on the spectrum package and the term model.
"""

from __future__ import annotations

from fractions import Fraction

import sympy

from lowenergy.integrand.model import Integrand, LinearExponent, Term
from lowenergy.zeta.element import MZV

S_SYM, T_SYM = sympy.symbols("s t")


def beta_type(word=(), x_shift=-1, y_shift=-1, x_coeff=-1, y_coeff=-1, coefficient=None, parameters=()):
    """``coefficient · x^(x_shift + x_coeff·s) (1-x)^(y_shift + y_coeff·t) G(word; x)``."""
    nv = 2 + len(parameters)
    coef = coefficient if coefficient is not None else {(0,) * nv: MZV.one()}
    return Integrand(
        [Term(coef, LinearExponent(x_shift, Fraction(x_coeff), 0), LinearExponent(y_shift, Fraction(y_coeff), 1),
              tuple(word))],
        parameters=tuple(parameters),
    )


def beta():
    """``∫ x^(-s-1)(1-x)^(-t-1) dx = B(-s,-t) = Γ(-s)Γ(-t)/Γ(-s-t)`` (A&S 6.2.1-6.2.2)."""
    return beta_type()


def beta_one_minus_t():
    """``∫ x^(-s-1)(1-x)^(-t) dx = B(-s, 1-t) = -t · Γ(-s)Γ(-t)/Γ(1-s-t)``."""
    return beta_type(y_shift=0)


def mzv_to_sympy(x: MZV):
    """An MZV built from ζ(2) and odd single zetas as a sympy number (ζ(2) = π²/6)."""
    total = sympy.Integer(0)
    for mono, c in x.terms():
        term = sympy.Rational(c.numerator, c.denominator)
        for g in mono:
            if len(g) != 1:
                raise ValueError(f"no sympy form for the generator {g}")
            term *= sympy.zeta(g[0])
        total += term
    return total


def rpoly_to_sympy(rpoly, var):
    """A residue polynomial ``{power: {(): MZV}}`` (no parameters) as a sympy expression."""
    out = sympy.Integer(0)
    for power, pp in rpoly.items():
        for key, c in pp.items():
            assert not any(key), "parameters present"
            out += mzv_to_sympy(c) * var ** power
    return sympy.expand(out)
