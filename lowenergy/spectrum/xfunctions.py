"""Exact functions of one point ``0 < x < 1``: rational functions times G-words.

The high-energy check evaluates integrands on their saddle ``x = x*``; what
comes out is a finite sum

    f(x) = Σ_w R_w(x) · G(w; x),      R_w(x) = x^i (1-x)^j N_w(x),

with words ``w`` over {0, 1}, integers ``i, j`` (of either sign) and
polynomials ``N_w`` whose coefficients are exact MZVs.  The form is made
canonical by pulling every factor ``x`` and ``1-x`` out of ``N_w``
(``N_w(0) ≠ 0`` and ``N_w(1) ≠ 0``); since the G-words are linearly
independent over the rational functions, two functions are equal exactly
when their canonical forms are, and ``f == 0`` is an exact test.

Products of words are shuffled into single words (:func:`lowenergy.words.shuffle`);
derivatives use ``d/dx G(a, w; x) = G(w; x)/(x - a)``.

The plain data is ``{word: (i, j, (n_0, n_1, ...))}``; :class:`XFunction`
wraps it with arithmetic, text in the integrand syntax and numerical values.

Examples
--------
>>> x = XFunction.monomial(1, 0)              # x
>>> one_minus_x = XFunction.monomial(0, 1)    # 1 - x
>>> (x + one_minus_x) == XFunction.constant(1)
True
>>> (XFunction.word((0,)) * XFunction.word((0,))).text()   # log(x)^2 = 2 G(0,0; x)
'2*G(0, 0; x)'
>>> (x.inverse_monomial() + one_minus_x.inverse_monomial()).text()   # 1/x + 1/(1-x)
'x^(-1)*(1-x)^(-1)'
>>> XFunction.word((0, 1)).derivative().text()                       # G(1; x)/x
'x^(-1)*log(1-x)'
"""

from __future__ import annotations

from fractions import Fraction
from math import comb
from typing import Dict, Iterable, Optional, Tuple

import mpmath

from ..errors import InputError
from ..words import shuffle
from ..zeta.element import MZV

__all__ = ["XFunction", "rational_text", "word_text"]

Word = Tuple[int, ...]
# (i, j, numerator coefficients by power of x)
Rat = Tuple[int, int, Tuple[MZV, ...]]


def _poly_mul(a: Tuple[MZV, ...], b: Tuple[MZV, ...]) -> Tuple[MZV, ...]:
    out = [MZV()] * (len(a) + len(b) - 1)
    for i, ca in enumerate(a):
        if not ca:
            continue
        for j, cb in enumerate(b):
            if cb:
                out[i + j] = out[i + j] + ca * cb
    return tuple(out)


def _one_minus_x_power(k: int) -> Tuple[MZV, ...]:
    """Coefficients of ``(1-x)^k``, k ≥ 0."""
    return tuple(MZV.rational((-1) ** m * comb(k, m)) for m in range(k + 1))


def _canonical(i: int, j: int, num) -> Optional[Rat]:
    """Pull factors x and 1-x out of the numerator; None for zero."""
    coeffs = list(num)
    while coeffs and not coeffs[-1]:
        coeffs.pop()
    if not coeffs:
        return None
    while not coeffs[0]:
        coeffs.pop(0)
        i += 1
    while True:
        total = MZV()
        for c in coeffs:
            total = total + c
        if total or len(coeffs) == 1:
            break
        # N(x) = (x - 1) Q(x) = -(1-x) Q(x): synthetic division by (x - 1)
        q = [MZV()] * (len(coeffs) - 1)
        carry = MZV()
        for p in range(len(coeffs) - 1, 0, -1):
            carry = coeffs[p] + carry
            q[p - 1] = carry
        coeffs = [-c for c in q]
        j += 1
    return (i, j, tuple(coeffs))


def _rat_add(a: Rat, b: Rat) -> Optional[Rat]:
    i, j = min(a[0], b[0]), min(a[1], b[1])
    total: list = []
    for (ai, aj, an) in (a, b):
        factor = _poly_mul(_poly_mul(tuple([MZV()] * (ai - i) + [MZV.one()]), _one_minus_x_power(aj - j)), an)
        if len(factor) > len(total):
            total.extend([MZV()] * (len(factor) - len(total)))
        for p, c in enumerate(factor):
            total[p] = total[p] + c
    return _canonical(i, j, total)


def _rat_mul(a: Rat, b: Rat) -> Optional[Rat]:
    return _canonical(a[0] + b[0], a[1] + b[1], _poly_mul(a[2], b[2]))


