"""Sparse polynomials over a coefficient ring: the one copy for the whole package.

A polynomial is a plain dict ``{exponent tuple: coefficient}`` (one entry of
the tuple per variable, all tuples of one polynomial of the same length); a
linear combination is the same dict with any hashable keys (words, labels,
powers of pi), as long as only :func:`add_term`, :func:`add_into`,
:func:`add` and :func:`scale` are used on it.  Coefficients are any ring
elements with ``+``, ``*`` and ``bool`` (zero is falsy): ``int``,
``fractions.Fraction``, :class:`~lowenergy.zeta.element.MZV`,
``flint.fmpq``, mpmath numbers.

Every function keeps the dicts *clean*: a coefficient that becomes zero is
removed, so equal polynomials compare equal as dicts.  Nothing here depends
on any other module of the package (this is the bottom layer, below
:mod:`lowenergy.words`); the thin classes and the budgets of the readers sit
in the callers, as :mod:`sympy.polys.sparsetools` does for sympy's rings.

Insertion order is part of the contract: the products run over ``a`` in its
order and, for each term of ``a``, over ``b`` in its order, and a key that
cancels to zero is removed (and appended again if it reappears), exactly as
the hand-written loops this module replaces did -- so outputs that list
terms in dict order stay byte-identical.

Examples
--------
>>> from fractions import Fraction
>>> s, t = {(1, 0): 1}, {(0, 1): 1}
>>> p = add(s, t)                                 # s + t
>>> sorted(power(p, 2, 2).items())                # (s + t)^2
[((0, 2), 1), ((1, 1), 2), ((2, 0), 1)]
>>> mul(p, add(s, t, -1))                         # (s + t)(s - t) = s^2 - t^2
{(2, 0): 1, (0, 2): -1}
>>> power(p, 3, 2, truncate=2)                    # nothing of degree <= 2 survives
{}
>>> scale(p, Fraction(1, 2))
{(1, 0): Fraction(1, 2), (0, 1): Fraction(1, 2)}
>>> acc = {}
>>> add_term(acc, (1, 0), 3); add_term(acc, (1, 0), -3); acc
{}
"""

from __future__ import annotations

from operator import add as _add
from typing import Dict, Hashable, Mapping, Optional

__all__ = ["Poly", "add_term", "add_into", "add", "scale", "mul", "power", "truncated", "total_degree"]

#: ``{exponent tuple: coefficient}`` (or ``{key: coefficient}`` for a linear combination).
Poly = Dict[Hashable, object]


def add_term(target: dict, key: Hashable, value) -> None:
    """``target[key] += value`` in place, removing the entry when it becomes zero.

    >>> p = {(1,): 2}
    >>> add_term(p, (0,), 5); add_term(p, (1,), -2); p
    {(0,): 5}
    """
    old = target.get(key)
    y = value if old is None else old + value
    if y:
        target[key] = y
    elif old is not None:
        del target[key]


def add_into(target: dict, source: Mapping, factor=1) -> dict:
    """``target += factor * source`` in place (zero coefficients removed); returns ``target``.

    ``factor`` multiplies from the left (``factor * value``); ``factor = 1``
    adds the values themselves.

    >>> add_into({(0,): 1, (1,): 1}, {(1,): 1, (2,): 1}, -1)
    {(0,): 1, (2,): -1}
    """
    get = target.get
    if factor == 1 and factor.__class__ is int:
        for key, value in source.items():
            old = get(key)
            y = value if old is None else old + value
            if y:
                target[key] = y
            elif old is not None:
                del target[key]
    else:
        for key, value in source.items():
            old = get(key)
            y = factor * value if old is None else old + factor * value
            if y:
                target[key] = y
            elif old is not None:
                del target[key]
    return target


def add(a: Mapping, b: Mapping, factor=1) -> dict:
    """``a + factor * b`` as a new dict (zero coefficients removed).

    >>> add({(2, 0): 1}, {(2, 0): 1, (0, 2): 3}, -1)
    {(0, 2): -3}
    """
    return add_into(dict(a), b, factor)


def scale(a: Mapping, c) -> dict:
    """``a * c`` as a new dict (each coefficient times ``c`` from the right; zeros removed).

    >>> scale({(1,): 2, (0,): 3}, 0)
    {}
    """
    out = {}
    for key, value in a.items():
        y = value * c
        if y:
            out[key] = y
    return out


def mul(a: Mapping, b: Mapping, truncate: Optional[int] = None) -> dict:
    """The product ``a * b`` of two polynomials with exponent tuples of one length.

    ``truncate``: drop every product term of total degree above it (the
    terms are never formed).  Coefficients multiply as ``va * vb`` with
    ``va`` from ``a``.

    >>> mul({(1, 0): 1, (0, 1): 1}, {(1, 0): 1, (0, 1): -1}, truncate=1)
    {}
    >>> mul({(1,): 2}, {(0,): 3, (2,): 1})
    {(1,): 6, (3,): 2}
    """
    out: dict = {}
    if not a or not b:
        return out
    get = out.get
    if len(next(iter(a))) == 2:
        # two variables (s, t): the common case, without the generic tuple building
        for (i1, j1), va in a.items():
            for (i2, j2), vb in b.items():
                i, j = i1 + i2, j1 + j2
                if truncate is not None and i + j > truncate:
                    continue
                k = (i, j)
                p = va * vb
                old = get(k)
                y = p if old is None else old + p
                if y:
                    out[k] = y
                elif old is not None:
                    del out[k]
        return out
    for ka, va in a.items():
        for kb, vb in b.items():
            k = tuple(map(_add, ka, kb))
            if truncate is not None and sum(k) > truncate:
                continue
            p = va * vb
            old = get(k)
            y = p if old is None else old + p
            if y:
                out[k] = y
            elif old is not None:
                del out[k]
    return out


def power(a: Mapping, n: int, nvars: int, truncate: Optional[int] = None, one=1) -> dict:
    """``a ** n`` (n ≥ 0) by repeated squaring; ``nvars`` is the length of the
    exponent tuples (for ``a ** 0 = {(0,)*nvars: one}``).

    >>> sorted(power({(1, 0): 1, (0, 0): 1}, 3, 2).items())      # (1 + s)^3
    [((0, 0), 1), ((1, 0), 3), ((2, 0), 3), ((3, 0), 1)]
    >>> power({}, 0, 1, one=2)
    {(0,): 2}
    """
    if n < 0:
        raise ValueError("power: the exponent must be a non-negative integer")
    result: dict = {(0,) * nvars: one}
    base = a
    while n:
        if n & 1:
            result = mul(result, base, truncate)
        n >>= 1
        if n:
            base = mul(base, base, truncate)
    return result


def truncated(a: Mapping, order: int) -> dict:
    """The terms of total degree ≤ ``order``.

    >>> truncated({(2, 0): 1, (1, 0): 5}, 1)
    {(1, 0): 5}
    """
    return {k: v for k, v in a.items() if sum(k) <= order}


def total_degree(a: Mapping) -> int:
    """The highest total degree of a term (0 for the zero polynomial).

    >>> total_degree({(2, 1): 1, (0, 0): 1}), total_degree({})
    (3, 0)
    """
    return max((sum(k) for k in a), default=0)
