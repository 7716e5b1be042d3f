"""Numerical values of ``G(w; x)`` for real ``0 < x < 1`` and of integrands.

Method
------
All series are run at arguments ``z ≤ 1/2``, where they converge at least
like ``2^-n``:

* **Words ending in 1** (``v = 0^(m1-1) 1 ... 0^(md-1) 1``) are multiple
  polylogarithms, ``G(v; z) = (-1)^d Li_{m1..md}(z)`` with
  ``Li_{m1..md}(z) = Σ_{n1 > ... > nd ≥ 1} z^n1 / (n1^m1 ... nd^md)``; their
  Taylor coefficients come from the nested harmonic sums
  ``Z_{m2..md}(n-1)`` (:func:`taylor_coefficients`).
* **Words ending in 0** are reduced exactly, by shuffling out the trailing
  zeros with ``G(0; z) = log z``, to ``Σ c · log(z)^k/k! · G(v; z)`` with
  ``v`` empty or ending in 1 (:func:`trailing_zero_decomposition`).
* **Arguments x > 1/2**: the path ``0 → x`` is split at 1, and the piece
  ``1 → x`` is mapped by ``t → 1 - t`` onto ``0 → 1 - x``:

      G(w; x) = Σ_j G(w̄_1 ... w̄_j; 1 - x) · G_reg(w_(j+1) ... w_n; 1),

  ``w̄ = 1 - w`` letterwise (:func:`reflection_decomposition`).  The values
  ``G_reg(u; 1)`` (shuffle-regularized, ``G(0; 1) = G(1; 1) = 0``) are
  computed here by Hölder convolution at 1/2,
  ``G_reg(u; 1) = Σ_i (-1)^i G(ū_i ... ū_1; 1/2) G(u_(i+1) ... u_n; 1/2)``
  (Borwein, Bradley, Broadhurst, Lisoněk, "Special values of multiple
  polylogarithms", Trans. AMS 353 (2001)), so this module does not use the
  MZV tables and is independent of :mod:`lowenergy.zeta`.

``1 - x`` can be passed separately (``one_minus_x=``) so that points very
close to 1 lose no digits.  No global mpmath precision is read or changed:
every entry point takes ``digits`` and works inside ``mpmath.workprec``.

Examples
--------
>>> import mpmath
>>> x = mpmath.mpf(1) / 4
>>> mpmath.nstr(g_numeric((0, 1), x, digits=20), 15)     # G(0,1; x) = -Li2(x)
'-0.267652639082733'
>>> mpmath.nstr(-mpmath.polylog(2, x), 15)
'-0.267652639082733'
>>> # Euler's reflection Li2(x) + Li2(1-x) = ζ(2) - log(x) log(1-x), in G-words:
>>> mpmath.nstr(g_numeric((1, 0), 0.9, digits=20) - g_numeric((0, 1), 0.1, digits=20), 12)
'1.64493406685'
"""

from __future__ import annotations

import math
from fractions import Fraction
from functools import lru_cache
from typing import Dict, Iterable, Mapping, Sequence, Tuple

import mpmath

from ..errors import InputError
from ..words import word_to_indices
from .model import Integrand, LinearExponent

__all__ = [
    "g_numeric",
    "g_regularized_at_one",
    "trailing_zero_decomposition",
    "reflection_decomposition",
    "taylor_coefficients",
    "integrand_numeric",
    "exponent_value",
    "poly_value",
    "working_prec",
    "to_mpf",
]

Word = Tuple[int, ...]
# {(k, v): c} stands for Σ c · G(0^k; z) · G(v; z) = Σ c · log(z)^k/k! · G(v; z)
LogDecomposition = Dict[Tuple[int, Word], Fraction]

_LOG2_10 = math.log2(10.0)
_GUARD_BITS = 40