def _rat_scale(a: Rat, c) -> Optional[Rat]:
    return _canonical(a[0], a[1], tuple(x * c for x in a[2]))


def _rat_derivative(a: Rat) -> Optional[Rat]:
    # d/dx x^i (1-x)^j N = x^(i-1) (1-x)^(j-1) [ (i(1-x) - j x) N + x(1-x) N' ]
    i, j, n = a
    lin = (MZV.rational(i), MZV.rational(-i - j))
    first = _poly_mul(lin, n)
    deriv = tuple(n[p] * p for p in range(1, len(n))) or (MZV(),)
    second = _poly_mul((MZV(), MZV.one(), MZV.rational(-1)), deriv)
    size = max(len(first), len(second))
    total = [MZV()] * size
    for p, c in enumerate(first):
        total[p] = total[p] + c
    for p, c in enumerate(second):
        total[p] = total[p] + c
    return _canonical(i - 1, j - 1, total)


def word_text(word: Word, xname: str = "x") -> str:
    """``G(w; x)`` in the integrand syntax (``log(x)``, ``log(1-x)`` for one letter)."""
    if word == (0,):
        return f"log({xname})"
    if word == (1,):
        return f"log(1-{xname})"
    return "G(" + ", ".join(str(a) for a in word) + f"; {xname})"


def _coef_text(c: MZV) -> Tuple[str, bool]:
    """(text, is_sum) of a coefficient."""
    text = c.to_text()
    return text, len(list(c.terms())) > 1


def rational_text(r: Rat, xname: str = "x") -> str:
    """``x^i*(1-x)^j*(N(x))`` in the integrand syntax ("1" for the constant 1)."""
    i, j, n = r
    factors = []
    if i:
        factors.append(xname if i == 1 else f"{xname}^({i})" if i < 0 else f"{xname}^{i}")
    if j:
        factors.append(f"(1-{xname})" if j == 1 else f"(1-{xname})^({j})" if j < 0 else f"(1-{xname})^{j}")
    pieces = []
    several = sum(1 for c in n if c) > 1
    for p, c in enumerate(n):
        if not c:
            continue
        text, is_sum = _coef_text(c)
        mono = "" if p == 0 else (xname if p == 1 else f"{xname}^{p}")
        if mono == xname and several and text in ("1", "-1"):
            # a bare x in a sum is refused by the integrand reader (only 1-x is a binomial): write x^1
            mono = f"{xname}^1"
        if not mono:
            pieces.append(f"({text})" if is_sum else text)
        elif text == "1":
            pieces.append(mono)
        elif text == "-1":
            pieces.append("-" + mono)
        else:
            pieces.append(f"({text})*{mono}" if is_sum else f"{text}*{mono}")
    if len(pieces) == 1:
        num = pieces[0]
        single = len(n) == 1
    else:
        num = pieces[0]
        for piece in pieces[1:]:
            num += " - " + piece[1:] if piece.startswith("-") else " + " + piece
        num = f"({num})"
        single = False
    if not factors:
        return num
    if single and num in ("1", "-1"):
        return ("-" if num == "-1" else "") + "*".join(factors)
    if single and num.startswith("(") is False and (" + " in num or " - " in num):
        num = f"({num})"
    return num + "*" + "*".join(factors) if single else "*".join(factors) + "*" + num


