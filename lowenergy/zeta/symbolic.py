"""MZVs as sympy expressions (:meth:`lowenergy.zeta.element.MZV.to_sympy`).

Imported only when asked for, so that ``import lowenergy`` never loads sympy.
Single zetas are sympy's own ``zeta(n)``; multiple zetas of depth ≥ 2 are
:class:`MultipleZeta` objects that keep our index order (first index on the
largest summation variable) and evaluate through
:func:`lowenergy.zeta.numeric.zeta_numeric`.
"""

from __future__ import annotations

import mpmath
import sympy

from .numeric import zeta_numeric

__all__ = ["MultipleZeta", "to_sympy"]


class MultipleZeta(sympy.Function):
    """``ζ(n1, ..., nk)``, k ≥ 2, unevaluated (Σ over m1 > ... > mk ≥ 1 of 1/(m1^n1 ⋯ mk^nk)).

    >>> x = MultipleZeta(5, 3)
    >>> x
    zeta(5, 3)
    >>> sympy.N(x, 20)
    0.037707672984847544011
    """

    def _eval_evalf(self, prec):
        indices = tuple(int(a) for a in self.args)
        # ``prec`` is in bits; ask for a few decimal digits more and round once
        value = zeta_numeric(indices, int(prec * 0.30103) + 5)
        return sympy.Float._new(mpmath.libmp.mpf_pos(value._mpf_, prec, "n"), prec)

    def _sympystr(self, printer):
        return "zeta(" + ", ".join(printer._print(a) for a in self.args) + ")"

    def _latex(self, printer):
        return "\\zeta(" + ",".join(printer._print(a) for a in self.args) + ")"


def to_sympy(x) -> sympy.Expr:
    """A sympy expression equal to the MZV ``x`` (see ``MZV.to_sympy``)."""
    total = sympy.Integer(0)
    for mono, c in x.terms():
        term = sympy.Rational(c.numerator, c.denominator)
        for g in mono:
            term *= sympy.zeta(g[0]) if len(g) == 1 else MultipleZeta(*g)
        total += term
    return total