def working_prec(digits: int, extra_bits: int = _GUARD_BITS) -> int:
    """Binary precision used for ``digits`` decimal digits (with guard bits)."""
    if isinstance(digits, bool) or not isinstance(digits, int) or digits < 1:
        raise InputError(f"digits must be a positive integer, got {digits!r}", hint="e.g. digits=30")
    return int(math.ceil(digits * _LOG2_10)) + extra_bits


def to_mpf(value) -> mpmath.mpf:
    """A number (int, Fraction, float, mpf, or a string such as ``"1/7"`` or
    ``"-0.1"``) as an mpf at the *current* working precision.

    Floats are taken at their exact binary value; fractions and decimal
    strings are rounded once to the working precision.
    """
    if isinstance(value, bool):
        raise InputError(f"expected a number, got {value!r}")
    if isinstance(value, Fraction):
        return mpmath.mpf(value.numerator) / value.denominator
    if isinstance(value, (int, float, mpmath.mpf)):
        return mpmath.mpf(value)
    if isinstance(value, str):
        text = value.strip()
        try:
            if "/" in text:
                return to_mpf(Fraction(text))
            return mpmath.mpf(text)
        except (ValueError, ZeroDivisionError) as exc:
            raise InputError(f"cannot read {value!r} as a number", hint="write e.g. -1/10 or -0.1") from exc
    if hasattr(value, "numerator") and hasattr(value, "denominator"):  # sympy Rational etc.
        return mpmath.mpf(int(value.numerator)) / int(value.denominator)
    raise InputError(f"expected a number, got {value!r}")


def _check_word(word) -> Word:
    w = tuple(word)
    for a in w:
        if a not in (0, 1) or isinstance(a, bool):
            raise InputError(f"letters of words are 0 and 1, got {a!r} in {w}")
    return tuple(int(a) for a in w)


# --------------------------------------------------------------------------
# exact decompositions
# --------------------------------------------------------------------------

@lru_cache(maxsize=50_000)
def _trailing_zero_cached(word: Word) -> tuple:
    n = len(word)
    m = 0
    while m < n and word[n - 1 - m] == 0:
        m += 1
    if m == 0:
        return (((0, word), Fraction(1)),)
    if m == n:
        return (((n, ()), Fraction(1)),)
    u = word[: n - m]
    tail = (0,) * (m - 1)
    # 0 ш (u 0^(m-1)) = m · u 0^m + Σ_{i < len(u)} u[:i] 0 u[i:] 0^(m-1), hence
    # G(u 0^m) = (1/m) [ G(0) G(u 0^(m-1)) - Σ_i G(u[:i] 0 u[i:] 0^(m-1)) ],
    # and G(0) G(0^k) = (k+1) G(0^(k+1)).
    out: Dict[Tuple[int, Word], Fraction] = {}
    for (k, v), c in _trailing_zero_cached(u + tail):
        key = (k + 1, v)
        out[key] = out.get(key, 0) + Fraction(c * (k + 1), m)
    for i in range(len(u)):
        for key, c in _trailing_zero_cached(u[:i] + (0,) + u[i:] + tail):
            out[key] = out.get(key, 0) - Fraction(c, m)
    return tuple((key, c) for key, c in out.items() if c)


def trailing_zero_decomposition(word: Iterable[int]) -> LogDecomposition:
    """Exact ``G(w; z) = Σ c · log(z)^k/k! · G(v; z)``, ``v`` empty or ending in 1.

    Returns ``{(k, v): c}``.  Near ``z = 0`` every ``G(v; z)`` with ``v``
    non-empty is ``O(z)``, so the coefficients with ``v = ()`` are the
    endpoint behaviour ``Σ_k c_k log(z)^k/k!``.

    Examples
    --------
    >>> sorted(trailing_zero_decomposition((1, 0)).items())
    [((0, (0, 1)), Fraction(-1, 1)), ((1, (1,)), Fraction(1, 1))]
    >>> trailing_zero_decomposition((0, 0))
    {(2, ()): Fraction(1, 1)}
    """
    return dict(_trailing_zero_cached(_check_word(word)))