class XFunction:
    """``Σ_w R_w(x) G(w; x)`` in canonical form (see the module docstring)."""

    __slots__ = ("parts",)

    def __init__(self, parts: Optional[Dict[Word, Rat]] = None) -> None:
        self.parts: Dict[Word, Rat] = {}
        for w, r in (parts or {}).items():
            c = _canonical(*r)
            if c is not None:
                self.parts[tuple(w)] = c

    # -- construction ------------------------------------------------------------
    @classmethod
    def constant(cls, c) -> "XFunction":
        c = c if isinstance(c, MZV) else MZV.rational(Fraction(c))
        return cls({(): (0, 0, (c,))})

    @classmethod
    def monomial(cls, i: int, j: int, c=1, word: Word = ()) -> "XFunction":
        """``c · x^i (1-x)^j G(word; x)``."""
        c = c if isinstance(c, MZV) else MZV.rational(Fraction(c))
        return cls({tuple(word): (i, j, (c,))})

    @classmethod
    def word(cls, word: Iterable[int]) -> "XFunction":
        return cls.monomial(0, 0, 1, tuple(word))

    def inverse_monomial(self) -> "XFunction":
        """``1/f`` for ``f = c x^i (1-x)^j`` (a single monomial with a rational coefficient)."""
        if list(self.parts) != [()] or len(self.parts[()][2]) != 1 or not self.parts[()][2][0].is_rational():
            raise InputError(f"{self.text()} is not a monomial c*x^i*(1-x)^j")
        i, j, (c,) = self.parts[()]
        return XFunction({(): (-i, -j, (MZV.rational(1 / c.rational_value()),))})

    # -- arithmetic ----------------------------------------------------------------
    def __add__(self, other: "XFunction") -> "XFunction":
        out = dict(self.parts)
        for w, r in other.parts.items():
            if w in out:
                s = _rat_add(out[w], r)
                if s is None:
                    del out[w]
                else:
                    out[w] = s
            else:
                out[w] = r
        return XFunction(out)

    def __neg__(self) -> "XFunction":
        return self.scale(-1)

    def __sub__(self, other: "XFunction") -> "XFunction":
        return self + (-other)

    def scale(self, c) -> "XFunction":
        out = {}
        for w, r in self.parts.items():
            s = _rat_scale(r, c)
            if s is not None:
                out[w] = s
        return XFunction(out)

    def __mul__(self, other) -> "XFunction":
        if not isinstance(other, XFunction):
            return self.scale(other)
        out = XFunction()
        for wa, ra in self.parts.items():
            for wb, rb in other.parts.items():
                r = _rat_mul(ra, rb)
                if r is None:
                    continue
                words = shuffle(wa, wb) if wa and wb else {wa + wb: 1}
                out = out + XFunction({w: _rat_scale(r, m) for w, m in words.items()})
        return out

    __rmul__ = __mul__

    def __pow__(self, n: int) -> "XFunction":
        if not isinstance(n, int) or n < 0:
            raise InputError("powers must be non-negative integers")
        out = XFunction.constant(1)
        for _ in range(n):
            out = out * self
        return out

    def derivative(self) -> "XFunction":
        """``d/dx``: rational parts differentiated, ``d G(a,w;x) = G(w;x) dx/(x-a)``."""
        out = XFunction()
        for w, r in self.parts.items():
            d = _rat_derivative(r)
            if d is not None:
                out = out + XFunction({w: d})
            if w:
                # 1/(x - 0) = x^(-1);  1/(x - 1) = -(1-x)^(-1)
                factor = (-1, 0, (MZV.one(),)) if w[0] == 0 else (0, -1, (MZV.rational(-1),))
                out = out + XFunction({w[1:]: _rat_mul(r, factor)})
        return out

    # -- inspection ------------------------------------------------------------------
    def __eq__(self, other) -> bool:
        if not isinstance(other, XFunction):
            return NotImplemented
        return self.parts == other.parts

    def __bool__(self) -> bool:
        return bool(self.parts)

    def is_rational_function(self) -> bool:
        """True if only the empty word occurs."""
        return set(self.parts) <= {()}

    def words(self):
        return sorted(self.parts, key=lambda w: (len(w), w))

    def text(self, xname: str = "x") -> str:
        """The function in the integrand syntax (``0`` for zero)."""
        if not self.parts:
            return "0"
        out = ""
        for w in self.words():
            r = rational_text(self.parts[w], xname)
            if w:
                piece = word_text(w, xname) if r == "1" else (
                    "-" + word_text(w, xname) if r == "-1" else f"{r}*{word_text(w, xname)}")
            else:
                piece = r
            if not out:
                out = piece
            elif piece.startswith("-"):
                out += " - " + piece[1:]
            else:
                out += " + " + piece
        return out

    def __str__(self) -> str:
        return self.text()

    def __repr__(self) -> str:
        return f"XFunction({self.text()!r})"

    def numeric(self, x, digits: int = 30) -> mpmath.mpf:
        """Value at ``0 < x < 1`` (``x`` a Fraction, int or decimal string for full accuracy)."""
        from ..integrand.gnumeric import g_numeric, to_mpf

        with mpmath.workdps(digits + 15):
            xv = to_mpf(Fraction(x) if isinstance(x, (int, Fraction)) else x)
            yv = to_mpf(1 - Fraction(x)) if isinstance(x, (int, Fraction)) else 1 - xv
            total = mpmath.mpf(0)
            for w, (i, j, n) in self.parts.items():
                poly = mpmath.mpf(0)
                for p, c in enumerate(n):
                    if c:
                        cv = c.rational_value() if c.is_rational() else None
                        val = (mpmath.mpf(cv.numerator) / cv.denominator) if cv is not None else c.numeric(digits + 15)
                        poly += val * xv ** p
                value = poly * xv ** i * yv ** j
                if w:
                    value *= g_numeric(w, xv, digits + 10, one_minus_x=yv)
                total += value
            total = mpmath.mpf(total)
        return total
