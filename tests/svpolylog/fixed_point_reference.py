"""The first, straightforward construction of ``L_w`` (kept as a reference for the tests).

This is the code :mod:`lowenergy.svpolylog.construct` used before it was made
fast (see that module's docstring, "Computation"): dense truncated products of
whole series, the fixed point ``y1 = Z_y (~Z x1 ~Z^-1) Z_y^-1`` iterated on
whole series until it stops changing, ``Z_y^-1`` obtained by substituting
``y1`` into ``Z^-1`` (not by the antipode), and the products ``Y_v`` rebuilt in
every round.  It shares with the package only the bottom layers (words,
regularization, the MZV tables) and the canonical monomial order.  Too slow
beyond weight ~9; the tests compare it with the package at weights <= 8.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Dict, Tuple

from lowenergy.words import all_words, regularize_word, word_to_indices
from lowenergy.zeta.element import MZV

Word = Tuple[int, ...]
Coef = Dict[tuple, Fraction]
RawSeries = Dict[Word, Coef]

_ONE: Coef = {(): Fraction(1)}


def _gen_key(g):
    return (sum(g), g)


def _cmul(a: Coef, b: Coef) -> Coef:
    out: Coef = {}
    for ka, va in a.items():
        for kb, vb in b.items():
            k = tuple(sorted(ka + kb, key=_gen_key))
            out[k] = out.get(k, 0) + va * vb
    return out


def _cadd_into(target: Coef, src: Coef) -> None:
    for k, v in src.items():
        target[k] = target.get(k, 0) + v


def _clean(c: Coef) -> Coef:
    return {k: v for k, v in c.items() if v}


def _smul(a: RawSeries, b: RawSeries, n: int) -> RawSeries:
    """Product of two series truncated above degree n."""
    out: RawSeries = {}
    for wa, ca in a.items():
        for wb, cb in b.items():
            if len(wa) + len(wb) > n:
                continue
            _cadd_into(out.setdefault(wa + wb, {}), _cmul(ca, cb))
    return {w: c for w, c in ((w, _clean(c)) for w, c in out.items()) if c}


def _reverse(a: RawSeries) -> RawSeries:
    return {tuple(reversed(w)): c for w, c in a.items()}


def g_value_raw(word: Word, store) -> Coef:
    """``G_reg(word; 1)`` as ``{monomial: Fraction}``."""
    out: Coef = {}
    for w, c in regularize_word(word).items():
        idx = word_to_indices(w)
        sign = -1 if len(idx) % 2 else 1
        for mono, d in store.reduction(idx).items():
            out[mono] = out.get(mono, 0) + sign * c * d
    return _clean(out)


def associator_raw(n: int, store) -> RawSeries:
    z: RawSeries = {(): dict(_ONE)}
    for k in range(1, n + 1):
        for w in all_words(k):
            c = g_value_raw(w, store)
            if c:
                z[w] = c
    return z


def _inverse_grouplike(z: RawSeries) -> RawSeries:
    return {tuple(reversed(w)): ({k: -v for k, v in c.items()} if len(w) % 2 else c) for w, c in z.items()}


def _products(y1: RawSeries, n: int) -> Dict[Word, RawSeries]:
    prods: Dict[Word, RawSeries] = {(): {(): dict(_ONE)}}
    for k in range(1, n + 1):
        for v in all_words(k):
            rest = prods[v[1:]]
            if v[0] == 0:
                prods[v] = {(0,) + w: c for w, c in rest.items() if len(w) < n}
            else:
                prods[v] = _smul(y1, rest, n)
    return prods


def _substitute(z: RawSeries, prods: Dict[Word, RawSeries]) -> RawSeries:
    out: RawSeries = {}
    for v, c in z.items():
        for w, d in prods[v].items():
            _cadd_into(out.setdefault(w, {}), _cmul(c, d))
    return {w: c for w, c in ((w, _clean(c)) for w, c in out.items()) if c}


def reference_construction(n: int, store):
    """``(y1, parts, Z, Z_y)`` up to degree n, every coefficient an :class:`MZV`.

    ``parts[s][v]`` is the coefficient of ``x_s`` in ``~Y_v`` (the layout of
    :class:`lowenergy.svpolylog.construct.SVTable`).
    """
    z = associator_raw(n, store)
    zt = _reverse(z)
    target = _smul(_smul(zt, {(1,): dict(_ONE)}, n), _inverse_grouplike(zt), n)  # ~Z x1 ~Z^-1
    z_inv = _inverse_grouplike(z)
    y1: RawSeries = {(1,): dict(_ONE)}
    for _ in range(n + 2):
        prods = _products(y1, n)
        zy = _substitute(z, prods)
        zy_inv = _substitute(z_inv, prods)
        new = _smul(_smul(zy, target, n), zy_inv, n)
        if new == y1:
            break
        y1 = new
    else:  # pragma: no cover
        raise AssertionError("the reference fixed-point iteration did not settle")
    parts: Dict[Word, Dict[Word, MZV]] = {}
    for v, series in prods.items():
        for w, c in series.items():
            parts.setdefault(tuple(reversed(w)), {})[v] = MZV(c)
    as_mzv = lambda s: {w: MZV(c) for w, c in s.items()}  # noqa: E731
    return as_mzv(y1), parts, as_mzv(z), as_mzv(zy)


def reference_value_at_one(word: Word, z: Dict[Word, MZV], zy: Dict[Word, MZV]) -> MZV:
    """The coefficient of ``x_word`` in ``Z · ~Z_y``."""
    total = MZV()
    for j in range(len(word) + 1):
        a, b = z.get(word[:j]), zy.get(tuple(reversed(word[j:])))
        if a is not None and b is not None:
            total = total + a * b
    return total