def reflection_decomposition(word: Iterable[int]) -> Dict[Tuple[Word, Word], int]:
    """``G(w; x) = Σ G(p; 1 - x) · G_reg(u; 1)`` as ``{(p, u): 1}``.

    ``w = w1..wn`` splits as ``w1..wj | w(j+1)..wn``; ``p`` is the first part
    with letters complemented, ``u`` the rest.
    """
    w = _check_word(word)
    out: Dict[Tuple[Word, Word], int] = {}
    for j in range(len(w) + 1):
        key = (tuple(1 - a for a in w[:j]), w[j:])
        out[key] = out.get(key, 0) + 1
    return out


# --------------------------------------------------------------------------
# Taylor coefficients of words ending in 1
# --------------------------------------------------------------------------

@lru_cache(maxsize=4096)
def _taylor_cached(word: Word, nmax: int, prec: int) -> tuple:
    with mpmath.workprec(prec):
        if not word:
            return (mpmath.mpf(1),) + (mpmath.mpf(0),) * nmax
        idx = word_to_indices(word)
        d = len(idx)
        sign = -1 if d % 2 else 1
        # Z[j] = Σ_{N ≥ n_(j+2) > ... > n_d ≥ 1} Π 1/n_i^m_i  (tail starting at index j+1),
        # Z[d-1] = 1 (empty tail); N runs with n.
        Z = [mpmath.mpf(0)] * (d - 1) + [mpmath.mpf(1)]
        coeffs = [mpmath.mpf(0)]
        for n in range(1, nmax + 1):
            nn = mpmath.mpf(n)
            coeffs.append(sign * Z[0] / nn ** idx[0])
            # Z_{tail j}(n) = Z_{tail j}(n-1) + Z_{tail j+1}(n-1) / n^m ; ascending j uses old values
            for j in range(d - 1):
                Z[j] = Z[j] + Z[j + 1] / nn ** idx[j + 1]
        return tuple(coeffs)


def taylor_coefficients(word: Iterable[int], nmax: int, prec: int) -> Tuple[mpmath.mpf, ...]:
    """Coefficients ``c_0..c_nmax`` of ``G(v; z) = Σ c_n z^n`` for ``v`` empty or ending in 1.

    ``G(v; z) = (-1)^d Li_{m1..md}(z)`` with the nested-sum Taylor coefficients
    ``c_n = (-1)^d Z_{m2..md}(n-1) / n^m1`` (values rounded to ``prec`` bits).
    """
    w = _check_word(word)
    if w and w[-1] != 1:
        raise InputError(f"taylor_coefficients needs a word ending in 1, got {w}")
    return _taylor_cached(w, int(nmax), int(prec))


def _terms_needed(z: mpmath.mpf, depth: int, prec: int) -> int:
    """Terms of a depth-d polylog series at 0 < z ≤ 1/2 for relative error 2^-prec."""
    l2 = -float(mpmath.log(z, 2))  # log2(1/z) ≥ 1
    # |c_n| ≤ (1 + ln n)^(d-1); tail ≤ z^N (1+ln N)^(d-1) / (1 - z) relative to the first term z
    n = 1
    while True:
        tail = (n - 1) * l2 - (depth - 1) * math.log2(1 + math.log(n)) - 1
        if tail >= prec + 4:
            return n
        n += 1


def _g_small(word: Word, z: mpmath.mpf, logz: mpmath.mpf, prec: int) -> mpmath.mpf:
    """G(word; z) for 0 < z ≤ 1/2 (log z given), inside workprec(prec)."""
    total = mpmath.mpf(0)
    for (k, v), c in _trailing_zero_cached(word):
        if v:
            nmax = _terms_needed(z, len(word_to_indices(v)), prec)
            nmax = 16 * ((nmax + 15) // 16)  # share cached coefficient arrays
            coeffs = _taylor_cached(v, nmax, prec)
            gv = mpmath.polyval(coeffs[::-1], z)
        else:
            gv = mpmath.mpf(1)
        if k:
            gv *= logz ** k / mpmath.factorial(k)
        total += (mpmath.mpf(c.numerator) / c.denominator) * gv
    return total


@lru_cache(maxsize=20_000)
def _g_half(word: Word, prec: int) -> mpmath.mpf:
    with mpmath.workprec(prec):
        half = mpmath.mpf(1) / 2
        return _g_small(word, half, -mpmath.ln2, prec)


@lru_cache(maxsize=20_000)
def _g_reg_one(word: Word, prec: int) -> mpmath.mpf:
    with mpmath.workprec(prec):
        total = mpmath.mpf(0)
        for i in range(len(word) + 1):
            head = tuple(1 - a for a in reversed(word[:i]))
            term = _g_half(head, prec) * _g_half(word[i:], prec)
            total += -term if i % 2 else term
        return total


def g_regularized_at_one(word: Iterable[int], digits: int = 30) -> mpmath.mpf:
    """Shuffle-regularized ``G(w; 1)`` (``G(0; 1) = G(1; 1) = 0``), by Hölder convolution at 1/2.

    Examples
    --------
    >>> import mpmath
    >>> mpmath.nstr(g_regularized_at_one((0, 1), 20), 15)   # -ζ(2)
    '-1.64493406684823'
    """
    w = _check_word(word)
    prec = working_prec(digits, _GUARD_BITS + 4 * len(w))
    return _g_reg_one(w, prec)


def _g_at(word: Word, x: mpmath.mpf, y: mpmath.mpf, prec: int) -> mpmath.mpf:
    """G(word; x) with y = 1 - x given, inside workprec(prec)."""
    if x <= y:
        return _g_small(word, x, mpmath.log(x), prec)
    logy = mpmath.log(y)
    total = mpmath.mpf(0)
    for (p, u), c in reflection_decomposition(word).items():
        reg = _g_reg_one(u, prec)
        if reg == 0:
            continue
        total += c * reg * _g_small(p, y, logy, prec)
    return total


def g_numeric(word: Iterable[int], x, digits: int = 30, *, one_minus_x=None) -> mpmath.mpf:
    """``G(w; x)`` for real ``0 < x < 1`` and any word over {0, 1}.

    Parameters
    ----------
    word:
        Letters 0 and 1; ``G(0^n; x) = log(x)^n / n!``.
    x:
        The argument (int, Fraction, float, mpf or numeric string).
    digits:
        Requested decimal digits (the working precision carries guard bits).
    one_minus_x:
        ``1 - x`` when known more accurately than ``x`` itself (points very
        close to 1).

    Returns
    -------
    mpmath.mpf

    Raises
    ------
    InputError
        For letters other than 0, 1 or x outside (0, 1).

    Examples
    --------
    >>> import mpmath
    >>> mpmath.nstr(g_numeric((1,), 0.75, 20), 15), mpmath.nstr(mpmath.log(0.25), 15)
    ('-1.38629436111989', '-1.38629436111989')
    """
    w = _check_word(word)
    prec = working_prec(digits, _GUARD_BITS + 4 * len(w))
    with mpmath.workprec(prec):
        xv = to_mpf(x)
        yv = to_mpf(one_minus_x) if one_minus_x is not None else 1 - xv
        if one_minus_x is not None and abs(xv + yv - 1) > mpmath.mpf(2) ** (-40):
            raise InputError(f"one_minus_x={one_minus_x!r} is not 1 - x for x={x!r}")
        if not (xv > 0 and yv > 0):
            raise InputError(f"g_numeric needs 0 < x < 1, got x={x!r}")
        value = _g_at(w, xv, yv, prec)
    return value


# --------------------------------------------------------------------------
# integrands
# --------------------------------------------------------------------------

def _variable_values(integrand: Integrand, s, t, params) -> list:
    """[s, t, p1, p2, ...] as mpf at the current precision."""
    names = tuple(integrand.parameters)
    if params is None:
        params = {}
    if isinstance(params, Mapping):
        unknown = set(params) - set(names)
        if unknown:
            raise InputError(f"unknown parameter(s) {sorted(unknown)}; the integrand has {list(names)}")
        missing = [n for n in names if n not in params]
        if missing:
            raise InputError(f"no value given for parameter(s) {missing}", hint="pass params={name: value}")
        pvals = [params[n] for n in names]
    else:
        pvals = list(params)
        if len(pvals) != len(names):
            raise InputError(f"expected {len(names)} parameter values {list(names)}, got {len(pvals)}")
    return [to_mpf(s), to_mpf(t)] + [to_mpf(p) for p in pvals]


def exponent_value(e: LinearExponent, values: Sequence[mpmath.mpf]) -> mpmath.mpf:
    """Numerical value of ``shift + coeff · variable``."""
    out = mpmath.mpf(e.shift)
    if e.var is not None:
        out += to_mpf(Fraction(e.coeff)) * values[e.var]
    return out


def poly_value(poly: Mapping[Tuple[int, ...], object], values: Sequence[mpmath.mpf], digits: int) -> mpmath.mpf:
    """Numerical value of a Poly ``{exponents: MZV}`` at the given variable values."""
    total = mpmath.mpf(0)
    for exps, c in poly.items():
        cv = c.numeric(digits) if hasattr(c, "numeric") else to_mpf(c)
        term = mpmath.mpf(cv)
        for v, e in zip(values, exps):
            if e:
                term *= v ** e
        total += term
    return total


def integrand_numeric(integrand: Integrand, s, t, params=None, x=None, digits: int = 30, *,
                      one_minus_x=None, full: bool = False) -> mpmath.mpf:
    """The integrand's F-part at a point.

    With ``I(s, t) = ∫_0^1 x^(-s-1) (1-x)^(-t-1) F(x) dx`` this returns

        F(x) = Σ_terms P(s, t, params) · x^(A + s + 1) (1-x)^(B + t + 1) · G(w; x),

    i.e. the integrand divided by the Koba–Nielsen factor ``x^(-s-1)(1-x)^(-t-1)``
    (``s``, ``t`` are the first and second expansion variables, whatever the
    user called them).  With ``full=True`` the whole integrand
    ``Σ P · x^A (1-x)^B · G(w; x)`` is returned instead.

    Parameters
    ----------
    integrand:
        An :class:`~lowenergy.integrand.model.Integrand`.
    s, t:
        Values of the two expansion variables.
    params:
        Values of the free parameters: ``{name: value}`` or a sequence in the
        order of ``integrand.parameters``.
    x, one_minus_x:
        The point, ``0 < x < 1``; ``1 - x`` may be given separately.
    digits:
        Requested decimal digits.
    """
    if x is None:
        raise InputError("integrand_numeric needs the point x")
    maxlen = max((len(term.word) for term in integrand.terms), default=0)
    prec = working_prec(digits, _GUARD_BITS + 4 * maxlen)
    with mpmath.workprec(prec):
        values = _variable_values(integrand, s, t, params)
        xv = to_mpf(x)
        yv = to_mpf(one_minus_x) if one_minus_x is not None else 1 - xv
        if not (xv > 0 and yv > 0):
            raise InputError(f"integrand_numeric needs 0 < x < 1, got x={x!r}")
        lx, ly = mpmath.log(xv), mpmath.log(yv)
        total = mpmath.mpf(0)
        for term in integrand.terms:
            p = poly_value(term.coefficient, values, digits + 10)
            if not p:
                continue
            a = exponent_value(term.x_exp, values)
            b = exponent_value(term.y_exp, values)
            if not full:
                a += values[0] + 1
                b += values[1] + 1
            g = _g_at(_check_word(term.word), xv, yv, prec)
            total += p * mpmath.exp(a * lx + b * ly) * g
    return total
